//! The power-tree chart: every shared supply on one voltage axis, so a
//! reviewer sees how far each rail droops when its regulators start
//! together, and whether that crosses the rail's undervoltage lockout or
//! the lowest input a regulator on it regulates from. The same palette and
//! habits as the current chart: each bar carries its label and value as
//! text, and a failing bar is marked with a cross, words and a dashed
//! outline, so nothing depends on colour alone.

use crate::chart::{WIDTH, colour, frame, grid, text, tick_step};
use crate::figures::BarKind;
use guardband_model::Model;
use guardband_rules::compare;
use guardband_rules::derive::rail::Rail;
use guardband_rules::show::in_unit;
use guardband_units::QuantityKind;
use svg::Document;
use svg::node::element::{Rectangle, Title};

const LABEL_WIDTH: f64 = 280.0;
const VALUE_WIDTH: f64 = 260.0;
const ROW: f64 = 28.0;
const TOP: f64 = 50.0;
const BOTTOM: f64 = 64.0;

/// The file the chart is written to (identifiers have no `-`, so no
/// regulator's chart can take this name).
pub const FILE: &str = "power-tree.svg";

/// One row: a heading (no bar), a voltage range, or words in place of a bar.
enum Row {
    Heading(String),
    Bar {
        label: String,
        kind: BarKind,
        role: &'static str,
        lo: f64,
        hi: f64,
        text: String,
        fails: Option<&'static str>,
    },
    Words(String, String),
}

fn volts(v: f64) -> String {
    in_unit(v, QuantityKind::VOLTAGE, Some("V"))
}

fn range(lo: f64, hi: f64) -> String {
    if lo == hi {
        volts(lo)
    } else {
        format!("{} .. {}", volts(lo), volts(hi))
    }
}

fn rows(model: &Model, rails: &[Rail]) -> Vec<Row> {
    let mut rows = Vec::new();
    for rail in rails {
        let supply = model.node(rail.supply);
        rows.push(Row::Heading(format!("supply {}", supply.key())));
        if let Some(v) = supply.quantity("voltage") {
            rows.push(Row::Bar {
                label: "source voltage".into(),
                kind: BarKind::RatedLoad,
                role: "source-voltage",
                lo: v.lo,
                hi: v.hi,
                text: range(v.lo, v.hi),
                fails: None,
            });
        }
        let lockout = supply.quantity("lockout");
        match &rail.droop {
            Ok(d) => {
                let below_lockout = lockout.is_some_and(|l| compare::at_most(d.lowest, l.hi));
                let below_min = rail.drawers.iter().any(|(r, _)| {
                    model
                        .node(*r)
                        .quantity("supply_min")
                        .is_some_and(|m| compare::below(d.lowest, m.hi))
                });
                rows.push(Row::Bar {
                    label: "all starting together".into(),
                    kind: BarKind::WorstCase,
                    role: "droop",
                    lo: d.lowest,
                    hi: d.source_lo,
                    text: format!("droops to {}", volts(d.lowest)),
                    fails: if below_lockout {
                        Some("reaches the lockout")
                    } else if below_min {
                        Some("below a regulator's supply_min")
                    } else {
                        None
                    },
                });
            }
            Err(u) if !rail.drawers.is_empty() => rows.push(Row::Words(
                "all starting together".into(),
                format!("not derived: {}", u.describe(model)),
            )),
            Err(_) => {}
        }
        if let Some(l) = lockout {
            rows.push(Row::Bar {
                label: "undervoltage lockout".into(),
                kind: BarKind::Trip,
                role: "lockout",
                lo: l.lo,
                hi: l.hi,
                text: range(l.lo, l.hi),
                fails: None,
            });
        }
        let lowest = rail.droop.as_ref().ok().map(|d| d.lowest);
        for (r, _) in &rail.drawers {
            let reg = model.node(*r);
            if let Some(m) = reg.quantity("supply_min") {
                let drops_out = lowest.is_some_and(|low| compare::below(low, m.hi));
                rows.push(Row::Bar {
                    label: format!("{} regulates from", reg.key()),
                    kind: BarKind::Rating,
                    role: "supply-min",
                    lo: m.lo,
                    hi: m.hi,
                    text: range(m.lo, m.hi),
                    fails: drops_out.then_some("the droop falls below it"),
                });
            }
        }
    }
    rows
}

/// The chart of every shared supply, or `None` when the workspace has none.
pub fn chart(model: &Model, rails: &[Rail]) -> Option<Document> {
    if rails.is_empty() {
        return None;
    }
    let rows = rows(model, rails);
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for r in &rows {
        if let Row::Bar { lo: a, hi: b, .. } = r {
            lo = lo.min(*a);
            hi = hi.max(*b);
        }
    }
    if !lo.is_finite() || !hi.is_finite() {
        (lo, hi) = (0.0, 1.0);
    }
    let step = tick_step(((hi - lo) * 1.1).max(1e-3), 6.0);
    let axis_lo = ((lo - (hi - lo) * 0.05) / step).floor() * step;
    let axis_hi = ((hi + (hi - lo) * 0.05) / step).ceil() * step;
    let axis_hi = if axis_hi > axis_lo {
        axis_hi
    } else {
        axis_lo + step
    };
    let plot_left = LABEL_WIDTH;
    let plot_width = WIDTH - LABEL_WIDTH - VALUE_WIDTH;
    let x_of = |v: f64| plot_left + ((v - axis_lo) / (axis_hi - axis_lo)) * plot_width;
    let height = TOP + rows.len() as f64 * ROW + BOTTOM;
    let mut doc = frame(
        height,
        "Shared supplies and their droop",
        "Power tree: each shared supply, starting everything together",
        None,
    );
    let axis_y = TOP + rows.len() as f64 * ROW + 6.0;
    doc = grid(doc, axis_lo, axis_hi, step, TOP - 6.0, axis_y, &x_of);
    doc = doc.add(
        text(plot_left + plot_width / 2.0, axis_y + 42.0, "voltage (V)")
            .set("text-anchor", "middle")
            .set("data-role", "axis-label"),
    );
    for (i, row) in rows.iter().enumerate() {
        let y = TOP + i as f64 * ROW;
        let mid = y + ROW / 2.0 + 4.0;
        match row {
            Row::Heading(h) => {
                doc = doc.add(text(12.0, mid, h).set("font-weight", "bold"));
            }
            Row::Words(label, words) => {
                doc = doc
                    .add(text(24.0, mid, label))
                    .add(text(plot_left, mid, words).set("data-role", "not-derived"));
            }
            Row::Bar {
                label,
                kind,
                role,
                lo,
                hi,
                text: shown,
                fails,
            } => {
                let (x0, x1) = (x_of(lo.min(*hi)), x_of(hi.max(*lo)));
                let shown = match fails {
                    Some(why) => format!("✗ {shown} ({why})"),
                    None => shown.clone(),
                };
                let mut rect = Rectangle::new()
                    .set("x", x0)
                    .set("y", y + 5.0)
                    .set("width", (x1 - x0).max(1.5))
                    .set("height", ROW - 10.0)
                    .set("fill", colour(*kind))
                    .set("stroke", "#1a1a1a")
                    .set("stroke-width", if fails.is_some() { 2.0 } else { 0.5 })
                    .set("data-role", *role)
                    .set("data-lo-volts", *lo)
                    .set("data-hi-volts", *hi)
                    .add(Title::new(format!("{label}: {shown}")));
                if let Some(why) = fails {
                    rect = rect.set("stroke-dasharray", "4 2").set("data-fails", *why);
                }
                doc = doc.add(text(24.0, mid, label)).add(rect).add(text(
                    WIDTH - VALUE_WIDTH + 18.0,
                    mid,
                    &shown,
                ));
            }
        }
    }
    Some(doc)
}
