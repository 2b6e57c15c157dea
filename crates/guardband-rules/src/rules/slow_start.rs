//! ## What it flags
//! Startup that can take longer than `startup.time_max`, or a charging
//! current that cannot start the output at all (not above the load at
//! startup at some output voltage). The worst time charges the largest
//! output capacitance to the highest output voltage with the smallest
//! current the protections let through at each voltage (the low edge of a
//! limit window, the weak-corner full-gate current, an undervoltage-triggered
//! limit's fixed current below its threshold), less the largest startup
//! load, no faster than a soft start's slowest slew:
//! `t = ∫ max(1/slew, C / (I(V) − load)) dV`, which for a flat current is
//! `C·V / (I − load)`.
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

use crate::compare;
use crate::context::Context;
use crate::show::{difference, in_unit, versus};
use crate::derive::LoadKind;
use guardband_model::{BlockKind, Diagnostic};
use guardband_units::{Dimension, QuantityKind};

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for d in ctx.derived {
        let reg = ctx.node(d.regulator);
        let Ok(s) = &d.startup else { continue };
        let start = ctx.model.child(reg, BlockKind::Startup);
        let amps = |x: f64| in_unit(x, QuantityKind::CURRENT, d.load_unit.as_deref());
        match s.time {
            Err(stall) => {
                let (node, key) = match start.filter(|st| st.field("load").is_some()) {
                    Some(st) => (st, "load"),
                    None => (reg, "load"),
                };
                let at = if stall > 0.0 {
                    format!(
                        " once the output reaches {}",
                        in_unit(stall, QuantityKind::VOLTAGE, Some("V"))
                    )
                } else {
                    String::new()
                };
                // What is delivered and drawn where it stalls (for a current
                // load, the least charging current and the load itself).
                let (delivered, drawn) = match s.stall {
                    Some(sh) if s.load_line.kind != LoadKind::Current => (sh.delivered, sh.drawn),
                    _ => (s.charge_min, s.load),
                };
                let (i, drawn_text) = if drawn.is_finite() {
                    versus(delivered, drawn, QuantityKind::CURRENT, d.load_unit.as_deref())
                } else {
                    (
                        amps(delivered),
                        "without bound (a constant power with no `load_cutoff`, as the output nears 0 V)".to_string(),
                    )
                };
                let what = match s.load_line.kind {
                    LoadKind::Current => format!("load at startup {}", amps(s.load)),
                    _ => format!("load at startup: {}", s.load_line.describe()),
                };
                let diag = ctx.at(node, key, format!(
                        "`{}` cannot start: the charging current{at} can be as low as {i}, not above what the load draws there, {drawn_text}",
                        reg.key()
                    ))
                    .primary(what)
                    .help("raise the fixed or limited current, or hold the load off until the output is up (`startup { load = ... }`)");
                out.push(diag);
            }
            Ok(t) => {
                let load_text = match s.load_line.kind {
                    LoadKind::Current => format!("{} load", amps(s.load)),
                    _ => format!("the load, {}", s.load_line.describe()),
                };
                let Some(st) = start else { continue };
                let Some(max) = st.quantity("time_max") else {
                    continue;
                };
                if compare::exceeds(t, max.lo) {
                    let kind = QuantityKind::of(Dimension::TIME);
                    let (took, need) = versus(t, max.lo, kind, max.unit.as_deref());
                    let late = difference(t, max.lo, kind, max.unit.as_deref());
                    let formula = if let Some(slew) = st.quantity("slew") {
                        format!(
                            " (a soft start of at least {}, charging {} to {} with at least {} less {})",
                            in_unit(slew.lo, slew.kind, slew.unit.as_deref()),
                            in_unit(
                                s.capacitance,
                                QuantityKind::of(Dimension::CAPACITANCE),
                                None
                            ),
                            in_unit(s.voltage, QuantityKind::VOLTAGE, Some("V")),
                            amps(s.charge_min),
                            load_text,
                        )
                    } else if s.charge_flat {
                        format!(
                            " (C·V/(I − load) = {} × {} / ({} − {}))",
                            in_unit(
                                s.capacitance,
                                QuantityKind::of(Dimension::CAPACITANCE),
                                None
                            ),
                            in_unit(s.voltage, QuantityKind::VOLTAGE, Some("V")),
                            amps(s.charge_min),
                            amps(s.load),
                        )
                    } else {
                        format!(
                            " (charging {} to {} with at least {} less {})",
                            in_unit(
                                s.capacitance,
                                QuantityKind::of(Dimension::CAPACITANCE),
                                None
                            ),
                            in_unit(s.voltage, QuantityKind::VOLTAGE, Some("V")),
                            amps(s.charge_min),
                            load_text,
                        )
                    };
                    let diag = ctx.at(st, "time_max", format!(
                            "`{}` can take up to {took} to start{formula}, {late} over the required {need}",
                            reg.key(),
                        ))
                        .primary("required startup time")
                        .help("raise the charging current, reduce the capacitance or the startup load, or relax `time_max`");
                    out.push(diag);
                }
            }
        }
    }
}
