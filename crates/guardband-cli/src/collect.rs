//! Finding the files to check.
//!
//! Only regular files inside the workspace root are taken. A link that
//! leads outside the root, dangles or loops, a link to a folder, and
//! anything that is not a regular file (a named pipe, a device, a socket)
//! are skipped with a note naming the entry, and the rest are checked:
//! one odd entry never stops a folder check, and nothing outside the root
//! is read or written.

use std::path::{Path, PathBuf};

/// The files found and the entries skipped, with why.
#[derive(Debug, Default)]
pub struct Found {
    pub files: Vec<PathBuf>,
    pub skipped: Vec<String>,
}

impl Found {
    /// Prints the skipped entries on standard error.
    pub fn report_skipped(&self) {
        for s in &self.skipped {
            eprintln!("guardband: skipped {s}");
        }
    }
}

/// The `.guard` files the user named, or those under `default` when no path
/// was given; returns the paths as given (after the default) and the files.
pub fn files_or(
    paths: Vec<PathBuf>,
    default: PathBuf,
    root: &Path,
) -> Result<(Vec<PathBuf>, Found), String> {
    let paths = if paths.is_empty() {
        vec![default]
    } else {
        paths
    };
    let found = guard_files(&paths, root)?;
    Ok((paths, found))
}

/// Why a file cannot be taken, or `None` if it is a regular file inside `root`.
fn refusal(path: &Path, root: &Path) -> Option<String> {
    let shown = path.display();
    let canonical = match path.canonicalize() {
        Ok(c) => c,
        Err(e) if is_loop(&e) => return Some(format!("`{shown}`: a loop of links")),
        Err(_) if path.symlink_metadata().is_ok() => {
            return Some(format!("`{shown}`: a link to nothing (dangling)"));
        }
        Err(e) => return Some(format!("`{shown}`: {e}")),
    };
    if !canonical.starts_with(root) {
        return Some(format!(
            "`{shown}`: it leads outside the workspace root {} (to {})",
            root.display(),
            canonical.display()
        ));
    }
    match std::fs::metadata(&canonical) {
        Ok(m) if m.is_file() => None,
        Ok(m) => Some(format!("`{shown}`: {}", what_it_is(&m))),
        Err(e) => Some(format!("`{shown}`: {e}")),
    }
}

/// Whether an error says that links loop.
pub fn is_loop(e: &std::io::Error) -> bool {
    guardband_model::is_link_loop(e)
}

/// What an entry that is not a regular file is, in words.
fn what_it_is(meta: &std::fs::Metadata) -> &'static str {
    let t = meta.file_type();
    if t.is_dir() {
        return "a folder";
    }
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        if t.is_fifo() {
            return "a named pipe (FIFO), not a regular file";
        }
        if t.is_socket() {
            return "a socket, not a regular file";
        }
        if t.is_char_device() || t.is_block_device() {
            return "a device, not a regular file";
        }
    }
    "not a regular file"
}

/// Expands files and folders into a sorted list of `.guard` files.
///
/// A path given explicitly is taken whatever its extension; folders are
/// searched recursively, skipping hidden folders and `target`. A missing
/// path is an error naming it; entries that cannot be taken are skipped
/// (see the module documentation).
pub fn guard_files(paths: &[PathBuf], root: &Path) -> Result<Found, String> {
    let mut found = Found::default();
    for p in paths {
        let meta = std::fs::metadata(p).map_err(|e| {
            if is_loop(&e) {
                format!("cannot read {}: a loop of links", p.display())
            } else {
                format!("cannot read {}: {e}", p.display())
            }
        })?;
        if meta.is_dir() {
            // A real folder inside the root holds its regular files inside
            // the root too; only links among them need resolving.
            let inside = p.canonicalize().is_ok_and(|c| c.starts_with(root));
            walk(p, root, inside, &mut found, 0);
        } else {
            match refusal(p, root) {
                None => found.files.push(p.clone()),
                Some(why) => found.skipped.push(why),
            }
        }
    }
    found.files.sort();
    found.files.dedup();
    Ok(found)
}

/// Deepest folder nesting walked (links to folders are never followed, so
/// this only bounds absurd trees).
const MAX_DEPTH: usize = 256;

/// `inside`: `dir` is known to resolve inside `root` (it is a real folder
/// under one that does), so that its regular files are taken without
/// resolving each (thousands of `readlink`s in a large workspace).
fn walk(dir: &Path, root: &Path, inside: bool, found: &mut Found, depth: usize) {
    if depth > MAX_DEPTH {
        found
            .skipped
            .push(format!("`{}`: folders nested too deep", dir.display()));
        return;
    }
    let entries = match std::fs::read_dir(dir) {
        Ok(rd) => rd,
        Err(e) => {
            found
                .skipped
                .push(format!("folder `{}`: {e}", dir.display()));
            return;
        }
    };
    let mut entries: Vec<_> = entries
        .filter_map(|e| match e {
            Ok(e) => Some(e),
            Err(e) => {
                found
                    .skipped
                    .push(format!("an entry of `{}`: {e}", dir.display()));
                None
            }
        })
        .collect();
    entries.sort_by_key(|e| e.file_name());
    for entry in entries {
        let path = entry.path();
        let name = entry.file_name();
        let name = name.to_string_lossy();
        let Ok(kind) = entry.file_type() else {
            found
                .skipped
                .push(format!("`{}`: its type cannot be read", path.display()));
            continue;
        };
        if kind.is_dir() {
            if !name.starts_with('.') && name != "target" {
                walk(&path, root, inside, found, depth + 1);
            }
            continue;
        }
        if path.extension().is_none_or(|e| e != "guard") {
            continue;
        }
        if inside && kind.is_file() {
            found.files.push(path);
            continue;
        }
        if kind.is_symlink()
            && let Ok(m) = std::fs::metadata(&path)
            && m.is_dir()
        {
            found.skipped.push(format!(
                "`{}`: a link to a folder (links to folders are not followed)",
                path.display()
            ));
            continue;
        }
        match refusal(&path, root) {
            None => found.files.push(path),
            Some(why) => found.skipped.push(why),
        }
    }
}
