//! Hostile input, in process: every example truncated at every 97th byte,
//! random byte flips, 100,000-deep nesting, a million fields, a 10 MB string.
//! Each must end with diagnostics (or a clean pass), never a panic or a hang.
//! Times are printed, not asserted (speed is measured by the benchmarks).

mod common;

use common::{root, temp_dir};
use std::path::{Path, PathBuf};
use std::time::Instant;

/// Checks `text` as `dir/name` (other files from disk) on a big-stack thread,
/// as the command line does; returns the number of findings.
fn check_text(dir: &Path, name: &str, text: Vec<u8>) -> usize {
    let dir = dir.to_path_buf();
    let path = dir.join(name);
    std::thread::Builder::new()
        .stack_size(256 * 1024 * 1024)
        .spawn(move || {
            let read = |p: &Path, _limit: usize| -> std::io::Result<Vec<u8>> {
                if p == path {
                    Ok(text.clone())
                } else {
                    std::fs::read(p)
                }
            };
            guardband_check::check_workspace(&dir, std::slice::from_ref(&path), &read)
                .expect("checks")
                .diagnostics
                .len()
        })
        .expect("thread")
        .join()
        .expect("no panic")
}

fn examples() -> Vec<(PathBuf, String)> {
    let dir = root().join("examples");
    [
        "sensor_rail.guard",
        "radio_rail.guard",
        "flawed/aux_rail.guard",
        "flawed/lamp_rail.guard",
        "flawed/wake_rail.guard",
        "process/wren180.guard",
    ]
    .iter()
    .map(|n| (dir.clone(), n.to_string()))
    .collect()
}

#[test]
fn every_example_truncated_at_every_97th_byte() {
    let start = Instant::now();
    let mut cases = 0;
    for (dir, name) in examples() {
        let bytes = std::fs::read(dir.join(&name)).expect("read");
        for cut in (0..bytes.len()).step_by(97) {
            check_text(&dir, &name, bytes[..cut].to_vec());
            cases += 1;
        }
    }
    assert!(cases > 100, "{cases} truncations");
    eprintln!("{cases} truncations in {:?}", start.elapsed());
}

#[test]
fn random_byte_flips() {
    // A fixed xorshift sequence, so a failure can be replayed.
    let mut state: u64 = 0x9e37_79b9_7f4a_7c15;
    let mut next = move || {
        state ^= state << 13;
        state ^= state >> 7;
        state ^= state << 17;
        state
    };
    let start = Instant::now();
    let mut cases = 0;
    for (dir, name) in examples() {
        let original = std::fs::read(dir.join(&name)).expect("read");
        for _ in 0..40 {
            let mut bytes = original.clone();
            for _ in 0..(1 + next() % 8) {
                let at = (next() % bytes.len() as u64) as usize;
                bytes[at] = (next() & 0xff) as u8;
            }
            check_text(&dir, &name, bytes);
            cases += 1;
        }
    }
    eprintln!("{cases} flipped files in {:?}", start.elapsed());
}

#[test]
fn hundred_thousand_deep_nesting() {
    let dir = temp_dir("hostile-nesting");
    let depth = 100_000;
    let parens = format!(
        "regulator r {{\n    load = {}1 mA{} .. 2 mA\n}}\n",
        "(".repeat(depth),
        ")".repeat(depth)
    );
    let braces = format!("regulator r {{\n{}\n}}\n", "pin p {".repeat(depth));
    for (what, text) in [("parentheses", parens), ("braces", braces)] {
        let start = Instant::now();
        let found = check_text(&dir, "deep.guard", text.into_bytes());
        assert!(found >= 1, "{what}: the nesting is reported");
        eprintln!(
            "{depth}-deep {what}: {found} findings in {:?}",
            start.elapsed()
        );
    }
}

#[test]
fn a_million_fields_and_a_ten_megabyte_string() {
    let dir = temp_dir("hostile-big");
    std::fs::write(
        dir.join("guardband.toml"),
        "[limits]\nmax_file_size = \"64 MiB\"\n",
    )
    .expect("config");
    let mut text = String::from("process many {\n");
    for i in 0..1_000_000 {
        text.push_str(&format!("spread s{i} = ± 1 %\n"));
    }
    text.push_str("}\n");
    let start = Instant::now();
    let found = check_text(&dir, "many.guard", text.into_bytes());
    assert_eq!(found, 0, "a million valid fields are just fields");
    eprintln!("1,000,000 fields: {:?}", start.elapsed());

    let string = format!(
        "regulator r {{\n    description = \"{}\"\n    load = 0 mA .. 1 mA\n}}\n",
        "x".repeat(10 * 1024 * 1024)
    );
    let start = Instant::now();
    check_text(&dir, "string.guard", string.into_bytes());
    eprintln!("10 MB string: {:?}", start.elapsed());
}
