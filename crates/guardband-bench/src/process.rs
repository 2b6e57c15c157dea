//! Runs a command as a child process and measures it as its user sees it:
//! wall-clock time from spawn to exit and peak resident memory (the
//! kernel's `ru_maxrss` of that child alone, read with `wait4`).
//!
//! Linux carries a process' peak over `exec`, so a child forked from a
//! bench that holds a gigabyte would report that gigabyte. The command is
//! therefore started by a fresh, small copy of the bench ([`TRAMPOLINE`],
//! see [`trampoline_main`]), which measures it and prints the figures.

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

/// What one run of a command took.
#[derive(Debug, Clone)]
pub struct Measured {
    pub wall: Duration,
    /// Peak resident set of the child, in bytes.
    pub peak_bytes: u64,
    /// The exit code (None if a signal ended it).
    pub code: Option<i32>,
    /// Its standard output, if it was captured.
    pub stdout: Vec<u8>,
    /// Stopped at the time limit of [`measure_within`].
    pub stopped: bool,
}

/// Runs `cmd` to its end, its standard output thrown away (`capture` false)
/// or kept in a scratch file and returned; standard error is discarded.
pub fn measure(cmd: &mut Command, capture: bool) -> std::io::Result<Measured> {
    measure_within(cmd, capture, None)
}

/// The argument that starts the bench as a trampoline: `--measure-child
/// LIMIT_MS CAPTURE_FILE|- PROGRAM ARGS...`.
pub const TRAMPOLINE: &str = "--measure-child";

/// [`measure`], with the child killed once it has run for `limit`.
pub fn measure_within(
    cmd: &mut Command,
    capture: bool,
    limit: Option<Duration>,
) -> std::io::Result<Measured> {
    let scratch = std::env::temp_dir().join(format!(
        "guardband-bench-capture-{}-{:?}",
        std::process::id(),
        std::thread::current().id()
    ));
    let mut outer = Command::new(std::env::current_exe()?);
    outer
        .arg(TRAMPOLINE)
        .arg(limit.map_or(0, |l| l.as_millis()).to_string())
        .arg(if capture {
            scratch.as_os_str()
        } else {
            "-".as_ref()
        })
        .arg(cmd.get_program())
        .args(cmd.get_args());
    for (key, value) in cmd.get_envs() {
        match value {
            Some(v) => outer.env(key, v),
            None => outer.env_remove(key),
        };
    }
    if let Some(dir) = cmd.get_current_dir() {
        outer.current_dir(dir);
    }
    let out = outer.stderr(Stdio::null()).stdin(Stdio::null()).output()?;
    let text = String::from_utf8_lossy(&out.stdout);
    let nums: Vec<i64> = text
        .split_whitespace()
        .filter_map(|v| v.parse().ok())
        .collect();
    let [wall_us, peak, code, stopped] = nums[..] else {
        return Err(std::io::Error::other(format!(
            "the trampoline said {text:?}"
        )));
    };
    let stdout = if capture {
        let bytes = std::fs::read(&scratch)?;
        let _ = std::fs::remove_file(&scratch);
        bytes
    } else {
        Vec::new()
    };
    Ok(Measured {
        wall: Duration::from_micros(wall_us as u64),
        peak_bytes: peak as u64,
        code: (code >= 0).then_some(code as i32),
        stdout,
        stopped: stopped != 0,
    })
}

/// The trampoline: runs the command of its arguments (after
/// [`TRAMPOLINE`]), measures it and prints `wall_us peak_bytes code stopped`.
pub fn trampoline_main(args: &[String]) {
    let (Some(limit), Some(capture), Some(program)) = (args.first(), args.get(1), args.get(2))
    else {
        println!("usage");
        return;
    };
    let limit = limit
        .parse::<u64>()
        .ok()
        .filter(|&l| l > 0)
        .map(Duration::from_millis);
    let mut cmd = Command::new(program);
    cmd.args(&args[3..]);
    let capture = (capture != "-").then(|| PathBuf::from(capture));
    match run_measured(&mut cmd, capture.as_deref(), limit) {
        Ok(m) => println!(
            "{} {} {} {}",
            m.wall.as_micros(),
            m.peak_bytes,
            m.code.unwrap_or(-1),
            u8::from(m.stopped)
        ),
        Err(e) => println!("error {e}"),
    }
}

/// Runs and measures `cmd` in this process (see the module's note on why
/// only the trampoline does this).
fn run_measured(
    cmd: &mut Command,
    capture: Option<&Path>,
    limit: Option<Duration>,
) -> std::io::Result<Measured> {
    if let Some(path) = capture {
        cmd.stdout(std::fs::File::create(path)?);
    } else {
        cmd.stdout(Stdio::null());
    }
    cmd.stdin(Stdio::null()).stderr(Stdio::null());
    let start = Instant::now();
    let child = cmd.spawn()?;
    let done = std::sync::Arc::new(std::sync::atomic::AtomicBool::new(false));
    let stopped = std::sync::Arc::new(std::sync::atomic::AtomicBool::new(false));
    if let Some(limit) = limit {
        let (done, stopped, pid) = (done.clone(), stopped.clone(), child.id());
        std::thread::spawn(move || {
            let until = Instant::now() + limit;
            while Instant::now() < until {
                if done.load(std::sync::atomic::Ordering::SeqCst) {
                    return;
                }
                std::thread::sleep(Duration::from_millis(20));
            }
            if !done.load(std::sync::atomic::Ordering::SeqCst) {
                stopped.store(true, std::sync::atomic::Ordering::SeqCst);
                // SAFETY: a plain signal to our own child, not yet reaped
                // (`done` is set right after it is).
                unsafe { libc::kill(pid as libc::pid_t, libc::SIGKILL) };
            }
        });
    }
    let waited = wait_with_usage(child.id());
    done.store(true, std::sync::atomic::Ordering::SeqCst);
    let (code, peak_bytes) = waited?;
    let wall = start.elapsed();
    // The child is reaped; `Child` does not wait on drop.
    drop(child);
    Ok(Measured {
        wall,
        peak_bytes,
        code,
        stdout: Vec::new(),
        stopped: stopped.load(std::sync::atomic::Ordering::SeqCst),
    })
}

/// The median run of `runs` runs of `make()`'s command (by wall-clock time).
pub fn median_of(runs: usize, mut make: impl FnMut() -> Command) -> std::io::Result<Measured> {
    let mut all = Vec::with_capacity(runs);
    for _ in 0..runs.max(1) {
        all.push(measure(&mut make(), false)?);
    }
    all.sort_by_key(|m| m.wall);
    Ok(all.swap_remove(all.len() / 2))
}

fn wait_with_usage(pid: u32) -> std::io::Result<(Option<i32>, u64)> {
    let mut status: libc::c_int = 0;
    // SAFETY: `rusage` is plain data that `wait4` fills in; an all-zero
    // value is a valid starting point for it.
    let mut usage: libc::rusage = unsafe { std::mem::zeroed() };
    loop {
        // SAFETY: valid pointers to locals; `pid` is our own unreaped child.
        let r = unsafe { libc::wait4(pid as libc::pid_t, &mut status, 0, &mut usage) };
        if r == pid as libc::pid_t {
            break;
        }
        let e = std::io::Error::last_os_error();
        if e.kind() != std::io::ErrorKind::Interrupted {
            return Err(e);
        }
    }
    let code = libc::WIFEXITED(status).then(|| libc::WEXITSTATUS(status));
    // Linux reports `ru_maxrss` in KiB.
    Ok((code, usage.ru_maxrss as u64 * 1024))
}

/// The `guardband` binary of this build, built first if it is missing or
/// older than the bench itself (the bench measures the command as shipped).
pub fn guardband_binary() -> Result<PathBuf, String> {
    let me = std::env::current_exe().map_err(|e| e.to_string())?;
    // target/<profile>/deps/figures-… → target/<profile>/guardband
    let dir = me
        .parent()
        .and_then(Path::parent)
        .ok_or("no target folder")?;
    let bin = dir.join("guardband");
    let stale = |b: &Path| {
        let mtime = |p: &Path| std::fs::metadata(p).and_then(|m| m.modified()).ok();
        match (mtime(b), mtime(&me)) {
            (Some(b), Some(m)) => b < m,
            _ => true,
        }
    };
    if stale(&bin) {
        let cargo = std::env::var_os("CARGO").unwrap_or_else(|| "cargo".into());
        let manifest = Path::new(env!("CARGO_MANIFEST_DIR")).join("../../Cargo.toml");
        let profile = dir
            .file_name()
            .and_then(|n| n.to_str())
            .unwrap_or("release");
        let mut build = Command::new(cargo);
        build
            .arg("build")
            .arg("--quiet")
            .arg("-p")
            .arg("guardband-cli")
            .arg("--manifest-path")
            .arg(&manifest);
        if profile == "release" {
            build.arg("--release");
        }
        let ok = build.status().map(|s| s.success()).unwrap_or(false);
        if !ok || !bin.exists() {
            return Err(format!("could not build {}", bin.display()));
        }
    }
    Ok(bin)
}

/// `valgrind`, if it is on the machine (for instruction counts).
pub fn valgrind() -> Option<PathBuf> {
    let ok = Command::new("valgrind")
        .arg("--version")
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .status()
        .is_ok_and(|s| s.success());
    ok.then(|| PathBuf::from("valgrind"))
}

/// Runs `args` of `exe` under callgrind, counting only the instructions
/// spent inside functions whose name contains `function`, and returns the
/// count.
pub fn instructions(exe: &Path, args: &[&str], function: &str) -> Result<u64, String> {
    let out = std::env::temp_dir().join(format!(
        "guardband-bench-callgrind-{}-{:?}",
        std::process::id(),
        std::thread::current().id()
    ));
    let status = Command::new("valgrind")
        .arg("--tool=callgrind")
        .arg(format!("--callgrind-out-file={}", out.display()))
        .arg(format!("--toggle-collect=*{function}*"))
        .arg(exe)
        .args(args)
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .status()
        .map_err(|e| e.to_string())?;
    let text = std::fs::read_to_string(&out).map_err(|e| e.to_string());
    let _ = std::fs::remove_file(&out);
    if !status.success() {
        return Err(format!("callgrind run failed ({status})"));
    }
    let text = text?;
    text.lines()
        .find_map(|l| {
            l.strip_prefix("summary:")
                .or_else(|| l.strip_prefix("totals:"))
        })
        .and_then(|v| v.split_whitespace().next())
        .and_then(|v| v.parse().ok())
        .ok_or_else(|| "no instruction total in callgrind's output".into())
}
