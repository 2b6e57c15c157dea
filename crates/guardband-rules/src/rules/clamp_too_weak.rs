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
use crate::format::in_unit;
use guardband_model::{BlockKind, Diagnostic, Severity};

const RULE: &str = "clamp-too-weak";

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for reg in ctx.model.regulators() {
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
            if clamp.lo <= amp.hi {
                let show =
                    |x: f64, v: &guardband_model::Value| in_unit(x, v.kind, v.unit.as_deref());
                let d = ctx
                    .at(RULE, Severity::Error, limit, "clamp_drive", format!(
                        "`{}` clamp drive {} (minimum) does not exceed the amplifier drive {} (maximum)",
                        limit.key(), show(clamp.lo, clamp), show(amp.hi, amp)
                    ))
                    .primary(format!("clamp {}", crate::format::bounds(clamp)));
                let d = ctx.label(
                    d,
                    pass,
                    "amplifier_drive",
                    format!("amplifier {}", crate::format::bounds(amp)),
                );
                out.push(d.help("the clamp must win the gate at every corner: strengthen it or limit the amplifier's output current"));
            }
        }
    }
}
