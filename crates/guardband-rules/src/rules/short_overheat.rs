//! ## What it flags
//! A short or overload in which the junction would pass `junction_max` and
//! no thermal shutdown protects it, or the shutdown can trip above the
//! limit. The junction is the maximum ambient plus the worst dissipation
//! times the maximum θJA; the dissipation is the largest `(Vin,max − V)·I(V)`
//! over every output voltage `V` from 0 V to regulation, with `I(V)` the
//! most the protections let through there: for a flat sensed limit the
//! worst is the hard short (0 V); with foldback or an undervoltage-triggered
//! fixed current it can sit near regulation, where nearly the whole supply
//! still falls across the pass device. The message names the output voltage.
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
//! `junction_max`, add foldback or a hiccup (auto-retry: its peak junction
//! is used, with no credit for the pauses unless a thermal time constant is
//! stated), or lower the limit's top edge.

use crate::compare;
use crate::context::Context;
use crate::show::{difference, in_unit, versus};
use guardband_model::{BlockKind, Diagnostic};
use guardband_units::{Dimension, QuantityKind};

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for d in ctx.derived {
        let reg = ctx.node(d.regulator);
        let (Ok(heat), Some(limit)) = (&d.overload, reg.quantity("junction_max")) else {
            continue;
        };
        if compare::at_most(heat.junction, limit.lo) {
            continue;
        }
        let tsd = ctx.model.child(reg, BlockKind::ThermalShutdown);
        let tsd_threshold = tsd.and_then(|t| t.quantity("threshold"));
        let unit = limit.unit.as_deref();
        let temp = |k: f64| in_unit(k, QuantityKind::ABSOLUTE_TEMPERATURE, unit);
        let problem = match (tsd, tsd_threshold) {
            (None, _) => "and there is no thermal shutdown".to_string(),
            (Some(_), Some(t)) if compare::exceeds(t.hi, limit.lo) => {
                let (late, lim) = versus(t.hi, limit.lo, QuantityKind::ABSOLUTE_TEMPERATURE, unit);
                format!(
                    "and the thermal shutdown can trip as late as {late}, above the {lim} limit"
                )
            }
            (Some(t), None) if t.field("threshold").is_some() => continue,
            (Some(_), None) => "and the thermal shutdown states no threshold".to_string(),
            _ => continue,
        };
        let (tj, lim) = versus(
            heat.junction,
            limit.lo,
            QuantityKind::ABSOLUTE_TEMPERATURE,
            unit,
        );
        let over = difference(
            heat.junction,
            limit.lo,
            QuantityKind::ABSOLUTE_TEMPERATURE,
            unit,
        );
        let place = if heat.at_voltage > 0.0 {
            format!(
                "with the output held at {} (a partial short or overload)",
                in_unit(heat.at_voltage, QuantityKind::VOLTAGE, Some("V"))
            )
        } else {
            "with the output shorted".to_string()
        };
        let place = match &heat.pulsed {
            Some(_) => format!("{place}, at the peak of its hiccup cycle"),
            None => place,
        };
        let mut diag = ctx.at(reg,
                "junction_max",
                format!(
                    "the junction of `{}` reaches {tj} {place}, {over} above the {lim} limit, {problem}",
                    reg.key(),
                ),
            )
            .primary(format!(
                "({} − {}) × {} = {} into θJA {}",
                in_unit(heat.supply, QuantityKind::VOLTAGE, Some("V")),
                in_unit(heat.at_voltage, QuantityKind::VOLTAGE, Some("V")),
                in_unit(heat.current, QuantityKind::CURRENT, None),
                in_unit(heat.power, QuantityKind::of(Dimension::POWER), None),
                in_unit(heat.theta, QuantityKind::of(Dimension::THERMAL_RESISTANCE), None),
            ));
        diag = ctx.label(
            diag,
            reg,
            "ambient",
            format!("maximum ambient {}", temp(heat.ambient)),
        );
        diag = ctx.label(diag, reg, "theta_ja", "thermal resistance");
        if let Some(t) = tsd {
            diag = ctx.label(diag, t, "threshold", "shutdown threshold");
        }
        let or = if ctx.model.child(reg, BlockKind::Foldback).is_some() {
            "or lower the foldback line"
        } else {
            "or foldback"
        };
        out.push(diag.help(format!(
            "the current there is {}; add a thermal shutdown whose highest trip point is at or below the junction limit, {or}",
            heat.reason
        )));
    }
}
