//! Shared by the driver's integration tests: a check of one spec text held
//! in memory, as a one-file workspace.

use guardband_check::{Checked, check_workspace};
use std::collections::HashMap;
use std::path::{Path, PathBuf};

/// Checks `text` as the file `name` in a one-file workspace in memory.
pub fn check(name: &str, text: &str) -> Checked {
    let root = std::env::temp_dir();
    let path: PathBuf = root.join(name);
    let files: HashMap<PathBuf, Vec<u8>> = [(path.clone(), text.as_bytes().to_vec())].into();
    let read = move |p: &Path, _limit: usize| {
        files
            .get(p)
            .cloned()
            .ok_or_else(|| std::io::Error::from(std::io::ErrorKind::NotFound))
    };
    check_workspace(&root, &[path], &read).expect("in-memory check")
}
