//! The diagnostic type shared by the model, the rules and the front ends.

use guardband_syntax::Span;

/// Index of a loaded file in the [`crate::Workspace`].
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct FileId(pub u32);

/// How serious a diagnostic is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Severity {
    Info,
    Warning,
    Error,
}

impl Severity {
    /// The lower-case name used in output and configuration.
    pub fn as_str(self) -> &'static str {
        match self {
            Severity::Info => "info",
            Severity::Warning => "warning",
            Severity::Error => "error",
        }
    }
}

/// A secondary location with a message.
#[derive(Debug, Clone, PartialEq)]
pub struct Label {
    pub file: FileId,
    pub span: Span,
    pub message: String,
}

/// One finding: which rule, where, what, and how to fix it. Positions are byte spans.
#[derive(Debug, Clone, PartialEq)]
pub struct Diagnostic {
    /// Stable kebab-case rule name (`unit-mismatch`, `limit-within-load`, ...).
    pub rule: &'static str,
    pub severity: Severity,
    pub file: FileId,
    pub span: Span,
    pub message: String,
    /// The primary label (under `span`) comes first.
    pub labels: Vec<Label>,
    pub help: Option<String>,
    /// The edit the rule knows would fix this finding, if any: editors offer
    /// it as a code action keyed on this, never on the message's wording.
    pub remedy: Option<Remedy>,
}

/// A fix a rule can name for its finding, applied by the language server's
/// code actions. The finding's span says where it applies.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Remedy {
    /// Force the output (the `force` under the span) with a voltage below regulation.
    ForceBelowRegulation,
    /// Set the analysis' `break_at` to the pass gate.
    BreakAtPassGate,
    /// Set the analysis' `clamp_side` to the driving side.
    ClampOnDrivingSide,
}

impl Diagnostic {
    /// An error with a primary label at `span`.
    pub fn error(rule: &'static str, file: FileId, span: Span, message: impl Into<String>) -> Self {
        Diagnostic {
            rule,
            severity: Severity::Error,
            file,
            span,
            message: message.into(),
            labels: Vec::new(),
            help: None,
            remedy: None,
        }
    }

    /// Same as [`Diagnostic::error`] with another severity.
    pub fn with_severity(mut self, severity: Severity) -> Self {
        self.severity = severity;
        self
    }

    /// Adds the label under the primary span.
    pub fn primary(mut self, message: impl Into<String>) -> Self {
        let label = Label {
            file: self.file,
            span: self.span.clone(),
            message: message.into(),
        };
        self.labels.insert(0, label);
        self
    }

    /// Adds a secondary label.
    pub fn label(mut self, file: FileId, span: Span, message: impl Into<String>) -> Self {
        self.labels.push(Label {
            file,
            span,
            message: message.into(),
        });
        self
    }

    /// Names the fix a code action can apply.
    pub fn remedy(mut self, remedy: Remedy) -> Self {
        self.remedy = Some(remedy);
        self
    }

    /// Sets the help text.
    pub fn help(mut self, help: impl Into<String>) -> Self {
        self.help = Some(help.into());
        self
    }
}

/// The language's own diagnostics (not lint rules), with what each means.
/// SARIF output lists them as rules; the language reference lists the same
/// (a test keeps the two in step).
pub const LANGUAGE_DIAGNOSTICS: &[(&str, &str)] = &[
    (
        "syntax",
        "the text does not parse (every error in a file is reported)",
    ),
    (
        "encoding",
        "the file is not UTF-8 text (invalid bytes, or a NUL byte)",
    ),
    (
        "unit-mismatch",
        "a value of the wrong dimension, or mixed dimensions in arithmetic",
    ),
    ("unknown-unit", "a unit spelling that is not in the table"),
    (
        "unknown-field",
        "a field, block or item keyword the block does not have",
    ),
    ("unknown-name", "a reference that names nothing"),
    ("missing-name", "a block that needs a name has none"),
    ("duplicate-field", "a field or unnamed block given twice"),
    (
        "duplicate-name",
        "two named blocks or items with the same name",
    ),
    (
        "invalid-value",
        "a bad choice, a backwards range, division by a range with zero, ...",
    ),
    (
        "cycle",
        "a value that depends on itself, or files that import each other",
    ),
    ("import-not-found", "a `use` path that does not exist"),
    (
        "import-outside-workspace",
        "a `use` path that leaves the workspace root",
    ),
    ("config", "a problem in `guardband.toml`"),
    (
        "evidence",
        "a record of a results file that cannot be read (a missing column, a number that does not parse, a unit that does not fit the quantity): it is left out",
    ),
    (
        "limit",
        "a file, nesting, import or evaluation limit was reached (see `[limits]`)",
    ),
    ("invalid-suppression", "a malformed waiver"),
    ("unused-suppression", "a waiver that waives nothing"),
];
