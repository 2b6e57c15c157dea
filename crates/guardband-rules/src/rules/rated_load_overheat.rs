//! ## What it flags
//! A regulator whose junction, in normal operation at rated load, reaches
//! `junction_max`, or reaches the lowest trip point of its thermal
//! shutdown (a nuisance trip: the part shuts itself off while doing its
//! job). The dissipation is the largest `(Vin,max − V)·I_load(V)` over the
//! regulated output `V` (its low edge for a current or power load; for a
//! resistance, `V/R` peaks in `(Vin − V)·V/R` at `Vin/2` when that is in
//! range), plus `quiescent × Vin,max`; the junction is the maximum ambient
//! plus that power times the maximum θJA (T_J = T_A + P·θJA).
//!
//! ## Why it matters
//! Protection is sized for faults, but a linear regulator dissipates its
//! headroom times its load all the time. A part that runs above its
//! junction limit at rated load wears out; one that reaches its thermal
//! shutdown cycles off and on in normal use.
//!
//! ## Failing example
//! ```text
//! supply = 4.5 V .. 5.5 V  output = 1.8 V ± 2 %  load = 0 mA .. 300 mA
//! quiescent = 1 mA  ambient = -40 °C .. 105 °C  theta_ja = 60 K/W
//! thermal_shutdown { threshold = 150 °C ± 8 K }  // (5.5 − 1.764) V × 0.3 A + 5.5 mW
//!                                                 // = 1.126 W: 172.6 °C > 142 °C
//! ```
//!
//! ## Passing example
//! ```text
//! load = 0 mA .. 150 mA   // 0.566 W: 139.0 °C, below 142 °C and 150 °C
//! junction_max = 150 °C
//! ```
//!
//! ## How to fix
//! Lower the supply (a pre-regulator), the rated load or θJA (package,
//! board copper), or move the shutdown threshold and junction limit with
//! the process's qualification.

use crate::compare;
use crate::context::Context;
use crate::derive::Heat;
use crate::show::{difference, in_unit, versus};
use guardband_model::{BlockKind, Diagnostic, Node};
use guardband_units::{Dimension, QuantityKind};

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for d in ctx.derived {
        let reg = ctx.node(d.regulator);
        let Ok(heat) = &d.normal else { continue };
        if let Some(limit) = reg.quantity("junction_max")
            && compare::exceeds(heat.junction, limit.lo)
        {
            let unit = limit.unit.as_deref();
            let diag = finding(ctx, reg, reg, heat, limit.lo, unit, "junction_max")
                .primary("highest allowed junction temperature");
            out.push(diag.help(
                "lower the supply headroom, the rated load or θJA, or qualify a higher junction limit",
            ));
        }
        let Some(tsd) = ctx.model.child(reg, BlockKind::ThermalShutdown) else {
            continue;
        };
        let Some(trip) = tsd.quantity("threshold") else {
            continue;
        };
        if compare::at_least(heat.junction, trip.lo) {
            let unit = trip.unit.as_deref();
            let diag = finding(ctx, reg, tsd, heat, trip.lo, unit, "threshold")
                .primary("the shutdown's lowest trip point")
                .help("the part would shut itself off at rated load: lower the dissipation, or raise the threshold's low edge above the rated-load junction");
            out.push(ctx.label(diag, reg, "load", "rated load"));
        }
    }
}

/// The finding at `node.key`, comparing the rated-load junction with `bound`.
fn finding(
    ctx: &Context,
    reg: &Node,
    node: &Node,
    heat: &Heat,
    bound: f64,
    unit: Option<&str>,
    key: &str,
) -> Diagnostic {
    let kind = QuantityKind::ABSOLUTE_TEMPERATURE;
    let (tj, lim) = versus(heat.junction, bound, kind, unit);
    let over = difference(heat.junction, bound, kind, unit);
    let what = if key == "threshold" {
        format!("the thermal shutdown's lowest trip point {lim}")
    } else {
        format!("the {lim} limit")
    };
    let place = if compare::exceeds(heat.junction, bound) {
        format!("{over} above {what}")
    } else {
        format!("at {what}")
    };
    let mut diag = ctx.at(
        node,
        key,
        format!(
            "the junction of `{}` reaches {tj} in normal operation at rated load, {place}",
            reg.key(),
        ),
    );
    let quiescent = reg
        .quantity("quiescent")
        .map(|q| in_unit(q.hi, QuantityKind::CURRENT, q.unit.as_deref()))
        .unwrap_or_default();
    diag = ctx.label(
        diag,
        reg,
        "quiescent",
        format!(
            "({} − {}) × {} + {quiescent} × {} = {} into θJA {} from {}",
            in_unit(heat.supply, QuantityKind::VOLTAGE, Some("V")),
            in_unit(heat.at_voltage, QuantityKind::VOLTAGE, Some("V")),
            in_unit(heat.current, QuantityKind::CURRENT, None),
            in_unit(heat.supply, QuantityKind::VOLTAGE, Some("V")),
            in_unit(heat.power, QuantityKind::of(Dimension::POWER), None),
            in_unit(heat.theta, QuantityKind::of(Dimension::THERMAL_RESISTANCE), None),
            in_unit(heat.ambient, kind, unit),
        ),
    );
    ctx.label(diag, reg, "theta_ja", "thermal resistance")
}
