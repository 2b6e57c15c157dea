//! End-to-end tests of `guardband`: exit codes, the JSON schema, the examples
//! and every rule fixture, run through the built binary.

mod common;
use common::*;

#[test]
fn examples_show_each_rule_where_documented() {
    let root = root();
    let run = guardband(&root, &["check", "examples/"]);
    assert_eq!(
        run.code, 1,
        "the flawed examples have errors:\n{}",
        run.stdout
    );
    assert!(
        run.stdout
            .trim_end()
            .ends_with("21 errors, 6 warnings, 3 infos in 10 files"),
        "{}",
        run.stdout
    );
    let (_, report) = check_json(&root, &["examples/"]);
    let expected = [
        ("limit-within-load", "flawed/aux_rail.guard"),
        ("conductor-under-rated", "flawed/aux_rail.guard"),
        ("unlimited-surge", "flawed/lamp_rail.guard"),
        ("missing-fault-case", "flawed/aux_rail.guard"),
        ("limit-loop-analysis", "flawed/aux_rail.guard"),
        ("limit-loop-incomplete", "flawed/aux_rail.guard"),
        ("clamp-too-weak", "flawed/aux_rail.guard"),
        ("short-overheat", "flawed/aux_rail.guard"),
        ("slow-start", "flawed/wake_rail.guard"),
        ("trip-uncharacterised", "flawed/wake_rail.guard"),
        ("tolerance-missing", "flawed/aux_rail.guard"),
        ("expectation-violated", "flawed/aux_rail.guard"),
        // Without a trip current nothing bounds wake_rail's current above its
        // threshold: a partial short overheats it and its surge is unlimited.
        ("short-overheat", "flawed/wake_rail.guard"),
        ("unlimited-surge", "flawed/wake_rail.guard"),
        ("supply-surge-exceeded", "flawed/flash_rail.guard"),
        ("pass-device-weak", "flawed/flash_rail.guard"),
        (
            "undervoltage-threshold-in-regulation",
            "flawed/flash_rail.guard",
        ),
        ("wire-rated-at-fusing", "flawed/flash_rail.guard"),
        ("figure-not-derived", "flawed/flash_rail.guard"),
        ("load-line-latch", "flawed/heater_rail.guard"),
        ("rated-load-overheat", "flawed/heater_rail.guard"),
        ("reverse-current-overstress", "flawed/heater_rail.guard"),
        ("expectation-unchecked", "flawed/heater_rail.guard"),
        ("corner-envelope", "flawed/heater_rail.guard"),
        ("rail-droop", "flawed/ir_pack.guard"),
        ("cycle-budget-exceeded", "flawed/lamp_rail.guard"),
    ];
    for d in report["diagnostics"].as_array().unwrap() {
        let rule = d["rule"].as_str().unwrap();
        let file = d["file"].as_str().unwrap();
        assert!(
            expected.contains(&(rule, file)),
            "unexpected {rule} in {file}: {}",
            d["message"]
        );
    }
    let rules = rules_of(&report);
    for (rule, _) in expected {
        assert!(
            rules.iter().any(|r| r == rule),
            "{rule} does not fire in examples/"
        );
    }
}

#[test]
fn clean_examples_pass() {
    let root = root();
    let run = guardband(
        &root,
        &[
            "check",
            "examples/sensor_rail.guard",
            "examples/radio_rail.guard",
        ],
    );
    assert_eq!(run.code, 0, "{}", run.stdout);
    assert!(
        run.stdout.contains("0 errors, 0 warnings in 4 files"),
        "{}",
        run.stdout
    );
}

#[test]
fn every_rule_fixture_fails_and_passes_as_named() {
    let dir = fixture("rules");
    let mut seen = 0;
    for entry in std::fs::read_dir(&dir).unwrap() {
        let rule_dir = entry.unwrap().path();
        let rule = rule_dir.file_name().unwrap().to_string_lossy().into_owned();
        for file in std::fs::read_dir(&rule_dir).unwrap() {
            let file = file.unwrap().path();
            if file.extension().is_none_or(|e| e != "guard") {
                continue;
            }
            let name = file.file_stem().unwrap().to_string_lossy().into_owned();
            let args = rule_fixture_args(&rule_dir, file.file_name().unwrap().to_str().unwrap());
            let args: Vec<&str> = args.iter().map(String::as_str).collect();
            let (_, report) = check_json(&rule_dir, &args);
            let rules = rules_of(&report);
            if name.starts_with("fail") {
                assert!(
                    rules.contains(&rule),
                    "{rule}/{name} does not trip {rule}: {rules:?}"
                );
                assert!(
                    rules.iter().all(|r| *r == rule),
                    "{rule}/{name} trips others too: {rules:?}"
                );
            } else {
                assert!(rules.is_empty(), "{rule}/{name} is not clean: {rules:?}");
            }
            seen += 1;
        }
    }
    assert!(seen >= 22, "only {seen} rule fixtures");
}

/// The README's table of rules names every registered rule with its default.
#[test]
fn the_readme_lists_every_rule_with_its_default() {
    let readme = std::fs::read_to_string(root().join("README.md")).unwrap();
    for r in guardband_rules::registry() {
        let sev = r.default_severity.map(|s| s.as_str()).unwrap_or("off");
        let row = readme
            .lines()
            .find(|l| l.starts_with(&format!("| `{}` |", r.name)))
            .unwrap_or_else(|| panic!("README lacks a row for {}", r.name));
        assert!(row.trim_end().ends_with(&format!("| {sev} |")), "{row}");
    }
}

/// Every registered rule has its fixture folder, holding a failing and a
/// passing case, and every folder is a registered rule.
#[test]
fn every_rule_has_a_fixture_folder_and_every_folder_a_rule() {
    let mut folders: Vec<String> = std::fs::read_dir(fixture("rules"))
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    folders.sort();
    let mut rules: Vec<String> = guardband_rules::registry()
        .iter()
        .map(|r| r.name.to_string())
        .collect();
    rules.sort();
    assert_eq!(folders, rules);
    for rule in &rules {
        let names: Vec<String> = std::fs::read_dir(fixture("rules").join(rule))
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        assert!(
            names.iter().any(|n| n.starts_with("fail")),
            "{rule} has no failing case"
        );
        assert!(
            names.iter().any(|n| n.starts_with("pass")),
            "{rule} has no passing case"
        );
    }
}

/// Each slip a designer makes gives exactly the findings meant for it: the
/// error at the slip and, where a figure could not be derived from the
/// value in error, one note per block saying so; nothing built on the
/// missing value.
#[test]
fn each_slip_gives_exactly_its_findings() {
    let dir = fixture("slips");
    let cases: &[(&str, &[(&str, usize)])] = &[
        (
            "plain_tolerance",
            &[("unit-mismatch", 1), ("figure-not-derived", 1)],
        ),
        (
            "spread_without_plus_minus",
            &[("invalid-value", 2), ("figure-not-derived", 2)],
        ),
        (
            "plus_minus_typo",
            &[("unit-mismatch", 1), ("figure-not-derived", 1)],
        ),
        (
            "unit_on_one_end",
            &[("unit-mismatch", 1), ("figure-not-derived", 1)],
        ),
        (
            "coulomb_for_celsius",
            &[("unit-mismatch", 1), ("figure-not-derived", 1)],
        ),
        (
            "unit_spelling",
            &[("unknown-unit", 2), ("figure-not-derived", 1)],
        ),
        (
            "typo_in_a_limit",
            &[
                ("unknown-field", 1),
                ("unknown-name", 1),
                ("figure-not-derived", 2),
            ],
        ),
        ("missing_brace", &[("syntax", 1)]),
        (
            "too_small",
            &[("invalid-value", 1), ("figure-not-derived", 1)],
        ),
    ];
    for (name, expected) in cases {
        let (_, report) = check_json(&dir, &[&format!("{name}.guard")]);
        let rules = rules_of(&report);
        let mut counts: Vec<(&str, usize)> = Vec::new();
        for r in &rules {
            match counts.iter_mut().find(|(n, _)| n == r) {
                Some(c) => c.1 += 1,
                None => counts.push((r.as_str(), 1)),
            }
        }
        counts.sort();
        let mut want = expected.to_vec();
        want.sort();
        assert_eq!(counts, want, "{name}");
    }
    let names: Vec<String> = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    assert_eq!(names.len(), cases.len(), "a slip fixture without its case");
}

#[test]
fn json_follows_the_documented_schema() {
    let dir = fixture("diagnostics");
    let (code, report) = check_json(&dir, &["unit_mismatch.guard"]);
    assert_eq!(code, 1);
    assert_eq!(report["version"], 1);
    assert_eq!(report["files_checked"], 1);
    let first = report["diagnostics"]
        .as_array()
        .unwrap()
        .iter()
        .find(|d| d["rule"] == "unit-mismatch")
        .expect("a unit-mismatch");
    for key in [
        "rule", "severity", "file", "range", "message", "labels", "help",
    ] {
        assert!(first.get(key).is_some(), "missing {key}");
    }
    assert_eq!(first["file"], "unit_mismatch.guard");
    // `load   = 0 mA .. 150 mV` on line 3: the range starts at column 14 (1-based).
    assert_eq!(first["rule"], "unit-mismatch");
    assert_eq!(first["range"]["start"]["line"], 3);
    assert_eq!(first["range"]["start"]["column"], 14);
    assert_eq!(first["range"]["end"]["column"], 28);
    assert_eq!(first["severity"], "error");
    let label = &first["labels"][0];
    assert!(label["range"]["start"]["line"].as_u64().unwrap() >= 1);
}

#[test]
fn json_columns_count_unicode_scalar_values() {
    let dir = temp_dir("columns");
    // Line 2 starts with `µ`-heavy text: 2-byte and 4-byte characters before the bad unit.
    std::fs::write(
        dir.join("c.guard"),
        "regulator r {\n    description = \"µΩ𝄞\"  load = 0 mA .. 1 mAA\n}\n",
    )
    .unwrap();
    let (_, report) = check_json(&dir, &["c.guard"]);
    let d = report["diagnostics"]
        .as_array()
        .unwrap()
        .iter()
        .find(|d| d["rule"] == "unknown-unit")
        .expect("unknown-unit");
    // `    description = "µΩ𝄞"  load = 0 mA .. 1 ` is 42 characters (47 bytes, 43 UTF-16
    // units), so the unit starts at column 43 counted in Unicode scalar values.
    assert_eq!(d["range"]["start"]["line"], 2);
    assert_eq!(d["range"]["start"]["column"], 43);
}

#[test]
fn exit_codes() {
    let dir = fixture("rules/missing-fault-case");
    let warn_only = guardband(&dir, &["check", "fail.guard"]);
    assert_eq!(
        warn_only.code, 0,
        "warnings alone pass: {}",
        warn_only.stdout
    );
    let denied = guardband(&dir, &["check", "--deny", "warnings", "fail.guard"]);
    assert_eq!(denied.code, 1);
    let missing = guardband(&dir, &["check", "no/such/place.guard"]);
    assert_eq!(missing.code, 2);
    assert!(
        missing.stderr.contains("no/such/place.guard"),
        "{}",
        missing.stderr
    );
    let usage = guardband(&dir, &["check", "--format", "xml"]);
    assert_eq!(usage.code, 2);
    let errors = guardband(&fixture("diagnostics"), &["check", "syntax.guard"]);
    assert_eq!(errors.code, 1);
}

#[test]
fn syntax_errors_are_all_reported_and_the_rest_is_checked() {
    let (_, report) = check_json(&fixture("diagnostics"), &["syntax.guard"]);
    let rules = rules_of(&report);
    assert_eq!(
        rules.iter().filter(|r| *r == "syntax").count(),
        3,
        "{rules:?}"
    );
    // The second regulator, after the errors, is still evaluated.
    assert!(rules.iter().any(|r| r == "unit-mismatch"), "{rules:?}");
}

#[test]
fn import_cycles_and_escapes_are_errors() {
    let (_, report) = check_json(&fixture("workspaces/import_cycle"), &["."]);
    assert!(rules_of(&report).contains(&"cycle".to_string()));
    let (code, report) = check_json(&fixture("workspaces/outside/inner"), &["."]);
    assert_eq!(code, 1);
    assert!(rules_of(&report).contains(&"import-outside-workspace".to_string()));
}

#[test]
fn workspace_root_is_the_nearest_config() {
    // Checking a file inside examples/ from the repository root finds examples/guardband.toml,
    // so paths are shown relative to examples/ and the import of the process file works.
    let (_, report) = check_json(&root(), &["examples/flawed/wake_rail.guard"]);
    let files: Vec<&str> = report["diagnostics"]
        .as_array()
        .unwrap()
        .iter()
        .map(|d| d["file"].as_str().unwrap())
        .collect();
    assert!(
        files.iter().all(|f| *f == "flawed/wake_rail.guard"),
        "{files:?}"
    );
    assert_eq!(report["files_checked"], 2);
}

#[test]
fn bad_configuration_is_reported_with_its_line() {
    let (code, report) = check_json(&fixture("workspaces/bad_config"), &["."]);
    assert_eq!(code, 1);
    let config: Vec<&serde_json::Value> = report["diagnostics"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|d| d["rule"] == "config")
        .collect();
    assert_eq!(config.len(), 4, "{config:?}");
    let lines: Vec<u64> = config
        .iter()
        .map(|d| d["range"]["start"]["line"].as_u64().unwrap())
        .collect();
    for line in [1, 2, 4, 5] {
        assert!(
            lines.contains(&line),
            "no config error on line {line}: {lines:?}"
        );
    }
    assert!(config.iter().all(|d| d["file"] == "guardband.toml"));
}

#[test]
fn rule_severity_can_be_changed_or_turned_off() {
    let dir = temp_dir("severity");
    std::fs::copy(
        fixture("rules/clamp-too-weak/fail.guard"),
        dir.join("r.guard"),
    )
    .unwrap();
    std::fs::write(
        dir.join("guardband.toml"),
        "[rules]\nclamp-too-weak = \"warning\"\n",
    )
    .unwrap();
    let (code, report) = check_json(&dir, &["."]);
    assert_eq!(code, 0);
    assert_eq!(report["diagnostics"][0]["severity"], "warning");
    std::fs::write(
        dir.join("guardband.toml"),
        "[rules]\nclamp-too-weak = \"off\"\n",
    )
    .unwrap();
    let (_, report) = check_json(&dir, &["."]);
    assert!(rules_of(&report).is_empty());
}

#[test]
fn waivers_need_a_reason_and_unused_ones_are_reported() {
    let (_, report) = check_json(&fixture("diagnostics"), &["waivers.guard"]);
    let rules = rules_of(&report);
    assert_eq!(
        rules.iter().filter(|r| *r == "invalid-suppression").count(),
        2,
        "{rules:?}"
    );
    assert_eq!(
        rules.iter().filter(|r| *r == "unused-suppression").count(),
        1,
        "{rules:?}"
    );
    // The lamp rail's waiver with a reason hides its finding.
    let (_, report) = check_json(&root(), &["examples/flawed/lamp_rail.guard"]);
    assert!(!rules_of(&report).contains(&"tolerance-missing".to_string()));
}

#[test]
fn explain_lists_and_documents_every_rule() {
    let root = root();
    let list = guardband(&root, &["explain", "--list", "--format", "json"]);
    assert_eq!(list.code, 0);
    let rules: serde_json::Value = serde_json::from_str(&list.stdout).unwrap();
    let rules = rules.as_array().unwrap();
    assert_eq!(rules.len(), guardband_rules::registry().len());
    for r in rules {
        for key in ["name", "default_severity", "summary"] {
            assert!(r.get(key).is_some());
        }
        let name = r["name"].as_str().unwrap();
        let one = guardband(&root, &["explain", name]);
        assert_eq!(one.code, 0);
        assert!(
            one.stdout.contains("## Failing example") && one.stdout.contains("## Passing example")
        );
        assert!(one.stdout.contains("does not replace sign-off"));
    }
    let unknown = guardband(&root, &["explain", "limit-within-lod"]);
    assert_eq!(unknown.code, 2);
    assert!(unknown.stderr.contains("limit-within-load"));
    // The language's own diagnostics, whose names the output shows too.
    for (code, meaning) in guardband_model::LANGUAGE_DIAGNOSTICS {
        let one = guardband(&root, &["explain", code]);
        assert_eq!(one.code, 0, "{code}: {}", one.stderr);
        assert!(one.stdout.contains(meaning), "{code}");
        assert!(one.stdout.contains("## How to fix"), "{code}");
        assert!(one.stdout.contains("does not replace sign-off"), "{code}");
    }
    let near = guardband(&root, &["explain", "unit-mismach"]);
    assert!(
        near.stderr.contains("did you mean `unit-mismatch`"),
        "{}",
        near.stderr
    );
}

#[test]
fn version_names_the_git_revision_it_was_built_from() {
    let run = guardband(&root(), &["--version"]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    let line = run.stdout.trim();
    let expected_start = concat!("guardband ", env!("CARGO_PKG_VERSION"), " (");
    let revision = line
        .strip_prefix(expected_start)
        .and_then(|r| r.strip_suffix(')'))
        .unwrap_or_else(|| panic!("{line}"));
    // Compared with git itself when this is a git checkout and git is here
    // (the build script reads the repository's files instead of running it).
    let git = std::process::Command::new("git")
        .args(["rev-parse", "HEAD"])
        .current_dir(root())
        .output();
    match git {
        Ok(out) if out.status.success() => {
            let head = String::from_utf8_lossy(&out.stdout);
            assert_eq!(revision, &head.trim()[..12], "{line}");
        }
        _ => assert!(
            revision == "revision unknown"
                || (revision.len() == 12 && revision.chars().all(|c| c.is_ascii_hexdigit())),
            "{line}"
        ),
    }
}

// Checking one file of a workspace still counts the other regulators on
// its shared supply: core alone droops the cell to 3.0 − 0.9 A × 0.6 Ω −
// 1 µH × 0.9 A / 20 µs = 2.415 V, above the 2.346 V lockout top; with io's
// 0.5 A also starting, 3.0 − 1.4 × 0.6 − 1 µH × 1.4 A / 20 µs = 2.09 V, below
// it (Ohm's law and V = L·di/dt, arithmetic). io.guard's own findings are
// not reported: it was read only for its regulator.
#[test]
fn one_file_checked_counts_the_other_regulators_on_its_supply() {
    let dir = temp_dir("one-file-shared-supply");
    let supply = "supply cell {\n    voltage    = 3.0 V .. 4.2 V\n    resistance = 0.5 ohm ± 20 %\n    inductance = 1 uH\n    rise_time  = 20 us\n    lockout    = 2.3 V ± 2 %\n}\n";
    let regulator = |name: &str, output: &str, full_gate: &str| {
        format!(
            "use \"cell.guard\"\n\nregulator {name} {{\n    supply = cell\n    output = {output}\n    load   = 0 mA .. 100 mA\n    pin vout {{ role = output  capacitance = 10 uF ± 20 % }}\n    pass {{ full_gate_current = {full_gate}  amplifier_drive = 30 uA ± 25 % }}\n    startup {{ load = 1 mA }}\n}}\n"
        )
    };
    std::fs::write(dir.join("cell.guard"), supply).expect("write");
    std::fs::write(
        dir.join("core.guard"),
        regulator("core", "1.8 V ± 2 %", "0.3 A .. 0.9 A"),
    )
    .expect("write");
    std::fs::write(
        dir.join("io.guard"),
        regulator("io", "1.2 V ± 2 %", "0.3 A .. 0.5 A"),
    )
    .expect("write");
    let (_, alone) = check_json(&dir, &["core.guard"]);
    let droops: Vec<&serde_json::Value> = alone["diagnostics"]
        .as_array()
        .expect("diagnostics")
        .iter()
        .filter(|d| d["rule"] == "rail-droop")
        .collect();
    assert_eq!(droops.len(), 1, "{alone:#}");
    let message = droops[0]["message"].as_str().unwrap_or("");
    assert!(message.contains("`core` and `io`"), "{message}");
    assert!(message.contains("to 2.09 V"), "{message}");
    assert!(
        alone["diagnostics"]
            .as_array()
            .expect("diagnostics")
            .iter()
            .all(|d| d["file"] != "io.guard"),
        "{alone:#}"
    );
}
