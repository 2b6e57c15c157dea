//! From the runs to a results file: one record per case × corner ×
//! quantity, in SI units with the deck it came from and the hashes of the
//! spec and netlist the deck was written from (the JSON format
//! `guardband check --evidence` reads, documented in REFERENCE.md).

use crate::measure::{loop_gain, printed, read_points};
use crate::run::Outcome;
use crate::{BenchKind, Plan, Problem};
use guardband_check::evidence::{FORMAT, Record, ResultsFile, VERSION};
use std::path::Path;

/// The SI unit a quantity is recorded in.
pub fn unit_of(quantity: &str) -> &'static str {
    match quantity {
        "current" => "A",
        "output" => "V",
        "time" => "s",
        "unity_gain" => "Hz",
        "phase_margin" => "deg",
        "gain_margin" => "dB",
        _ => "",
    }
}

/// The records of every bench that ran, and a problem for each quantity a
/// bench did not measure (it is then missing from the results, which
/// `evidence-missing` reports: never a value assumed).
pub fn collect(plan: &Plan, dir: &Path, outcomes: &[Outcome]) -> (Vec<Record>, Vec<Problem>) {
    let mut records = Vec::new();
    let mut problems = Vec::new();
    for (bench, outcome) in plan.benches.iter().zip(outcomes) {
        let problem = |message: String| Problem {
            regulator: bench.regulator.clone(),
            case: Some(bench.case.clone()),
            message: format!("at corner `{}` ({}): {message}", bench.corner, bench.file),
        };
        let (stdout, stderr) = match outcome {
            Outcome::Ran { stdout, stderr, .. } => (stdout, stderr),
            Outcome::TimedOut => {
                problems.push(problem(
                    "the simulation ran past its time limit and was stopped".into(),
                ));
                continue;
            }
            Outcome::Failed(why) => {
                problems.push(problem(why.clone()));
                continue;
            }
        };
        let mut values = printed(stdout);
        if bench.kind == BenchKind::LoopGain {
            let path = dir.join(crate::deck::loop_file(&bench.file));
            let figures = std::fs::read_to_string(&path)
                .map_err(|e| format!("the loop gain was not written ({e})"))
                .and_then(|text| read_points(&text))
                .and_then(|points| loop_gain(&points));
            match figures {
                Ok(f) => {
                    values.insert("unity_gain".into(), f.unity_gain);
                    values.insert("phase_margin".into(), f.phase_margin);
                    if let Some(gm) = f.gain_margin {
                        values.insert("gain_margin".into(), gm);
                    }
                }
                Err(why) => problems.push(problem(why)),
            }
        }
        for q in bench.kind.quantities() {
            let Some(value) = values.get(*q) else {
                if bench.kind == BenchKind::LoopGain
                    && *q == "gain_margin"
                    && values.contains_key("phase_margin")
                {
                    // The phase never reached −180° in the sweep: no gain
                    // margin to record, and none is missing.
                    continue;
                }
                if bench.kind == BenchKind::LoopGain && !values.contains_key("phase_margin") {
                    continue;
                }
                problems.push(problem(format!(
                    "ngspice measured no `{q}`{}",
                    errors_of(stdout, stderr)
                )));
                continue;
            };
            records.push(Record {
                regulator: bench.regulator.clone(),
                case: bench.case.clone(),
                corner: bench.corner.clone(),
                quantity: q.to_string(),
                value: *value,
                unit: unit_of(q).to_string(),
                deck: Some(bench.file.clone()),
                spec: Some(bench.spec.clone()),
                spec_hash: Some(bench.spec_hash.clone()),
                netlist: Some(bench.netlist.clone()),
                netlist_hash: Some(bench.netlist_hash.clone()),
            });
        }
    }
    (records, problems)
}

/// The simulator's error lines, for a message: `: LINE; LINE`.
fn errors_of(stdout: &str, stderr: &str) -> String {
    let lines: Vec<&str> = stdout
        .lines()
        .chain(stderr.lines())
        .map(str::trim)
        .filter(|l| l.to_ascii_lowercase().contains("error"))
        .take(3)
        .collect();
    if lines.is_empty() {
        String::new()
    } else {
        format!(" ({})", lines.join("; "))
    }
}

/// The results file's JSON text.
pub fn to_json(records: Vec<Record>) -> String {
    let file = ResultsFile {
        format: FORMAT.to_string(),
        version: VERSION,
        records,
    };
    let mut text = serde_json::to_string_pretty(&file).unwrap_or_default();
    text.push('\n');
    text
}
