//! ## What it flags
//! A regulator that starts with neither a current limit, nor a fixed-current
//! start, nor a soft-start ramp, where the full-gate surge at the strong
//! corner exceeds a conductor's rating or the stated `supply_surge_max`.
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

use crate::context::Context;
use crate::format::in_unit;
use guardband_model::{BlockKind, Diagnostic, Severity};
use guardband_units::QuantityKind;

const RULE: &str = "unlimited-surge";

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for d in ctx.derived {
        if !d.limits.is_empty() {
            continue;
        }
        let reg = ctx.node(d.regulator);
        let start = ctx.model.child(reg, BlockKind::Startup);
        if start.and_then(|s| s.field("slew")).is_some() {
            continue;
        }
        let Some(pass) = ctx.model.child(reg, BlockKind::Pass) else {
            continue;
        };
        let Some(full_gate) = pass.quantity("full_gate_current") else {
            continue;
        };
        let surge = full_gate.hi;
        let show = |x: f64| in_unit(x, QuantityKind::CURRENT, full_gate.unit.as_deref());
        let mut over: Vec<(String, f64, guardband_model::FileId, std::ops::Range<usize>)> =
            Vec::new();
        if let Some(s) = start
            && let Some(max) = s.quantity("supply_surge_max")
            && surge > max.hi
        {
            over.push((
                "the supply surge limit".into(),
                max.hi,
                s.file,
                ctx.value_span(s, "supply_surge_max"),
            ));
        }
        for cr in &d.conductors {
            if let Ok(r) = cr.rating
                && surge > r
            {
                let c = ctx.node(cr.node);
                over.push((
                    format!("conductor `{}`", c.key()),
                    r,
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
            .map(|r| format!(" ({}× rated load)", crate::format::number(surge / r)))
            .unwrap_or_default();
        let mut diag = ctx
            .at(
                RULE,
                Severity::Error,
                pass,
                "full_gate_current",
                format!(
                    "`{}` starts with no limit: the full-gate surge of {}{rated} exceeds {}",
                    reg.key(),
                    show(surge),
                    over.iter()
                        .map(|(what, r, ..)| format!("{what} ({})", show(*r)))
                        .collect::<Vec<_>>()
                        .join(", ")
                ),
            )
            .primary(format!("strong-corner full-gate current {}", show(surge)));
        for (what, r, file, span) in &over {
            diag = diag.label(*file, span.clone(), format!("{what}: {}", show(*r)));
        }
        out.push(diag.help(
            "add a current limit, a fixed-current start or a soft start (`startup { slew = ... }`)",
        ));
    }
}
