//! Regulators on a shared supply that the files being checked do not
//! hold. A rail's droop adds up every regulator drawing from it, so a check
//! of some files of a workspace (one open in an editor, one named on the
//! command line) must also count the workspace's other files on that rail:
//! these are found here, as every spec file under the root whose text names
//! the supply (a superset; the check itself settles who draws from what).

use std::collections::HashSet;
use std::path::{Path, PathBuf};

/// Most spec files walked, and the deepest folder nesting walked.
const MAX_WALKED: usize = 10_000;
const MAX_DEPTH: usize = 32;

/// The spec files under `root`, other than those in `skip`, whose text
/// names one of the supplies in `names`, each with the names it holds.
pub fn files_naming(
    root: &Path,
    names: &[String],
    skip: &HashSet<PathBuf>,
    read: &guardband_model::Read,
    max_file_bytes: usize,
) -> Vec<(PathBuf, Vec<String>)> {
    if names.is_empty() {
        return Vec::new();
    }
    let mut files = Vec::new();
    walk_specs(root, 0, &mut files);
    files
        .into_iter()
        .filter(|p| !skip.contains(p))
        .filter_map(|p| {
            let bytes = read(&p, max_file_bytes).ok()?;
            let text = String::from_utf8_lossy(&bytes);
            if !text.contains("supply") {
                return None;
            }
            let named: Vec<String> = names
                .iter()
                .filter(|n| text.contains(n.as_str()))
                .cloned()
                .collect();
            (!named.is_empty()).then_some((p, named))
        })
        .collect()
}

/// Every `.guard` file under `dir` (canonical paths), skipping hidden
/// folders and `target`, never following links to folders.
fn walk_specs(dir: &Path, depth: usize, out: &mut Vec<PathBuf>) {
    if depth > MAX_DEPTH || out.len() >= MAX_WALKED {
        return;
    }
    let Ok(entries) = std::fs::read_dir(dir) else {
        return;
    };
    let mut entries: Vec<_> = entries.flatten().collect();
    entries.sort_by_key(|e| e.file_name());
    for entry in entries {
        let Ok(kind) = entry.file_type() else {
            continue;
        };
        let path = entry.path();
        let name = entry.file_name();
        let name = name.to_string_lossy();
        if kind.is_dir() {
            if !name.starts_with('.') && name != "target" {
                walk_specs(&path, depth + 1, out);
            }
        } else if kind.is_file() && path.extension().is_some_and(|e| e == "guard") {
            if let Ok(p) = path.canonicalize() {
                out.push(p);
            }
            if out.len() >= MAX_WALKED {
                return;
            }
        }
    }
}
