//! Auto-retry in a sustained short, checked against the one-pole thermal
//! model driven by a periodic pulse (textbook first-order response): in
//! its periodic steady state the junction peaks at
//! T_A + P·θJA·(1 − e^(−t_on/τ)) / (1 − e^(−T/τ)) and averages
//! T_A + P·θJA·t_on/T.

mod common;

use guardband_check::Checked;

fn check(text: &str) -> Checked {
    common::check("hiccup-spec.guard", text)
}

fn spec(hiccup: &str) -> String {
    format!(
        "regulator r {{\n    supply = 4 V\n    output = 1.8 V ± 2 %\n    load = 0 mA .. 120 mA\n    ambient = 25 °C\n    junction_max = 110 °C\n    quiescent = 100 uA\n    theta_ja = 100 K/W\n    pin vout {{ off_chip = true  capacitance = 1 uF ± 20 % }}\n    pass {{ full_gate_current = 0.6 A .. 1.2 A  amplifier_drive = 30 uA ± 25 % }}\n    limit sensed {{ scheme = replica  ratio = 2000  reference = 125 uA  threshold = ratio * reference  clamp_drive = 80 uA .. 150 uA }}\n    {hiccup}\n}}\n"
    )
}

/// The peak of a one-pole response to a periodic pulse, by stepping the
/// differential equation dT/dt = (T_A + P·θ·on(t) − T)/τ through many
/// cycles (forward Euler, fine steps): an independent check of the closed form.
fn simulated_peak(rise: f64, on: f64, off: f64, tau: f64) -> f64 {
    let dt = tau / 20_000.0;
    let period = on + off;
    let mut t_rel = 0.0f64;
    let mut peak = 0.0f64;
    let cycles = (30.0 * tau / period).ceil().max(30.0) as usize;
    for c in 0..cycles {
        let mut t = 0.0;
        while t < period {
            let drive = if t < on { rise } else { 0.0 };
            t_rel += (drive - t_rel) * dt / tau;
            if c + 1 == cycles {
                peak = peak.max(t_rel);
            }
            t += dt;
        }
    }
    peak
}

// 4 V × 250 mA = 1 W into 100 K/W: a steady short reaches 125 °C, over the
// 110 °C limit. With 1 ms on, 9 ms off and τ = 1 ms the peak is
// 25 + 100 × 0.632149 = 88.22 °C, the average 25 + 100 × 0.1 = 35 °C (hand
// calculation); the short no longer overheats.
#[test]
fn a_hiccup_lowers_the_short_junction_to_the_hand_calculated_peak() {
    let c = check(&spec(
        "hiccup { on_time = 1 ms  off_time = 9 ms  time_constant = 1 ms }",
    ));
    let h = c.derived[0].short.as_ref().expect("short heat");
    let p = h.pulsed.as_ref().expect("pulsed");
    assert!(
        (h.junction - (273.15 + 88.2149)).abs() < 1e-3,
        "{}",
        h.junction
    );
    assert!((p.average_junction - (273.15 + 35.0)).abs() < 1e-9);
    assert!((p.steady_junction - (273.15 + 125.0)).abs() < 1e-9);
    assert!((p.duty - 0.1).abs() < 1e-12);
    let sim = simulated_peak(100.0, 1e-3, 9e-3, 1e-3);
    assert!((sim - 63.2149).abs() < 0.05, "simulated {sim}");
    assert!(
        !c.diagnostics.iter().any(|d| d.rule == "short-overheat"),
        "{:?}",
        c.diagnostics.iter().map(|d| &d.message).collect::<Vec<_>>()
    );
}

// Spread times: the peak takes the longest on time, the shortest off time
// and the shortest τ; no simulated corner peaks higher.
#[test]
fn no_corner_of_the_times_peaks_above_the_bound() {
    let c = check(&spec(
        "hiccup { on_time = 1 ms ± 20 %  off_time = 9 ms ± 20 %  time_constant = 1 ms .. 2 ms }",
    ));
    let h = c.derived[0].short.as_ref().expect("short heat");
    let bound = h.junction - h.ambient;
    for on in [0.8e-3, 1.2e-3] {
        for off in [7.2e-3, 10.8e-3] {
            for tau in [1e-3, 2e-3] {
                let sim = simulated_peak(100.0, on, off, tau);
                assert!(
                    sim <= bound + 0.05,
                    "{sim} above {bound} at {on} {off} {tau}"
                );
            }
        }
    }
}

// Without a time constant no credit is taken for the pauses.
#[test]
fn without_a_time_constant_the_peak_is_the_steady_junction() {
    let c = check(&spec("hiccup { on_time = 1 ms  off_time = 9 ms }"));
    let h = c.derived[0].short.as_ref().expect("short heat");
    assert!(
        (h.junction - (273.15 + 125.0)).abs() < 1e-9,
        "{}",
        h.junction
    );
    assert!(c.diagnostics.iter().any(|d| d.rule == "short-overheat"));
}

// A hiccup whose times cannot be read leaves the heat unknown.
#[test]
fn an_unread_hiccup_leaves_the_heat_unknown() {
    let c = check(&spec("hiccup { on_time = 1 ms }"));
    let u = c.derived[0].short.as_ref().expect_err("unknown");
    assert!(u.describe(&c.model).contains("off_time"), "{u:?}");
}

// The cycle budget under a hiccup: the swing is P·θJA·r at the longest
// times and the shortest τ; over 20 h the cycles are 72,000 s / (1 + 9) ms
// = 7.2 million; allowed at the swing ΔT: 10⁶ · (100 K / ΔT)^3 = 3.96 million (Coffin–Manson
// form, exponent exact), hand calculation from the closed-form swing.
#[test]
fn the_cycle_budget_counts_hiccup_cycles_at_their_swing() {
    let c = check(&spec(
        "hiccup { on_time = 1 ms  off_time = 9 ms  time_constant = 1 ms }\n    cycle_budget { cycles = 1000000  swing = 100 K  exponent = 3  short_time = 20 h }",
    ));
    let dmg = c.derived[0]
        .cycle_damage
        .as_ref()
        .expect("derived")
        .as_ref()
        .expect("stated");
    let m = &dmg.mechanisms[0];
    let swing = 100.0 * 0.632_071_244_944_358_8; // P·θJA · r, r from the module's unit test
    assert!((m.swing - swing).abs() < 1e-9, "{}", m.swing);
    assert!((m.used - 7.2e6).abs() < 1e-3, "{}", m.used);
    let allowed = 1e6 * (100.0 / swing).powi(3);
    assert!(
        (m.allowed - allowed).abs() < 1e-6 * allowed,
        "{}",
        m.allowed
    );
    assert!((dmg.damage - 7.2e6 / allowed).abs() < 1e-9 && dmg.damage > 1.0);
    assert!(
        c.diagnostics
            .iter()
            .any(|d| d.rule == "cycle-budget-exceeded")
    );
}
