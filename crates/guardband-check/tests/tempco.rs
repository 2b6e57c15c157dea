//! Temperature coefficients, checked against hand calculations of the
//! linear model v(T) = v₂₅ · (1 + tc·(T − 25 °C)) over the die's
//! temperatures (from the lowest ambient to the junction limit).

mod common;

use guardband_check::Checked;

fn check(text: &str) -> Checked {
    common::check("tempco-spec.guard", text)
}

fn spec(extra: &str, tempco: &str) -> String {
    format!(
        "regulator r {{\n    supply = 3 V .. 3.6 V\n    output = 1.8 V ± 2 %\n    load = 0 mA .. 50 mA\n{extra}    pin vout {{ role = output  capacitance = 1 uF ± 10 % }}\n    pass {{ full_gate_current = 0.5 A .. 1 A  amplifier_drive = 30 uA ± 25 % }}\n    limit sensed {{ scheme = replica  ratio = 1000  reference = 100 uA ± 5 %  {tempco}\n                   threshold = ratio * reference  clamp_drive = 80 uA .. 150 uA }}\n}}\n"
    )
}

fn window(c: &Checked) -> (f64, f64) {
    let w = c.derived[0].limits[0].window.as_ref().expect("window");
    (w.lo, w.hi)
}

// −40 °C .. 125 °C is −65 K .. +100 K from 25 °C: at 0.1 %/K the reference
// moves by ×0.935 .. ×1.10; with its ± 5 % the window is 1000 × 95 uA ×
// 0.935 = 88.825 mA to 1000 × 105 uA × 1.1 = 115.5 mA (hand calculation).
#[test]
fn a_tempco_widens_the_window_over_the_die_temperatures() {
    let c = check(&spec(
        "    ambient = -40 °C .. 85 °C\n    junction_max = 125 °C\n",
        "reference_tempco = 0.1 %/K",
    ));
    let (lo, hi) = window(&c);
    assert!((lo - 0.088_825).abs() < 1e-12, "{lo}");
    assert!((hi - 0.1155).abs() < 1e-12, "{hi}");
    let base = check(&spec(
        "    ambient = -40 °C .. 85 °C\n    junction_max = 125 °C\n",
        "",
    ));
    let (lo, hi) = window(&base);
    assert!(
        (lo - 0.095).abs() < 1e-15 && (hi - 0.105).abs() < 1e-15,
        "{lo} {hi}"
    );
}

// A negative coefficient swaps the ends: ×1.0325 at −40 °C, ×0.95 at
// 125 °C for −500 ppm/K (hand calculation).
#[test]
fn a_negative_tempco_is_largest_when_cold() {
    let c = check(&spec(
        "    ambient = -40 °C .. 85 °C\n    junction_max = 125 °C\n",
        "reference_tempco = -500 ppm/K",
    ));
    let (lo, hi) = window(&c);
    assert!((lo - 0.095 * 0.95).abs() < 1e-12, "{lo}");
    assert!((hi - 0.105 * 1.0325).abs() < 1e-12, "{hi}");
}

// Without an ambient the temperatures are unknown: the value is not
// derived (never taken at 25 °C) and the finding says why.
#[test]
fn a_tempco_without_an_ambient_leaves_the_value_unknown() {
    let c = check(&spec("", "reference_tempco = 0.1 %/K"));
    assert!(c.derived[0].limits[0].window.is_err());
    assert!(
        c.diagnostics.iter().any(|d| d
            .message
            .contains("`reference_tempco` needs the regulator's `ambient`")),
        "{:?}",
        c.diagnostics.iter().map(|d| &d.message).collect::<Vec<_>>()
    );
}
