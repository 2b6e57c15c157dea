//! Heat in the pass device when the output is held below regulation: in a
//! hard short (output at 0 V) and at the worst point of a partial short or
//! overload, where `(Vin,max − V)·I(V)` peaks. The junction follows from
//! T_J = T_A,max + P·θJA,max (textbook relation).

use super::current::Currents;
use super::envelope;
use super::load::{Load, LoadKind};
use super::unknown::{Figure, both, need, optional};
use crate::physics::thermal;
use guardband_model::{BlockKind, Model, Node};
use uom::si::f64 as q;

/// Dissipation and junction temperature at one output voltage.
#[derive(Debug, Clone)]
pub struct Heat {
    /// The output voltage at which this figure holds, V.
    pub at_voltage: f64,
    /// The current there (its upper bound), A.
    pub current: f64,
    /// What sets that current, in words.
    pub reason: String,
    /// Upper bound of the dissipation, W.
    pub power: f64,
    /// Upper bound of the junction temperature, K.
    pub junction: f64,
    /// Lower bound of the junction temperature, K, when the current is bounded below.
    pub junction_lo: Option<f64>,
    /// The inputs used: maximum supply (V), maximum ambient (K), maximum θJA (K/W).
    pub supply: f64,
    pub ambient: f64,
    pub theta: f64,
    /// Under a hiccup: the duty cycle, average and swing (the junction above is then its peak).
    pub pulsed: Option<super::hiccup::Pulsed>,
}

/// The thermal inputs a regulator states.
struct Inputs {
    supply: (f64, f64),
    ambient: (f64, f64),
    theta: (f64, f64),
}

fn inputs(reg: &Node) -> Figure<Inputs> {
    let ((supply, ambient), theta) = both(
        both(need(reg, "supply"), need(reg, "ambient")),
        need(reg, "theta_ja"),
    )?;
    Ok(Inputs {
        supply: (supply.lo, supply.hi),
        ambient: (ambient.lo, ambient.hi),
        theta: (theta.lo, theta.hi),
    })
}

/// T_J = T_A + P·θJA, in kelvin.
pub(super) fn junction(ambient: f64, power: f64, theta: f64) -> f64 {
    thermal::junction_temperature(
        q::ThermodynamicTemperature::new::<uom::si::thermodynamic_temperature::kelvin>(ambient),
        q::Power::new::<uom::si::power::watt>(power),
        q::ThermalResistance::new::<uom::si::thermal_resistance::kelvin_per_watt>(theta),
    )
    .value
}

fn dissipation(volts: f64, amps: f64) -> f64 {
    thermal::short_dissipation(
        q::ElectricPotential::new::<uom::si::electric_potential::volt>(volts),
        q::ElectricCurrent::new::<uom::si::electric_current::ampere>(amps),
    )
    .value
}

/// The hard short (output at 0 V) and the worst point over the output range.
pub fn heat(reg: &Node, currents: &Figure<Currents>) -> (Figure<Heat>, Figure<Heat>) {
    let both_inputs = both(inputs(reg), currents.as_ref().map_err(Clone::clone));
    let (inp, c) = match both_inputs {
        Ok(x) => x,
        Err(u) => return (Err(u.clone()), Err(u)),
    };
    let (vin_lo, vin) = inp.supply;
    let (ta_lo, ta) = inp.ambient;
    let (theta_lo, theta) = inp.theta;
    let short = c.upper_at(0.0).map(|(i, cause)| {
        let power = dissipation(vin, i);
        Heat {
            at_voltage: 0.0,
            current: i,
            reason: cause.what.clone(),
            power,
            junction: junction(ta, power, theta),
            junction_lo: c
                .lower_at(0.0)
                .map(|lo| junction(ta_lo, dissipation(vin_lo, lo), theta_lo)),
            supply: vin,
            ambient: ta,
            theta,
            pulsed: None,
        }
    });
    let worst = envelope::hottest(&c.upper, vin).map(|(power, v, i, by)| Heat {
        at_voltage: v,
        current: i,
        reason: c.cause(by).what.clone(),
        power,
        junction: junction(ta, power, theta),
        junction_lo: None,
        supply: vin,
        ambient: ta,
        theta,
        pulsed: None,
    });
    let missing = || super::unknown::Unknown::because("the current is not bounded");
    (short.ok_or_else(missing), worst.ok_or_else(missing))
}

/// Whether a spec asks for the heat at rated load: it states a junction
/// limit or a thermal shutdown to hold that heat against.
pub fn wants_rated_load_heat(model: &Model, reg: &Node) -> bool {
    reg.field("junction_max").is_some() || model.child(reg, BlockKind::ThermalShutdown).is_some()
}

/// Heat in normal operation: the largest `(Vin,max − V)·I_load(V)` over the
/// regulated output `V` from its low to its high edge, with `I_load` the
/// load's heaviest draw, plus the quiescent current's `I_q,max·Vin,max`;
/// the junction at the maximum ambient and θJA (T_J = T_A + P·θJA).
///
/// For a constant current or power the product falls as `V` rises, so the
/// low edge of the output is worst; for a resistance `(Vin − V)·V/R` peaks
/// at `V = Vin/2` when that lies inside the output's range.
pub fn normal(reg: &Node, load: &Figure<Load>) -> Figure<Heat> {
    let ((inp, load), (output, quiescent)) = both(
        both(inputs(reg), load.as_ref().map_err(Clone::clone)),
        both(need(reg, "output"), need(reg, "quiescent")),
    )?;
    let vin = inp.supply.1;
    let mut candidates = vec![output.lo, output.hi];
    if load.kind == LoadKind::Resistance && vin / 2.0 > output.lo && vin / 2.0 < output.hi {
        candidates.push(vin / 2.0);
    }
    let (at_voltage, load_power) = candidates
        .into_iter()
        .map(|v| (v, (vin - v).max(0.0) * load.heaviest(v)))
        .max_by(|a, b| a.1.total_cmp(&b.1).then(b.0.total_cmp(&a.0)))
        .unwrap_or((output.lo, 0.0));
    let power = load_power + dissipation(vin, quiescent.hi);
    Ok(Heat {
        at_voltage,
        current: load.heaviest(at_voltage),
        reason: format!(
            "the rated load, {}, plus the quiescent current",
            load.describe()
        ),
        power,
        junction: junction(inp.ambient.1, power, inp.theta.1),
        junction_lo: None,
        supply: vin,
        ambient: inp.ambient.1,
        theta: inp.theta.1,
        pulsed: None,
    })
}

/// The hottest the die gets in a fault, K, and why.
#[derive(Debug, Clone, PartialEq)]
pub struct FaultTemperature {
    pub kelvin: f64,
    pub why: &'static str,
}

/// The hottest the die gets in a fault: the worst junction temperature,
/// held down by a thermal shutdown at the top of its threshold when there
/// is one (the die then cycles below it). Unknown when neither is known.
pub fn fault_temperature(
    model: &Model,
    reg: &Node,
    worst: &Figure<Heat>,
) -> Figure<FaultTemperature> {
    let shutdown = model
        .child(reg, BlockKind::ThermalShutdown)
        .and_then(|t| t.quantity("threshold"))
        .map(|t| t.hi);
    let at = |kelvin, why| Ok(FaultTemperature { kelvin, why });
    match (worst, shutdown) {
        (Ok(h), Some(t)) if t < h.junction => at(
            t,
            "the thermal shutdown's highest trip point, below the worst junction",
        ),
        (Ok(h), _) => at(h.junction, "the worst junction in a short or overload"),
        (Err(_), Some(t)) => at(t, "the thermal shutdown's highest trip point"),
        (Err(u), None) => Err(u.clone()),
    }
}

/// A sustained short under a thermal shutdown: the junction heats to the
/// trip point, the shutdown turns the pass device off, the die cools by the
/// hysteresis and the block restarts, again and again.
#[derive(Debug, Clone, PartialEq)]
pub struct Cycling {
    /// The junction swing, the hysteresis's low and high edge, K.
    pub swing: (f64, f64),
    /// The shortest cycle period, s, when `time_constant` is stated.
    pub period_min: Option<f64>,
}

/// How a sustained short cycles under the thermal shutdown (see
/// [`Cycling`]); `Ok(None)` when there is no shutdown with a hysteresis,
/// or when the short cannot reach the trip point at any corner, or the die
/// cannot cool to the restart point above the ambient at any corner.
///
/// With a one-pole thermal model (T(t) = T_f + (T_0 − T_f)·e^(−t/τ),
/// textbook first-order response), heating from trip − h to trip towards
/// T_f = T_A + Q takes τ·ln((Q − x + h)/(Q − x)), and cooling from trip to
/// trip − h towards T_A takes τ·ln(x/(x − h)), with x = trip − T_A. Both
/// grow with h and τ; heating shrinks as Q grows and grows with x, cooling
/// shrinks with x: each term is taken at its own least corner, so the sum
/// bounds the period from below (`crates/guardband-check/tests/cycling.rs`
/// checks it against the hand calculation and sampled corners).
pub fn cycling(model: &Model, reg: &Node, short: &Figure<Heat>) -> Figure<Option<Cycling>> {
    let Some(tsd) = model.child(reg, BlockKind::ThermalShutdown) else {
        return Ok(None);
    };
    let Some(hyst) = optional(tsd, "hysteresis")? else {
        return Ok(None);
    };
    let trip = need(tsd, "threshold")?;
    let heat = short.as_ref().map_err(Clone::clone)?;
    let (ambient_lo, ambient_hi) = (need(reg, "ambient")?.lo, heat.ambient);
    let rise = heat.junction - heat.ambient;
    let (x_lo, x_hi) = (trip.lo - ambient_hi, trip.hi - ambient_lo);
    let h = hyst.lo;
    // Cycling needs a corner where the short heats past the trip point
    // (Q > x) and the die can cool to the restart point above the ambient
    // (x > h); with x ≥ h that also needs Q > h.
    if h <= 0.0 || x_hi <= h || rise <= x_lo.max(h) {
        return Ok(None);
    }
    let tau = optional(tsd, "time_constant")?.map(|t| t.lo);
    // Under a hiccup the die heats no faster than with the current steady.
    let rise = heat
        .pulsed
        .as_ref()
        .map_or(rise, |p| p.steady_junction - heat.ambient);
    let period_min = tau.map(|tau| {
        let x = x_lo.max(h * (1.0 + 1e-12));
        let heating = tau * ((rise - x + h) / (rise - x)).ln();
        let cooling = tau * (x_hi / (x_hi - h)).ln();
        heating + cooling
    });
    Ok(Some(Cycling {
        swing: (hyst.lo, hyst.hi),
        period_min,
    }))
}
