//! ## What it flags
//! An undervoltage-triggered fixed-current limit whose `trip_current` is not
//! stated.
//!
//! ## Why it matters
//! This scheme senses the output voltage, not the current: the overload
//! current at which it trips depends on the load and the loop, and is not
//! known from the circuit alone. Without a characterised value (with its
//! spread) the worst current for metal and the limit's clearance above the
//! rated load cannot be checked.
//!
//! ## Failing example
//! ```text
//! limit uv { scheme = undervoltage_fixed  threshold_voltage = 1.5 V ± 3 %
//!            fixed_current = 80 mA ± 15 % }
//! ```
//!
//! ## Passing example
//! ```text
//! limit uv { scheme = undervoltage_fixed  threshold_voltage = 1.5 V ± 3 %
//!            fixed_current = 80 mA ± 15 %  trip_current = 260 mA .. 410 mA }
//! ```
//!
//! ## How to fix
//! Characterise (simulate across corners, then measure) the overload current
//! at which the output falls below the threshold, and state it as `trip_current`.

use crate::context::Context;
use guardband_model::{BlockKind, Diagnostic};

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for reg in ctx.regulators() {
        for limit in ctx.model.children(reg, BlockKind::Limit) {
            if limit.choice("scheme") == Some("undervoltage_fixed")
                && limit.field("trip_current").is_none()
            {
                out.push(
                    ctx.at_block(limit, format!(
                        "undervoltage-triggered limit `{}` states no characterised `trip_current`", limit.key()
                    ))
                    .primary("trip current unknown")
                    .help("the trip current depends on load and must come from characterisation; state it as `trip_current = LOW .. HIGH`"),
                );
            }
        }
    }
}
