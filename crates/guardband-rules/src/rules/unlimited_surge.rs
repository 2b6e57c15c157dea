//! ## What it flags
//! A regulator whose startup surge nothing but the full-gate current bounds
//! (no sensed limit, no soft start, and no undervoltage-triggered limit
//! with a characterised trip current), where the full-gate current at the
//! strong corner exceeds a conductor's rating or the stated
//! `supply_surge_max`.
//!
//! ## Why it matters
//! At power-up the output is at 0 V and the amplifier drives the gate fully
//! on; the pass device conducts its full-gate current into the output
//! capacitor. That can be many times the rated load, drooping a shared input
//! rail or overstressing metal.
//!
//! ## Failing example
//! ```text
//! pass { full_gate_current = 0.3 A .. 1.1 A }
//! startup { supply_surge_max = 400 mA }
//! ```
//! with no `limit` block and no `slew`.
//!
//! ## Passing example
//! ```text
//! startup { slew = 2 V/ms  supply_surge_max = 400 mA }
//! ```
//!
//! ## How to fix
//! Add a current limit or a fixed-current start, or a soft start (`slew`)
//! whose C·dV/dt plus load stays under the limits.

use crate::compare;
use crate::context::Context;
use crate::derive::Scheme;
use crate::show::{in_unit, versus};
use guardband_model::{BlockKind, Diagnostic};
use guardband_units::QuantityKind;

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for d in ctx.derived {
        let Ok(worst) = &d.worst else { continue };
        if !worst.unlimited {
            continue;
        }
        let reg = ctx.node(d.regulator);
        let start = ctx.model.child(reg, BlockKind::Startup);
        if start.and_then(|s| s.field("slew")).is_some() {
            continue;
        }
        let pass = ctx.node(worst.cause.node);
        let surge = worst.value;
        let unit = worst.unit.as_deref();
        let mut over: Vec<(
            String,
            String,
            guardband_model::FileId,
            std::ops::Range<usize>,
        )> = Vec::new();
        if let Some(s) = start
            && let Some(max) = s.quantity("supply_surge_max")
            && compare::exceeds(surge, max.lo)
        {
            over.push((
                "the supply surge limit".into(),
                versus(surge, max.lo, QuantityKind::CURRENT, unit).1,
                s.file,
                ctx.value_span(s, "supply_surge_max"),
            ));
        }
        for cr in &d.conductors {
            if let (Ok(r), Ok(i)) = (&cr.rating, &cr.current)
                && compare::exceeds(*i, *r)
            {
                let c = ctx.node(cr.node);
                over.push((
                    format!("conductor `{}`", c.key()),
                    versus(*i, *r, QuantityKind::CURRENT, unit).1,
                    c.file,
                    c.header_span.clone(),
                ));
            }
        }
        if over.is_empty() {
            continue;
        }
        let rated = d
            .rated_load
            .map(|r| format!(" ({}× rated load)", crate::show::number(surge / r)))
            .unwrap_or_default();
        let uv = d
            .limits
            .iter()
            .find(|l| l.scheme == Scheme::UndervoltageFixed)
            .map(|l| ctx.node(l.node).key());
        let opening = match uv {
            Some(name) => format!(
                "`{}` starts with nothing to bound the current above the `{name}` threshold (no `trip_current`)",
                reg.key()
            ),
            None => format!("`{}` starts with no limit", reg.key()),
        };
        let mut diag = ctx.at(pass,
                worst.cause.key,
                format!(
                    "{opening}: the full-gate surge of {}{rated} exceeds {}",
                    in_unit(surge, QuantityKind::CURRENT, unit),
                    over.iter()
                        .map(|(what, r, ..)| format!("{what} ({r})"))
                        .collect::<Vec<_>>()
                        .join(", ")
                ),
            )
            .primary(format!(
                "strong-corner full-gate current {}",
                in_unit(surge, QuantityKind::CURRENT, unit)
            ));
        for (what, r, file, span) in &over {
            diag = diag.label(*file, span.clone(), format!("{what}: {r}"));
        }
        out.push(diag.help(
            "add a current limit, a fixed-current start with a characterised trip current, or a soft start (`startup { slew = ... }`)",
        ));
    }
}
