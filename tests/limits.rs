//! Configurable limits (file size, nesting, import depth and count,
//! evaluation steps) give clear diagnostics; `use` cannot leave the
//! workspace through `..`, an absolute path or a symbolic link; the product
//! opens no network connection and runs no program.

mod common;

use common::{check_json, root, rules_of, temp_dir};
use serde_json::Value;
use std::path::Path;

fn write(dir: &Path, name: &str, text: &str) {
    if let Some(parent) = dir.join(name).parent() {
        std::fs::create_dir_all(parent).expect("mkdir");
    }
    std::fs::write(dir.join(name), text).expect("write");
}

fn limit_messages(report: &Value) -> Vec<String> {
    report["diagnostics"]
        .as_array()
        .expect("array")
        .iter()
        .filter(|d| d["rule"] == "limit")
        .map(|d| d["message"].as_str().unwrap_or("").to_string())
        .collect()
}

#[test]
fn a_file_over_the_size_limit_is_reported_not_read() {
    let dir = temp_dir("limit-size");
    write(&dir, "guardband.toml", "");
    let big = format!(
        "// {}\nregulator r {{\n    load = 0 mA .. 1 mA\n}}\n",
        "x".repeat(17 * 1024 * 1024)
    );
    write(&dir, "big.guard", &big);
    let (code, report) = check_json(&dir, &["big.guard"]);
    assert_eq!(code, 1);
    let messages = limit_messages(&report);
    assert_eq!(messages.len(), 1, "{report}");
    assert!(
        messages[0].contains("17.0 MiB, larger than the 16 MiB limit"),
        "{}",
        messages[0]
    );
    write(
        &dir,
        "guardband.toml",
        "[limits]\nmax_file_size = \"32 MiB\"\n",
    );
    let (_, report) = check_json(&dir, &["big.guard"]);
    assert!(limit_messages(&report).is_empty(), "{report}");
}

#[test]
fn nesting_imports_and_evaluation_limits_are_configurable() {
    let dir = temp_dir("limit-config");
    write(&dir, "guardband.toml", "[limits]\nmax_nesting = 4\n");
    write(
        &dir,
        "deep.guard",
        "regulator r {\n    load = ((((((1 mA)))))) .. 2 mA\n}\n",
    );
    let (_, report) = check_json(&dir, &["deep.guard"]);
    assert!(
        report.to_string().contains("nesting deeper than 4 levels"),
        "{report}"
    );

    // A chain of 40 imports stops at the default depth of 32.
    let chain = temp_dir("limit-chain");
    write(&chain, "guardband.toml", "");
    for i in 0..40 {
        write(
            &chain,
            &format!("f{i}.guard"),
            &format!("use \"f{}.guard\"\n", i + 1),
        );
    }
    write(
        &chain,
        "f40.guard",
        "regulator last {\n    load = 0 mA .. 1 mA\n}\n",
    );
    let (_, report) = check_json(&chain, &["f0.guard"]);
    let messages = limit_messages(&report);
    assert_eq!(messages.len(), 1, "{messages:?}");
    assert!(
        messages[0].contains("imports nested deeper than 32 files"),
        "{}",
        messages[0]
    );
    write(
        &chain,
        "guardband.toml",
        "[limits]\nmax_import_depth = 64\n",
    );
    assert!(limit_messages(&check_json(&chain, &["f0.guard"]).1).is_empty());
    write(
        &chain,
        "guardband.toml",
        "[limits]\nmax_import_depth = 64\nmax_files = 5\n",
    );
    let messages = limit_messages(&check_json(&chain, &["f0.guard"]).1);
    assert!(
        messages
            .iter()
            .any(|m| m.contains("more than 5 files in one check")),
        "{messages:?}"
    );

    // Evaluation stops with one diagnostic when its step budget runs out.
    let examples = temp_dir("limit-eval");
    for name in ["sensor_rail.guard", "process/wren180.guard"] {
        write(
            &examples,
            name,
            &std::fs::read_to_string(root().join("examples").join(name)).expect("read"),
        );
    }
    write(
        &examples,
        "guardband.toml",
        "[limits]\nmax_eval_steps = 10\n",
    );
    let messages = limit_messages(&check_json(&examples, &["sensor_rail.guard"]).1);
    assert_eq!(messages.len(), 1, "{messages:?}");
    assert!(
        messages[0].contains("evaluation stopped after 10 steps"),
        "{}",
        messages[0]
    );
}

#[test]
fn bad_limit_settings_are_configuration_errors() {
    let dir = temp_dir("limit-bad");
    write(
        &dir,
        "guardband.toml",
        "[limits]\nmax_nesting = 1000\nmax_file_size = \"lots\"\nmax_fils = 3\n",
    );
    write(
        &dir,
        "a.guard",
        "regulator r {\n    load = 0 mA .. 1 mA\n}\n",
    );
    let (code, report) = check_json(&dir, &["a.guard"]);
    assert_eq!(code, 1);
    let config: Vec<&Value> = report["diagnostics"]
        .as_array()
        .expect("array")
        .iter()
        .filter(|d| d["rule"] == "config")
        .collect();
    assert_eq!(config.len(), 3, "{report}");
    let text = report.to_string();
    assert!(
        text.contains("`max_nesting` takes a whole number from 1 to 128"),
        "{text}"
    );
    assert!(text.contains("did you mean `max_files`?"), "{text}");
    assert!(config.iter().all(|d| d["file"] == "guardband.toml"));
}

#[test]
fn use_cannot_leave_the_workspace_by_dots_absolute_paths_or_links() {
    let outside = temp_dir("escape-outside");
    write(
        &outside,
        "secret.guard",
        "process secret {\n    spread s = ± 1 %\n}\n",
    );
    let ws = temp_dir("escape-ws");
    write(&ws, "guardband.toml", "");
    let secret = outside
        .join("secret.guard")
        .canonicalize()
        .expect("canonical");
    let relative = format!(
        "../{}/secret.guard",
        outside.file_name().expect("name").to_string_lossy()
    );
    write(&ws, "dots.guard", &format!("use \"{relative}\"\n"));
    write(
        &ws,
        "absolute.guard",
        &format!("use \"{}\"\n", secret.display()),
    );
    #[cfg(unix)]
    std::os::unix::fs::symlink(&outside, ws.join("link")).expect("symlink");
    write(&ws, "linked.guard", "use \"link/secret.guard\"\n");
    for file in ["dots.guard", "absolute.guard", "linked.guard"] {
        let (code, report) = check_json(&ws, &[file]);
        assert_eq!(code, 1, "{file}");
        assert!(
            rules_of(&report).contains(&"import-outside-workspace".to_string()),
            "{file}: {report}"
        );
        let files: Vec<&str> = report["diagnostics"]
            .as_array()
            .expect("array")
            .iter()
            .filter_map(|d| d["file"].as_str())
            .collect();
        assert!(
            files.iter().all(|f| !f.contains("secret")),
            "nothing outside was read: {files:?}"
        );
    }
}

/// Every source file of the product (not the tests, not the benchmarks:
/// `guardband-bench` is never shipped, and it starts the `guardband` binary,
/// valgrind and the server to measure them), recursively.
fn sources(dir: &Path, out: &mut Vec<std::path::PathBuf>) {
    for entry in std::fs::read_dir(dir).expect("read dir").flatten() {
        let path = entry.path();
        if path.is_dir() {
            if path
                .file_name()
                .is_some_and(|n| n != "target" && n != "benches" && n != "guardband-bench")
            {
                sources(&path, out);
            }
        } else if path.extension().is_some_and(|e| e == "rs") {
            out.push(path);
        }
    }
}

#[test]
fn the_product_opens_no_network_connection_and_runs_no_program_but_the_requested_simulator() {
    let mut files = Vec::new();
    sources(&root().join("crates"), &mut files);
    assert!(files.len() > 30);
    let forbidden = [
        "std::net",
        "TcpStream",
        "UdpSocket",
        "process::Command",
        "Command::new",
    ];
    // The one exception: the test-bench runner starts the simulator, on
    // the user's explicit request (`guardband testbench --run`).
    let runner = root().join("crates/guardband-testbench/src/run.rs");
    let mut runner_seen = false;
    for file in files {
        let text = std::fs::read_to_string(&file).expect("read");
        let allowed: &[&str] = if file == runner {
            runner_seen = true;
            assert!(
                text.contains("Command::new"),
                "the runner starts no program"
            );
            &["process::Command", "Command::new"]
        } else {
            &[]
        };
        for word in forbidden {
            if allowed.contains(&word) {
                continue;
            }
            assert!(!text.contains(word), "{} uses `{word}`", file.display());
        }
    }
    assert!(runner_seen, "the test-bench runner moved: update this test");
}
