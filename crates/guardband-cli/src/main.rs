//! The `guardband` command: a thin layer that finds files, runs the model and
//! the rules, and prints diagnostics for people (ariadne) or tools (JSON).

mod collect;
mod excerpt;
mod github;
mod render;
mod repo;
mod revision;
mod sarif;
mod testbench;
mod write;

use clap::{Parser, Subcommand, ValueEnum};

/// A check allocates many small, short-lived values (names, values, tree
/// nodes); mimalloc serves them markedly faster than the system allocator.
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;
use std::path::PathBuf;
use std::process::ExitCode;

/// The version `--version` prints: the package version and the git
/// revision the binary was built from (recorded by `build.rs`).
const VERSION: &str = concat!(
    env!("CARGO_PKG_VERSION"),
    " (",
    env!("GUARDBAND_REVISION"),
    ")"
);

/// Checks the protection requirements of regulator blocks written as `.guard` specs.
#[derive(Parser)]
#[command(name = "guardband", version = VERSION, about)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

/// Output formats of `check`.
#[derive(Clone, Copy, PartialEq, Eq, ValueEnum)]
enum Format {
    /// Reports with source excerpts, for people.
    Human,
    /// One JSON object (schema in the README).
    Json,
    /// SARIF 2.1.0, for code-scanning uploads.
    Sarif,
    /// Workflow-command annotations for CI logs.
    Github,
}

/// Output formats of `diff`.
#[derive(Clone, Copy, PartialEq, Eq, ValueEnum)]
enum DiffFormat {
    /// A Markdown comment for a pull request.
    Markdown,
    /// One JSON object (schema in the README).
    Json,
}

/// Output formats of `explain --list`.
#[derive(Clone, Copy, PartialEq, Eq, ValueEnum)]
enum ListFormat {
    Human,
    Json,
}

#[derive(Clone, Copy, PartialEq, Eq, ValueEnum)]
enum Deny {
    Warnings,
}

#[derive(Subcommand)]
enum Command {
    /// Check .guard files or folders (default: the current folder).
    Check {
        /// Files or folders; folders are searched recursively for *.guard.
        paths: Vec<PathBuf>,
        /// Output format.
        #[arg(long, value_enum, default_value = "human")]
        format: Format,
        /// Also fail (exit 1) on warnings.
        #[arg(long, value_enum)]
        deny: Option<Deny>,
        /// Write the output to this file instead of standard output.
        #[arg(long, value_name = "FILE")]
        output: Option<PathBuf>,
        /// Exit 0 even when there are findings (still 2 on usage or I/O failure).
        #[arg(long)]
        exit_zero: bool,
        /// Files checked at once (default: one per core).
        #[arg(long, value_name = "N", value_parser = clap::value_parser!(u16).range(1..))]
        jobs: Option<u16>,
        /// A results file (JSON from `testbench --run`, or CSV) to hold
        /// against the spec, besides those `guardband.toml` names; repeatable.
        #[arg(long, value_name = "FILE")]
        evidence: Vec<PathBuf>,
    },
    /// Rewrite .guard files in the canonical layout (or, with --check, list
    /// the ones that are not).
    Fmt {
        /// Files or folders (default: the current folder).
        paths: Vec<PathBuf>,
        /// Change nothing; exit 1 if a file would be reformatted.
        #[arg(long)]
        check: bool,
    },
    /// Write a design-review report: a Markdown summary and an SVG current
    /// chart per regulator.
    Report {
        /// Files or folders (default: the current folder).
        paths: Vec<PathBuf>,
        /// The folder to write into (created if needed).
        #[arg(long, value_name = "DIR")]
        out: PathBuf,
        /// A results file to hold against the spec (its evidence matrix);
        /// repeatable.
        #[arg(long, value_name = "FILE")]
        evidence: Vec<PathBuf>,
    },
    /// Compare the derived figures, findings and waivers of two revisions
    /// of a workspace (two folders, or one folder at a git revision and in
    /// the work tree with `--rev`) and print what moved.
    Diff {
        /// The earlier revision: a folder or a file (with `--rev`, the one
        /// folder or file, compared with itself at that revision).
        before: PathBuf,
        /// The later revision: a folder or a file.
        after: Option<PathBuf>,
        /// Compare the folder or file as it is at this git revision (a
        /// branch, tag, commit or `HEAD~1`, read from the repository without
        /// running git) with the work tree.
        #[arg(long, value_name = "REV")]
        rev: Option<String>,
        /// Output format.
        #[arg(long, value_enum, default_value = "markdown")]
        format: DiffFormat,
        /// Write the output to this file instead of standard output.
        #[arg(long, value_name = "FILE")]
        output: Option<PathBuf>,
    },
    /// Write an ngspice test bench for each fault case and analysis at each
    /// corner of every regulator that names its `circuit`; with --run, run
    /// them and write the measurements to OUT/results.json.
    Testbench {
        /// Files or folders (default: the current folder).
        paths: Vec<PathBuf>,
        /// The folder to write the decks (and results) into.
        #[arg(long)]
        out: PathBuf,
        /// Run each deck with ngspice (`ngspice -b`) and collect the results.
        #[arg(long)]
        run: bool,
        /// Seconds each deck may run before it is stopped.
        #[arg(long, default_value_t = 120)]
        timeout: u64,
        /// Decks run at once (default: one per core).
        #[arg(long)]
        jobs: Option<usize>,
    },
    /// Run the language server on standard input and output.
    Lsp,
    /// Print a rule's documentation.
    Explain {
        /// The rule name, e.g. `limit-within-load`.
        rule: Option<String>,
        /// List all rules.
        #[arg(long)]
        list: bool,
        /// Output format (for --list).
        #[arg(long, value_enum, default_value = "human")]
        format: ListFormat,
    },
}

fn main() -> ExitCode {
    std::panic::set_hook(Box::new(|info| {
        eprintln!("guardband: internal error: {info}");
        eprintln!("guardband: this is a bug; please report it with the input that caused it");
    }));
    let worker = std::thread::Builder::new()
        .stack_size(guardband_check::STACK_BYTES)
        .spawn(run);
    match worker.map(|handle| handle.join()) {
        Ok(Ok(code)) => code,
        _ => ExitCode::from(2),
    }
}

fn run() -> ExitCode {
    let cli = match Cli::try_parse() {
        Ok(cli) => cli,
        Err(e) => {
            let _ = e.print();
            return if e.use_stderr() {
                ExitCode::from(2)
            } else {
                ExitCode::SUCCESS
            };
        }
    };
    match cli.command {
        Command::Check {
            paths,
            format,
            deny,
            output,
            exit_zero,
            jobs,
            evidence,
        } => check(
            paths,
            format,
            deny.is_some(),
            output,
            exit_zero,
            jobs,
            &evidence,
        ),
        Command::Explain { rule, list, format } => explain(rule, list, format),
        Command::Fmt { paths, check } => fmt(paths, check),
        Command::Report {
            paths,
            out,
            evidence,
        } => report(paths, &out, &evidence),
        Command::Testbench {
            paths,
            out,
            run,
            timeout,
            jobs,
        } => match load_checked(paths, &[]) {
            Ok(checked) => testbench::testbench(
                &checked,
                &testbench::Request {
                    out: &out,
                    run,
                    timeout: std::time::Duration::from_secs(timeout),
                    jobs: jobs.unwrap_or_else(|| {
                        std::thread::available_parallelism().map_or(1, |n| n.get())
                    }),
                },
            ),
            Err(code) => code,
        },
        Command::Diff {
            before,
            after,
            rev,
            format,
            output,
        } => match (after, rev) {
            (Some(after), None) => diff(Side::Folder(&before), &after, format, output),
            (None, Some(rev)) => diff(Side::Revision(&before, &rev), &before, format, output),
            (Some(_), Some(_)) => {
                eprintln!(
                    "guardband: with --rev give one folder or file: it is compared with itself at that revision"
                );
                ExitCode::from(2)
            }
            (None, None) => {
                eprintln!("guardband: give two folders or files to compare, or one with --rev REV");
                ExitCode::from(2)
            }
        },
        Command::Lsp => match guardband_lsp::run_stdio() {
            Ok(()) => ExitCode::SUCCESS,
            Err(code) => ExitCode::from(code),
        },
    }
}

fn check(
    paths: Vec<PathBuf>,
    format: Format,
    deny_warnings: bool,
    output: Option<PathBuf>,
    exit_zero: bool,
    jobs: Option<u16>,
    evidence: &[PathBuf],
) -> ExitCode {
    let (root, files) = match find_files(paths) {
        Ok(found) => found,
        Err(code) => return code,
    };
    let threads = jobs.map(usize::from).unwrap_or_else(|| {
        std::thread::available_parallelism()
            .map(|n| n.get())
            .unwrap_or(1)
    });
    // Each file is checked on its own and dropped once its findings are
    // kept, so memory stays bounded however many files there are.
    let evidence: Vec<PathBuf> = evidence
        .iter()
        .map(|p| std::path::absolute(p).unwrap_or_else(|_| p.clone()))
        .collect();
    let checked = match guardband_check::check_each_with_evidence(
        &root,
        &files,
        &guardband_model::read_source,
        threads,
        guardband_check::STACK_BYTES,
        &evidence,
    ) {
        Ok(c) => c,
        Err((path, e)) => {
            eprintln!("guardband: cannot read {}: {e}", path.display());
            return ExitCode::from(2);
        }
    };
    let (ws, config, diagnostics) = (&checked.ws, &checked.config, &checked.diagnostics);
    let files_checked = checked.files_checked;
    let errors = checked.count(guardband_model::Severity::Error);
    let warnings = checked.count(guardband_model::Severity::Warning);
    let deny = deny_warnings || config.deny_warnings;
    let mut buffer: Vec<u8> = Vec::new();
    let to_file = output.is_some();
    let written = {
        let stdout = std::io::stdout();
        let mut lock;
        let out: &mut dyn std::io::Write = if to_file {
            &mut buffer
        } else {
            // Standard output is line-buffered; findings go through a
            // block buffer instead (flushed below).
            lock = std::io::BufWriter::with_capacity(1 << 16, stdout.lock());
            &mut lock
        };
        let result = match format {
            Format::Human => render::human(
                out,
                !to_file && render::stdout_wants_color(),
                ws,
                diagnostics,
                files_checked,
            ),
            Format::Json => render::json(out, ws, diagnostics, files_checked),
            Format::Sarif => sarif::write(out, ws, diagnostics, &repo_base()),
            Format::Github => github::annotations(out, ws, diagnostics, &repo_base()),
        };
        result.and_then(|()| out.flush())
    };
    if let Err(e) = written
        && e.kind() != std::io::ErrorKind::BrokenPipe
    {
        eprintln!("guardband: cannot write output: {e}");
        return ExitCode::from(2);
    }
    if let Some(path) = &output
        && let Err(e) = std::fs::write(path, &buffer)
    {
        eprintln!("guardband: cannot write {}: {e}", path.display());
        return ExitCode::from(2);
    }
    if exit_zero {
        return ExitCode::SUCCESS;
    }
    if errors > 0 || (deny && warnings > 0) {
        ExitCode::from(1)
    } else {
        ExitCode::SUCCESS
    }
}

/// The folder CI output names files relative to: the repository around the
/// current folder (see [`repo::base`]).
fn repo_base() -> PathBuf {
    let cwd = std::env::current_dir().unwrap_or_default();
    repo::base(&cwd)
}

/// The workspace root and the `.guard` files under `paths`; on a usage or
/// I/O failure prints why and returns the exit code. Entries that cannot be
/// taken (outside the root, links that dangle or loop, pipes, devices) are
/// named on standard error and skipped.
fn find_files(paths: Vec<PathBuf>) -> Result<(PathBuf, Vec<PathBuf>), ExitCode> {
    let cwd = match std::env::current_dir() {
        Ok(d) => d,
        Err(e) => {
            eprintln!("guardband: cannot read the current folder: {e}");
            return Err(ExitCode::from(2));
        }
    };
    let first = paths.first().cloned().unwrap_or_else(|| cwd.clone());
    let first = if first.is_absolute() {
        first
    } else {
        cwd.join(first)
    };
    let root = guardband_check::workspace_root(&first, std::slice::from_ref(&cwd));
    let canonical_root = root.canonicalize().unwrap_or_else(|_| root.clone());
    let (_, found) = collect::files_or(paths, cwd.clone(), &canonical_root).map_err(|msg| {
        eprintln!("guardband: {msg}");
        ExitCode::from(2)
    })?;
    found.report_skipped();
    Ok((root, found.files))
}

/// Finds the files under `paths` and runs the whole check on them as one
/// workspace (the model is kept, for the report); on a usage or I/O failure
/// prints why and returns the exit code.
fn load_checked(
    paths: Vec<PathBuf>,
    evidence: &[PathBuf],
) -> Result<guardband_check::Checked, ExitCode> {
    let (root, files) = find_files(paths)?;
    let evidence: Vec<PathBuf> = evidence
        .iter()
        .map(|p| std::path::absolute(p).unwrap_or_else(|_| p.clone()))
        .collect();
    match guardband_check::check_workspace_with_evidence(
        &root,
        &files,
        &guardband_model::read_source,
        &evidence,
    ) {
        Ok(c) => Ok(c),
        Err((path, e)) => {
            eprintln!("guardband: cannot read {}: {e}", path.display());
            Err(ExitCode::from(2))
        }
    }
}

fn report(paths: Vec<PathBuf>, out: &std::path::Path, evidence: &[PathBuf]) -> ExitCode {
    let checked = match load_checked(paths, evidence) {
        Ok(c) => c,
        Err(code) => return code,
    };
    match guardband_report::write(&checked, out) {
        Ok(written) => {
            for path in written {
                print_line(&format!("wrote {}", path.display()));
            }
            // A report of a spec that does not parse leaves out what could
            // not be read: say so, and fail.
            let syntax: Vec<_> = checked
                .diagnostics
                .iter()
                .filter(|d| d.rule == "syntax")
                .collect();
            if let Some(first) = syntax.first() {
                let file = checked.ws.file(first.file);
                let at = file.line_index().line_col(first.span.start);
                eprintln!(
                    "guardband: {} syntax error{} (the first in {} at line {}: {}); the report covers only what could be read (see `guardband check`)",
                    syntax.len(),
                    if syntax.len() == 1 { "" } else { "s" },
                    file.display,
                    at.line + 1,
                    first.message
                );
                return ExitCode::from(1);
            }
            ExitCode::SUCCESS
        }
        Err(e) => {
            eprintln!(
                "guardband: cannot write the report into {}: {e}",
                out.display()
            );
            ExitCode::from(2)
        }
    }
}

/// The earlier side of a diff: a folder (or file) on disk, or one as it is
/// at a git revision.
enum Side<'a> {
    Folder(&'a std::path::Path),
    Revision(&'a std::path::Path, &'a str),
}

/// The check of `path` as it is at `rev`, with the work tree's root.
fn load_at_revision(
    path: &std::path::Path,
    rev: &str,
) -> Result<guardband_check::Checked, ExitCode> {
    let (root, _) = find_files(vec![path.to_path_buf()])?;
    let at = revision::AtRevision::read(path, rev).map_err(|msg| {
        eprintln!("guardband: {msg}");
        ExitCode::from(2)
    })?;
    let full = path.canonicalize().unwrap_or_else(|_| path.to_path_buf());
    let entries = at.entries(&full);
    if entries.is_empty() {
        eprintln!(
            "guardband: no .guard files under {} at `{rev}`",
            path.display()
        );
        return Err(ExitCode::from(2));
    }
    let read = |p: &std::path::Path, limit: usize| at.read_file(p, limit);
    guardband_check::check_workspace(&root, &entries, &read).map_err(|(p, e)| {
        eprintln!("guardband: cannot read {} at `{rev}`: {e}", p.display());
        ExitCode::from(2)
    })
}

fn diff(
    before: Side,
    after: &std::path::Path,
    format: DiffFormat,
    output: Option<PathBuf>,
) -> ExitCode {
    use guardband_report::diff;
    let b = match before {
        Side::Folder(p) => p.display().to_string(),
        Side::Revision(p, rev) => format!("{} at {rev}", p.display()),
    };
    let mut snapshots = Vec::new();
    let on_disk: &[&std::path::Path] = match before {
        Side::Folder(p) => &[p, after],
        Side::Revision(..) => &[after],
    };
    if let Some(missing) = on_disk.iter().find(|p| !p.exists()) {
        eprintln!("guardband: {} does not exist", missing.display());
        return ExitCode::from(2);
    }
    let earlier = match before {
        Side::Folder(p) => load_checked(vec![p.to_path_buf()], &[]),
        Side::Revision(p, rev) => load_at_revision(p, rev),
    };
    for checked in [earlier, load_checked(vec![after.to_path_buf()], &[])] {
        match checked {
            Ok(c) => snapshots.push(diff::snapshot(&c)),
            Err(code) => return code,
        }
    }
    let d = diff::diff(&snapshots[0], &snapshots[1]);
    let a = after.display().to_string();
    let text = match format {
        DiffFormat::Markdown => diff::markdown(&d, &b, &a),
        DiffFormat::Json => {
            serde_json::to_string_pretty(&diff::json(&d, &b, &a)).unwrap_or_default() + "\n"
        }
    };
    match output {
        Some(path) => {
            if let Err(e) = std::fs::write(&path, text) {
                eprintln!("guardband: cannot write {}: {e}", path.display());
                return ExitCode::from(2);
            }
        }
        None => {
            use std::io::Write;
            let _ = std::io::stdout().lock().write_all(text.as_bytes());
        }
    }
    ExitCode::SUCCESS
}

fn fmt(paths: Vec<PathBuf>, check_only: bool) -> ExitCode {
    // The same files `check` takes: nothing outside the workspace root is
    // read or written, and a link is written through only to a file inside it.
    let (_, files) = match find_files(paths) {
        Ok(found) => found,
        Err(code) => return code,
    };
    let max_bytes = guardband_model::Limits::default().max_file_bytes;
    let (mut unformatted, mut failed) = (0, false);
    for path in files {
        let bytes = match guardband_model::read_source(&path, max_bytes) {
            Ok(b) if b.len() > max_bytes => {
                eprintln!(
                    "guardband: {} is larger than {}; not formatted",
                    path.display(),
                    guardband_model::limits::show_bytes(max_bytes)
                );
                failed = true;
                continue;
            }
            Ok(b) => b,
            Err(e) => {
                eprintln!("guardband: cannot read {}: {e}", path.display());
                failed = true;
                continue;
            }
        };
        let text = match guardband_model::decode(&bytes) {
            Ok(t) => t,
            Err((_, _, why)) => {
                eprintln!("guardband: {}: {why}", path.display());
                failed = true;
                continue;
            }
        };
        let Some(formatted) = guardband_syntax::format::format(&text) else {
            let parsed = guardband_syntax::parse(&text);
            let first = parsed.errors.first().map(|e| {
                let at = guardband_syntax::LineIndex::new(&text).line_col(e.span.start);
                format!(" (the first at line {}: {})", at.line + 1, e.message)
            });
            eprintln!(
                "guardband: {} has syntax errors{}; not formatted (see `guardband check`)",
                path.display(),
                first.unwrap_or_default()
            );
            failed = true;
            continue;
        };
        if formatted == text {
            continue;
        }
        unformatted += 1;
        if check_only {
            print_line(&format!("would reformat {}", path.display()));
            continue;
        }
        // Through a link, the file it leads to (inside the root) is written.
        let target = path.canonicalize().unwrap_or_else(|_| path.clone());
        match write::replace(&target, &formatted) {
            Ok(()) => print_line(&format!("reformatted {}", path.display())),
            Err(e) => {
                eprintln!(
                    "guardband: cannot write {} (left as it was): {e}",
                    path.display()
                );
                failed = true;
            }
        }
    }
    if failed {
        ExitCode::from(2)
    } else if check_only && unformatted > 0 {
        ExitCode::from(1)
    } else {
        ExitCode::SUCCESS
    }
}

/// Prints a line; a closed pipe (`guardband explain x | head`) is not an error.
fn print_line(text: &str) {
    use std::io::Write;
    let _ = writeln!(std::io::stdout().lock(), "{text}");
}

/// The documentation of one of the language's own diagnostics (those the
/// output names beside the lint rules: `syntax`, `unit-mismatch`, ...).
fn explain_language(code: &str, meaning: &str) -> String {
    format!(
        "# {code}\n\nA diagnostic of the guardband language, not a lint rule: {meaning}.\n\n\
         ## What it means\n\nThe checker found a problem with the input itself (its text, units, \
         names, imports, waivers or configuration) rather than with the design. Where it could \
         not read a value, that value is unknown: nothing is derived from it and the figures \
         that need it are reported as not derived, so fix these before reading the other \
         findings.\n\n\
         ## How to fix\n\nThe message names what was expected and, where it can, the closest \
         accepted spelling. The language reference (crates/guardband-syntax/REFERENCE.md) lists \
         every block, field and unit a spec may use. Language diagnostics cannot be turned off \
         in guardband.toml.\n\n{}",
        guardband_rules::CAUTION
    )
}

fn explain(rule: Option<String>, list: bool, format: ListFormat) -> ExitCode {
    let rules = guardband_rules::registry();
    if list || rule.is_none() {
        if format == ListFormat::Json {
            let entries: Vec<serde_json::Value> = rules
                .iter()
                .map(|r| {
                    serde_json::json!({
                        "name": r.name,
                        "default_severity": r.default_severity.map(|s| s.as_str()).unwrap_or("off"),
                        "summary": r.summary,
                    })
                })
                .collect();
            print_line(&serde_json::to_string_pretty(&entries).unwrap_or_default());
        } else {
            let width = rules.iter().map(|r| r.name.len()).max().unwrap_or(0);
            for r in rules {
                let sev = r.default_severity.map(|s| s.as_str()).unwrap_or("off");
                print_line(&format!("{:width$}  {:7}  {}", r.name, sev, r.summary));
            }
        }
        return ExitCode::SUCCESS;
    }
    let name = rule.unwrap_or_default();
    let language = guardband_model::LANGUAGE_DIAGNOSTICS
        .iter()
        .find(|(code, _)| *code == name);
    match rules.iter().find(|r| r.name == name) {
        Some(r) => {
            print_line(&r.explain());
            ExitCode::SUCCESS
        }
        None if language.is_some() => {
            let (code, meaning) = language.copied().unwrap_or_default();
            print_line(&explain_language(code, meaning));
            ExitCode::SUCCESS
        }
        None => {
            let names: Vec<&str> = rules
                .iter()
                .map(|r| r.name)
                .chain(
                    guardband_model::LANGUAGE_DIAGNOSTICS
                        .iter()
                        .map(|(c, _)| *c),
                )
                .collect();
            let hint = guardband_model::did_you_mean(&name, names.iter().copied())
                .map(|s| format!("; did you mean `{s}`?"))
                .unwrap_or_default();
            eprintln!("guardband: no rule named `{name}`{hint} (see `guardband explain --list`)");
            ExitCode::from(2)
        }
    }
}
