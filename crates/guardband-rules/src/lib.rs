//! Protection analysis and lint rules for guardband.
//!
//! From the evaluated model, derive each regulator's limit windows
//! (worst-case and statistical), the currents its protections let through,
//! conductor ratings, startup and heat figures, then run the lint rules
//! over them and apply waivers. Rules never parse, never print and never
//! read a file: they read the model, the derivations and plain
//! [`Options`], and push diagnostics. The driver (`guardband-check`) loads
//! files and configuration and calls [`derive`] and [`lint`].

pub mod compare;
pub mod context;
pub mod derive;
pub mod options;
pub mod physics;
mod registry;
mod rules;
pub mod show;
pub mod suppress;

pub use derive::{Derived, derive};
pub use options::Options;
pub use registry::{CAUTION, RuleInfo, registry};

use guardband_model::{Diagnostic, Model, Workspace};

/// The spans of the top-level items that hold a syntax error.
fn guessed_items(ws: &Workspace) -> Vec<(guardband_model::FileId, std::ops::Range<usize>)> {
    let mut out = Vec::new();
    for file in &ws.files {
        if file.parse.errors.is_empty() {
            continue;
        }
        for item in &file.parse.file.items {
            let span = match item {
                guardband_syntax::Item::Block(b) => b.span.clone(),
                guardband_syntax::Item::Error(s) => s.clone(),
                guardband_syntax::Item::Use(_) => continue,
            };
            if file
                .parse
                .errors
                .iter()
                .any(|e| span.start <= e.span.start && e.span.start <= span.end)
            {
                out.push((file.id, span));
            }
        }
    }
    out
}

/// Runs every enabled rule over the derivations (one per regulator, in the
/// order of [`Model::regulators`]) and applies waivers. `diagnostics` holds
/// what the model found already; the lint findings and waiver problems are
/// appended. Each finding carries its rule's name and severity as the
/// registry declares them (or as `options` override).
pub fn lint(
    ws: &Workspace,
    model: &Model,
    options: &Options,
    derived: &[Derived],
    rails: &[derive::rail::Rail],
    mut diagnostics: Vec<Diagnostic>,
) -> Vec<Diagnostic> {
    let mut findings = Vec::new();
    for rule in registry() {
        let severity = match options.severities.get(rule.name) {
            Some(Some(s)) => *s,
            Some(None) => continue,
            None => match rule.default_severity {
                Some(s) => s,
                None => continue,
            },
        };
        let ctx = context::Context {
            ws,
            model,
            options,
            derived,
            rails,
            rule,
        };
        let mut found = Vec::new();
        (rule.check)(&ctx, &mut found);
        for mut d in found {
            d.rule = rule.name;
            d.severity = severity;
            findings.push(d);
        }
    }
    // Where recovery from a syntax error had to guess at the tree, lint
    // findings would be claims about text the user did not write.
    let guessed = guessed_items(ws);
    findings.retain(|d| {
        !guessed
            .iter()
            .any(|(f, s)| *f == d.file && s.start <= d.span.start && d.span.start <= s.end)
    });
    let mut waivers = suppress::collect(ws, &mut diagnostics);
    diagnostics.extend(suppress::apply(&mut waivers, findings));
    diagnostics.extend(suppress::unused(&waivers));
    diagnostics
}
