//! Checking many files with bounded memory and every core: each entry file
//! is checked on its own, with its imports, exactly as the language server
//! checks one open file; its findings are kept and everything else (syntax
//! trees, model, derivations) is dropped before the next file starts.
//!
//! Entries whose regulators draw from the same `supply` item are checked
//! again together, as one unit: a shared rail's droop adds up the surges of
//! every regulator on it, which no single file sees.
//!
//! The result is the union of those checks. It equals one
//! [`crate::check_workspace`] of all the entries (a test holds the two
//! together on every example and fixture), except where the whole-workspace
//! check depends on the order files were loaded in: the import-depth and
//! file-count limits count from each entry here.

use crate::{Config, ConfigFile, check_with_config_file};
use guardband_model::{Diagnostic, FileId, Severity, SourceFile, Workspace};
use rayon::prelude::*;
use std::collections::{HashMap, HashSet};
use std::path::{Path, PathBuf};

/// What a check of many files leaves for printing: the findings, and the
/// files they point into (text and line index, no syntax tree).
#[derive(Debug)]
pub struct Findings {
    /// Only the files some finding points into; ids are indices here.
    pub ws: Workspace,
    /// The configuration; its `file` (if any) is an id in [`Findings::ws`].
    pub config: Config,
    /// Sorted by file, position and rule, as [`crate::Checked::diagnostics`].
    pub diagnostics: Vec<Diagnostic>,
    /// How many distinct spec files were read, entries and imports.
    pub files_checked: usize,
}

impl Findings {
    /// Number of findings of one severity.
    pub fn count(&self, severity: Severity) -> usize {
        self.diagnostics
            .iter()
            .filter(|d| d.severity == severity)
            .count()
    }
}

/// One entry's check, reduced to what outlives it.
struct Unit {
    /// By the unit's file ids: the files its findings point into, without
    /// their trees; `None` for the rest.
    files: Vec<Option<SourceFile>>,
    diagnostics: Vec<Diagnostic>,
    config: Config,
    guard_files: Vec<PathBuf>,
    /// The `supply` items its regulators draw from: their file and name.
    supplies: Vec<(PathBuf, String)>,
}

/// Checks every entry file on its own (with its imports) on `threads`
/// threads, each with a stack of `stack_bytes`, and merges the findings.
/// `guardband.toml` is read once for all of them. An unreadable entry is an
/// error naming it, as with [`crate::check_workspace`].
pub fn check_each(
    root: &Path,
    entries: &[PathBuf],
    read: &guardband_model::Read,
    threads: usize,
    stack_bytes: usize,
) -> Result<Findings, (PathBuf, std::io::Error)> {
    check_each_with_evidence(root, entries, read, threads, stack_bytes, &[])
}

/// [`check_each`] with results files besides those `guardband.toml`
/// names (the command line's `--evidence`); an unreadable one is an error
/// naming it.
pub fn check_each_with_evidence(
    root: &Path,
    entries: &[PathBuf],
    read: &guardband_model::Read,
    threads: usize,
    stack_bytes: usize,
    evidence: &[PathBuf],
) -> Result<Findings, (PathBuf, std::io::Error)> {
    let root = &root.canonicalize().map_err(|e| (root.to_path_buf(), e))?;
    let mut config_file = ConfigFile::read(root, read);
    // The entries' checks share the parses of the files they import.
    config_file.share_imports();
    for path in evidence {
        config_file
            .add_evidence(path, read)
            .map_err(|e| (path.clone(), e))?;
    }
    let config_file = &config_file;
    let one = |entry: &PathBuf| check_one(root, std::slice::from_ref(entry), read, config_file);
    let units: Vec<Result<Unit, (PathBuf, std::io::Error)>> = if entries.is_empty() {
        // Nothing to check, but the configuration is still checked.
        vec![check_one(root, &[], read, config_file)]
    } else if threads <= 1 {
        entries.iter().map(one).collect()
    } else {
        match rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .stack_size(stack_bytes)
            .build()
        {
            Ok(pool) => pool.install(|| entries.par_iter().map(one).collect()),
            Err(_) => entries.iter().map(one).collect(),
        }
    };
    let mut units = units.into_iter().collect::<Result<Vec<Unit>, _>>()?;
    // Entries on a shared supply are checked once more, together, and
    // their single-file units (with partial droops) are dropped.
    if !entries.is_empty() {
        // Files of the workspace that were not asked for but may draw from
        // the same supplies: their regulators count in the droop.
        let names: Vec<String> = units
            .iter()
            .flat_map(|u| u.supplies.iter().map(|(_, n)| n.clone()))
            .collect::<HashSet<_>>()
            .into_iter()
            .collect();
        let known: HashSet<PathBuf> = units
            .iter()
            .flat_map(|u| u.guard_files.iter().cloned())
            .collect();
        let outside = crate::drawers::files_naming(
            root,
            &names,
            &known,
            read,
            config_file.limits().max_file_bytes,
        );
        let groups = shared_supply_groups(&units, &outside);
        let mut dropped = vec![false; units.len()];
        let mut together = Vec::new();
        for group in groups {
            let group_entries: Vec<PathBuf> = group.iter().map(|i| entries[*i].clone()).collect();
            let asked: HashSet<PathBuf> = group
                .iter()
                .flat_map(|i| units[*i].guard_files.iter().cloned())
                .collect();
            // Widened to the workspace's other files on these supplies
            // (and any further supply those lead to), as the server checks.
            let checked = crate::widened(root, &group_entries, read, config_file)?;
            together.push(restricted(unit_of(checked), &asked));
            for i in group {
                dropped[i] = true;
            }
        }
        units = units
            .into_iter()
            .zip(dropped)
            .filter(|(_, d)| !d)
            .map(|(u, _)| u)
            .chain(together)
            .collect();
    }
    let mut merged = Merged::default();
    let mut config = None;
    for unit in units {
        merged.add(unit, &mut config);
    }
    Ok(merged.finish(root, config.unwrap_or_default()))
}

/// A check of more files than were asked for, reduced to the findings in
/// the files asked for (and their imports): the others were read only for
/// the regulators they add to a shared rail.
fn restricted(mut unit: Unit, asked: &HashSet<PathBuf>) -> Unit {
    // The configuration's own problems are kept too.
    let in_asked = |id: FileId| {
        unit.config.file == Some(id)
            || unit.config.evidence_files.contains(&id)
            || unit
                .files
                .get(id.0 as usize)
                .and_then(Option::as_ref)
                .is_some_and(|f| asked.contains(&f.path))
    };
    unit.diagnostics.retain(|d| in_asked(d.file));
    unit.guard_files.retain(|p| asked.contains(p));
    unit
}

/// The entries (by index) that share a `supply` item with another entry or
/// with a file outside the entries (`outside`, each with the supply names
/// it holds), in groups joined through any supply they have in common.
fn shared_supply_groups(units: &[Unit], outside: &[(PathBuf, Vec<String>)]) -> Vec<Vec<usize>> {
    let named_outside: HashSet<&str> = outside
        .iter()
        .flat_map(|(_, names)| names.iter().map(String::as_str))
        .collect();
    // Union-find over the units, joined by each supply's first user.
    let mut parent: Vec<usize> = (0..units.len()).collect();
    fn root(parent: &mut [usize], mut i: usize) -> usize {
        while parent[i] != i {
            parent[i] = parent[parent[i]];
            i = parent[i];
        }
        i
    }
    let mut first: HashMap<&(PathBuf, String), usize> = HashMap::new();
    for (i, unit) in units.iter().enumerate() {
        for s in &unit.supplies {
            match first.get(s) {
                Some(&j) => {
                    let (a, b) = (root(&mut parent, i), root(&mut parent, j));
                    parent[a] = b;
                }
                None => {
                    first.insert(s, i);
                }
            }
        }
    }
    let mut groups: HashMap<usize, Vec<usize>> = HashMap::new();
    for i in 0..units.len() {
        let r = root(&mut parent, i);
        groups.entry(r).or_default().push(i);
    }
    let mut out: Vec<Vec<usize>> = groups
        .into_values()
        .filter(|g| {
            g.len() > 1
                || g.iter().any(|i| {
                    units[*i]
                        .supplies
                        .iter()
                        .any(|(_, n)| named_outside.contains(n.as_str()))
                })
        })
        .collect();
    out.sort();
    out
}

/// Checks one entry (or none: the configuration alone) and keeps only the
/// files its findings and its configuration point into.
fn check_one(
    root: &Path,
    entries: &[PathBuf],
    read: &guardband_model::Read,
    config_file: &ConfigFile,
) -> Result<Unit, (PathBuf, std::io::Error)> {
    Ok(unit_of(check_with_config_file(
        root,
        entries,
        read,
        config_file,
    )?))
}

/// One check reduced to what outlives it.
fn unit_of(checked: crate::Checked) -> Unit {
    let supplies = checked
        .model
        .regulators()
        .filter_map(|r| r.reference("supply"))
        .map(|s| {
            let s = checked.model.node(s);
            (checked.ws.file(s.file).path.clone(), s.key().to_string())
        })
        .collect();
    // Every file read as a spec, whatever its name (not guardband.toml).
    let guard_files = checked
        .ws
        .files
        .iter()
        .filter(|f| {
            Some(f.id) != checked.config.file && !checked.config.evidence_files.contains(&f.id)
        })
        .map(|f| f.path.clone())
        .collect();
    let mut wanted = vec![false; checked.ws.files.len()];
    for d in &checked.diagnostics {
        wanted[d.file.0 as usize] = true;
        for l in &d.labels {
            wanted[l.file.0 as usize] = true;
        }
    }
    if let Some(f) = checked.config.file {
        wanted[f.0 as usize] = true;
    }
    let files = checked
        .ws
        .files
        .into_iter()
        .zip(wanted)
        .map(|(f, wanted)| {
            // The tree is never printed.
            wanted.then(|| SourceFile {
                parse: Default::default(),
                ..f
            })
        })
        .collect();
    Unit {
        files,
        diagnostics: checked.diagnostics,
        config: checked.config,
        guard_files,
        supplies,
    }
}

/// The findings of the units seen so far, with their files renumbered.
#[derive(Default)]
struct Merged {
    files: Vec<SourceFile>,
    by_path: HashMap<PathBuf, FileId>,
    diagnostics: Vec<Diagnostic>,
    guard_files: HashSet<PathBuf>,
}

impl Merged {
    fn add(&mut self, unit: Unit, config: &mut Option<Config>) {
        let Unit {
            files,
            mut diagnostics,
            config: unit_config,
            guard_files,
            supplies: _,
        } = unit;
        // The unit's file ids in the merged list (only kept files are ever looked up).
        let ids: Vec<FileId> = files
            .into_iter()
            .map(|file| {
                let Some(file) = file else {
                    return FileId(u32::MAX);
                };
                if let Some(id) = self.by_path.get(&file.path) {
                    return *id;
                }
                let id = FileId(self.files.len() as u32);
                self.by_path.insert(file.path.clone(), id);
                self.files.push(SourceFile { id, ..file });
                id
            })
            .collect();
        for d in &mut diagnostics {
            d.file = ids[d.file.0 as usize];
            for l in &mut d.labels {
                l.file = ids[l.file.0 as usize];
            }
        }
        self.diagnostics.extend(diagnostics);
        self.guard_files.extend(guard_files);
        if config.is_none() {
            let file = unit_config.file.map(|f| ids[f.0 as usize]);
            *config = Some(Config {
                file,
                ..unit_config
            });
        }
    }

    fn finish(self, root: &Path, config: Config) -> Findings {
        let ws = Workspace {
            root: root.to_path_buf(),
            files: self.files,
        };
        let mut diagnostics = self.diagnostics;
        crate::sort_diagnostics(&ws, &mut diagnostics);
        // An imported file's findings come once from every file importing it.
        diagnostics.dedup();
        Findings {
            ws,
            config,
            diagnostics,
            files_checked: self.guard_files.len(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::check_workspace;

    /// Every `.guard` file under `dir`, sorted.
    fn guard_files(dir: &Path, out: &mut Vec<PathBuf>) {
        let mut entries: Vec<PathBuf> = std::fs::read_dir(dir)
            .expect("fixture folder")
            .flatten()
            .map(|e| e.path())
            .collect();
        entries.sort();
        for p in entries {
            if p.is_dir() {
                guard_files(&p, out);
            } else if p.extension().is_some_and(|e| e == "guard") {
                out.push(p);
            }
        }
    }

    /// A diagnostic with its files named, so that two checks can be compared.
    fn described(ws: &Workspace, d: &Diagnostic) -> String {
        let labels: Vec<String> = d
            .labels
            .iter()
            .map(|l| format!("{}@{:?} {}", ws.file(l.file).display, l.span, l.message))
            .collect();
        format!(
            "{} {:?} {} {:?} {} | {} | {:?}",
            ws.file(d.file).display,
            d.span,
            d.rule,
            d.severity,
            d.message,
            labels.join("; "),
            d.help
        )
    }

    fn compare(root: &Path, entries: &[PathBuf]) -> usize {
        let read = guardband_model::read_source;
        let whole = check_workspace(root, entries, &read).expect("whole check");
        // With the workspace's other regulators on a shared supply counted,
        // as the server checks, reduced to the files asked about.
        let asked: HashSet<&Path> = whole.ws.files.iter().map(|f| f.path.as_path()).collect();
        let wider = crate::check_with_co_drawers(root, entries, &read).expect("wider check");
        let mut expected: Vec<String> = wider
            .diagnostics
            .iter()
            .filter(|d| {
                asked.contains(wider.ws.file(d.file).path.as_path())
                    || wider.config.file == Some(d.file)
            })
            .map(|d| described(&wider.ws, d))
            .collect();
        for threads in [1, 2] {
            let each = check_each(root, entries, &read, threads, 64 << 20).expect("check each");
            let mut found: Vec<String> = each
                .diagnostics
                .iter()
                .map(|d| described(&each.ws, d))
                .collect();
            expected.sort();
            found.sort();
            assert_eq!(found, expected, "{} with {threads} threads", root.display());
            let guard = whole
                .ws
                .files
                .iter()
                .filter(|f| f.path.extension().is_some_and(|e| e == "guard"))
                .count();
            assert_eq!(each.files_checked, guard);
            assert_eq!(each.config.deny_warnings, whole.config.deny_warnings);
        }
        expected.len()
    }

    #[test]
    fn file_by_file_equals_one_whole_check_on_every_example_and_fixture() {
        let top = Path::new(env!("CARGO_MANIFEST_DIR")).join("../..");
        let mut total = 0;
        for (root, under) in [
            ("examples", "examples"),
            ("tests/fixtures/diagnostics", "tests/fixtures/diagnostics"),
            ("tests/fixtures/rules", "tests/fixtures/rules"),
            ("tests/fixtures/report", "tests/fixtures/report"),
            (
                "tests/fixtures/workspaces/import_cycle",
                "tests/fixtures/workspaces/import_cycle",
            ),
            (
                "tests/fixtures/workspaces/bad_config",
                "tests/fixtures/workspaces/bad_config",
            ),
            (
                "tests/fixtures/workspaces/outside/inner",
                "tests/fixtures/workspaces/outside",
            ),
        ] {
            let mut entries = Vec::new();
            guard_files(&top.join(under), &mut entries);
            assert!(!entries.is_empty(), "{under}");
            total += compare(&top.join(root), &entries);
            // One file at a time too, as the server checks an open file.
            for e in &entries {
                compare(&top.join(root), std::slice::from_ref(e));
            }
        }
        // The fixtures are full of findings; a comparison of nothing proves nothing.
        assert!(total > 50, "only {total} findings compared");
    }

    #[test]
    fn an_import_cycle_reads_the_same_from_either_end() {
        let top = Path::new(env!("CARGO_MANIFEST_DIR")).join("../..");
        let root = top.join("tests/fixtures/workspaces/import_cycle");
        let read = guardband_model::read_source;
        let seen: Vec<Vec<String>> = ["a.guard", "b.guard"]
            .iter()
            .map(|f| {
                let c = check_workspace(&root, &[root.join(f)], &read).expect("check");
                c.diagnostics
                    .iter()
                    .filter(|d| d.rule == "cycle")
                    .map(|d| described(&c.ws, d))
                    .collect()
            })
            .collect();
        assert_eq!(seen[0].len(), 1, "{seen:?}");
        assert_eq!(seen[0], seen[1]);
        assert!(seen[0][0].starts_with("b.guard"), "{seen:?}");
        assert!(seen[0][0].contains("a.guard → b.guard → a.guard"));
    }
}
