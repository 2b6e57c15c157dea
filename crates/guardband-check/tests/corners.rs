//! Named operating corners: a regulator with corners is derived and checked
//! at each corner instead of over its whole box. The figures are held
//! against hand calculations of the same models the box uses: the linear
//! temperature coefficient v(T) = v₂₅ · (1 + tc·(T − 25 °C)) over the
//! corner's die temperatures, and T_J = T_A + P·θJA with P = Vin,max · I.

mod common;

use guardband_check::Checked;
use guardband_model::FieldValue;

fn check(text: &str) -> Checked {
    common::check("corner-spec.guard", text)
}

/// A regulator whose limit is set by a reference falling with temperature
/// (−0.3 %/K), with no thermal shutdown, so a hard short's junction is
/// what the limit lets through; `corners` is written inside it.
fn spec(theta: &str, corners: &str) -> String {
    format!(
        "regulator r {{
    supply = 3 V .. 3.6 V
    output = 1.8 V ± 2 %
    load = 0 mA .. 50 mA
    ambient = -40 °C .. 85 °C
    junction_max = 125 °C
    theta_ja = {theta}
    pin vout {{ role = output  capacitance = 1 uF ± 10 % }}
    pass {{ full_gate_current = 0.5 A .. 1 A  amplifier_drive = 30 uA ± 25 % }}
    limit sensed {{ scheme = replica  ratio = 1000  reference = 100 uA ± 5 %
        reference_tempco = -0.3 %/K  mismatch = ± 2 %  drain_error = ± 2 %
        threshold = ratio * reference  clamp_drive = 80 uA .. 150 uA }}
{corners}}}
"
    )
}

const CORNERS: &str = "    corner cold { ambient = -40 °C  process = slow }
    corner hot { ambient = 85 °C  process = fast }
";

fn messages(c: &Checked, rule: &str) -> Vec<String> {
    c.diagnostics
        .iter()
        .filter(|d| d.rule == rule)
        .map(|d| d.message.clone())
        .collect()
}

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-9 * b.abs().max(1e-12)
}

// The window's top is 1000 × 105 uA × 1.02 × 1.02 × (1 + 0.003·T_rise),
// largest at the coldest die: ×1.195 at −40 °C over the box and at the
// cold corner; ×0.82 at 85 °C, the hot corner's coldest die. Its low edge
// is at 125 °C (×0.7) at every corner: the die heats up to its limit
// (hand calculation of the linear model).
#[test]
fn a_tempco_is_read_over_each_corners_temperatures() {
    let c = check(&spec("100 K/W .. 120 K/W", CORNERS));
    let reg = c.model.regulators().next().unwrap().id;
    let corners = c.corners_of(reg);
    assert_eq!(corners.len(), 2);
    let k = 1000.0 * 1.02 * 1.02;
    let low = 95e-6 * 0.7 * 1000.0 * 0.98 * 0.98;
    let window = |d: &guardband_rules::derive::Derived| {
        let w = d.limits[0].window.as_ref().expect("window");
        (w.lo, w.hi)
    };
    let (name, cold) = corners[0];
    assert_eq!(name.key(), "cold");
    let (lo, hi) = window(cold);
    assert!(close(lo, low) && close(hi, 105e-6 * 1.195 * k), "{lo} {hi}");
    let (name, hot) = corners[1];
    assert_eq!(name.key(), "hot");
    let (lo, hi) = window(hot);
    assert!(close(lo, low) && close(hi, 105e-6 * 0.82 * k), "{lo} {hi}");
    let (lo, hi) = window(&c.derived[0]);
    assert!(close(lo, low) && close(hi, 105e-6 * 1.195 * k), "{lo} {hi}");
}

// Over the box the coldest die's current meets the hottest ambient:
// P = 3.6 V × 130.54 mA = 0.46996 W, T_J = 85 °C + 0.46996 W × 120 K/W
// = 141.4 °C, above 125 °C. At the corners the two never meet: cold,
// −40 °C + 56.4 K = 16.4 °C; hot, P = 3.6 V × 89.58 mA = 0.32248 W,
// 85 °C + 38.7 K = 123.7 °C (hand calculation, T_J = T_A + P·θJA).
#[test]
fn corners_pass_what_the_box_fails_when_the_extremes_never_meet() {
    let boxed = check(&spec("100 K/W .. 120 K/W", ""));
    assert_eq!(messages(&boxed, "short-overheat").len(), 1);
    let short = boxed.derived[0].short.as_ref().expect("short heat");
    assert!(close(
        short.junction - 273.15,
        85.0 + 3.6 * 105e-6 * 1.195 * 1040.4 * 120.0
    ));

    let c = check(&spec("100 K/W .. 120 K/W", CORNERS));
    assert!(
        messages(&c, "short-overheat").is_empty(),
        "{:?}",
        c.diagnostics
    );
    let reg = c.model.regulators().next().unwrap().id;
    let hot = c.corners_of(reg)[1].1.short.as_ref().expect("hot short");
    let expected = 85.0 + 3.6 * 105e-6 * 0.82 * 1040.4 * 120.0;
    assert!(close(hot.junction - 273.15, expected), "{}", hot.junction);
    assert!(expected < 125.0 && expected > 123.0);
    // The box keeps its own figure, for the rails and for what a corner
    // does not restate.
    assert!(c.derived[0].short.as_ref().unwrap().junction > hot.junction);
}

// With θJA up to 130 K/W the hot corner fails: 85 °C + 0.32248 W × 130
// K/W = 126.92 °C (1.92 K over); the cold one does not (−40 °C + 61.1 K). The finding
// names the corner (hand calculation).
#[test]
fn a_finding_names_the_corner_where_it_fails() {
    let c = check(&spec("100 K/W .. 130 K/W", CORNERS));
    let found = messages(&c, "short-overheat");
    assert_eq!(found.len(), 1, "{found:?}");
    assert!(found[0].starts_with("at corner `hot`: "), "{}", found[0]);
    assert!(
        found[0].contains("127 °C") && found[0].contains("1.92 K above"),
        "{}",
        found[0]
    );
    let d = c
        .diagnostics
        .iter()
        .find(|d| d.rule == "short-overheat")
        .unwrap();
    let labelled: Vec<&str> = d.labels.iter().map(|l| l.message.as_str()).collect();
    assert!(labelled.contains(&"fails at this corner"), "{labelled:?}");
    // The rules that fail alike at every corner say so once, unchanged.
    let unanalysed = messages(&c, "limit-loop-analysis");
    assert_eq!(unanalysed.len(), 1);
    assert!(!unanalysed[0].contains("corner"), "{}", unanalysed[0]);
}

// A corner's own conditions are points on purpose: no tolerance-missing for
// them; a value restated without a tolerance still gets one.
#[test]
fn a_corners_conditions_are_exact_on_purpose() {
    let corners = "    corner cold { ambient = -40 °C  supply = 3 V  process = slow }
    corner hot { ambient = 85 °C  supply = 3.6 V  process = fast  pass { amplifier_drive = 30 uA } }
";
    let c = check(&spec("100 K/W .. 120 K/W", corners));
    let found = messages(&c, "tolerance-missing");
    assert_eq!(found.len(), 1, "{found:?}");
    assert!(found[0].contains("amplifier_drive"), "{}", found[0]);
    assert!(found[0].starts_with("at corner `hot`"), "{}", found[0]);
}

#[test]
fn a_corner_restates_blocks_it_does_not_add_them() {
    let corners = "    corner cold { ambient = -40 °C  foldback { at_zero = 20 mA ± 10 % } }
    corner hot { ambient = 85 °C }
";
    let c = check(&spec("100 K/W .. 120 K/W", corners));
    let d = c
        .diagnostics
        .iter()
        .find(|d| d.message.contains("restates"))
        .unwrap_or_else(|| panic!("{:?}", c.diagnostics));
    assert_eq!(d.rule, "unknown-name");
    assert!(d.message.contains("foldback"), "{}", d.message);
}

// A corner that writes its supply as a voltage still draws from the
// regulator's supply item, and the rail counts the regulator once.
#[test]
fn a_corner_supply_keeps_the_supply_item() {
    let text = spec("100 K/W .. 120 K/W", CORNERS)
        .replace("supply = 3 V .. 3.6 V", "supply = cell")
        .replace(
            "corner cold { ambient = -40 °C",
            "corner cold { ambient = -40 °C  supply = 3 V",
        );
    let text =
        format!("supply cell {{ voltage = 3 V .. 3.6 V  resistance = 0.2 ohm ± 10 % }}\n{text}");
    let c = check(&text);
    let cell = c
        .model
        .items
        .iter()
        .map(|i| c.model.node(*i))
        .find(|n| n.key() == "cell")
        .unwrap()
        .id;
    let root = c.model.variants[0].root;
    match c
        .model
        .node(root)
        .field("supply")
        .and_then(|f| f.value.as_ref())
    {
        Some(FieldValue::Sourced { source, value }) => {
            assert_eq!(*source, cell);
            assert!(value.lo == 3.0 && value.hi == 3.0);
        }
        other => panic!("{other:?}"),
    }
    assert_eq!(c.rails.len(), 1);
    assert_eq!(c.rails[0].drawers.len(), 1);
}

// Every finding of the copies appears once: the model's diagnostics about
// the regulator's own text are not repeated per corner.
#[test]
fn the_copies_repeat_no_finding_of_the_written_text() {
    let text =
        spec("100 K/W .. 120 K/W", CORNERS).replace("load = 0 mA .. 50 mA", "load = 0 V .. 50 V");
    let c = check(&text);
    let mismatches = c
        .diagnostics
        .iter()
        .filter(|d| d.rule == "unit-mismatch")
        .count();
    assert_eq!(mismatches, 1, "{:?}", c.diagnostics);
}
