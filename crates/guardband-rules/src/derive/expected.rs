//! Which derived figure a fault case's expectation is held against: its
//! bounds over every corner, why it is unknown, or that the checker derives
//! no such figure for that event. `expectation-violated` compares the
//! bounds; `expectation-unchecked` names every expectation that could not
//! be compared, so an unverified pass criterion never reads as a pass.

use super::{Derived, Unknown, envelope};
use guardband_model::{BlockKind, Field, Model, Node, Value};

/// One expectation of a fault case, as written and read.
pub struct Expectation<'m> {
    pub fault: &'m Node,
    pub event: &'m str,
    pub field: &'m Field,
    /// The bound as read (expectations written with an error are left out).
    pub bound: &'m Value,
    /// The quantity it bounds: `current`, `junction`, `time` or `output`.
    pub name: &'m str,
}

/// Every readable expectation of the fault cases of `d`'s regulator.
pub fn expectations<'m>(model: &'m Model, d: &Derived) -> Vec<Expectation<'m>> {
    let reg = model.node(d.regulator);
    let mut out = Vec::new();
    for fault in model.children(reg, BlockKind::Fault) {
        let Some(event) = fault.choice("event") else {
            continue;
        };
        for field in fault.fields_named("expect") {
            let Some(bound) = field.quantity() else {
                continue;
            };
            out.push(Expectation {
                fault,
                event,
                field,
                bound,
                name: field.name.as_deref().unwrap_or(""),
            });
        }
    }
    out
}

/// A derived figure's bounds over every corner (either may be unknown) and why.
#[derive(Debug, Clone)]
pub struct Bounds {
    pub lo: Option<f64>,
    pub hi: Option<f64>,
    pub why: String,
}

/// The figure an expectation is compared with.
#[derive(Debug, Clone)]
pub enum Expected {
    Bounds(Bounds),
    /// The figure exists for this event, but an input is missing or wrong.
    Unknown(Unknown),
    /// The checker derives no such figure for this event.
    NotDerived,
}

fn known<T>(figure: &Result<T, Unknown>) -> Result<&T, Expected> {
    figure.as_ref().map_err(|u| Expected::Unknown(u.clone()))
}

fn bounded(lo: Option<f64>, hi: Option<f64>, why: impl Into<String>) -> Expected {
    Expected::Bounds(Bounds {
        lo,
        hi,
        why: why.into(),
    })
}

/// The figure that expectation `name` (`current`, `junction`, `time`,
/// `output`) of a fault case with `event` is compared with.
pub fn expected(d: &Derived, fault: &Node, event: &str, name: &str) -> Expected {
    lookup(d, fault, event, name).unwrap_or_else(|e| e)
}

fn lookup(d: &Derived, fault: &Node, event: &str, name: &str) -> Result<Expected, Expected> {
    let unbounded = || Expected::Unknown(Unknown::because("the current is not bounded"));
    Ok(match (event, name) {
        ("short_to_ground", "current") => {
            let c = known(&d.currents)?;
            let (hi, cause) = c.upper_at(0.0).ok_or_else(unbounded)?;
            bounded(
                c.lower_at(0.0),
                Some(hi),
                format!("{} with the output at 0 V", cause.what),
            )
        }
        ("overload", "current") => {
            let w = known(&d.worst)?;
            let lo = known(&d.currents)?
                .lower
                .as_ref()
                .ok()
                .and_then(|l| envelope::least(l));
            bounded(lo, Some(w.value), w.cause.what.clone())
        }
        ("startup", "current") => {
            let s = known(&d.startup)?;
            bounded(None, Some(s.surge), s.surge_reason.clone())
        }
        ("short_to_ground", "junction") => {
            let h = known(&d.short)?;
            bounded(
                h.junction_lo,
                Some(h.junction),
                "junction in a sustained short, T_A + P·θJA",
            )
        }
        ("overload", "junction") => {
            let h = known(&d.overload)?;
            bounded(
                None,
                Some(h.junction),
                "junction at the worst point of an overload, T_A + P·θJA",
            )
        }
        ("startup", "time") => {
            let s = known(&d.startup)?;
            bounded(
                s.time_lo,
                Some(s.time.unwrap_or(f64::INFINITY)),
                "startup time",
            )
        }
        ("short_to_supply" | "reverse_current", "current") => {
            let s = reverse_case(d, fault)?;
            let r = known(&s.reverse)?;
            let why = match &s.forward {
                Some((f, cause)) if *f >= r.hi => {
                    format!("sourced into the forcing supply: {cause}")
                }
                _ => format!("reverse current, {}", r.why),
            };
            // Only a forcing voltage wholly above regulation has a known
            // least current (the diode's); below it the load shares it.
            let lo = if s.forward.is_none() { r.lo } else { None };
            // What the pin draws by itself (its divider) flows too, on top.
            match s.pin_bias {
                Some(bias) => bounded(
                    lo,
                    s.current_hi().map(|hi| hi + bias),
                    format!(
                        "{why}, plus the pin's `bias_current` {}",
                        crate::show::in_unit(
                            bias,
                            guardband_units::QuantityKind::CURRENT,
                            Some("uA")
                        )
                    ),
                ),
                None => bounded(lo, s.current_hi(), why),
            }
        }
        ("short_to_supply" | "reverse_current", "junction") => {
            let s = reverse_case(d, fault)?;
            match known(&s.heat)? {
                Some(h) => bounded(
                    None,
                    Some(h.junction),
                    format!("junction with {}, T_A + P·θJA", h.reason),
                ),
                None => bounded(
                    None,
                    None,
                    "no current flows through the pass device at any corner",
                ),
            }
        }
        _ => Expected::NotDerived,
    })
}

fn reverse_case<'d>(d: &'d Derived, fault: &Node) -> Result<&'d super::ReverseCase, Expected> {
    let (_, s) = d
        .reverse_cases
        .iter()
        .find(|(id, _)| *id == fault.id)
        .ok_or(Expected::NotDerived)?;
    known(s)
}
