//! Records the git revision the binary is built from, for `--version`.
//!
//! The revision is read from the repository's files (`HEAD`, the branch's
//! ref, `packed-refs`), without running git: a build from a source archive
//! or a machine without git still works and says the revision is unknown.
//! Packagers can set `GUARDBAND_REVISION` to override what is recorded.

use std::path::{Path, PathBuf};

fn main() {
    println!("cargo:rerun-if-env-changed=GUARDBAND_REVISION");
    let revision = match std::env::var("GUARDBAND_REVISION") {
        Ok(r) if !r.trim().is_empty() => r.trim().to_string(),
        _ => {
            let manifest =
                PathBuf::from(std::env::var_os("CARGO_MANIFEST_DIR").unwrap_or_default());
            git_revision(&manifest).unwrap_or_else(|| "revision unknown".to_string())
        }
    };
    println!("cargo:rustc-env=GUARDBAND_REVISION={revision}");
}

/// The git folder for the checkout around `start`: a `.git` folder, or the
/// folder a `.git` file (`gitdir: …`, a linked work tree) points at.
fn git_dir(start: &Path) -> Option<(PathBuf, PathBuf)> {
    let dot_git = start
        .ancestors()
        .map(|d| d.join(".git"))
        .find(|g| g.exists())?;
    if dot_git.is_dir() {
        return Some((dot_git.clone(), dot_git));
    }
    let text = std::fs::read_to_string(&dot_git).ok()?;
    let target = text.strip_prefix("gitdir:")?.trim();
    let dir = dot_git.parent()?.join(target);
    // A linked work tree keeps its HEAD in its own folder and the refs in
    // the common one named by `commondir`.
    let common = std::fs::read_to_string(dir.join("commondir"))
        .map(|c| dir.join(c.trim()))
        .unwrap_or_else(|_| dir.clone());
    Some((dir, common))
}

/// The first 12 hex digits of the commit `HEAD` names.
fn git_revision(start: &Path) -> Option<String> {
    let (dir, common) = git_dir(start)?;
    let head_path = dir.join("HEAD");
    println!("cargo:rerun-if-changed={}", head_path.display());
    let head = std::fs::read_to_string(&head_path).ok()?;
    let head = head.trim();
    let id = match head.strip_prefix("ref:") {
        None => head.to_string(),
        Some(name) => {
            let name = name.trim();
            let loose = common.join(name);
            let packed = common.join("packed-refs");
            println!("cargo:rerun-if-changed={}", loose.display());
            println!("cargo:rerun-if-changed={}", packed.display());
            match std::fs::read_to_string(&loose) {
                Ok(id) => id.trim().to_string(),
                Err(_) => std::fs::read_to_string(&packed)
                    .ok()?
                    .lines()
                    .find_map(|l| {
                        let (id, r) = l.split_once(' ')?;
                        (r.trim() == name).then(|| id.to_string())
                    })?,
            }
        }
    };
    let short: String = id.chars().take(12).collect();
    (short.len() == 12 && short.chars().all(|c| c.is_ascii_hexdigit())).then_some(short)
}
