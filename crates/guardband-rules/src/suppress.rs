//! Waivers: `// waive RULE: reason` on the line of a finding or the line
//! above it. The reason is required; a waiver that waives nothing is reported.

use guardband_model::{Diagnostic, FileId, Severity, Workspace, did_you_mean};

/// One parsed waiver comment.
#[derive(Debug, Clone)]
pub struct Waiver {
    pub file: FileId,
    pub span: std::ops::Range<usize>,
    /// 0-based line the comment is on.
    pub line: u32,
    /// Whether the comment is alone on its line (then it covers the next line).
    pub own_line: bool,
    pub rules: Vec<String>,
    pub used: bool,
}

/// The marker that starts a waiver comment.
pub const MARKER: &str = "waive";

/// Parses the waivers of every file; malformed ones become diagnostics.
pub fn collect(ws: &Workspace, diagnostics: &mut Vec<Diagnostic>) -> Vec<Waiver> {
    let names: Vec<&str> = crate::registry().iter().map(|r| r.name).collect();
    let mut out = Vec::new();
    for file in &ws.files {
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
            let pos = file.line_index.line_col(c.span.start);
            let line_start = c.span.start - pos.utf8 as usize;
            let own_line = file.text[line_start..c.span.start].trim().is_empty();
            out.push(Waiver {
                file: file.id,
                span: c.span.clone(),
                line: pos.line,
                own_line,
                rules,
                used: false,
            });
        }
    }
    out
}

/// Drops findings that a waiver covers, marking the waiver used.
pub fn apply(ws: &Workspace, waivers: &mut [Waiver], findings: Vec<Diagnostic>) -> Vec<Diagnostic> {
    findings
        .into_iter()
        .filter(|d| {
            let line = ws.file(d.file).line_index.line_col(d.span.start).line;
            let hit = waivers.iter_mut().find(|w| {
                w.file == d.file
                    && w.rules.iter().any(|r| r == d.rule)
                    && (w.line == line || (w.own_line && w.line + 1 == line))
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
            .help("remove it, or move it onto (or just above) the line of the finding")
        })
        .collect()
}
