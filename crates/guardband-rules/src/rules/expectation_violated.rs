//! ## What it flags
//! A fault case whose stated expectation the derived worst case contradicts:
//! `expect current` in a short or overload (short current: foldback, else the
//! worst current) or at startup (the surge); `expect junction` in a short
//! (junction temperature of the sustained short); `expect time` at startup
//! (worst-case startup time). `expect output` is recorded but not derived.
//!
//! ## Why it matters
//! The plan says what the bench or simulation should show. If the spec's own
//! numbers already say otherwise, either the expectation or the design is wrong,
//! and the test will fail later at more cost.
//!
//! ## Failing example
//! ```text
//! fault vout_short { pin = vout  event = short_to_ground  expect current <= 200 mA }
//! ```
//! with a limit window whose top is 260 mA.
//!
//! ## Passing example
//! ```text
//! fault vout_short { pin = vout  event = short_to_ground  expect current <= 300 mA }
//! ```
//!
//! ## How to fix
//! Correct the expectation to what the design does, or change the design so
//! that its worst case meets the expectation.

use crate::context::Context;
use crate::format::in_unit;
use guardband_model::{BlockKind, Diagnostic, Severity, Value};
use guardband_syntax::Relation;

const RULE: &str = "expectation-violated";

fn holds(relation: Relation, derived: f64, bound: &Value) -> bool {
    match relation {
        Relation::AtMost => derived <= bound.hi,
        Relation::Below => derived < bound.hi,
        Relation::AtLeast => derived >= bound.lo,
        Relation::Above => derived > bound.lo,
        Relation::Assign => true,
    }
}

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for d in ctx.derived {
        let reg = ctx.node(d.regulator);
        for fault in ctx.model.children(reg, BlockKind::Fault) {
            let event = fault.choice("event");
            for exp in fault.fields_named("expect") {
                let Some(bound) = exp.quantity() else {
                    continue;
                };
                let name = exp.name.as_deref().unwrap_or("");
                let derived: Option<(f64, String)> = match (event, name) {
                    (Some("short_to_ground" | "overload"), "current") => d
                        .short
                        .as_ref()
                        .map(|s| (s.current, s.reason.clone()))
                        .or_else(|| d.worst.as_ref().map(|w| (w.value, w.reason.clone()))),
                    (Some("startup"), "current") => d
                        .startup
                        .as_ref()
                        .map(|s| (s.surge, s.surge_reason.clone())),
                    (Some("short_to_ground" | "overload"), "junction") => {
                        d.short.as_ref().map(|s| {
                            (
                                s.junction,
                                "sustained-short junction temperature".to_string(),
                            )
                        })
                    }
                    (Some("startup"), "time") => d
                        .startup
                        .as_ref()
                        .and_then(|s| s.time.map(|t| (t, "worst-case startup time".to_string()))),
                    _ => None,
                };
                let Some((value, why)) = derived else {
                    continue;
                };
                let worst = value;
                if !holds(exp.relation, worst, bound) {
                    let show = |x: f64| in_unit(x, bound.kind, bound.unit.as_deref());
                    out.push(
                        Diagnostic::error(RULE, fault.file, exp.span.clone(), format!(
                            "fault `{}` expects {name} {} {}, but the worst case is {} ({why})",
                            fault.key(), exp.relation.symbol(), show(if matches!(exp.relation, Relation::AtMost | Relation::Below) { bound.hi } else { bound.lo }), show(worst)
                        ))
                        .with_severity(Severity::Error)
                        .primary("contradicted by the derived worst case")
                        .help("correct the expectation, or change the design so that its worst case meets it"),
                    );
                }
            }
        }
    }
}
