//! Hostile inputs: each gives diagnostics or a clean pass, never a panic or a hang.

mod common;
use common::*;

fn check_bytes(name: &str, bytes: &[u8]) -> Run {
    let dir = temp_dir(name);
    std::fs::write(dir.join("input.guard"), bytes).unwrap();
    let run = guardband(&dir, &["check", "input.guard"]);
    assert!(
        run.code == 0 || run.code == 1,
        "{name}: exit {} (stderr: {})",
        run.code,
        run.stderr
    );
    assert!(
        run.stdout.contains("in 1 file"),
        "{name}: no summary: {}",
        run.stdout
    );
    assert!(!run.stderr.contains("panicked"), "{name}: {}", run.stderr);
    run
}

#[test]
fn empty_and_comment_only_files_pass() {
    assert_eq!(check_bytes("empty", b"").code, 0);
    assert_eq!(
        check_bytes("comments", b"// nothing here\n// at all\n").code,
        0
    );
}

#[test]
fn invalid_utf8_is_one_clear_error() {
    let run = check_bytes("utf8", b"regulator r {\n  load = 0 mA .. \xff\xfe mA\n}\n");
    assert_eq!(run.code, 1);
    assert!(run.stdout.contains("not valid UTF-8"), "{}", run.stdout);
    assert!(
        run.stdout.contains("input.guard:2:"),
        "points at line 2: {}",
        run.stdout
    );
}

#[test]
fn nul_byte_is_reported_as_binary() {
    let run = check_bytes("nul", b"regulator r {\0}\n");
    assert_eq!(run.code, 1);
    assert!(run.stdout.contains("NUL byte"), "{}", run.stdout);
}

#[test]
fn ten_thousand_nested_parentheses() {
    let depth = 10_000;
    let text = format!(
        "regulator r {{ load = {}1 mA{} }}\n",
        "(".repeat(depth),
        ")".repeat(depth)
    );
    let run = check_bytes("nesting", text.as_bytes());
    assert!(run.stdout.contains("nesting deeper than"), "{}", run.stdout);
    let unclosed = format!("regulator r {{ load = {}\n", "(".repeat(depth));
    check_bytes("nesting_unclosed", unclosed.as_bytes());
}

#[test]
fn five_megabyte_single_lines() {
    let comment = format!("// {}\n", "x".repeat(5 * 1024 * 1024));
    assert_eq!(check_bytes("long_comment", comment.as_bytes()).code, 0);
    let sum = format!(
        "regulator r {{ load = 0 mA .. 1 mA{} }}",
        " + 1 mA".repeat(5 * 1024 * 1024 / 7)
    );
    check_bytes("long_sum", sum.as_bytes());
    let junk = "@#$ ".repeat(5 * 1024 * 1024 / 4);
    let run = check_bytes("long_junk", junk.as_bytes());
    assert_eq!(run.code, 1);
}

#[test]
fn crlf_and_bom_are_transparent() {
    let text = "\u{feff}regulator r {\r\n    load = 0 mA .. 150 mV\r\n}\r\n";
    let run = check_bytes("crlf_bom", text.as_bytes());
    assert_eq!(run.code, 1);
    // The error is on line 2, column 12, as the user sees it (the BOM is not a column).
    assert!(run.stdout.contains("input.guard:2:12"), "{}", run.stdout);
    let (_, report) = check_json(&temp_dir("crlf_bom"), &["."]);
    assert_eq!(report["files_checked"], 0);
}

#[test]
fn random_bytes_never_panic() {
    // A fixed pseudo-random sequence (xorshift) over the token alphabet and raw bytes.
    let alphabet: Vec<&[u8]> = vec![
        b"regulator ",
        b"process ",
        b"use ",
        b"\"x.guard\" ",
        b"{",
        b"}",
        b"(",
        b")",
        b"=",
        b"..",
        b"+/-",
        "±".as_bytes(),
        b"mA",
        b" 1.5 ",
        b"-",
        b"*",
        b"/",
        b".",
        b",",
        b"pin ",
        b"limit ",
        b"\n",
        b"//",
        b"<=",
        b"x",
        b"pass",
        b"true",
        "°C".as_bytes(),
        b"\r\n",
        b"^",
        b"2e400",
    ];
    let mut state: u64 = 0x9E37_79B9_7F4A_7C15;
    let mut next = || {
        state ^= state << 13;
        state ^= state >> 7;
        state ^= state << 17;
        state
    };
    for case in 0..40 {
        let mut text = Vec::new();
        for _ in 0..(next() % 400) {
            text.extend_from_slice(alphabet[(next() % alphabet.len() as u64) as usize]);
        }
        check_bytes(&format!("random{case}"), &text);
    }
}
