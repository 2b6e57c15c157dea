//! `guardband diff`: two revisions of the example workspace, one with a
//! changed mirror ratio, a tolerance added, a quiescent current dropped and
//! a waiver reworded; the diff lists exactly what moved.

mod common;

use common::{guardband, root, temp_dir};
use serde_json::Value;
use std::path::Path;

fn copy_tree(from: &Path, to: &Path) {
    std::fs::create_dir_all(to).expect("mkdir");
    for entry in std::fs::read_dir(from).expect("read dir").flatten() {
        let path = entry.path();
        let target = to.join(entry.file_name());
        if path.is_dir() {
            copy_tree(&path, &target);
        } else {
            std::fs::copy(&path, &target).expect("copy");
        }
    }
}

fn edit(file: &Path, from: &str, to: &str) {
    let text = std::fs::read_to_string(file).expect("read");
    assert!(text.contains(from), "{} holds {from:?}", file.display());
    std::fs::write(file, text.replacen(from, to, 1)).expect("write");
}

/// A folder holding the examples twice, as `before` and `after`; returns
/// the folder and `after`.
fn two_copies(name: &str) -> (std::path::PathBuf, std::path::PathBuf) {
    let dir = temp_dir(name);
    let (before, after) = (dir.join("before"), dir.join("after"));
    copy_tree(&root().join("examples"), &before);
    copy_tree(&root().join("examples"), &after);
    (dir, after)
}

/// A folder holding the examples twice: `before` as they are, `after`
/// with four edits.
fn two_revisions(name: &str) -> std::path::PathBuf {
    let (dir, after) = two_copies(name);
    let aux = after.join("flawed/aux_rail.guard");
    edit(&aux, "ratio       = 4000", "ratio       = 5000");
    edit(&aux, "output       = 3.3 V ", "output       = 3.3 V ± 2 %");
    edit(&aux, "    quiescent    = 80 uA .. 150 uA\n", "");
    edit(
        &after.join("flawed/lamp_rail.guard"),
        "board-level figure from the module maker's thermal report",
        "board-level figure, re-measured on the second build",
    );
    dir
}

#[test]
fn the_markdown_comment_lists_what_moved() {
    let dir = two_revisions("diff-markdown");
    let run = guardband(&dir, &["diff", "before", "after"]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    let md = &run.stdout;
    assert!(
        md.starts_with("## guardband: derived figures, before → after\n"),
        "{md}"
    );
    // The limit current is ratio × reference: 5000 / 4000 = 1.25, so each
    // edge of the window moves by +25 % (arithmetic; the low edge reads
    // +25.4 % because the change is computed from the digits shown,
    // (148 − 118) / 118).
    assert!(
        md.contains("| `sensed` limit window, worst case | 118 mA .. 208 mA | 148 mA .. 260 mA | 118 mA → 148 mA (+25.4 %); 208 mA → 260 mA (+25 %) |"),
        "{md}"
    );
    // Temperatures move in kelvin.
    assert!(
        md.contains("| die temperature in a fault | 130 °C | 145 °C | 130 °C → 145 °C (+15 K) |"),
        "{md}"
    );
    // Without a quiescent current the heat at rated load is no longer derived.
    assert!(
        md.contains("### New findings\n\n- **info** `figure-not-derived` in flawed/aux_rail.guard"),
        "{md}"
    );
    assert!(md.contains("### Resolved findings\n\n- **info** `tolerance-missing` in flawed/aux_rail.guard at line 8"), "{md}");
    assert!(md.contains("### Reworded findings"), "{md}");
    assert!(
        md.contains("### Waivers changed\n\n- flawed/lamp_rail.guard at line 14: waives `tolerance-missing`: board-level figure, re-measured on the second build\n  (was: board-level figure from the module maker's thermal report)"),
        "{md}"
    );
    // Regulators that did not move are not listed.
    assert!(!md.contains("radio_rail"), "{md}");
    assert!(md.contains("does not replace sign-off"));
}

#[test]
fn the_json_diff_carries_values_and_changes() {
    let dir = two_revisions("diff-json");
    let out = dir.join("diff.json");
    let run = guardband(
        &dir,
        &[
            "diff",
            "before",
            "after",
            "--format",
            "json",
            "--output",
            out.to_str().expect("utf-8"),
        ],
    );
    assert_eq!(run.code, 0, "{}", run.stderr);
    assert!(run.stdout.is_empty());
    let v: Value =
        serde_json::from_str(&std::fs::read_to_string(&out).expect("written")).expect("json");
    assert_eq!(v["version"], 1);
    let regs = v["regulators"].as_array().expect("regulators");
    assert_eq!(regs.len(), 1, "{v:#}");
    assert_eq!(regs[0]["name"], "aux_rail");
    assert_eq!(regs[0]["status"], "changed");
    let window = regs[0]["figures"]
        .as_array()
        .expect("figures")
        .iter()
        .find(|f| f["figure"] == "`sensed` limit window, worst case")
        .expect("the window moved");
    let top = &window["moved"][1];
    assert_eq!(top["before"]["text"], "208 mA");
    assert!((top["before"]["value"].as_f64().expect("number") - 0.208).abs() < 1e-12);
    assert!((top["after"]["value"].as_f64().expect("number") - 0.260).abs() < 1e-12);
    assert_eq!(top["after"]["unit"], "A");
    assert_eq!(top["change"], "+25 %");
    assert_eq!(v["findings"]["new"].as_array().map(Vec::len), Some(1));
    assert_eq!(v["findings"]["resolved"].as_array().map(Vec::len), Some(1));
    assert_eq!(v["waivers"]["changed"].as_array().map(Vec::len), Some(1));
    assert_eq!(v["waivers"]["added"].as_array().map(Vec::len), Some(0));
}

#[test]
fn the_same_revision_twice_moves_nothing_and_a_missing_one_is_an_error() {
    let examples = root().join("examples");
    let run = guardband(&root(), &["diff", "examples", "examples"]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    assert!(
        run.stdout
            .contains("No derived figure, finding or waiver changed."),
        "{}",
        run.stdout
    );
    let run = guardband(&root(), &["diff", "examples", "no-such-folder"]);
    assert_eq!(run.code, 2);
    assert!(
        run.stderr.contains("no-such-folder does not exist"),
        "{}",
        run.stderr
    );
    assert!(examples.is_dir());
}

// A shared supply's droop is a derived figure like a regulator's: raising
// the cell's resistance top from 250 to 300 mΩ adds 50 mΩ × the 0.4 A of
// surge the rails draw together (the droop's resistive term, Ohm's law):
// 0.104 V → 0.124 V.
#[test]
fn a_supply_that_moved_is_listed_with_its_droop() {
    let (dir, after) = two_copies("diff-supply");
    edit(
        &after.join("tern_cell.guard"),
        "resistance = 120 mohm .. 250 mohm",
        "resistance = 120 mohm .. 300 mohm",
    );
    let run = guardband(&dir, &["diff", "before", "after"]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    let md = &run.stdout;
    assert!(
        md.contains("0 regulators and 1 supply changed, added or removed;"),
        "{md}"
    );
    assert!(
        md.contains("### Supply `tern_cell` (tern_cell.guard, changed)"),
        "{md}"
    );
    assert!(md.contains("0.104 V → 0.124 V (+19.2 %)"), "{md}");
    let run = guardband(&dir, &["diff", "before", "after", "--format", "json"]);
    let v: Value = serde_json::from_str(&run.stdout).expect("json");
    assert_eq!(v["supplies"][0]["name"], "tern_cell");
    assert_eq!(v["regulators"].as_array().map(Vec::len), Some(0));
}

// A figure that moves at one named corner only is listed under that
// corner: the box (the regulator's own 0.35 A .. 1.2 A) does not move.
#[test]
fn a_figure_that_moved_at_one_corner_is_named_by_it() {
    let (dir, after) = two_copies("diff-corner");
    edit(
        &after.join("sensor_rail.guard"),
        "full_gate_current = 0.7 A .. 1.2 A",
        "full_gate_current = 0.75 A .. 1.2 A",
    );
    let run = guardband(&dir, &["diff", "before", "after"]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    let md = &run.stdout;
    let moved: Vec<&str> = md.lines().filter(|l| l.contains("full-gate")).collect();
    assert_eq!(moved.len(), 1, "{md}");
    assert!(
        moved[0].contains("at corner `strong`")
            && moved[0].contains("0.7 A .. 1.2 A")
            && moved[0].contains("0.75 A .. 1.2 A"),
        "{md}"
    );
}

/// Runs git in `dir` for the test's own repository (the product reads
/// revisions without running git).
fn git(dir: &Path, args: &[&str]) {
    let status = std::process::Command::new("git")
        .args([
            "-c",
            "user.name=guardband test",
            "-c",
            "user.email=test@invalid",
        ])
        .args([
            "-c",
            "commit.gpgsign=false",
            "-c",
            "init.defaultBranch=main",
        ])
        .args(args)
        .current_dir(dir)
        .status()
        .expect("run git");
    assert!(status.success(), "git {args:?}");
}

// A git revision against the work tree: the committed examples, then the
// mirror ratio raised in the work tree only (not committed). The limit
// window is ratio × reference, so its edges move by 5000 / 4000 = +25 %
// (arithmetic), and nothing else in `sensor_rail` moves.
#[test]
fn a_git_revision_is_compared_with_the_work_tree() {
    let dir = temp_dir("diff-rev");
    copy_tree(&root().join("examples"), &dir.join("specs"));
    git(&dir, &["init", "-q"]);
    git(&dir, &["add", "."]);
    git(&dir, &["commit", "-q", "-m", "specs"]);
    edit(
        &dir.join("specs/flawed/aux_rail.guard"),
        "ratio       = 4000",
        "ratio       = 5000",
    );
    let run = guardband(&dir, &["diff", "--rev", "HEAD", "specs"]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    let md = &run.stdout;
    assert!(
        md.starts_with("## guardband: derived figures, specs at HEAD → specs\n"),
        "{md}"
    );
    assert!(
        md.contains("### Regulator `aux_rail` (flawed/aux_rail.guard, changed)"),
        "{md}"
    );
    assert!(md.contains("(+25 %)"), "{md}");
    assert!(!md.contains("`sensor_rail`"), "{md}");
    // Nothing moved between the revision and itself.
    edit(
        &dir.join("specs/flawed/aux_rail.guard"),
        "ratio       = 5000",
        "ratio       = 4000",
    );
    let same = guardband(&dir, &["diff", "--rev", "HEAD", "specs"]);
    assert!(
        same.stdout
            .contains("No derived figure, finding or waiver changed."),
        "{}",
        same.stdout
    );
    // An unknown revision is a usage error that names it.
    let bad = guardband(&dir, &["diff", "--rev", "no-such-branch", "specs"]);
    assert_eq!(bad.code, 2);
    assert!(bad.stderr.contains("no-such-branch"), "{}", bad.stderr);
}
