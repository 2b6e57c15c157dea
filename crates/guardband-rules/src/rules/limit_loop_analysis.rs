//! ## What it flags
//! A sensed (`replica`) limit whose loop has no stability analysis (error);
//! an analysis that does not drive the loop into limiting: no `force`, a pin
//! forced by an ideal current source, a forced voltage not below the output's
//! regulation range, or a forcing resistance high enough that the output can
//! still regulate (error); a break point other than the pass device's gate,
//! or no `require phase_margin` (warnings).
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
//!                       require phase_margin >= 45 deg }
//! ```
//!
//! ## How to fix
//! Force the output below regulation with a voltage source or a resistance,
//! break the loop at `pass.gate` (the common node, clamp on the driving side)
//! and state the phase margin the loop must meet.

use crate::context::Context;
use crate::format::in_unit;
use guardband_model::{BlockKind, Diagnostic, FieldValue, Severity};
use guardband_units::{Dimension, QuantityKind};

const RULE: &str = "limit-loop-analysis";

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for reg in ctx.model.regulators() {
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
                    Diagnostic::error(RULE, limit.file, limit.header_span.clone(), format!("sensed limit `{}` has no stability analysis of its loop", limit.key()))
                        .primary("a second feedback loop, never analysed")
                        .help(format!(
                            "add `analysis {}_loop {{ loop = {}  force vout = ...  break_at = pass.gate  require phase_margin >= 45 deg }}`",
                            limit.key(), limit.key()
                        )),
                );
                continue;
            }
            let window = ctx
                .derived
                .iter()
                .flat_map(|d| &d.limits)
                .find(|l| l.node == limit.id)
                .map(|l| &l.window);
            for a in analyses {
                let forces: Vec<_> = a.fields_named("force").collect();
                if forces.is_empty() {
                    out.push(
                        Diagnostic::error(
                            RULE,
                            a.file,
                            a.header_span.clone(),
                            format!(
                                "analysis `{}` does not force the output into limiting",
                                a.key()
                            ),
                        )
                        .primary("no `force`")
                        .help("force the output below regulation, e.g. `force vout = 1.2 V`"),
                    );
                }
                for f in forces {
                    let Some(v) = f.quantity() else { continue };
                    let show = |x: f64| in_unit(x, v.kind, v.unit.as_deref());
                    if v.kind == QuantityKind::CURRENT {
                        out.push(
                            Diagnostic::error(RULE, a.file, f.expr.span.clone(), format!("analysis `{}` forces `{}` with an ideal current source", a.key(), f.key))
                                .primary("an ideal current source sets the current itself; the limit loop has nothing to do")
                                .help("force with a voltage source below regulation, or a resistance"),
                        );
                    } else if v.kind == QuantityKind::VOLTAGE {
                        if let Some(out_v) = output
                            && v.hi >= out_v.lo
                        {
                            let d = Diagnostic::error(RULE, a.file, f.expr.span.clone(), format!(
                                    "analysis `{}` forces `{}` to {}, not below regulation ({} minimum)",
                                    a.key(), f.key, show(v.hi), in_unit(out_v.lo, out_v.kind, out_v.unit.as_deref())
                                ))
                                .primary("the loop stays in regulation here")
                                .help("force a voltage clearly below the output's low limit");
                            out.push(ctx.label(d, reg, "output", "regulation range"));
                        }
                    } else if v.kind == QuantityKind::of(Dimension::RESISTANCE)
                        && let (Some(out_v), Some(w)) = (output, window)
                    {
                        // With a resistance the output settles at R·I_limit if that is below regulation.
                        if v.hi * w.hi >= out_v.lo {
                            out.push(
                                    Diagnostic::error(RULE, a.file, f.expr.span.clone(), format!(
                                        "analysis `{}`: {} × limit top {} = {} reaches regulation ({} minimum), so the loop may not limit",
                                        a.key(), show(v.hi), in_unit(w.hi, w.kind, w.unit.as_deref()),
                                        in_unit(v.hi * w.hi, QuantityKind::VOLTAGE, Some("V")),
                                        in_unit(out_v.lo, out_v.kind, out_v.unit.as_deref())
                                    ))
                                    .primary("resistance too high")
                                    .help("use a smaller resistance or a voltage source"),
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
                        Diagnostic::error(RULE, a.file, span, format!("analysis `{}` does not break the loop at the pass gate", a.key()))
                            .with_severity(Severity::Warning)
                            .primary(if a.field("break_at").is_some() { "breaks elsewhere" } else { "no `break_at`" })
                            .help("break at `pass.gate`, the node both loops share, with the clamp on the driving side"),
                    );
                }
                if a.named_field("require", "phase_margin").is_none() {
                    out.push(
                        Diagnostic::error(
                            RULE,
                            a.file,
                            a.header_span.clone(),
                            format!("analysis `{}` states no phase-margin requirement", a.key()),
                        )
                        .with_severity(Severity::Warning)
                        .primary("no pass/fail criterion")
                        .help("add `require phase_margin >= 45 deg` (or your design's figure)"),
                    );
                }
            }
        }
    }
}
