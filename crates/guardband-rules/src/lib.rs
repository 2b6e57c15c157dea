//! Protection analysis and lint rules for guardband.
//!
//! From the evaluated model, derive each regulator's limit windows
//! (worst-case and statistical), worst currents, conductor ratings, startup
//! and short-circuit figures, then run the lint rules over them. Rules never
//! parse and never print; they push diagnostics.

pub mod batch;
pub mod compare;
pub mod config;
pub mod context;
pub mod derive;
pub mod format;
pub mod physics;
mod registry;
mod rules;
pub mod suppress;

pub use batch::{Findings, check_each};
pub use config::{Config, Settings};
pub use derive::{Derived, derive};
pub use registry::{CAUTION, RuleInfo, registry};

use guardband_model::{Diagnostic, Model, Severity, Workspace};
use std::path::Path;

/// Everything one check of a workspace produced: the CLI prints it, the
/// language server publishes it and answers hovers from it. Both build it
/// with [`check_workspace`], so they can never disagree.
pub struct Checked {
    pub ws: Workspace,
    pub config: Config,
    pub model: Model,
    /// One entry per regulator, in the order of [`Model::regulators`].
    pub derived: Vec<Derived>,
    /// Every finding, spans normalised, sorted by file, position and rule.
    pub diagnostics: Vec<Diagnostic>,
}

impl Checked {
    /// Number of findings of one severity.
    pub fn count(&self, severity: Severity) -> usize {
        self.diagnostics
            .iter()
            .filter(|d| d.severity == severity)
            .count()
    }

    /// The derivation of the regulator with this node id.
    pub fn derived_for(&self, regulator: guardband_model::NodeId) -> Option<&Derived> {
        self.model
            .regulators()
            .position(|r| r.id == regulator)
            .and_then(|i| self.derived.get(i))
    }
}

/// The whole check: load `entries` and their imports under `root` through
/// `read`, read `guardband.toml`, build and evaluate the model, derive, run
/// the rules. Unreadable entry files are an error naming the path.
pub fn check_workspace(
    root: &Path,
    entries: &[std::path::PathBuf],
    read: &guardband_model::Read,
) -> Result<Checked, (std::path::PathBuf, std::io::Error)> {
    let root = root.canonicalize().map_err(|e| (root.to_path_buf(), e))?;
    check_with_settings(&root, entries, read, &Settings::read(&root, read))
}

/// [`check_workspace`] with `guardband.toml` already read from the
/// canonical `root`, for running many checks with one configuration.
pub fn check_with_settings(
    root: &Path,
    entries: &[std::path::PathBuf],
    read: &guardband_model::Read,
    settings: &Settings,
) -> Result<Checked, (std::path::PathBuf, std::io::Error)> {
    let mut diagnostics = Vec::new();
    let mut ws =
        guardband_model::load_with(root, entries, read, settings.limits(), &mut diagnostics)?;
    let (config, config_diagnostics) = settings.apply(&mut ws);
    diagnostics.extend(config_diagnostics);
    let (model, model_diagnostics) = guardband_model::check_with(&ws, &config.limits);
    diagnostics.extend(model_diagnostics);
    let derived: Vec<Derived> = model
        .regulators()
        .map(|r| derive(&model, r, &config))
        .collect();
    let mut diagnostics = run_rules(&ws, &model, &config, &derived, diagnostics);
    ws.normalize_spans(&mut diagnostics);
    sort_diagnostics(&ws, &mut diagnostics);
    let diagnostics =
        guardband_model::limits::cap_findings(diagnostics, config.limits.max_findings_per_rule);
    Ok(Checked {
        ws,
        config,
        model,
        derived,
        diagnostics,
    })
}

/// The order every front end shows findings in: by file (display path),
/// position, rule, then message (so that equal findings sit together).
pub fn sort_diagnostics(ws: &Workspace, diagnostics: &mut [Diagnostic]) {
    diagnostics.sort_by(|a, b| {
        (
            ws.file(a.file).display.as_str(),
            a.span.start,
            a.span.end,
            a.rule,
            &a.message,
        )
            .cmp(&(
                ws.file(b.file).display.as_str(),
                b.span.start,
                b.span.end,
                b.rule,
                &b.message,
            ))
    });
}

/// Runs every enabled rule and applies waivers. `diagnostics` holds what the
/// model found already; the lint findings and waiver problems are appended.
pub fn analyse(
    ws: &Workspace,
    model: &Model,
    config: &Config,
    diagnostics: Vec<Diagnostic>,
) -> Vec<Diagnostic> {
    let derived: Vec<Derived> = model
        .regulators()
        .map(|r| derive(model, r, config))
        .collect();
    run_rules(ws, model, config, &derived, diagnostics)
}

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

fn run_rules(
    ws: &Workspace,
    model: &Model,
    config: &Config,
    derived: &[Derived],
    mut diagnostics: Vec<Diagnostic>,
) -> Vec<Diagnostic> {
    let ctx = context::Context {
        ws,
        model,
        config,
        derived,
    };
    let mut findings = Vec::new();
    for rule in registry() {
        let overridden = config.severities.get(rule.name).copied();
        if overridden == Some(None) || (overridden.is_none() && rule.default_severity.is_none()) {
            continue;
        }
        let mut found = Vec::new();
        (rule.check)(&ctx, &mut found);
        for mut d in found {
            if let Some(Some(sev)) = overridden {
                d.severity = sev;
            }
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
