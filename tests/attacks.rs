//! Regression tests for the defects an attack on the command line found:
//! each reproduction as it was reported, run through the built binary.
//! Nothing here hangs: every run has a deadline, and a run that passes it
//! fails the test.

#![cfg(unix)]

mod common;

use common::temp_dir;
use std::os::unix::fs::symlink;
use std::path::Path;
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

/// Runs `guardband ARGS` in `cwd`, failing the test if it takes longer than `limit`.
fn within(limit: Duration, cwd: &Path, args: &[&str]) -> common::Run {
    let mut child = Command::new(env!("CARGO_BIN_EXE_guardband"))
        .args(args)
        .current_dir(cwd)
        .env("NO_COLOR", "1")
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("run guardband");
    // Read both pipes while waiting, or a full pipe would stall the child.
    let mut stdout = child.stdout.take().expect("stdout");
    let mut stderr = child.stderr.take().expect("stderr");
    let out = std::thread::spawn(move || {
        let mut b = Vec::new();
        let _ = std::io::Read::read_to_end(&mut stdout, &mut b);
        b
    });
    let err = std::thread::spawn(move || {
        let mut b = Vec::new();
        let _ = std::io::Read::read_to_end(&mut stderr, &mut b);
        b
    });
    let start = Instant::now();
    let status = loop {
        if let Some(status) = child.try_wait().expect("wait") {
            break status;
        }
        if start.elapsed() > limit {
            let _ = child.kill();
            panic!(
                "`guardband {}` did not finish within {limit:?}",
                args.join(" ")
            );
        }
        std::thread::sleep(Duration::from_millis(20));
    };
    common::Run {
        code: status.code().unwrap_or(-1),
        stdout: String::from_utf8_lossy(&out.join().expect("stdout")).into_owned(),
        stderr: String::from_utf8_lossy(&err.join().expect("stderr")).into_owned(),
    }
}

const DEADLINE: Duration = Duration::from_secs(60);

const CLEAN: &str = "regulator r {\n    supply = 3 V .. 4 V\n}\n";

#[test]
fn a_named_pipe_is_refused_not_read() {
    let dir = temp_dir("attack-fifo");
    std::fs::write(dir.join("ok.guard"), CLEAN).expect("write");
    let made = Command::new("mkfifo")
        .arg(dir.join("pipe.guard"))
        .status()
        .expect("mkfifo");
    assert!(made.success());
    let run = within(DEADLINE, &dir, &["check", "."]);
    assert!(run.stderr.contains("pipe.guard"), "{}", run.stderr);
    assert!(run.stderr.contains("named pipe"), "{}", run.stderr);
    assert!(
        run.stdout.contains("in 1 file"),
        "the other file is checked: {}",
        run.stdout
    );
    let run = within(DEADLINE, &dir, &["fmt", "--check", "."]);
    assert!(run.stderr.contains("named pipe"), "{}", run.stderr);
    // Imported, it is an import problem at the `use`, not a hang.
    std::fs::write(dir.join("user.guard"), "use \"pipe.guard\"\n").expect("write");
    let run = within(DEADLINE, &dir, &["check", "user.guard"]);
    assert!(run.stdout.contains("named pipe"), "{}", run.stdout);
}

#[test]
fn one_long_line_costs_output_linear_in_its_findings() {
    // One line: `regulator r {` + ` load = 1 mA` × N + ` }`.
    let dir = temp_dir("attack-long-line");
    let n = 6000;
    let mut text = String::from("regulator r {");
    for _ in 0..n {
        text.push_str(" load = 1 mA");
    }
    text.push_str(" }\n");
    std::fs::write(dir.join("long.guard"), &text).expect("write");
    let human = within(DEADLINE, &dir, &["check", "long.guard"]);
    // The findings of one rule in one file are capped (200 by default, then
    // one closing note), and no line of output repeats the whole source line.
    let longest = human.stdout.lines().map(str::len).max().unwrap_or(0);
    assert!(longest < 1000, "an output line of {longest} bytes");
    assert!(
        human.stdout.len() < 3_000_000,
        "{} bytes of output",
        human.stdout.len()
    );
    assert!(
        human
            .stdout
            .contains("more `duplicate-field` findings in this file are not shown")
    );
    let json = within(DEADLINE, &dir, &["check", "--format", "json", "long.guard"]);
    let report: serde_json::Value = serde_json::from_str(&json.stdout).expect("json");
    let count = report["diagnostics"].as_array().expect("array").len();
    assert!(count <= 202, "{count} findings");
    // The cap is configurable.
    std::fs::write(
        dir.join("guardband.toml"),
        "[limits]\nmax_findings_per_rule = 5\n",
    )
    .expect("toml");
    let (_, report) = common::check_json(&dir, &["long.guard"]);
    let rules: Vec<&str> = report["diagnostics"]
        .as_array()
        .expect("array")
        .iter()
        .filter_map(|d| d["rule"].as_str())
        .collect();
    assert_eq!(rules.iter().filter(|r| **r == "duplicate-field").count(), 5);
    assert!(rules.contains(&"limit"));
}

#[test]
fn a_huge_file_is_refused_by_its_size_and_a_device_is_not_read() {
    let dir = temp_dir("attack-size");
    // A sparse 3 GB file costs nothing on disk and must cost nothing to refuse.
    let huge = std::fs::File::create(dir.join("huge.guard")).expect("create");
    huge.set_len(3 << 30).expect("sparse");
    drop(huge);
    symlink("/dev/zero", dir.join("zero.guard")).expect("link");
    let run = within(DEADLINE, &dir, &["check", "huge.guard", "zero.guard"]);
    assert!(
        run.stdout.contains("larger than the 16 MiB limit"),
        "{}",
        run.stdout
    );
    assert!(run.stderr.contains("zero.guard"), "{}", run.stderr);
    let _ = std::fs::remove_file(dir.join("huge.guard"));
}

#[test]
fn formatting_keeps_every_comment_and_every_waiver() {
    let dir = temp_dir("attack-fmt-comments");
    let text = "regulator r {\n    load = // why this range\n        0 mA .. // datasheet p. 4\n        2 mA\n    theta_ja =\n        // waive tolerance-missing: figure from the module maker\n        45 K/W\n}\n";
    std::fs::write(dir.join("c.guard"), text).expect("write");
    let before = within(DEADLINE, &dir, &["check", "--format", "json", "c.guard"]).stdout;
    let run = within(DEADLINE, &dir, &["fmt", "c.guard"]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    let after_text = std::fs::read_to_string(dir.join("c.guard")).expect("read");
    for comment in [
        "// why this range",
        "// datasheet p. 4",
        "// waive tolerance-missing",
    ] {
        assert_eq!(
            after_text.matches(comment).count(),
            1,
            "{comment}:\n{after_text}"
        );
    }
    assert!(
        after_text.find("// why this range") < after_text.find("// datasheet p. 4"),
        "in order:\n{after_text}"
    );
    let after = within(DEADLINE, &dir, &["check", "--format", "json", "c.guard"]).stdout;
    let rules = |s: &str| -> Vec<(String, String)> {
        let v: serde_json::Value = serde_json::from_str(s).expect("json");
        v["diagnostics"]
            .as_array()
            .expect("array")
            .iter()
            .map(|d| (d["rule"].to_string(), d["message"].to_string()))
            .collect()
    };
    assert_eq!(
        rules(&before),
        rules(&after),
        "findings changed:\n{after_text}"
    );
}

#[test]
fn links_out_of_the_workspace_are_neither_read_nor_written() {
    let outside = temp_dir("attack-outside");
    let victim = outside.join("victim.guard");
    std::fs::write(&victim, "regulator   v {   }\n").expect("write");
    let dir = temp_dir("attack-links");
    std::fs::write(dir.join("guardband.toml"), "").expect("toml");
    std::fs::write(dir.join("ok.guard"), CLEAN).expect("write");
    symlink("/etc/passwd", dir.join("passwd.guard")).expect("link");
    symlink(&victim, dir.join("victim.guard")).expect("link");
    let run = within(DEADLINE, &dir, &["check", "."]);
    assert!(
        !run.stdout.contains("root:"),
        "lines of /etc/passwd shown:\n{}",
        run.stdout
    );
    assert!(
        run.stderr.contains("passwd.guard") && run.stderr.contains("outside the workspace root")
    );
    // Named on the command line, it is skipped too.
    let run = within(DEADLINE, &dir, &["check", "passwd.guard", "ok.guard"]);
    assert!(!run.stdout.contains("root:"), "{}", run.stdout);
    let run = within(DEADLINE, &dir, &["fmt", "."]);
    assert!(run.stderr.contains("victim.guard"), "{}", run.stderr);
    assert_eq!(
        std::fs::read_to_string(&victim).expect("read"),
        "regulator   v {   }\n",
        "a file outside the root was rewritten"
    );
}

#[test]
fn odd_entries_are_reported_and_the_rest_is_checked() {
    let dir = temp_dir("attack-odd");
    std::fs::write(dir.join("ok.guard"), CLEAN).expect("write");
    symlink(dir.join("nothing-here.guard"), dir.join("dangling.guard")).expect("link");
    std::fs::create_dir_all(dir.join("folder")).expect("dir");
    symlink(dir.join("folder"), dir.join("dirlink.guard")).expect("link");
    symlink(dir.join("loop-b.guard"), dir.join("loop-a.guard")).expect("link");
    symlink(dir.join("loop-a.guard"), dir.join("loop-b.guard")).expect("link");
    let run = within(DEADLINE, &dir, &["check", "."]);
    assert_eq!(run.code, 0, "{}\n{}", run.stdout, run.stderr);
    assert!(run.stdout.contains("in 1 file"), "{}", run.stdout);
    for name in ["dangling.guard", "dirlink.guard", "loop-a.guard"] {
        assert!(
            run.stderr.contains(name),
            "{name} not named:\n{}",
            run.stderr
        );
    }
    assert!(run.stderr.contains("loop of links"), "{}", run.stderr);
    // Imported, a loop of links says so.
    std::fs::write(dir.join("user.guard"), "use \"loop-a.guard\"\n").expect("write");
    let run = within(DEADLINE, &dir, &["check", "user.guard"]);
    assert!(run.stdout.contains("is a loop of links"), "{}", run.stdout);
}

#[test]
fn a_lone_carriage_return_ends_a_comment_everywhere() {
    let dir = temp_dir("attack-cr");
    let text = "regulator r {\r    load = 0 mA .. 1 mA // note\r    bogus = 1 V .. 2 A\r}\r";
    std::fs::write(dir.join("cr.guard"), text).expect("write");
    let (_, report) = common::check_json(&dir, &["cr.guard"]);
    let d = report["diagnostics"]
        .as_array()
        .expect("array")
        .iter()
        .find(|d| d["rule"] == "unknown-field")
        .expect("the field after the comment is read");
    assert_eq!(
        d["range"]["start"]["line"], 3,
        "JSON counts the lone CR as a line end"
    );
    let human = within(DEADLINE, &dir, &["check", "cr.guard"]);
    assert!(
        human.stdout.contains("cr.guard:3:5"),
        "human output agrees:\n{}",
        human.stdout
    );
}

#[test]
fn numbers_and_units_out_of_range_are_errors() {
    let dir = temp_dir("attack-range");
    let power = std::iter::repeat_n("m^12", 12)
        .collect::<Vec<_>>()
        .join("*");
    let text = format!(
        "regulator r {{\n    supply = 1e-400 V .. 2 V\n    margin = 1 {power}\n    lifetime = (1 m^12 * 1 m^12 * 1 m^12 * 1 m^12 * 1 m^12 * 1 m^12 * 1 m^12 * 1 m^12 * 1 m^12 * 1 m^12 * 1 m^12)\n}}\n"
    );
    std::fs::write(dir.join("r.guard"), text).expect("write");
    let (_, report) = common::check_json(&dir, &["r.guard"]);
    let messages: Vec<String> = report["diagnostics"]
        .as_array()
        .expect("array")
        .iter()
        .map(|d| d["message"].as_str().unwrap_or("").to_string())
        .collect();
    assert!(
        messages.iter().any(|m| m.contains("too small")),
        "{messages:?}"
    );
    assert!(
        messages
            .iter()
            .filter(|m| m.contains("beyond ±127"))
            .count()
            >= 2,
        "{messages:?}"
    );
}

#[test]
fn messages_say_what_happened() {
    let dir = temp_dir("attack-messages");
    std::fs::write(dir.join("guardband.toml"), "").expect("toml");
    // The summary counts every file read as a spec, whatever its name.
    std::fs::write(dir.join("notes.txt"), CLEAN).expect("write");
    let run = within(DEADLINE, &dir, &["check", "notes.txt"]);
    assert!(run.stdout.contains("in 1 file"), "{}", run.stdout);
    // Calls nested past the limit: one error, not also `unknown name max`.
    let deep = format!(
        "regulator r {{\n    output = {}1 V{}\n}}\n",
        "max(".repeat(60),
        ", 2 V)".repeat(60)
    );
    std::fs::write(dir.join("deep.guard"), deep).expect("write");
    let (_, report) = common::check_json(&dir, &["deep.guard"]);
    let rules: Vec<&str> = report["diagnostics"]
        .as_array()
        .expect("array")
        .iter()
        .filter_map(|d| d["rule"].as_str())
        .collect();
    assert!(!rules.contains(&"unknown-name"), "{rules:?}");
    // A `use` outside the root names the root.
    std::fs::write(dir.join("out.guard"), "use \"../elsewhere.guard\"\n").expect("write");
    let (_, report) = common::check_json(&dir, &["out.guard"]);
    let name = dir
        .file_name()
        .expect("name")
        .to_string_lossy()
        .into_owned();
    assert!(
        report
            .to_string()
            .contains(&format!("outside the workspace root `{name}/`"))
    );
    // SARIF URIs are percent-encoded.
    std::fs::write(
        dir.join("a b#c%.guard"),
        "regulator r {\n    bogus = 1 V\n}\n",
    )
    .expect("write");
    let run = within(
        DEADLINE,
        &dir,
        &["check", "--format", "sarif", "a b#c%.guard"],
    );
    assert!(run.stdout.contains("a%20b%23c%25.guard"), "{}", run.stdout);
}
