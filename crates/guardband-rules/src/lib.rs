//! Protection analysis and lint rules for guardband.
//!
//! From the evaluated model, derive each regulator's limit windows
//! (worst-case and statistical), worst currents, conductor ratings, startup
//! and short-circuit figures, then run the lint rules over them. Rules never
//! parse and never print; they push diagnostics.

pub mod config;
pub mod context;
pub mod derive;
pub mod format;
pub mod physics;
mod registry;
mod rules;
pub mod suppress;

pub use config::Config;
pub use derive::{Derived, derive};
pub use registry::{CAUTION, RuleInfo, registry};

use guardband_model::{Diagnostic, Model, Workspace};

/// Runs every enabled rule and applies waivers. `diagnostics` holds what the
/// model found already; the lint findings and waiver problems are appended.
pub fn analyse(
    ws: &Workspace,
    model: &Model,
    config: &Config,
    mut diagnostics: Vec<Diagnostic>,
) -> Vec<Diagnostic> {
    let derived = model
        .regulators()
        .map(|r| derive(model, r, config))
        .collect();
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
    let mut waivers = suppress::collect(ws, &mut diagnostics);
    diagnostics.extend(suppress::apply(ws, &mut waivers, findings));
    diagnostics.extend(suppress::unused(&waivers));
    diagnostics
}
