//! A shared supply's droop, checked against hand calculations with Ohm's
//! law and V = L·di/dt: ΔV = ΣI·R + L·ΣI/t_rise.

mod common;

use guardband_check::Checked;
use guardband_rules::derive::rail::rails;

fn check(text: &str) -> Checked {
    common::check("rail-spec.guard", text)
}

fn regulator(name: &str, supply: &str, full_gate: &str) -> String {
    format!(
        "regulator {name} {{\n    supply = {supply}\n    output = 1.8 V ± 2 %\n    load = 0 mA .. 100 mA\n    pin vout {{ role = output  capacitance = 10 uF ± 20 % }}\n    pass {{ full_gate_current = {full_gate}  amplifier_drive = 30 uA ± 25 % }}\n    startup {{ load = 1 mA }}\n}}\n"
    )
}

const CELL: &str = "supply cell {\n    voltage = 3.0 V .. 4.2 V\n    resistance = 0.5 ohm ± 20 %\n    inductance = 1 uH\n    rise_time = 20 us\n}\n";

// Surges 0.9 A + 0.5 A = 1.4 A (the full-gate tops, nothing limits them);
// 1.4 A × 0.6 Ω = 0.84 V, 1 uH × 1.4 A / 20 us = 0.07 V: from 3 V to
// 2.09 V (hand calculation). A regulator on its own voltage draws nothing
// from the cell.
#[test]
fn the_droop_is_the_sum_of_the_surges_through_r_and_l() {
    let text = format!(
        "{CELL}{}{}{}",
        regulator("a", "cell", "0.3 A .. 0.9 A"),
        regulator("b", "cell", "0.3 A .. 0.5 A"),
        regulator("c", "3.3 V", "0.3 A .. 2 A"),
    );
    let c = check(&text);
    let rails = rails(&c.model, &c.derived);
    assert_eq!(rails.len(), 1);
    assert_eq!(rails[0].drawers.len(), 2);
    let d = rails[0].droop.as_ref().expect("droop");
    assert!((d.current - 1.4).abs() < 1e-12, "{}", d.current);
    assert!((d.resistive - 0.84).abs() < 1e-12, "{}", d.resistive);
    assert!((d.inductive - 0.07).abs() < 1e-12, "{}", d.inductive);
    assert!((d.lowest - 2.09).abs() < 1e-12, "{}", d.lowest);
    // `supply = cell` gives each regulator the cell's voltage range.
    let a = c.model.regulators().next().unwrap();
    let v = a.quantity("supply").unwrap();
    assert_eq!((v.lo, v.hi), (3.0, 4.2));
}

// An unstated inductance is not taken as zero: the droop is unknown and
// the finding names what is missing.
#[test]
fn a_missing_inductance_leaves_the_droop_unknown() {
    let text = format!(
        "{}{}",
        CELL.replace("    inductance = 1 uH\n", ""),
        regulator("a", "cell", "0.3 A .. 0.9 A")
    );
    let c = check(&text);
    let rails = rails(&c.model, &c.derived);
    let u = rails[0].droop.as_ref().expect_err("unknown");
    assert!(u.describe(&c.model).contains("cell.inductance"), "{u:?}");
    assert!(
        c.diagnostics
            .iter()
            .any(|d| d.rule == "figure-not-derived" && d.message.contains("rail droop")),
        "{:?}",
        c.diagnostics.iter().map(|d| &d.message).collect::<Vec<_>>()
    );
}
