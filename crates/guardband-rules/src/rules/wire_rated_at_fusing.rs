//! ## What it flags
//! A bond wire rated by Preece's formula with no stated `derating` (on the
//! conductor or its `bond_wire` type): its rating is then its fusing
//! current.
//!
//! ## Why it matters
//! Preece's formula gives the current that fuses a long wire in free air,
//! not a current it can carry for a lifetime. How far below fusing a wire
//! may run (encapsulation, length, pulse or steady current) is a stated
//! choice of the package and reliability data, never an assumed 1.
//!
//! ## Failing example
//! ```text
//! conductor vout_bond { carries = vout  diameter = 25 um  material = copper }
//! ```
//!
//! ## Passing example
//! ```text
//! conductor vout_bond { carries = vout  diameter = 25 um  material = copper
//!                       derating = 0.5 }
//! ```
//!
//! ## How to fix
//! State the derating from the package's wire data: `derating = 0.5` on the
//! conductor, or on a `bond_wire` type in the process that the conductor
//! names with `wire = ...`.

use crate::context::Context;
use crate::derive::ConductorKind;
use crate::show::in_unit;
use guardband_model::{Diagnostic};
use guardband_units::QuantityKind;

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for d in ctx.derived {
        for cr in &d.conductors {
            let (ConductorKind::BondWire, Ok(rating), false) =
                (cr.kind, &cr.rating, cr.derating_stated)
            else {
                continue;
            };
            let c = ctx.node(cr.node);
            out.push(
                ctx.at_block(c, format!(
                        "bond wire `{}` is rated at its Preece fusing current {}: no derating is stated",
                        c.key(),
                        in_unit(*rating, QuantityKind::CURRENT, None)
                    ),
                )
                .primary("fusing current, not a rating")
                .help("state `derating = ...` (the fraction of the fusing current the wire may carry) from the package's wire data"),
            );
        }
    }
}
