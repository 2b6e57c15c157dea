//! Snapshot tests of the rendered diagnostics: one snapshot per bad fixture
//! and per rule fixture, as a user sees them on a terminal without colour.

mod common;
use common::*;

/// The entries of a folder, sorted by name.
fn sorted(dir: &std::path::Path) -> Vec<std::path::PathBuf> {
    let mut entries: Vec<_> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .collect();
    entries.sort();
    entries
}

fn snapshot(name: &str, text: &str) {
    let mut settings = insta::Settings::clone_current();
    settings.set_snapshot_path(root().join("tests/snapshots"));
    settings.set_prepend_module_to_snapshot(false);
    settings.bind(|| insta::assert_snapshot!(name, text));
}

#[test]
fn diagnostics_fixtures() {
    let dir = fixture("diagnostics");
    for file in sorted(&dir) {
        let name = file.file_name().unwrap().to_string_lossy().into_owned();
        let run = guardband(&dir, &["check", &name]);
        snapshot(
            &format!("diagnostics__{}", name.trim_end_matches(".guard")),
            &run.stdout,
        );
    }
}

#[test]
fn slip_fixtures() {
    let dir = fixture("slips");
    for file in sorted(&dir) {
        let name = file.file_name().unwrap().to_string_lossy().into_owned();
        let run = guardband(&dir, &["check", &name]);
        snapshot(
            &format!("slip__{}", name.trim_end_matches(".guard")),
            &run.stdout,
        );
    }
}

#[test]
fn workspace_fixtures() {
    for ws in ["import_cycle", "outside/inner", "bad_config"] {
        let run = guardband(&fixture(&format!("workspaces/{ws}")), &["check", "."]);
        snapshot(&format!("workspace__{}", ws.replace('/', "_")), &run.stdout);
    }
}

#[test]
fn rule_fixtures() {
    let dir = fixture("rules");
    for rule_dir in sorted(&dir) {
        let rule = rule_dir.file_name().unwrap().to_string_lossy().into_owned();
        for file in sorted(&rule_dir) {
            if file.extension().is_none_or(|e| e != "guard") {
                continue;
            }
            let name = file.file_name().unwrap().to_string_lossy().into_owned();
            let mut args = vec!["check".to_string()];
            args.extend(rule_fixture_args(&rule_dir, &name));
            let args: Vec<&str> = args.iter().map(String::as_str).collect();
            let run = guardband(&rule_dir, &args);
            snapshot(
                &format!("rule__{rule}__{}", name.trim_end_matches(".guard")),
                &run.stdout,
            );
        }
    }
}
