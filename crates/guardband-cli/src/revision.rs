//! A workspace as it is at a git revision, for `guardband diff --rev`: the
//! spec files and `guardband.toml` read from the repository's object
//! database (with gix, never by running git), checked through the same
//! in-memory `read` the checker takes for the work tree, so both sides
//! name their files alike.

use std::collections::HashMap;
use std::path::{Path, PathBuf};

/// The files of the repository holding `path` at `rev` that a check can
/// read: every `.guard` file and every `guardband.toml`, keyed by where
/// they would sit in the work tree.
pub struct AtRevision {
    files: HashMap<PathBuf, Vec<u8>>,
}

impl AtRevision {
    /// Reads `rev` (a branch, tag, commit or `HEAD~2`) of the repository
    /// holding `path`.
    pub fn read(path: &Path, rev: &str) -> Result<AtRevision, String> {
        let repo = gix::discover(path)
            .map_err(|e| format!("{} is not inside a git repository: {e}", path.display()))?;
        let workdir = repo
            .workdir()
            .ok_or_else(|| "the repository has no work tree to compare with".to_string())?;
        let workdir = workdir
            .canonicalize()
            .unwrap_or_else(|_| workdir.to_path_buf());
        let tree = repo
            .rev_parse_single(rev)
            .map_err(|e| format!("cannot read revision `{rev}`: {e}"))?
            .object()
            .map_err(|e| format!("cannot read revision `{rev}`: {e}"))?
            .peel_to_tree()
            .map_err(|e| format!("revision `{rev}` has no tree: {e}"))?;
        let mut recorder = gix::traverse::tree::Recorder::default();
        tree.traverse()
            .breadthfirst(&mut recorder)
            .map_err(|e| format!("cannot list revision `{rev}`: {e}"))?;
        let mut files = HashMap::new();
        for entry in recorder.records {
            let name = entry.filepath.to_string();
            let wanted =
                name.ends_with(".guard") || name.rsplit('/').next() == Some("guardband.toml");
            if !entry.mode.is_blob() || !wanted {
                continue;
            }
            let object = repo
                .find_object(entry.oid)
                .map_err(|e| format!("cannot read {name} at `{rev}`: {e}"))?;
            files.insert(workdir.join(&name), object.data.clone());
        }
        Ok(AtRevision { files })
    }

    /// The `.guard` files at or under `path` (a folder or one file), sorted.
    pub fn entries(&self, path: &Path) -> Vec<PathBuf> {
        let mut found: Vec<PathBuf> = self
            .files
            .keys()
            .filter(|p| p.starts_with(path) && p.extension().is_some_and(|e| e == "guard"))
            .cloned()
            .collect();
        found.sort();
        found
    }

    /// Reads a file as it is at the revision (`NotFound` when it is not
    /// there): at most `limit + 1` bytes, as the disk reader does, so the
    /// checker sees a file above its size limit as one.
    pub fn read_file(&self, path: &Path, limit: usize) -> std::io::Result<Vec<u8>> {
        let key = path.canonicalize().unwrap_or_else(|_| path.to_path_buf());
        match self.files.get(&key).or_else(|| self.files.get(path)) {
            Some(bytes) => Ok(bytes[..bytes.len().min(limit.saturating_add(1))].to_vec()),
            None => Err(std::io::Error::from(std::io::ErrorKind::NotFound)),
        }
    }
}
