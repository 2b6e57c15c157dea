//! Finding the files to check and the workspace root.

use std::path::{Path, PathBuf};

/// The `.guard` files the user named, or those under `default` when no path
/// was given; returns the paths as given (after the default) and the files.
pub fn files_or(
    paths: Vec<PathBuf>,
    default: PathBuf,
) -> Result<(Vec<PathBuf>, Vec<PathBuf>), String> {
    let paths = if paths.is_empty() {
        vec![default]
    } else {
        paths
    };
    let files = guard_files(&paths)?;
    Ok((paths, files))
}

/// Expands files and folders into a sorted list of `.guard` files.
///
/// A path given explicitly is taken whatever its extension; folders are
/// searched recursively, skipping hidden folders and `target`. An unreadable
/// or missing path is an error naming it.
pub fn guard_files(paths: &[PathBuf]) -> Result<Vec<PathBuf>, String> {
    let mut out = Vec::new();
    for p in paths {
        let meta = std::fs::metadata(p).map_err(|e| format!("cannot read {}: {e}", p.display()))?;
        if meta.is_dir() {
            walk(p, &mut out).map_err(|e| format!("cannot read folder {}: {e}", p.display()))?;
        } else {
            out.push(p.clone());
        }
    }
    out.sort();
    out.dedup();
    Ok(out)
}

fn walk(dir: &Path, out: &mut Vec<PathBuf>) -> std::io::Result<()> {
    let mut entries: Vec<_> = std::fs::read_dir(dir)?.collect::<Result<_, _>>()?;
    entries.sort_by_key(|e| e.file_name());
    for entry in entries {
        let path = entry.path();
        let name = entry.file_name();
        let name = name.to_string_lossy();
        let kind = entry.file_type()?;
        if kind.is_dir() {
            if !name.starts_with('.') && name != "target" {
                walk(&path, out)?;
            }
        } else if path.extension().is_some_and(|e| e == "guard") {
            out.push(path);
        }
    }
    Ok(())
}

/// The nearest folder at or above `start` holding `guardband.toml`, else `cwd`.
pub fn workspace_root(start: &Path, cwd: &Path) -> PathBuf {
    let start = if start.is_absolute() {
        start.to_path_buf()
    } else {
        cwd.join(start)
    };
    let mut dir = if start.is_dir() {
        Some(start.as_path())
    } else {
        start.parent()
    };
    while let Some(d) = dir {
        if d.join("guardband.toml").is_file() {
            return d.to_path_buf();
        }
        dir = d.parent();
    }
    cwd.to_path_buf()
}
