//! Derivations per regulator: limit windows (worst-case and statistical),
//! the worst current, conductor ratings, startup and sustained-short heat.
//! Every rule reads these; hovers can show them.

use crate::config::Config;
use crate::physics::{conductor, startup, statistics, thermal};
use guardband_model::{BlockKind, Model, Node, NodeId, SourceId, Value};
use guardband_units::{QuantityKind, to_uom};
use uom::si::f64 as q;

/// The two limit schemes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Scheme {
    Replica,
    UndervoltageFixed,
}

/// Share of one stated tolerance in a statistical window.
#[derive(Debug, Clone, PartialEq)]
pub struct Contributor {
    pub source: SourceId,
    /// Its standard deviation, SI.
    pub sigma: f64,
    /// Its fraction of the total variance (0..1).
    pub share: f64,
}

/// A root-sum-square window: mean ± k·sigma.
#[derive(Debug, Clone, PartialEq)]
pub struct Statistical {
    pub mean: f64,
    pub sigma: f64,
    pub lo: f64,
    pub hi: f64,
    pub contributors: Vec<Contributor>,
}

/// Combines a value's stated tolerances by root-sum-square, each stated
/// extreme taken as `k` standard deviations, ranked by share of the variance.
pub fn statistical(v: &Value, k: f64) -> Statistical {
    let mut mean = v.nom;
    let mut variance = 0.0;
    let mut contributors = Vec::new();
    for t in &v.terms {
        mean += (t.high + t.low) / 2.0;
        let s = (t.high - t.low).abs() / 2.0 / k;
        variance += s * s;
        contributors.push(Contributor {
            source: t.source,
            sigma: s,
            share: 0.0,
        });
    }
    for c in &mut contributors {
        c.share = if variance > 0.0 {
            c.sigma * c.sigma / variance
        } else {
            0.0
        };
    }
    contributors.sort_by(|a, b| b.share.total_cmp(&a.share));
    let sigma = variance.sqrt();
    Statistical {
        mean,
        sigma,
        lo: mean - k * sigma,
        hi: mean + k * sigma,
        contributors,
    }
}

/// Parts per million of a normal population that fall below `threshold`.
pub fn escape_ppm(stat: &Statistical, threshold: f64) -> f64 {
    if stat.sigma <= 0.0 {
        return if stat.mean <= threshold { 1e6 } else { 0.0 };
    }
    statistics::normal_cdf((threshold - stat.mean) / stat.sigma) * 1e6
}

/// The window of one limit.
#[derive(Debug, Clone)]
pub struct LimitWindow {
    pub node: NodeId,
    pub scheme: Scheme,
    /// Replica: threshold with mismatch and drain error applied.
    /// Undervoltage: the fixed current.
    pub window: Value,
    pub stat: Statistical,
    /// Undervoltage scheme: the characterised trip current, when stated.
    pub trip: Option<Value>,
}

/// The largest current that can flow in the output path, and why.
#[derive(Debug, Clone)]
pub struct WorstCurrent {
    pub value: f64,
    pub unit: Option<String>,
    pub reason: String,
    /// The node and field the number comes from, for labels.
    pub from: Option<(NodeId, &'static str)>,
}

/// How a conductor was rated.
#[derive(Debug, Clone)]
pub struct ConductorRating {
    pub node: NodeId,
    /// Resistance at its temperature, for metal with a `length` and a layer `resistivity`.
    pub resistance: Option<f64>,
    /// Rating in A, or why none could be computed.
    pub rating: Result<f64, String>,
    pub basis: String,
}

/// Startup figures.
#[derive(Debug, Clone)]
pub struct Startup {
    pub capacitance: f64,
    pub voltage: f64,
    pub load: f64,
    /// Peak current drawn from the supply while starting.
    pub surge: f64,
    pub surge_reason: String,
    /// Whether a limit, fixed current or soft start bounds the surge.
    pub bounded: bool,
    /// Smallest charging current available.
    pub charge_min: Option<f64>,
    /// Worst-case startup time; `None` with `charge_min` set means it never starts.
    pub time: Option<f64>,
}

/// Sustained-short figures.
#[derive(Debug, Clone)]
pub struct Short {
    pub current: f64,
    pub reason: String,
    pub power: f64,
    pub junction: f64,
}

/// Everything derived for one regulator.
#[derive(Debug, Clone)]
pub struct Derived {
    pub regulator: NodeId,
    pub rated_load: Option<f64>,
    pub load_unit: Option<String>,
    pub margin: f64,
    pub limits: Vec<LimitWindow>,
    pub worst: Option<WorstCurrent>,
    pub conductors: Vec<ConductorRating>,
    pub startup: Option<Startup>,
    pub short: Option<Short>,
}

impl Derived {
    /// Rated load times one plus the margin, the level a limit must stay above.
    pub fn required(&self) -> Option<f64> {
        self.rated_load.map(|r| r * (1.0 + self.margin))
    }
}

fn one_plus(v: &Value) -> Option<Value> {
    Value::exact(QuantityKind::NONE, 1.0).add(v).ok()
}

/// The threshold of a replica limit with mismatch and drain error applied
/// (unless the threshold expression already depends on them).
fn replica_window(limit: &Node) -> Option<Value> {
    let mut window = match limit.quantity("threshold") {
        Some(t) => t.clone(),
        None => limit
            .quantity("ratio")?
            .mul(limit.quantity("reference")?)
            .ok()?,
    };
    for key in ["mismatch", "drain_error"] {
        let Some(extra) = limit.quantity(key) else {
            continue;
        };
        let already = extra
            .terms
            .iter()
            .all(|t| window.terms.iter().any(|w| w.source == t.source));
        if !already {
            let unit = window.unit.clone();
            window = window.mul(&one_plus(extra)?).ok()?;
            window.unit = unit;
        }
    }
    Some(window)
}

fn limit_windows(model: &Model, reg: &Node, config: &Config) -> Vec<LimitWindow> {
    let mut out = Vec::new();
    for limit in model.children(reg, BlockKind::Limit) {
        let (scheme, window) = match limit.choice("scheme") {
            Some("replica") => (Scheme::Replica, replica_window(limit)),
            Some("undervoltage_fixed") => (
                Scheme::UndervoltageFixed,
                limit.quantity("fixed_current").cloned(),
            ),
            _ => continue,
        };
        let Some(window) = window else { continue };
        let stat = statistical(&window, config.sigma);
        let trip = limit.quantity("trip_current").cloned();
        out.push(LimitWindow {
            node: limit.id,
            scheme,
            window,
            stat,
            trip,
        });
    }
    out
}

fn worst_current(model: &Model, reg: &Node, limits: &[LimitWindow]) -> Option<WorstCurrent> {
    let full_gate = model
        .child(reg, BlockKind::Pass)
        .and_then(|p| p.quantity("full_gate_current").map(|v| (p.id, v)));
    let mut best: Option<WorstCurrent> = None;
    for l in limits {
        let node = model.node(l.node);
        let (value, reason, field) = match l.scheme {
            Scheme::Replica => (
                l.window.hi,
                format!("top of the `{}` limit window", node.key()),
                "threshold",
            ),
            Scheme::UndervoltageFixed => {
                let trip_hi = l.trip.as_ref().map(|t| t.hi).unwrap_or(f64::NEG_INFINITY);
                if trip_hi > l.window.hi {
                    (
                        trip_hi,
                        format!("top of the `{}` characterised trip current", node.key()),
                        "trip_current",
                    )
                } else {
                    (
                        l.window.hi,
                        format!("top of the `{}` fixed current", node.key()),
                        "fixed_current",
                    )
                }
            }
        };
        if best.as_ref().is_none_or(|b| value < b.value) {
            best = Some(WorstCurrent {
                value,
                unit: l.window.unit.as_deref().map(str::to_string),
                reason,
                from: Some((l.node, field)),
            });
        }
    }
    match (best, full_gate) {
        (Some(b), Some((_, fg))) if fg.hi < b.value => Some(WorstCurrent {
            value: fg.hi,
            unit: fg.unit.as_deref().map(str::to_string),
            reason: "the full-gate current at the strong corner (below the limit)".into(),
            from: model
                .child(reg, BlockKind::Pass)
                .map(|p| (p.id, "full_gate_current")),
        }),
        (Some(b), _) => Some(b),
        (None, Some((pass, fg))) => Some(WorstCurrent {
            value: fg.hi,
            unit: fg.unit.as_deref().map(str::to_string),
            reason: "the full-gate current at the strong corner (no limit)".into(),
            from: Some((pass, "full_gate_current")),
        }),
        (None, None) => None,
    }
}

fn as_uom<Q: guardband_units::UomQuantity>(v: &Value, si: f64) -> Option<Q> {
    to_uom::<Q>(si, v.kind)
}

/// Rates one conductor at the temperature it sees.
pub fn conductor_rating(model: &Model, reg: &Node, c: &Node, config: &Config) -> ConductorRating {
    let node = c.id;
    if let Some(r) = c.quantity("rating") {
        return ConductorRating {
            resistance: None,
            node,
            rating: Ok(r.lo),
            basis: "stated rating (low end)".into(),
        };
    }
    let junction = reg.quantity("junction_max").map(|v| v.hi);
    if let Some(layer_id) = c.reference("layer") {
        let layer = model.node(layer_id);
        let Some(width) = c.quantity("width") else {
            return ConductorRating {
                resistance: None,
                node,
                rating: Err("metal needs `width`".into()),
                basis: String::new(),
            };
        };
        let per_area = match (
            layer.quantity("current_density"),
            layer.quantity("thickness"),
        ) {
            (Some(j), Some(t)) => {
                let (Some(j_u), Some(t_u), Some(w_u)) = (
                    as_uom::<q::ElectricCurrentDensity>(j, j.lo),
                    as_uom::<q::Length>(t, t.lo),
                    as_uom::<q::Length>(width, width.lo),
                ) else {
                    return ConductorRating {
                        resistance: None,
                        node,
                        rating: Err("layer data has the wrong units".into()),
                        basis: String::new(),
                    };
                };
                Some((j_u, t_u, w_u))
            }
            _ => None,
        };
        let base = match (&per_area, layer.quantity("current_per_width")) {
            (Some((j, t, w)), _) => {
                conductor::metal_rating(*w, *t, *j, q::Ratio::new::<uom::si::ratio::ratio>(1.0))
                    .value
            }
            (None, Some(jw)) => jw.lo * width.lo,
            (None, None) => {
                return ConductorRating {
                    resistance: None,
                    node,
                    rating: Err(format!(
                        "layer `{}` states neither `current_density` with `thickness` nor `current_per_width`",
                        layer.key()
                    )),
                    basis: String::new(),
                };
            }
        };
        let temperature = c.quantity("temperature").map(|v| v.hi).or(junction);
        let lifetime = c
            .quantity("lifetime")
            .map(|v| v.lo)
            .or_else(|| reg.quantity("lifetime").map(|v| v.lo))
            .or(config.lifetime);
        let mut basis = format!("layer `{}` limit × width", layer.key());
        let mut factor = 1.0;
        if let (Some(t), Some(t_ref)) = (temperature, layer.quantity("reference_temperature")) {
            match (
                layer.quantity("activation_energy"),
                layer.quantity("current_exponent"),
            ) {
                (Some(ea), Some(n)) => {
                    let params = conductor::BlackParameters {
                        activation_energy: q::Energy::new::<uom::si::energy::joule>(ea.nom),
                        current_exponent: q::Ratio::new::<uom::si::ratio::ratio>(n.nom),
                    };
                    let life = match (lifetime, layer.quantity("reference_lifetime")) {
                        (Some(l), Some(l_ref)) => Some((
                            q::Time::new::<uom::si::time::second>(l),
                            q::Time::new::<uom::si::time::second>(l_ref.nom),
                        )),
                        _ => None,
                    };
                    factor = conductor::black_derating(
                        params,
                        q::ThermodynamicTemperature::new::<
                            uom::si::thermodynamic_temperature::kelvin,
                        >(t),
                        q::ThermodynamicTemperature::new::<
                            uom::si::thermodynamic_temperature::kelvin,
                        >(t_ref.nom),
                        life,
                    )
                    .value;
                    basis = format!(
                        "{basis}, derated by Black's equation to {}{} (×{})",
                        crate::format::in_unit(t, QuantityKind::ABSOLUTE_TEMPERATURE, Some("°C")),
                        life.map(|(l, _)| format!(
                            " for {} yr",
                            crate::format::number(l.get::<uom::si::time::year>())
                        ))
                        .unwrap_or_default(),
                        crate::format::number(factor)
                    );
                }
                _ if (t - t_ref.nom).abs() > 1e-9 && t > t_ref.nom => {
                    return ConductorRating {
                        resistance: None,
                        node,
                        rating: Err(format!(
                            "layer `{}` is rated at {} but the conductor runs hotter, and `activation_energy`/`current_exponent` are missing to derate it",
                            layer.key(),
                            crate::format::in_unit(
                                t_ref.nom,
                                QuantityKind::ABSOLUTE_TEMPERATURE,
                                Some("°C")
                            )
                        )),
                        basis,
                    };
                }
                _ => {}
            }
        }
        return ConductorRating {
            resistance: None,
            node,
            rating: Ok(base * factor),
            basis,
        };
    }
    if let Some(d) = c.quantity("diameter") {
        let material = c.choice("material").unwrap_or("unstated");
        let Some(a) = conductor::preece_constant(material) else {
            return ConductorRating {
                resistance: None,
                node,
                rating: Err(format!(
                    "no Preece constant for `{material}` bond wire; state `rating` from the wire maker's data"
                )),
                basis: String::new(),
            };
        };
        let Some(dia) = as_uom::<q::Length>(d, d.lo) else {
            return ConductorRating {
                resistance: None,
                node,
                rating: Err("diameter has the wrong unit".into()),
                basis: String::new(),
            };
        };
        let derating = c.quantity("derating").map(|v| v.lo).unwrap_or(1.0);
        let fuse = conductor::preece_fusing_current(a, dia).value;
        return ConductorRating {
            resistance: None,
            node,
            rating: Ok(fuse * derating),
            basis: format!(
                "Preece fusing current of {material} wire × {}",
                crate::format::number(derating)
            ),
        };
    }
    if let Some(placement) = c.choice("placement") {
        let (Some(w), Some(t)) = (c.quantity("width"), c.quantity("thickness")) else {
            return ConductorRating {
                resistance: None,
                node,
                rating: Err("a board trace needs `width` and `thickness`".into()),
                basis: String::new(),
            };
        };
        let rise = c.quantity("temperature_rise").map(|v| v.lo).unwrap_or(10.0);
        let area: q::Area = q::Length::new::<uom::si::length::meter>(w.lo)
            * q::Length::new::<uom::si::length::meter>(t.lo);
        let i = conductor::ipc2221_current(
            placement == "external",
            q::TemperatureInterval::new::<uom::si::temperature_interval::kelvin>(rise),
            area,
        );
        return ConductorRating {
            resistance: None,
            node,
            rating: Ok(i.value),
            basis: format!(
                "IPC-2221 {placement} trace for a {} K rise",
                crate::format::number(rise)
            ),
        };
    }
    ConductorRating { resistance: None,
        node,
        rating: Err("give `layer` and `width` (metal), `diameter` and `material` (bond wire), `placement`, `width` and `thickness` (trace), or `rating`".into()),
        basis: String::new(),
    }
}

/// Resistance of a metal line at the temperature it sees, when its length and
/// the layer's resistivity and thickness are stated.
fn metal_resistance(model: &Model, reg: &Node, c: &Node) -> Option<f64> {
    let layer = model.node(c.reference("layer")?);
    let rho = layer.quantity("resistivity")?;
    let thickness = layer.quantity("thickness")?;
    let length = c.quantity("length")?;
    let width = c.quantity("width")?;
    let temperature = c
        .quantity("temperature")
        .or_else(|| reg.quantity("junction_max"))
        .map(|v| v.hi);
    let meter = q::Length::new::<uom::si::length::meter>;
    let kelvin = q::ThermodynamicTemperature::new::<uom::si::thermodynamic_temperature::kelvin>;
    let mut rho_t =
        q::ElectricalResistivity::new::<uom::si::electrical_resistivity::ohm_meter>(rho.hi);
    if let (Some(alpha), Some(t), Some(t_ref)) = (
        layer.quantity("temperature_coefficient"),
        temperature,
        layer.quantity("reference_temperature"),
    ) {
        let a = q::TemperatureCoefficient::new::<uom::si::temperature_coefficient::per_kelvin>(
            alpha.hi,
        );
        rho_t = conductor::resistivity_at(rho_t, a, kelvin(t), kelvin(t_ref.nom));
    }
    Some(
        conductor::line_resistance(
            rho_t,
            meter(length.hi),
            meter(width.lo),
            meter(thickness.lo),
        )
        .value,
    )
}

fn startup_figures(model: &Model, reg: &Node, limits: &[LimitWindow]) -> Option<Startup> {
    let caps: Vec<&Value> = model
        .children(reg, BlockKind::Pin)
        .filter(|p| p.flag("off_chip") == Some(true))
        .filter_map(|p| p.quantity("capacitance"))
        .collect();
    if caps.is_empty() {
        return None;
    }
    let capacitance: f64 = caps.iter().map(|c| c.hi).sum();
    let voltage = reg.quantity("output")?.hi;
    let start = model.child(reg, BlockKind::Startup);
    let load = start
        .and_then(|s| s.quantity("load"))
        .or_else(|| reg.quantity("load"))
        .map(|v| v.hi)
        .unwrap_or(0.0);
    let full_gate = model
        .child(reg, BlockKind::Pass)
        .and_then(|p| p.quantity("full_gate_current"));
    let c_u = q::Capacitance::new::<uom::si::capacitance::farad>(capacitance);
    let v_u = q::ElectricPotential::new::<uom::si::electric_potential::volt>(voltage);
    let amp = q::ElectricCurrent::new::<uom::si::electric_current::ampere>;
    let (surge, surge_reason, bounded, charge_min) =
        if let Some(slew) = start.and_then(|s| s.quantity("slew")) {
            let s = startup::SlewRate {
                dimension: std::marker::PhantomData,
                units: std::marker::PhantomData,
                value: slew.hi,
            };
            let surge = startup::ramp_surge(c_u, s, amp(load)).value;
            let s_lo = startup::SlewRate {
                dimension: std::marker::PhantomData,
                units: std::marker::PhantomData,
                value: slew.lo,
            };
            let charge = startup::ramp_surge(c_u, s_lo, amp(load)).value;
            (
                surge,
                "soft-start ramp C·dV/dt plus load".to_string(),
                true,
                Some(charge),
            )
        } else if let Some(l) = limits.first() {
            let node = model.node(l.node);
            match l.scheme {
                Scheme::Replica => (
                    l.window.hi,
                    format!("top of the `{}` limit window", node.key()),
                    true,
                    Some(l.window.lo),
                ),
                Scheme::UndervoltageFixed => (
                    l.window.hi,
                    format!("the `{}` fixed current", node.key()),
                    true,
                    Some(l.window.lo),
                ),
            }
        } else if let Some(fg) = full_gate {
            (
                fg.hi,
                "the full-gate current at the strong corner".to_string(),
                false,
                Some(fg.lo),
            )
        } else {
            return None;
        };
    let (surge, surge_reason) = match full_gate {
        Some(fg) if fg.hi < surge => (
            fg.hi,
            "the full-gate current at the strong corner".to_string(),
        ),
        _ => (surge, surge_reason),
    };
    let time =
        charge_min.and_then(|i| startup::charge_time(c_u, v_u, amp(i), amp(load)).map(|t| t.value));
    Some(Startup {
        capacitance,
        voltage,
        load,
        surge,
        surge_reason,
        bounded,
        charge_min,
        time,
    })
}

fn short_figures(model: &Model, reg: &Node, worst: Option<&WorstCurrent>) -> Option<Short> {
    let supply = reg.quantity("supply")?.hi;
    let ambient = reg.quantity("ambient")?.hi;
    let theta = reg.quantity("theta_ja")?.hi;
    // With the output shorted: foldback sets the current if present; an
    // undervoltage-triggered scheme holds its fixed current (the output is
    // below the threshold); otherwise the worst current flows.
    let fixed = model
        .children(reg, BlockKind::Limit)
        .filter(|l| l.choice("scheme") == Some("undervoltage_fixed"))
        .find_map(|l| {
            l.quantity("fixed_current")
                .map(|v| (v.hi, format!("the `{}` fixed current", l.key())))
        });
    let (current, reason) = match model
        .child(reg, BlockKind::Foldback)
        .and_then(|f| f.quantity("current"))
    {
        Some(fb) => (fb.hi, "the foldback current".to_string()),
        None => match fixed {
            Some(f) => f,
            None => {
                let w = worst?;
                (w.value, w.reason.clone())
            }
        },
    };
    let p = thermal::short_dissipation(
        q::ElectricPotential::new::<uom::si::electric_potential::volt>(supply),
        q::ElectricCurrent::new::<uom::si::electric_current::ampere>(current),
    );
    let tj = thermal::junction_temperature(
        q::ThermodynamicTemperature::new::<uom::si::thermodynamic_temperature::kelvin>(ambient),
        p,
        q::ThermalResistance::new::<uom::si::thermal_resistance::kelvin_per_watt>(theta),
    );
    Some(Short {
        current,
        reason,
        power: p.value,
        junction: tj.value,
    })
}

/// Derives every figure for one regulator.
pub fn derive(model: &Model, reg: &Node, config: &Config) -> Derived {
    let limits = limit_windows(model, reg, config);
    let worst = worst_current(model, reg, &limits);
    let conductors = model
        .children(reg, BlockKind::Conductor)
        .map(|c| {
            let mut rating = conductor_rating(model, reg, c, config);
            rating.resistance = metal_resistance(model, reg, c);
            rating
        })
        .collect();
    let startup = startup_figures(model, reg, &limits);
    let short = short_figures(model, reg, worst.as_ref());
    let load = reg.quantity("load");
    Derived {
        regulator: reg.id,
        rated_load: load.map(|l| l.hi),
        load_unit: load.and_then(|l| l.unit.as_deref().map(str::to_string)),
        margin: reg
            .quantity("margin")
            .map(|m| m.nom)
            .unwrap_or(config.margin),
        limits,
        worst,
        conductors,
        startup,
        short,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use guardband_model::SourceId;

    fn tol(nom: f64, rel: f64, id: u32) -> Value {
        Value::exact(QuantityKind::NONE, nom)
            .with_tolerance(QuantityKind::NONE, rel, rel, SourceId(id))
            .unwrap()
    }

    // Tolerance stack-up, worst case vs root-sum-square: three independent
    // parts of ±0.1, ±0.2 and ±0.2 about 1 each (sum 3 ± 0.5 worst case)
    // stack to ±sqrt(0.01 + 0.04 + 0.04) = ±0.3 by RSS, the textbook
    // comparison of the two methods (any tolerance-analysis text).
    #[test]
    fn rss_versus_worst_case_stack() {
        let v = tol(1.0, 0.1, 0)
            .add(&tol(1.0, 0.2, 1))
            .unwrap()
            .add(&tol(1.0, 0.2, 2))
            .unwrap();
        assert!((v.lo - 2.5).abs() < 1e-12 && (v.hi - 3.5).abs() < 1e-12);
        let s = statistical(&v, 3.0);
        assert!((s.hi - s.mean - 0.3).abs() < 1e-12);
        assert!((s.contributors[0].share - 0.04 / 0.09).abs() < 1e-12);
        assert_eq!(s.contributors[2].source, SourceId(0));
    }

    // Rule of thumb (common practice, no source): an on-chip resistor spread
    // of ±15..20 % plus mirror mismatch gives a limit spread of about ±30..50 %.
    #[test]
    fn resistor_plus_mismatch_spread_is_thirty_to_fifty_percent() {
        for (resistor, mismatch) in [(0.15, 0.15), (0.20, 0.25)] {
            let reference = Value::exact(QuantityKind::CURRENT, 45e-6)
                .with_tolerance(QuantityKind::NONE, resistor, resistor, SourceId(0))
                .unwrap();
            let m = Value {
                nom: 0.0,
                lo: -mismatch,
                hi: mismatch,
                terms: vec![guardband_model::Term {
                    source: SourceId(1),
                    low: -mismatch,
                    high: mismatch,
                }],
                kind: QuantityKind::NONE,
                unit: None,
            };
            let w = reference.mul(&one_plus(&m).unwrap()).unwrap();
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

    #[test]
    fn escape_rate_from_normal_tail() {
        let s = Statistical {
            mean: 1.0,
            sigma: 0.1,
            lo: 0.7,
            hi: 1.3,
            contributors: vec![],
        };
        // Φ(-3) = 0.001349898 (standard normal table) → 1349.9 ppm.
        assert!((escape_ppm(&s, 0.7) - 1349.898).abs() < 0.1);
    }
}

#[cfg(test)]
mod properties {
    //! Root-sum-square never gives a wider window than the worst case.
    use super::statistical;
    use guardband_model::{SourceId, Value};
    use guardband_units::QuantityKind;
    use proptest::prelude::*;

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(512))]

        #[test]
        fn rss_never_exceeds_the_worst_case(
            parts in proptest::collection::vec((0.1f64..100.0, 0.0f64..0.5), 1..8),
            multiply in proptest::bool::ANY,
            k in 1.0f64..6.0,
        ) {
            let mut acc: Option<Value> = None;
            for (i, (nominal, tolerance)) in parts.iter().enumerate() {
                let v = Value::range(
                    QuantityKind::NONE,
                    nominal * (1.0 - tolerance),
                    nominal * (1.0 + tolerance),
                    SourceId(i as u32),
                );
                acc = Some(match acc {
                    None => v,
                    Some(a) if multiply => a.mul(&v).expect("mul"),
                    Some(a) => a.add(&v).expect("add"),
                });
            }
            let v = acc.expect("at least one part");
            let stat = statistical(&v, k);
            let worst = v.hi - v.lo;
            prop_assert!(stat.hi - stat.lo <= worst * (1.0 + 1e-9) + 1e-12,
                "RSS {} wider than worst case {worst}", stat.hi - stat.lo);
            let shares: f64 = stat.contributors.iter().map(|c| c.share).sum();
            prop_assert!(stat.sigma == 0.0 || (shares - 1.0).abs() < 1e-9, "shares sum to one");
        }
    }
}
