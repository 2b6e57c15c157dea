//! ## What it flags
//! A conductor (on-die metal, bond wire, board trace) whose current rating at
//! the temperature it sees is below the worst current that can flow through
//! it: the top of the sensed limit window, the larger of the fixed and the
//! characterised trip current, or, with no limit, the full-gate current at the
//! strong corner. Metal is rated by its current-density limit, derated from
//! its reference temperature (and lifetime) with Black's equation; bond wires
//! by Preece's fusing current; traces by the IPC-2221 formula. A stated
//! `rating` overrides the geometry. Also flags a conductor that cannot be
//! rated from what is written.
//!
//! ## Why it matters
//! Metal sized for the rated load fails by electromigration, or fuses, when a
//! fault holds the current at the top of the limit window.
//!
//! ## Failing example
//! ```text
//! conductor pass_source { carries = pass  layer = demo.top_metal  width = 12 um }
//! ```
//! with a limit window reaching 230 mA and a 1 mA/um² · 0.9 um layer.
//!
//! ## Passing example
//! ```text
//! conductor pass_source { carries = pass  layer = demo.top_metal  width = 300 um }
//! ```
//!
//! ## How to fix
//! Widen the metal (or add parallel wires), lower the limit's top edge, or
//! state a characterised `rating`. Regulators with no limit at all are
//! reported by `unlimited-surge` instead.

use crate::context::Context;
use crate::format::in_unit;
use guardband_model::{Diagnostic, Severity};
use guardband_units::QuantityKind;

const RULE: &str = "conductor-under-rated";

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for d in ctx.derived {
        let Some(worst) = &d.worst else { continue };
        let unlimited = d.limits.is_empty() && d.startup.as_ref().is_none_or(|s| !s.bounded);
        for cr in &d.conductors {
            let c = ctx.node(cr.node);
            let unit = worst.unit.as_deref();
            let show = |x: f64| in_unit(x, QuantityKind::CURRENT, unit);
            match &cr.rating {
                Err(why) => {
                    out.push(
                        Diagnostic::error(
                            RULE,
                            c.file,
                            c.header_span.clone(),
                            format!("cannot rate conductor `{}`: {why}", c.key()),
                        )
                        .with_severity(Severity::Error)
                        .primary("no rating")
                        .help("complete its geometry or state `rating`"),
                    );
                }
                Ok(rating) if *rating < worst.value && !unlimited => {
                    let mut diag = Diagnostic::error(
                        RULE,
                        c.file,
                        c.header_span.clone(),
                        format!(
                            "conductor `{}` is rated {} but up to {} can flow ({})",
                            c.key(),
                            show(*rating),
                            show(worst.value),
                            worst.reason
                        ),
                    )
                    .primary(format!("rated {} ({})", show(*rating), cr.basis));
                    if let Some(r) = cr.resistance {
                        diag = diag.label(
                            c.file,
                            ctx.value_span(c, "length"),
                            format!(
                                "{} at temperature: {} drop at {}",
                                in_unit(
                                    r,
                                    QuantityKind::of(guardband_units::Dimension::RESISTANCE),
                                    None
                                ),
                                in_unit(r * worst.value, QuantityKind::VOLTAGE, None),
                                show(worst.value)
                            ),
                        );
                    }
                    if let Some((n, key)) = worst.from {
                        diag = ctx.label(
                            diag,
                            ctx.node(n),
                            key,
                            format!("worst current {}", show(worst.value)),
                        );
                    }
                    for key in ["width", "diameter", "rating"] {
                        diag = ctx.label(diag, c, key, "sets the rating");
                    }
                    out.push(diag.help(format!(
                        "size it for at least {}: about {}× wider, or lower the limit's top edge",
                        show(worst.value),
                        crate::format::number(worst.value / rating)
                    )));
                }
                Ok(_) => {}
            }
        }
    }
}
