//! Generated workspaces for the benchmarks: N regulators of both limit
//! schemes with pins, conductors, faults and analyses, spread over files
//! that `use` a shared process file, and a JSON "twin" holding the same
//! facts, so the cost of a check can be compared with the cost of merely
//! parsing the same information as JSON.

pub mod findings;
pub mod goals;
pub mod lsp_client;
pub mod process;
pub mod quick_pass_before;

use serde_json::{Value, json};
use std::path::{Path, PathBuf};

/// The shared process file every spec file imports.
pub const PROCESS: &str = "process fab {
    spread trimmed = ± 8 %
    spread mirror  = ± 5 %

    metal top {
        thickness             = 2 um ± 10 %
        current_density       = 1 mA/um^2
        reference_temperature = 110 °C
        reference_lifetime    = 10 yr
        activation_energy     = 0.85 eV
        current_exponent      = 2
    }
}
";

/// The numbers that vary from one generated regulator to the next.
#[derive(Debug, Clone, Copy)]
pub struct Params {
    pub index: usize,
    /// Replica (sensed) limit, else undervoltage-triggered fixed current.
    pub sensed: bool,
    pub load_ma: f64,
    pub reference_ua: f64,
    pub width_um: f64,
    pub capacitance_uf: f64,
}

/// The `i`-th regulator's parameters: deterministic, varied, plausible.
pub fn params(i: usize) -> Params {
    let wobble = (i % 7) as f64;
    Params {
        index: i,
        sensed: i.is_multiple_of(2),
        load_ma: 80.0 + 10.0 * wobble,
        reference_ua: 90.0 + 5.0 * wobble,
        width_um: 300.0 + 20.0 * wobble,
        capacitance_uf: 1.0 + 0.1 * wobble,
    }
}

/// One regulator as spec text (about 50 lines).
pub fn regulator(p: &Params) -> String {
    let limit = if p.sensed {
        format!(
            "    limit sensed {{
        scheme      = replica
        ratio       = 2000
        reference   = {} uA ± fab.trimmed
        mismatch    = ± 5 %
        drain_error = ± 4 %
        threshold   = ratio * reference
        clamp_drive = 80 uA .. 150 uA
    }}

    analysis limit_loop {{
        loop       = sensed
        force vout = 0.9 V
        break_at   = pass.gate
        clamp_side = driving
        require phase_margin >= 45 deg
    }}
",
            p.reference_ua
        )
    } else {
        format!(
            "    limit fixed {{
        scheme        = undervoltage_fixed
        fixed_current = {:.0} mA .. {:.0} mA
        trip_current  = {:.0} mA .. {:.0} mA
    }}
",
            p.load_ma * 1.4,
            p.load_ma * 1.9,
            p.load_ma * 1.3,
            p.load_ma * 2.0
        )
    };
    format!(
        "regulator rail_{i} {{
    description  = \"generated rail {i}\"
    supply       = 2.7 V .. 4.4 V
    output       = 1.8 V ± 2 %
    load         = 0 mA .. {load} mA
    quiescent    = 80 uA .. 150 uA
    ambient      = -20 °C .. 70 °C
    junction_max = 125 °C
    theta_ja     = 60 K/W ± 10 %

    pin vout {{
        off_chip    = true
        capacitance = {cap} uF ± 20 %
    }}

    pass {{
        full_gate_current = 0.35 A .. 1.2 A
        amplifier_drive   = 30 uA ± 25 %
    }}

{limit}
    thermal_shutdown {{
        threshold  = 115 °C ± 7 K
        hysteresis = 20 K
    }}

    startup {{
        time_max = 200 us
        load     = 10 mA
    }}

    conductor pass_source {{
        carries = pass
        layer   = fab.top
        width   = {width} um
    }}

    fault vout_short {{
        pin   = vout
        event = short_to_ground
    }}

    fault vout_startup {{
        pin   = vout
        event = startup
    }}
}}

",
        i = p.index,
        load = p.load_ma,
        cap = p.capacitance_uf,
        width = p.width_um,
    )
}

/// The same facts as JSON.
pub fn twin(p: &Params) -> Value {
    let limit = if p.sensed {
        json!({ "name": "sensed", "scheme": "replica", "ratio": 2000,
                "reference": { "nominal": p.reference_ua, "unit": "uA", "tolerance": "fab.trimmed" },
                "mismatch": { "plus_minus": 5, "unit": "%" },
                "drain_error": { "plus_minus": 4, "unit": "%" },
                "threshold": "ratio * reference",
                "clamp_drive": { "min": 80, "max": 150, "unit": "uA" },
                "analysis": { "name": "limit_loop", "loop": "sensed", "force": { "vout": { "value": 0.9, "unit": "V" } },
                              "break_at": "pass.gate", "clamp_side": "driving", "require": { "phase_margin": { "at_least": 45, "unit": "deg" } } } })
    } else {
        json!({ "name": "fixed", "scheme": "undervoltage_fixed",
                "fixed_current": { "min": p.load_ma * 1.4, "max": p.load_ma * 1.9, "unit": "mA" },
                "trip_current": { "min": p.load_ma * 1.3, "max": p.load_ma * 2.0, "unit": "mA" } })
    };
    json!({
        "regulator": format!("rail_{}", p.index),
        "description": format!("generated rail {}", p.index),
        "supply": { "min": 2.7, "max": 4.4, "unit": "V" },
        "output": { "nominal": 1.8, "unit": "V", "tolerance": { "plus_minus": 2, "unit": "%" } },
        "load": { "min": 0, "max": p.load_ma, "unit": "mA" },
        "quiescent": { "min": 80, "max": 150, "unit": "uA" },
        "ambient": { "min": -20, "max": 70, "unit": "°C" },
        "junction_max": { "value": 125, "unit": "°C" },
        "theta_ja": { "nominal": 60, "unit": "K/W", "tolerance": { "plus_minus": 10, "unit": "%" } },
        "pins": [ { "name": "vout", "off_chip": true,
                    "capacitance": { "nominal": p.capacitance_uf, "unit": "uF", "tolerance": { "plus_minus": 20, "unit": "%" } } } ],
        "pass": { "full_gate_current": { "min": 0.35, "max": 1.2, "unit": "A" },
                  "amplifier_drive": { "nominal": 30, "unit": "uA", "tolerance": { "plus_minus": 25, "unit": "%" } } },
        "limit": limit,
        "thermal_shutdown": { "threshold": { "nominal": 115, "unit": "°C", "tolerance": { "plus_minus": 7, "unit": "K" } },
                              "hysteresis": { "value": 20, "unit": "K" } },
        "startup": { "time_max": { "value": 200, "unit": "us" }, "load": { "value": 10, "unit": "mA" } },
        "conductors": [ { "name": "pass_source", "carries": "pass", "layer": "fab.top", "width": { "value": p.width_um, "unit": "um" } } ],
        "faults": [ { "name": "vout_short", "pin": "vout", "event": "short_to_ground" },
                    { "name": "vout_startup", "pin": "vout", "event": "startup" } ],
    })
}

/// Fields (`key = value` lines) in a generated regulator, averaged over
/// the two limit schemes: how many regulators make a million fields.
pub fn fields_per_regulator() -> f64 {
    let count = |i| {
        regulator(&params(i))
            .lines()
            .filter(|l| l.contains(" = "))
            .count()
    };
    (count(0) + count(1)) as f64 / 2.0
}

/// A generated workspace on disk.
pub struct Generated {
    pub root: PathBuf,
    pub entries: Vec<PathBuf>,
    /// Bytes of spec text (all files).
    pub spec_bytes: usize,
    /// The JSON twin, serialised.
    pub twin: String,
    pub regulators: usize,
}

/// Empties `root` and writes its `guardband.toml` (large files allowed,
/// plus `limits`, lines under `[limits]`) and the shared process file.
pub fn fresh_workspace(root: &Path, limits: &str) -> std::io::Result<()> {
    let _ = std::fs::remove_dir_all(root);
    std::fs::create_dir_all(root)?;
    std::fs::write(
        root.join("guardband.toml"),
        format!("[limits]\nmax_file_size = \"256 MiB\"\n{limits}"),
    )?;
    std::fs::write(root.join("fab.guard"), PROCESS)
}

/// Writes `regulators` regulators into `files` files under `root` (which is
/// emptied first), each file importing the shared process file.
pub fn generate(root: &Path, regulators: usize, files: usize) -> std::io::Result<Generated> {
    fresh_workspace(root, "")?;
    let mut spec_bytes = PROCESS.len();
    let mut entries = Vec::new();
    let mut twins = Vec::with_capacity(regulators);
    let per_file = regulators.div_ceil(files.max(1));
    for f in 0..files.max(1) {
        let mut text = String::from("use \"fab.guard\"\n\n");
        for i in f * per_file..((f + 1) * per_file).min(regulators) {
            let p = params(i);
            text.push_str(&regulator(&p));
            twins.push(twin(&p));
        }
        let path = root.join(format!("rails_{f:05}.guard"));
        spec_bytes += text.len();
        std::fs::write(&path, text)?;
        entries.push(path.canonicalize()?);
    }
    let twin = serde_json::to_string(&json!({ "process": { "name": "fab" }, "regulators": twins }))
        .unwrap_or_default();
    Ok(Generated {
        root: root.canonicalize()?,
        entries,
        spec_bytes,
        twin,
        regulators,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn generated_specs_check_cleanly() {
        let dir = std::env::temp_dir().join(format!("guardband-gen-test-{}", std::process::id()));
        let g = generate(&dir, 6, 2).expect("generate");
        let checked =
            guardband_check::check_workspace(&g.root, &g.entries, &guardband_model::read_source)
                .expect("check");
        let problems: Vec<String> = checked
            .diagnostics
            .iter()
            .map(|d| format!("{} {}", d.rule, d.message))
            .collect();
        assert!(problems.is_empty(), "{problems:#?}");
        assert_eq!(checked.model.regulators().count(), 6);
        let twin: Value = serde_json::from_str(&g.twin).expect("twin parses");
        assert_eq!(twin["regulators"].as_array().map(Vec::len), Some(6));
        let _ = std::fs::remove_dir_all(&dir);
    }
}
