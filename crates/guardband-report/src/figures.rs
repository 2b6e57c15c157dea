//! The derived values of one regulator as labelled, formatted rows: the one
//! list both the report's table and its chart are drawn from. Numbers are
//! formatted by `guardband_rules::format`, as the editor's hovers are, so a
//! reviewer sees the same figures in both places.

use guardband_model::{Model, Node};
use guardband_rules::Derived;
use guardband_rules::Options;
use guardband_rules::derive::view::{self, Role};

/// One row of the derived-values table.
#[derive(Debug, Clone, PartialEq)]
pub struct Row {
    pub quantity: String,
    pub value: String,
    /// How it was found.
    pub basis: String,
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
    /// An undervoltage-triggered scheme's characterised trip current.
    Trip,
    /// An undervoltage-triggered scheme's fixed current (below its threshold).
    Fixed,
}

impl BarKind {
    /// A stable name, written into the SVG as `data-role`.
    pub fn role(self) -> &'static str {
        match self {
            BarKind::RatedLoad => "rated-load",
            BarKind::Margin => "margin",
            BarKind::WorstCase => "limit-worst-case",
            BarKind::Statistical => "limit-statistical",
            BarKind::Surge => "full-gate-current",
            BarKind::Rating => "conductor-rating",
            BarKind::Trip => "trip-current",
            BarKind::Fixed => "fixed-current",
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
    /// Why the comparison this bar stands in fails, when it does: shown in
    /// words beside the bar and in the table, never by colour alone.
    pub fails: Option<&'static str>,
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

/// Collects the rows and bars of one regulator from the derived figures'
/// one labelled view (the rows the editor's hovers show).
pub fn figures(model: &Model, reg: &Node, derived: &Derived, options: &Options) -> Figures {
    let mut rows = Vec::new();
    let mut bars = Vec::new();
    // The table row each bar was drawn from, and its block.
    let mut bar_rows = Vec::new();
    let mut bar_nodes = Vec::new();
    let mut worst = None;
    for r in view::rows(model, derived, options) {
        let mut basis = r.basis.clone();
        for d in &r.details {
            if !basis.is_empty() {
                basis.push_str("; ");
            }
            basis.push_str(d);
        }
        rows.push(Row {
            quantity: r.label.clone(),
            value: r.value.clone(),
            basis,
        });
        let kind = match r.role {
            Role::RatedLoad => Some(BarKind::RatedLoad),
            Role::Margin => Some(BarKind::Margin),
            Role::LimitWorstCase => Some(BarKind::WorstCase),
            Role::LimitStatistical => Some(BarKind::Statistical),
            Role::FullGate => Some(BarKind::Surge),
            Role::ConductorRating => Some(BarKind::Rating),
            Role::Trip => Some(BarKind::Trip),
            Role::WorstCurrent => {
                worst = r.current.map(|(_, hi)| (hi, r.basis.clone()));
                None
            }
            _ => None,
        };
        if let (Some(kind), Some((lo, hi))) = (kind, r.current) {
            let (lo, text) = match kind {
                // The full-gate bar is drawn from zero: the surge with nothing to bound it.
                BarKind::Surge => (0.0, r.value.clone()),
                BarKind::Rating => (
                    0.0,
                    r.value
                        .split(" against the worst current ")
                        .next()
                        .unwrap_or("")
                        .to_string(),
                ),
                _ => (lo, r.value.split(" (mean").next().unwrap_or("").to_string()),
            };
            bars.push(Bar {
                kind,
                label: r.label.replace('`', ""),
                lo,
                hi,
                text,
                fails: None,
            });
            bar_rows.push(rows.len() - 1);
            bar_nodes.push(r.node);
        }
    }
    // An undervoltage-triggered scheme's fixed current may sit below the
    // load (its trip current is what must clear it).
    let fixed_current = |node| {
        derived
            .limit(node)
            .is_some_and(|l| l.scheme == guardband_rules::derive::Scheme::UndervoltageFixed)
    };
    for (bar, &row) in bars.iter_mut().zip(&bar_nodes) {
        if bar.kind == BarKind::WorstCase && fixed_current(row) {
            bar.kind = BarKind::Fixed;
        }
    }
    mark_failures(&mut bars, &worst, derived.required());
    for (bar, row) in bars.iter().zip(bar_rows) {
        // A rating row already says "short by" in words.
        match bar.fails {
            Some(_) if bar.kind == BarKind::Rating => {
                rows[row].value = format!("✗ {}", rows[row].value);
            }
            Some(why) => rows[row].value = format!("✗ {} ({why})", rows[row].value),
            None => {}
        }
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

/// Marks the bars whose comparison fails: a conductor rated below the worst
/// current, a limit window or trip current whose low edge does not clear
/// rated load plus margin (the comparisons `guardband_rules::compare` makes).
fn mark_failures(bars: &mut [Bar], worst: &Option<(f64, String)>, required: Option<f64>) {
    use guardband_rules::compare;
    for bar in bars {
        bar.fails = match bar.kind {
            BarKind::Rating => worst
                .as_ref()
                .filter(|(w, _)| compare::below(bar.hi, *w))
                .map(|_| "below worst current"),
            BarKind::WorstCase | BarKind::Trip => required
                .filter(|r| compare::at_most(bar.lo, *r))
                .map(|_| "cuts into margin"),
            _ => None,
        };
    }
}
