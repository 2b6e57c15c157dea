//! Workflow-command annotations (`::error file=...::message`) for CI logs
//! that turn them into inline comments on a pull request.

use guardband_model::{Diagnostic, Severity, Workspace};
use std::io::Write;

/// How many annotations of one kind a pull-request page shows per step;
/// the rest are only in the log (the host's documented limit at the time
/// of writing, from memory: ten of each kind).
pub const SHOWN_PER_KIND: usize = 10;

/// Escapes the message part of a workflow command.
fn escape_data(s: &str) -> String {
    s.replace('%', "%25")
        .replace('\r', "%0D")
        .replace('\n', "%0A")
}

/// Escapes a property value (also `:` and `,`, which end a property).
fn escape_property(s: &str) -> String {
    escape_data(s).replace(':', "%3A").replace(',', "%2C")
}

fn kind(s: Severity) -> &'static str {
    match s {
        Severity::Error => "error",
        Severity::Warning => "warning",
        Severity::Info => "notice",
    }
}

/// Writes one annotation per finding, and a note when more findings of a
/// kind exist than the page shows. Files are named relative to `base`
/// (the repository root, see [`crate::repo::base`]).
pub fn annotations(
    out: &mut dyn Write,
    ws: &Workspace,
    diagnostics: &[Diagnostic],
    base: &std::path::Path,
) -> std::io::Result<()> {
    for d in diagnostics {
        let file = ws.file(d.file);
        let a = file.line_index().line_col(d.span.start);
        let b = file.line_index().line_col(d.span.end);
        let mut message = d.message.clone();
        if let Some(help) = &d.help {
            message.push_str("\nhelp: ");
            message.push_str(help);
        }
        writeln!(
            out,
            "::{} file={},line={},col={},endLine={},endColumn={},title={}::{}",
            kind(d.severity),
            escape_property(&crate::repo::annotation_path(base, &file.path)),
            a.line + 1,
            a.chars + 1,
            b.line + 1,
            b.chars + 1,
            escape_property(&format!("guardband {}", d.rule)),
            escape_data(&message)
        )?;
    }
    for severity in [Severity::Error, Severity::Warning, Severity::Info] {
        let n = diagnostics
            .iter()
            .filter(|d| d.severity == severity)
            .count();
        if n > SHOWN_PER_KIND {
            writeln!(
                out,
                "guardband: printed {n} {} annotations; the pull-request page shows about {SHOWN_PER_KIND} of each kind, the log above has all of them",
                kind(severity)
            )?;
        }
    }
    out.flush()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn escapes_as_workflow_commands_require() {
        assert_eq!(escape_data("50% of\nload"), "50%25 of%0Aload");
        assert_eq!(escape_property("a:b,c"), "a%3Ab%2Cc");
    }
}
