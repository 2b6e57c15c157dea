//! CI outputs of `guardband check`: SARIF validated against the official
//! 2.1.0 schema, stable fingerprints, workflow annotations, `--output` and
//! `--exit-zero`.

mod common;

use common::{guardband, root, temp_dir};
use serde_json::Value;
use std::collections::BTreeMap;

fn sarif_of(dir: &std::path::Path, args: &[&str]) -> Value {
    let mut all = vec!["check", "--format", "sarif"];
    all.extend_from_slice(args);
    let run = guardband(dir, &all);
    serde_json::from_str(&run.stdout).unwrap_or_else(|e| panic!("bad SARIF ({e}): {}", run.stderr))
}

/// Escapes the stray `]` of the schema's `language` patterns; returns how many.
fn escape_stray_bracket(v: &mut Value) -> usize {
    const QUIRK: &str = "^[a-zA-Z]{2}|^[a-zA-Z]{2}-[a-zA-Z]{2}]?$";
    match v {
        Value::Object(map) => {
            let mut n = 0;
            for (key, value) in map.iter_mut() {
                if key == "pattern" && value == QUIRK {
                    *value = Value::from(QUIRK.replace("}]?", "}\\]?"));
                    n += 1;
                } else {
                    n += escape_stray_bracket(value);
                }
            }
            n
        }
        Value::Array(items) => items.iter_mut().map(escape_stray_bracket).sum(),
        _ => 0,
    }
}

/// Where `examples/` sits in the repository around it, as CI paths name it:
/// `examples/` in a git checkout, nothing when the sources are not one (CI
/// paths then start at the folder guardband ran in).
fn examples_in_repo() -> String {
    let examples = root().join("examples");
    match examples.ancestors().find(|d| d.join(".git").exists()) {
        Some(top) => format!(
            "{}/",
            examples
                .strip_prefix(top)
                .expect("inside")
                .to_string_lossy()
        ),
        None => String::new(),
    }
}

/// A repository laid out as the README's CI recipe suggests: the specs and
/// their `guardband.toml` in `specs/`, the git top level above them.
fn specs_repository(name: &str, with_git: bool) -> std::path::PathBuf {
    let repo = temp_dir(name).canonicalize().expect("canonical");
    std::fs::create_dir_all(repo.join("specs")).expect("specs");
    if with_git {
        std::fs::create_dir_all(repo.join(".git")).expect(".git");
    }
    std::fs::write(repo.join("specs/guardband.toml"), "").expect("toml");
    std::fs::write(
        repo.join("specs/ldo12.guard"),
        "regulator ldo12 {\n    load = 0 V .. 1 V\n}\n",
    )
    .expect("spec");
    repo
}

#[test]
fn ci_paths_are_relative_to_the_repository_root() {
    let repo = specs_repository("ci-paths-git", true);
    for cwd in [repo.clone(), repo.join("specs")] {
        let args: &[&str] = if cwd == repo {
            &["check", "--format", "github", "specs"]
        } else {
            &["check", "--format", "github"]
        };
        let run = guardband(&cwd, args);
        assert_eq!(run.code, 1, "{}", run.stderr);
        assert!(
            run.stdout
                .starts_with("::error file=specs/ldo12.guard,line=2,"),
            "from {}: {}",
            cwd.display(),
            run.stdout
        );
        let sarif = sarif_of(&cwd, if cwd == repo { &["specs"] } else { &[] });
        let location = &sarif["runs"][0]["results"][0]["locations"][0]["physicalLocation"];
        assert_eq!(location["artifactLocation"]["uri"], "specs/ldo12.guard");
        assert_eq!(location["artifactLocation"]["uriBaseId"], "REPOROOT");
        assert!(!sarif.to_string().contains(&*repo.to_string_lossy()));
    }
}

#[test]
fn without_git_ci_paths_start_at_the_working_folder() {
    let repo = specs_repository("ci-paths-plain", false);
    if repo.ancestors().skip(1).any(|d| d.join(".git").exists()) {
        panic!(
            "the temporary folder {} sits inside a repository",
            repo.display()
        );
    }
    let run = guardband(&repo, &["check", "--format", "github", "specs"]);
    assert!(
        run.stdout.starts_with("::error file=specs/ldo12.guard,"),
        "{}",
        run.stdout
    );
    let run = guardband(&repo.join("specs"), &["check", "--format", "github"]);
    assert!(
        run.stdout.starts_with("::error file=ldo12.guard,"),
        "{}",
        run.stdout
    );
}

#[test]
fn sarif_of_the_examples_validates_against_the_official_schema() {
    let mut schema: Value = serde_json::from_str(
        &std::fs::read_to_string(root().join("tests/fixtures/sarif/sarif-schema-2.1.0.json"))
            .expect("schema"),
    )
    .expect("schema JSON");
    // The official schema's patterns for `language` have a stray `]`, which
    // the validator's check of the schema itself rejects. The file stays as
    // published; here that `]` is escaped, which is what a lenient
    // (non-Unicode) regex engine reads it as anyway.
    let fixed = escape_stray_bracket(&mut schema);
    assert!(fixed >= 1, "the published quirk is still there");
    let validator = jsonschema::options()
        .should_validate_formats(true)
        .build(&schema)
        .expect("a valid schema");
    let log = sarif_of(&root().join("examples"), &[]);
    let errors: Vec<String> = validator
        .iter_errors(&log)
        .map(|e| format!("{} at {}", e, e.instance_path()))
        .collect();
    assert!(errors.is_empty(), "{errors:#?}");
    // A log that breaks the schema is caught, so the check above can fail.
    let mut broken = log.clone();
    broken["runs"][0]["results"][0]["level"] = Value::from("fatal");
    assert!(!validator.is_valid(&broken));

    let run = &log["runs"][0];
    let driver = &run["tool"]["driver"];
    assert_eq!(driver["name"], "guardband");
    assert!(
        driver["informationUri"]
            .as_str()
            .is_some_and(|u| u.starts_with("https://"))
    );
    // The base is left to the consumer: no path of this machine in the log.
    assert!(run["originalUriBaseIds"]["REPOROOT"]["description"]["text"].is_string());
    assert!(!log.to_string().contains("file://"));
    let rules = driver["rules"].as_array().expect("rules");
    for rule in guardband_rules::registry() {
        let r = rules
            .iter()
            .find(|r| r["id"] == rule.name)
            .expect("every rule listed");
        assert_eq!(r["shortDescription"]["text"], rule.summary);
        assert!(
            r["help"]["text"]
                .as_str()
                .is_some_and(|h| h.contains("How to fix") || h.contains("## How to fix"))
        );
        assert!(
            r["help"]["text"]
                .as_str()
                .is_some_and(|h| h.contains("does not replace sign-off"))
        );
    }
    // The same findings as the JSON output: one result per diagnostic, same rules.
    let (_, json) = common::check_json(&root().join("examples"), &[]);
    let results = run["results"].as_array().expect("results");
    assert_eq!(
        results.len(),
        json["diagnostics"].as_array().expect("d").len()
    );
    assert_eq!(results.len(), 30, "21 errors, 6 warnings, 3 infos");
    for (r, d) in results
        .iter()
        .zip(json["diagnostics"].as_array().expect("d"))
    {
        assert_eq!(r["ruleId"], d["rule"]);
        let loc = &r["locations"][0]["physicalLocation"];
        let uri = format!(
            "{}{}",
            examples_in_repo(),
            d["file"].as_str().expect("file")
        );
        assert_eq!(loc["artifactLocation"]["uri"], uri.as_str());
        assert_eq!(loc["artifactLocation"]["uriBaseId"], "REPOROOT");
        assert_eq!(loc["region"]["startLine"], d["range"]["start"]["line"]);
        assert_eq!(loc["region"]["startColumn"], d["range"]["start"]["column"]);
        assert_eq!(loc["region"]["endColumn"], d["range"]["end"]["column"]);
    }
}

fn fingerprints(log: &Value) -> BTreeMap<String, (String, u64)> {
    log["runs"][0]["results"]
        .as_array()
        .expect("results")
        .iter()
        .map(|r| {
            (
                r["partialFingerprints"]["guardbandFinding/v1"]
                    .as_str()
                    .unwrap_or("")
                    .to_string(),
                (
                    r["ruleId"].as_str().unwrap_or("").to_string(),
                    r["locations"][0]["physicalLocation"]["region"]["startLine"]
                        .as_u64()
                        .unwrap_or(0),
                ),
            )
        })
        .collect()
}

#[test]
fn fingerprints_survive_lines_added_above() {
    let dir = temp_dir("sarif-fingerprints");
    let original =
        std::fs::read_to_string(root().join("examples/flawed/aux_rail.guard")).expect("read");
    let original = original.replace("use \"../process/wren180.guard\"", "use \"wren180.guard\"");
    std::fs::copy(
        root().join("examples/process/wren180.guard"),
        dir.join("wren180.guard"),
    )
    .expect("copy");
    std::fs::copy(
        root().join("examples/guardband.toml"),
        dir.join("guardband.toml"),
    )
    .expect("copy");
    std::fs::write(dir.join("aux_rail.guard"), &original).expect("write");
    let before = fingerprints(&sarif_of(&dir, &["aux_rail.guard"]));
    assert!(before.len() >= 5, "{before:?}");
    std::fs::write(
        dir.join("aux_rail.guard"),
        format!("// a note\n// another\n\n{original}"),
    )
    .expect("write");
    let after = fingerprints(&sarif_of(&dir, &["aux_rail.guard"]));
    assert_eq!(
        before.keys().collect::<Vec<_>>(),
        after.keys().collect::<Vec<_>>()
    );
    for (k, (rule, line)) in &before {
        assert_eq!(after[k], (rule.clone(), line + 3), "moved by three lines");
    }
    // Each fingerprint is unique within the log.
    let log = sarif_of(&dir, &["aux_rail.guard"]);
    assert_eq!(
        fingerprints(&log).len(),
        log["runs"][0]["results"].as_array().expect("r").len()
    );
}

#[test]
fn github_annotations_carry_positions_and_escape_text() {
    let run = guardband(&root().join("examples"), &["check", "--format", "github"]);
    assert_eq!(run.code, 1);
    let lines: Vec<&str> = run.stdout.lines().collect();
    // 30 findings, and a closing line: more than 10 errors were printed.
    assert_eq!(lines.len(), 31, "{}", run.stdout);
    let (last, lines) = lines.split_last().expect("lines");
    assert!(
        last.starts_with("guardband: printed 21 error annotations"),
        "{last}"
    );
    assert!(lines.iter().all(|l| l.starts_with("::error ")
        || l.starts_with("::warning ")
        || l.starts_with("::notice ")));
    let tolerance = lines
        .iter()
        .find(|l| l.contains("tolerance-missing"))
        .expect("the info finding");
    assert!(
        tolerance.starts_with(&format!(
            "::notice file={}flawed/aux_rail.guard,line=",
            examples_in_repo()
        )),
        "{tolerance}"
    );
    assert!(
        tolerance.contains("%25"),
        "a % in the message is escaped: {tolerance}"
    );
    assert!(!tolerance.contains('\n'));
}

#[test]
fn github_notes_when_the_page_shows_fewer_than_were_printed() {
    let dir = temp_dir("github-many");
    let mut text = String::new();
    for i in 0..12 {
        text.push_str(&format!("regulator r{i} {{\n    load = 0 V .. 1 V\n}}\n"));
    }
    std::fs::write(dir.join("many.guard"), text).expect("write");
    let run = guardband(&dir, &["check", "--format", "github", "many.guard"]);
    let errors = run
        .stdout
        .lines()
        .filter(|l| l.starts_with("::error "))
        .count();
    assert!(errors >= 12, "{}", run.stdout);
    assert!(
        run.stdout
            .lines()
            .last()
            .is_some_and(|l| l.contains(&format!("printed {errors} error annotations"))),
        "{}",
        run.stdout
    );
}

#[test]
fn output_file_and_exit_zero() {
    let dir = temp_dir("output-file");
    let out = dir.join("report.sarif");
    let run = guardband(
        &root().join("examples"),
        &[
            "check",
            "--format",
            "sarif",
            "--output",
            out.to_str().expect("utf-8"),
            "--exit-zero",
        ],
    );
    assert_eq!(run.code, 0, "--exit-zero");
    assert!(run.stdout.is_empty(), "nothing on stdout: {}", run.stdout);
    let log: Value =
        serde_json::from_str(&std::fs::read_to_string(&out).expect("written")).expect("json");
    assert_eq!(log["version"], "2.1.0");
    let human = dir.join("report.txt");
    let run = guardband(
        &root().join("examples"),
        &["check", "--output", human.to_str().expect("utf-8")],
    );
    assert_eq!(run.code, 1, "findings still fail without --exit-zero");
    let text = std::fs::read_to_string(&human).expect("written");
    assert!(
        text.ends_with("21 errors, 6 warnings, 3 infos in 10 files\n"),
        "{text}"
    );
    assert!(!text.contains('\u{1b}'), "no colour codes in a file");
    // A missing path is still a usage failure with --exit-zero.
    assert_eq!(
        guardband(&dir, &["check", "nope.guard", "--exit-zero"]).code,
        2
    );
}

// `--format json` and `--format sarif` stream one finding at a time; the
// text is exactly serde_json's pretty form of the whole document (parsed and
// printed again it does not change), with findings and without.
#[test]
fn streamed_json_and_sarif_are_the_pretty_form_of_the_document() {
    for format in ["json", "sarif"] {
        for target in ["examples", "examples/radio_rail.guard"] {
            let run = common::guardband(&common::root(), &["check", "--format", format, target]);
            let value: serde_json::Value = serde_json::from_str(&run.stdout).expect("json");
            let again = serde_json::to_string_pretty(&value).expect("print") + "\n";
            assert_eq!(run.stdout, again, "{format} {target}");
            let findings = match format {
                "json" => &value["diagnostics"],
                _ => &value["runs"][0]["results"],
            };
            if target == "examples" {
                assert!(
                    findings.as_array().is_some_and(|a| !a.is_empty()),
                    "{format}: findings shown"
                );
            }
        }
    }
}
