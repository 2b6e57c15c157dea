//! Output: ariadne reports for people, one JSON object for tools. SARIF and
//! workflow annotations are in their own modules.

use crate::excerpt;
use ariadne::{Cache, Color, Config, IndexType, Label, Report, ReportKind, Source};
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

/// An excerpt's name for ariadne: the file's display path (the index only
/// tells excerpts of one file apart).
#[derive(Debug, Clone, PartialEq, Eq, Hash)]
struct ExcerptId {
    name: String,
    index: usize,
}

impl std::fmt::Display for ExcerptId {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.name)
    }
}

/// The excerpts of one finding, as ariadne reads them.
struct Excerpts(Vec<(ExcerptId, Source<String>)>);

impl Cache<ExcerptId> for Excerpts {
    type Storage = String;

    fn fetch(&mut self, id: &ExcerptId) -> Result<&Source<String>, impl std::fmt::Debug> {
        self.0
            .iter()
            .find(|(i, _)| i == id)
            .map(|(_, s)| s)
            .ok_or("no such excerpt")
    }

    fn display<'a>(&self, id: &'a ExcerptId) -> Option<impl std::fmt::Display + 'a> {
        Some(id.name.clone())
    }
}

/// Writes every diagnostic through ariadne, then the summary line. Each
/// finding shows an excerpt of its own (see [`crate::excerpt`]), so the
/// cost is linear in the findings, however long the lines are.
pub fn human(
    out: &mut dyn Write,
    color: bool,
    ws: &Workspace,
    diagnostics: &[Diagnostic],
    files: usize,
) -> std::io::Result<()> {
    for d in diagnostics {
        let mut spans: Vec<(guardband_model::FileId, std::ops::Range<usize>)> =
            vec![(d.file, d.span.clone())];
        spans.extend(d.labels.iter().map(|l| (l.file, l.span.clone())));
        let excerpts = excerpt::excerpts(&|f| ws.file(f), &spans);
        let id = |file: guardband_model::FileId, span: &std::ops::Range<usize>| {
            let (a, start) = excerpt::locate(&excerpts, file, span.start).unwrap_or((0, 0));
            let end = excerpt::locate(&excerpts, file, span.end)
                .filter(|(b, _)| *b == a)
                .map(|(_, e)| e)
                .unwrap_or(start);
            let name = ws.file(file).display.clone();
            (ExcerptId { name, index: a }, start..end.max(start))
        };
        let (kind, tint) = match d.severity {
            Severity::Error => (ReportKind::Error, Color::Red),
            Severity::Warning => (ReportKind::Warning, Color::Yellow),
            Severity::Info => (ReportKind::Advice, Color::Cyan),
        };
        let mut report = Report::build(kind, id(d.file, &d.span))
            .with_config(
                Config::default()
                    .with_color(color)
                    .with_index_type(IndexType::Byte),
            )
            .with_code(d.rule)
            .with_message(&d.message);
        if d.labels.is_empty() {
            report = report.with_label(Label::new(id(d.file, &d.span)).with_color(tint));
        }
        for (i, l) in d.labels.iter().enumerate() {
            let c = if i == 0 { tint } else { Color::Blue };
            report = report.with_label(
                Label::new(id(l.file, &l.span))
                    .with_message(&l.message)
                    .with_color(c)
                    .with_order(i as i32),
            );
        }
        if let Some(h) = &d.help {
            report = report.with_help(h);
        }
        let mut cache = Excerpts(
            excerpts
                .iter()
                .enumerate()
                .map(|(index, e)| {
                    let name = ws.file(e.file).display.clone();
                    // ariadne 0.5 adds a display line offset to the header
                    // but not to the margin, so the lines before the excerpt
                    // are given as empty lines instead.
                    let mut text = "\n".repeat(e.first_line as usize);
                    text.push_str(&excerpt::plain_line_ends(&e.text));
                    (ExcerptId { name, index }, Source::from(text))
                })
                .collect(),
        );
        report.finish().write(&mut cache, &mut *out)?;
    }
    writeln!(out, "{}", summary(diagnostics, files))?;
    out.flush()
}

/// A place in a file as the JSON output shows it (1-based, code points).
/// The fields of these types are in sorted order, as `serde_json` prints a
/// map, so that the streamed text equals the pretty form of the document.
#[derive(serde::Serialize)]
struct Position {
    column: u64,
    line: u64,
}

#[derive(serde::Serialize)]
struct Range {
    end: Position,
    start: Position,
}

#[derive(serde::Serialize)]
struct JsonLabel<'a> {
    file: &'a str,
    message: &'a str,
    range: Range,
}

/// One finding as its JSON object, borrowing its texts.
#[derive(serde::Serialize)]
struct JsonItem<'a> {
    file: &'a str,
    help: Option<&'a str>,
    labels: Vec<JsonLabel<'a>>,
    message: &'a str,
    range: Range,
    rule: &'a str,
    severity: &'a str,
}

fn position(ws: &Workspace, file: guardband_model::FileId, offset: usize) -> Position {
    let p = ws.file(file).line_index().line_col(offset);
    Position {
        column: u64::from(p.chars) + 1,
        line: u64::from(p.line) + 1,
    }
}

fn range(ws: &Workspace, file: guardband_model::FileId, span: &std::ops::Range<usize>) -> Range {
    Range {
        end: position(ws, file, span.end),
        start: position(ws, file, span.start),
    }
}

fn json_item<'a>(ws: &'a Workspace, d: &'a Diagnostic) -> JsonItem<'a> {
    JsonItem {
        file: &ws.file(d.file).display,
        help: d.help.as_deref(),
        labels: d
            .labels
            .iter()
            .map(|l| JsonLabel {
                file: &ws.file(l.file).display,
                message: &l.message,
                range: range(ws, l.file, &l.span),
            })
            .collect(),
        message: &d.message,
        range: range(ws, d.file, &d.span),
        rule: d.rule,
        severity: d.severity.as_str(),
    }
}

/// Writes `value` in `serde_json`'s pretty form with every line indented by
/// `indent`, as it appears nested in a larger pretty-printed document;
/// `buffer` is scratch space, reused from one value to the next.
pub fn write_nested(
    out: &mut impl Write,
    buffer: &mut Vec<u8>,
    value: &impl serde::Serialize,
    indent: &[u8],
) -> std::io::Result<()> {
    buffer.clear();
    serde_json::to_writer_pretty(&mut *buffer, value)?;
    for (j, line) in buffer.split(|&b| b == b'\n').enumerate() {
        if j > 0 {
            out.write_all(b"\n")?;
        }
        out.write_all(indent)?;
        out.write_all(line)?;
    }
    Ok(())
}

/// Writes the JSON document of a check (schema in the README) and a
/// newline, one finding at a time through a buffer: memory stays constant
/// per finding however many there are. The text is the same as
/// `serde_json`'s pretty form of the whole document (keys in sorted order,
/// two-space indent); a test holds the two together.
pub fn json(
    out: &mut dyn Write,
    ws: &Workspace,
    diagnostics: &[Diagnostic],
    files: usize,
) -> std::io::Result<()> {
    let mut out = std::io::BufWriter::with_capacity(1 << 16, out);
    out.write_all(b"{\n  \"diagnostics\": [")?;
    // One buffer for every finding's text.
    let mut text = Vec::with_capacity(4096);
    for (i, d) in diagnostics.iter().enumerate() {
        out.write_all(if i == 0 { b"\n" } else { b",\n" })?;
        write_nested(&mut out, &mut text, &json_item(ws, d), b"    ")?;
    }
    if !diagnostics.is_empty() {
        out.write_all(b"\n  ")?;
    }
    write!(
        out,
        "],\n  \"files_checked\": {files},\n  \"version\": 1\n}}\n"
    )?;
    out.flush()
}
