//! Derivations per regulator: limit windows (worst case and statistical),
//! the currents the protections let through at each output voltage, the
//! worst current, conductor ratings, startup, and heat in shorts and
//! overloads. Every figure is a bound over every corner the spec admits;
//! a figure whose inputs are missing or in error is [`Unknown`], never a
//! default. The rules read these; hovers and the report show them through
//! [`view`].

pub mod budget;
pub mod conductor;
pub mod current;
pub mod envelope;
pub mod expected;
pub mod heat;
pub mod hiccup;
pub mod load;
pub mod rail;
pub mod reverse;
pub mod startup;
pub mod statistics;
pub mod unknown;
pub mod view;
pub mod window;

pub use conductor::{Carries, ConductorKind, ConductorRating, Unrated};
pub use current::{Cause, Currents, WorstCurrent};
pub use heat::{Cycling, FaultTemperature, Heat};
pub use load::{Load, LoadKind, Shortfall};
pub use reverse::{Reverse, ReverseCase};
pub use startup::Startup;
pub use statistics::{
    Contributor, RangeMode, StatSettings, Statistical, escape_ppm, sigmas_below, statistical,
};
pub use unknown::{Figure, Need, Unknown};
pub use window::{LimitWindow, Scheme, UnreadLimit};

use crate::options::Options;
use guardband_model::{BlockKind, Model, Node, NodeId};

/// Everything derived for one regulator.
#[derive(Debug, Clone)]
pub struct Derived {
    pub regulator: NodeId,
    /// The load, when it can be read.
    pub load: Option<Load>,
    /// The most the load draws in regulation, A (the top of a current
    /// range, `Vout,max/R,min` for a resistance, `P,max/Vout,min` for a
    /// constant power); `None` when it is not known.
    pub rated_load: Option<f64>,
    pub load_unit: Option<String>,
    /// Required margin of a limit's low edge above rated load, a fraction.
    pub margin: f64,
    pub limits: Vec<LimitWindow>,
    pub unread_limits: Vec<UnreadLimit>,
    pub currents: Figure<Currents>,
    pub worst: Figure<WorstCurrent>,
    /// The output shorted to ground (0 V).
    pub short: Figure<Heat>,
    /// The worst point of a partial short or overload.
    pub overload: Figure<Heat>,
    /// Heat in normal operation: the rated load and the quiescent current.
    pub normal: Figure<Heat>,
    /// Recovery after an overload: where, between 0 V and the highest
    /// regulated output, the least current delivered first fails to exceed
    /// the load's heaviest draw (`None`: it always exceeds it).
    pub recovery: Figure<Option<Shortfall>>,
    /// How a sustained short cycles under the thermal shutdown.
    pub cycling: Figure<Option<Cycling>>,
    /// The thermal-cycle damage against a `cycle_budget`, when one is stated.
    pub cycle_damage: Figure<Option<budget::CycleDamage>>,
    /// The hottest the die gets in a fault.
    pub fault_temperature: Figure<FaultTemperature>,
    pub startup: Figure<Startup>,
    /// Each `short_to_supply` fault case, in the order written.
    pub reverse_cases: Vec<(NodeId, Figure<ReverseCase>)>,
    pub conductors: Vec<ConductorRating>,
}

impl Derived {
    /// Rated load times one plus the margin, the level a limit must stay above.
    pub fn required(&self) -> Option<f64> {
        self.rated_load.map(|r| r * (1.0 + self.margin))
    }

    /// The window of one limit.
    pub fn limit(&self, node: NodeId) -> Option<&LimitWindow> {
        self.limits.iter().find(|l| l.node == node)
    }

    /// The rating of one conductor.
    pub fn conductor(&self, node: NodeId) -> Option<&ConductorRating> {
        self.conductors.iter().find(|c| c.node == node)
    }
}

/// The statistical settings of the options.
pub fn stat_settings(options: &Options) -> StatSettings {
    StatSettings {
        sigma: options.sigma,
        ranges: options.ranges,
    }
}

/// Derives every figure for one regulator.
pub fn derive(model: &Model, reg: &Node, options: &Options) -> Derived {
    let settings = stat_settings(options);
    let (limits, unread_limits) = window::limit_windows(model, reg, &settings);
    let currents = current::currents(model, reg, &limits, &unread_limits);
    let worst = currents
        .as_ref()
        .map_err(Clone::clone)
        .and_then(|c| current::worst_current(model, reg, c));
    let (short, overload) = heat::heat(reg, &currents);
    let short = hiccup::pulse(model, reg, short);
    let overload = hiccup::pulse(model, reg, overload);
    let fault_temperature = heat::fault_temperature(model, reg, &overload);
    let cycling = heat::cycling(model, reg, &short);
    let cycle_damage = budget::damage(model, reg, &cycling, &short);
    // The regulator's load, read once for every figure that needs it.
    let reg_load = Load::need(reg, "load");
    let startup = startup::startup(model, reg, &currents, &reg_load);
    let reverse_cases = reverse::reverse_cases(model, reg, &currents, &overload);
    let inputs = conductor::RatingInputs {
        model,
        reg,
        options,
        worst: &worst,
        fault_temperature: &fault_temperature,
    };
    let conductors = model
        .children(reg, BlockKind::Conductor)
        .map(|c| conductor::rate(&inputs, c))
        .collect();
    let load = reg_load.as_ref().ok().cloned();
    let output = reg.quantity("output");
    let rated_load = load.as_ref().and_then(|l| match l.kind {
        LoadKind::Current => Some(l.hi),
        _ => output.and_then(|o| l.heaviest_over(o.lo, o.hi)),
    });
    let recovery = recovery(reg, &currents, &reg_load);
    Derived {
        regulator: reg.id,
        rated_load,
        load_unit: load
            .as_ref()
            .and_then(|l| l.current_unit().map(str::to_string)),
        load,
        normal: heat::normal(reg, &reg_load),
        recovery,
        margin: reg
            .quantity("margin")
            .map(|m| m.nom)
            .unwrap_or(options.margin),
        limits,
        unread_limits,
        currents,
        worst,
        short,
        overload,
        fault_temperature,
        cycling,
        cycle_damage,
        startup,
        reverse_cases,
        conductors,
    }
}

/// Where the least delivered current first fails to exceed the load, from
/// 0 V up to the highest regulated output (see [`Derived::recovery`]).
fn recovery(
    reg: &Node,
    currents: &Figure<Currents>,
    load: &Figure<Load>,
) -> Figure<Option<Shortfall>> {
    let c = currents.as_ref().map_err(Clone::clone)?;
    let lower = c.lower.as_ref().map_err(Clone::clone)?;
    let (load, output) = unknown::both(load.clone(), unknown::need(reg, "output"))?;
    Ok(load::first_shortfall(lower, &load, output.hi))
}

/// The derivation of the regulator `id` among `derived` (one per regulator,
/// in the order of `Model::regulators`, so ordered by node id): a binary
/// search, not a scan, so that looking every regulator up stays linear.
pub fn derived_of(derived: &[Derived], id: NodeId) -> Option<&Derived> {
    match derived.binary_search_by_key(&id, |d| d.regulator) {
        Ok(i) => derived.get(i),
        // Not ordered after all (a caller's own list): scan.
        Err(_) => derived.iter().find(|d| d.regulator == id),
    }
}

#[cfg(test)]
mod tests {
    use guardband_model::{SourceId, Value};
    use guardband_units::QuantityKind;

    fn one_plus(v: &Value) -> Value {
        Value::exact(QuantityKind::NONE, 1.0).add(v).unwrap()
    }

    // Rule of thumb (common practice, no source): an on-chip resistor spread
    // of ±15..20 % plus mirror mismatch gives a limit spread of about ±30..50 %.
    #[test]
    fn resistor_plus_mismatch_spread_is_thirty_to_fifty_percent() {
        for (resistor, mismatch) in [(0.15, 0.15), (0.20, 0.25)] {
            let reference = Value::exact(QuantityKind::CURRENT, 45e-6)
                .with_tolerance(QuantityKind::NONE, resistor, resistor, SourceId(0))
                .unwrap();
            let m = Value::spread(QuantityKind::NONE, mismatch, mismatch, SourceId(1));
            let w = reference.mul(&one_plus(&m)).unwrap();
            let spread = (w.hi - w.nom) / w.nom;
            assert!((0.30..=0.50).contains(&spread), "spread {spread}");
        }
    }

    // Rule of thumb (common practice, no source): a limit centred at 1.5x
    // rated load with a ±30..50 % spread reaches about 2..2.25x at its top, and
    // metal must be sized for the top edge, about 2.5..3x rated once the
    // ratio and drain-voltage errors are added.
    #[test]
    fn limit_top_needs_metal_well_above_rated() {
        let rated = 0.15;
        let nominal = 1.5 * rated;
        for spread in [0.67, 1.0] {
            let top = nominal * (1.0 + spread);
            assert!(
                (2.5 * rated..=3.0 * rated + 1e-12).contains(&top),
                "top {top}"
            );
        }
    }
}
