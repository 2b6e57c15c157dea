//! Where CI output paths start: annotations and SARIF name files relative
//! to the repository, because that is how a pull request names them. A
//! workspace whose specs sit in `specs/` must annotate `specs/ldo12.guard`,
//! not `ldo12.guard`.

use std::path::{Path, PathBuf};

/// The folder CI paths are relative to: the nearest folder at or above
/// `cwd` holding `.git` (a folder, or the file a linked work tree or a
/// submodule has), found without running git; else `cwd` itself.
pub fn base(cwd: &Path) -> PathBuf {
    let cwd = cwd.canonicalize().unwrap_or_else(|_| cwd.to_path_buf());
    cwd.ancestors()
        .find(|d| d.join(".git").exists())
        .map(Path::to_path_buf)
        .unwrap_or(cwd)
}

/// `path` relative to `base`, when it lies inside it (separators as the
/// platform writes them; [`annotation_path`] turns them into `/`).
pub fn relative(base: &Path, path: &Path) -> Option<PathBuf> {
    path.strip_prefix(base).ok().map(Path::to_path_buf)
}

/// How an annotation names a file: relative to `base` when inside it, else
/// its absolute path.
pub fn annotation_path(base: &Path, path: &Path) -> String {
    let shown = relative(base, path).unwrap_or_else(|| path.to_path_buf());
    shown.to_string_lossy().replace('\\', "/")
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A fresh temporary folder with `specs/deep` inside, canonical.
    fn temp(name: &str) -> PathBuf {
        let dir =
            std::env::temp_dir().join(format!("guardband-repo-{name}-{}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(dir.join("specs/deep")).expect("temp dir");
        dir.canonicalize().expect("canonical")
    }

    #[test]
    fn the_git_top_level_wins_over_the_working_folder() {
        let dir = temp("git");
        std::fs::create_dir(dir.join(".git")).expect(".git");
        assert_eq!(base(&dir.join("specs/deep")), dir);
        assert_eq!(
            annotation_path(&base(&dir.join("specs")), &dir.join("specs/ldo12.guard")),
            "specs/ldo12.guard"
        );
        let _ = std::fs::remove_dir_all(&dir);
    }

    #[test]
    fn a_linked_work_tree_has_a_git_file() {
        let dir = temp("worktree");
        std::fs::write(dir.join("specs/.git"), "gitdir: elsewhere\n").expect(".git file");
        assert_eq!(base(&dir.join("specs/deep")), dir.join("specs"));
        let _ = std::fs::remove_dir_all(&dir);
    }

    #[test]
    fn without_git_the_working_folder_is_the_base() {
        let dir = temp("plain");
        // Only when no folder above the temporary one is itself a repository.
        if !dir.ancestors().any(|d| d.join(".git").exists()) {
            assert_eq!(base(&dir.join("specs")), dir.join("specs"));
        }
        let _ = std::fs::remove_dir_all(&dir);
    }

    #[test]
    fn outside_the_base_the_path_stays_absolute() {
        let base = Path::new("/a/b");
        assert_eq!(
            annotation_path(base, Path::new("/a/b/c/x.guard")),
            "c/x.guard"
        );
        assert_eq!(annotation_path(base, Path::new("/z/x.guard")), "/z/x.guard");
    }
}
