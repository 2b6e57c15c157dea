//! The guardband driver: everything between files on disk (or in an
//! editor) and the rules. It finds the workspace root, reads
//! `guardband.toml`, loads the entry files and their imports, builds and
//! evaluates the model, runs the derivations and the lint rules, and sorts
//! and caps the findings. The command line, the language server, the report
//! and the benchmarks all check through here, so they cannot disagree.

pub mod batch;
pub mod config;
pub mod drawers;
pub mod evidence;
mod root;

pub use batch::{Findings, check_each, check_each_with_evidence};
pub use config::{Config, ConfigFile};
pub use root::workspace_root;

use guardband_model::{Diagnostic, Model, Severity, Workspace};
use guardband_rules::Derived;
use std::path::{Path, PathBuf};

/// Stack of every thread that checks: evaluation and lowering recurse over
/// trees whose depth the parser bounds (`[limits] max_nesting`); this is
/// room for the deepest tree the hard limit allows, with margin.
pub const STACK_BYTES: usize = 256 * 1024 * 1024;

/// Everything one check of a workspace produced: the CLI prints it, the
/// language server publishes it and answers hovers from it. Both build it
/// with [`check_workspace`], so they can never disagree.
pub struct Checked {
    pub ws: Workspace,
    pub config: Config,
    pub model: Model,
    /// One entry per regulator, in the order of [`Model::regulators`].
    pub derived: Vec<Derived>,
    /// One entry per regulator and named corner, in the order of
    /// [`Model::variants`] (so by node id): each derived at its corner.
    pub corners: Vec<Derived>,
    /// Every `supply` item with the regulators drawing from it and its droop.
    pub rails: Vec<guardband_rules::derive::rail::Rail>,
    /// Every finding, spans normalised, sorted by [`sort_diagnostics`].
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
        guardband_rules::derive::derived_of(&self.derived, regulator)
    }

    /// The derivations of a regulator at each of its named corners, with
    /// each corner's block, in the order written (empty without corners).
    pub fn corners_of(
        &self,
        regulator: guardband_model::NodeId,
    ) -> Vec<(&guardband_model::Node, &Derived)> {
        self.model
            .variants_of(regulator)
            .filter_map(|v| {
                let d = guardband_rules::derive::derived_of(&self.corners, v.root)?;
                Some((self.model.node(v.corner), d))
            })
            .collect()
    }
}

/// The whole check: load `entries` and their imports under `root` through
/// `read`, read `guardband.toml`, build and evaluate the model, derive, run
/// the rules. Unreadable entry files are an error naming the path.
pub fn check_workspace(
    root: &Path,
    entries: &[PathBuf],
    read: &guardband_model::Read,
) -> Result<Checked, (PathBuf, std::io::Error)> {
    let root = root.canonicalize().map_err(|e| (root.to_path_buf(), e))?;
    check_with_config_file(&root, entries, read, &ConfigFile::read(&root, read))
}

/// [`check_workspace`] with results files besides those `guardband.toml`
/// names (the command line's `--evidence`), for the report.
pub fn check_workspace_with_evidence(
    root: &Path,
    entries: &[PathBuf],
    read: &guardband_model::Read,
    evidence: &[PathBuf],
) -> Result<Checked, (PathBuf, std::io::Error)> {
    let root = root.canonicalize().map_err(|e| (root.to_path_buf(), e))?;
    let mut config_file = ConfigFile::read(&root, read);
    for path in evidence {
        config_file
            .add_evidence(path, read)
            .map_err(|e| (path.clone(), e))?;
    }
    check_with_config_file(&root, entries, read, &config_file)
}

/// [`check_workspace`] with `guardband.toml` already read from the
/// canonical `root`, for running many checks with one configuration.
pub fn check_with_config_file(
    root: &Path,
    entries: &[PathBuf],
    read: &guardband_model::Read,
    config_file: &ConfigFile,
) -> Result<Checked, (PathBuf, std::io::Error)> {
    let mut diagnostics = Vec::new();
    let mut ws = guardband_model::load_shared(
        root,
        entries,
        read,
        config_file.limits(),
        config_file.shared_parses(),
        &mut diagnostics,
    )?;
    let (config, config_diagnostics) = config_file.apply(&mut ws);
    diagnostics.extend(config_diagnostics);
    let (model, model_diagnostics) = guardband_model::check_with(&ws, &config.limits);
    diagnostics.extend(model_diagnostics);
    let derived: Vec<Derived> = model
        .regulators()
        .map(|r| guardband_rules::derive(&model, r, &config.options))
        .collect();
    let corners: Vec<Derived> = model
        .variants
        .iter()
        .map(|v| guardband_rules::derive(&model, model.node(v.root), &config.options))
        .collect();
    let rails = guardband_rules::derive::rail::rails(&model, &derived);
    let mut config = config;
    if config.evidence.given || !config.evidence.measurements.is_empty() {
        config.evidence.netlists = netlist_hashes(&ws, &model, read, config.limits.max_file_bytes);
    }
    let mut diagnostics = guardband_rules::lint(
        &ws,
        &model,
        &config.options,
        guardband_rules::Figures {
            derived: &derived,
            corners: &corners,
            rails: &rails,
        },
        &config.evidence,
        diagnostics,
    );
    ws.normalize_spans(&mut diagnostics);
    sort_diagnostics(&ws, &mut diagnostics);
    let diagnostics =
        guardband_model::limits::cap_findings(diagnostics, config.limits.max_findings_per_rule);
    Ok(Checked {
        ws,
        config,
        model,
        derived,
        corners,
        rails,
        diagnostics,
    })
}

/// The file a `circuit` block's `netlist` names: relative to its spec file.
pub fn netlist_path(ws: &Workspace, circuit: &guardband_model::Node) -> Option<PathBuf> {
    let written = circuit.text("netlist")?;
    let spec = &ws.file(circuit.file).path;
    Some(spec.parent().unwrap_or(Path::new("")).join(written))
}

/// The content hash of every `circuit` block's netlist, or why it could
/// not be read, for `evidence-stale`.
fn netlist_hashes(
    ws: &Workspace,
    model: &Model,
    read: &guardband_model::Read,
    limit: usize,
) -> std::collections::HashMap<guardband_model::NodeId, Result<String, String>> {
    let mut out = std::collections::HashMap::new();
    for reg in model.regulators() {
        let Some(circuit) = model.child(reg, guardband_model::BlockKind::Circuit) else {
            continue;
        };
        let Some(path) = netlist_path(ws, circuit) else {
            continue;
        };
        let hash = read(&path, limit)
            .map(|bytes| guardband_rules::evidence::content_hash(&bytes))
            .map_err(|e| format!("{} cannot be read: {e}", path.display()));
        out.insert(circuit.id, hash);
    }
    out
}

/// [`check_workspace`] of `entries` and of every other spec file under
/// `root` that may draw from a `supply` item one of their regulators draws
/// from (repeated while a file so found leads to a further supply), so a
/// shared rail's droop counts every regulator on it. Findings in the added
/// files are in the result too; front ends show those of the files they
/// were asked about.
pub fn check_with_co_drawers(
    root: &Path,
    entries: &[PathBuf],
    read: &guardband_model::Read,
) -> Result<Checked, (PathBuf, std::io::Error)> {
    let root = root.canonicalize().map_err(|e| (root.to_path_buf(), e))?;
    let config_file = ConfigFile::read(&root, read);
    widened(&root, entries, read, &config_file)
}

/// [`check_with_co_drawers`] with the configuration read already.
pub(crate) fn widened(
    root: &Path,
    entries: &[PathBuf],
    read: &guardband_model::Read,
    config_file: &ConfigFile,
) -> Result<Checked, (PathBuf, std::io::Error)> {
    let mut checked = check_with_config_file(root, entries, read, config_file)?;
    let mut all = entries.to_vec();
    for _ in 0..8 {
        let names: Vec<String> = checked
            .rails
            .iter()
            .filter(|r| !r.drawers.is_empty())
            .map(|r| checked.model.node(r.supply).key().to_string())
            .collect();
        let loaded: std::collections::HashSet<PathBuf> =
            checked.ws.files.iter().map(|f| f.path.clone()).collect();
        let limit = checked.config.limits.max_file_bytes;
        let others = drawers::files_naming(root, &names, &loaded, read, limit);
        if others.is_empty() {
            break;
        }
        all.extend(others.into_iter().map(|(p, _)| p));
        checked = check_with_config_file(root, &all, read, config_file)?;
    }
    Ok(checked)
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
