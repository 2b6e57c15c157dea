//! ## What it flags
//! A conductor (on-die metal, bond wire, board trace) whose current rating
//! is below the worst current that can flow through it, and a conductor
//! that has no rating from what is written.
//!
//! The current is set by what it `carries`: the pass device or a pin carry
//! the output-path current (the most any protection lets through at any
//! output voltage: the top of a sensed limit window, the larger of an
//! undervoltage-triggered limit's fixed and trip currents, or the
//! full-gate current where nothing else bounds it); a replica limit's
//! branch carries that current divided by the limit's smallest ratio.
//! Metal is rated by its layer's electromigration limit, moved to the
//! temperature it runs at (no lower than the die reaches in a fault) and
//! the target lifetime by Black's equation at the worst corner; bond wires
//! by Preece's fusing current times a stated derating; traces by the
//! IPC-2221 formula for the stated rise; a stated `rating` (its low end)
//! overrides the geometry.
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
//! Widen the metal (the rating grows with the width), thicken a bond wire
//! (Preece: the fusing current grows with the diameter to the 3/2) or a
//! trace (IPC-2221: with the cross-section to the 0.725), add parallel
//! conductors, lower the limit's top edge, or state a characterised
//! `rating`. Regulators with no limit at all are reported by
//! `unlimited-surge` instead.

use crate::compare;
use crate::context::Context;
use crate::derive::{Carries, ConductorKind, ConductorRating, Derived};
use crate::show::{difference, in_unit, number, versus};
use guardband_model::{Diagnostic, Node};
use guardband_units::{Dimension, QuantityKind};

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for d in ctx.derived {
        // With no limit and no soft start, `unlimited-surge` names every
        // conductor the surge overstresses.
        let unlimited = d.worst.as_ref().is_ok_and(|w| w.unlimited) && !has_slew(ctx, d);
        for cr in &d.conductors {
            let c = ctx.node(cr.node);
            match &cr.rating {
                Err(unrated) => {
                    // An input written with an error is reported where it is written.
                    if unrated.why.has_error() {
                        continue;
                    }
                    out.push(
                        ctx.at_block(c, format!(
                                "conductor `{}` has no rating: {}",
                                c.key(),
                                unrated.why.describe(ctx.model)
                            ),
                        )
                        .primary("no rating")
                        .help(unrated.help),
                    );
                }
                Ok(rating) => {
                    let Ok(current) = cr.current else { continue };
                    if unlimited && !matches!(cr.carries, Carries::Branch { .. }) {
                        continue;
                    }
                    if compare::below(*rating, current) {
                        out.push(under_rated(ctx, d, c, cr, *rating, current));
                    }
                }
            }
        }
    }
}

fn has_slew(ctx: &Context, d: &Derived) -> bool {
    let reg = ctx.node(d.regulator);
    ctx.model
        .child(reg, guardband_model::BlockKind::Startup)
        .is_some_and(|s| s.field("slew").is_some())
}

fn under_rated(
    ctx: &Context,
    d: &Derived,
    c: &Node,
    cr: &ConductorRating,
    rating: f64,
    current: f64,
) -> Diagnostic {
    let unit = d.worst.as_ref().ok().and_then(|w| w.unit.as_deref());
    let (r, i) = versus(rating, current, QuantityKind::CURRENT, unit);
    let short = difference(current, rating, QuantityKind::CURRENT, unit);
    let why = match (&d.worst, cr.carries) {
        (Ok(w), Carries::Branch { ratio_lo, .. }) => format!(
            "its replica branch carries 1/{} of {}, {}",
            number(ratio_lo),
            in_unit(w.value, QuantityKind::CURRENT, unit),
            w.cause.what
        ),
        (Ok(w), _) => w.cause.what.clone(),
        (Err(_), _) => String::new(),
    };
    let mut diag = ctx.at_block(c, format!(
            "conductor `{}` is rated {r}, {short} below the {i} that can flow through it ({why})",
            c.key()
        ),
    )
    .primary(format!("rated {r} ({})", cr.basis));
    if let Some((t, why)) = &cr.temperature {
        diag = ctx.label(
            diag,
            c,
            if c.field("temperature").is_some() {
                "temperature"
            } else {
                "layer"
            },
            format!(
                "rated at {} ({why})",
                in_unit(*t, QuantityKind::ABSOLUTE_TEMPERATURE, Some("°C"))
            ),
        );
    }
    if let Some(res) = cr.resistance {
        diag = ctx.label(
            diag,
            c,
            "length",
            format!(
                "{} at temperature: {} drop at {i}",
                in_unit(res, QuantityKind::of(Dimension::RESISTANCE), None),
                in_unit(res * current, QuantityKind::VOLTAGE, None),
            ),
        );
    }
    if let Ok(w) = &d.worst {
        diag = ctx.label(
            diag,
            ctx.node(w.cause.node),
            w.cause.key,
            format!(
                "worst current {}",
                in_unit(w.value, QuantityKind::CURRENT, unit)
            ),
        );
    }
    for key in ["width", "diameter", "rating"] {
        diag = ctx.label(diag, c, key, "sets the rating");
    }
    let lower = match &d.worst {
        Ok(w) if w.unlimited => "or add a limit that bounds the current",
        _ => "or lower the limit's top edge",
    };
    diag.help(fix(cr.kind, current, rating, &i, lower))
}

/// How much to grow the field that sets the rating, by the physics of the rating.
fn fix(kind: ConductorKind, current: f64, rating: f64, shown: &str, lower: &str) -> String {
    let ratio = current / rating;
    match kind.scaling() {
        Some(("rating", _)) => format!("state a rating of at least {shown}, {lower}"),
        Some((key, power)) => {
            let law = match kind {
                ConductorKind::Metal => "the electromigration rating grows with the width",
                ConductorKind::BondWire => {
                    "Preece: the fusing current grows with the diameter to the 3/2"
                }
                _ => "IPC-2221: the current grows with the cross-section to the 0.725",
            };
            format!(
                "size it for at least {shown}: `{key}` about {}× ({law}), {lower}",
                number(crate::show::ceil3(ratio.powf(power)))
            )
        }
        None => format!("size it for at least {shown}, {lower}"),
    }
}
