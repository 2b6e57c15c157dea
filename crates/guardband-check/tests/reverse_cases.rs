//! Current fed back through the pass device (a pin shorted to a supply, a
//! collapsed input), checked against hand calculations: the
//! reverse current through the body diode is Ohm's law around the loop,
//! I = (V_s − V_in − V_f) / R; the diode dissipates P = I·V_f; the junction
//! is T_J = T_A + P·θJA (textbook relations).

mod common;

use guardband_check::Checked;
use guardband_rules::derive::{ReverseCase, Unknown};

fn check(text: &str) -> Checked {
    common::check("supply-short-spec.guard", text)
}

fn spec(supply: &str, pass: &str, fault: &str) -> String {
    format!(
        "regulator r {{\n    supply = {supply}\n    output = 1.8 V ± 2 %\n    load = 0 mA .. 120 mA\n    ambient = 25 °C\n    theta_ja = 100 K/W\n    pin vout {{ off_chip = true  capacitance = 1 uF ± 20 % }}\n    pass {{ full_gate_current = 0.6 A .. 1.2 A  amplifier_drive = 30 uA ± 25 %  {pass} }}\n    limit sensed {{ scheme = replica  ratio = 2000  reference = 150 uA ± 10 %  threshold = ratio * reference  clamp_drive = 80 uA .. 150 uA }}\n    fault to_rail {{ pin = vout  event = short_to_supply  {fault} }}\n}}\n"
    )
}

fn short(checked: &Checked) -> Result<&ReverseCase, &Unknown> {
    checked.derived[0].reverse_cases[0].1.as_ref()
}

// (5 V − 3.3 V − 0.7 V) / 2 Ω = 500 mA; 500 mA × 0.7 V = 350 mW;
// 25 °C + 0.35 W × 100 K/W = 60 °C (hand calculation).
#[test]
fn an_exact_spec_gives_the_hand_calculated_reverse_current_and_heat() {
    let c = check(&spec(
        "3.3 V",
        "body_diode = 0.7 V",
        "voltage = 5 V  resistance = 2 ohm",
    ));
    let s = short(&c).expect("derived");
    let r = s.reverse.as_ref().expect("reverse");
    assert!((r.hi - 0.5).abs() < 1e-12, "{}", r.hi);
    assert!((r.lo.unwrap() - 0.5).abs() < 1e-12);
    assert!(
        s.forward.is_none(),
        "5 V is above regulation: the loop is off"
    );
    let h = s.heat.as_ref().expect("heat").as_ref().expect("it heats");
    assert!((h.power - 0.35).abs() < 1e-12, "{}", h.power);
    assert!(
        (h.junction - (273.15 + 60.0)).abs() < 1e-9,
        "{}",
        h.junction
    );
}

// Every corner of the forcing voltage, supply, drop and resistance, on a
// grid of 5 points each: none drives more current or heat than the bound,
// and the grid's worst reaches it (the current's bound is exact at a corner).
#[test]
fn no_sampled_corner_exceeds_the_bounds() {
    let c = check(&spec(
        "3.0 V .. 3.6 V",
        "body_diode = 0.5 V .. 0.8 V",
        "voltage = 5 V ± 10 %  resistance = 1 ohm .. 3 ohm",
    ));
    let s = short(&c).expect("derived");
    let r = s.reverse.as_ref().expect("reverse");
    let h = s.heat.as_ref().expect("heat").as_ref().expect("it heats");
    let grid = |lo: f64, hi: f64| (0..5).map(move |k| lo + (hi - lo) * k as f64 / 4.0);
    let (mut most_i, mut most_p) = (0.0f64, 0.0f64);
    for vs in grid(4.5, 5.5) {
        for vin in grid(3.0, 3.6) {
            for vf in grid(0.5, 0.8) {
                for res in grid(1.0, 3.0) {
                    let i = ((vs - vin - vf) / res).max(0.0);
                    assert!(i <= r.hi * (1.0 + 1e-12), "{i} above {}", r.hi);
                    assert!(i >= r.lo.unwrap() * (1.0 - 1e-12), "{i} below the least");
                    most_i = most_i.max(i);
                    most_p = most_p.max(i * vf);
                }
            }
        }
    }
    assert!((most_i - r.hi).abs() < 1e-12, "{most_i} vs {}", r.hi);
    // (5.5 − 3.0 − 0.8) / 1 = 1.7 A at the drop's top: 1.36 W; the bound
    // (A − V_f)·V_f / R is largest at V_f = A/2 = 1.25 V, outside the range,
    // so at 0.8 V: the same 1.36 W (hand calculation).
    assert!((h.power - 1.36).abs() < 1e-12, "{}", h.power);
    assert!(most_p <= h.power * (1.0 + 1e-12));
}

// Without a stated drop the current takes 0 V (the most that flows) and
// the diode's heat is not derived rather than taken as none.
#[test]
fn an_unstated_drop_gives_the_most_current_and_no_heat() {
    let c = check(&spec("3.3 V", "", "voltage = 5 V  resistance = 2 ohm"));
    let s = short(&c).expect("derived");
    let r = s.reverse.as_ref().expect("reverse");
    assert!(
        (r.hi - 0.85).abs() < 1e-12,
        "(5 − 3.3) / 2 = 0.85 A: {}",
        r.hi
    );
    assert_eq!(r.lo, None);
    assert!(r.why.contains("taken as 0 V"), "{}", r.why);
    let u = s.heat.as_ref().expect_err("no heat without a drop");
    assert!(u.describe(&c.model).contains("body_diode"), "{u:?}");
}

// A reverse current that can flow with no resistance stated is unknown,
// never zero; one that cannot flow needs no resistance.
#[test]
fn a_missing_resistance_leaves_the_reverse_current_unknown_only_when_it_flows() {
    let c = check(&spec("3.3 V", "body_diode = 0.7 V", "voltage = 5 V"));
    let u = short(&c).unwrap().reverse.as_ref().expect_err("unknown");
    assert!(u.describe(&c.model).contains("to_rail.resistance"), "{u:?}");
    let messages: Vec<&str> = c.diagnostics.iter().map(|d| d.message.as_str()).collect();
    assert!(
        messages
            .iter()
            .any(|m| m.contains("reverse current (`to_rail.resistance` is missing)")),
        "{messages:?}"
    );

    let c = check(&spec("3.3 V", "body_diode = 0.7 V", "voltage = 3.6 V"));
    let r = short(&c)
        .unwrap()
        .reverse
        .as_ref()
        .expect("no current flows");
    assert_eq!(r.hi, 0.0);
}

// A supply below regulation draws the regulator's own current: the top of
// the limit window, 2000 × 150 uA × 1.1 = 330 mA (hand calculation).
#[test]
fn a_supply_below_regulation_takes_the_limited_current() {
    let c = check(&spec(
        "3.3 V",
        "body_diode = 0.7 V",
        "voltage = 1.0 V ± 10 %  resistance = 1 ohm",
    ));
    let s = short(&c).expect("derived");
    let (i, _) = s.forward.as_ref().expect("sourced");
    assert!((i - 0.33).abs() < 1e-9, "{i}");
    assert_eq!(s.reverse.as_ref().unwrap().hi, 0.0);
    assert!((s.current_hi().unwrap() - 0.33).abs() < 1e-9);
}

// The input collapses to 0 V under a charged output: the diode's peak is
// (1.836 V − 0 V − 0.6 V) / 0.5 Ω = 2.472 A (output 1.8 V ± 2 %, hand
// calculation); at least (1.764 − 0.2 − 0.8) / 1 = 0.764 A.
#[test]
fn a_collapsed_input_draws_the_output_back_through_the_diode() {
    let text = spec("3.3 V", "body_diode = 0.6 V .. 0.8 V", "voltage = 0 V")
        .replace("short_to_supply", "reverse_current")
        .replace(
            "voltage = 0 V",
            "voltage = 0 V .. 0.2 V  resistance = 0.5 ohm .. 1 ohm",
        );
    let c = check(&text);
    let s = short(&c).expect("derived");
    assert!(s.forward.is_none());
    let r = s.reverse.as_ref().expect("reverse");
    assert!((r.hi - 2.472).abs() < 1e-9, "{}", r.hi);
    assert!((r.lo.unwrap() - 0.764).abs() < 1e-9, "{:?}", r.lo);
}
