//! The checker's findings as LSP diagnostics: the rule name is the code,
//! secondary labels are related information, the help is appended.

use crate::encoding::Encoding;
use crate::engine::Analysis;
use guardband_model::{FileId, Severity};
use tower_lsp_server::ls_types::{
    Diagnostic, DiagnosticRelatedInformation, DiagnosticSeverity, Location, NumberOrString,
};

/// The diagnostics of one file of an analysis.
pub fn convert(
    analysis: &Analysis,
    file: FileId,
    encoding: Encoding,
    related_information: bool,
) -> Vec<Diagnostic> {
    let ws = &analysis.checked.ws;
    // A file without findings needs no line index (most files, most edits).
    if !analysis.checked.diagnostics.iter().any(|d| d.file == file) {
        return Vec::new();
    }
    let index = ws.file(file).line_index();
    analysis
        .checked
        .diagnostics
        .iter()
        .filter(|d| d.file == file)
        .map(|d| {
            let related: Vec<DiagnosticRelatedInformation> = d
                .labels
                .iter()
                .filter(|l| !(l.file == d.file && l.span == d.span))
                .filter_map(|l| {
                    Some(DiagnosticRelatedInformation {
                        location: Location::new(
                            analysis.uri(l.file)?,
                            encoding.range(ws.file(l.file).line_index(), &l.span),
                        ),
                        message: l.message.clone(),
                    })
                })
                .collect();
            let mut message = d.message.clone();
            if let Some(help) = &d.help {
                message.push_str("\nhelp: ");
                message.push_str(help);
            }
            Diagnostic {
                range: encoding.range(index, &d.span),
                severity: Some(severity(d.severity)),
                code: Some(NumberOrString::String(d.rule.to_string())),
                source: Some("guardband".into()),
                message,
                related_information: (related_information && !related.is_empty())
                    .then_some(related),
                ..Default::default()
            }
        })
        .collect()
}

/// The LSP severity of a finding.
pub fn severity(s: Severity) -> DiagnosticSeverity {
    match s {
        Severity::Error => DiagnosticSeverity::ERROR,
        Severity::Warning => DiagnosticSeverity::WARNING,
        Severity::Info => DiagnosticSeverity::INFORMATION,
    }
}
