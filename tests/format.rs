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
    let read = |p: &Path, _limit: usize| -> std::io::Result<Vec<u8>> {
        if p == path {
            Ok(text.as_bytes().to_vec())
        } else {
            std::fs::read(p)
        }
    };
    let checked =
        guardband_check::check_workspace(&root, &[path.to_path_buf()], &read).expect("check");
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

/// The fixture files of the rules that fail, with their text.
fn failing_fixtures() -> Vec<(PathBuf, String)> {
    let mut files = Vec::new();
    guard_files(&root().join("tests/fixtures/rules"), &mut files);
    files.sort();
    files
        .into_iter()
        .filter(|p| {
            p.file_name()
                .is_some_and(|n| n.to_string_lossy().starts_with("fail"))
        })
        .map(|p| {
            let text = std::fs::read_to_string(&p).expect("read");
            (p.canonicalize().expect("canonical"), text)
        })
        .collect()
}

/// `text` with a waiver of `rule` after token `at`: on a line of its own
/// (before the next token) or trailing the token's line.
fn with_waiver(text: &str, at: usize, rule: &str, own_line: bool) -> String {
    let (tokens, _) = guardband_syntax::lex(text);
    let Some((_, span)) = tokens.get(at % tokens.len().max(1)) else {
        return text.to_string();
    };
    let waiver = format!("// waive {rule}: kept across formatting");
    let mut out = text[..span.end].to_string();
    if own_line {
        out.push('\n');
        out.push_str(&waiver);
        out.push('\n');
    } else {
        out.push_str("  ");
        out.push_str(&waiver);
        out.push('\n');
    }
    out.push_str(&text[span.end..]);
    out
}

proptest::proptest! {
    #![proptest_config(proptest::prelude::ProptestConfig {
        cases: 96,
        rng_seed: proptest::test_runner::RngSeed::Fixed(7),
        failure_persistence: None,
        ..proptest::prelude::ProptestConfig::default()
    })]

    /// Formatting never changes what a waiver waives: the findings,
    /// waived or not, and the waivers that waive nothing, are the same
    /// before and after.
    #[test]
    fn formatting_keeps_what_waivers_waive(
        pick in 0usize..1000,
        waivers in proptest::collection::vec((0usize..400, proptest::bool::ANY), 1..4),
    ) {
        let fixtures = failing_fixtures();
        let (path, text) = &fixtures[pick % fixtures.len()];
        let rule = path.parent().and_then(|p| p.file_name()).map(|n| n.to_string_lossy().into_owned()).unwrap_or_default();
        let mut waived = text.clone();
        for (at, own_line) in waivers {
            waived = with_waiver(&waived, at, &rule, own_line);
        }
        let Some(formatted) = guardband_syntax::format::format(&waived) else {
            return Ok(());
        };
        let (_, before) = meaning(path, &waived);
        let (_, after) = meaning(path, &formatted);
        proptest::prop_assert_eq!(before, after, "{}\n---\n{}", waived, formatted);
    }
}
