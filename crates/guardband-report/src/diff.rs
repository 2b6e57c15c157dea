//! What moved between two revisions of a workspace: each regulator's and
//! each shared supply's derived figures, the findings and the waivers, as Markdown for a
//! pull-request comment and as JSON.
//!
//! Figures are matched by regulator (or supply) name and figure label, findings by
//! file, rule and the text of the line they point at (not the line number,
//! so an edit above a finding does not make it new), waivers by file and
//! the rules they waive. Where the numbers of a figure line up before and
//! after (same count, same kinds), each number that moved is shown with its
//! change: relative for currents, times and the like, in kelvin for
//! temperatures and in points for percentages.

use guardband_check::Checked;
use guardband_rules::derive::view;
use guardband_rules::show::number;
use guardband_units::{QuantityKind, parse_unit};
use serde_json::{Value, json};
use std::collections::HashMap;
use std::fmt::Write as _;

/// The figures, findings and waivers of one revision, in the words the
/// check and the report use.
#[derive(Debug, Clone, Default)]
pub struct Snapshot {
    pub regulators: Vec<RegulatorFigures>,
    /// The shared `supply` items: the rail's drawers and droop.
    pub supplies: Vec<RegulatorFigures>,
    pub findings: Vec<Finding>,
    pub waivers: Vec<Waiver>,
}

/// One regulator's (or shared supply's) derived figures as labelled values.
#[derive(Debug, Clone)]
pub struct RegulatorFigures {
    pub name: String,
    pub file: String,
    pub figures: Vec<(String, String)>,
}

/// One finding, with what identifies it across revisions.
#[derive(Debug, Clone, PartialEq)]
pub struct Finding {
    pub file: String,
    pub line: usize,
    pub severity: &'static str,
    pub rule: String,
    pub message: String,
    /// The flagged line with whitespace collapsed.
    pub context: String,
}

/// One waiver comment.
#[derive(Debug, Clone, PartialEq)]
pub struct Waiver {
    pub file: String,
    pub line: usize,
    pub rules: Vec<String>,
    pub reason: String,
}

fn collapse(text: &str) -> String {
    text.split_whitespace().collect::<Vec<_>>().join(" ")
}

/// A regulator's figures over its box and, with named corners, at each
/// corner (`label at corner `c``), so a change that moves one corner shows.
fn regulator_figures(
    checked: &Checked,
    reg: &guardband_model::Node,
    derived: &guardband_rules::Derived,
) -> Vec<(String, String)> {
    let options = &checked.config.options;
    let mut figures: Vec<(String, String)> = view::rows(&checked.model, derived, options)
        .into_iter()
        .map(|r| (r.label, r.value))
        .collect();
    let corners = checked.corners_of(reg.id);
    for r in view::corner_rows(&checked.model, options, &corners) {
        for (corner, value) in r.at {
            figures.push((format!("{} at corner `{corner}`", r.label), value));
        }
    }
    figures
}

/// The snapshot of one check.
pub fn snapshot(checked: &Checked) -> Snapshot {
    let (ws, model) = (&checked.ws, &checked.model);
    let regulators = model
        .regulators()
        .zip(&checked.derived)
        .map(|(reg, derived)| RegulatorFigures {
            name: reg.key().to_string(),
            file: ws.file(reg.file).display.clone(),
            figures: regulator_figures(checked, reg, derived),
        })
        .collect();
    let supplies = checked
        .rails
        .iter()
        .map(|rail| {
            let node = model.node(rail.supply);
            RegulatorFigures {
                name: node.key().to_string(),
                file: ws.file(node.file).display.clone(),
                figures: view::rail_rows(model, rail)
                    .into_iter()
                    .map(|r| (r.label, r.value))
                    .collect(),
            }
        })
        .collect();
    let findings = checked
        .diagnostics
        .iter()
        .map(|d| {
            let file = ws.file(d.file);
            let at = file.line_index().line_col(d.span.start);
            Finding {
                file: file.display.clone(),
                line: at.line as usize + 1,
                severity: d.severity.as_str(),
                rule: d.rule.to_string(),
                message: d.message.clone(),
                context: collapse(file.line_text(d.span.start)),
            }
        })
        .collect();
    let waivers = guardband_rules::suppress::collect(ws, &mut Vec::new())
        .into_iter()
        .map(|w| {
            let file = ws.file(w.file);
            Waiver {
                file: file.display.clone(),
                line: file.line_index().line_col(w.span.start).line as usize + 1,
                rules: w.rules,
                reason: w.reason,
            }
        })
        .collect();
    Snapshot {
        regulators,
        supplies,
        findings,
        waivers,
    }
}

/// A number a figure shows, read back from its text.
#[derive(Debug, Clone, PartialEq)]
pub struct Shown {
    pub text: String,
    /// In SI (or as written, for a number without a unit).
    pub value: f64,
    /// `None` for a bare number.
    pub kind: Option<QuantityKind>,
    pub percent: bool,
}

/// The numbers with their units in a figure's text, in order: `118 mA ..
/// 208 mA` gives two currents. A number inside a name (`ldo12`) is not one.
pub fn numbers(text: &str) -> Vec<Shown> {
    let chars: Vec<(usize, char)> = text.char_indices().collect();
    let mut out = Vec::new();
    let mut i = 0;
    while i < chars.len() {
        let (start, c) = chars[i];
        let boundary = i == 0 || {
            let p = chars[i - 1].1;
            !(p.is_alphanumeric() || p == '_' || p == '.')
        };
        let signed = (c == '-' || c == '−' || c == '+')
            && chars.get(i + 1).is_some_and(|(_, d)| d.is_ascii_digit());
        if !boundary || !(c.is_ascii_digit() || signed) {
            i += 1;
            continue;
        }
        let mut j = i + 1;
        while j < chars.len() {
            let d = chars[j].1;
            let exponent_sign = (d == '-' || d == '+')
                && matches!(chars[j - 1].1, 'e' | 'E')
                && chars.get(j + 1).is_some_and(|(_, x)| x.is_ascii_digit());
            let exponent = matches!(d, 'e' | 'E')
                && chars
                    .get(j + 1)
                    .is_some_and(|(_, x)| x.is_ascii_digit() || *x == '-' || *x == '+');
            let point = d == '.' && chars.get(j + 1).is_some_and(|(_, x)| x.is_ascii_digit());
            if d.is_ascii_digit() || point || exponent || exponent_sign {
                j += 1;
            } else {
                break;
            }
        }
        let end = chars.get(j).map(|(o, _)| *o).unwrap_or(text.len());
        let literal = text[start..end].replace('−', "-");
        let Ok(n) = literal.parse::<f64>() else {
            i = j;
            continue;
        };
        // A unit follows after one space, up to the next space or mark.
        let mut unit = None;
        if chars.get(j).is_some_and(|(_, c)| *c == ' ') {
            let from = chars.get(j + 1).map(|(o, _)| *o).unwrap_or(text.len());
            let word: String = text[from..]
                .chars()
                .take_while(|c| !c.is_whitespace() && !matches!(c, ',' | ';' | '(' | ')'))
                .collect();
            let word = word.trim_end_matches(['.', ':']);
            if !word.is_empty()
                && let Ok(u) = parse_unit(word)
            {
                unit = Some((word.to_string(), u, from + word.len()));
            }
        }
        match unit {
            Some((word, u, stop)) => {
                out.push(Shown {
                    text: text[start..stop].to_string(),
                    value: u.to_si(n),
                    kind: Some(u.kind),
                    percent: word == "%",
                });
                while i < chars.len() && chars[i].0 < stop {
                    i += 1;
                }
            }
            None => {
                out.push(Shown {
                    text: text[start..end].to_string(),
                    value: n,
                    kind: None,
                    percent: false,
                });
                i = j;
            }
        }
    }
    out
}

/// How one shown number moved: `+13 %`, `+5.3 K`, `−26 points`.
pub fn change(before: &Shown, after: &Shown) -> String {
    let signed = |x: f64| {
        let s = number(x.abs());
        if x < 0.0 {
            format!("−{s}")
        } else {
            format!("+{s}")
        }
    };
    if before.percent {
        return format!("{} points", signed((after.value - before.value) * 100.0));
    }
    if before.kind.is_some_and(|k| k.is_temperature()) {
        return format!("{} K", signed(after.value - before.value));
    }
    if before.value == 0.0 {
        return "from zero".to_string();
    }
    format!(
        "{} %",
        signed((after.value - before.value) / before.value.abs() * 100.0)
    )
}

/// One figure that differs between the revisions.
#[derive(Debug, Clone, PartialEq)]
pub struct FigureChange {
    pub label: String,
    pub before: Option<String>,
    pub after: Option<String>,
    /// Each number that moved, as `(before, after, change)`, when the
    /// numbers of both texts line up.
    pub moves: Vec<(Shown, Shown, String)>,
}

/// A regulator (or supply) whose figures changed, or that came or went.
#[derive(Debug, Clone, PartialEq)]
pub struct RegulatorChange {
    pub name: String,
    pub file: String,
    pub status: &'static str,
    pub figures: Vec<FigureChange>,
}

/// Everything that moved between two snapshots.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Diff {
    pub regulators: Vec<RegulatorChange>,
    pub supplies: Vec<RegulatorChange>,
    pub new_findings: Vec<Finding>,
    pub resolved_findings: Vec<Finding>,
    /// The same finding with a different message: `(before, after)`.
    pub changed_findings: Vec<(Finding, Finding)>,
    pub added_waivers: Vec<Waiver>,
    pub removed_waivers: Vec<Waiver>,
    pub changed_waivers: Vec<(Waiver, Waiver)>,
}

impl Diff {
    /// Nothing moved.
    pub fn is_empty(&self) -> bool {
        self == &Diff::default()
    }
}

fn moves(before: &str, after: &str) -> Vec<(Shown, Shown, String)> {
    let (a, b) = (numbers(before), numbers(after));
    let lined_up = a.len() == b.len()
        && a.iter()
            .zip(&b)
            .all(|(x, y)| x.kind == y.kind && x.percent == y.percent);
    if !lined_up {
        return Vec::new();
    }
    a.into_iter()
        .zip(b)
        .filter(|(x, y)| x.text != y.text)
        .map(|(x, y)| {
            let c = change(&x, &y);
            (x, y, c)
        })
        .collect()
}

/// Labels keyed with their occurrence, so that two figures with one label
/// are matched in order.
fn keyed<T>(items: &[T], key: impl Fn(&T) -> String) -> Vec<((String, usize), &T)> {
    let mut seen: HashMap<String, usize> = HashMap::new();
    items
        .iter()
        .map(|it| {
            let k = key(it);
            let n = seen.entry(k.clone()).or_insert(0);
            *n += 1;
            ((k, *n), it)
        })
        .collect()
}

fn figure_changes(before: &[(String, String)], after: &[(String, String)]) -> Vec<FigureChange> {
    let old = keyed(before, |f| f.0.clone());
    let new = keyed(after, |f| f.0.clone());
    let old_map: HashMap<&(String, usize), &(String, String)> =
        old.iter().map(|(k, v)| (k, *v)).collect();
    let new_keys: HashMap<&(String, usize), ()> = new.iter().map(|(k, _)| (k, ())).collect();
    let mut out = Vec::new();
    for (k, (label, value)) in &new {
        match old_map.get(k) {
            Some((_, was)) if was == value => {}
            Some((_, was)) => out.push(FigureChange {
                label: label.clone(),
                before: Some(was.clone()),
                after: Some(value.clone()),
                moves: moves(was, value),
            }),
            None => out.push(FigureChange {
                label: label.clone(),
                before: None,
                after: Some(value.clone()),
                moves: Vec::new(),
            }),
        }
    }
    for (k, (label, value)) in &old {
        if !new_keys.contains_key(k) {
            out.push(FigureChange {
                label: label.clone(),
                before: Some(value.clone()),
                after: None,
                moves: Vec::new(),
            });
        }
    }
    out
}

/// The regulators (or supplies) whose figures changed, came or went,
/// matched by name.
fn item_changes(before: &[RegulatorFigures], after: &[RegulatorFigures]) -> Vec<RegulatorChange> {
    let mut out = Vec::new();
    let old: HashMap<&str, &RegulatorFigures> =
        before.iter().map(|r| (r.name.as_str(), r)).collect();
    let new: HashMap<&str, &RegulatorFigures> =
        after.iter().map(|r| (r.name.as_str(), r)).collect();
    for r in after {
        let (status, figures) = match old.get(r.name.as_str()) {
            Some(was) => ("changed", figure_changes(&was.figures, &r.figures)),
            None => ("added", figure_changes(&[], &r.figures)),
        };
        if status == "added" || !figures.is_empty() {
            out.push(RegulatorChange {
                name: r.name.clone(),
                file: r.file.clone(),
                status,
                figures,
            });
        }
    }
    for r in before {
        if !new.contains_key(r.name.as_str()) {
            out.push(RegulatorChange {
                name: r.name.clone(),
                file: r.file.clone(),
                status: "removed",
                figures: Vec::new(),
            });
        }
    }
    out
}

/// What moved from `before` to `after`.
pub fn diff(before: &Snapshot, after: &Snapshot) -> Diff {
    let mut out = Diff {
        regulators: item_changes(&before.regulators, &after.regulators),
        supplies: item_changes(&before.supplies, &after.supplies),
        ..Diff::default()
    };

    let finding_key = |f: &Finding| format!("{}\0{}\0{}", f.file, f.rule, f.context);
    let old = keyed(&before.findings, finding_key);
    let new = keyed(&after.findings, finding_key);
    let old_map: HashMap<_, _> = old.iter().map(|(k, v)| (k.clone(), *v)).collect();
    let new_map: HashMap<_, _> = new.iter().map(|(k, v)| (k.clone(), *v)).collect();
    for (k, f) in &new {
        match old_map.get(k) {
            None => out.new_findings.push((*f).clone()),
            Some(was) if was.message != f.message || was.severity != f.severity => {
                out.changed_findings.push(((*was).clone(), (*f).clone()))
            }
            Some(_) => {}
        }
    }
    for (k, f) in &old {
        if !new_map.contains_key(k) {
            out.resolved_findings.push((*f).clone());
        }
    }

    let waiver_key = |w: &Waiver| format!("{}\0{}", w.file, w.rules.join(","));
    let old = keyed(&before.waivers, waiver_key);
    let new = keyed(&after.waivers, waiver_key);
    let old_map: HashMap<_, _> = old.iter().map(|(k, v)| (k.clone(), *v)).collect();
    let new_map: HashMap<_, _> = new.iter().map(|(k, v)| (k.clone(), *v)).collect();
    for (k, w) in &new {
        match old_map.get(k) {
            None => out.added_waivers.push((*w).clone()),
            Some(was) if was.reason != w.reason => {
                out.changed_waivers.push(((*was).clone(), (*w).clone()))
            }
            Some(_) => {}
        }
    }
    for (k, w) in &old {
        if !new_map.contains_key(k) {
            out.removed_waivers.push((*w).clone());
        }
    }
    out
}

/// A table cell: `|` and line breaks would break the row.
fn cell(text: &str) -> String {
    text.replace('|', "\\|").replace('\n', " ")
}

fn finding_line(f: &Finding) -> String {
    format!(
        "- **{}** `{}` in {} at line {}: {}",
        f.severity,
        f.rule,
        f.file,
        f.line,
        cell(&f.message)
    )
}

fn waiver_line(w: &Waiver) -> String {
    let rules: Vec<String> = w.rules.iter().map(|r| format!("`{r}`")).collect();
    format!(
        "{} at line {}: waives {}: {}",
        w.file,
        w.line,
        rules.join(", "),
        w.reason
    )
}

fn plural(n: usize, word: &str) -> String {
    if n == 1 {
        format!("1 {word}")
    } else {
        format!("{n} {word}s")
    }
}

/// The diff as a Markdown comment for a pull request.
/// One regulator's or supply's figure table.
fn item_table(md: &mut String, what: &str, r: &RegulatorChange) {
    let _ = writeln!(md, "### {what} `{}` ({}, {})\n", r.name, r.file, r.status);
    if r.figures.is_empty() {
        return;
    }
    let _ = writeln!(md, "| figure | before | after | moved |\n|---|---|---|---|");
    for f in &r.figures {
        let moved: Vec<String> = f
            .moves
            .iter()
            .map(|(a, b, c)| format!("{} → {} ({c})", a.text, b.text))
            .collect();
        let _ = writeln!(
            md,
            "| {} | {} | {} | {} |",
            cell(&f.label),
            cell(f.before.as_deref().unwrap_or("—")),
            cell(f.after.as_deref().unwrap_or("—")),
            cell(&moved.join("; "))
        );
    }
    md.push('\n');
}

pub fn markdown(d: &Diff, before: &str, after: &str) -> String {
    let mut md = String::new();
    let _ = writeln!(md, "## guardband: derived figures, {before} → {after}\n");
    if d.is_empty() {
        let _ = writeln!(md, "No derived figure, finding or waiver changed.\n");
    } else {
        let _ = writeln!(
            md,
            "{}{} changed, added or removed; {}, {} resolved, {} reworded; waivers: {} added, {} removed, {} changed.\n",
            plural(d.regulators.len(), "regulator"),
            match d.supplies.len() {
                0 => String::new(),
                1 => " and 1 supply".to_string(),
                n => format!(" and {n} supplies"),
            },
            plural(d.new_findings.len(), "new finding"),
            d.resolved_findings.len(),
            d.changed_findings.len(),
            d.added_waivers.len(),
            d.removed_waivers.len(),
            d.changed_waivers.len()
        );
    }
    for (what, r) in d
        .regulators
        .iter()
        .map(|r| ("Regulator", r))
        .chain(d.supplies.iter().map(|r| ("Supply", r)))
    {
        item_table(&mut md, what, r);
    }
    let sections: [(&str, Vec<String>); 6] = [
        (
            "New findings",
            d.new_findings.iter().map(finding_line).collect(),
        ),
        (
            "Resolved findings",
            d.resolved_findings.iter().map(finding_line).collect(),
        ),
        (
            "Reworded findings",
            d.changed_findings
                .iter()
                .map(|(a, b)| format!("{}\n  (was: {})", finding_line(b), cell(&a.message)))
                .collect(),
        ),
        (
            "Waivers added",
            d.added_waivers
                .iter()
                .map(|w| format!("- {}", waiver_line(w)))
                .collect(),
        ),
        (
            "Waivers removed",
            d.removed_waivers
                .iter()
                .map(|w| format!("- {}", waiver_line(w)))
                .collect(),
        ),
        (
            "Waivers changed",
            d.changed_waivers
                .iter()
                .map(|(a, b)| format!("- {}\n  (was: {})", waiver_line(b), a.reason))
                .collect(),
        ),
    ];
    for (title, lines) in sections {
        if lines.is_empty() {
            continue;
        }
        let _ = writeln!(md, "### {title}\n");
        for l in lines {
            let _ = writeln!(md, "{l}");
        }
        md.push('\n');
    }
    let _ = writeln!(md, "> {}", guardband_rules::CAUTION);
    md
}

fn shown_json(s: &Shown) -> Value {
    json!({
        "text": s.text,
        "value": s.value,
        "unit": s.kind.map(|k| if s.percent { "%".to_string() } else { k.si_symbol() }),
    })
}

fn finding_json(f: &Finding) -> Value {
    json!({
        "file": f.file,
        "line": f.line,
        "severity": f.severity,
        "rule": f.rule,
        "message": f.message,
    })
}

fn waiver_json(w: &Waiver) -> Value {
    json!({ "file": w.file, "line": w.line, "rules": w.rules, "reason": w.reason })
}

/// The diff as JSON (schema in the README).
fn change_json(r: &RegulatorChange) -> Value {
    json!({
        "name": r.name,
        "file": r.file,
        "status": r.status,
        "figures": r.figures.iter().map(|f| json!({
            "figure": f.label,
            "before": f.before,
            "after": f.after,
            "moved": f.moves.iter().map(|(a, b, c)| json!({
                "before": shown_json(a),
                "after": shown_json(b),
                "change": c,
            })).collect::<Vec<_>>(),
        })).collect::<Vec<_>>(),
    })
}

pub fn json(d: &Diff, before: &str, after: &str) -> Value {
    json!({
        "version": 1,
        "before": before,
        "after": after,
        "regulators": d.regulators.iter().map(change_json).collect::<Vec<_>>(),
        "supplies": d.supplies.iter().map(change_json).collect::<Vec<_>>(),
        "findings": {
            "new": d.new_findings.iter().map(finding_json).collect::<Vec<_>>(),
            "resolved": d.resolved_findings.iter().map(finding_json).collect::<Vec<_>>(),
            "reworded": d.changed_findings.iter().map(|(a, b)| json!({
                "before": finding_json(a),
                "after": finding_json(b),
            })).collect::<Vec<_>>(),
        },
        "waivers": {
            "added": d.added_waivers.iter().map(waiver_json).collect::<Vec<_>>(),
            "removed": d.removed_waivers.iter().map(waiver_json).collect::<Vec<_>>(),
            "changed": d.changed_waivers.iter().map(|(a, b)| json!({
                "before": waiver_json(a),
                "after": waiver_json(b),
            })).collect::<Vec<_>>(),
        },
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn texts(s: &str) -> Vec<String> {
        numbers(s).into_iter().map(|n| n.text).collect()
    }

    #[test]
    fn numbers_are_read_with_their_units_and_not_from_names() {
        assert_eq!(
            texts("118 mA .. 208 mA (mean 163 mA)"),
            ["118 mA", "208 mA", "163 mA"]
        );
        assert_eq!(texts("`ldo12` at 1.2e-3 A, 38 %"), ["1.2e-3 A", "38 %"]);
        assert_eq!(texts("130 °C at 0.62 W dissipated"), ["130 °C", "0.62 W"]);
        let n = numbers("−4.5 mA");
        assert!((n[0].value + 4.5e-3).abs() < 1e-15);
        assert_eq!(numbers("3 σ")[0].kind, None);
    }

    #[test]
    fn changes_are_relative_or_in_kelvin_or_in_points() {
        let one = |s: &str| numbers(s).remove(0);
        // (236 − 208) / 208 = 13.46 %: arithmetic.
        assert_eq!(change(&one("208 mA"), &one("236 mA")), "+13.5 %");
        assert_eq!(change(&one("130 °C"), &one("124.7 °C")), "−5.3 K");
        assert_eq!(change(&one("38 %"), &one("12 %")), "−26 points");
        assert_eq!(change(&one("0 A"), &one("1 A")), "from zero");
    }

    fn snap(figure: &str, finding: &str, reason: &str) -> Snapshot {
        Snapshot {
            regulators: vec![RegulatorFigures {
                name: "r".into(),
                file: "r.guard".into(),
                figures: vec![
                    ("window".into(), figure.into()),
                    ("same".into(), "1 A".into()),
                ],
            }],
            supplies: Vec::new(),
            findings: vec![Finding {
                file: "r.guard".into(),
                line: 3,
                severity: "error",
                rule: "x".into(),
                message: finding.into(),
                context: "a = 1".into(),
            }],
            waivers: vec![Waiver {
                file: "r.guard".into(),
                line: 1,
                rules: vec!["y".into()],
                reason: reason.into(),
            }],
        }
    }

    #[test]
    fn only_what_moved_is_listed() {
        let a = snap("118 mA .. 208 mA", "m", "ok");
        assert!(diff(&a, &a).is_empty());
        let b = snap("118 mA .. 236 mA", "m2", "fine");
        let d = diff(&a, &b);
        assert_eq!(d.regulators.len(), 1);
        let f = &d.regulators[0].figures;
        assert_eq!(f.len(), 1);
        assert_eq!(f[0].moves.len(), 1);
        assert_eq!(f[0].moves[0].2, "+13.5 %");
        assert_eq!(d.changed_findings.len(), 1);
        assert_eq!(d.changed_waivers.len(), 1);
        let mut moved = b.clone();
        moved.findings[0].line = 9;
        assert!(
            diff(&b, &moved).is_empty(),
            "a finding that only moved line is the same"
        );
    }
}
