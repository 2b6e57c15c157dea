//! What a load draws as a function of the output voltage `V`: a constant
//! current (`load = 0 mA .. 120 mA`), a resistance (`load = 15 ohm ± 5 %`,
//! `I = V/R`) or a constant power (`load = 250 mW`, `I = P/V` above the
//! load's own cutoff `load_cutoff`, nothing below it). Every figure is the
//! heaviest (or lightest) draw over every corner the spec admits: the
//! smallest resistance, the largest power, the lowest cutoff edge.

use super::envelope::{self, Line, Piece};
use super::unknown::{Figure, Unknown, need, optional};
use crate::compare;
use guardband_model::{Node, Value};
use guardband_units::{Dimension, QuantityKind};

/// How a load draws current.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum LoadKind {
    /// A current, A.
    Current,
    /// A resistance to ground, Ω.
    Resistance,
    /// A constant power, W, drawn at output voltages at or above a cutoff.
    Power,
}

/// A load: its kind, the range of its value, and for a constant power the
/// range of its cutoff voltage.
#[derive(Debug, Clone, PartialEq)]
pub struct Load {
    pub kind: LoadKind,
    /// Lowest and highest value in the load's own unit (A, Ω or W).
    pub lo: f64,
    pub hi: f64,
    /// The output voltage below which a constant-power load draws nothing,
    /// lowest and highest edge, V.
    pub cutoff: Option<(f64, f64)>,
    /// The unit the load is written in, for messages.
    pub unit: Option<String>,
}

impl Load {
    /// The load in field `key` of `node`, with its cutoff in `key_cutoff`
    /// (e.g. `load` and `load_cutoff`). `Ok(None)` when the field is not
    /// written; unknown when it has an error, or when a constant power has
    /// an impossible cutoff.
    pub fn read(node: &Node, key: &str) -> Figure<Option<Load>> {
        let Some(v) = optional(node, key)? else {
            return Ok(None);
        };
        let cutoff_key = format!("{key}_cutoff");
        let cutoff = optional(node, &cutoff_key)?.map(|c| (c.lo, c.hi));
        Ok(Some(Load::of(v, cutoff)))
    }

    /// Like [`Load::read`] for a load that must be written.
    pub fn need(node: &Node, key: &str) -> Figure<Load> {
        need(node, key)?;
        Load::read(node, key)?.ok_or_else(|| Unknown::because(format!("`{key}` is missing")))
    }

    fn of(v: &Value, cutoff: Option<(f64, f64)>) -> Load {
        let kind = if v.kind.dim == Dimension::RESISTANCE {
            LoadKind::Resistance
        } else if v.kind.dim == Dimension::POWER {
            LoadKind::Power
        } else {
            LoadKind::Current
        };
        Load {
            kind,
            lo: v.lo,
            hi: v.hi,
            cutoff,
            unit: v.unit.as_deref().map(str::to_string),
        }
    }

    /// The unit to show currents of this load in: its own for a current load.
    pub fn current_unit(&self) -> Option<&str> {
        match self.kind {
            LoadKind::Current => self.unit.as_deref(),
            _ => None,
        }
    }

    /// The most current the load can draw at output voltage `v` (infinite
    /// for a constant power without a cutoff as `v` reaches 0 V).
    pub fn heaviest(&self, v: f64) -> f64 {
        match self.kind {
            LoadKind::Current => self.hi,
            LoadKind::Resistance => v.max(0.0) / self.lo,
            LoadKind::Power => match self.cutoff {
                Some((lo, _)) if v < lo => 0.0,
                _ if v <= 0.0 => f64::INFINITY,
                _ => self.hi / v,
            },
        }
    }

    /// The least current the load can draw at output voltage `v`.
    pub fn lightest(&self, v: f64) -> f64 {
        match self.kind {
            LoadKind::Current => self.lo,
            LoadKind::Resistance => v.max(0.0) / self.hi,
            LoadKind::Power => match self.cutoff {
                Some((_, hi)) if v < hi => 0.0,
                None if v <= 0.0 => 0.0,
                _ => self.lo / v,
            },
        }
    }

    /// The most current drawn anywhere on `v0 ..= v1`; `None` when it is
    /// unbounded (a constant power without a cutoff, down to 0 V).
    pub fn heaviest_over(&self, v0: f64, v1: f64) -> Option<f64> {
        let i = match self.kind {
            LoadKind::Current => self.hi,
            LoadKind::Resistance => self.heaviest(v1),
            LoadKind::Power => {
                let from = match self.cutoff {
                    Some((lo, _)) => v0.max(lo),
                    None => v0,
                };
                if from > v1 { 0.0 } else { self.heaviest(from) }
            }
        };
        i.is_finite().then_some(i)
    }

    /// The heaviest draw as a line `I = a + b·V`, when it is one (a current
    /// or a resistance); a constant power is not.
    pub fn heaviest_line(&self) -> Option<Line> {
        match self.kind {
            LoadKind::Current => Some(Line::flat(self.hi)),
            LoadKind::Resistance => Some(Line {
                a: 0.0,
                b: 1.0 / self.lo,
            }),
            LoadKind::Power => None,
        }
    }

    /// The lightest draw as a line, when it is one; a constant power draws
    /// nothing at its cutoff or below, so zero bounds it from below.
    pub fn lightest_line(&self) -> Line {
        match self.kind {
            LoadKind::Current => Line::flat(self.lo),
            LoadKind::Resistance => Line {
                a: 0.0,
                b: 1.0 / self.hi,
            },
            LoadKind::Power => Line::flat(0.0),
        }
    }

    /// What the load is, in words, e.g. "a resistance of 14.25 Ω .. 15.75 Ω".
    pub fn describe(&self) -> String {
        let show = |x: f64, d: Dimension| {
            crate::show::in_unit(x, QuantityKind::of(d), self.unit.as_deref())
        };
        let range = |d: Dimension| {
            if compare::exceeds(self.hi, self.lo) {
                format!("{} .. {}", show(self.lo, d), show(self.hi, d))
            } else {
                show(self.hi, d)
            }
        };
        match self.kind {
            LoadKind::Current => format!("a current of {}", range(Dimension::CURRENT)),
            LoadKind::Resistance => format!("a resistance of {}", range(Dimension::RESISTANCE)),
            LoadKind::Power => format!("a constant power of {}", range(Dimension::POWER)),
        }
    }
}

/// Where the least current a regulator delivers, `lower`, first fails to
/// exceed the heaviest draw of `load`, searching output voltages from 0 V up
/// to `v_end`: the output voltage, what is delivered there and what the load
/// draws. `None` when the delivered current stays above the load all the way.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Shortfall {
    pub at_voltage: f64,
    pub delivered: f64,
    pub drawn: f64,
    /// The cap that sets the delivered current there (see [`Piece::by`]).
    pub by: usize,
}

/// The first output voltage in `0 ..= v_end` at which `lower` does not
/// exceed the heaviest draw of `load` (see [`Shortfall`]).
pub fn first_shortfall(lower: &[Piece], load: &Load, v_end: f64) -> Option<Shortfall> {
    let mut pieces: Vec<&Piece> = lower.iter().collect();
    pieces.sort_by(|a, b| a.v0.total_cmp(&b.v0));
    for p in pieces {
        let (v0, v1) = (p.v0.max(0.0), p.v1.min(v_end));
        if v1 < v0 {
            continue;
        }
        if let Some(v) = first_crossing(p.line, load, v0, v1) {
            return Some(Shortfall {
                at_voltage: v,
                delivered: p.line.at(v),
                drawn: load.heaviest(v),
                by: p.by,
            });
        }
    }
    None
}

/// The smallest `v` in `v0 ..= v1` where `line(v) <= load.heaviest(v)`.
fn first_crossing(line: Line, load: &Load, v0: f64, v1: f64) -> Option<f64> {
    let short = |v: f64| !compare::exceeds(line.at(v), load.heaviest(v));
    if short(v0) {
        return Some(v0);
    }
    match load.heaviest_line() {
        // Both straight: the net current is a line, so it turns non-positive
        // at its root if at all.
        Some(l) => {
            let net = Line {
                a: line.a - l.a,
                b: line.b - l.b,
            };
            if !short(v1) {
                return None;
            }
            if net.b == 0.0 {
                return Some(v0);
            }
            Some((-net.a / net.b).clamp(v0, v1))
        }
        // A constant power `P` at or above its cutoff: `I(V)·V − P` is the
        // quadratic `b·V² + a·V − P`; below the cutoff it draws nothing.
        None => {
            let from = match load.cutoff {
                Some((lo, _)) => v0.max(lo),
                None => v0,
            };
            if from > v1 {
                return None;
            }
            if short(from) {
                return Some(from);
            }
            let (a, b, c) = (line.b, line.a, -load.hi);
            let roots: Vec<f64> = if a == 0.0 {
                if b == 0.0 { vec![] } else { vec![-c / b] }
            } else {
                let d = b * b - 4.0 * a * c;
                if d < 0.0 {
                    vec![]
                } else {
                    let s = d.sqrt();
                    vec![(-b - s) / (2.0 * a), (-b + s) / (2.0 * a)]
                }
            };
            let mut inside: Vec<f64> = roots
                .into_iter()
                .filter(|r| *r >= from && *r <= v1)
                .collect();
            inside.sort_by(f64::total_cmp);
            inside
                .into_iter()
                .next()
                .or_else(|| short(v1).then_some(v1))
        }
    }
}

/// Time to charge `capacitance` from 0 V to `v_end` with at least `pieces`
/// delivered, less the load's heaviest draw (`heaviest`) or its lightest,
/// no faster than `slew`: `t = ∫ max(1/slew, C / (I(V) − load(V))) dV`.
/// `Err(v)` when the net current is not positive at output voltage `v`.
///
/// A current or a resistance is a straight line and the integral is exact
/// ([`envelope::charge_time`]). A constant power `P/V` is integrated on
/// sub-intervals `[u0, u1]` with the net current bounded below by
/// `min(I(u0), I(u1)) − P/u0`, so the time is an upper bound (sound for the
/// slowest start) that tightens as the sub-intervals shrink.
pub fn charge_time(
    pieces: &[Piece],
    capacitance: f64,
    load: &Load,
    heaviest: bool,
    v_end: f64,
    slew: Option<f64>,
) -> Result<f64, f64> {
    let line = if heaviest {
        load.heaviest_line()
    } else {
        Some(load.lightest_line())
    };
    if let Some(line) = line {
        return envelope::charge_time(pieces, capacitance, line, v_end, slew);
    }
    if let Some(s) = first_shortfall(pieces, load, v_end) {
        return Err(s.at_voltage);
    }
    let cutoff = load.cutoff.map(|c| c.0).unwrap_or(0.0);
    let mut total = 0.0;
    for p in pieces {
        let (v0, v1) = (p.v0.max(0.0), p.v1.min(v_end));
        if v1 <= v0 {
            continue;
        }
        // Below the cutoff the load draws nothing: exact.
        if v0 < cutoff {
            let below = Piece {
                v1: v1.min(cutoff),
                ..*p
            };
            total += envelope::charge_time(&[below], capacitance, Line::flat(0.0), v_end, slew)?;
        }
        let from = v0.max(cutoff);
        if from >= v1 {
            continue;
        }
        const STEPS: usize = 256;
        let du = (v1 - from) / STEPS as f64;
        for k in 0..STEPS {
            let u0 = from + du * k as f64;
            total += power_step(p.line, load.hi, capacitance, slew, u0, u0 + du, 0)?;
        }
    }
    Ok(total)
}

/// An upper bound of the time to rise from `u0` to `u1` against a constant
/// power `p`, halving the step where the bound is not yet positive.
fn power_step(
    line: Line,
    p: f64,
    capacitance: f64,
    slew: Option<f64>,
    u0: f64,
    u1: f64,
    depth: u32,
) -> Result<f64, f64> {
    let net = line.at(u0).min(line.at(u1)) - p / u0;
    if net <= 0.0 {
        if depth >= 24 {
            return Err(u0);
        }
        let mid = (u0 + u1) / 2.0;
        return Ok(power_step(line, p, capacitance, slew, u0, mid, depth + 1)?
            + power_step(line, p, capacitance, slew, mid, u1, depth + 1)?);
    }
    let per_volt = (capacitance / net).max(slew.map_or(0.0, |s| 1.0 / s));
    Ok(per_volt * (u1 - u0))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn flat(v0: f64, v1: f64, i: f64) -> Piece {
        Piece {
            v0,
            v1,
            line: Line::flat(i),
            by: 0,
        }
    }

    fn load(kind: LoadKind, lo: f64, hi: f64, cutoff: Option<(f64, f64)>) -> Load {
        Load {
            kind,
            lo,
            hi,
            cutoff,
            unit: None,
        }
    }

    // Ohm's law, I = V/R: a 34 mA fixed current against a 20 Ω load crosses
    // where V/20 Ω = 34 mA, at 0.68 V (hand calculation).
    #[test]
    fn a_fixed_current_crosses_a_resistive_load_at_i_times_r() {
        let lower = [flat(0.0, 1.8, 0.034)];
        let r = load(LoadKind::Resistance, 20.0, 22.0, None);
        let s = first_shortfall(&lower, &r, 1.8).unwrap();
        assert!((s.at_voltage - 0.68).abs() < 1e-12, "{s:?}");
        assert!((s.drawn - 0.034).abs() < 1e-12);
        // 100 mA clears the heaviest draw, 1.8 V / 20 Ω = 90 mA, everywhere.
        assert_eq!(first_shortfall(&[flat(0.0, 1.8, 0.1)], &r, 1.8), None);
    }

    // A foldback line from 20 mA at 0 V to 200 mA at 1.8 V (I = 20 mA + 0.1 S·V)
    // against a 10 Ω load (I = 0.1 S·V): the line stays 20 mA above the load.
    // Against 8 Ω (0.125 S·V): 0.02 + 0.1·V = 0.125·V at V = 0.8 V.
    #[test]
    fn a_foldback_line_against_two_resistances() {
        let lower = [Piece {
            v0: 0.0,
            v1: 1.8,
            line: Line::through(0.0, 0.02, 1.8, 0.2),
            by: 0,
        }];
        let ten = load(LoadKind::Resistance, 10.0, 10.0, None);
        assert_eq!(first_shortfall(&lower, &ten, 1.8), None);
        let eight = load(LoadKind::Resistance, 8.0, 8.0, None);
        let s = first_shortfall(&lower, &eight, 1.8).unwrap();
        assert!((s.at_voltage - 0.8).abs() < 1e-9, "{s:?}");
    }

    // P = V·I: a 0.2 W constant-power load on a 150 mA flat limit needs
    // V ≥ 0.2 / 0.15 = 1.333 V; below that it draws more than the limit.
    // With a 1.5 V cutoff it draws nothing below 1.5 V and 0.133 A at 1.5 V.
    #[test]
    fn a_constant_power_load_with_and_without_cutoff() {
        let lower = [flat(0.0, 1.8, 0.15)];
        let p = load(LoadKind::Power, 0.2, 0.2, None);
        let s = first_shortfall(&lower, &p, 1.8).unwrap();
        assert_eq!(s.at_voltage, 0.0);
        assert!(s.drawn.is_infinite());
        let with_cutoff = load(LoadKind::Power, 0.2, 0.2, Some((1.5, 1.6)));
        assert_eq!(first_shortfall(&lower, &with_cutoff, 1.8), None);
        assert_eq!(with_cutoff.heaviest_over(0.0, 1.8), Some(0.2 / 1.5));
        assert_eq!(p.heaviest_over(0.0, 1.8), None);
        // A cutoff at 1 V: at 1 V it draws 0.2 A > 0.15 A.
        let low_cutoff = load(LoadKind::Power, 0.2, 0.2, Some((1.0, 1.1)));
        let s = first_shortfall(&lower, &low_cutoff, 1.8).unwrap();
        assert!((s.at_voltage - 1.0).abs() < 1e-12, "{s:?}");
    }

    // A falling line against a constant power: I = 0.3 − 0.1·V against
    // 0.2 W above a 1.2 V cutoff. I·V − P = −0.1·V² + 0.3·V − 0.2 is
    // positive between its roots 1 V and 2 V (V² − 3V + 2 = 0), so from the
    // cutoff it first fails at 2 V. A rising line only gains: no crossing.
    #[test]
    fn a_line_against_a_constant_power_crosses_at_the_quadratics_root() {
        let falling = [Piece {
            v0: 0.0,
            v1: 2.5,
            line: Line { a: 0.3, b: -0.1 },
            by: 0,
        }];
        let p = load(LoadKind::Power, 0.2, 0.2, Some((1.2, 1.3)));
        let s = first_shortfall(&falling, &p, 2.5).unwrap();
        assert!((s.at_voltage - 2.0).abs() < 1e-9, "{s:?}");
        let rising = [Piece {
            v0: 0.0,
            v1: 1.8,
            line: Line { a: 0.05, b: 0.1 },
            by: 0,
        }];
        let p = load(LoadKind::Power, 0.1, 0.1, Some((0.9, 1.0)));
        // From the cutoff 0.9 V: 0.14 A delivered > 0.111 A drawn.
        assert_eq!(first_shortfall(&rising, &p, 1.8), None);
        // From a 0.2 V cutoff: 0.07 A delivered < 0.5 A drawn at once.
        let p = load(LoadKind::Power, 0.1, 0.1, Some((0.2, 0.3)));
        assert_eq!(first_shortfall(&rising, &p, 1.8).unwrap().at_voltage, 0.2);
    }

    // t = ∫ C / (I − P/V) dV for a flat 0.3 A against 0.2 W above a 1 V
    // cutoff, charging 10 uF to 2 V: below 1 V, C·V/I = 10 uF × 1 V / 0.3 A
    // = 33.33 us; above, ∫ C·V/(0.3·V − 0.2) dV from 1 to 2 =
    // C·[V/0.3 + (0.2/0.09)·ln(0.3·V − 0.2)] = 10 uF × (3.333 + 2.222 × ln 4)
    // = 64.14 us (integral tables). The bound is above the exact 97.47 us
    // and within 1 % of it.
    #[test]
    fn charging_against_a_constant_power_is_bounded_above_and_close() {
        let lower = [flat(0.0, 2.0, 0.3)];
        let p = load(LoadKind::Power, 0.2, 0.2, Some((1.0, 1.1)));
        let t = charge_time(&lower, 10e-6, &p, true, 2.0, None).unwrap();
        let exact = 10e-6 * (1.0 / 0.3) + 10e-6 * (1.0 / 0.3 + 0.2 / 0.09 * 4f64.ln());
        assert!((exact - 97.47e-6).abs() < 0.01e-6, "{exact}");
        assert!(t >= exact && t < exact * 1.01, "{t} vs {exact}");
        // Its lightest draw is nothing: C·V/I = 66.67 us.
        let t_lo = charge_time(&lower, 10e-6, &p, false, 2.0, None).unwrap();
        assert!((t_lo - 10e-6 * 2.0 / 0.3).abs() < 1e-12);
    }
}
