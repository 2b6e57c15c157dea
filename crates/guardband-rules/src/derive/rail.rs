//! A shared input rail: the `supply` item several regulators draw from
//! (`supply = NAME` in each). When they start together the rail carries the
//! sum of their startup surges, and droops by the source's resistance and
//! the wiring's inductance: `ΔV = I·R + L·I/t_rise` (Ohm's law and
//! `V = L·di/dt` with the current rising no faster than `rise_time`), each
//! term at its unfavourable end (the largest surge, `R` and `L`, the
//! shortest rise), from the source's lowest voltage.

use super::Derived;
use super::unknown::{Figure, Unknown, both, need};
use guardband_model::{BlockKind, Model, NodeId};
use std::collections::HashMap;

/// The droop of one shared rail.
#[derive(Debug, Clone, PartialEq)]
pub struct Droop {
    /// The sum of the regulators' startup surges, A.
    pub current: f64,
    /// `I·R,max`, V.
    pub resistive: f64,
    /// `L,max·I / t_rise,min`, V.
    pub inductive: f64,
    /// The source's lowest voltage, V.
    pub source_lo: f64,
    /// The lowest the rail falls to, V.
    pub lowest: f64,
    pub resistance: f64,
    pub inductance: f64,
    /// `None` when the inductance is zero and no rise time is needed.
    pub rise_time: Option<f64>,
}

/// A `supply` item, the regulators that draw from it and its droop.
#[derive(Debug, Clone)]
pub struct Rail {
    pub supply: NodeId,
    /// Each regulator drawing from it, with its startup surge.
    pub drawers: Vec<(NodeId, Figure<f64>)>,
    pub droop: Figure<Droop>,
}

/// Every `supply` item of the model with its figures, in one pass over the
/// derivations (the regulators grouped by the supply they name).
pub fn rails(model: &Model, derived: &[Derived]) -> Vec<Rail> {
    let mut by_supply: HashMap<NodeId, Vec<(NodeId, Figure<f64>)>> = HashMap::new();
    for d in derived {
        let Some(supply) = model.node(d.regulator).reference("supply") else {
            continue;
        };
        let surge = d.startup.as_ref().map(|st| st.surge).map_err(|u| {
            Unknown::because(format!(
                "the startup surge of `{}` is not derived",
                model.node(d.regulator).key()
            ))
            .join(u)
        });
        by_supply
            .entry(supply)
            .or_default()
            .push((d.regulator, surge));
    }
    model
        .items_of(BlockKind::Supply)
        .map(|s| {
            let drawers = by_supply.remove(&s.id).unwrap_or_default();
            let droop = droop(model.node(s.id), &drawers);
            Rail {
                supply: s.id,
                drawers,
                droop,
            }
        })
        .collect()
}

fn droop(s: &guardband_model::Node, drawers: &[(NodeId, Figure<f64>)]) -> Figure<Droop> {
    let mut current = 0.0;
    let mut unknown = Unknown::default();
    for (_, surge) in drawers {
        match surge {
            Ok(i) => current += i,
            Err(u) => unknown = unknown.join(u),
        }
    }
    if !unknown.needs.is_empty() {
        return Err(unknown);
    }
    let ((voltage, resistance), inductance) = both(
        both(need(s, "voltage"), need(s, "resistance")),
        need(s, "inductance"),
    )?;
    let (inductive, rise_time) = if inductance.hi > 0.0 && current > 0.0 {
        let rise = need(s, "rise_time")?;
        if rise.lo <= 0.0 {
            return Err(Unknown::because(format!(
                "`{}.rise_time` reaches 0 s, so L·di/dt is not bounded",
                s.key()
            )));
        }
        (inductance.hi * current / rise.lo, Some(rise.lo))
    } else {
        (0.0, None)
    };
    let resistive = current * resistance.hi;
    Ok(Droop {
        current,
        resistive,
        inductive,
        source_lo: voltage.lo,
        lowest: voltage.lo - resistive - inductive,
        resistance: resistance.hi,
        inductance: inductance.hi,
        rise_time,
    })
}
