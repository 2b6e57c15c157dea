//! Startup: the surge the supply sees while the output capacitance charges,
//! and the time to reach regulation, over every corner.
//!
//! The output rises at `dV/dt = min(slew, (I(V) − load) / C)`: the charging
//! current is what the protections let through at each output voltage (its
//! lower bound for the slowest start), less the load during startup, and a
//! soft start (`slew`) caps the rate. So the worst time is
//! `∫ max(1/slew, C / (I(V) − load)) dV` up to the highest output, and the
//! surge is the smaller of the most the protections let through and
//! `C·slew + load` (textbook relations I = C·dV/dt, t = C·V/I).

use super::current::Currents;
use super::envelope;
use super::load::{self, Load, LoadKind, Shortfall};
use super::unknown::{Figure, Unknown, need, optional};
use guardband_model::{BlockKind, Model, Node, NodeId};

/// Startup figures.
#[derive(Debug, Clone)]
pub struct Startup {
    /// Largest capacitance charged, F.
    pub capacitance: f64,
    /// Highest output voltage reached, V.
    pub voltage: f64,
    /// Largest load current anywhere on the ramp, A (infinite for a
    /// constant power without a cutoff).
    pub load: f64,
    /// The load during startup.
    pub load_line: Load,
    /// Where the output stalls, when it does: what is delivered and drawn there.
    pub stall: Option<Shortfall>,
    /// Peak current drawn from the supply while starting, A.
    pub surge: f64,
    pub surge_reason: String,
    /// The node and field the surge comes from, for labels.
    pub surge_from: (NodeId, &'static str),
    /// Whether only the full-gate current bounds the surge (no limit and no soft start).
    pub unlimited: bool,
    /// Smallest charging current over the ramp, A.
    pub charge_min: f64,
    /// Whether the charging current is the same at every output voltage
    /// (then the time is the plain C·V/(I − load)).
    pub charge_flat: bool,
    /// Worst-case (longest) startup time, s; `Err(v)` when the output stalls
    /// at output voltage `v` because the charging current does not exceed the load.
    pub time: Result<f64, f64>,
    /// Best-case (shortest) startup time, s, when derivable.
    pub time_lo: Option<f64>,
}

/// The pins whose capacitance the regulator charges: output pins, and
/// off-chip pins whose role is not stated.
pub fn charged_pins<'m>(model: &'m Model, reg: &'m Node) -> impl Iterator<Item = &'m Node> + 'm {
    model
        .children(reg, BlockKind::Pin)
        .filter(|p| match p.choice("role") {
            Some(role) => role == "output",
            None => p.flag("off_chip") == Some(true),
        })
}

/// Derives the startup figures of `reg`.
/// `load` is the regulator's load, used when the `startup` block states none.
pub fn startup(
    model: &Model,
    reg: &Node,
    currents: &Figure<Currents>,
    load: &Figure<Load>,
) -> Figure<Startup> {
    let c = currents.as_ref().map_err(Clone::clone)?;
    let mut cap = (0.0, 0.0);
    let mut stated = false;
    for pin in charged_pins(model, reg) {
        if let Some(v) = optional(pin, "capacitance")? {
            cap.0 += v.lo;
            cap.1 += v.hi;
            stated = true;
        }
    }
    if !stated {
        return Err(Unknown::because(
            "no output pin states a `capacitance` to charge",
        ));
    }
    let output = need(reg, "output")?;
    let start = model.child(reg, BlockKind::Startup);
    let load = match start.map(|s| Load::read(s, "load")).transpose()?.flatten() {
        Some(l) => l,
        None => load.clone()?,
    };
    let slew = match start {
        Some(s) => optional(s, "slew")?,
        None => None,
    };
    let lower = c.lower.as_ref().map_err(Clone::clone)?;
    let (peak, _, by) =
        envelope::highest(&c.upper).ok_or_else(|| Unknown::because("no current is bounded"))?;
    let cause = c.cause(by);
    // The heaviest the load draws anywhere on the ramp (unbounded for a
    // constant power without a cutoff, which then cannot start at all).
    let heaviest = load.heaviest_over(0.0, output.hi).unwrap_or(f64::INFINITY);
    let (surge, surge_reason, surge_from, unlimited) = match slew {
        Some(s) if cap.1 * s.hi + heaviest < peak => (
            cap.1 * s.hi + heaviest,
            "the soft-start ramp C·dV/dt plus the startup load".to_string(),
            (start.map(|s| s.id).unwrap_or(reg.id), "slew"),
            false,
        ),
        _ => (
            peak,
            cause.what.clone(),
            (cause.node, cause.key),
            slew.is_none() && model.node(cause.node).kind == BlockKind::Pass,
        ),
    };
    let charge_min = envelope::least(lower).unwrap_or(0.0);
    let charge_flat = lower
        .iter()
        .all(|p| p.line.b == 0.0 && p.line.a == lower[0].line.a)
        && load.kind == LoadKind::Current;
    let time = load::charge_time(lower, cap.1, &load, true, output.hi, slew.map(|s| s.lo));
    let stall = time
        .err()
        .and_then(|_| load::first_shortfall(lower, &load, output.hi));
    // The exact crossing, where the net current first stops being positive
    // (the integral only tells which piece it lies on).
    let time = match (time, stall) {
        (Err(_), Some(sh)) => Err(sh.at_voltage),
        (t, _) => t,
    };
    let time_lo =
        load::charge_time(&c.upper, cap.0, &load, false, output.lo, slew.map(|s| s.hi)).ok();
    Ok(Startup {
        capacitance: cap.1,
        voltage: output.hi,
        load: heaviest,
        load_line: load,
        stall,
        surge,
        surge_reason,
        surge_from,
        unlimited,
        charge_min,
        charge_flat,
        time,
        time_lo,
    })
}
