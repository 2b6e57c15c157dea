//! ## What it flags
//! A load line that the regulator's least delivered current does not clear
//! at some output voltage between 0 V and the top of regulation. After an
//! overload or a short is removed, the output climbs back only where the
//! current the protections let through exceeds what the load draws; where
//! the two curves meet the output stays put. The least current is the low
//! edge at each output voltage (a limit window's low edge, a foldback
//! line's low end, an undervoltage-triggered fixed current below its
//! threshold, the weak-corner full-gate current); the load draws its
//! heaviest: a current's top, `V/R,min` for a resistance, `P,max/V` for a
//! constant power above its lowest cutoff. The finding names the output
//! voltage where they cross. When the same load also stops startup,
//! `slow-start` reports it instead. A load written as a current states
//! only what it draws in regulation, not how it behaves below it, so the
//! rule checks loads written as a resistance or a constant power: write
//! the load that way to have recovery checked (a current load below the
//! limit's low edge is `limit-within-load`'s finding).
//!
//! ## Why it matters
//! A regulator that latches at a low output after a fault looks like a
//! dead rail: the load is powered with the wrong voltage indefinitely and
//! only a power cycle (with the load disconnected) recovers it.
//!
//! ## Failing example
//! ```text
//! output = 1.8 V ± 2 %   load = 20 ohm ± 5 %   // draws up to 1.836 V / 19 Ω = 96.6 mA
//! limit uv { scheme = undervoltage_fixed  fixed_current = 34 mA ± 10 %  ... }
//! // below the threshold 30.6 mA is delivered; the load draws that at 0.58 V
//! ```
//!
//! ## Passing example
//! ```text
//! limit uv { scheme = undervoltage_fixed  fixed_current = 120 mA ± 10 %  ... }
//! ```
//!
//! ## How to fix
//! Raise the fixed or foldback current at low output above the load line,
//! lower the undervoltage threshold below the crossing, or give the load a
//! cutoff (`load_cutoff`) below which it draws nothing.

use crate::compare;
use crate::context::Context;
use crate::derive::LoadKind;
use crate::show::{in_unit, versus};
use guardband_model::{BlockKind, Diagnostic};
use guardband_units::QuantityKind;

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for d in ctx.derived {
        let reg = ctx.node(d.regulator);
        let (Ok(Some(sh)), Some(load), Ok(currents)) = (&d.recovery, &d.load, &d.currents) else {
            continue;
        };
        if load.kind == LoadKind::Current {
            continue;
        }
        let own_startup_load = ctx
            .model
            .child(reg, BlockKind::Startup)
            .is_some_and(|s| s.field("load").is_some());
        if let Ok(s) = &d.startup
            && s.time.is_err()
            && !own_startup_load
        {
            continue;
        }
        let unit = d.load_unit.as_deref();
        let draws = if !sh.drawn.is_finite() {
            format!(
                "the load draws without bound (a constant power with no `load_cutoff`), more than the least current delivered, {}",
                in_unit(sh.delivered, QuantityKind::CURRENT, unit)
            )
        } else {
            let (drawn, given) = versus(sh.drawn, sh.delivered, QuantityKind::CURRENT, unit);
            if compare::exceeds(sh.drawn, sh.delivered) {
                format!("the load draws {drawn}, more than the least current delivered, {given}")
            } else {
                format!(
                    "the load draws {drawn} and the least current delivered is {given}: below that voltage the load draws less and the output rises to it, above it the load would draw more than is delivered"
                )
            }
        };
        let cause = currents.cause(sh.by);
        let diag = ctx
            .at(
                reg,
                "load",
                format!(
                    "`{}` can latch at {} after an overload: there {draws}",
                    reg.key(),
                    in_unit(sh.at_voltage, QuantityKind::VOLTAGE, Some("V")),
                ),
            )
            .primary(format!("the load: {}", load.describe()));
        let diag = ctx.label(
            diag,
            ctx.node(cause.node),
            cause.key,
            format!("sets the least current there: {}", cause.what),
        );
        out.push(diag.help(
            "raise the current delivered at low output above the load line, lower the undervoltage threshold below the crossing, or give the load a cutoff (`load_cutoff`)",
        ));
    }
}
