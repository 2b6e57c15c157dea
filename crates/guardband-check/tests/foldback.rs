//! The foldback line, checked against hand calculations of a straight line
//! from its current at 0 V to its level at the knee (I = z + (t − z)·V/k
//! below the knee, t above), over every corner of the three.

mod common;

use guardband_check::Checked;

fn check(text: &str) -> Checked {
    common::check("foldback-spec.guard", text)
}

fn spec(foldback: &str) -> String {
    format!(
        "regulator r {{\n    supply = 3.3 V\n    output = 2.5 V ± 2 %\n    load = 0 mA .. 60 mA\n    pin vout {{ off_chip = true  capacitance = 1 uF ± 20 % }}\n    pass {{ full_gate_current = 0.6 A .. 1.2 A  amplifier_drive = 30 uA ± 25 % }}\n    limit sensed {{ scheme = replica  ratio = 1000  reference = 100 uA  threshold = ratio * reference  clamp_drive = 80 uA .. 150 uA }}\n    foldback {{ {foldback} }}\n}}\n"
    )
}

fn upper_at(c: &Checked, v: f64) -> f64 {
    c.derived[0]
        .currents
        .as_ref()
        .unwrap()
        .upper_at(v)
        .unwrap()
        .0
}

fn lower_at(c: &Checked, v: f64) -> f64 {
    c.derived[0].currents.as_ref().unwrap().lower_at(v).unwrap()
}

// More current at 0 V than at the knee (a line that falls): at 0.5 V with
// the knee anywhere in 1 .. 2 V the current is 200 − 100·0.5/k mA, most at
// k = 2 V: 175 mA; least at k = 1 V: 150 mA (hand calculation).
#[test]
fn a_falling_line_is_bounded_with_the_knee_at_either_end() {
    let c = check(&spec("at_zero = 200 mA  knee = 1 V .. 2 V"));
    assert!(
        (upper_at(&c, 0.5) - 0.175).abs() < 1e-12,
        "{}",
        upper_at(&c, 0.5)
    );
    assert!(
        (lower_at(&c, 0.5) - 0.150).abs() < 1e-12,
        "{}",
        lower_at(&c, 0.5)
    );
}

// A rising line: 40 mA at 0 V to the 100 mA limit; at 0.5 V with the knee
// in 1 .. 2 V: 40 + 60·0.5/k mA, most at k = 1 V: 70 mA, least at 2 V:
// 55 mA (hand calculation).
#[test]
fn a_rising_line_is_bounded_with_the_knee_at_either_end() {
    let c = check(&spec("at_zero = 40 mA  knee = 1 V .. 2 V"));
    assert!(
        (upper_at(&c, 0.5) - 0.070).abs() < 1e-12,
        "{}",
        upper_at(&c, 0.5)
    );
    assert!(
        (lower_at(&c, 0.5) - 0.055).abs() < 1e-12,
        "{}",
        lower_at(&c, 0.5)
    );
}

// Its own level: 30 mA at 0 V to 80 mA at the output (2.45 .. 2.55 V), under
// the 100 mA limit. At 1.225 V the line is 30 + 50·1.225/2.45 = 55 mA at
// most; above the knee the foldback's 80 mA caps, not the limit.
#[test]
fn a_foldback_with_its_own_level_caps_beside_the_limit() {
    let c = check(&spec("at_zero = 30 mA  at_regulation = 80 mA"));
    assert!(
        (upper_at(&c, 1.225) - 0.055).abs() < 1e-12,
        "{}",
        upper_at(&c, 1.225)
    );
    assert!(
        (upper_at(&c, 2.55) - 0.080).abs() < 1e-12,
        "{}",
        upper_at(&c, 2.55)
    );
    let worst = c.derived[0].worst.as_ref().unwrap();
    assert!((worst.value - 0.080).abs() < 1e-12);
    assert_eq!(worst.cause.what, "the foldback line");
}

// A level at regulation below rated load plus margin: 60 mA × 1.2 = 72 mA
// against 50 mA (default margin 20 %, common practice, no source).
#[test]
fn a_foldback_level_below_rated_load_is_flagged() {
    let c = check(&spec(
        "at_zero = 30 mA ± 10 %  at_regulation = 50 mA ± 10 %",
    ));
    let m: Vec<&str> = c
        .diagnostics
        .iter()
        .filter(|d| d.rule == "limit-within-load")
        .map(|d| d.message.as_str())
        .collect();
    assert_eq!(m.len(), 1, "{m:?}");
    assert!(m[0].contains("as little as 45 mA"), "{}", m[0]);
    assert!(m[0].contains("= 72 mA"), "{}", m[0]);
}
