//! The evidence matrix: each fault case and analysis (rows) against each
//! corner its evidence is kept at (columns), as planned (no measurement),
//! measured and passing, or measured and failing (a measurement that a
//! `measured-breaks-expectation` or `measured-outside-window` finding points
//! at). Shown when results files were given or hold records of the
//! regulator; the judgement is the rules', read from the check's findings.

use guardband_check::Checked;
use guardband_model::{BlockKind, Node};
use guardband_rules::evidence::{Measurement, corner_names};
use std::fmt::Write as _;

/// Rules whose findings mark a measurement as failing.
const FAILING: [&str; 2] = ["measured-breaks-expectation", "measured-outside-window"];

fn failing(checked: &Checked, m: &Measurement) -> bool {
    checked.diagnostics.iter().any(|d| {
        FAILING.contains(&d.rule)
            && d.labels
                .iter()
                .any(|l| l.file == m.file && l.span == m.span)
    })
}

/// The matrix as Markdown, or `None` when there is no evidence to show.
pub fn matrix(checked: &Checked, reg: &Node) -> Option<String> {
    let evidence = &checked.config.evidence;
    let has_any = evidence.of(reg.key()).next().is_some();
    if !has_any && !evidence.given {
        return None;
    }
    let model = &checked.model;
    let corners = corner_names(model, reg);
    let cases: Vec<&Node> = model
        .children(reg, BlockKind::Fault)
        .chain(model.children(reg, BlockKind::Analysis))
        .collect();
    if cases.is_empty() {
        return None;
    }
    let mut out = String::from("| case |");
    for c in &corners {
        let _ = write!(out, " `{c}` |");
    }
    out.push_str("\n|---|");
    out.push_str(&"---|".repeat(corners.len()));
    out.push('\n');
    let (mut planned, mut passing, mut failed) = (0, 0, 0);
    for case in cases {
        let _ = write!(out, "| {} `{}` |", case.keyword, case.key());
        for corner in &corners {
            let here: Vec<&Measurement> = evidence
                .of(reg.key())
                .filter(|m| m.case == case.key() && &m.corner == corner)
                .collect();
            let bad = here.iter().filter(|m| failing(checked, m)).count();
            let cell = if here.is_empty() {
                planned += 1;
                "planned, not measured".to_string()
            } else if bad > 0 {
                failed += 1;
                format!("✗ measured, failing ({bad} of {})", here.len())
            } else {
                passing += 1;
                format!("✓ measured, passing ({})", here.len())
            };
            let _ = write!(out, " {cell} |");
        }
        out.push('\n');
    }
    let _ = writeln!(
        out,
        "\n{} case × corner cells: {passing} measured and passing, {failed} failing, {planned} not measured.",
        passing + failed + planned
    );
    let own = format!("of `{}`", reg.key());
    for d in checked
        .diagnostics
        .iter()
        .filter(|d| d.rule == "evidence-stale" && d.message.contains(&own))
    {
        let _ = writeln!(out, "\nStale: {}.", d.message);
    }
    Some(out)
}
