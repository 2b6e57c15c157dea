//! Shared helpers for the end-to-end tests: run the built binary.

#![allow(dead_code)]

use std::path::{Path, PathBuf};
use std::process::Command;

/// The workspace root (the folder holding `tests/`).
pub fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("../..")
        .canonicalize()
        .expect("workspace root")
}

/// A fixture path under `tests/fixtures`.
pub fn fixture(rel: &str) -> PathBuf {
    root().join("tests/fixtures").join(rel)
}

/// The result of one run of `guardband`.
pub struct Run {
    pub code: i32,
    pub stdout: String,
    pub stderr: String,
}

/// Runs `guardband ARGS` in `cwd` with colour off.
pub fn guardband(cwd: &Path, args: &[&str]) -> Run {
    let out = Command::new(env!("CARGO_BIN_EXE_guardband"))
        .args(args)
        .current_dir(cwd)
        .env("NO_COLOR", "1")
        .output()
        .expect("run guardband");
    Run {
        code: out.status.code().unwrap_or(-1),
        stdout: String::from_utf8_lossy(&out.stdout).into_owned(),
        stderr: String::from_utf8_lossy(&out.stderr).into_owned(),
    }
}

/// Runs `guardband check --format json ARGS` in `cwd` and parses the output.
pub fn check_json(cwd: &Path, args: &[&str]) -> (i32, serde_json::Value) {
    let mut all = vec!["check", "--format", "json"];
    all.extend_from_slice(args);
    let run = guardband(cwd, &all);
    let value = serde_json::from_str(&run.stdout)
        .unwrap_or_else(|e| panic!("bad JSON ({e}): {}\n{}", run.stdout, run.stderr));
    (run.code, value)
}

/// Rule names in a JSON report.
pub fn rules_of(report: &serde_json::Value) -> Vec<String> {
    report["diagnostics"]
        .as_array()
        .expect("diagnostics array")
        .iter()
        .map(|d| d["rule"].as_str().unwrap_or_default().to_string())
        .collect()
}

/// A fresh empty folder under the system temp folder.
pub fn temp_dir(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("guardband-test-{}-{name}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("temp dir");
    dir
}

/// Whether the editor `program` can be run. Under CI (`CI` set) a missing
/// one fails the test, naming the Debian `packages` `.ci/run` installs;
/// elsewhere the test is skipped, and says so on standard error.
pub fn editor_present(program: &str, packages: &str) -> bool {
    if Command::new(program).arg("--version").output().is_ok() {
        return true;
    }
    assert!(
        std::env::var_os("CI").is_none(),
        "CI must install {packages} (see .ci/run)"
    );
    eprintln!("skipped: {program} is not installed; the test did not run");
    false
}

/// The check arguments for a rule fixture `name` (a `.guard` file) in
/// `dir`: the file, and its results files when it has some beside it
/// (`fail.results.csv` or `fail.results.json` for `fail.guard`), for the
/// rules that hold evidence against the spec.
pub fn rule_fixture_args(dir: &Path, name: &str) -> Vec<String> {
    let stem = name.trim_end_matches(".guard");
    let mut args = vec![name.to_string()];
    for ext in ["csv", "json"] {
        let results = format!("{stem}.results.{ext}");
        if dir.join(&results).is_file() {
            args.push("--evidence".into());
            args.push(results);
        }
    }
    args
}

/// Copies the folder `from` into `to`, recursively.
pub fn copy_dir(from: &Path, to: &Path) {
    std::fs::create_dir_all(to).expect("mkdir");
    for entry in std::fs::read_dir(from).expect("read dir") {
        let entry = entry.expect("entry");
        let target = to.join(entry.file_name());
        if entry.file_type().expect("type").is_dir() {
            copy_dir(&entry.path(), &target);
        } else {
            std::fs::copy(entry.path(), &target).expect("copy");
        }
    }
}
