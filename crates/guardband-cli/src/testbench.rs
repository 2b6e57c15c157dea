//! `guardband testbench`: write one ngspice deck per fault case or analysis
//! and corner of every regulator that names its circuit, and with `--run`
//! run them and write the measurements as `results.json` beside them.

use std::path::Path;
use std::process::ExitCode;
use std::time::Duration;

/// What the command was asked to do.
pub struct Request<'a> {
    pub out: &'a Path,
    pub run: bool,
    pub timeout: Duration,
    pub jobs: usize,
}

/// Writes (and runs) the benches of `checked`; prints what it wrote and
/// every problem. Exit 1 when a bench could not be written or measured, 2
/// when nothing could be done.
pub fn testbench(checked: &guardband_check::Checked, request: &Request) -> ExitCode {
    let plan = guardband_testbench::plan(checked, &guardband_model::read_source);
    for name in &plan.without_circuit {
        eprintln!("guardband: regulator `{name}` has no `circuit` block: no benches for it");
    }
    if plan.benches.is_empty() {
        report_problems(&plan.problems);
        eprintln!(
            "guardband: no bench written: no regulator names a circuit it can be written for"
        );
        return ExitCode::from(2);
    }
    if request.run
        && let Err(why) = guardband_testbench::run::check_simulator()
    {
        eprintln!("guardband: {why}");
        return ExitCode::from(2);
    }
    if let Err(e) = std::fs::create_dir_all(request.out) {
        eprintln!("guardband: cannot create {}: {e}", request.out.display());
        return ExitCode::from(2);
    }
    for bench in &plan.benches {
        let path = request.out.join(&bench.file);
        if let Err(e) = std::fs::write(&path, &bench.text) {
            eprintln!("guardband: cannot write {}: {e}", path.display());
            return ExitCode::from(2);
        }
    }
    println!(
        "wrote {} bench{} into {}",
        plan.benches.len(),
        if plan.benches.len() == 1 { "" } else { "es" },
        request.out.display()
    );
    let mut problems = plan.problems.clone();
    if request.run {
        let decks: Vec<String> = plan.benches.iter().map(|b| b.file.clone()).collect();
        let outcomes =
            guardband_testbench::run::run_all(request.out, &decks, request.timeout, request.jobs);
        let (records, run_problems) =
            guardband_testbench::results::collect(&plan, request.out, &outcomes);
        problems.extend(run_problems);
        let path = request.out.join("results.json");
        let count = records.len();
        if let Err(e) = std::fs::write(&path, guardband_testbench::results::to_json(records)) {
            eprintln!("guardband: cannot write {}: {e}", path.display());
            return ExitCode::from(2);
        }
        println!(
            "ran {} deck{}: {count} measurement{} in {}; check them with `guardband check --evidence {}`",
            decks.len(),
            if decks.len() == 1 { "" } else { "s" },
            if count == 1 { "" } else { "s" },
            path.display(),
            path.display()
        );
    }
    report_problems(&problems);
    if problems.is_empty() {
        ExitCode::SUCCESS
    } else {
        ExitCode::from(1)
    }
}

fn report_problems(problems: &[guardband_testbench::Problem]) {
    for p in problems {
        match &p.case {
            Some(case) => eprintln!("guardband: `{}.{case}`: {}", p.regulator, p.message),
            None => eprintln!("guardband: `{}`: {}", p.regulator, p.message),
        }
    }
}
