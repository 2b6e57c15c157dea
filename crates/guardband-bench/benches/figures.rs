//! Prints the figures of the contributor guide's results table:
//! lexing, parsing and the full check per MB and per regulator at three
//! sizes; the same facts parsed as JSON; a 2,000-file folder on one core and
//! on all; the server's re-check, hover and completion; peak memory.
//! Run with `cargo bench -p guardband-bench`.

use guardband_bench::generate;
use guardband_lsp::documents::Document;
use guardband_lsp::engine::Analysis;
use guardband_lsp::features;
use std::collections::HashMap;
use std::path::{Path, PathBuf};
use std::time::{Duration, Instant};
use tower_lsp_server::ls_types::Uri;

/// The allocator `guardband` itself uses, so that the figures are the command's.
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

const STACK: usize = 256 * 1024 * 1024;

fn median(mut v: Vec<Duration>) -> Duration {
    v.sort();
    v[v.len() / 2]
}

fn time<T>(runs: usize, mut f: impl FnMut() -> T) -> Duration {
    let mut samples = Vec::with_capacity(runs);
    for _ in 0..runs {
        let start = Instant::now();
        let out = std::hint::black_box(f());
        samples.push(start.elapsed());
        drop(out);
    }
    median(samples)
}

fn mb_per_s(bytes: usize, d: Duration) -> f64 {
    bytes as f64 / 1e6 / d.as_secs_f64()
}

/// All files of a generated workspace, in memory, so that the disk is not measured.
fn overlay(root: &Path) -> HashMap<PathBuf, Vec<u8>> {
    std::fs::read_dir(root)
        .expect("read dir")
        .flatten()
        .map(|e| {
            let p = e.path().canonicalize().expect("canonical");
            let bytes = std::fs::read(&p).expect("read");
            (p, bytes)
        })
        .collect()
}

/// The check as `guardband check` does it (each file with its imports, on
/// `threads` threads) plus JSON rendering of its findings, reading from memory.
fn full_check(
    root: &Path,
    entries: &[PathBuf],
    files: &HashMap<PathBuf, Vec<u8>>,
    threads: usize,
) -> usize {
    let read = |p: &Path, _limit: usize| -> std::io::Result<Vec<u8>> {
        files
            .get(p)
            .cloned()
            .ok_or_else(|| std::io::ErrorKind::NotFound.into())
    };
    let checked = guardband_check::check_each(root, entries, &read, threads, STACK).expect("check");
    let items: Vec<serde_json::Value> = checked
        .diagnostics
        .iter()
        .map(|d| {
            let p = checked.ws.file(d.file).line_index().line_col(d.span.start);
            serde_json::json!({ "rule": d.rule, "message": d.message, "line": p.line + 1, "column": p.chars + 1 })
        })
        .collect();
    serde_json::to_string(&items).map(|s| s.len()).unwrap_or(0)
}

fn on_big_stack<T: Send + 'static>(f: impl FnOnce() -> T + Send + 'static) -> T {
    std::thread::Builder::new()
        .stack_size(STACK)
        .spawn(f)
        .expect("thread")
        .join()
        .expect("no panic")
}

fn peak_kib() -> Option<u64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    status
        .lines()
        .find(|l| l.starts_with("VmHWM:"))
        .and_then(|l| l.split_whitespace().nth(1))
        .and_then(|v| v.parse().ok())
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let base = std::env::temp_dir().join(format!("guardband-bench-{}", std::process::id()));
    if let Some(i) = args.iter().position(|a| a == "--peak") {
        // Child mode: check the workspace generated in DIR, then report the
        // spec size and the high-water mark of this process.
        let root = PathBuf::from(args.get(i + 1).expect("--peak DIR [each|whole]"));
        let mut entries: Vec<PathBuf> = std::fs::read_dir(&root)
            .expect("read dir")
            .flatten()
            .map(|e| e.path())
            .filter(|p| p.extension().is_some_and(|e| e == "guard"))
            .collect();
        entries.sort();
        let bytes: u64 = entries
            .iter()
            .map(|p| std::fs::metadata(p).map(|m| m.len()).unwrap_or(0))
            .sum();
        let before = peak_kib().unwrap_or(0);
        let whole = args.get(i + 2).is_some_and(|m| m == "whole");
        let found = on_big_stack(move || {
            let read = guardband_model::read_source;
            if whole {
                // One model of everything, as the server and `report` hold it.
                guardband_check::check_workspace(&root, &entries, &read)
                    .expect("check")
                    .diagnostics
                    .len()
            } else {
                // As `guardband check` does it, on one thread.
                guardband_check::check_each(&root, &entries, &read, 1, STACK)
                    .expect("check")
                    .diagnostics
                    .len()
            }
        });
        println!("{bytes} {before} {} {found}", peak_kib().unwrap_or(0));
        return;
    }
    let cores = std::thread::available_parallelism()
        .map(|n| n.get())
        .unwrap_or(1);
    println!("machine: {cores} cores, {}", std::env::consts::ARCH);
    println!();
    println!(
        "{:>7} {:>9} | {:>10} {:>10} {:>10} {:>12} | {:>10} {:>7}",
        "N",
        "spec MB",
        "lex MB/s",
        "parse MB/s",
        "check MB/s",
        "check us/reg",
        "JSON MB/s",
        "ratio"
    );
    let mut parse_before = Vec::new();
    for n in [100usize, 1_000, 10_000] {
        let g = generate(&base.join(format!("n{n}")), n, (n / 50).max(1)).expect("generate");
        let files = overlay(&g.root);
        let texts: Vec<String> = files
            .values()
            .map(|b| String::from_utf8(b.clone()).expect("utf-8"))
            .collect();
        let runs = if n >= 10_000 { 3 } else { 7 };
        let lex = time(runs, || {
            texts
                .iter()
                .map(|t| guardband_syntax::lex(t).0.len())
                .sum::<usize>()
        });
        let parse = time(runs, || {
            texts
                .iter()
                .map(|t| guardband_syntax::parse(t).file.items.len())
                .sum::<usize>()
        });
        // The hand-written quick pass this replaced, on the same tokens.
        let before = time(runs, || {
            texts
                .iter()
                .map(|t| {
                    let (tokens, _) = guardband_syntax::lex(t);
                    guardband_bench::quick_pass_before::parse_clean(t, &tokens, 48)
                        .map(|i| i.len())
                        .unwrap_or(0)
                })
                .sum::<usize>()
        });
        parse_before.push((
            n,
            mb_per_s(g.spec_bytes, before),
            mb_per_s(g.spec_bytes, parse),
        ));
        let (root, entries) = (g.root.clone(), g.entries.clone());
        let files_for_check = files.clone();
        let check =
            on_big_stack(move || time(runs, || full_check(&root, &entries, &files_for_check, 1)));
        let json = time(runs, || {
            serde_json::from_str::<serde_json::Value>(&g.twin).map(|v| v.is_object())
        });
        println!(
            "{:>7} {:>9.2} | {:>10.1} {:>10.1} {:>10.1} {:>12.1} | {:>10.1} {:>7.1}",
            n,
            g.spec_bytes as f64 / 1e6,
            mb_per_s(g.spec_bytes, lex),
            mb_per_s(g.spec_bytes, parse),
            mb_per_s(g.spec_bytes, check),
            check.as_secs_f64() * 1e6 / n as f64,
            mb_per_s(g.twin.len(), json),
            check.as_secs_f64() / json.as_secs_f64(),
        );
    }
    println!("(ratio = full check time / time to parse the JSON twin of the same facts)");
    println!();
    println!(
        "parse, lexing included: the one chumsky grammar's quick path against the hand-written quick pass it replaced"
    );
    for (n, before, after) in &parse_before {
        println!(
            "{n:>7} regulators: hand-written pass {before:.1} MB/s, chumsky quick path {after:.1} MB/s ({})",
            if after >= before {
                "at least as fast: met"
            } else {
                "slower: not met"
            }
        );
    }
    println!();

    // A folder of 2,000 files, one regulator each, each file its own check.
    let g = generate(&base.join("folder"), 2_000, 2_000).expect("generate");
    let files = overlay(&g.root);
    let root = g.root.clone();
    let one = {
        let (root, entries, files) = (root.clone(), g.entries.clone(), files.clone());
        on_big_stack(move || time(3, || full_check(&root, &entries, &files, 1)))
    };
    let all = {
        let (root, entries, files) = (root.clone(), g.entries.clone(), files.clone());
        on_big_stack(move || time(3, || full_check(&root, &entries, &files, cores)))
    };
    println!(
        "2,000 files: one core {:.0} ms, {cores} cores {:.0} ms, speed-up {:.2}x",
        one.as_secs_f64() * 1e3,
        all.as_secs_f64() * 1e3,
        one.as_secs_f64() / all.as_secs_f64()
    );
    println!();

    // The server on one 5,000-line document.
    let dir = base.join("server");
    let g = generate(&dir, 100, 1).expect("generate");
    let path = g.entries[0].clone();
    let mut text = std::fs::read_to_string(&path).expect("read");
    while text.lines().count() > 5_000 {
        let cut = text[..text.len() - 2]
            .rfind("regulator rail_")
            .expect("a regulator");
        text.truncate(cut);
    }
    let lines = text.lines().count();
    let uri = Uri::from_file_path(&path).expect("uri");
    let root = g.root.clone();
    let (recheck, hover, completion) = on_big_stack(move || {
        let mut doc = Document {
            uri,
            path: path.clone(),
            root: root.clone(),
            text,
            version: 1,
        };
        let at = doc.text.len() / 2;
        let load_at = at
            + doc.text[at..]
                .find("load         = 0 mA .. ")
                .expect("load")
            + 23;
        let mut flip = false;
        let recheck = time(15, || {
            flip = !flip;
            doc.text
                .replace_range(load_at..load_at + 1, if flip { "9" } else { "8" });
            doc.version += 1;
            Analysis::compute(&root, std::slice::from_ref(&doc)).expect("analysis")
        });
        let analysis = Analysis::compute(&root, std::slice::from_ref(&doc)).expect("analysis");
        let file = analysis.file_id(&path).expect("file");
        let threshold = at + doc.text[at..].find("threshold").expect("threshold");
        let line_start = doc.text[..threshold].rfind('\n').map_or(0, |i| i + 1);
        let hover = time(1_001, || features::hover::hover(&analysis, file, threshold));
        let completion = time(1_001, || {
            features::complete::complete(&analysis, file, line_start)
        });
        (recheck, hover, completion)
    });
    println!(
        "server, {lines}-line document: re-check after one edit {:.2} ms, hover {:.3} ms, completion {:.3} ms",
        recheck.as_secs_f64() * 1e3,
        hover.as_secs_f64() * 1e3,
        completion.as_secs_f64() * 1e3
    );

    // Peak memory of a check of 10,000 regulators, in a fresh process that
    // does nothing else.
    let g = generate(&base.join("peak"), 10_000, 200).expect("generate");
    let me = std::env::current_exe().expect("exe");
    for (mode, what) in [
        ("each", "`guardband check` (file by file)"),
        ("whole", "one model of everything (server, report)"),
    ] {
        let Ok(out) = std::process::Command::new(&me)
            .arg("--peak")
            .arg(&g.root)
            .arg(mode)
            .output()
        else {
            continue;
        };
        let text = String::from_utf8_lossy(&out.stdout);
        let nums: Vec<u64> = text
            .split_whitespace()
            .filter_map(|v| v.parse().ok())
            .collect();
        if let [bytes, before, peak, _] = nums[..] {
            let input_mb = bytes as f64 / 1e6;
            println!(
                "peak memory, 10,000 regulators ({input_mb:.1} MB of spec), {what}: {:.0} MB ({:.0} MB before the check); goal 4 x input + 30 MB = {:.0} MB",
                peak as f64 / 1024.0,
                before as f64 / 1024.0,
                4.0 * input_mb + 30.0
            );
        }
    }
    let _ = std::fs::remove_dir_all(&base);
}
