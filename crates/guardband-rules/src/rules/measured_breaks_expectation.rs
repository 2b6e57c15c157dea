//! ## What it flags
//! A measured figure in a results file (from `guardband testbench --run`,
//! or a bench's CSV) that breaks the expectation its fault case states
//! (`expect current <= 300 mA`) or the requirement its analysis states
//! (`require phase_margin >= 45 deg`), at the corner it was measured at.
//! `<=` and `<` are held against the bound's low end, `>=` and `>` against
//! its high end, as `expectation-violated` does with derived figures.
//!
//! ## Why it matters
//! The fault plan says what the bench or simulation must show. A
//! measurement that says otherwise is a failed test case, whatever the
//! derived figures say.
//!
//! ## Failing example
//! ```text
//! fault vout_short { pin = vout  event = short_to_ground  expect current <= 200 mA }
//! ```
//! with the results file recording `vout_short, low, current, 212, mA`.
//!
//! ## Passing example
//! The same case with a measured current of 158 mA.
//!
//! ## How to fix
//! Find why the circuit misses the expectation (the measurement's deck is
//! named in the results file), and fix the circuit, or the expectation if
//! it was wrong; then measure again.

use crate::compare;
use crate::context::Context;
use crate::evidence::{case_of, place, sites};
use crate::show::{difference, versus};
use guardband_model::{BlockKind, Diagnostic};
use guardband_syntax::Relation;

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for site in sites(ctx) {
        for m in site.measurements(ctx.evidence) {
            let Some(case) = case_of(ctx.model, site.regulator, &m.case) else {
                continue;
            };
            let keyword = if case.kind == BlockKind::Fault {
                "expect"
            } else {
                "require"
            };
            for field in case.fields_named(keyword) {
                if field.name.as_deref() != Some(m.quantity.as_str()) {
                    continue;
                }
                let Some(bound) = field.quantity() else {
                    continue;
                };
                let (limit, above) = match field.relation {
                    Relation::AtMost if compare::exceeds(m.value, bound.lo) => (bound.lo, true),
                    Relation::Below if compare::at_least(m.value, bound.lo) => (bound.lo, true),
                    Relation::AtLeast if compare::below(m.value, bound.hi) => (bound.hi, false),
                    Relation::Above if compare::at_most(m.value, bound.hi) => (bound.hi, false),
                    _ => continue,
                };
                let unit = bound.unit.as_deref();
                let (measured, l) = versus(m.value, limit, bound.kind, unit);
                let by = difference(m.value, limit, bound.kind, unit);
                let side = if above { "more" } else { "less" };
                let message = format!(
                    "at corner `{}`, {} `{}` measured {} {measured} ({}), breaking its {} {} {} {l}: {by} {side}",
                    site.corner,
                    case.keyword,
                    case.key(),
                    m.quantity,
                    place(ctx.ws, m),
                    keyword,
                    m.quantity,
                    field.relation.symbol(),
                );
                out.push(
                    ctx.finding(case.file, field.span.clone(), message)
                        .primary("broken by a measurement")
                        .label(m.file, m.span.clone(), "the measurement")
                        .help("fix the circuit (or the expectation, if it was wrong) and measure again"),
                );
            }
        }
    }
}
