//! The thermal-cycle damage of sustained shorts over the lifetime, against
//! a `cycle_budget` in the Coffin–Manson form (the form JEDEC's failure
//! mechanism models use for thermal cycling): cycles to failure at swing
//! `ΔT` are `N(ΔT) = N_ref · (ΔT_ref / ΔT)^n`. A thermal shutdown cycles
//! the junction by its hysteresis once per period; a hiccup by its swing
//! once per `on_time + off_time`. Over `short_time` each makes at most
//! `short_time / period` cycles, and the damage `Σ used / N(ΔT)` (Miner's
//! linear rule) must stay below 1.
//!
//! Every input is taken at its unfavourable end: the largest swing, the
//! shortest period, the longest time in a short, the fewest reference
//! cycles at the smallest reference swing, and the exponent at whichever
//! end allows fewer cycles (`(ΔT_ref / ΔT)^n` is monotonic in `n`).

use super::heat::{Cycling, Heat};
use super::unknown::{Figure, Unknown, both, need};
use guardband_model::{BlockKind, Model, Node, NodeId};

/// One mechanism that cycles the junction in a sustained short.
#[derive(Debug, Clone, PartialEq)]
pub struct Mechanism {
    /// The block that cycles it (the thermal shutdown or the hiccup).
    pub node: NodeId,
    pub what: &'static str,
    /// The largest swing, K.
    pub swing: f64,
    /// The shortest period, s.
    pub period: f64,
    /// The most cycles over `short_time`.
    pub used: f64,
    /// The fewest cycles the budget allows at that swing.
    pub allowed: f64,
}

/// The damage of every mechanism against the budget.
#[derive(Debug, Clone, PartialEq)]
pub struct CycleDamage {
    pub budget: NodeId,
    pub mechanisms: Vec<Mechanism>,
    /// `Σ used / allowed`.
    pub damage: f64,
    /// The longest time in a short over the lifetime, s.
    pub short_time: f64,
}

/// Cycles to failure at swing `dt` in the Coffin–Manson form.
pub fn coffin_manson(cycles_ref: f64, swing_ref: f64, exponent: f64, dt: f64) -> f64 {
    cycles_ref * (swing_ref / dt).powf(exponent)
}

/// The damage when the regulator states a `cycle_budget` (`None` without one).
pub fn damage(
    model: &Model,
    reg: &Node,
    cycling: &Figure<Option<Cycling>>,
    short: &Figure<Heat>,
) -> Figure<Option<CycleDamage>> {
    let Some(b) = model.child(reg, BlockKind::CycleBudget) else {
        return Ok(None);
    };
    let ((cycles, swing_ref), (exponent, time)) = both(
        both(need(b, "cycles"), need(b, "swing")),
        both(need(b, "exponent"), need(b, "short_time")),
    )?;
    let allowed = |dt: f64| {
        [exponent.lo, exponent.hi]
            .into_iter()
            .map(|n| coffin_manson(cycles.lo, swing_ref.lo, n, dt))
            .fold(f64::INFINITY, f64::min)
    };
    let mut mechanisms = Vec::new();
    let mut push = |node: NodeId, what, swing: f64, period: f64| {
        if swing > 0.0 {
            let used = time.hi / period;
            mechanisms.push(Mechanism {
                node,
                what,
                swing,
                period,
                used,
                allowed: allowed(swing),
            });
        }
    };
    if let Some(tsd) = model.child(reg, BlockKind::ThermalShutdown) {
        // Without a hysteresis the cycling cannot be ruled in or out: the
        // budget is unknown, never spent by nothing.
        need(tsd, "hysteresis")?;
    }
    if let Some(tsd) = model.child(reg, BlockKind::ThermalShutdown)
        && let Some(c) = cycling.as_ref().map_err(Clone::clone)?
    {
        let period = c.period_min.ok_or_else(|| {
            Unknown::because("state `thermal_shutdown.time_constant` for the cycle period")
        })?;
        push(tsd.id, "the thermal shutdown", c.swing.1, period);
    }
    if let Some(h) = model.child(reg, BlockKind::Hiccup) {
        let heat = short.as_ref().map_err(Clone::clone)?;
        if let Some(p) = &heat.pulsed {
            let (on, off) = both(need(h, "on_time"), need(h, "off_time"))?;
            push(h.id, "the hiccup", p.swing, on.lo + off.lo);
        }
    }
    let damage = mechanisms.iter().map(|m| m.used / m.allowed).sum();
    Ok(Some(CycleDamage {
        budget: b.id,
        mechanisms,
        damage,
        short_time: time.hi,
    }))
}

#[cfg(test)]
mod tests {
    use super::*;

    // The Coffin–Manson form: halving the swing with exponent 2 gives four
    // times the cycles; 10,000 cycles at 100 K are 80,000 at 50 K with
    // exponent 3 (hand calculation).
    #[test]
    fn cycles_scale_with_the_swing_ratio_to_the_exponent() {
        assert!((coffin_manson(1000.0, 100.0, 2.0, 50.0) - 4000.0).abs() < 1e-9);
        assert!((coffin_manson(10_000.0, 100.0, 3.0, 50.0) - 80_000.0).abs() < 1e-6);
    }
}
