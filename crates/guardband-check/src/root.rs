//! Where a workspace starts: the one rule the command line and the
//! language server both use, so a file checks the same in either.

use std::path::{Path, PathBuf};

/// The workspace root for `start` (a file or a folder, absolute): the
/// nearest folder at or above it holding `guardband.toml`; else the
/// innermost of `folders` that contains it (the command line passes its
/// working folder, the server the client's workspace folders); else the
/// folder `start` names or sits in.
pub fn workspace_root(start: &Path, folders: &[PathBuf]) -> PathBuf {
    let own = if start.is_dir() {
        Some(start)
    } else {
        start.parent()
    };
    let mut dir = own;
    while let Some(d) = dir {
        if d.join("guardband.toml").is_file() {
            return d.to_path_buf();
        }
        dir = d.parent();
    }
    let canonical = |p: &Path| p.canonicalize().unwrap_or_else(|_| p.to_path_buf());
    let start_canonical = canonical(start);
    folders
        .iter()
        .filter(|f| start_canonical.starts_with(canonical(f)) || start.starts_with(f))
        .max_by_key(|f| f.as_os_str().len())
        .cloned()
        .unwrap_or_else(|| own.map(Path::to_path_buf).unwrap_or_default())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn temp(name: &str) -> PathBuf {
        let dir =
            std::env::temp_dir().join(format!("guardband-root-{name}-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(dir.join("a/b")).expect("temp dir");
        dir
    }

    #[test]
    fn the_nearest_configuration_wins_over_any_folder() {
        let dir = temp("config");
        std::fs::write(dir.join("a/guardband.toml"), "").expect("write");
        let file = dir.join("a/b/x.guard");
        assert_eq!(
            workspace_root(&file, std::slice::from_ref(&dir)),
            dir.join("a")
        );
        assert_eq!(workspace_root(&dir.join("a/b"), &[]), dir.join("a"));
        let _ = std::fs::remove_dir_all(&dir);
    }

    #[test]
    fn without_configuration_the_innermost_folder_then_the_files_own() {
        let dir = temp("folders");
        let file = dir.join("a/b/x.guard");
        assert_eq!(
            workspace_root(&file, &[dir.clone(), dir.join("a")]),
            dir.join("a")
        );
        assert_eq!(workspace_root(&file, &[]), dir.join("a/b"));
        // A folder elsewhere does not claim the file.
        assert_eq!(
            workspace_root(&file, &[std::env::temp_dir().join("elsewhere")]),
            dir.join("a/b")
        );
        let _ = std::fs::remove_dir_all(&dir);
    }
}
