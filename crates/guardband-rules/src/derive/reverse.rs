//! Current fed back from the output to the input through the pass device,
//! in two fault events:
//!
//! - `short_to_supply`: a pin is shorted to a supply at `voltage` through
//!   the short's `resistance` `R`, with the input in its `supply` range.
//!   Below the regulated output's top the regulator sources into the
//!   forcing supply: the current is bounded by the caps over the forcing
//!   voltage's range, and the heat by the worst point of an overload.
//!   Above it the loop turns the pass device off.
//! - `reverse_current`: the input falls to `voltage` (a collapsed or
//!   shorted supply) while the output holds its regulated charge or is
//!   held by another source.
//!
//! Either way, when the output side `V_o` exceeds the input side `V_i` by
//! more than the body diode's drop `V_f`, the diode conducts back:
//! `I = (V_o − V_i − V_f) / R` (Ohm's law around the loop), at most
//! `(V_o,max − V_i,min − V_f,min) / R,min`; for a discharging output
//! capacitor this is the current's peak, at its first instant. The diode's
//! heat is `I·V_f = (A − V_f)·V_f / R` with `A = V_o,max − V_i,min`,
//! concave in `V_f`, so its largest value over the drop's range is at
//! `A/2` clamped to that range; the junction is `T_A,max + P·θJA,max`
//! (as if held: an upper bound for a current that decays).
//!
//! An unstated body-diode drop is taken as 0 V for the current (the most
//! that can flow) and leaves the diode's heat unknown; an unstated
//! resistance leaves a reverse current that can flow unknown, never zero.

use super::current::Currents;
use super::envelope;
use super::heat::{self, Heat};
use super::unknown::{Figure, Unknown, need, optional};
use crate::show;
use guardband_model::{BlockKind, Model, Node, NodeId};
use guardband_units::{Dimension, QuantityKind};

/// Which fault event a case is.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ReverseEvent {
    /// `short_to_supply`: the output side is the fault's voltage.
    SupplyShort,
    /// `reverse_current`: the input side is the fault's voltage.
    InputCollapse,
}

/// The figures of one `short_to_supply` or `reverse_current` fault case.
#[derive(Debug, Clone)]
pub struct ReverseCase {
    /// The fault case.
    pub fault: NodeId,
    pub event: ReverseEvent,
    /// The fault's `voltage` range, V: the forcing supply, or the
    /// collapsed input.
    pub forced: (f64, f64),
    /// The most the regulator sources into the forcing supply when that
    /// can sit below the regulated output's top, A, with what sets it.
    pub forward: Option<(f64, String)>,
    /// The current from the output back to the input.
    pub reverse: Figure<Reverse>,
    /// The hottest junction in this case: the diode's conduction, or the
    /// worst point of an overload when the regulator can source into the
    /// forcing supply (`None` when neither heats the die).
    pub heat: Figure<Option<Heat>>,
    /// The most the faulted pin draws by itself (its `bias_current`), A:
    /// it flows between the pin and the forcing supply besides the pass
    /// device's current. `None` when the pin states none.
    pub pin_bias: Option<f64>,
}

/// The reverse current through the pass device.
#[derive(Debug, Clone, PartialEq)]
pub struct Reverse {
    /// Its upper bound, A (0 when the diode cannot conduct at any corner).
    pub hi: f64,
    /// Its lower bound, A, when the drop is stated.
    pub lo: Option<f64>,
    /// How it was found, in words.
    pub why: String,
}

impl ReverseCase {
    /// The most current between the pin and the forcing supply, either way.
    pub fn current_hi(&self) -> Option<f64> {
        let reverse = self.reverse.as_ref().ok()?.hi;
        Some(self.forward.as_ref().map_or(reverse, |f| f.0.max(reverse)))
    }
}

/// The `short_to_supply` and `reverse_current` fault cases of `reg`, each
/// with its figures (or why they are unknown).
pub fn reverse_cases(
    model: &Model,
    reg: &Node,
    currents: &Figure<Currents>,
    overload: &Figure<Heat>,
) -> Vec<(NodeId, Figure<ReverseCase>)> {
    model
        .children(reg, BlockKind::Fault)
        .filter_map(|f| {
            let event = match f.choice("event")? {
                "short_to_supply" => ReverseEvent::SupplyShort,
                "reverse_current" => ReverseEvent::InputCollapse,
                _ => return None,
            };
            Some((f.id, reverse_case(model, reg, f, event, currents, overload)))
        })
        .collect()
}

fn reverse_case(
    model: &Model,
    reg: &Node,
    fault: &Node,
    event: ReverseEvent,
    currents: &Figure<Currents>,
    overload: &Figure<Heat>,
) -> Figure<ReverseCase> {
    let forced = need(fault, "voltage")?;
    let forced = (forced.lo, forced.hi);
    let output = need(reg, "output")?;
    let sides = match event {
        ReverseEvent::SupplyShort => Sides {
            output: forced,
            input: need(reg, "supply").map(|v| (v.lo, v.hi))?,
            output_name: "the forcing voltage",
            input_name: "the lowest supply",
        },
        ReverseEvent::InputCollapse => Sides {
            output: (output.lo, output.hi),
            input: forced,
            output_name: "the output",
            input_name: "the collapsed input",
        },
    };
    let forward = if event == ReverseEvent::SupplyShort && forced.0 < output.hi {
        let output_top = output.hi;
        let c = currents.as_ref().map_err(Clone::clone)?;
        let top = forced.1.min(output_top);
        let (i, by) = highest_between(&c.upper, forced.0.max(0.0), top)
            .ok_or_else(|| Unknown::because("the current is not bounded at the forcing voltage"))?;
        Some((i, c.cause(by).what.clone()))
    } else {
        None
    };
    let reverse = reverse(model, reg, fault, &sides);
    let diode = match &reverse {
        Ok(r) if r.hi > 0.0 => diode_heat(model, reg, fault, &sides).map(Some),
        Ok(_) => Ok(None),
        Err(u) => Err(u.clone()),
    };
    // Sourcing into the supply heats the pass device no more than the
    // worst point of an overload; the hotter of the two cases is kept.
    let heat = match (forward.is_some(), diode) {
        (true, Ok(h)) => overload.as_ref().map_err(Clone::clone).map(|o| {
            Some(match h {
                Some(h) if h.junction > o.junction => h,
                _ => o.clone(),
            })
        }),
        (_, h) => h,
    };
    let pin_bias = fault
        .reference("pin")
        .and_then(|p| model.node(p).quantity("bias_current"))
        .map(|v| v.hi.max(0.0));
    Ok(ReverseCase {
        fault: fault.id,
        event,
        forced,
        forward,
        reverse,
        heat,
        pin_bias,
    })
}

/// The largest upper bound over `a ..= b`, with the cap that sets it.
fn highest_between(pieces: &[envelope::Piece], a: f64, b: f64) -> Option<(f64, usize)> {
    pieces
        .iter()
        .filter(|p| p.v1 >= a && p.v0 <= b)
        .flat_map(|p| {
            let (v0, v1) = (p.v0.max(a), p.v1.min(b));
            [(p.line.at(v0), p.by), (p.line.at(v1), p.by)]
        })
        .max_by(|x, y| x.0.total_cmp(&y.0))
}

/// The voltages on either side of the pass device in a case, V.
struct Sides {
    output: (f64, f64),
    input: (f64, f64),
    output_name: &'static str,
    input_name: &'static str,
}

/// The body diode's drop range, with whether it was stated.
fn drop_range(pass: &Node) -> Figure<Option<(f64, f64)>> {
    Ok(optional(pass, "body_diode")?.map(|v| (v.lo, v.hi)))
}

fn reverse(model: &Model, reg: &Node, fault: &Node, sides: &Sides) -> Figure<Reverse> {
    let pass = model
        .child(reg, BlockKind::Pass)
        .ok_or_else(|| Unknown::because("the regulator has no `pass` block"))?;
    if pass.flag("reverse_blocking") == Some(true) {
        return Ok(Reverse {
            hi: 0.0,
            lo: Some(0.0),
            why: "the pass device blocks reverse current (`reverse_blocking = true`)".into(),
        });
    }
    let drop = drop_range(pass)?;
    let (drop_lo, drop_text) = match drop {
        Some((lo, _)) => (lo, "the body diode's lowest drop"),
        None => (0.0, "0 V for the unstated body-diode drop"),
    };
    // Inputs of a formula are shown with enough digits to redo it.
    let volts = |v: f64| show::in_unit_digits(v, QuantityKind::VOLTAGE, Some("V"), 6);
    let drive = sides.output.1 - sides.input.0 - drop_lo;
    if drive <= 0.0 {
        return Ok(Reverse {
            hi: 0.0,
            lo: Some(0.0),
            why: format!(
                "{}'s top, {}, does not exceed {}, {}, plus {drop_text}, {}",
                sides.output_name,
                volts(sides.output.1),
                sides.input_name,
                volts(sides.input.0),
                volts(drop_lo),
            ),
        });
    }
    let r = need(fault, "resistance")?;
    if r.lo <= 0.0 {
        return Err(Unknown::because(format!(
            "`{}.resistance` reaches 0 Ω, so the reverse current is not bounded",
            fault.key()
        )));
    }
    let lo = drop.map(|(_, hi)| ((sides.output.0 - sides.input.1 - hi) / r.hi).max(0.0));
    let mut why = format!(
        "({} − {} − {}) / {} through the body diode",
        volts(sides.output.1),
        volts(sides.input.0),
        volts(drop_lo),
        show::in_unit_digits(r.lo, QuantityKind::of(Dimension::RESISTANCE), None, 6)
    );
    if drop.is_none() {
        why.push_str(", the unstated body-diode drop taken as 0 V");
    }
    Ok(Reverse {
        hi: drive / r.lo,
        lo,
        why,
    })
}

/// The diode's heat and the junction it sets (see the module's comment).
fn diode_heat(model: &Model, reg: &Node, fault: &Node, sides: &Sides) -> Figure<Heat> {
    let pass = model
        .child(reg, BlockKind::Pass)
        .ok_or_else(|| Unknown::because("the regulator has no `pass` block"))?;
    let (drop_lo, drop_hi) = need(pass, "body_diode").map(|v| (v.lo, v.hi))?;
    let r = need(fault, "resistance")?.lo;
    let ambient = need(reg, "ambient")?.hi;
    let theta = need(reg, "theta_ja")?.hi;
    let a = sides.output.1 - sides.input.0;
    let vf = (a / 2.0).clamp(drop_lo.max(0.0), drop_hi.max(0.0));
    let current = ((a - vf) / r).max(0.0);
    let power = current * vf;
    Ok(Heat {
        at_voltage: sides.output.1,
        current,
        reason: format!(
            "the body diode conducting {} at a {} drop",
            show::in_unit(current, QuantityKind::CURRENT, None),
            show::in_unit(vf, QuantityKind::VOLTAGE, Some("V"))
        ),
        power,
        junction: heat::junction(ambient, power, theta),
        junction_lo: None,
        supply: sides.input.0,
        ambient,
        theta,
        pulsed: None,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::derive::envelope::{Line, Piece};

    #[test]
    fn the_highest_bound_is_read_inside_the_forcing_range_only() {
        // A foldback line from 100 mA at 0 V to 300 mA at 2 V: over
        // 0.5 V .. 1 V it reaches 200 mA (I = 0.1 + 0.1·V, hand calculation).
        let pieces = [Piece {
            v0: 0.0,
            v1: 2.0,
            line: Line::through(0.0, 0.1, 2.0, 0.3),
            by: 0,
        }];
        let (i, _) = highest_between(&pieces, 0.5, 1.0).unwrap();
        assert!((i - 0.2).abs() < 1e-12);
    }
}
