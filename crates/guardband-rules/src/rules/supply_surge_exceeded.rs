//! ## What it flags
//! A startup surge above `startup.supply_surge_max`, for every way the surge
//! is bounded: by a sensed limit's window top, an undervoltage-triggered
//! limit's fixed and trip currents, a soft start's C·dV/dt plus the startup
//! load, or the full-gate current, whichever binds first. (With nothing but
//! the full-gate current and no soft start, `unlimited-surge` reports it.)
//!
//! ## Why it matters
//! The supply, often a cell with its own protection or a rail shared with
//! other blocks, sees the whole surge. A limit or soft start that still
//! lets more through than the supply allows trips that protection or
//! droops the rail at every power-up.
//!
//! ## Failing example
//! ```text
//! limit sensed { scheme = replica  ... }      // window top 420 mA
//! startup { supply_surge_max = 300 mA }
//! ```
//!
//! ## Passing example
//! ```text
//! startup { supply_surge_max = 300 mA  slew = 20 V/ms }   // 1 uF · 20 V/ms + load
//! ```
//!
//! ## How to fix
//! Lower the limit's top edge, add or slow a soft start, reduce the output
//! capacitance, or confirm with the supply's data that it tolerates more.

use crate::compare;
use crate::context::Context;
use crate::show::{difference, versus};
use guardband_model::{BlockKind, Diagnostic};
use guardband_units::QuantityKind;

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for d in ctx.derived {
        let Ok(s) = &d.startup else { continue };
        if s.unlimited {
            continue;
        }
        let reg = ctx.node(d.regulator);
        let Some(start) = ctx.model.child(reg, BlockKind::Startup) else {
            continue;
        };
        let Some(max) = start.quantity("supply_surge_max") else {
            continue;
        };
        if !compare::exceeds(s.surge, max.lo) {
            continue;
        }
        let unit = max.unit.as_deref();
        let (surge, limit) = versus(s.surge, max.lo, QuantityKind::CURRENT, unit);
        let over = difference(s.surge, max.lo, QuantityKind::CURRENT, unit);
        let diag = ctx.at(start,
                "supply_surge_max",
                format!(
                    "`{}` draws up to {surge} from the supply at startup, {over} above its {limit} surge limit ({})",
                    reg.key(),
                    s.surge_reason
                ),
            )
            .primary(format!("the supply allows {limit}"));
        let (node, key) = s.surge_from;
        let diag = ctx.label(
            diag,
            ctx.node(node),
            key,
            format!("bounds the surge at {surge}"),
        );
        out.push(diag.help(
            "lower the limit's top edge, add or slow a soft start (`slew`), or reduce the output capacitance",
        ));
    }
}
