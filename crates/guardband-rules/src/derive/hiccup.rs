//! Auto-retry ("hiccup") in a sustained short or overload: the pass device
//! conducts for `t_on`, is off for `t_off`, and again. With the one-pole
//! thermal model T(t) = T_f + (T_0 − T_f)·e^(−t/τ) (textbook first-order
//! response) driven by that pulse train, the junction in its periodic
//! steady state peaks at `T_A + P·θJA·g` and swings by `P·θJA·r`, with
//! `u = e^(−t_on/τ)`, `w = e^(−t_off/τ)`,
//! `g = (1 − u) / (1 − u·w)` and `r = (1 − u)(1 − w) / (1 − u·w)`; its
//! average is `T_A + P·D·θJA` with `D = t_on / (t_on + t_off)`.
//!
//! Bounds at corners, each by a proved direction: with `x = 1/τ` and
//! `φ(k) = k / (e^(k·x) − 1)`, which falls as `k` grows,
//! `d ln g / dx = φ(t_on) − φ(t_on + t_off) > 0` and
//! `d ln r / dx = φ(t_on) + φ(t_off) − φ(t_on + t_off) > 0`, so both fall as
//! `τ` grows; `g` rises with `t_on` and falls with `t_off`; `r` rises with
//! both. So the peak takes the longest on time, the shortest off time and
//! the shortest τ; the swing the longest times and the shortest τ. Without
//! a time constant no credit is taken: `g = r = 1`.

use super::heat::Heat;
use super::unknown::{Figure, both, need, optional};
use guardband_model::{BlockKind, Model, Node};

/// What the hiccup does to one heat figure.
#[derive(Debug, Clone, PartialEq)]
pub struct Pulsed {
    /// The largest duty cycle `t_on / (t_on + t_off)`.
    pub duty: f64,
    /// The largest average dissipation, W.
    pub average_power: f64,
    /// The largest average junction, K.
    pub average_junction: f64,
    /// The junction if the current flowed without pause, K.
    pub steady_junction: f64,
    /// The largest junction swing over a cycle, K.
    pub swing: f64,
    /// The shortest time constant used, s (`None`: none stated, no credit).
    pub time_constant: Option<f64>,
}

/// The peak factor `g` and swing factor `r` (see the module's comment).
pub fn factors(on: f64, off: f64, tau: Option<f64>) -> (f64, f64) {
    let Some(tau) = tau.filter(|t| *t > 0.0) else {
        return (1.0, 1.0);
    };
    let u = (-on / tau).exp();
    let w = (-off / tau).exp();
    let g = (1.0 - u) / (1.0 - u * w);
    let r = (1.0 - u) * (1.0 - w) / (1.0 - u * w);
    (g, r)
}

struct Timing {
    on: (f64, f64),
    off: (f64, f64),
    tau: Option<(f64, f64)>,
}

fn timing(model: &Model, reg: &Node, h: &Node) -> Figure<Timing> {
    let ((on, off), tau) = both(
        both(need(h, "on_time"), need(h, "off_time")),
        optional(h, "time_constant"),
    )?;
    let tau = match tau {
        Some(t) => Some((t.lo, t.hi)),
        None => match model.child(reg, BlockKind::ThermalShutdown) {
            Some(tsd) => optional(tsd, "time_constant")?.map(|t| (t.lo, t.hi)),
            None => None,
        },
    };
    Ok(Timing {
        on: (on.lo, on.hi),
        off: (off.lo, off.hi),
        tau,
    })
}

/// The heat of a short or overload under the regulator's hiccup, when it
/// has one: the junction becomes the pulse train's peak, with the rest in
/// [`Heat::pulsed`]. The lower bound is dropped: over a cycle the junction
/// falls towards the ambient, so no floor of the steady case holds.
pub fn pulse(model: &Model, reg: &Node, heat: Figure<Heat>) -> Figure<Heat> {
    let Some(h) = model.child(reg, BlockKind::Hiccup) else {
        return heat;
    };
    let mut heat = heat?;
    let t = timing(model, reg, h)?;
    let tau_lo = t.tau.map(|t| t.0);
    let (g, _) = factors(t.on.1, t.off.0, tau_lo);
    let (_, r) = factors(t.on.1, t.off.1, tau_lo);
    let duty = t.on.1 / (t.on.1 + t.off.0);
    let rise = heat.junction - heat.ambient;
    let steady = heat.junction;
    heat.pulsed = Some(Pulsed {
        duty,
        average_power: heat.power * duty,
        average_junction: heat.ambient + rise * duty,
        steady_junction: steady,
        swing: rise * r,
        time_constant: tau_lo,
    });
    heat.junction = heat.ambient + rise * g;
    heat.junction_lo = None;
    Ok(heat)
}

#[cfg(test)]
mod tests {
    use super::*;

    // One-pole model, hand calculation: t_on = τ, t_off = 9τ: u = e^−1,
    // w = e^−9; g = (1 − 0.367879) / (1 − 0.367879 × 0.00012341) = 0.632149.
    #[test]
    fn the_peak_factor_matches_the_hand_calculation() {
        let (g, r) = factors(1.0, 9.0, Some(1.0));
        assert!((g - 0.632_149).abs() < 1e-6, "{g}");
        // r = g·(1 − w) = 0.632071.
        assert!((r - 0.632_071).abs() < 1e-6, "{r}");
    }

    // The directions the bounds rely on, sampled densely (the proof is in
    // the module's comment; this guards the formula against a slip).
    #[test]
    fn the_factors_move_the_proved_way() {
        let steps = [0.1, 0.3, 1.0, 3.0, 10.0];
        for on in steps {
            for off in steps {
                for tau in steps {
                    let (g, r) = factors(on, off, Some(tau));
                    let (g_tau, r_tau) = factors(on, off, Some(tau * 1.1));
                    assert!(g_tau <= g && r_tau <= r, "τ");
                    let (g_on, r_on) = factors(on * 1.1, off, Some(tau));
                    assert!(g_on >= g && r_on >= r, "on");
                    let (g_off, r_off) = factors(on, off * 1.1, Some(tau));
                    assert!(g_off <= g && r_off >= r, "off");
                    let duty = on / (on + off);
                    assert!(g >= duty - 1e-12 && g <= 1.0, "between average and steady");
                }
            }
        }
    }
}
