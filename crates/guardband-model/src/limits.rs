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
    /// Most findings of one rule reported in one file; the rest are
    /// summed up in one closing finding, so that a hostile file cannot
    /// fill memory or a terminal with copies of one finding.
    pub max_findings_per_rule: usize,
}

impl Default for Limits {
    fn default() -> Limits {
        Limits {
            max_file_bytes: 16 * 1024 * 1024,
            max_nesting: guardband_syntax::MAX_NESTING,
            max_import_depth: 32,
            max_files: 10_000,
            max_eval_steps: 50_000_000,
            max_findings_per_rule: 200,
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

/// Keeps at most `max` findings of each rule in each file (the first by
/// position, `diagnostics` being sorted) and puts one `limit` finding, at
/// the first one left out, in place of the rest.
pub fn cap_findings(diagnostics: Vec<crate::Diagnostic>, max: usize) -> Vec<crate::Diagnostic> {
    use std::collections::HashMap;
    let mut seen: HashMap<(crate::FileId, &'static str), usize> = HashMap::new();
    for d in &diagnostics {
        *seen.entry((d.file, d.rule)).or_default() += 1;
    }
    if seen.values().all(|n| *n <= max) {
        return diagnostics;
    }
    let mut kept: HashMap<(crate::FileId, &'static str), usize> = HashMap::new();
    let mut out = Vec::with_capacity(diagnostics.len().min(seen.len() * (max + 1)));
    for d in diagnostics {
        let key = (d.file, d.rule);
        let k = kept.entry(key).or_default();
        *k += 1;
        if *k <= max {
            out.push(d);
        } else if *k == max + 1 {
            let hidden = seen[&key] - max;
            out.push(
                crate::Diagnostic::error(
                    "limit",
                    d.file,
                    d.span.clone(),
                    format!(
                        "{hidden} more `{}` findings in this file are not shown (the first {max} are)",
                        d.rule
                    ),
                )
                .with_severity(d.severity)
                .primary("the first one not shown")
                .help("fix the ones shown, or raise `max_findings_per_rule` under `[limits]` in guardband.toml"),
            );
        }
    }
    out
}
