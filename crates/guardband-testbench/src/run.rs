//! Running the decks: the one place the product starts a program, and only
//! on the user's explicit request (`guardband testbench --run`). Each deck
//! runs as `ngspice -b DECK` in the output folder, with a time limit, on a
//! pool of worker threads (one per core unless told otherwise).

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::sync::Mutex;
use std::sync::atomic::{AtomicUsize, Ordering};
use std::time::{Duration, Instant};

/// The simulator's program name; `GUARDBAND_NGSPICE` names another (a
/// wrapper, or a build of its own).
pub fn simulator() -> PathBuf {
    std::env::var_os("GUARDBAND_NGSPICE")
        .map(PathBuf::from)
        .unwrap_or_else(|| PathBuf::from("ngspice"))
}

/// What one run printed, or why it gave nothing.
#[derive(Debug, Clone)]
pub enum Outcome {
    Ran {
        stdout: String,
        stderr: String,
        ok: bool,
    },
    TimedOut,
    Failed(String),
}

/// Whether the simulator can be started, or the message saying how to
/// install it.
pub fn check_simulator() -> Result<(), String> {
    let program = simulator();
    match Command::new(&program)
        .arg("--version")
        .stdin(Stdio::null())
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .status()
    {
        Ok(_) => Ok(()),
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => Err(format!(
            "`{}` is not installed: install the ngspice simulator (on Debian and Ubuntu, the package `ngspice`: `apt-get install ngspice`)",
            program.display()
        )),
        Err(e) => Err(format!("`{}` cannot be started: {e}", program.display())),
    }
}

/// Runs `ngspice -b deck` in `dir`, stopping it after `limit`.
pub fn run_one(dir: &Path, deck: &str, limit: Duration) -> Outcome {
    let child = Command::new(simulator())
        .arg("-b")
        .arg(deck)
        .current_dir(dir)
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn();
    let mut child = match child {
        Ok(c) => c,
        Err(e) => return Outcome::Failed(format!("the simulator cannot be started: {e}")),
    };
    // Read both pipes on threads so a chatty run cannot block on a full pipe.
    let take = |pipe: Option<Box<dyn std::io::Read + Send>>| {
        std::thread::spawn(move || {
            let mut text = Vec::new();
            if let Some(mut p) = pipe {
                let _ = std::io::Read::read_to_end(&mut p, &mut text);
            }
            String::from_utf8_lossy(&text).into_owned()
        })
    };
    let out = take(child.stdout.take().map(|p| Box::new(p) as _));
    let err = take(child.stderr.take().map(|p| Box::new(p) as _));
    let start = Instant::now();
    let status = loop {
        match child.try_wait() {
            Ok(Some(status)) => break Some(status),
            Ok(None) if start.elapsed() >= limit => {
                let _ = child.kill();
                let _ = child.wait();
                break None;
            }
            Ok(None) => std::thread::sleep(Duration::from_millis(10)),
            Err(e) => return Outcome::Failed(format!("waiting for the simulator: {e}")),
        }
    };
    let stdout = out.join().unwrap_or_default();
    let stderr = err.join().unwrap_or_default();
    match status {
        None => Outcome::TimedOut,
        Some(s) => Outcome::Ran {
            stdout,
            stderr,
            ok: s.success(),
        },
    }
}

/// Runs every deck of `decks` in `dir` on `jobs` workers; the outcomes in
/// the order of `decks`.
pub fn run_all(dir: &Path, decks: &[String], limit: Duration, jobs: usize) -> Vec<Outcome> {
    let next = AtomicUsize::new(0);
    let outcomes: Mutex<Vec<Option<Outcome>>> = Mutex::new(vec![None; decks.len()]);
    std::thread::scope(|scope| {
        for _ in 0..jobs.max(1).min(decks.len().max(1)) {
            scope.spawn(|| {
                loop {
                    let i = next.fetch_add(1, Ordering::Relaxed);
                    let Some(deck) = decks.get(i) else { break };
                    let outcome = run_one(dir, deck, limit);
                    outcomes.lock().unwrap_or_else(|e| e.into_inner())[i] = Some(outcome);
                }
            });
        }
    });
    outcomes
        .into_inner()
        .unwrap_or_else(|e| e.into_inner())
        .into_iter()
        .map(|o| o.unwrap_or_else(|| Outcome::Failed("not run".into())))
        .collect()
}
