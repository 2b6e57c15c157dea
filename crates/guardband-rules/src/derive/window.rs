//! The window of each current limit: where its trip current can lie over
//! every corner the spec admits, worst case and statistically.

use super::statistics::{StatSettings, Statistical, statistical};
use super::unknown::{Figure, Need, Unknown, need, optional};
use guardband_model::{BlockKind, Model, Node, NodeId, Value};
use guardband_units::QuantityKind;

/// The two limit schemes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Scheme {
    Replica,
    UndervoltageFixed,
}

/// The window of one limit.
#[derive(Debug, Clone)]
pub struct LimitWindow {
    pub node: NodeId,
    pub scheme: Scheme,
    /// Replica: the threshold with mismatch and drain error applied.
    /// Undervoltage: the fixed current.
    pub window: Figure<Value>,
    /// The statistical window, when the worst-case one is known.
    pub stat: Option<Statistical>,
    /// Undervoltage scheme: the characterised trip current, when stated.
    pub trip: Figure<Option<Value>>,
    /// Undervoltage scheme: the output voltage below which the fixed current is used.
    pub threshold_voltage: Figure<Option<Value>>,
}

/// A limit whose scheme could not be read: nothing derived from it.
#[derive(Debug, Clone)]
pub struct UnreadLimit {
    pub node: NodeId,
    pub why: Unknown,
}

fn one_plus(v: &Value) -> Option<Value> {
    Value::exact(QuantityKind::NONE, 1.0).add(v).ok()
}

/// The threshold of a replica limit with mismatch and drain error applied
/// (unless the threshold expression already depends on them).
fn replica_window(limit: &Node) -> Figure<Value> {
    let mut window = match limit.field("threshold") {
        Some(_) => need(limit, "threshold")?.clone(),
        None => {
            let (ratio, reference) = super::unknown::both(
                need(limit, "ratio").cloned(),
                need(limit, "reference").cloned(),
            )
            .map_err(|mut u| {
                u.needs.insert(
                    0,
                    Need::Other(format!(
                        "`{}` states no `threshold`, so it needs `ratio` and `reference`",
                        limit.key()
                    )),
                );
                u
            })?;
            ratio
                .mul(&reference)
                .map_err(|e| Unknown::because(e.to_string()))?
        }
    };
    for key in ["mismatch", "drain_error"] {
        let Some(extra) = optional(limit, key)? else {
            continue;
        };
        let already = extra
            .terms
            .iter()
            .all(|t| window.terms.iter().any(|w| w.source == t.source));
        if !already {
            let unit = window.unit.clone();
            window = one_plus(extra)
                .and_then(|k| window.mul(&k).ok())
                .ok_or_else(|| Unknown::because(format!("`{key}` cannot be applied")))?;
            window.unit = unit;
        }
    }
    window.tighten();
    Ok(window)
}

/// The windows of every limit of a regulator, and the limits whose scheme
/// could not be read.
pub fn limit_windows(
    model: &Model,
    reg: &Node,
    settings: &StatSettings,
) -> (Vec<LimitWindow>, Vec<UnreadLimit>) {
    let mut out = Vec::new();
    let mut unread = Vec::new();
    for limit in model.children(reg, BlockKind::Limit) {
        let scheme = match limit.choice("scheme") {
            Some("replica") => Scheme::Replica,
            Some("undervoltage_fixed") => Scheme::UndervoltageFixed,
            _ => {
                let why = if limit.field("scheme").is_some() {
                    Need::Erroneous {
                        node: limit.id,
                        key: "scheme".into(),
                    }
                } else {
                    Need::Missing {
                        node: limit.id,
                        key: "scheme".into(),
                    }
                };
                unread.push(UnreadLimit {
                    node: limit.id,
                    why: Unknown { needs: vec![why] },
                });
                continue;
            }
        };
        let (window, trip, threshold_voltage) = match scheme {
            Scheme::Replica => (replica_window(limit), Ok(None), Ok(None)),
            Scheme::UndervoltageFixed => (
                need(limit, "fixed_current").cloned(),
                optional(limit, "trip_current").map(|v| v.cloned()),
                optional(limit, "threshold_voltage").map(|v| v.cloned()),
            ),
        };
        let stat = window
            .as_ref()
            .ok()
            .map(|w| statistical(model, w, settings));
        out.push(LimitWindow {
            node: limit.id,
            scheme,
            window,
            stat,
            trip,
            threshold_voltage,
        });
    }
    (out, unread)
}
