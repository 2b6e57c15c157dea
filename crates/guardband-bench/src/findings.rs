//! A workspace with a chosen number of findings, for timing the output
//! formats: regulators whose many conductors are each far too narrow for
//! the current the limit lets through, one `conductor-under-rated` error
//! apiece (with three labels and a help line, like most findings).

use crate::{Generated, PROCESS, fresh_workspace, params, regulator};
use std::path::Path;

/// Conductors per regulator: enough that the findings dominate the check.
const CONDUCTORS: usize = 1_000;

/// Writes about `findings` findings' worth of regulators (rounded up to
/// whole regulators of [`CONDUCTORS`] conductors) into files of ten
/// regulators under `root`, and a configuration that lets them all show.
pub fn generate_findings(root: &Path, findings: usize) -> std::io::Result<Generated> {
    fresh_workspace(root, "max_findings_per_rule = 10000000\n")?;
    let narrow: String = (0..CONDUCTORS)
        .map(|c| {
            format!(
                "    conductor narrow_{c} {{\n        carries = pass\n        layer   = fab.top\n        width   = 0.1 um\n    }}\n\n"
            )
        })
        .collect();
    let regulators = findings.div_ceil(CONDUCTORS);
    let mut spec_bytes = PROCESS.len();
    let mut entries = Vec::new();
    for (f, chunk) in (0..regulators).collect::<Vec<_>>().chunks(10).enumerate() {
        let mut text = String::from("use \"fab.guard\"\n\n");
        for &i in chunk {
            let full = regulator(&params(i));
            // Before the regulator's closing brace.
            let body = full.trim_end().strip_suffix('}').unwrap_or(&full);
            text.push_str(body);
            text.push_str(&narrow);
            text.push_str("}\n\n");
        }
        let path = root.join(format!("narrow_{f:05}.guard"));
        spec_bytes += text.len();
        std::fs::write(&path, text)?;
        entries.push(path.canonicalize()?);
    }
    Ok(Generated {
        root: root.canonicalize()?,
        entries,
        spec_bytes,
        twin: String::new(),
        regulators,
    })
}

#[cfg(test)]
mod tests {
    #[test]
    fn each_narrow_conductor_is_one_finding() {
        let dir =
            std::env::temp_dir().join(format!("guardband-findings-test-{}", std::process::id()));
        let g = super::generate_findings(&dir, 2_000).expect("generate");
        let checked =
            guardband_check::check_workspace(&g.root, &g.entries, &guardband_model::read_source)
                .expect("check");
        let under = checked
            .diagnostics
            .iter()
            .filter(|d| d.rule == "conductor-under-rated")
            .count();
        assert_eq!(under, 2_000);
        assert_eq!(checked.diagnostics.len(), 2_000, "only those findings");
        let _ = std::fs::remove_dir_all(&dir);
    }
}
