//! The synchronous engine behind the server: analyses of the open documents
//! (the very check `guardband check` runs), computed on worker threads with
//! a large stack, with panics caught and turned into errors.

use crate::documents::Document;
use guardband_check::Checked;
use guardband_model::{FileId, SourceFile};
use std::collections::HashMap;
use std::path::{Path, PathBuf};
use std::sync::{Arc, Mutex, mpsc};

/// One check of the open documents under a workspace root.
pub struct Analysis {
    pub root: PathBuf,
    pub checked: Checked,
    /// The version of each open document the check saw, by path.
    pub versions: HashMap<PathBuf, i32>,
    /// The URI each open document was opened under, by path.
    pub uris: HashMap<PathBuf, tower_lsp_server::ls_types::Uri>,
}

/// Most spec files walked when looking for other regulators on a shared
/// supply, and the deepest folder nesting walked.
const MAX_WALKED: usize = 10_000;
const MAX_DEPTH: usize = 32;

/// The spec files under `root`, not already in the check, that may draw
/// from a `supply` item one of its regulators draws from: every `.guard`
/// file whose text names that supply (a superset, settled by the check
/// itself). Empty when no regulator in the check names a supply.
fn co_drawers(root: &Path, checked: &Checked, read: &guardband_model::Read) -> Vec<PathBuf> {
    let names: Vec<&str> = checked
        .rails
        .iter()
        .filter(|r| !r.drawers.is_empty())
        .map(|r| checked.model.node(r.supply).key())
        .collect();
    if names.is_empty() {
        return Vec::new();
    }
    let loaded: std::collections::HashSet<&Path> =
        checked.ws.files.iter().map(|f| f.path.as_path()).collect();
    let mut files = Vec::new();
    walk_specs(root, 0, &mut files);
    let limit = checked.config.limits.max_file_bytes;
    files
        .into_iter()
        .filter(|p| !loaded.contains(p.as_path()))
        .filter(|p| {
            read(p, limit).is_ok_and(|bytes| {
                let text = String::from_utf8_lossy(&bytes);
                text.contains("supply") && names.iter().any(|n| text.contains(n))
            })
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

impl Analysis {
    /// Checks the open `documents` under `root` (other files come from disk).
    pub fn compute(root: &Path, documents: &[Document]) -> Result<Analysis, String> {
        let overlay: HashMap<&Path, &str> = documents
            .iter()
            .map(|d| (d.path.as_path(), d.text.as_str()))
            .collect();
        let read = |p: &Path, limit: usize| -> std::io::Result<Vec<u8>> {
            match overlay.get(p) {
                Some(text) => {
                    Ok(text.as_bytes()[..text.len().min(limit.saturating_add(1))].to_vec())
                }
                None => guardband_model::read_source(p, limit),
            }
        };
        let entries: Vec<PathBuf> = documents
            .iter()
            .filter(|d| d.path.extension().is_some_and(|e| e == "guard"))
            .map(|d| d.path.clone())
            .collect();
        let mut checked = guardband_check::check_workspace(root, &entries, &read)
            .map_err(|(p, e)| format!("cannot read {}: {e}", p.display()))?;
        // A shared supply's droop adds up every regulator drawing from it,
        // also those in files that are not open: find them and check again
        // with them, so the editor shows what `guardband check` reports.
        // A file found so may draw from a second supply in turn: repeat
        // until nothing new turns up (a few rounds at most in practice).
        let mut all = entries.clone();
        for _ in 0..8 {
            let others = co_drawers(root, &checked, &read);
            if others.is_empty() {
                break;
            }
            all.extend(others);
            checked = guardband_check::check_workspace(root, &all, &read)
                .map_err(|(p, e)| format!("cannot read {}: {e}", p.display()))?;
        }
        Ok(Analysis {
            root: root.to_path_buf(),
            checked,
            versions: documents
                .iter()
                .map(|d| (d.path.clone(), d.version))
                .collect(),
            uris: documents
                .iter()
                .map(|d| (d.path.clone(), d.uri.clone()))
                .collect(),
        })
    }

    /// Whether this analysis saw exactly these documents at these versions.
    pub fn is_current(&self, documents: &[Document]) -> bool {
        documents.len() == self.versions.len()
            && documents
                .iter()
                .all(|d| self.versions.get(&d.path) == Some(&d.version))
    }

    /// The file with this path, if the check loaded it.
    pub fn file(&self, path: &Path) -> Option<&SourceFile> {
        self.checked
            .ws
            .find(path)
            .map(|id| self.checked.ws.file(id))
    }

    /// The URI of a loaded file: the one the client opened it under, else its path.
    pub fn uri(&self, file: FileId) -> Option<tower_lsp_server::ls_types::Uri> {
        let path = &self.checked.ws.file(file).path;
        self.uris
            .get(path)
            .cloned()
            .or_else(|| tower_lsp_server::ls_types::Uri::from_file_path(path))
    }

    /// The id of the file with this path.
    pub fn file_id(&self, path: &Path) -> Option<FileId> {
        self.checked.ws.find(path)
    }
}

type Job = Box<dyn FnOnce() + Send>;

/// A small pool of big-stack threads that run engine work off the async runtime.
pub struct Workers {
    sender: Mutex<mpsc::Sender<Job>>,
}

impl Workers {
    /// Starts `count` worker threads.
    pub fn start(count: usize) -> Arc<Workers> {
        let (sender, receiver) = mpsc::channel::<Job>();
        let receiver = Arc::new(Mutex::new(receiver));
        for i in 0..count.max(1) {
            let receiver = Arc::clone(&receiver);
            let spawned = std::thread::Builder::new()
                .name(format!("guardband-engine-{i}"))
                .stack_size(guardband_check::STACK_BYTES)
                .spawn(move || {
                    loop {
                        let job = match receiver.lock() {
                            Ok(r) => r.recv(),
                            Err(_) => return,
                        };
                        match job {
                            Ok(job) => job(),
                            Err(_) => return,
                        }
                    }
                });
            if let Err(e) = spawned {
                eprintln!("guardband lsp: cannot start an engine thread: {e}");
            }
        }
        Arc::new(Workers {
            sender: Mutex::new(sender),
        })
    }

    /// Runs `work` on a worker and waits for it without blocking the runtime.
    /// A panic becomes `Err` with its message.
    pub async fn run<T: Send + 'static>(
        &self,
        work: impl FnOnce() -> T + Send + 'static,
    ) -> Result<T, String> {
        let (tx, rx) = tokio::sync::oneshot::channel();
        let job: Job = Box::new(move || {
            let outcome =
                std::panic::catch_unwind(std::panic::AssertUnwindSafe(work)).map_err(|panic| {
                    panic
                        .downcast_ref::<&str>()
                        .map(|s| s.to_string())
                        .or_else(|| panic.downcast_ref::<String>().cloned())
                        .unwrap_or_else(|| "unknown panic".into())
                });
            let _ = tx.send(outcome);
        });
        let sent = match self.sender.lock() {
            Ok(s) => s.send(job).is_ok(),
            Err(_) => false,
        };
        if !sent {
            return Err("the engine threads have stopped".into());
        }
        rx.await
            .unwrap_or_else(|_| Err("the engine thread was lost".into()))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[tokio::test]
    async fn a_panic_in_the_engine_is_an_error_not_a_crash() {
        let workers = Workers::start(1);
        let hit: Result<(), String> = workers.run(|| panic!("boom")).await;
        assert_eq!(hit, Err("boom".to_string()));
        assert_eq!(workers.run(|| 2 + 2).await, Ok(4));
    }
}
