//! ## What it flags
//! A regulator whose sustained shorts, over the `short_time` its
//! `cycle_budget` states, cycle the junction more than the budget allows:
//! a thermal shutdown swings it by its hysteresis once per period, a hiccup
//! by its swing once per `on_time + off_time`, and the damage
//! `Σ cycles used / cycles allowed at that swing` (Coffin–Manson form,
//! Miner's rule) reaches 1.
//!
//! ## Why it matters
//! A thermal shutdown keeps a shorted die below its limit by cycling it,
//! and every cycle fatigues the bond wires, the die attach and the metal.
//! A short that lasts hours in the field (a crushed cable, a shorted load)
//! can spend a package's whole cycling qualification in days.
//!
//! ## Failing example
//! ```text
//! thermal_shutdown { threshold = 150 °C ± 5 K  hysteresis = 20 K  time_constant = 5 ms }
//! cycle_budget { cycles = 10000  swing = 100 K  exponent = 3 .. 5  short_time = 100 h }
//! ```
//! (a period of about 3 ms makes over a hundred million cycles in 100 h)
//!
//! ## Passing example
//! ```text
//! hiccup { on_time = 1 ms  off_time = 200 ms  time_constant = 5 ms }
//! cycle_budget { cycles = 10000  swing = 100 K  exponent = 3 .. 5  short_time = 1 h }
//! ```
//!
//! ## How to fix
//! Lengthen the period (a longer hiccup off time, a larger hysteresis where
//! the swing allows), bound the time in a short (a latch-off after a count
//! of retries), or qualify the package for more cycles.

use crate::context::Context;
use crate::show::{digits, in_unit, number};
use guardband_model::Diagnostic;
use guardband_units::{Dimension, QuantityKind};

pub fn check(ctx: &Context, out: &mut Vec<Diagnostic>) {
    for d in ctx.derived {
        let Ok(Some(dmg)) = &d.cycle_damage else {
            continue;
        };
        if dmg.damage < 1.0 {
            continue;
        }
        let budget = ctx.node(dmg.budget);
        let parts: Vec<String> = dmg
            .mechanisms
            .iter()
            .map(|m| {
                format!(
                    "{} swings the junction by {} every {} or more: up to {} cycles against {} allowed at that swing",
                    m.what,
                    in_unit(m.swing, QuantityKind::TEMPERATURE_DIFFERENCE, Some("K")),
                    in_unit(m.period, QuantityKind::of(Dimension::TIME), None),
                    number(m.used.ceil()),
                    number(m.allowed.floor()),
                )
            })
            .collect();
        let mut diag = ctx.at_block(
            budget,
            format!(
                "over {} in a sustained short {}: damage {} (at least 1 fails)",
                in_unit(dmg.short_time, QuantityKind::of(Dimension::TIME), Some("h")),
                parts.join("; "),
                digits(dmg.damage, 3),
            ),
        )
        .primary("cycle budget spent");
        for m in &dmg.mechanisms {
            diag = ctx.label(diag, ctx.node(m.node), "time_constant", "sets the period");
        }
        out.push(diag.help(
            "lengthen the period (a longer hiccup off time), bound the time in a short, or qualify for more cycles",
        ));
    }
}
