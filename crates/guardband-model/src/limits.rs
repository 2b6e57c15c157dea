//! Limits on what one check may take on: file size, nesting, imports and
//! evaluation work. Each has a default that no real spec comes near, can
//! be changed in `[limits]` of guardband.toml, and is reported as a `limit`
//! diagnostic at the place it was reached.

/// The limits of one check.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Limits {
    /// Largest file read, in bytes.
    pub max_file_bytes: usize,
    /// Deepest nesting of braces and parentheses (at most [`guardband_syntax::HARD_MAX_NESTING`]).
    pub max_nesting: usize,
    /// Longest chain of `use` imports from a checked file.
    pub max_import_depth: usize,
    /// Most files loaded in one check.
    pub max_files: usize,
    /// Most expression nodes evaluated in one check.
    pub max_eval_steps: u64,
}

impl Default for Limits {
    fn default() -> Limits {
        Limits {
            max_file_bytes: 16 * 1024 * 1024,
            max_nesting: guardband_syntax::MAX_NESTING,
            max_import_depth: 32,
            max_files: 10_000,
            max_eval_steps: 50_000_000,
        }
    }
}

/// Bytes as people read them (`16 MiB`, `512 KiB`, `100 bytes`).
pub fn show_bytes(n: usize) -> String {
    const MIB: usize = 1024 * 1024;
    if n >= MIB && n.is_multiple_of(MIB) {
        format!("{} MiB", n / MIB)
    } else if n >= MIB {
        format!("{:.1} MiB", n as f64 / MIB as f64)
    } else if n >= 1024 {
        format!("{} KiB", n / 1024)
    } else {
        format!("{n} bytes")
    }
}
