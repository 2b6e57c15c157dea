//! The tree-sitter grammar in `editors/tree-sitter-guard` against the real
//! parser: every example and fixture the checker parses without a syntax
//! error parses there without an error node, and every file with a syntax
//! error has one. `.ci/run` installs the tree-sitter CLI and generates the
//! parser; without the CLI the test fails under CI and elsewhere passes as
//! skipped (its name says so).

mod common;

use common::root;
use std::path::{Path, PathBuf};
use std::process::Command;

fn guard_files(dir: &Path, out: &mut Vec<PathBuf>) {
    let Ok(entries) = std::fs::read_dir(dir) else {
        return;
    };
    let mut entries: Vec<PathBuf> = entries.flatten().map(|e| e.path()).collect();
    entries.sort();
    for path in entries {
        if path.is_dir() {
            guard_files(&path, out);
        } else if path.extension().is_some_and(|e| e == "guard") {
            out.push(path);
        }
    }
}

/// The files among `files` in which tree-sitter finds an ERROR or MISSING
/// node: one run over all of them (`--quiet` prints a line, starting with
/// the path, for each such file only).
fn tree_sitter_errors(grammar: &Path, files: &[PathBuf], list: &Path) -> Vec<PathBuf> {
    let paths: Vec<String> = files.iter().map(|f| f.display().to_string()).collect();
    std::fs::write(list, paths.join("\n")).expect("write the list");
    let out = Command::new("tree-sitter")
        .args(["parse", "--quiet", "--paths"])
        .arg(list)
        .current_dir(grammar)
        .output()
        .expect("run tree-sitter");
    String::from_utf8_lossy(&out.stdout)
        .lines()
        .filter(|l| l.contains("ERROR") || l.contains("MISSING"))
        .filter_map(|l| l.split('\t').next())
        .map(|p| PathBuf::from(p.trim()))
        .collect()
}

/// Every 89th-byte prefix of `text` (at character boundaries), most of
/// them cut inside a block, a field or a number: files with syntax errors
/// where the fixtures hold few.
fn prefixes(text: &str) -> Vec<&str> {
    (1..text.len())
        .step_by(89)
        .filter(|&i| text.is_char_boundary(i))
        .map(|i| &text[..i])
        .collect()
}

/// What the real parser says: `None` for a file it parses cleanly, else
/// the first error. Files that are not UTF-8 and files cut at the nesting
/// or chain limits (the checker's own bounds, which the grammar does not
/// have) are left out.
fn real_errors(text: &str) -> Option<String> {
    let parse = guardband_syntax::parse(text);
    parse.errors.first().map(|e| e.message.clone())
}

#[test]
fn tree_sitter_agrees_with_the_parser_on_every_file_or_is_skipped_without_the_cli() {
    if Command::new("tree-sitter")
        .arg("--version")
        .output()
        .is_err()
    {
        assert!(
            std::env::var_os("CI").is_none(),
            "CI must install tree-sitter-cli (see .ci/run)"
        );
        eprintln!("skipped: tree-sitter is not installed; the test did not run");
        return;
    }
    let grammar = root().join("editors/tree-sitter-guard");
    let mut files = Vec::new();
    guard_files(&root().join("examples"), &mut files);
    guard_files(&root().join("tests/fixtures"), &mut files);
    let cut = common::temp_dir("tree-sitter-prefixes");
    let mut cases: Vec<(PathBuf, Option<String>)> = Vec::new();
    for file in &files {
        let Ok(text) = std::fs::read_to_string(file) else {
            continue;
        };
        cases.push((file.clone(), real_errors(&text)));
        if file.starts_with(root().join("examples")) {
            let stem = file.file_stem().unwrap().to_string_lossy().into_owned();
            for (k, prefix) in prefixes(&text).into_iter().enumerate() {
                let path = cut.join(format!("{stem}-{k}.guard"));
                std::fs::write(&path, prefix).expect("write a prefix");
                cases.push((path, real_errors(prefix)));
            }
        }
    }
    // The checker's own bounds on nesting and chains are not the grammar's.
    cases.retain(|(_, real)| {
        !real
            .as_deref()
            .is_some_and(|m| m.contains("nested") || m.contains("operands"))
    });
    let paths: Vec<PathBuf> = cases.iter().map(|(p, _)| p.clone()).collect();
    let erring = tree_sitter_errors(&grammar, &paths, &cut.join("paths.txt"));
    let (mut clean, mut broken, mut disagree) = (0, 0, Vec::new());
    for (file, real) in &cases {
        let ts = erring.contains(file);
        match (real, ts) {
            (None, false) => clean += 1,
            (Some(_), true) => broken += 1,
            (None, true) => disagree.push(format!(
                "{}: the parser takes it, tree-sitter has an error node",
                file.display()
            )),
            (Some(m), false) => disagree.push(format!(
                "{}: the parser says `{m}`, tree-sitter has no error node",
                file.display()
            )),
        }
    }
    eprintln!(
        "tree-sitter and the parser: {clean} clean files, {broken} with syntax errors, {} disagreeing",
        disagree.len()
    );
    assert!(disagree.is_empty(), "{}", disagree.join("\n"));
    assert!(clean >= 40, "only {clean} clean files");
    assert!(broken >= 100, "only {broken} files with syntax errors");
}
