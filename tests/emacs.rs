//! Emacs, headless, with `editors/emacs` and eglot (Debian's `elpa-eglot`
//! on Emacs 28, or the eglot built into Emacs 29): it opens a flawed
//! example and must receive the same diagnostics as `guardband check`
//! reports. `.ci/run` installs both; without Emacs the test fails under CI,
//! and elsewhere passes as skipped (its name says so).

mod common;

use common::{check_json, root, temp_dir};
use serde_json::Value;
use std::process::Command;

#[test]
fn emacs_eglot_gets_the_diagnostics_the_command_line_reports_or_is_skipped_without_emacs() {
    if !common::editor_present("emacs", "emacs-nox and elpa-eglot") {
        return;
    }
    let dir = temp_dir("emacs");
    let out = dir.join("diagnostics.json");
    let file = root().join("examples/flawed/aux_rail.guard");
    // `-q` skips the user's init file but keeps the site start files, which
    // put Debian's ELPA packages (eglot) on the load path.
    let run = Command::new("emacs")
        .args(["--batch", "-q", "-L"])
        .arg(root().join("editors/emacs"))
        .arg("-l")
        .arg(root().join("tests/emacs/diagnostics.el"))
        .env("GUARDBAND_BIN", env!("CARGO_BIN_EXE_guardband"))
        .env("GUARDBAND_FILE", &file)
        .env("GUARDBAND_OUT", &out)
        .current_dir(&dir)
        .output()
        .expect("run emacs");
    let log = String::from_utf8_lossy(&run.stderr);
    assert!(run.status.success(), "emacs failed:\n{log}");
    let got: Value = serde_json::from_str(
        &std::fs::read_to_string(&out).unwrap_or_else(|_| panic!("emacs wrote no report:\n{log}")),
    )
    .expect("json");
    assert_eq!(got["ok"], true, "diagnostics arrived: {got}\n{log}");
    assert_eq!(got["mode"], "guardband-mode");

    let (_, report) = check_json(&root().join("examples"), &["flawed/aux_rail.guard"]);
    let mut expected: Vec<(u64, u64, String, String)> = report["diagnostics"]
        .as_array()
        .expect("array")
        .iter()
        .filter(|d| d["file"] == "flawed/aux_rail.guard")
        .map(|d| {
            (
                d["range"]["start"]["line"].as_u64().unwrap_or(0),
                d["range"]["start"]["column"].as_u64().unwrap_or(0),
                d["rule"].as_str().unwrap_or("").to_string(),
                d["message"].as_str().unwrap_or("").to_string(),
            )
        })
        .collect();
    // eglot shows a diagnostic as "SOURCE [CODE]: MESSAGE"; the server adds
    // the help after the message.
    let mut received: Vec<(u64, u64, String, String)> = got["diagnostics"]
        .as_array()
        .expect("array")
        .iter()
        .map(|d| {
            let text = d["text"].as_str().unwrap_or("");
            let rest = text
                .strip_prefix("guardband [")
                .unwrap_or_else(|| panic!("{text}"));
            let (rule, message) = rest.split_once("]: ").unwrap_or_else(|| panic!("{text}"));
            (
                d["line"].as_u64().unwrap_or(0),
                d["column"].as_u64().unwrap_or(0),
                rule.to_string(),
                message.split("\nhelp: ").next().unwrap_or("").to_string(),
            )
        })
        .collect();
    expected.sort();
    received.sort();
    assert!(!expected.is_empty());
    assert_eq!(received, expected);
}
