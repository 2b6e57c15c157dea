//! ## What it flags
//! An undervoltage-triggered limit whose threshold voltage can reach the
//! output's regulation range: the top of `threshold_voltage` at or above
//! the low edge of `output`.
//!
//! ## Why it matters
//! The scheme holds its fixed current while the output is below the
//! threshold. A threshold at or above the lowest regulated output means the
//! output, regulating correctly, can sit below it: the block never leaves
//! fixed-current mode and never regulates on those parts.
//!
//! ## Failing example
//! ```text
//! output = 1.8 V ± 2 %
//! limit uv { scheme = undervoltage_fixed  threshold_voltage = 1.8 V ± 3 %  ... }
//! ```
//!
//! ## Passing example
//! ```text
//! limit uv { scheme = undervoltage_fixed  threshold_voltage = 1.4 V ± 3 %  ... }
//! ```
//!
//! ## How to fix
//! Set the threshold clearly below the output's low edge, with its spread.

use crate::compare;
use crate::context::Context;
use crate::derive::Scheme;
use crate::show::versus;
use guardband_model::{Diagnostic};
use guardband_units::QuantityKind;

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for d in ctx.derived {
        let reg = ctx.node(d.regulator);
        let Some(output) = reg.quantity("output") else {
            continue;
        };
        for lw in d
            .limits
            .iter()
            .filter(|l| l.scheme == Scheme::UndervoltageFixed)
        {
            let Ok(Some(th)) = &lw.threshold_voltage else {
                continue;
            };
            if compare::below(th.hi, output.lo) {
                continue;
            }
            let limit = ctx.node(lw.node);
            let (t, o) = versus(th.hi, output.lo, QuantityKind::VOLTAGE, th.unit.as_deref());
            let diag = ctx.at(limit,
                    "threshold_voltage",
                    format!(
                        "`{}` threshold can be {t}, not below the output's low edge {o}: the regulator may never leave fixed-current mode",
                        limit.key()
                    ),
                )
                .primary(format!("up to {t}"));
            let diag = ctx.label(diag, reg, "output", format!("regulates from {o}"));
            out.push(
                diag.help("set the threshold clearly below the output's low edge, spread included"),
            );
        }
    }
}
