//! The fault-coverage matrix: pins and protections (rows) against the
//! regulator's fault cases (columns). A pin is covered by a case on that
//! pin; a protection by a case that names it with `exercises`, or by a
//! short or an overload, which drive every current protection. The same
//! reading as the `missing-fault-case` rule.

use guardband_model::{BlockKind, Model, Node};
use std::fmt::Write as _;

fn covers(fault: &Node, row: &Node) -> Option<String> {
    let event = fault.choice("event").unwrap_or("");
    match row.kind {
        BlockKind::Pin => (fault.reference("pin") == Some(row.id)).then(|| event.to_string()),
        _ => {
            let named = fault.reference("exercises") == Some(row.id);
            let undervoltage_start = row.kind == BlockKind::Limit
                && row.choice("scheme") == Some("undervoltage_fixed")
                && event == "startup";
            let drives = matches!(event, "short_to_ground" | "overload");
            (named || drives || undervoltage_start).then(|| {
                if named {
                    "named".to_string()
                } else {
                    event.to_string()
                }
            })
        }
    }
}

/// The matrix as a Markdown table (or a sentence when there is nothing to cover).
pub fn matrix(model: &Model, reg: &Node) -> String {
    let faults: Vec<&Node> = model.children(reg, BlockKind::Fault).collect();
    let rows: Vec<&Node> = [
        BlockKind::Pin,
        BlockKind::Limit,
        BlockKind::ThermalShutdown,
        BlockKind::Hiccup,
        BlockKind::Foldback,
    ]
    .iter()
    .flat_map(|k| model.children(reg, *k))
    .collect();
    if rows.is_empty() {
        return "No pins or protections to cover.\n".into();
    }
    if faults.is_empty() {
        return "No fault cases: nothing is covered.\n".into();
    }
    let mut out = String::from("| | ");
    out.push_str(
        &faults
            .iter()
            .map(|f| format!("`{}`", f.key()))
            .collect::<Vec<_>>()
            .join(" | "),
    );
    out.push_str(" |\n|---|");
    out.push_str(&"---|".repeat(faults.len()));
    out.push('\n');
    for row in rows {
        let label = match row.kind {
            BlockKind::Pin if row.flag("off_chip") == Some(true) => {
                format!("pin `{}` (off-chip)", row.key())
            }
            BlockKind::Pin => format!("pin `{}`", row.key()),
            _ => format!("{} `{}`", row.keyword, row.key()),
        };
        let cells: Vec<String> = faults
            .iter()
            .map(|f| match covers(f, row) {
                Some(how) => format!("✓ {how}"),
                None => "·".into(),
            })
            .collect();
        let _ = writeln!(out, "| {label} | {} |", cells.join(" | "));
    }
    out
}
