//! ## What it flags
//! A sensed (`replica`) limit whose loop has no stability analysis (error);
//! an analysis that does not drive the loop into limiting: no `force`, a pin
//! forced by an ideal current source, a forced voltage not below the output's
//! regulation range, or a forcing resistance high enough that the output can
//! still regulate (error); a forced name that is not a pin of the
//! regulator, a forced supply pin (`role = supply`), a requirement written
//! backwards (`require phase_margin <= 45 deg`), or the clamp on the device
//! side of the break (`clamp_side = device`), or a break point other than
//! the pass device's gate. An analysis set up right but with its clamp side
//! or pass criterion unstated is `limit-loop-incomplete`.
//!
//! ## Why it matters
//! While limiting, the replica, comparator and clamp form a second feedback
//! loop around the pass gate with two high-impedance nodes; it needs its own
//! compensation and analysis. An analysis at the regulating operating point
//! never sees that loop. An ideal current source as the forcing element sets
//! the current itself, so the limit loop has nothing to do.
//!
//! ## Failing example
//! ```text
//! analysis limit_loop { loop = sensed  force vout = 20 mA  break_at = vout }
//! ```
//!
//! ## Passing example
//! ```text
//! analysis limit_loop { loop = sensed  force vout = 1.2 V  break_at = pass.gate
//!                       clamp_side = driving  require phase_margin >= 45 deg }
//! ```
//!
//! ## How to fix
//! Force the output below regulation with a voltage source or a resistance,
//! break the loop at `pass.gate` (the common node) with the clamp on the
//! driving side (`clamp_side = driving`), and state the phase margin the
//! loop must meet (`>=`).

use crate::context::Context;
use crate::show::in_unit;
use guardband_model::{BlockKind, Diagnostic, FieldValue, Remedy};
use guardband_syntax::Relation;
use guardband_units::{Dimension, QuantityKind};

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for reg in ctx.regulators() {
        let output = reg.quantity("output");
        for limit in ctx.model.children(reg, BlockKind::Limit) {
            if limit.choice("scheme") != Some("replica") {
                continue;
            }
            let analyses: Vec<_> = ctx
                .model
                .children(reg, BlockKind::Analysis)
                .filter(|a| a.reference("loop") == Some(limit.id))
                .collect();
            if analyses.is_empty() {
                out.push(
                    ctx.at_block(limit, format!("sensed limit `{}` has no stability analysis of its loop", limit.key()))
                        .primary("a second feedback loop, never analysed")
                        .help(format!(
                            "add `analysis {}_loop {{ loop = {}  force vout = ...  break_at = pass.gate  require phase_margin >= 45 deg }}`",
                            limit.key(), limit.key()
                        )),
                );
                continue;
            }
            let window = crate::derive::derived_of(ctx.derived, reg.id)
                .and_then(|d| d.limit(limit.id))
                .and_then(|l| l.window.as_ref().ok());
            for a in analyses {
                let forces: Vec<_> = a.fields_named("force").collect();
                if forces.is_empty() {
                    out.push(
                        ctx.at_block(a, format!(
                                "analysis `{}` does not force the output into limiting",
                                a.key()
                            ),
                        )
                        .primary("no `force`")
                        .help("force the output below regulation, e.g. `force vout = 1.2 V`"),
                    );
                }
                for f in forces {
                    let pin = ctx
                        .model
                        .children(reg, BlockKind::Pin)
                        .find(|p| p.key() == f.key);
                    match pin {
                        None => {
                            let pins: Vec<&str> = ctx
                                .model
                                .children(reg, BlockKind::Pin)
                                .map(|p| p.key())
                                .collect();
                            let mut d = ctx.finding(a.file,
                                f.key_span.clone(),
                                format!(
                                    "analysis `{}` forces `{}`, which is not a pin of `{}`",
                                    a.key(),
                                    f.key,
                                    reg.key()
                                ),
                            )
                            .primary("no such pin");
                            d = match guardband_model::did_you_mean(&f.key, pins.iter().copied()) {
                                Some(s) => d.help(format!("did you mean `force {s}`?")),
                                None => d.help("force the regulator's output pin"),
                            };
                            out.push(d);
                            continue;
                        }
                        Some(p) if p.choice("role") == Some("supply") => {
                            let d = ctx.finding(a.file,
                                f.key_span.clone(),
                                format!(
                                    "analysis `{}` forces the supply pin `{}`; the limit loop is driven by forcing the output",
                                    a.key(),
                                    f.key
                                ),
                            )
                            .primary("a supply pin");
                            out.push(
                                ctx.label(d, p, "role", "declared a supply pin here")
                                    .help("force the output pin below regulation instead"),
                            );
                            continue;
                        }
                        Some(_) => {}
                    }
                    let Some(v) = f.quantity() else { continue };
                    let show = |x: f64| in_unit(x, v.kind, v.unit.as_deref());
                    if v.kind == QuantityKind::CURRENT {
                        out.push(
                            ctx.finding(a.file, f.expr.span.clone(), format!("analysis `{}` forces `{}` with an ideal current source", a.key(), f.key))
                                .primary("an ideal current source sets the current itself; the limit loop has nothing to do")
                                .help("force with a voltage source below regulation, or a resistance")
                                .remedy(Remedy::ForceBelowRegulation),
                        );
                    } else if v.kind == QuantityKind::VOLTAGE {
                        if let Some(out_v) = output
                            && crate::compare::at_least(v.hi, out_v.lo)
                        {
                            let (forced, low) =
                                crate::show::versus(v.hi, out_v.lo, v.kind, v.unit.as_deref());
                            let d = ctx.finding(a.file, f.expr.span.clone(), format!(
                                    "analysis `{}` forces `{}` to {forced}, not below regulation ({low} minimum)",
                                    a.key(), f.key
                                ))
                                .primary("the loop stays in regulation here")
                                .help("force a voltage clearly below the output's low limit")
                                .remedy(Remedy::ForceBelowRegulation);
                            out.push(ctx.label(d, reg, "output", "regulation range"));
                        }
                    } else if v.kind == QuantityKind::of(Dimension::RESISTANCE)
                        && let (Some(out_v), Some(w)) = (output, window)
                    {
                        // With a resistance the output settles at R·I_limit if that is below regulation.
                        if crate::compare::at_least(v.hi * w.hi, out_v.lo) {
                            out.push(
                                    ctx.finding(a.file, f.expr.span.clone(), format!(
                                        "analysis `{}`: {} × limit top {} = {} reaches regulation ({} minimum), so the loop may not limit",
                                        a.key(), show(v.hi), in_unit(w.hi, w.kind, w.unit.as_deref()),
                                        in_unit(v.hi * w.hi, QuantityKind::VOLTAGE, Some("V")),
                                        in_unit(out_v.lo, out_v.kind, out_v.unit.as_deref())
                                    ))
                                    .primary("resistance too high")
                                    .help("use a smaller resistance or a voltage source")
                                    .remedy(Remedy::ForceBelowRegulation),
                                );
                        }
                    }
                }
                let at_gate = matches!(
                    a.field("break_at").and_then(|f| f.value.as_ref()),
                    Some(FieldValue::Node { node, terminal: Some(t) }) if ctx.node(*node).kind == BlockKind::Pass && t == "gate"
                );
                if !at_gate {
                    let span = ctx.value_span(a, "break_at");
                    out.push(
                        ctx.finding(a.file, span, format!("analysis `{}` does not break the loop at the pass gate", a.key()))
                            .primary(if a.field("break_at").is_some() { "breaks elsewhere" } else { "no `break_at`" })
                            .help("break at `pass.gate`, the node both loops share, with the clamp on the driving side")
                            .remedy(Remedy::BreakAtPassGate),
                    );
                }
                for req in a.fields_named("require") {
                    if matches!(req.relation, Relation::AtMost | Relation::Below) {
                        let name = req.name.as_deref().unwrap_or("");
                        out.push(
                            ctx.finding(a.file,
                                req.span.clone(),
                                format!(
                                    "analysis `{}` requires {name} {} ...: a margin is a minimum",
                                    a.key(),
                                    req.relation.symbol()
                                ),
                            )
                            .primary("written backwards")
                            .help(format!("write `require {name} >= ...`")),
                        );
                    }
                }
                if a.choice("clamp_side") == Some("device") {
                    out.push(
                        ctx.at(a, "clamp_side", format!(
                            "analysis `{}` has the clamp on the device side of the break",
                            a.key()
                        ))
                        .primary("the clamp must drive the gate from the driving side")
                        .help("connect the clamp on the driving side of the break (`clamp_side = driving`), so that the loop gain includes it")
                        .remedy(Remedy::ClampOnDrivingSide),
                    );
                }
            }
        }
    }
}
