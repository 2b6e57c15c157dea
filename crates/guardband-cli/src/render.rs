//! Output: ariadne reports for people, one JSON object for tools. SARIF and
//! workflow annotations are in their own modules.

use ariadne::{Color, Config, IndexType, Label, Report, ReportKind};
use guardband_model::{Diagnostic, Severity, Workspace};
use std::io::{IsTerminal, Write};

fn plural(n: usize, word: &str) -> String {
    if n == 1 {
        format!("1 {word}")
    } else {
        format!("{n} {word}s")
    }
}

/// The closing line, e.g. `2 errors, 1 warning in 3 files`.
pub fn summary(diagnostics: &[Diagnostic], files: usize) -> String {
    let count = |s| diagnostics.iter().filter(|d| d.severity == s).count();
    let infos = count(Severity::Info);
    let info = if infos > 0 {
        format!(", {}", plural(infos, "info"))
    } else {
        String::new()
    };
    format!(
        "{}, {}{info} in {}",
        plural(count(Severity::Error), "error"),
        plural(count(Severity::Warning), "warning"),
        plural(files, "file")
    )
}

/// Whether standard output is a terminal that may be coloured (`NO_COLOR` unset).
pub fn stdout_wants_color() -> bool {
    std::io::stdout().is_terminal() && std::env::var_os("NO_COLOR").is_none_or(|v| v.is_empty())
}

/// Writes every diagnostic through ariadne, then the summary line.
pub fn human(
    out: &mut dyn Write,
    color: bool,
    ws: &Workspace,
    diagnostics: &[Diagnostic],
    files: usize,
) -> std::io::Result<()> {
    let mut cache = ariadne::sources(ws.files.iter().map(|f| (f.display.clone(), f.text.clone())));
    for d in diagnostics {
        let name = ws.file(d.file).display.clone();
        let (kind, tint) = match d.severity {
            Severity::Error => (ReportKind::Error, Color::Red),
            Severity::Warning => (ReportKind::Warning, Color::Yellow),
            Severity::Info => (ReportKind::Advice, Color::Cyan),
        };
        let mut report = Report::build(kind, (name.clone(), d.span.clone()))
            .with_config(
                Config::default()
                    .with_color(color)
                    .with_index_type(IndexType::Byte),
            )
            .with_code(d.rule)
            .with_message(&d.message);
        if d.labels.is_empty() {
            report = report.with_label(Label::new((name.clone(), d.span.clone())).with_color(tint));
        }
        for (i, l) in d.labels.iter().enumerate() {
            let label_name = ws.file(l.file).display.clone();
            let c = if i == 0 { tint } else { Color::Blue };
            report = report.with_label(
                Label::new((label_name, l.span.clone()))
                    .with_message(&l.message)
                    .with_color(c)
                    .with_order(i as i32),
            );
        }
        if let Some(h) = &d.help {
            report = report.with_help(h);
        }
        report.finish().write(&mut cache, &mut *out)?;
    }
    writeln!(out, "{}", summary(diagnostics, files))?;
    out.flush()
}

fn position(ws: &Workspace, file: guardband_model::FileId, offset: usize) -> serde_json::Value {
    let p = ws.file(file).line_index.line_col(offset);
    serde_json::json!({ "line": p.line + 1, "column": p.chars + 1 })
}

fn range(
    ws: &Workspace,
    file: guardband_model::FileId,
    span: &std::ops::Range<usize>,
) -> serde_json::Value {
    serde_json::json!({ "start": position(ws, file, span.start), "end": position(ws, file, span.end) })
}

/// The JSON document of a check (schema in the README).
pub fn json_value(ws: &Workspace, diagnostics: &[Diagnostic], files: usize) -> serde_json::Value {
    let items: Vec<serde_json::Value> = diagnostics
        .iter()
        .map(|d| {
            serde_json::json!({
                "rule": d.rule,
                "severity": d.severity.as_str(),
                "file": ws.file(d.file).display,
                "range": range(ws, d.file, &d.span),
                "message": d.message,
                "labels": d.labels.iter().map(|l| serde_json::json!({
                    "file": ws.file(l.file).display,
                    "range": range(ws, l.file, &l.span),
                    "message": l.message,
                })).collect::<Vec<_>>(),
                "help": d.help,
            })
        })
        .collect();
    serde_json::json!({ "version": 1, "files_checked": files, "diagnostics": items })
}

/// Writes the JSON document and a newline.
pub fn json(
    out: &mut dyn Write,
    ws: &Workspace,
    diagnostics: &[Diagnostic],
    files: usize,
) -> std::io::Result<()> {
    serde_json::to_writer_pretty(&mut *out, &json_value(ws, diagnostics, files))?;
    writeln!(out)?;
    out.flush()
}
