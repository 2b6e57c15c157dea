//! Thermal-shutdown cycling in a sustained short, checked against the
//! one-pole thermal model (textbook first-order response,
//! T(t) = T_f + (T_0 − T_f)·e^(−t/τ)): heating from trip − h to trip towards
//! T_A + Q takes τ·ln((Q − x + h)/(Q − x)), cooling back takes
//! τ·ln(x/(x − h)), with x = trip − T_A.

mod common;

use guardband_check::Checked;

/// Checks one spec text as a one-file workspace held in memory.
fn check(text: &str) -> Checked {
    common::check("cycling-spec.guard", text)
}

fn spec(supply: &str, ambient: &str, theta: &str, reference: &str, shutdown: &str) -> String {
    format!(
        "regulator r {{\n    supply = {supply}\n    output = 1.8 V ± 2 %\n    load = 0 mA .. 120 mA\n    ambient = {ambient}\n    junction_max = 175 °C\n    quiescent = 100 uA\n    theta_ja = {theta}\n    pin vout {{ off_chip = true  capacitance = 1 uF ± 20 % }}\n    pass {{ full_gate_current = 0.6 A .. 1.2 A  amplifier_drive = 30 uA ± 25 % }}\n    limit sensed {{ scheme = replica  ratio = 2000  reference = {reference}  threshold = ratio * reference  clamp_drive = 80 uA .. 150 uA }}\n    thermal_shutdown {{ {shutdown} }}\n}}\n"
    )
}

fn period(tau: f64, q: f64, x: f64, h: f64) -> f64 {
    tau * ((q - x + h) / (q - x)).ln() + tau * (x / (x - h)).ln()
}

// 4 V × 500 mA = 2 W into 100 K/W: Q = 200 K; trip 150 °C over 25 °C: x =
// 125 K; h = 20 K, τ = 10 ms: 2.364 ms heating + 1.7435 ms cooling =
// 4.107 ms (hand calculation).
#[test]
fn an_exact_spec_cycles_with_the_hand_calculated_period() {
    let text = spec(
        "4 V",
        "25 °C",
        "100 K/W",
        "250 uA",
        "threshold = 150 °C  hysteresis = 20 K  time_constant = 10 ms",
    );
    let checked = check(&text);
    let c = checked.derived[0]
        .cycling
        .as_ref()
        .expect("derived")
        .as_ref()
        .expect("it cycles");
    assert_eq!(c.swing, (20.0, 20.0));
    let p = c.period_min.expect("period");
    assert!((p - 4.107e-3).abs() < 1e-6, "{p}");
    assert!((period(10e-3, 200.0, 125.0, 20.0) - p).abs() < 1e-12);
}

// With every input spread, no corner of the model cycles faster than the
// bound: sample the supply, ambient, θJA, reference, trip point, hysteresis
// and τ over their ranges (a grid of 5 points each on the ones that matter).
#[test]
fn no_sampled_corner_cycles_faster_than_the_bound() {
    let text = spec(
        "3.6 V .. 4.4 V",
        "-20 °C .. 70 °C",
        "100 K/W ± 15 %",
        "250 uA ± 10 %",
        "threshold = 150 °C ± 8 K  hysteresis = 20 K ± 5 K  time_constant = 10 ms ± 30 %",
    );
    let checked = check(&text);
    let bound = checked.derived[0]
        .cycling
        .as_ref()
        .expect("derived")
        .as_ref()
        .expect("it cycles")
        .period_min
        .expect("period");
    let grid = |lo: f64, hi: f64| (0..5).map(move |i| lo + (hi - lo) * i as f64 / 4.0);
    let mut fastest = f64::INFINITY;
    for vin in grid(3.6, 4.4) {
        for ta in grid(-20.0, 70.0) {
            for theta in grid(85.0, 115.0) {
                for i in grid(0.45, 0.55) {
                    for trip in grid(142.0, 158.0) {
                        for h in grid(15.0, 25.0) {
                            let (q, x) = (vin * i * theta, trip - ta);
                            if q <= x || x <= h {
                                continue;
                            }
                            fastest = fastest.min(period(7e-3, q, x, h));
                        }
                    }
                }
            }
        }
    }
    assert!(fastest.is_finite());
    assert!(
        bound <= fastest * (1.0 + 1e-9),
        "bound {bound} above {fastest}"
    );
    // And not uselessly loose: within a factor of two of the fastest sampled.
    assert!(bound >= fastest * 0.5, "bound {bound} far below {fastest}");
}

// A cycle budget beside a thermal shutdown with no hysteresis: the cycles a
// short makes cannot be counted, so the budget is unknown and named, never
// passed as spent by nothing (the reviewer's principle).
#[test]
fn a_budget_without_the_shutdown_hysteresis_is_unknown_not_passed() {
    let text = spec(
        "4 V",
        "25 °C",
        "100 K/W",
        "250 uA",
        "threshold = 150 °C  time_constant = 10 ms",
    )
    .replace(
        "    thermal_shutdown",
        "    cycle_budget { cycles = 10000  swing = 100 K  exponent = 3 .. 5  short_time = 100 h }\n    thermal_shutdown",
    );
    let checked = check(&text);
    assert!(checked.derived[0].cycle_damage.is_err());
    let named: Vec<&str> = checked
        .diagnostics
        .iter()
        .filter(|f| f.rule == "figure-not-derived")
        .map(|f| f.message.as_str())
        .collect();
    assert!(named.iter().any(|m| m.contains("hysteresis")), "{named:?}");
}
