//! ## What it flags
//! A measured figure of a fault case outside the window the spec derives
//! for it at the corner it was measured at: the short-circuit current
//! outside the limit's window with the output at 0 V, an overload's peak
//! current above the most that can flow, a startup surge above the derived
//! surge or a startup slower than the derived worst case, a reverse
//! current above its derived peak. The derived window covers every value
//! the spec admits at that corner, so a measurement outside it means the
//! spec misses a tolerance (or states one too tight), or the circuit is not
//! the one the spec describes.
//!
//! A startup time is measured to 90 % of the nominal output while the
//! derived time runs to the highest output, so it is held against the
//! derived worst case only.
//!
//! ## Why it matters
//! Every figure the checker derives is only as good as the spec's numbers.
//! A circuit that behaves outside them makes every derived margin unsafe,
//! even where no expectation is broken yet.
//!
//! ## Failing example
//! A replica limit whose spec says `ratio = 2000` while the netlist's
//! replica is 1:2500: the measured short current, 2500 × 100 uA, lies
//! above the derived window's top.
//!
//! ## Passing example
//! The same measurement with the netlist's replica at 1:2000.
//!
//! ## How to fix
//! Find which is wrong, the spec or the circuit: correct the value or add
//! the tolerance the spec is missing, or fix the circuit; then measure
//! again.

use crate::compare;
use crate::context::Context;
use crate::derive::expected::{Expected, expected};
use crate::evidence::{case_of, place, sites};
use crate::show::{difference, versus};
use guardband_model::{BlockKind, Diagnostic};

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for site in sites(ctx) {
        for m in site.measurements(ctx.evidence) {
            let Some(case) = case_of(ctx.model, site.regulator, &m.case) else {
                continue;
            };
            if case.kind != BlockKind::Fault {
                continue;
            }
            // The fault case in the tree the derivation is of.
            let Some(fault) = case_of(ctx.model, site.at, &m.case) else {
                continue;
            };
            let Some(event) = fault.choice("event") else {
                continue;
            };
            let Expected::Bounds(window) = expected(site.derived, fault, event, &m.quantity) else {
                continue;
            };
            let Some(kind) = crate::evidence::quantity_kind(BlockKind::Fault, &m.quantity) else {
                continue;
            };
            let lower = if m.quantity == "time" { None } else { window.lo };
            let (edge, above) = match (window.hi, lower) {
                (Some(hi), _) if compare::exceeds(m.value, hi) => (hi, true),
                (_, Some(lo)) if compare::below(m.value, lo) => (lo, false),
                _ => continue,
            };
            let unit = Some(m.unit.as_str());
            let (measured, e) = versus(m.value, edge, kind, unit);
            let by = difference(m.value, edge, kind, unit);
            // The window's top is named by its cause; its bottom is the
            // least value over the corners.
            let (side, why) = if above {
                ("above the derived window's top", format!("the top is {}", window.why))
            } else {
                (
                    "below the derived window's bottom",
                    format!("the least over the corners the spec admits; the top is {}", window.why),
                )
            };
            let message = format!(
                "at corner `{}`, fault `{}` measured {} {measured} ({}), {side} {e} by {by} ({why}): the spec is missing a tolerance, or the circuit is not what the spec says",
                site.corner,
                case.key(),
                m.quantity,
                place(ctx.ws, m),
            );
            out.push(
                ctx.at_block(case, message)
                    .primary("measured outside its derived window")
                    .label(m.file, m.span.clone(), "the measurement")
                    .help("correct the spec's value or tolerance, or the circuit, and measure again"),
            );
        }
    }
}
