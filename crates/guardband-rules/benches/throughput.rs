//! Throughput of a whole check (load, parse, evaluate, derive, lint) on a
//! generated workspace, in bytes per second. Run with `cargo bench -p guardband-rules`.

use std::time::Instant;

fn regulator(i: usize) -> String {
    format!(
        "regulator rail_{i} {{
    supply = 2.7 V .. 4.4 V  output = 1.8 V ± 2 %  load = 0 mA .. 120 mA
    ambient = -20 °C .. 70 °C  junction_max = 125 °C  theta_ja = 60 K/W ± 10 %
    pin vout {{ off_chip = true  capacitance = 1 uF ± 20 % }}
    pass {{ full_gate_current = 0.35 A .. 1.2 A  amplifier_drive = 30 uA ± 25 % }}
    limit sensed {{ scheme = replica  ratio = 2000  reference = 100 uA ± p.trimmed
                   mismatch = ± 5 %  threshold = ratio * reference  clamp_drive = 80 uA .. 150 uA }}
    thermal_shutdown {{ threshold = 115 °C ± 7 K }}
    startup {{ time_max = 100 us  load = 10 mA }}
    conductor src {{ carries = pass  layer = p.m  width = 260 um }}
    fault short {{ pin = vout  event = short_to_ground  expect current <= 300 mA }}
    fault start {{ pin = vout  event = startup }}
    analysis a {{ loop = sensed  force vout = 0.9 V  break_at = pass.gate  require phase_margin >= 45 deg }}
}}
"
    )
}

fn main() {
    let dir = std::env::temp_dir().join(format!("guardband-bench-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("temp dir");
    std::fs::write(
        dir.join("p.guard"),
        "process p { spread trimmed = ± 8 %\n metal m { thickness = 2 um ± 10 %  current_density = 1 mA/um^2  reference_temperature = 110 °C  reference_lifetime = 10 yr  activation_energy = 0.85 eV  current_exponent = 2 } }\n",
    )
    .expect("write");
    for (files, per_file) in [(1usize, 10usize), (20, 50), (100, 50)] {
        let mut entries = vec![dir.join("p.guard")];
        let mut bytes = 0usize;
        for f in 0..files {
            let mut text = String::from("use \"p.guard\"\n");
            for r in 0..per_file {
                text.push_str(&regulator(f * per_file + r));
            }
            bytes += text.len();
            let path = dir.join(format!("f{f}.guard"));
            std::fs::write(&path, text).expect("write");
            entries.push(path);
        }
        let rounds = 5;
        let start = Instant::now();
        let mut found = 0;
        for _ in 0..rounds {
            let mut diags = Vec::new();
            let mut ws = guardband_model::load(&dir, &entries, &mut diags).expect("load");
            let (config, _) = guardband_rules::Config::load(&mut ws);
            let (model, model_diags) = guardband_model::check(&ws);
            diags.extend(model_diags);
            found = guardband_rules::analyse(&ws, &model, &config, diags).len();
        }
        let secs = start.elapsed().as_secs_f64() / rounds as f64;
        println!(
            "{files:>4} files x {per_file:>3} regulators: {:>8.1} KiB in {:>8.2} ms = {:>7.1} MiB/s ({found} diagnostics)",
            bytes as f64 / 1024.0,
            secs * 1e3,
            bytes as f64 / secs / (1024.0 * 1024.0)
        );
    }
    let _ = std::fs::remove_dir_all(&dir);
}
