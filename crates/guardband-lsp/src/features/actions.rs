//! Code actions: quick fixes for findings whose fix can be computed, a
//! waiver with a reason placeholder for any lint finding, and a fix-all
//! source action that applies every computable fix of a file at once.
//!
//! Computable fixes: size a conductor for the worst current (metal width and
//! trace width scale linearly and as the 1/0.725 power of the current, a bond
//! wire's diameter as the 2/3 power, a stated rating is raised to the
//! current), insert the skeleton of a missing fault case, set a limit-loop
//! analysis up so that it limits (a voltage forcing below regulation, the
//! break at the pass gate, the clamp on the driving side), and raise a
//! sensed limit's reference (or threshold) to the computed value whose
//! window clears rated load plus margin at the worst corner (and in the
//! statistical check when it is on). Analysis skeletons hold placeholders
//! the designer must fill in, and a raised limit moves every figure that
//! follows from it, so fix-all leaves both out.

use crate::encoding::Encoding;
use crate::engine::Analysis;
use guardband_model::{BlockKind, Diagnostic, FileId, Node, Remedy};
use guardband_units::parse_unit;
use std::collections::HashMap;
use tower_lsp_server::ls_types::{
    CodeAction, CodeActionKind, CodeActionOrCommand, CodeActionParams, TextEdit, Uri, WorkspaceEdit,
};

/// One computed fix: edits in one file.
struct Fix {
    title: String,
    edits: Vec<(std::ops::Range<usize>, String)>,
    /// Safe to apply without looking (part of fix-all).
    safe: bool,
    diagnostic: usize,
}

/// The actions for the findings in the byte span `within` of `file`, plus
/// fix-all; `params` says which kinds the client wants.
pub fn code_actions(
    analysis: &Analysis,
    file: FileId,
    within: std::ops::Range<usize>,
    params: &CodeActionParams,
    encoding: Encoding,
) -> Vec<CodeActionOrCommand> {
    let source = analysis.checked.ws.file(file);
    let index = source.line_index();
    let (lo, hi) = (within.start, within.end);
    let wanted = |kind: &CodeActionKind| {
        params.context.only.as_ref().is_none_or(|only| {
            only.iter().any(|o| {
                kind.as_str() == o.as_str()
                    || kind.as_str().starts_with(&format!("{}.", o.as_str()))
            })
        })
    };
    let Some(uri) = analysis.uri(file) else {
        return Vec::new();
    };
    let all = fixes(analysis, file);
    let mut out = Vec::new();
    let lsp_diags = super::diagnostics::convert(analysis, file, encoding, false);
    if wanted(&CodeActionKind::QUICKFIX) {
        for fix in all.iter() {
            let d = &analysis.checked.diagnostics[fix.diagnostic];
            if d.span.end < lo || d.span.start > hi {
                continue;
            }
            let position = analysis.checked.diagnostics[..fix.diagnostic]
                .iter()
                .filter(|x| x.file == file)
                .count();
            out.push(CodeActionOrCommand::CodeAction(CodeAction {
                title: fix.title.clone(),
                kind: Some(CodeActionKind::QUICKFIX),
                diagnostics: lsp_diags.get(position).cloned().map(|d| vec![d]),
                edit: Some(edit(&uri, index, &fix.edits, encoding)),
                is_preferred: Some(fix.safe),
                ..Default::default()
            }));
        }
    }
    let safe: Vec<&Fix> = all.iter().filter(|f| f.safe).collect();
    if wanted(&CodeActionKind::SOURCE_FIX_ALL) && !safe.is_empty() {
        let edits: Vec<(std::ops::Range<usize>, String)> =
            safe.iter().flat_map(|f| f.edits.iter().cloned()).collect();
        out.push(CodeActionOrCommand::CodeAction(CodeAction {
            title: format!("Apply {} computable guardband fixes", safe.len()),
            kind: Some(CodeActionKind::SOURCE_FIX_ALL),
            edit: Some(edit(&uri, index, &edits, encoding)),
            ..Default::default()
        }));
    }
    out
}

fn edit(
    uri: &Uri,
    index: &guardband_syntax::LineIndex,
    edits: &[(std::ops::Range<usize>, String)],
    encoding: Encoding,
) -> WorkspaceEdit {
    let mut sorted: Vec<_> = edits.to_vec();
    sorted.sort_by_key(|(span, _)| span.start);
    let edits = sorted
        .iter()
        .map(|(span, text)| TextEdit {
            range: encoding.range(index, span),
            new_text: text.clone(),
        })
        .collect();
    WorkspaceEdit {
        changes: Some(HashMap::from([(uri.clone(), edits)])),
        ..Default::default()
    }
}

/// Every fix for the findings of `file`, in finding order.
fn fixes(analysis: &Analysis, file: FileId) -> Vec<Fix> {
    let rules = guardband_rules::registry();
    let mut out = Vec::new();
    for (i, d) in analysis.checked.diagnostics.iter().enumerate() {
        if d.file != file {
            continue;
        }
        if d.rule == "conductor-under-rated"
            && let Some(f) = size_conductor(analysis, d, i)
        {
            out.push(f);
        }
        if let Some(f) = skeleton(analysis, d, i) {
            out.push(f);
        }
        if d.rule == "limit-loop-analysis" {
            out.extend(analysis_setup(analysis, d, i));
        }
        if d.rule == "limit-within-load"
            && let Some(f) = raise_threshold(analysis, d, i)
        {
            out.push(f);
        }
        if rules.iter().any(|r| r.name == d.rule) {
            out.push(waiver(analysis, d, i));
        }
    }
    out
}

fn conductor_of<'a>(analysis: &'a Analysis, d: &Diagnostic) -> Option<&'a Node> {
    block_of(analysis, d, BlockKind::Conductor)
}

/// The block of `kind` a finding lies in.
fn block_of<'a>(analysis: &'a Analysis, d: &Diagnostic, kind: BlockKind) -> Option<&'a Node> {
    analysis
        .checked
        .model
        .written()
        .filter(|n| n.kind == kind && n.file == d.file)
        .find(|n| n.span.start <= d.span.start && d.span.end <= n.span.end)
}

/// Sets a field of `node` to `text`: replaces its value, or adds the field
/// on a line of its own before the block's closing brace.
fn set_field(
    analysis: &Analysis,
    node: &Node,
    key: &str,
    text: &str,
) -> Option<(std::ops::Range<usize>, String)> {
    if let Some(f) = node.field(key) {
        return Some((
            f.expr.span.clone(),
            keeping_comments(analysis, node.file, &f.expr.span, text.to_string()),
        ));
    }
    let source = &analysis.checked.ws.file(node.file).text;
    let close = node.span.end.checked_sub(1)?;
    if source.as_bytes().get(close) != Some(&b'}') {
        return None;
    }
    let outer = indent_at(source, node.span.start);
    Some((close..close, format!("    {key} = {text}\n{outer}")))
}

/// Fixes of a limit-loop analysis set up so that it cannot limit: force
/// the output below regulation with a voltage (half the output's nominal,
/// well below its low edge), break the loop at the pass gate, put the clamp
/// on the driving side.
fn analysis_setup(analysis: &Analysis, d: &Diagnostic, index: usize) -> Vec<Fix> {
    let model = &analysis.checked.model;
    let Some(a) = block_of(analysis, d, BlockKind::Analysis) else {
        return Vec::new();
    };
    let reg = model.item_of(a.id);
    let mut out = Vec::new();
    let fix = |title: String, edit: Option<(std::ops::Range<usize>, String)>| {
        edit.map(|e| Fix {
            title,
            edits: vec![e],
            safe: true,
            diagnostic: index,
        })
    };
    match d.remedy {
        Some(Remedy::ForceBelowRegulation) => {
            let forced = a
                .fields_named("force")
                .find(|f| f.expr.span.start <= d.span.start && d.span.end <= f.expr.span.end);
            if let (Some(f), Some(output)) = (forced, reg.quantity("output")) {
                let volts = guardband_rules::show::number(output.nom / 2.0);
                let text = format!("{volts} V");
                out.extend(fix(
                    format!("Force `{}` with {text}, below regulation", f.key),
                    Some((
                        f.expr.span.clone(),
                        keeping_comments(analysis, a.file, &f.expr.span, text),
                    )),
                ));
            }
        }
        Some(Remedy::BreakAtPassGate) => out.extend(fix(
            "Break the loop at `pass.gate`".into(),
            set_field(analysis, a, "break_at", "pass.gate"),
        )),
        Some(Remedy::ClampOnDrivingSide) => out.extend(fix(
            "Put the clamp on the driving side".into(),
            set_field(analysis, a, "clamp_side", "driving"),
        )),
        None => {}
    }
    out
}

/// Raises a sensed limit so that its worst-case low edge clears rated load
/// plus margin (and, when the statistical check is on, so that no more
/// than the allowed share of parts falls below it): the window scales with
/// the nominal of the reference (when the threshold is `ratio * reference`)
/// or of the threshold, so that number is multiplied by the least factor
/// that clears both, with a hair of headroom, rounded up to three digits.
fn raise_threshold(analysis: &Analysis, d: &Diagnostic, index: usize) -> Option<Fix> {
    let model = &analysis.checked.model;
    let options = &analysis.checked.config.options;
    let limit = block_of(analysis, d, BlockKind::Limit)?;
    let derived = analysis.checked.derived_for(model.item_of(limit.id).id)?;
    let lw = derived.limit(limit.id)?;
    let window = lw.window.as_ref().ok()?;
    let required = derived.required()?;
    if window.lo <= 0.0 {
        return None;
    }
    let mut factor = (required / window.lo).max(1.0);
    if options.statistical
        && let Some(stat) = &lw.stat
    {
        // Every part of the statistics scales with the number; find the
        // least factor whose tail below the required level is allowed.
        let escapes = |s: f64| {
            let mut scaled = stat.clone();
            scaled.mean *= s;
            scaled.sigma *= s;
            scaled.bound *= s;
            guardband_rules::derive::escape_ppm(&scaled, required) > options.escape_ppm
        };
        let (mut lo, mut hi) = (factor, factor.max(1.0) * 2.0);
        while escapes(hi) && hi < 1e3 {
            hi *= 2.0;
        }
        if escapes(lo) {
            for _ in 0..60 {
                let mid = (lo + hi) / 2.0;
                if escapes(mid) { lo = mid } else { hi = mid }
            }
            factor = hi;
        }
    }
    if factor <= 1.0 {
        return None;
    }
    let source = &analysis.checked.ws.file(limit.file).text;
    let threshold = limit.field("threshold")?;
    let uses_reference = source
        .get(threshold.expr.span.clone())
        .is_some_and(|t| t.contains("reference"));
    let key = if uses_reference {
        "reference"
    } else {
        "threshold"
    };
    let field = limit.field(key)?;
    let value = field.quantity()?;
    let unit = value.unit.clone()?;
    let parsed = parse_unit(&unit).ok()?;
    // The nominal as written: the first number of the value, in its unit.
    let text = source.get(field.expr.span.clone())?;
    let digits_end = text
        .find(|c: char| !(c.is_ascii_digit() || c == '.'))
        .unwrap_or(text.len());
    if digits_end == 0 {
        return None;
    }
    let needed = value.nom * factor * 1.001;
    let written = guardband_rules::show::ceil3(parsed.diff_from_si(needed));
    let new_number = guardband_rules::show::number(written);
    let start = field.expr.span.start;
    Some(Fix {
        title: format!(
            "Raise `{key}` of `{}` to {new_number} {unit} (low edge then clears rated load + margin)",
            limit.key()
        ),
        edits: vec![(start..start + digits_end, new_number)],
        safe: false,
        diagnostic: index,
    })
}

/// Sizes a conductor for the worst current.
fn size_conductor(analysis: &Analysis, d: &Diagnostic, index: usize) -> Option<Fix> {
    let model = &analysis.checked.model;
    let node = conductor_of(analysis, d)?;
    let derived = analysis.checked.derived_for(model.item_of(node.id).id)?;
    let cr = derived.conductor(node.id)?;
    let worst = *cr.current.as_ref().ok()?;
    let rating = *cr.rating.as_ref().ok()?;
    if rating <= 0.0 || !guardband_rules::compare::below(rating, worst) {
        return None;
    }
    let ratio = worst / rating;
    let (key, exponent) = cr.kind.scaling()?;
    let field = node.field(key)?;
    let v = field.quantity()?;
    if !v.is_exact() {
        return None;
    }
    let unit = v.unit.clone().unwrap_or_else(|| match key {
        "rating" => "mA".into(),
        _ => "um".into(),
    });
    let parsed = parse_unit(&unit).ok()?;
    // A hair of headroom so that rounding in the rating itself cannot leave it short.
    let needed = v.lo * ratio.powf(exponent) * 1.001;
    let written = guardband_rules::show::ceil3(parsed.diff_from_si(needed));
    let new_text = format!("{} {unit}", guardband_rules::show::number(written));
    Some(Fix {
        title: format!(
            "Set `{key}` of `{}` to {new_text} (carries the worst current)",
            node.key()
        ),
        edits: vec![(
            field.expr.span.clone(),
            keeping_comments(analysis, d.file, &field.expr.span, new_text),
        )],
        safe: true,
        diagnostic: index,
    })
}

/// The text that replaces `span` with `new_text` and keeps every comment
/// written inside `span`: each on its own line before the new text.
fn keeping_comments(
    analysis: &Analysis,
    file: guardband_model::FileId,
    span: &std::ops::Range<usize>,
    new_text: String,
) -> String {
    let source = analysis.checked.ws.file(file);
    let inner: Vec<&str> = source
        .parse
        .file
        .comments
        .iter()
        .filter(|c| span.start <= c.span.start && c.span.end <= span.end)
        .map(|c| c.text.trim_end())
        .collect();
    if inner.is_empty() {
        return new_text;
    }
    let indent = indent_at(&source.text, span.start).to_string();
    let mut out = String::new();
    for c in inner {
        out.push_str(c);
        out.push('\n');
        out.push_str(&indent);
        out.push_str("    ");
    }
    out.push_str(&new_text);
    out
}

/// The indentation of the line holding `offset`.
fn indent_at(text: &str, offset: usize) -> &str {
    let start = text[..offset].rfind('\n').map(|i| i + 1).unwrap_or(0);
    let line = &text[start..];
    &line[..line.len() - line.trim_start().len()]
}

/// Inserts the block a finding's help proposes (``add `fault ...` ``) at the
/// end of its regulator.
fn skeleton(analysis: &Analysis, d: &Diagnostic, index: usize) -> Option<Fix> {
    let help = d.help.as_deref()?;
    let proposed = help.strip_prefix("add `")?.split('`').next()?;
    if !(proposed.starts_with("fault ") || proposed.starts_with("analysis ")) {
        return None;
    }
    let model = &analysis.checked.model;
    let text = &analysis.checked.ws.file(d.file).text;
    let regulator = model
        .written()
        .filter(|n| n.file == d.file && n.kind == BlockKind::Regulator)
        .find(|n| n.span.start <= d.span.start && d.span.end <= n.span.end)?;
    let close = regulator.span.end.checked_sub(1)?;
    if text.as_bytes().get(close) != Some(&b'}') {
        return None;
    }
    let outer = indent_at(text, regulator.span.start).to_string();
    let inner = format!("{outer}    ");
    // The canonical layout when the skeleton parses on its own (fault cases
    // do); analysis skeletons hold `...` for the designer to fill in.
    let wrapped = format!("regulator x {{\n{proposed}\n}}\n");
    let (body, safe) = match guardband_syntax::format::format(&wrapped) {
        Some(f) => {
            let lines: Vec<&str> = f.lines().collect();
            let body: Vec<String> = lines[1..lines.len() - 1]
                .iter()
                .map(|l| format!("{outer}{l}"))
                .collect();
            (body.join("\n"), true)
        }
        None => (format!("{inner}{proposed}"), false),
    };
    let line_start = text[..close].rfind('\n').map(|i| i + 1).unwrap_or(0);
    let (at, insert) = if text[line_start..close].trim().is_empty() {
        (line_start, format!("\n{body}\n"))
    } else {
        (close, format!("\n{body}\n{outer}"))
    };
    let name = proposed.split_whitespace().nth(1).unwrap_or("case");
    Some(Fix {
        title: format!(
            "Add `{} {name}` to `{}`",
            proposed.split_whitespace().next().unwrap_or(""),
            regulator.key()
        ),
        edits: vec![(at..at, insert)],
        safe,
        diagnostic: index,
    })
}

/// A waiver comment on the line above the finding, with a reason to fill in.
fn waiver(analysis: &Analysis, d: &Diagnostic, index: usize) -> Fix {
    let text = &analysis.checked.ws.file(d.file).text;
    let start = d.span.start.min(text.len());
    let line_start = text[..start].rfind('\n').map(|i| i + 1).unwrap_or(0);
    let indent = indent_at(text, start);
    Fix {
        title: format!("Waive `{}` here (write the reason)", d.rule),
        edits: vec![(
            line_start..line_start,
            format!(
                "{indent}// {} {}: REASON (why this finding is acceptable)\n",
                guardband_rules::suppress::MARKER,
                d.rule
            ),
        )],
        safe: false,
        diagnostic: index,
    }
}
