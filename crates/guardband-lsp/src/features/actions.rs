//! Code actions: quick fixes for findings whose fix can be computed, a
//! waiver with a reason placeholder for any lint finding, and a fix-all
//! source action that applies every computable fix of a file at once.
//!
//! Computable fixes: size a conductor for the worst current (metal width and
//! trace width scale linearly and as the 1/0.725 power of the current, a bond
//! wire's diameter as the 2/3 power, a stated rating is raised to the
//! current), and insert the skeleton of a missing fault case. Analysis
//! skeletons hold placeholders the designer must fill in, so fix-all leaves
//! them out.

use crate::encoding::Encoding;
use crate::engine::Analysis;
use guardband_model::{BlockKind, Diagnostic, FileId, Node};
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
    let index = &source.line_index;
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
        if rules.iter().any(|r| r.name == d.rule) {
            out.push(waiver(analysis, d, i));
        }
    }
    out
}

fn conductor_of<'a>(analysis: &'a Analysis, d: &Diagnostic) -> Option<&'a Node> {
    analysis
        .checked
        .model
        .nodes
        .iter()
        .filter(|n| n.kind == BlockKind::Conductor && n.file == d.file)
        .find(|n| n.span.start <= d.span.start && d.span.end <= n.span.end)
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
        .nodes
        .iter()
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
