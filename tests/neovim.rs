//! Neovim, headless, with `editors/neovim`: it opens a flawed example and
//! must receive the same diagnostics as `guardband check` reports.
//! `.ci/run` installs Debian's `neovim`; without it the test fails under CI
//! and elsewhere passes as skipped (its name says so).

mod common;

use common::{check_json, root, temp_dir};
use serde_json::Value;
use std::process::Command;

/// Byte column of a 1-based character column on a line.
fn byte_column(line: &str, char_column: u64) -> u64 {
    line.chars()
        .take(char_column.saturating_sub(1) as usize)
        .map(char::len_utf8)
        .sum::<usize>() as u64
}

#[test]
fn neovim_gets_the_diagnostics_the_command_line_reports_or_is_skipped_without_nvim() {
    if !common::editor_present("nvim", "neovim") {
        return;
    }
    let dir = temp_dir("neovim");
    let out = dir.join("diagnostics.json");
    let file = root().join("examples/flawed/aux_rail.guard");
    let status = Command::new("nvim")
        .args(["--headless", "-u", "NONE", "-i", "NONE", "-n", "-c"])
        .arg(format!(
            "luafile {}",
            root().join("tests/neovim/diagnostics.lua").display()
        ))
        .env("GUARDBAND_RTP", root().join("editors/neovim"))
        .env("GUARDBAND_BIN", env!("CARGO_BIN_EXE_guardband"))
        .env("GUARDBAND_FILE", &file)
        .env("GUARDBAND_OUT", &out)
        .current_dir(&dir)
        .status()
        .expect("run nvim");
    assert!(status.success());
    let got: Value =
        serde_json::from_str(&std::fs::read_to_string(&out).expect("nvim wrote its report"))
            .expect("json");
    assert_eq!(got["ok"], true, "diagnostics arrived: {got}");
    assert_eq!(got["filetype"], "guard");

    let text = std::fs::read_to_string(&file).expect("read");
    let lines: Vec<&str> = text.lines().collect();
    let (_, report) = check_json(&root().join("examples"), &["flawed/aux_rail.guard"]);
    let mut expected: Vec<(u64, u64, String, String)> = report["diagnostics"]
        .as_array()
        .expect("array")
        .iter()
        .filter(|d| d["file"] == "flawed/aux_rail.guard")
        .map(|d| {
            let line = d["range"]["start"]["line"].as_u64().unwrap_or(1);
            let col = d["range"]["start"]["column"].as_u64().unwrap_or(1);
            (
                line - 1,
                byte_column(lines[(line - 1) as usize], col),
                d["rule"].as_str().unwrap_or("").to_string(),
                d["message"].as_str().unwrap_or("").to_string(),
            )
        })
        .collect();
    let mut received: Vec<(u64, u64, String, String)> = got["diagnostics"]
        .as_array()
        .expect("array")
        .iter()
        .map(|d| {
            let message = d["message"].as_str().unwrap_or("");
            (
                d["lnum"].as_u64().unwrap_or(0),
                d["col"].as_u64().unwrap_or(0),
                d["code"].as_str().unwrap_or("").to_string(),
                message.split("\nhelp: ").next().unwrap_or("").to_string(),
            )
        })
        .collect();
    expected.sort();
    received.sort();
    assert!(!expected.is_empty());
    assert_eq!(received, expected);
}
