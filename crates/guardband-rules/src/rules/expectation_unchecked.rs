//! ## What it flags
//! A fault case's expectation that the checker could not hold against a
//! derived bound: it derives no such figure for that event (`expect output`
//! anywhere, `expect time` in a short), it derives only the other side of
//! it (`expect current >= …` at startup, where only the surge's top is
//! derived), or the figure it needs is not derived because an input is
//! missing (named in the message). An input written with an error is
//! reported where it is written and not again here.
//!
//! ## Why it matters
//! A check that did not run is not a check that passed. A fault plan with
//! an expectation nobody verified reads as covered in review; this finding
//! keeps such a pass criterion visible until the bench or a simulation
//! shows it.
//!
//! ## Failing example
//! ```text
//! fault vout_short { pin = vout  event = short_to_ground  expect output <= 50 mV }
//! ```
//! (the checker derives no output voltage in a short)
//!
//! ## Passing example
//! ```text
//! fault vout_short { pin = vout  event = short_to_ground  expect current <= 300 mA }
//! ```
//!
//! ## How to fix
//! State the inputs the message names, or keep the expectation and verify
//! it on the bench or in simulation (waive this finding with that reason),
//! or restate it as a figure the checker derives.

use crate::context::Context;
use crate::derive::expected::{Expected, expected, expectations};
use crate::show::in_unit;
use guardband_model::Diagnostic;
use guardband_syntax::Relation;

/// The expectation's quantity in words.
fn quantity(name: &str) -> &str {
    match name {
        "junction" => "junction temperature",
        "output" => "output voltage",
        other => other,
    }
}

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for d in ctx.derived {
        for e in expectations(ctx.model, d) {
            let (fault, exp, bound, name, event) = (e.fault, e.field, e.bound, e.name, e.event);
            let upper = match exp.relation {
                Relation::AtMost | Relation::Below => true,
                Relation::AtLeast | Relation::Above => false,
                Relation::Assign => continue,
            };
            let what = quantity(name);
            let why = match expected(d, fault, event, name) {
                Expected::Bounds(b) if (if upper { b.hi } else { b.lo }).is_some() => continue,
                Expected::Bounds(_) => format!(
                    "the checker derives no {} bound of the {what} in a `{event}` case",
                    if upper { "upper" } else { "lower" }
                ),
                Expected::Unknown(u) if u.has_error() => continue,
                Expected::Unknown(u) => {
                    format!("its figure is not derived: {}", u.describe(ctx.model))
                }
                Expected::NotDerived => {
                    format!("the checker derives no {what} in a `{event}` case")
                }
            };
            out.push(
                ctx.finding(
                    fault.file,
                    exp.span.clone(),
                    format!(
                        "fault `{}` expects {name} {} {}, but {why}: this expectation is not checked",
                        fault.key(),
                        exp.relation.symbol(),
                        in_unit(
                            if upper { bound.lo } else { bound.hi },
                            bound.kind,
                            bound.unit.as_deref()
                        ),
                    ),
                )
                .primary("not checked")
                .help("verify it on the bench or in simulation, or state what the figure needs"),
            );
        }
    }
}
