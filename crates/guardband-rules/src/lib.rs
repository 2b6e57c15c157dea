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
mod corner_findings;
pub mod derive;
pub mod evidence;
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

/// What the rules run over: the derivations of one check.
#[derive(Clone, Copy)]
pub struct Figures<'a> {
    /// One per regulator, in the order of [`Model::regulators`].
    pub derived: &'a [Derived],
    /// One per regulator and named corner, in the order of [`Model::variants`].
    pub corners: &'a [Derived],
    /// Every shared `supply` item with what draws from it.
    pub rails: &'a [derive::rail::Rail],
}

/// Runs every enabled rule over the derivations (one per regulator, in the
/// order of [`Model::regulators`]; `corners` holds one per regulator and
/// named corner, in the order of [`Model::variants`]) and applies waivers.
/// A regulator with corners is checked at each of its corners instead of
/// once over its whole box, and what fails at a corner names it
/// ([`corner_findings`]). `diagnostics` holds what the model found
/// already; the lint findings and waiver problems are appended. Each
/// finding carries its rule's name and severity as the registry declares
/// them (or as `options` override).
pub fn lint(
    ws: &Workspace,
    model: &Model,
    options: &Options,
    figures: Figures,
    evidence: &evidence::Evidence,
    mut diagnostics: Vec<Diagnostic>,
) -> Vec<Diagnostic> {
    let Figures {
        derived,
        corners,
        rails,
    } = figures;
    let mut findings = Vec::new();
    let plain_run = |derived: &[Derived], variants, findings: &mut Vec<Diagnostic>| {
        let run = Run {
            ws,
            model,
            options,
            derived,
            rails,
            variants,
            corner_derived: corners,
            evidence,
        };
        run_rules(&run, findings)
    };
    if model.variants.is_empty() {
        plain_run(derived, &[], &mut findings);
    } else {
        let with_corners: std::collections::HashSet<_> =
            model.variants.iter().map(|v| v.regulator).collect();
        let plain: Vec<Derived> = derived
            .iter()
            .filter(|d| !with_corners.contains(&d.regulator))
            .cloned()
            .collect();
        plain_run(&plain, &model.variants, &mut findings);
        let mut at_corners = Vec::with_capacity(corners.len());
        for d in corners {
            let mut found = Vec::new();
            let run = Run {
                ws,
                model,
                options,
                derived: std::slice::from_ref(d),
                rails: &[],
                variants: &[],
                corner_derived: &[],
                evidence,
            };
            run_rules(&run, &mut found);
            at_corners.push((d.regulator, found));
        }
        findings.extend(corner_findings::merge(model, at_corners));
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

/// One run of every enabled rule over `derived` (and `rails` and
/// `variants`, for the rules about the whole model), stamping each finding
/// with its rule and severity.
/// What one run of every rule sees (see [`context::Context`]).
struct Run<'a> {
    ws: &'a Workspace,
    model: &'a Model,
    options: &'a Options,
    derived: &'a [Derived],
    rails: &'a [derive::rail::Rail],
    variants: &'a [guardband_model::Variant],
    corner_derived: &'a [Derived],
    evidence: &'a evidence::Evidence,
}

fn run_rules(run: &Run, findings: &mut Vec<Diagnostic>) {
    let options = run.options;
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
            ws: run.ws,
            model: run.model,
            options,
            derived: run.derived,
            rails: run.rails,
            variants: run.variants,
            corner_derived: run.corner_derived,
            evidence: run.evidence,
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
}
