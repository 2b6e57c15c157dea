//! ## What it flags
//! A sensed limit whose clamp drive (its minimum) is not above the error
//! amplifier's output drive (its maximum).
//!
//! ## Why it matters
//! While limiting, the amplifier still pulls the gate fully on and the clamp
//! pulls it back. If the clamp cannot out-drive the amplifier at every corner,
//! the limit does not hold and the current runs to the full-gate value.
//!
//! ## Failing example
//! ```text
//! pass  { amplifier_drive = 40 uA ± 25 % }
//! limit sensed { scheme = replica  clamp_drive = 30 uA .. 60 uA  ... }
//! ```
//!
//! ## Passing example
//! ```text
//! limit sensed { scheme = replica  clamp_drive = 120 uA .. 200 uA  ... }
//! ```
//!
//! ## How to fix
//! Strengthen the clamp, or limit the amplifier's output current.

use crate::context::Context;
use guardband_model::{BlockKind, Diagnostic};

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for reg in ctx.regulators() {
        let Some(pass) = ctx.model.child(reg, BlockKind::Pass) else {
            continue;
        };
        let Some(amp) = pass.quantity("amplifier_drive") else {
            continue;
        };
        for limit in ctx.model.children(reg, BlockKind::Limit) {
            let Some(clamp) = limit.quantity("clamp_drive") else {
                continue;
            };
            if crate::compare::at_most(clamp.lo, amp.hi) {
                let (c, a) =
                    crate::show::versus(clamp.lo, amp.hi, clamp.kind, clamp.unit.as_deref());
                let gap = if crate::compare::below(clamp.lo, amp.hi) {
                    format!(
                        ", {} short",
                        crate::show::difference(
                            clamp.lo,
                            amp.hi,
                            clamp.kind,
                            clamp.unit.as_deref()
                        )
                    )
                } else {
                    String::new()
                };
                let d = ctx.at(limit, "clamp_drive", format!(
                        "`{}` clamp drive {c} (minimum) does not exceed the amplifier drive {a} (maximum){gap}",
                        limit.key()
                    ))
                    .primary(format!("clamp {}", crate::show::bounds(clamp)));
                let d = ctx.label(
                    d,
                    pass,
                    "amplifier_drive",
                    format!("amplifier {}", crate::show::bounds(amp)),
                );
                out.push(d.help("the clamp must win the gate at every corner: strengthen it or limit the amplifier's output current"));
            }
        }
    }
}
