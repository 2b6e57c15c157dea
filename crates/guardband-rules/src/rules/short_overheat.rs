//! ## What it flags
//! A sustained short in which the junction would pass `junction_max`
//! (maximum ambient + maximum supply × short current × θJA, with the short
//! current from the foldback when there is one, else the worst current) and
//! no thermal shutdown protects it, or the shutdown is set above the limit.
//!
//! ## Why it matters
//! With the output at 0 V the whole supply is across the pass device while it
//! carries the limited current. That heat has to go somewhere.
//!
//! ## Failing example
//! ```text
//! supply = 3.0 V .. 4.2 V  ambient = -20 °C .. 85 °C  theta_ja = 90 K/W
//! junction_max = 125 °C     // limit top 300 mA: 1.26 W, 198 °C
//! ```
//!
//! ## Passing example
//! ```text
//! thermal_shutdown { threshold = 115 °C ± 5 K }   // trips by 120 °C, below 125 °C
//! ```
//!
//! ## How to fix
//! Add a thermal shutdown whose highest trip point is at or below
//! `junction_max`, add foldback, or lower the limit's top edge.

use crate::context::Context;
use crate::format::in_unit;
use guardband_model::{BlockKind, Diagnostic, Severity};
use guardband_units::{Dimension, QuantityKind};

const RULE: &str = "short-overheat";

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for d in ctx.derived {
        let reg = ctx.node(d.regulator);
        let (Some(short), Some(limit)) = (&d.short, reg.quantity("junction_max")) else {
            continue;
        };
        if short.junction <= limit.lo {
            continue;
        }
        let tsd = ctx.model.child(reg, BlockKind::ThermalShutdown);
        let tsd_threshold = tsd.and_then(|t| t.quantity("threshold"));
        let temp = |k: f64| in_unit(k, QuantityKind::ABSOLUTE_TEMPERATURE, limit.unit.as_deref());
        let problem = match (tsd, tsd_threshold) {
            (None, _) => "and there is no thermal shutdown".to_string(),
            (Some(_), Some(t)) if t.hi > limit.lo => format!(
                "and the thermal shutdown can trip as late as {}",
                temp(t.hi)
            ),
            (Some(_), None) => "and the thermal shutdown states no threshold".to_string(),
            _ => continue,
        };
        let mut diag = ctx
            .at(
                RULE,
                Severity::Error,
                reg,
                "junction_max",
                format!(
                    "a sustained short heats the junction of `{}` to {} (above {}) {problem}",
                    reg.key(),
                    temp(short.junction),
                    temp(limit.lo)
                ),
            )
            .primary(format!(
                "{} × {} = {} into θJA",
                in_unit(
                    reg.quantity("supply").map(|s| s.hi).unwrap_or(0.0),
                    QuantityKind::VOLTAGE,
                    Some("V")
                ),
                in_unit(short.current, QuantityKind::CURRENT, None),
                in_unit(short.power, QuantityKind::of(Dimension::POWER), None)
            ));
        diag = ctx.label(diag, reg, "ambient", "maximum ambient");
        diag = ctx.label(diag, reg, "theta_ja", "thermal resistance");
        if let Some(t) = tsd {
            diag = ctx.label(diag, t, "threshold", "shutdown threshold");
        }
        out.push(diag.help(format!(
            "the short current is {}; add a thermal shutdown at or below the junction limit, or foldback",
            short.reason
        )));
    }
}
