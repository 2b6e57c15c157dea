//! `guardband report`: the summary and charts are written, the SVG is XML
//! that carries its values and labels, the numbers equal the hover's, and
//! the bars of a spec built to cross are in the right order.

mod common;
mod lsp_client;

use common::{fixture, guardband, root, temp_dir};
use lsp_client::{Client, uri};
use serde_json::json;
use std::path::Path;

/// The words of every `<text>` of an SVG document, trimmed.
fn texts_of<'a>(doc: &'a roxmltree::Document) -> Vec<&'a str> {
    doc.descendants()
        .filter(|n| n.has_tag_name("text"))
        .filter_map(|n| n.text())
        .map(str::trim)
        .collect()
}

fn report(args: &[&str], out: &Path) -> String {
    let mut all = vec!["report"];
    all.extend_from_slice(args);
    all.extend_from_slice(&["--out", out.to_str().expect("utf-8")]);
    let run = guardband(&root(), &all);
    assert_eq!(run.code, 0, "{}", run.stderr);
    std::fs::read_to_string(out.join("summary.md")).expect("summary")
}

#[test]
fn the_examples_report_has_a_summary_and_a_parsable_chart_per_regulator() {
    let out = temp_dir("report-examples");
    let summary = report(&["examples"], &out);
    assert!(summary.contains("does not replace sign-off"), "the caution");
    // Every waiver is listed with its reason for the sign-off.
    assert!(
        summary.contains(
            "- flawed/lamp_rail.guard at line 14: waives `tolerance-missing`: board-level figure from the module maker's thermal report"
        ),
        "{summary}"
    );
    assert!(
        summary.contains("21 errors, 6 warnings, 3 infos"),
        "{summary}"
    );
    for regulator in [
        "sensor_rail",
        "radio_rail",
        "aux_rail",
        "lamp_rail",
        "wake_rail",
        "flash_rail",
        "heater_rail",
    ] {
        assert!(
            summary.contains(&format!("## Regulator `{regulator}`")),
            "{regulator}"
        );
        assert!(
            summary.contains(&format!("]({regulator}.svg)")),
            "{regulator} chart linked"
        );
        let svg = std::fs::read_to_string(out.join(format!("{regulator}.svg"))).expect("chart");
        let doc = roxmltree::Document::parse(&svg).unwrap_or_else(|e| panic!("{regulator}: {e}"));
        let texts = texts_of(&doc);
        assert!(texts.contains(&"rated load"), "{texts:?}");
        assert!(
            texts.iter().any(|t| t.starts_with("current (")),
            "axis labelled with its unit"
        );
        assert!(
            doc.descendants()
                .any(|n| n.attribute("data-role") == Some("rated-load"))
        );
    }
    // The fault-coverage matrix and the open findings of a flawed spec.
    let aux = summary
        .split("## Regulator `aux_rail`")
        .nth(1)
        .expect("aux_rail section");
    let aux = aux.split("## Regulator").next().unwrap_or(aux);
    assert!(
        aux.contains("| pin `vout` (off-chip) | ✓ short_to_ground |"),
        "{aux}"
    );
    assert!(aux.contains("**error** `conductor-under-rated`"), "{aux}");
    assert!(
        aux.contains(
            "| conductor `pass_source` rating | ✗ 37.7 mA against the worst current 208 mA (short by 81.9 %) |"
        ),
        "{aux}"
    );
    // Failing comparisons are marked in words, not by colour alone.
    assert!(
        aux.contains(
            "| `sensed` limit window, worst case | ✗ 118 mA .. 208 mA (cuts into margin) |"
        ),
        "{aux}"
    );
    let aux_svg = std::fs::read_to_string(out.join("aux_rail.svg")).expect("svg");
    assert!(
        aux_svg.contains(r#"data-fails="below worst current""#),
        "{aux_svg}"
    );
    assert!(
        aux_svg.contains("✗ 37.7 mA (below worst current)"),
        "{aux_svg}"
    );
    // The undervoltage-triggered scheme's trip window is drawn; its fixed
    // current may sit below the load and is not marked.
    let radio_svg = std::fs::read_to_string(out.join("radio_rail.svg")).expect("svg");
    assert!(
        radio_svg.contains(r#"data-role="trip-current""#),
        "{radio_svg}"
    );
    assert!(
        radio_svg.contains(r#"data-role="fixed-current""#),
        "{radio_svg}"
    );
    assert!(!radio_svg.contains("data-fails"), "{radio_svg}");
    let sensor = summary
        .split("## Regulator `sensor_rail`")
        .nth(1)
        .expect("sensor_rail section");
    let sensor = sensor.split("## Regulator").next().unwrap_or(sensor);
    assert!(sensor.contains("### Open findings\n\nNone."), "{sensor}");
}

#[test]
fn the_report_shows_the_numbers_the_hover_shows() {
    let out = temp_dir("report-hover");
    let summary = report(&["examples"], &out);
    let sensor = summary
        .split("## Regulator `sensor_rail`")
        .nth(1)
        .expect("section");
    let row = |name: &str| -> String {
        sensor
            .lines()
            .find(|l| l.starts_with(&format!("| {name} |")))
            .unwrap_or_else(|| panic!("row {name}"))
            .split('|')
            .nth(2)
            .unwrap_or("")
            .trim()
            .to_string()
    };
    let worst_case = row("`sensed` limit window, worst case");
    let statistical = row("`sensed` limit window, statistical (3 σ)");
    let rating = row("conductor `pass_source` rating");

    let dir = root().join("examples");
    let path = dir.join("sensor_rail.guard");
    let text = std::fs::read_to_string(&path).expect("read");
    let u = uri(&path);
    let mut client = Client::start(&dir);
    client.initialize(&dir, json!({}), json!({ "debounceMs": 20 }));
    client.open(&u, &text, 1);
    let at = |needle: &str, shift: u32| {
        let offset = text.find(needle).expect("needle");
        let line = text[..offset].matches('\n').count();
        let start = text[..offset].rfind('\n').map(|i| i + 1).unwrap_or(0);
        let col: usize = text[start..offset].chars().map(char::len_utf16).sum();
        json!({ "line": line, "character": col as u32 + shift })
    };
    let hover = |client: &mut Client, position| -> String {
        let r = client.request(
            "textDocument/hover",
            json!({ "textDocument": { "uri": u }, "position": position }),
        );
        r["contents"]["value"].as_str().unwrap_or("").to_string()
    };
    let limit = hover(&mut client, at("limit sensed", 7));
    assert!(
        limit.contains(&format!("worst case: {worst_case}")),
        "{worst_case} vs\n{limit}"
    );
    assert!(
        limit.contains(&format!("statistical (3 σ): {statistical}")),
        "{statistical} vs\n{limit}"
    );
    let conductor = hover(&mut client, at("conductor pass_source", 12));
    assert!(
        conductor.contains(&format!("rating: {rating}")),
        "{rating} vs\n{conductor}"
    );
    assert_eq!(client.stop(), Some(0));
}

#[test]
fn a_spec_built_to_cross_draws_its_bars_in_order_and_where_they_cross() {
    let out = temp_dir("report-crossing");
    let summary = report(
        &[fixture("report/crossing.guard").to_str().expect("utf-8")],
        &out,
    );
    assert!(summary.contains("conductor-under-rated"));
    let svg = std::fs::read_to_string(out.join("crossing_rail.svg")).expect("chart");
    let doc = roxmltree::Document::parse(&svg).expect("XML");
    let bars: Vec<(String, f64, f64, f64)> = doc
        .descendants()
        .filter(|n| n.has_tag_name("rect") && n.attribute("data-role").is_some())
        .map(|n| {
            let num = |a: &str| {
                n.attribute(a)
                    .and_then(|v| v.parse::<f64>().ok())
                    .unwrap_or(f64::NAN)
            };
            (
                n.attribute("data-role").unwrap_or("").to_string(),
                num("y"),
                num("x") + num("width"),
                num("data-hi-amperes"),
            )
        })
        .collect();
    let roles: Vec<&str> = bars.iter().map(|b| b.0.as_str()).collect();
    assert_eq!(
        roles,
        [
            "rated-load",
            "margin",
            "limit-worst-case",
            "limit-statistical",
            "full-gate-current",
            "conductor-rating"
        ],
        "rows top to bottom"
    );
    assert!(
        bars.windows(2).all(|w| w[0].1 < w[1].1),
        "each row below the last"
    );
    let right = |role: &str| bars.iter().find(|b| b.0 == role).expect(role).2;
    // 100 mA load < 120 mA required < 150 mA rating < 208 mA window top < 0.9 A surge.
    assert!(right("rated-load") < right("margin"));
    assert!(right("margin") < right("conductor-rating"));
    assert!(
        right("conductor-rating") < right("limit-worst-case"),
        "the metal ends before the window does"
    );
    assert!(right("limit-worst-case") < right("full-gate-current"));
    let worst = doc
        .descendants()
        .find(|n| n.attribute("data-role") == Some("worst-current"))
        .expect("worst-current line");
    let amperes: f64 = worst
        .attribute("data-amperes")
        .and_then(|v| v.parse().ok())
        .expect("amperes");
    assert!((amperes - 0.208).abs() < 0.001, "{amperes}");
    let x: f64 = worst
        .attribute("d")
        .and_then(|d| d.split_whitespace().nth(1))
        .and_then(|v| v.parse().ok())
        .expect("x");
    assert!(
        x > right("conductor-rating"),
        "the worst current crosses the rating bar"
    );
    assert!(
        (x - right("limit-worst-case")).abs() < 0.5,
        "and sits at the window's top"
    );
}

/// A report of a spec with a syntax error (`3 V +` runs on into the next
/// line, so the error is at its `=`) is written, but the command
/// fails and names the first error, so CI does not publish it as clean.
#[test]
fn a_report_on_a_syntax_error_fails_and_says_where() {
    let dir = temp_dir("report-syntax");
    std::fs::write(
        dir.join("broken.guard"),
        "regulator r {\n    supply = 3 V +\n    output = 1.8 V ± 2 %\n}\n",
    )
    .unwrap();
    let run = guardband(&dir, &["report", "--out", "out", "broken.guard"]);
    assert_eq!(run.code, 1, "{}", run.stderr);
    assert!(
        run.stderr
            .contains("1 syntax error (the first in broken.guard at line 3: unexpected `=`"),
        "{}",
        run.stderr
    );
    assert!(dir.join("out/summary.md").exists());
}

/// An unrated conductor is listed with the reason it has no rating.
#[test]
fn an_unrated_conductor_is_listed_with_its_reason() {
    let out = temp_dir("report-unrated");
    let summary = report(
        &["tests/fixtures/rules/conductor-under-rated/fail_gold_wire.guard"],
        &out,
    );
    assert!(
        summary.contains(
            "| conductor `bond` rating | not derived: Preece's formula has no constant for gold"
        ),
        "{summary}"
    );
}

// The power tree's chart: each shared supply's source range, its droop with
// every regulator starting together and its lockout on one voltage axis.
// The IR pack's droop reaches its lockout (the deliberate `rail-droop` in
// `examples/flawed/ir_pack.guard`) and is marked in words; the camera
// cell's is not.
#[test]
fn the_power_tree_chart_draws_each_supply_and_marks_a_droop_into_the_lockout() {
    let out = temp_dir("report-power-tree");
    let summary = report(&["examples"], &out);
    assert!(summary.contains("](power-tree.svg)"), "{summary}");
    let svg = std::fs::read_to_string(out.join("power-tree.svg")).expect("chart");
    let doc = roxmltree::Document::parse(&svg).expect("xml");
    let texts = texts_of(&doc);
    for t in ["supply ir_pack", "supply tern_cell", "voltage (V)"] {
        assert!(texts.contains(&t), "{t}: {texts:?}");
    }
    let droops: Vec<_> = doc
        .descendants()
        .filter(|n| n.attribute("data-role") == Some("droop"))
        .collect();
    assert_eq!(droops.len(), 2);
    let fails: Vec<Option<&str>> = droops.iter().map(|n| n.attribute("data-fails")).collect();
    assert_eq!(fails, [Some("reaches the lockout"), None]);
    // The bar runs from the lowest the rail falls to up to the source's
    // lowest voltage (3.0 V for the pack), and its low end is below the
    // lockout's top edge (2.8 V + 2 % = 2.856 V).
    let lo: f64 = droops[0]
        .attribute("data-lo-volts")
        .and_then(|v| v.parse().ok())
        .expect("lo");
    let hi: f64 = droops[0]
        .attribute("data-hi-volts")
        .and_then(|v| v.parse().ok())
        .expect("hi");
    assert!((hi - 3.0).abs() < 1e-12, "{hi}");
    assert!(lo < 2.856, "{lo}");
    assert!(
        texts.iter().any(|t| t.starts_with("✗ droops to ")),
        "{texts:?}"
    );
}

// A droop below a drawing regulator's `supply_min` (the `rail-droop`
// dropout fixture: 2.09 V against core's 2.3 V top edge) marks both the
// droop and that regulator's row.
#[test]
fn the_power_tree_chart_marks_a_regulator_the_droop_takes_out_of_regulation() {
    let out = temp_dir("report-power-tree-dropout");
    let fixture = fixture("rules/rail-droop/fail_dropout.guard");
    report(&[fixture.to_str().expect("utf-8")], &out);
    let svg = std::fs::read_to_string(out.join("power-tree.svg")).expect("chart");
    let doc = roxmltree::Document::parse(&svg).expect("xml");
    let fails = |role: &str| -> Vec<Option<String>> {
        doc.descendants()
            .filter(|n| n.attribute("data-role") == Some(role))
            .map(|n| n.attribute("data-fails").map(str::to_string))
            .collect()
    };
    assert_eq!(
        fails("droop"),
        [Some("below a regulator's supply_min".to_string())]
    );
    assert_eq!(
        fails("supply-min"),
        [Some("the droop falls below it".to_string())]
    );
    assert!(
        svg.contains("✗ 2.2 V .. 2.3 V (the droop falls below it)"),
        "{svg}"
    );
}

/// With results files the summary has the evidence matrix: each case at
/// each corner planned, measured and passing, or failing (a measurement a
/// `measured-*` finding points at), with the counts.
#[test]
fn the_evidence_matrix_says_planned_measured_and_passing_per_case_and_corner() {
    let dir = temp_dir("report-evidence");
    let fixture_dir = fixture("rules/measured-outside-window");
    std::fs::copy(fixture_dir.join("fail.guard"), dir.join("r.guard")).expect("copy");
    // The fixture's results with the analysis left out at `high`.
    let csv = std::fs::read_to_string(fixture_dir.join("fail.results.csv"))
        .expect("read")
        .lines()
        .filter(|l| !l.starts_with("r.loop_check,high"))
        .collect::<Vec<_>>()
        .join("\n");
    std::fs::write(dir.join("bench.csv"), csv).expect("write");
    let out = dir.join("out");
    let run = guardband(
        &dir,
        &[
            "report",
            "r.guard",
            "--out",
            "out",
            "--evidence",
            "bench.csv",
        ],
    );
    assert_eq!(run.code, 0, "{}", run.stderr);
    let md = std::fs::read_to_string(out.join("summary.md")).expect("summary");
    assert!(
        md.contains("### Evidence (planned / measured / passing)"),
        "{md}"
    );
    assert!(
        md.contains("| fault `short` | ✓ measured, passing (1) | ✗ measured, failing (1 of 1) |"),
        "{md}"
    );
    assert!(
        md.contains("| analysis `loop_check` | ✓ measured, passing (1) | planned, not measured |"),
        "{md}"
    );
    assert!(
        md.contains("6 case × corner cells: 4 measured and passing, 1 failing, 1 not measured."),
        "{md}"
    );
}
