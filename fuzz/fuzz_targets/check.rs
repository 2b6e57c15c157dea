//! The whole check (load, evaluate, derive, every rule) on arbitrary bytes
//! as one file, next to a fixed process file it may import.
#![no_main]

use libfuzzer_sys::fuzz_target;
use std::path::{Path, PathBuf};
use std::sync::OnceLock;

const PROCESS: &str = "process p {\n    spread trimmed = ± 8 %\n    metal m {\n        thickness = 2 um ± 10 %\n        current_density = 1 mA/um^2\n        reference_temperature = 110 °C\n    }\n}\n";

/// A real folder (the workspace root must exist); the files come from the overlay.
fn root() -> &'static PathBuf {
    static ROOT: OnceLock<PathBuf> = OnceLock::new();
    ROOT.get_or_init(|| {
        let dir = std::env::temp_dir().join(format!("guardband-fuzz-{}", std::process::id()));
        std::fs::create_dir_all(&dir).expect("temp dir");
        dir.canonicalize().expect("canonical")
    })
}

fuzz_target!(|data: &[u8]| {
    let root = root();
    let spec = root.join("spec.guard");
    let process = root.join("p.guard");
    let read = |p: &Path, _limit: usize| -> std::io::Result<Vec<u8>> {
        if p == spec {
            Ok(data.to_vec())
        } else if p == process {
            Ok(PROCESS.as_bytes().to_vec())
        } else {
            Err(std::io::ErrorKind::NotFound.into())
        }
    };
    let checked = guardband_check::check_workspace(root, std::slice::from_ref(&spec), &read)
        .expect("the overlay provides the entry file");
    for d in &checked.diagnostics {
        let text = &checked.ws.file(d.file).text;
        assert!(d.span.start <= d.span.end && d.span.end <= text.len());
        assert!(text.is_char_boundary(d.span.start) && text.is_char_boundary(d.span.end));
    }
});
