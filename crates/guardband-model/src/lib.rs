//! The model of a guardband workspace: files loaded and imported, names
//! resolved, every value evaluated to min / nominal / max with the stated
//! tolerances it depends on, and the diagnostics found on the way.
//!
//! The model never sees an LSP position or a terminal; spans are bytes.

mod build;
mod circuit;
mod corners;
mod diagnostic;
mod eval;
pub mod form;
pub mod limits;
pub mod model;
mod read;
pub mod schema;
mod suggest;
pub mod value;
mod workspace;

pub use diagnostic::{Diagnostic, FileId, LANGUAGE_DIAGNOSTICS, Label, Remedy, Severity};
pub use eval::visible_items;
pub use limits::Limits;
pub use model::{
    CornerOf, Field, FieldValue, Model, Node, NodeId, Reference, Restated, Symbol, Variant,
};
pub use read::{is_link_loop, read_source};
pub use schema::BlockKind;
pub use suggest::{did_you_mean, edit_distance};
pub use value::{Bounds, Corner, SourceId, Spread, Term, ToleranceSource, Value, ValueError};
pub use workspace::{
    Read, SharedParses, SourceFile, Workspace, decode, load, load_shared, load_with, normalize,
};

use guardband_syntax::SyntaxError;

/// Turns a syntax error into a diagnostic of rule `syntax`.
pub fn syntax_diagnostic(file: FileId, err: &SyntaxError) -> Diagnostic {
    Diagnostic::error("syntax", file, err.span.clone(), err.message.clone())
        .primary(err.label.clone())
}

/// Builds and evaluates the model of a loaded workspace.
///
/// Returns the model and every diagnostic: syntax errors of each file first,
/// then schema and evaluation problems. Never panics on any input.
pub fn check(ws: &Workspace) -> (Model, Vec<Diagnostic>) {
    check_with(ws, &Limits::default())
}

/// Like [`check`], within `limits` (evaluation steps).
pub fn check_with(ws: &Workspace, limits: &Limits) -> (Model, Vec<Diagnostic>) {
    let mut diagnostics = Vec::new();
    for file in &ws.files {
        diagnostics.extend(
            file.parse
                .errors
                .iter()
                .map(|e| syntax_diagnostic(file.id, e)),
        );
    }
    let mut model = build::build(ws, &mut diagnostics);
    eval::evaluate(ws, &mut model, &mut diagnostics, limits.max_eval_steps);
    circuit::check_ports(&model, &mut diagnostics);
    if !model.variants.is_empty() {
        corners::settle(&mut model);
        corners::drop_repeats(&mut diagnostics);
    }
    (model, diagnostics)
}
