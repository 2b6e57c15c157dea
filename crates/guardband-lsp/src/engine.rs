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
        // A shared supply's droop adds up every regulator drawing from it,
        // also those in files that are not open: they are checked too, so
        // the editor shows what `guardband check` reports.
        let checked = guardband_check::check_with_co_drawers(root, &entries, &read)
            .map_err(|(p, e)| format!("cannot read {}: {e}", p.display()))?;
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
