//! Waivers: `// waive RULE: reason`. The reason is required; a waiver that
//! waives nothing is reported.
//!
//! A waiver covers a piece of the syntax tree, not a line, so that
//! formatting (which moves line breaks) never changes what it waives:
//! - written after code on its line, it covers the field or block that ends
//!   just before it on that line, else the field or block it sits inside
//!   (a comment after a block's `{` covers that block);
//! - written on a line of its own, it covers the next field or block.
//!
//! A finding is waived when it starts inside what the waiver covers.

use guardband_model::{Diagnostic, FileId, Severity, Workspace, did_you_mean};
use guardband_syntax::{Block, Item, Member};
use std::ops::Range;

/// One parsed waiver comment.
#[derive(Debug, Clone)]
pub struct Waiver {
    pub file: FileId,
    pub span: Range<usize>,
    /// What it covers (see the module documentation); `None`: nothing.
    pub covers: Option<Range<usize>>,
    pub rules: Vec<String>,
    /// Why the finding is acceptable, as written after the `:`.
    pub reason: String,
    pub used: bool,
}

/// The spans of every field and block of a file, in source order (a block
/// before what it holds), and the starts of the fields among them.
fn elements(items: &[Item]) -> (Vec<Range<usize>>, Vec<usize>) {
    fn block(b: &Block, out: &mut Vec<Range<usize>>, fields: &mut Vec<usize>) {
        out.push(b.span.clone());
        for m in &b.members {
            match m {
                Member::Field(f) => {
                    out.push(f.span.clone());
                    fields.push(f.span.start);
                }
                Member::Block(inner) => block(inner, out, fields),
                Member::Error(_) => {}
            }
        }
    }
    let (mut out, mut fields) = (Vec::new(), Vec::new());
    for item in items {
        if let Item::Block(b) = item {
            block(b, &mut out, &mut fields);
        }
    }
    (out, fields)
}

/// What a waiver comment at `comment` covers.
fn covered(
    text: &str,
    (elements, is_field): &(Vec<Range<usize>>, Vec<usize>),
    comment: &Range<usize>,
    own_line: bool,
) -> Option<Range<usize>> {
    if own_line {
        // Inside a field, the field; else the next field or block.
        if let Some(f) = elements
            .iter()
            .filter(|e| is_field.contains(&e.start))
            .find(|e| e.start <= comment.start && comment.end <= e.end)
        {
            return Some(f.clone());
        }
        return elements.iter().find(|e| e.start >= comment.end).cloned();
    }
    let same_line = |a: usize, b: usize| !text.get(a..b).unwrap_or("\n").contains(['\n', '\r']);
    let inside = |e: &&Range<usize>| e.start <= comment.start && comment.end <= e.end;
    // Inside a field (formatting keeps such a field as written): that field.
    let field = elements
        .iter()
        .filter(|e| is_field.contains(&e.start))
        .filter(inside)
        .min_by_key(|e| e.end - e.start);
    if let Some(f) = field {
        return Some(f.clone());
    }
    // The element that ends just before the comment on its line (the
    // outermost, when a field and its block end together).
    let before = elements
        .iter()
        .filter(|e| e.end <= comment.start && same_line(e.end, comment.start))
        .max_by_key(|e| (e.end, std::cmp::Reverse(e.start)));
    if let Some(e) = before {
        return Some(e.clone());
    }
    // Else the innermost block it sits inside.
    elements
        .iter()
        .filter(inside)
        .min_by_key(|e| e.end - e.start)
        .cloned()
}

/// The marker that starts a waiver comment.
pub const MARKER: &str = "waive";

/// Parses the waivers of every file; malformed ones become diagnostics.
pub fn collect(ws: &Workspace, diagnostics: &mut Vec<Diagnostic>) -> Vec<Waiver> {
    let names: Vec<&str> = crate::registry().iter().map(|r| r.name).collect();
    let mut out = Vec::new();
    for file in &ws.files {
        let mut tree: Option<(Vec<Range<usize>>, Vec<usize>)> = None;
        for c in &file.parse.file.comments {
            let body = c.text.trim_start_matches('/').trim();
            let Some(rest) = body.strip_prefix(MARKER) else {
                continue;
            };
            if !rest.starts_with([' ', '\t']) {
                continue;
            }
            let (list, reason) = match rest.split_once(':') {
                Some((l, r)) => (l, r.trim()),
                None => (rest, ""),
            };
            if reason.is_empty() {
                diagnostics.push(
                    Diagnostic::error(
                        "invalid-suppression",
                        file.id,
                        c.span.clone(),
                        "a waiver needs a reason",
                    )
                    .primary("no reason given")
                    .help("write `// waive RULE: why this is acceptable`"),
                );
                continue;
            }
            let mut rules = Vec::new();
            let mut ok = true;
            for rule in list.split(',').map(str::trim).filter(|r| !r.is_empty()) {
                if names.contains(&rule) {
                    rules.push(rule.to_string());
                } else {
                    ok = false;
                    let help = did_you_mean(rule, names.iter().copied())
                        .map(|s| format!("did you mean `{s}`?"))
                        .unwrap_or_else(|| {
                            "only lint rules can be waived; `guardband explain --list` shows them"
                                .into()
                        });
                    diagnostics.push(
                        Diagnostic::error(
                            "invalid-suppression",
                            file.id,
                            c.span.clone(),
                            format!("`{rule}` is not a lint rule"),
                        )
                        .primary("unknown rule")
                        .help(help),
                    );
                }
            }
            if !ok || rules.is_empty() {
                continue;
            }
            let line_start = file.text[..c.span.start]
                .rfind(['\n', '\r'])
                .map(|i| i + 1)
                .unwrap_or(0);
            let own_line = file.text[line_start..c.span.start].trim().is_empty();
            let tree = tree.get_or_insert_with(|| elements(&file.parse.file.items));
            out.push(Waiver {
                file: file.id,
                span: c.span.clone(),
                covers: covered(&file.text, tree, &c.span, own_line),
                rules,
                reason: reason.to_string(),
                used: false,
            });
        }
    }
    out
}

/// Drops findings that a waiver covers, marking the waiver used.
pub fn apply(waivers: &mut [Waiver], findings: Vec<Diagnostic>) -> Vec<Diagnostic> {
    findings
        .into_iter()
        .filter(|d| {
            let hit = waivers.iter_mut().find(|w| {
                w.file == d.file
                    && w.rules.iter().any(|r| r == d.rule)
                    && w.covers.as_ref().is_some_and(|c| {
                        c.start <= d.span.start && d.span.start < c.end.max(c.start + 1)
                    })
            });
            match hit {
                Some(w) => {
                    w.used = true;
                    false
                }
                None => true,
            }
        })
        .collect()
}

/// Warnings for waivers that waived nothing.
pub fn unused(waivers: &[Waiver]) -> Vec<Diagnostic> {
    waivers
        .iter()
        .filter(|w| !w.used)
        .map(|w| {
            Diagnostic::error(
                "unused-suppression",
                w.file,
                w.span.clone(),
                format!("this waiver of `{}` waives nothing", w.rules.join(", ")),
            )
            .with_severity(Severity::Warning)
            .primary("nothing to waive here")
            .help("remove it, or write it after the field or block of the finding, or on the line above it")
        })
        .collect()
}
