//! ## What it flags
//! A pass device whose full-gate current at its weak corner (the low end of
//! `full_gate_current`) is below the rated load (the top of `load`).
//!
//! ## Why it matters
//! The pass device must deliver the rated current at the weakest process,
//! voltage and temperature corner with the gate driven as far as it goes.
//! Below that, the regulator drops out of regulation at rated load on weak
//! parts, and every startup figure charged by that current is slower.
//!
//! ## Failing example
//! ```text
//! load = 0 mA .. 120 mA
//! pass { full_gate_current = 50 mA .. 300 mA }
//! ```
//!
//! ## Passing example
//! ```text
//! pass { full_gate_current = 0.35 A .. 1.2 A }
//! ```
//!
//! ## How to fix
//! Size the pass device larger, or drive its gate further; or lower the
//! rated load.

use crate::compare;
use crate::context::Context;
use crate::show::{difference, versus};
use guardband_model::{BlockKind, Diagnostic};
use guardband_units::QuantityKind;

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for d in ctx.derived {
        let reg = ctx.node(d.regulator);
        let (Some(rated), Some(pass)) = (d.rated_load, ctx.model.child(reg, BlockKind::Pass))
        else {
            continue;
        };
        let Some(fg) = pass.quantity("full_gate_current") else {
            continue;
        };
        if !compare::below(fg.lo, rated) {
            continue;
        }
        let unit = d.load_unit.as_deref().or(fg.unit.as_deref());
        let (weak, load) = versus(fg.lo, rated, QuantityKind::CURRENT, unit);
        let short = difference(fg.lo, rated, QuantityKind::CURRENT, unit);
        let diag = ctx.at(pass,
                "full_gate_current",
                format!(
                    "the pass device of `{}` delivers as little as {weak} at its weak corner, {short} below the rated load {load}",
                    reg.key()
                ),
            )
            .primary(format!("weak corner {weak}"));
        let diag = ctx.label(diag, reg, "load", format!("rated load {load}"));
        out.push(diag.help(
            "size the pass device for the rated load at its weak corner, or lower the rated load",
        ));
    }
}
