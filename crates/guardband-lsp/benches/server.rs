//! What a keystroke costs in the editor, without the debounce: the full
//! re-check after one edit of a 5,000-line document, a hover, a completion
//! and the semantic tokens, on a generated spec. Run with
//! `cargo bench -p guardband-lsp`; it prints medians.

use guardband_lsp::documents::Document;
use guardband_lsp::encoding::Encoding;
use guardband_lsp::engine::Analysis;
use guardband_lsp::features;
use std::time::{Duration, Instant};
use tower_lsp_server::ls_types::{Position, Uri};

/// One regulator, 50 lines, in the canonical layout.
fn regulator(i: usize) -> String {
    let mut s = guardband_syntax::format::format(&format!(
        "regulator rail_{i} {{
    supply = 2.7 V .. 4.4 V
    output = 1.8 V ± 2 %
    load = 0 mA .. 120 mA
    ambient = -20 °C .. 70 °C
    junction_max = 125 °C
    theta_ja = 60 K/W ± 10 %
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
    ))
    .expect("the template parses");
    s.push('\n');
    s
}

fn median(mut samples: Vec<Duration>) -> Duration {
    samples.sort();
    samples[samples.len() / 2]
}

/// Median time of `f`; each result is dropped after the clock stops, as the
/// server frees an old analysis off the latency path.
fn time<T>(runs: usize, mut f: impl FnMut() -> T) -> Duration {
    let mut samples = Vec::with_capacity(runs);
    for _ in 0..runs {
        let start = Instant::now();
        let result = std::hint::black_box(f());
        samples.push(start.elapsed());
        drop(result);
    }
    median(samples)
}

fn main() {
    let dir = std::env::temp_dir().join(format!("guardband-lsp-bench-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).expect("temp dir");
    std::fs::write(dir.join("guardband.toml"), "").expect("config");
    std::fs::write(
        dir.join("p.guard"),
        "process p { spread trimmed = ± 8 %\n metal m { thickness = 2 um ± 10 %  current_density = 1 mA/um^2  reference_temperature = 110 °C  reference_lifetime = 10 yr  activation_energy = 0.85 eV  current_exponent = 2 } }\n",
    )
    .expect("write");
    let mut text = String::from("use \"p.guard\"\n\n");
    let mut i = 0;
    while text.lines().count() < 5_000 {
        text.push_str(&regulator(i));
        i += 1;
    }
    let lines = text.lines().count();
    let path = dir
        .join("big.guard")
        .canonicalize()
        .unwrap_or(dir.join("big.guard"));
    std::fs::write(&path, &text).expect("write");
    let uri: Uri = Uri::from_file_path(&path).expect("uri");
    let root = dir.canonicalize().expect("root");
    let mut doc = Document {
        uri,
        path: path.clone(),
        text: text.clone(),
        version: 1,
    };
    println!(
        "document: {lines} lines, {} regulators, {:.0} KiB",
        i,
        text.len() as f64 / 1024.0
    );

    // One edit (a digit of a load in the middle of the file), then the full check.
    let middle = text.len() / 2;
    let at = middle + text[middle..].find("load").expect("a load");
    let mut flip = false;
    let recheck = time(15, || {
        flip = !flip;
        let digit = if flip { "9" } else { "1" };
        let value_at = at + doc.text[at..].find(char::is_numeric).expect("digit");
        doc.text.replace_range(value_at..value_at + 1, digit);
        doc.version += 1;
        Analysis::compute(&root, std::slice::from_ref(&doc)).expect("analysis")
    });
    let analysis = Analysis::compute(&root, std::slice::from_ref(&doc)).expect("analysis");
    let mut spare: Vec<Analysis> = (0..15)
        .map(|_| Analysis::compute(&root, std::slice::from_ref(&doc)).expect("analysis"))
        .collect();
    let dropping = time(15, || drop(spare.pop()));
    let file = analysis.file_id(&path).expect("file");
    let index = &analysis.checked.ws.file(file).line_index;
    let position = |needle: &str| -> Position {
        let offset = at + doc.text[at..].find(needle).expect("needle");
        Encoding::Utf16.position(index, offset)
    };
    let threshold = position("threshold");
    let hover = time(1_001, || {
        features::hover::hover(&analysis, file, threshold, Encoding::Utf16)
    });
    let inside = position("ratio");
    let completion = time(1_001, || {
        features::complete::complete(
            &analysis,
            file,
            Position::new(inside.line, 0),
            Encoding::Utf16,
        )
    });
    let value = position("threshold");
    let completion_names = time(1_001, || {
        features::complete::complete(
            &analysis,
            file,
            Position::new(value.line, value.character + 14),
            Encoding::Utf16,
        )
    });
    let tokens = time(21, || {
        features::tokens::tokens(&analysis, file, None, Encoding::Utf16)
    });
    let diagnostics = time(101, || {
        features::diagnostics::convert(&analysis, file, Encoding::Utf16, true)
    });
    println!(
        "full re-check after one edit:  {:>9.3} ms",
        recheck.as_secs_f64() * 1e3
    );
    println!(
        "dropping the old analysis:     {:>9.3} ms (off the latency path)",
        dropping.as_secs_f64() * 1e3
    );
    println!(
        "diagnostics to LSP:            {:>9.3} ms",
        diagnostics.as_secs_f64() * 1e3
    );
    println!(
        "hover on a limit threshold:    {:>9.3} ms",
        hover.as_secs_f64() * 1e3
    );
    println!(
        "completion, fields of a block: {:>9.3} ms",
        completion.as_secs_f64() * 1e3
    );
    println!(
        "completion, names after `=`:   {:>9.3} ms",
        completion_names.as_secs_f64() * 1e3
    );
    println!(
        "semantic tokens, whole file:   {:>9.3} ms",
        tokens.as_secs_f64() * 1e3
    );
    let _ = std::fs::remove_dir_all(&dir);
}
