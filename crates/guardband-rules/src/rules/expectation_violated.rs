//! ## What it flags
//! A fault case whose stated expectation the derived bounds contradict at
//! some corner the spec admits:
//! - `expect current` in a `short_to_ground` case: the current with the
//!   output at 0 V (a foldback's or fixed current, else the limit);
//! - `expect current` in an `overload` case: the most that can flow at any
//!   output voltage (the top of the limit window, or of the trip current);
//! - `expect current` at `startup`: the surge;
//! - `expect junction` in a short (at 0 V) or an overload (the worst point
//!   of a partial short);
//! - `expect time` at `startup`: the startup time;
//! - `expect current` in a `short_to_supply` case: the current the
//!   regulator sources into the forcing supply or the reverse current
//!   through the pass device's body diode, whichever is larger;
//!   `expect junction` there: the hotter of the diode's conduction and the
//!   worst point of an overload;
//! - `expect current` and `expect junction` in a `reverse_current` case
//!   (the input falls below the output): the diode's peak reverse current
//!   and its heat.
//!
//! `<=` and `<` are held against the upper bound of the figure, `>=` and
//! `>` against its lower bound; a bound with a tolerance is taken at its
//! strict end. An expectation with no derived bound to hold it against is
//! named by `expectation-unchecked`.
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

use crate::compare;
use crate::context::Context;
use crate::derive::expected::{Bounds, Expected, expected, expectations};
use crate::show::{difference, versus};
use guardband_model::{Diagnostic, Value};
use guardband_syntax::Relation;

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for d in ctx.derived {
        for e in expectations(ctx.model, d) {
            let (fault, exp, bound, name) = (e.fault, e.field, e.bound, e.name);
            let Expected::Bounds(fig) = expected(d, fault, e.event, name) else {
                continue;
            };
            let Some((derived, limit, upper)) = contradiction(exp.relation, &fig, bound) else {
                continue;
            };
            let show = |a: f64, b: f64| versus(a, b, bound.kind, bound.unit.as_deref());
            let message = if derived.is_infinite() {
                format!(
                    "fault `{}` expects {name} {} {}, but the output never starts",
                    fault.key(),
                    exp.relation.symbol(),
                    show(limit, limit).0
                )
            } else {
                let (x, l) = show(derived, limit);
                let by = difference(derived, limit, bound.kind, bound.unit.as_deref());
                if upper {
                    format!(
                        "fault `{}` expects {name} {} {l}, but it can reach {x}, {by} more ({})",
                        fault.key(),
                        exp.relation.symbol(),
                        fig.why
                    )
                } else {
                    format!(
                        "fault `{}` expects {name} {} {l}, but it can be as low as {x}, {by} less ({})",
                        fault.key(),
                        exp.relation.symbol(),
                        fig.why
                    )
                }
            };
            out.push(
                ctx.finding(fault.file, exp.span.clone(), message)
                    .primary("contradicted by the derived bounds")
                    .help("correct the expectation, or change the design so that every corner meets it"),
            );
        }
    }
}

/// The derived bound that breaks the expectation, the expectation's strict
/// end, and whether it is the upper bound; `None` when it holds (or the
/// bound it needs is unknown).
fn contradiction(relation: Relation, fig: &Bounds, bound: &Value) -> Option<(f64, f64, bool)> {
    match relation {
        Relation::AtMost => {
            let hi = fig.hi?;
            compare::exceeds(hi, bound.lo).then_some((hi, bound.lo, true))
        }
        Relation::Below => {
            let hi = fig.hi?;
            compare::at_least(hi, bound.lo).then_some((hi, bound.lo, true))
        }
        Relation::AtLeast => {
            let lo = fig.lo?;
            compare::below(lo, bound.hi).then_some((lo, bound.hi, false))
        }
        Relation::Above => {
            let lo = fig.lo?;
            compare::at_most(lo, bound.hi).then_some((lo, bound.hi, false))
        }
        Relation::Assign => None,
    }
}
