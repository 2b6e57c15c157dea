//! The currents of a regulator: every protection as a cap over the output
//! voltage (see [`super::envelope`]), the bound above and below, and the
//! figures read off them: the worst current that can flow, the current in a
//! hard short, and the least current in overload.
//!
//! What two protections mean together: the current is the smallest cap in
//! force. The full-gate current caps it always; a sensed limit caps it
//! always; a foldback bends the sensed limits (or, without one, the
//! full-gate current) down to its own current at 0 V; an
//! undervoltage-triggered limit sets its fixed current below its threshold
//! voltage and, with a characterised trip current, caps it at that current
//! above (in the threshold's spread band either may hold). So the figures
//! do not depend on the order of the blocks.

use super::envelope::{self, Cap, Line, Piece};
use super::unknown::{Figure, Unknown, need, optional};
use super::window::{LimitWindow, Scheme, UnreadLimit};
use guardband_model::{BlockKind, Model, Node, NodeId};

/// What sets the current on a piece of the envelope.
#[derive(Debug, Clone, PartialEq)]
pub struct Cause {
    pub node: NodeId,
    /// The field the number comes from, for labels.
    pub key: &'static str,
    /// In words, e.g. "the top of the `sensed` limit window".
    pub what: String,
}

/// The current over output voltage `0 ..= vmax`, bounded above and below.
#[derive(Debug, Clone)]
pub struct Currents {
    pub vmax: f64,
    /// The most that can flow at each output voltage.
    pub upper: Vec<Piece>,
    /// The least the regulator delivers at each output voltage when the
    /// load asks for more; unknown where nothing bounds it from below.
    pub lower: Figure<Vec<Piece>>,
    /// Indexed by [`Piece::by`].
    pub causes: Vec<Cause>,
}

/// The largest current that can flow in the output path, and why.
#[derive(Debug, Clone)]
pub struct WorstCurrent {
    pub value: f64,
    /// The output voltage at which it flows (the lowest, if several).
    pub at_voltage: f64,
    pub unit: Option<String>,
    pub cause: Cause,
    /// Whether only the full-gate current bounds it (no protection does).
    pub unlimited: bool,
}

impl Currents {
    /// The upper bound at output voltage `v`, with its cause.
    pub fn upper_at(&self, v: f64) -> Option<(f64, &Cause)> {
        envelope::at(&self.upper, v).map(|(i, by)| (i, &self.causes[by]))
    }

    /// The lower bound at output voltage `v`.
    pub fn lower_at(&self, v: f64) -> Option<f64> {
        self.lower
            .as_ref()
            .ok()
            .and_then(|l| envelope::at(l, v))
            .map(|(i, _)| i)
    }

    /// The cause of a piece.
    pub fn cause(&self, by: usize) -> &Cause {
        &self.causes[by]
    }
}

/// Caps of both bounds, built up protection by protection.
struct Builder {
    upper: Vec<Cap>,
    lower: Vec<Cap>,
    causes: Vec<Cause>,
}

impl Builder {
    fn cause(&mut self, node: NodeId, key: &'static str, what: String) -> usize {
        self.causes.push(Cause { node, key, what });
        self.causes.len() - 1
    }

    /// A cap of `lo ..= hi` at every voltage.
    fn flat(&mut self, by: usize, lo: f64, hi: f64) {
        self.upper.push(Cap::flat(by, hi));
        self.lower.push(Cap::flat(by, lo));
    }
}

/// Builds the currents of `reg` from its pass device, limits and foldback.
pub fn currents(
    model: &Model,
    reg: &Node,
    limits: &[LimitWindow],
    unread: &[UnreadLimit],
) -> Figure<Currents> {
    let mut unknown = Unknown::default();
    for u in unread {
        unknown = unknown.join(&u.why);
    }
    let mut b = Builder {
        upper: Vec::new(),
        lower: Vec::new(),
        causes: Vec::new(),
    };
    let pass = model.child(reg, BlockKind::Pass);
    let full_gate = match pass {
        Some(p) => optional(p, "full_gate_current").map(|v| v.map(|v| (p.id, v.clone()))),
        None => Ok(None),
    };
    let full_gate = full_gate.unwrap_or_else(|u| {
        unknown = std::mem::take(&mut unknown).join(&u);
        None
    });
    let foldback = model.child(reg, BlockKind::Foldback);
    let fold = match foldback.map(read_foldback) {
        Some(Ok(f)) => Some(f),
        Some(Err(u)) => {
            unknown = std::mem::take(&mut unknown).join(&u);
            None
        }
        None => None,
    };
    let fold_current = fold.as_ref().map(|f| (f.node, f.at_zero.clone()));
    let output = reg.quantity("output");
    let varies =
        fold_current.is_some() || limits.iter().any(|l| l.scheme == Scheme::UndervoltageFixed);
    let vmax = match output {
        Some(o) => o.hi.max(0.0),
        None if varies => {
            return Err(unknown.join(&need(reg, "output").err().unwrap_or_default()));
        }
        None => 0.0,
    };
    let knee = match fold.as_ref().and_then(|f| f.knee) {
        Some(k) => k,
        None => output
            .map(|o| (o.lo.max(0.0), o.hi.max(0.0)))
            .unwrap_or((0.0, 0.0)),
    };
    // A foldback bends a cap from its own current at 0 V to the cap at
    // regulation, reached at the knee.
    let folded = |b: &mut Builder, by: usize, lo: f64, hi: f64, fold: &guardband_model::Value| {
        let (upper, lower) = fold_caps(by, (fold.lo, fold.hi), (lo, hi), knee);
        b.upper.push(upper);
        b.lower.push(lower);
    };
    // A foldback with its own current at regulation is a protection of its own.
    if let Some(f) = &fold
        && let Some(at_reg) = &f.at_regulation
    {
        let by = b.cause(f.node, "at_regulation", "the foldback line".to_string());
        folded(&mut b, by, at_reg.lo, at_reg.hi, &f.at_zero);
    }
    let bends = fold.as_ref().is_some_and(|f| f.at_regulation.is_none());
    let fold_current = fold_current.filter(|_| bends);
    let mut sensed = 0;
    for l in limits {
        let node = model.node(l.node);
        let window = match &l.window {
            Ok(w) => w,
            Err(u) => {
                unknown = unknown.join(u);
                continue;
            }
        };
        match l.scheme {
            Scheme::Replica => {
                sensed += 1;
                match &fold_current {
                    Some((f, fold)) => {
                        let by = b.cause(
                            *f,
                            "at_zero",
                            format!("the `{}` limit folded back toward 0 V", node.key()),
                        );
                        folded(&mut b, by, window.lo, window.hi, fold);
                    }
                    None => {
                        let by = b.cause(
                            l.node,
                            "threshold",
                            format!("the top of the `{}` limit window", node.key()),
                        );
                        b.flat(by, window.lo, window.hi);
                    }
                }
            }
            Scheme::UndervoltageFixed => {
                let (trip, threshold) = match (&l.trip, &l.threshold_voltage) {
                    (Ok(t), Ok(v)) => (t.as_ref(), v.as_ref()),
                    (t, v) => {
                        for u in [t.as_ref().err(), v.as_ref().err()].into_iter().flatten() {
                            unknown = std::mem::take(&mut unknown).join(u);
                        }
                        continue;
                    }
                };
                let name = node.key();
                let fixed = b.cause(
                    l.node,
                    "fixed_current",
                    format!("the `{name}` fixed current"),
                );
                let band = b.cause(
                    l.node,
                    "trip_current",
                    format!(
                        "the larger of the `{name}` fixed and trip currents, near its threshold"
                    ),
                );
                let above = b.cause(
                    l.node,
                    "trip_current",
                    format!("the top of the `{name}` characterised trip current"),
                );
                // Without a stated threshold voltage it may sit anywhere up to regulation.
                let (th_lo, th_hi) = threshold
                    .map(|v| (v.lo.max(0.0), v.hi.max(0.0)))
                    .unwrap_or((0.0, vmax));
                let pieces = |fixed_i: f64, trip_i: Option<f64>, wider: fn(f64, f64) -> f64| {
                    vec![
                        (f64::NEG_INFINITY, th_lo, Some(Line::flat(fixed_i))),
                        (th_lo, th_hi, trip_i.map(|t| Line::flat(wider(fixed_i, t)))),
                        (th_hi, f64::INFINITY, trip_i.map(Line::flat)),
                    ]
                };
                let up = pieces(window.hi, trip.map(|t| t.hi), f64::max);
                // In the band the lower bound is the fixed current when no trip is stated.
                let mut down = pieces(window.lo, trip.map(|t| t.lo), f64::min);
                if trip.is_none() {
                    down[1].2 = Some(Line::flat(window.lo));
                }
                // A piece carries one cause: the cap goes in as three parts,
                // each capping on its own stretch only (`None` elsewhere).
                for (i, by) in [fixed, band, above].into_iter().enumerate() {
                    let keep = |p: &[(f64, f64, Option<Line>)]| {
                        p.iter()
                            .enumerate()
                            .map(|(j, x)| if i == j { *x } else { (x.0, x.1, None) })
                            .collect::<Vec<_>>()
                    };
                    b.upper.push(Cap {
                        by,
                        pieces: keep(&up),
                    });
                    b.lower.push(Cap {
                        by,
                        pieces: keep(&down),
                    });
                }
            }
        }
    }
    if let Some((pass_id, fg)) = &full_gate {
        let by = b.cause(
            *pass_id,
            "full_gate_current",
            "the full-gate current at the strong corner".to_string(),
        );
        match (&fold_current, sensed) {
            (Some((_, fold)), 0) => folded(&mut b, by, fg.lo, fg.hi, fold),
            _ => b.flat(by, fg.lo, fg.hi),
        }
    }
    if !unknown.needs.is_empty() {
        return Err(unknown);
    }
    if b.upper.is_empty() {
        let mut u =
            Unknown::because("no limit and no full-gate current: nothing bounds the current");
        if let Some(p) = pass {
            u.needs.push(super::unknown::Need::Missing {
                node: p.id,
                key: "full_gate_current".into(),
            });
        }
        return Err(u);
    }
    let upper = envelope::lowest(&b.upper, vmax).map_err(|(from, to)| {
        let what = if full_gate.is_none() {
            "state `pass.full_gate_current`, or `trip_current` for the undervoltage-triggered limit"
        } else {
            "a protection is missing"
        };
        Unknown::because(format!(
            "nothing bounds the current with the output between {} and {}: {what}",
            crate::show::in_unit(from, guardband_units::QuantityKind::VOLTAGE, Some("V")),
            crate::show::in_unit(to, guardband_units::QuantityKind::VOLTAGE, Some("V")),
        ))
    })?;
    let lower = envelope::lowest(&b.lower, vmax).map_err(|_| {
        Unknown::because("nothing bounds from below the current delivered above the undervoltage threshold: state `pass.full_gate_current`")
    });
    Ok(Currents {
        vmax,
        upper,
        lower,
        causes: b.causes,
    })
}

/// The worst current: the most the upper bound reaches over the output range.
pub fn worst_current(model: &Model, reg: &Node, c: &Currents) -> Figure<WorstCurrent> {
    let (value, at_voltage, by) =
        envelope::highest(&c.upper).ok_or_else(|| Unknown::because("no current is bounded"))?;
    let cause = c.cause(by).clone();
    let unlimited = model.node(cause.node).kind == BlockKind::Pass;
    let unit = model
        .node(cause.node)
        .quantity(cause.key)
        .and_then(|v| v.unit.as_deref().map(str::to_string))
        .or_else(|| {
            super::load::Load::read(reg, "load")
                .ok()
                .flatten()
                .and_then(|l| l.current_unit().map(str::to_string))
        });
    Ok(WorstCurrent {
        value,
        at_voltage,
        unit,
        cause,
        unlimited,
    })
}

/// A foldback as written: its current at 0 V, its own current at the knee
/// when stated, and the knee when stated.
struct Foldback {
    node: NodeId,
    at_zero: guardband_model::Value,
    at_regulation: Option<guardband_model::Value>,
    knee: Option<(f64, f64)>,
}

fn read_foldback(f: &Node) -> Figure<Foldback> {
    let (at_zero, (at_regulation, knee)) = super::unknown::both(
        need(f, "at_zero"),
        super::unknown::both(optional(f, "at_regulation"), optional(f, "knee")),
    )?;
    Ok(Foldback {
        node: f.id,
        at_zero: at_zero.clone(),
        at_regulation: at_regulation.cloned(),
        knee: knee.map(|k| (k.lo.max(0.0), k.hi.max(0.0))),
    })
}

/// The caps of a line from `zero` at 0 V to `top` at the knee and flat
/// above, over every corner of the three. The current at any voltage rises
/// with both currents, so the upper cap takes their high ends and the
/// lower cap their low ends; the knee's extreme depends on which way the
/// line runs: a rising line is highest with the knee at its lowest, a
/// falling one (more current at 0 V than at the knee) with the knee at its
/// highest, and the other way round for the lower cap.
fn fold_caps(by: usize, zero: (f64, f64), top: (f64, f64), knee: (f64, f64)) -> (Cap, Cap) {
    let cap = |z: f64, t: f64, k: f64| Cap {
        by,
        pieces: vec![
            (f64::NEG_INFINITY, k, Some(Line::through(0.0, z, k, t))),
            (k, f64::INFINITY, Some(Line::flat(t))),
        ],
    };
    let (knee_lo, knee_hi) = knee;
    let upper_knee = if zero.1 <= top.1 { knee_lo } else { knee_hi };
    let lower_knee = if zero.0 <= top.0 { knee_hi } else { knee_lo };
    (
        cap(zero.1, top.1, upper_knee),
        cap(zero.0, top.0, lower_knee),
    )
}
