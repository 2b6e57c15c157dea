//! ## What it flags
//! Startup that takes longer than `startup.time_max` in the worst case
//! (largest off-chip capacitance charged to the highest output voltage with
//! the smallest charging current less the startup load: t = C·V / (I − load)),
//! or a charging current that cannot start the output at all (at or below the
//! load at startup).
//!
//! ## Why it matters
//! A fixed or limited charging current makes startup slow, and a fixed
//! current below the load never lets the output rise; the block then sits in
//! its undervoltage state forever.
//!
//! ## Failing example
//! ```text
//! output = 1.8 V ± 2 %   load = 0 mA .. 120 mA
//! limit uv { scheme = undervoltage_fixed  fixed_current = 60 mA ± 15 %  ... }
//! startup { time_max = 100 us }
//! ```
//!
//! ## Passing example
//! ```text
//! startup { time_max = 2 ms  load = 5 mA }   // load held off during startup
//! ```
//!
//! ## How to fix
//! Raise the charging current, keep the load off until the output is up
//! (`startup.load`), reduce the capacitance, or relax the requirement.

use crate::context::Context;
use crate::format::in_unit;
use guardband_model::{BlockKind, Diagnostic, Severity};
use guardband_units::{Dimension, QuantityKind};

const RULE: &str = "slow-start";

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for d in ctx.derived {
        let reg = ctx.node(d.regulator);
        let Some(s) = &d.startup else { continue };
        let start = ctx.model.child(reg, BlockKind::Startup);
        let amps = |x: f64| in_unit(x, QuantityKind::CURRENT, d.load_unit.as_deref());
        match (s.charge_min, s.time) {
            (Some(i), None) => {
                let (node, key) = match start.filter(|st| st.field("load").is_some()) {
                    Some(st) => (st, "load"),
                    None => (reg, "load"),
                };
                let diag = ctx
                    .at(RULE, Severity::Error, node, key, format!(
                        "`{}` cannot start: the charging current {} is not above the load at startup {}",
                        reg.key(), amps(i), amps(s.load)
                    ))
                    .primary(format!("load at startup {}", amps(s.load)))
                    .help("raise the fixed or limited current, or hold the load off until the output is up (`startup { load = ... }`)");
                out.push(diag);
            }
            (_, Some(t)) => {
                let Some(st) = start else { continue };
                let Some(max) = st.quantity("time_max") else {
                    continue;
                };
                if t > max.lo {
                    let time =
                        |x: f64| in_unit(x, QuantityKind::of(Dimension::TIME), max.unit.as_deref());
                    let diag = ctx
                        .at(RULE, Severity::Error, st, "time_max", format!(
                            "`{}` takes up to {} to start (C·V/(I − load) = {} × {} / ({} − {})), above the required {}",
                            reg.key(),
                            time(t),
                            in_unit(s.capacitance, QuantityKind::of(Dimension::CAPACITANCE), None),
                            in_unit(s.voltage, QuantityKind::VOLTAGE, Some("V")),
                            amps(s.charge_min.unwrap_or(0.0)),
                            amps(s.load),
                            time(max.lo)
                        ))
                        .primary("required startup time")
                        .help("raise the charging current, reduce the capacitance or the startup load, or relax `time_max`");
                    out.push(diag);
                }
            }
            _ => {}
        }
    }
}
