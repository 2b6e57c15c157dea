//! The formatter keeps meaning and is idempotent on every spec in the
//! repository: the model (every field's evaluated value) and the findings
//! (rules and messages) are the same before and after.

mod common;

use common::{guardband, root, temp_dir};
use std::path::{Path, PathBuf};

fn guard_files(dir: &Path, out: &mut Vec<PathBuf>) {
    for entry in std::fs::read_dir(dir).expect("read dir").flatten() {
        let path = entry.path();
        if path.is_dir() {
            guard_files(&path, out);
        } else if path.extension().is_some_and(|e| e == "guard") {
            out.push(path);
        }
    }
}

/// Every field's value and every finding, without positions.
fn meaning(path: &Path, text: &str) -> (Vec<String>, Vec<String>) {
    let root = path.parent().expect("parent").to_path_buf();
    let read = |p: &Path| -> std::io::Result<Vec<u8>> {
        if p == path {
            Ok(text.as_bytes().to_vec())
        } else {
            std::fs::read(p)
        }
    };
    let checked =
        guardband_rules::check_workspace(&root, &[path.to_path_buf()], &read).expect("check");
    let values = checked
        .model
        .nodes
        .iter()
        .flat_map(|n| {
            n.fields
                .iter()
                .map(move |f| format!("{}.{} {:?} {:?}", n.path, f.key, f.relation, f.value))
        })
        .collect();
    let findings = checked
        .diagnostics
        .iter()
        .map(|d| format!("{} {}", d.rule, d.message))
        .collect();
    (values, findings)
}

#[test]
fn formatting_every_spec_keeps_its_meaning_and_is_idempotent() {
    let mut files = Vec::new();
    guard_files(&root().join("examples"), &mut files);
    guard_files(&root().join("tests/fixtures"), &mut files);
    let mut formatted_count = 0;
    for path in files {
        let path = path.canonicalize().expect("canonical");
        let Ok(text) = std::fs::read_to_string(&path) else {
            continue; // deliberately undecodable fixtures
        };
        let Some(once) = guardband_syntax::format::format(&text) else {
            continue; // files with syntax errors are refused, as documented
        };
        formatted_count += 1;
        let twice = guardband_syntax::format::format(&once).expect("formats again");
        assert_eq!(once, twice, "not idempotent: {}", path.display());
        assert_eq!(
            meaning(&path, &text),
            meaning(&path, &once),
            "meaning changed: {}",
            path.display()
        );
    }
    assert!(
        formatted_count >= 20,
        "only {formatted_count} files formatted"
    );
}

#[test]
fn the_examples_are_in_canonical_layout() {
    let run = guardband(&root(), &["fmt", "--check", "examples"]);
    assert_eq!(run.code, 0, "{}{}", run.stdout, run.stderr);
}

#[test]
fn fmt_check_reports_and_fmt_rewrites_and_broken_files_are_left_alone() {
    let dir = temp_dir("fmt-cli");
    std::fs::write(
        dir.join("a.guard"),
        "regulator r {\n  load=0 mA .. 1 mA\n}\n",
    )
    .expect("write");
    std::fs::write(dir.join("broken.guard"), "regulator r {\n  load = \n").expect("write");
    let check = guardband(&dir, &["fmt", "--check", "a.guard"]);
    assert_eq!(check.code, 1);
    assert!(
        check.stdout.contains("would reformat a.guard"),
        "{}",
        check.stdout
    );
    let run = guardband(&dir, &["fmt", "a.guard"]);
    assert_eq!(run.code, 0);
    assert_eq!(
        std::fs::read_to_string(dir.join("a.guard")).expect("read"),
        "regulator r {\n    load = 0 mA .. 1 mA\n}\n"
    );
    let broken = guardband(&dir, &["fmt", "broken.guard"]);
    assert_eq!(broken.code, 2);
    assert!(broken.stderr.contains("syntax errors"), "{}", broken.stderr);
    assert_eq!(
        std::fs::read_to_string(dir.join("broken.guard")).expect("read"),
        "regulator r {\n  load = \n"
    );
}
