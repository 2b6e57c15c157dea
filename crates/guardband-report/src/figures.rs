//! The derived values of one regulator as labelled, formatted rows: the one
//! list both the report's table and its chart are drawn from. Numbers are
//! formatted by `guardband_rules::format`, as the editor's hovers are, so a
//! reviewer sees the same figures in both places.

use guardband_model::{BlockKind, Model, Node};
use guardband_rules::Derived;
use guardband_rules::derive::escape_ppm;
use guardband_rules::format::{bounds, in_unit, number, percent};
use guardband_units::{Dimension, QuantityKind};

/// One row of the derived-values table.
#[derive(Debug, Clone, PartialEq)]
pub struct Row {
    pub quantity: String,
    pub value: String,
}

/// What a bar of the current chart stands for (also its colour and legend).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum BarKind {
    RatedLoad,
    Margin,
    WorstCase,
    Statistical,
    Surge,
    Rating,
}

impl BarKind {
    /// A stable name, written into the SVG as `data-role`.
    pub fn role(self) -> &'static str {
        match self {
            BarKind::RatedLoad => "rated-load",
            BarKind::Margin => "margin",
            BarKind::WorstCase => "limit-worst-case",
            BarKind::Statistical => "limit-statistical",
            BarKind::Surge => "unlimited-surge",
            BarKind::Rating => "conductor-rating",
        }
    }
}

/// One bar: a current range in amperes, with its label.
#[derive(Debug, Clone, PartialEq)]
pub struct Bar {
    pub kind: BarKind,
    pub label: String,
    pub lo: f64,
    pub hi: f64,
    /// The range as the table shows it.
    pub text: String,
}

/// Everything the report shows for one regulator.
#[derive(Debug, Clone)]
pub struct Figures {
    pub name: String,
    pub rows: Vec<Row>,
    pub bars: Vec<Bar>,
    /// The worst current that can flow, in A, drawn as a line.
    pub worst: Option<(f64, String)>,
    /// The unit the chart's axis is labelled in.
    pub unit: String,
}

fn current(x: f64, unit: Option<&str>) -> String {
    in_unit(x, QuantityKind::CURRENT, unit)
}

/// Collects the rows and bars of one regulator.
pub fn figures(model: &Model, reg: &Node, derived: &Derived, sigma: f64) -> Figures {
    let unit = derived.load_unit.as_deref();
    let mut rows = Vec::new();
    let mut bars = Vec::new();
    let row = |q: String, v: String| Row {
        quantity: q,
        value: v,
    };
    if let Some(load) = derived.rated_load {
        rows.push(row("rated load".into(), current(load, unit)));
        bars.push(Bar {
            kind: BarKind::RatedLoad,
            label: "rated load".into(),
            lo: 0.0,
            hi: load,
            text: current(load, unit),
        });
        if let Some(req) = derived.required() {
            let label = format!("rated load + {} margin", percent(derived.margin));
            rows.push(row(label.clone(), current(req, unit)));
            bars.push(Bar {
                kind: BarKind::Margin,
                label,
                lo: load,
                hi: req,
                text: current(req, unit),
            });
        }
    }
    for lw in &derived.limits {
        let name = model.node(lw.node).key().to_string();
        let wc = bounds(&lw.window);
        rows.push(row(format!("limit `{name}`, worst case"), wc.clone()));
        bars.push(Bar {
            kind: BarKind::WorstCase,
            label: format!("limit {name}, worst case"),
            lo: lw.window.lo,
            hi: lw.window.hi,
            text: wc,
        });
        let st = format!(
            "{} .. {}",
            current(lw.stat.lo, unit),
            current(lw.stat.hi, unit)
        );
        rows.push(row(
            format!("limit `{name}`, statistical ({} σ)", number(sigma)),
            st.clone(),
        ));
        bars.push(Bar {
            kind: BarKind::Statistical,
            label: format!("limit {name}, statistical"),
            lo: lw.stat.lo,
            hi: lw.stat.hi,
            text: st,
        });
        if let Some(req) = derived.required() {
            rows.push(row(
                format!("limit `{name}`: parts tripping below rated load + margin"),
                format!("{} ppm", number(escape_ppm(&lw.stat, req))),
            ));
        }
        if let Some(t) = &lw.trip {
            rows.push(row(
                format!("limit `{name}`, characterised trip"),
                bounds(t),
            ));
        }
    }
    if let Some(full) = model
        .child(reg, BlockKind::Pass)
        .and_then(|p| p.quantity("full_gate_current"))
    {
        let text = current(full.hi, full.unit.as_deref().or(unit));
        rows.push(row(
            "unlimited surge (full gate, strong corner)".into(),
            text.clone(),
        ));
        bars.push(Bar {
            kind: BarKind::Surge,
            label: "unlimited surge".into(),
            lo: 0.0,
            hi: full.hi,
            text,
        });
    }
    let worst = derived.worst.as_ref().map(|w| (w.value, w.reason.clone()));
    if let Some(w) = &derived.worst {
        rows.push(row(
            "worst current through the output path".into(),
            format!("{} ({})", current(w.value, unit), w.reason),
        ));
    }
    for c in &derived.conductors {
        let name = model.node(c.node).key().to_string();
        match &c.rating {
            Ok(r) => {
                let margin = derived
                    .worst
                    .as_ref()
                    .filter(|w| w.value > 0.0)
                    .map(|w| format!(", margin {}", percent(r / w.value - 1.0)))
                    .unwrap_or_default();
                rows.push(row(
                    format!("conductor `{name}` rating"),
                    format!("{}{margin} ({})", current(*r, unit), c.basis),
                ));
                bars.push(Bar {
                    kind: BarKind::Rating,
                    label: format!("conductor {name}"),
                    lo: 0.0,
                    hi: *r,
                    text: current(*r, unit),
                });
            }
            Err(why) => rows.push(row(
                format!("conductor `{name}` rating"),
                format!("not rated: {why}"),
            )),
        }
    }
    if let Some(s) = &derived.short {
        rows.push(row(
            "sustained short: current".into(),
            format!("{} ({})", current(s.current, unit), s.reason),
        ));
        rows.push(row(
            "sustained short: dissipation".into(),
            in_unit(s.power, QuantityKind::of(Dimension::POWER), None),
        ));
        rows.push(row(
            "sustained short: junction (T_A + P·θJA)".into(),
            in_unit(s.junction, QuantityKind::ABSOLUTE_TEMPERATURE, Some("°C")),
        ));
    }
    if let Some(s) = &derived.startup {
        rows.push(row(
            "startup surge".into(),
            format!("{} ({})", current(s.surge, unit), s.surge_reason),
        ));
        rows.push(row(
            "startup time, worst case".into(),
            match (s.time, s.charge_min) {
                (Some(t), _) => in_unit(t, QuantityKind::of(Dimension::TIME), Some("us")),
                (None, Some(_)) => {
                    "never starts (charging current does not exceed the load)".into()
                }
                (None, None) => "not derived".into(),
            },
        ));
    }
    let focus = bars
        .iter()
        .filter(|b| !matches!(b.kind, BarKind::Surge | BarKind::Rating))
        .map(|b| b.hi)
        .chain(worst.iter().map(|w| w.0))
        .fold(0.0, f64::max);
    let unit = if focus * 2.5 >= 1.0 { "A" } else { "mA" }.to_string();
    Figures {
        name: reg.key().to_string(),
        rows,
        bars,
        worst,
        unit,
    }
}
