//! Conductor ratings: what current each conductor must carry (by what it
//! `carries`) and what it is rated for, at the temperature it sees.
//!
//! - On-die metal: the layer's electromigration limit (current density ×
//!   width × thickness, or current per width × width, low ends), moved from
//!   the layer's reference temperature and lifetime to the conductor's by
//!   Black's equation at the worst corner of its activation energy and
//!   exponent. The metal sits on the die, so it is rated at no less than
//!   the hottest the die gets in a fault.
//! - Bond wire: Preece's fusing current of a long wire in free air times a
//!   stated derating; Preece gives no rating by itself.
//! - Board trace: the IPC-2221 current for the stated temperature rise.
//! - A stated `rating` (its low end) overrides the geometry.

use super::current::WorstCurrent;
use super::unknown::{Figure, Unknown, need, optional};
use crate::options::Options;
use crate::physics::conductor as phys;
use crate::show;
use guardband_model::{BlockKind, Model, Node, NodeId, Value};
use guardband_units::{QuantityKind, to_uom};
use uom::si::f64 as q;

/// How a conductor is rated, which decides how a fix scales it.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ConductorKind {
    /// A stated `rating`: scales with the current.
    Stated,
    /// On-die metal: width scales with the current (electromigration).
    Metal,
    /// Bond wire: diameter scales with the current to the 2/3 (Preece).
    BondWire,
    /// Board trace: width scales with the current to 1/0.725 (IPC-2221).
    Trace,
    /// Not enough written to tell.
    Unknown,
}

impl ConductorKind {
    /// The field a fix changes and the power of the current ratio it
    /// scales by: I ∝ w (metal), I ∝ d^1.5 (Preece), I ∝ A^0.725 (IPC-2221).
    pub fn scaling(self) -> Option<(&'static str, f64)> {
        match self {
            ConductorKind::Stated => Some(("rating", 1.0)),
            ConductorKind::Metal => Some(("width", 1.0)),
            ConductorKind::BondWire => Some(("diameter", 2.0 / 3.0)),
            ConductorKind::Trace => Some(("width", 1.0 / 0.725)),
            ConductorKind::Unknown => None,
        }
    }
}

/// What a conductor carries.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Carries {
    /// The output path (the pass device or a pin).
    OutputPath(NodeId),
    /// A replica limit's branch: the output-path current divided by its ratio.
    Branch { limit: NodeId, ratio_lo: f64 },
    /// Not stated: the output-path current is assumed (the most that flows).
    Unstated,
}

/// Why a conductor has no rating, with the help a finding gives.
#[derive(Debug, Clone)]
pub struct Unrated {
    pub why: Unknown,
    pub help: &'static str,
}

/// One conductor's rating against its current.
#[derive(Debug, Clone)]
pub struct ConductorRating {
    pub node: NodeId,
    pub kind: ConductorKind,
    pub carries: Carries,
    /// The worst current through it, A.
    pub current: Figure<f64>,
    /// The rating, A.
    pub rating: Result<f64, Unrated>,
    /// How the rating was found, in words.
    pub basis: String,
    /// The geometry the rating starts from, in words (metal).
    pub formula: Option<String>,
    /// The temperature it was rated at, K (metal), with why.
    pub temperature: Option<(f64, String)>,
    /// The Black's-equation factor applied (metal).
    pub derating_factor: Option<f64>,
    /// Bond wire: whether a derating was stated (else the fusing current is the rating).
    pub derating_stated: bool,
    /// Resistance at its temperature, for metal with a `length` and a layer `resistivity`.
    pub resistance: Option<f64>,
}

/// The reference temperature of a resistivity when none is stated:
/// 20 °C, at which IEC 60028 states copper and handbooks tabulate metals.
pub const RESISTIVITY_REFERENCE_K: f64 = 293.15;

fn unrated(why: Unknown, help: &'static str) -> Result<f64, Unrated> {
    Err(Unrated { why, help })
}

const GEOMETRY_HELP: &str = "complete its geometry, or state `rating`";

fn kelvin(t: f64) -> q::ThermodynamicTemperature {
    q::ThermodynamicTemperature::new::<uom::si::thermodynamic_temperature::kelvin>(t)
}

fn show_temperature(t: f64) -> String {
    show::in_unit(t, QuantityKind::ABSOLUTE_TEMPERATURE, Some("°C"))
}

/// Black's-equation factor at the worst corner: the smallest over the
/// corners of activation energy, exponent and reference temperature and
/// lifetime (the factor is monotonic in each).
fn worst_black(ea: &Value, n: &Value, t: f64, t_ref: &Value, life: Option<(f64, &Value)>) -> f64 {
    let mut worst = f64::INFINITY;
    for ea_v in [ea.lo, ea.hi] {
        for n_v in [n.lo, n.hi] {
            for tr in [t_ref.lo, t_ref.hi] {
                let lives: Vec<Option<(f64, f64)>> = match life {
                    Some((target, reference)) => {
                        vec![Some((target, reference.lo)), Some((target, reference.hi))]
                    }
                    None => vec![None],
                };
                for l in lives {
                    let params = phys::BlackParameters {
                        activation_energy: q::Energy::new::<uom::si::energy::joule>(ea_v),
                        current_exponent: q::Ratio::new::<uom::si::ratio::ratio>(n_v),
                    };
                    let life = l.map(|(a, b)| {
                        (
                            q::Time::new::<uom::si::time::second>(a),
                            q::Time::new::<uom::si::time::second>(b),
                        )
                    });
                    // No credit for running colder than the reference.
                    let hot = kelvin(t.max(tr));
                    let f = phys::black_derating(params, hot, kelvin(tr), life).value;
                    worst = worst.min(f);
                }
            }
        }
    }
    worst
}

/// The context a conductor is rated in.
pub struct RatingInputs<'a> {
    pub model: &'a Model,
    pub reg: &'a Node,
    pub options: &'a Options,
    pub worst: &'a Figure<WorstCurrent>,
    /// The hottest the die gets in a fault.
    pub fault_temperature: &'a Figure<super::FaultTemperature>,
}

/// Rates one conductor.
pub fn rate(inputs: &RatingInputs, c: &Node) -> ConductorRating {
    let mut out = ConductorRating {
        node: c.id,
        kind: ConductorKind::Unknown,
        carries: Carries::Unstated,
        current: Err(Unknown::default()),
        rating: unrated(Unknown::default(), GEOMETRY_HELP),
        basis: String::new(),
        formula: None,
        temperature: None,
        derating_factor: None,
        derating_stated: false,
        resistance: None,
    };
    let (carries, current) = carried(inputs, c);
    out.carries = carries;
    out.current = current;
    if let Some(r) = c.field("rating") {
        out.kind = ConductorKind::Stated;
        out.basis = "stated rating (low end)".into();
        out.rating = match r.quantity() {
            Some(v) => Ok(v.lo),
            None => unrated(
                need(c, "rating").err().unwrap_or_default(),
                "correct `rating`",
            ),
        };
        return out;
    }
    if c.field("layer").is_some() {
        out.kind = ConductorKind::Metal;
        metal(inputs, c, &mut out);
    } else if c.field("diameter").is_some() || c.field("wire").is_some() {
        out.kind = ConductorKind::BondWire;
        bond_wire(inputs.model, c, &mut out);
    } else if c.field("placement").is_some() {
        out.kind = ConductorKind::Trace;
        trace(c, &mut out);
    } else {
        out.rating = unrated(
            Unknown::because(
                "give `layer` and `width` (metal), `wire` or `diameter` and `material` (bond wire), `placement`, `width`, `thickness` and `temperature_rise` (trace), or `rating`",
            ),
            GEOMETRY_HELP,
        );
    }
    out
}

/// What a conductor carries and the worst current through it.
fn carried(inputs: &RatingInputs, c: &Node) -> (Carries, Figure<f64>) {
    let worst = inputs.worst.as_ref().map(|w| w.value).map_err(Clone::clone);
    let Some(target) = c.reference("carries") else {
        return match c.field("carries") {
            Some(_) => (
                Carries::Unstated,
                Err(need(c, "carries").err().unwrap_or_default()),
            ),
            None => (Carries::Unstated, worst),
        };
    };
    let node = inputs.model.node(target);
    if node.kind != BlockKind::Limit {
        return (Carries::OutputPath(target), worst);
    }
    if node.choice("scheme") != Some("replica") {
        return (
            Carries::Unstated,
            Err(Unknown::because(format!(
                "`{}` is not a replica limit, so it has no branch to carry",
                node.key()
            ))),
        );
    }
    match need(node, "ratio") {
        Ok(ratio) if ratio.lo > 0.0 => (
            Carries::Branch {
                limit: target,
                ratio_lo: ratio.lo,
            },
            worst.map(|w| w / ratio.lo),
        ),
        Ok(_) => (
            Carries::Unstated,
            Err(Unknown::because("the replica ratio is not positive")),
        ),
        Err(u) => (Carries::Unstated, Err(u)),
    }
}

fn metal(inputs: &RatingInputs, c: &Node, out: &mut ConductorRating) {
    let model = inputs.model;
    let Some(layer_id) = c.reference("layer") else {
        out.rating = unrated(need(c, "layer").err().unwrap_or_default(), GEOMETRY_HELP);
        return;
    };
    let layer = model.node(layer_id);
    let width = match need(c, "width") {
        Ok(w) => w,
        Err(u) => return out.rating = unrated(u, GEOMETRY_HELP),
    };
    let base = match (
        optional(layer, "current_density"),
        optional(layer, "thickness"),
        optional(layer, "current_per_width"),
    ) {
        (Ok(Some(j)), Ok(Some(t)), _) => {
            let (Some(j_u), Some(t_u), Some(w_u)) = (
                to_uom::<q::ElectricCurrentDensity>(j.lo, j.kind),
                to_uom::<q::Length>(t.lo, t.kind),
                to_uom::<q::Length>(width.lo, width.kind),
            ) else {
                return out.rating = unrated(
                    Unknown::because("the layer data has the wrong units"),
                    GEOMETRY_HELP,
                );
            };
            let i = phys::metal_rating(w_u, t_u, j_u, q::Ratio::new::<uom::si::ratio::ratio>(1.0))
                .value;
            out.formula = Some(format!(
                "width {} × thickness {} × current density {} (low ends) = {}",
                show::in_unit(width.lo, width.kind, width.unit.as_deref()),
                show::in_unit(t.lo, t.kind, t.unit.as_deref()),
                show::in_unit(j.lo, j.kind, j.unit.as_deref()),
                show::in_unit(i, QuantityKind::CURRENT, None)
            ));
            i
        }
        (_, _, Ok(Some(jw))) => {
            let i = jw.lo * width.lo;
            out.formula = Some(format!(
                "width {} × current per width {} (low ends) = {}",
                show::in_unit(width.lo, width.kind, width.unit.as_deref()),
                show::in_unit(jw.lo, jw.kind, jw.unit.as_deref()),
                show::in_unit(i, QuantityKind::CURRENT, None)
            ));
            i
        }
        (Err(u), _, _) | (_, Err(u), _) | (_, _, Err(u)) => {
            return out.rating = unrated(u, "correct the layer data");
        }
        _ => {
            return out.rating = unrated(
                Unknown::because(format!(
                    "layer `{}` states neither `current_density` with `thickness` nor `current_per_width`",
                    layer.key()
                )),
                "complete the layer data in the process file",
            );
        }
    };
    // The temperature it runs at: stated (or the junction limit), and no
    // less than the die reaches in a fault.
    let stated = match optional(c, "temperature") {
        Ok(Some(t)) => Some((t.hi, "stated".to_string())),
        Ok(None) => inputs
            .reg
            .quantity("junction_max")
            .map(|t| (t.hi, "the junction limit".to_string())),
        Err(u) => return out.rating = unrated(u, "correct `temperature`"),
    };
    let (temperature, why) = match (stated, inputs.fault_temperature) {
        (Some((t, why)), Ok(f)) if f.kelvin > t => (
            f.kelvin,
            format!(
                "the die in a fault: {}, above {} {why}",
                f.why,
                show_temperature(t)
            ),
        ),
        (Some(s), Ok(_)) => s,
        (None, Ok(f)) => (f.kelvin, format!("the die in a fault: {}", f.why)),
        (_, Err(u)) => {
            let mut why = Unknown::because(
                "the die temperature in a fault is not derived, and the metal sits on that die",
            );
            why = why.join(u);
            return out.rating = unrated(
                why,
                "state `supply`, `ambient` and `theta_ja` (or a `thermal_shutdown` threshold) so that the fault temperature is known",
            );
        }
    };
    out.temperature = Some((temperature, why));
    out.resistance = resistance(model, layer, c, temperature);
    let t_ref = match need(layer, "reference_temperature") {
        Ok(t) => t,
        Err(u) => {
            return out.rating = unrated(
                if u.has_error() {
                    u
                } else {
                    Unknown::because(format!(
                        "layer `{}` states no `reference_temperature`, so its limit cannot be moved to {}",
                        layer.key(),
                        show_temperature(temperature)
                    ))
                },
                "state the layer's `reference_temperature` in the process file",
            );
        }
    };
    let lifetime = c
        .quantity("lifetime")
        .map(|v| v.hi)
        .or_else(|| inputs.reg.quantity("lifetime").map(|v| v.hi))
        .or(inputs.options.lifetime);
    let life = match (lifetime, optional(layer, "reference_lifetime")) {
        (Some(l), Ok(Some(l_ref))) => Some((l, l_ref)),
        (Some(l), Ok(None)) => {
            return out.rating = unrated(
                Unknown::because(format!(
                    "the rating is meant for {} yr but layer `{}` states no `reference_lifetime`",
                    show::number(l / (365.0 * 86_400.0)),
                    layer.key()
                )),
                "state the layer's `reference_lifetime` in the process file",
            );
        }
        (_, Err(u)) => return out.rating = unrated(u, "correct the layer data"),
        (None, _) => None,
    };
    let hotter = temperature > t_ref.lo;
    let needs_black = hotter || life.is_some();
    let mut basis = format!("layer `{}` limit × width", layer.key());
    let factor = if needs_black {
        match (
            optional(layer, "activation_energy"),
            optional(layer, "current_exponent"),
        ) {
            (Ok(Some(ea)), Ok(Some(n))) if n.lo > 0.0 => {
                let f = worst_black(ea, n, temperature, t_ref, life);
                basis = format!(
                    "{basis}, derated by Black's equation to {}{} (×{})",
                    show_temperature(temperature),
                    life.map(|(l, _)| format!(" for {} yr", show::number(l / (365.0 * 86_400.0))))
                        .unwrap_or_default(),
                    show::number(f)
                );
                f
            }
            (Err(u), _) | (_, Err(u)) => return out.rating = unrated(u, "correct the layer data"),
            _ => {
                return out.rating = unrated(
                    Unknown::because(format!(
                        "layer `{}` is rated at {}{} but the conductor runs at {}{}, and `activation_energy`/`current_exponent` are missing to derate it",
                        layer.key(),
                        show_temperature(t_ref.lo),
                        if life.is_some() {
                            " and its reference lifetime"
                        } else {
                            ""
                        },
                        show_temperature(temperature),
                        if life.is_some() {
                            " for another lifetime"
                        } else {
                            ""
                        },
                    )),
                    "state the layer's Black's-equation `activation_energy` and `current_exponent`",
                );
            }
        }
    } else {
        1.0
    };
    out.derating_factor = Some(factor);
    out.basis = basis;
    out.rating = Ok(base * factor);
}

/// Resistance of a metal line at `temperature`, when its length and the
/// layer's resistivity and thickness are stated: ρ(T) = ρ_ref·(1 + α·(T − T_ref)).
fn resistance(model: &Model, layer: &Node, c: &Node, temperature: f64) -> Option<f64> {
    let _ = model;
    let rho = layer.quantity("resistivity")?;
    let thickness = layer.quantity("thickness")?;
    let length = c.quantity("length")?;
    let width = c.quantity("width")?;
    let meter = q::Length::new::<uom::si::length::meter>;
    let mut rho_t =
        q::ElectricalResistivity::new::<uom::si::electrical_resistivity::ohm_meter>(rho.hi);
    if let Some(alpha) = layer.quantity("temperature_coefficient") {
        let t_ref = layer
            .quantity("resistivity_temperature")
            .map(|t| t.lo)
            .unwrap_or(RESISTIVITY_REFERENCE_K);
        let a = q::TemperatureCoefficient::new::<uom::si::temperature_coefficient::per_kelvin>(
            alpha.hi,
        );
        rho_t = phys::resistivity_at(rho_t, a, kelvin(temperature), kelvin(t_ref));
    }
    Some(
        phys::line_resistance(
            rho_t,
            meter(length.hi),
            meter(width.lo),
            meter(thickness.lo),
        )
        .value,
    )
}

fn bond_wire(model: &Model, c: &Node, out: &mut ConductorRating) {
    let wire = c.reference("wire").map(|w| model.node(w));
    if c.field("wire").is_some() && wire.is_none() {
        out.rating = unrated(need(c, "wire").err().unwrap_or_default(), "correct `wire`");
        return;
    }
    // The conductor's own fields win over the wire type's.
    let field = |key: &str| -> Result<Option<&Value>, Unknown> {
        match optional(c, key)? {
            Some(v) => Ok(Some(v)),
            None => match wire {
                Some(w) => optional(w, key),
                None => Ok(None),
            },
        }
    };
    let choice = |key: &str| c.choice(key).or_else(|| wire.and_then(|w| w.choice(key)));
    let diameter = match field("diameter") {
        Ok(Some(d)) => d,
        Ok(None) => {
            return out.rating = unrated(
                Unknown::because("the bond wire states no `diameter`"),
                GEOMETRY_HELP,
            );
        }
        Err(u) => return out.rating = unrated(u, "correct `diameter`"),
    };
    let Some(material) = choice("material") else {
        return out.rating = unrated(
            Unknown::because("the bond wire states no `material`"),
            "state `material = copper`, `aluminium` or `gold`",
        );
    };
    let Some(a) = phys::preece_constant(material) else {
        return out.rating = unrated(
            Unknown::because(format!(
                "Preece's formula has no constant for {material}, so the wire's geometry gives no rating"
            )),
            "state `rating` from the wire maker's fusing or current data",
        );
    };
    let Some(dia) = to_uom::<q::Length>(diameter.lo, diameter.kind) else {
        return out.rating = unrated(
            Unknown::because("the diameter has the wrong unit"),
            GEOMETRY_HELP,
        );
    };
    let fuse = phys::preece_fusing_current(a, dia).value;
    match field("derating") {
        Ok(Some(d)) => {
            out.derating_stated = true;
            out.basis = format!(
                "Preece fusing current of {} {material} wire × derating {}",
                show::in_unit(diameter.lo, diameter.kind, diameter.unit.as_deref()),
                show::number(d.lo)
            );
            out.rating = Ok(fuse * d.lo);
        }
        Ok(None) => {
            out.basis = format!(
                "Preece fusing current of {} {material} wire, no derating stated",
                show::in_unit(diameter.lo, diameter.kind, diameter.unit.as_deref()),
            );
            out.rating = Ok(fuse);
        }
        Err(u) => out.rating = unrated(u, "correct `derating`"),
    }
}

fn trace(c: &Node, out: &mut ConductorRating) {
    let ((w, t), rise) = match super::unknown::both(
        super::unknown::both(need(c, "width"), need(c, "thickness")),
        need(c, "temperature_rise"),
    ) {
        Ok(x) => x,
        Err(u) => return out.rating = unrated(u, GEOMETRY_HELP),
    };
    let placement = c.choice("placement").unwrap_or("external");
    let area: q::Area = q::Length::new::<uom::si::length::meter>(w.lo)
        * q::Length::new::<uom::si::length::meter>(t.lo);
    let i = phys::ipc2221_current(
        placement == "external",
        q::TemperatureInterval::new::<uom::si::temperature_interval::kelvin>(rise.lo),
        area,
    );
    out.basis = format!(
        "IPC-2221 {placement} trace for a {} K rise",
        show::number(rise.lo)
    );
    out.rating = Ok(i.value);
}
