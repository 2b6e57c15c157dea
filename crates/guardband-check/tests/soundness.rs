//! Soundness of the derived bounds: random specs of both limit schemes are
//! written out, checked, and then every stated tolerance is drawn at random
//! points inside its range (and at its corners); the physical current,
//! dissipation, junction temperature (in a fault and at rated load) and
//! startup time are computed by the
//! direct formulas below (textbook relations: I = min of the caps in force,
//! P = (Vin − V)·I, T_J = T_A + P·θJA, dV/dt = min(slew, (I − load)/C)),
//! and each must lie inside the bounds the checker reports. A second
//! property: a spec the checker calls clean has no sampled point that breaks
//! a rule's own inequality. A third: the figures do not depend on the order
//! of the blocks.

mod common;

use guardband_check::Checked;
use proptest::prelude::*;
use proptest::test_runner::{Config, RngSeed};

/// A value stated as `nom ± tol` (tol a fraction).
#[derive(Debug, Clone, Copy)]
struct Tol {
    nom: f64,
    tol: f64,
}

impl Tol {
    fn at(self, u: f64) -> f64 {
        self.nom * (1.0 + u * self.tol)
    }
}

/// A value stated as `lo .. hi`.
#[derive(Debug, Clone, Copy)]
struct Range {
    lo: f64,
    hi: f64,
}

impl Range {
    fn at(self, u: f64) -> f64 {
        self.lo + (u + 1.0) / 2.0 * (self.hi - self.lo)
    }
}

#[derive(Debug, Clone)]
enum Scheme {
    Replica {
        ratio: f64,
        reference: Tol, // A
        mismatch: f64,
        drain: f64,
        /// A at 0 V, the foldback's own current at regulation (A) and its
        /// knee (V) when stated.
        foldback: Option<(Tol, Option<Tol>, Option<Range>)>,
    },
    Undervoltage {
        threshold: Tol, // V
        fixed: Tol,     // A
        trip: Option<Range>,
    },
}

#[derive(Debug, Clone)]
struct Spec {
    supply: Range, // V
    output: Tol,   // V
    load: f64,     // A, rated
    ambient: Range,
    theta: Tol, // K/W
    junction_max: f64,
    capacitance: Tol, // F
    full_gate: Range, // A
    scheme: Scheme,
    slew: Option<Range>, // V/s
    startup_load: f64,   // A
    time_max: f64,       // s
    width: f64,          // m, metal
}

fn spec_text(s: &Spec) -> String {
    let ma = |a: f64| format!("{} mA", a * 1e3);
    let pct = |f: f64| format!("{} %", f * 100.0);
    let limit = match &s.scheme {
        Scheme::Replica {
            ratio,
            reference,
            mismatch,
            drain,
            foldback,
        } => {
            let fold = foldback
                .map(|(f, at_reg, knee)| {
                    let at_reg = at_reg
                        .map(|r| format!("  at_regulation = {} ± {}", ma(r.nom), pct(r.tol)))
                        .unwrap_or_default();
                    let knee = knee
                        .map(|k| format!("  knee = {} V .. {} V", k.lo, k.hi))
                        .unwrap_or_default();
                    format!(
                        "    foldback {{ at_zero = {} ± {}{at_reg}{knee} }}\n",
                        ma(f.nom),
                        pct(f.tol)
                    )
                })
                .unwrap_or_default();
            format!(
                "    limit sensed {{\n        scheme = replica\n        ratio = {ratio}\n        reference = {} uA ± {}\n        mismatch = ± {}\n        drain_error = ± {}\n        threshold = ratio * reference\n        clamp_drive = 200 uA .. 300 uA\n    }}\n{fold}",
                reference.nom * 1e6,
                pct(reference.tol),
                pct(*mismatch),
                pct(*drain)
            )
        }
        Scheme::Undervoltage {
            threshold,
            fixed,
            trip,
        } => format!(
            "    limit uv {{\n        scheme = undervoltage_fixed\n        threshold_voltage = {} V ± {}\n        fixed_current = {} ± {}\n{}    }}\n",
            threshold.nom,
            pct(threshold.tol),
            ma(fixed.nom),
            pct(fixed.tol),
            trip.map(|t| format!("        trip_current = {} .. {}\n", ma(t.lo), ma(t.hi)))
                .unwrap_or_default()
        ),
    };
    let slew = s
        .slew
        .map(|r| {
            format!(
                "        slew = {} V/ms .. {} V/ms\n",
                r.lo / 1e3,
                r.hi / 1e3
            )
        })
        .unwrap_or_default();
    format!(
        "process p {{\n    metal top {{\n        thickness = 1 um\n        current_density = 1 mA/um^2\n        reference_temperature = 110 °C\n        reference_lifetime = 10 yr\n        activation_energy = 0.8 eV\n        current_exponent = 2\n    }}\n}}\n\
         regulator r {{\n    supply = {} V .. {} V\n    output = {} V ± {}\n    load = 0 mA .. {}\n    quiescent = 50 uA .. 200 uA\n    ambient = {} °C .. {} °C\n    theta_ja = {} K/W ± {}\n    junction_max = {} °C\n\
         \x20   pin vout {{ off_chip = true  capacitance = {} uF ± {} }}\n\
         \x20   pass {{ full_gate_current = {} .. {}  amplifier_drive = 20 uA ± 10 % }}\n{limit}\
         \x20   startup {{\n        time_max = {} us\n        load = {}\n{slew}    }}\n\
         \x20   conductor path {{ carries = pass  layer = p.top  width = {} um }}\n}}\n",
        s.supply.lo,
        s.supply.hi,
        s.output.nom,
        pct(s.output.tol),
        ma(s.load),
        s.ambient.lo - 273.15,
        s.ambient.hi - 273.15,
        s.theta.nom,
        pct(s.theta.tol),
        s.junction_max - 273.15,
        s.capacitance.nom * 1e6,
        pct(s.capacitance.tol),
        ma(s.full_gate.lo),
        ma(s.full_gate.hi),
        s.time_max * 1e6,
        ma(s.startup_load),
        s.width * 1e6,
    )
}

/// Checks one spec text as a one-file workspace held in memory.
fn check(text: &str) -> Checked {
    common::check("soundness-spec.guard", text)
}

/// A limit's cap at an output voltage (`None`: no cap there).
type CapAt = Box<dyn Fn(f64) -> Option<f64>>;

/// One draw of every stated tolerance, as the physics sees it.
struct Draw {
    vin: f64,
    vout: f64,
    ambient: f64,
    theta: f64,
    c: f64,
    full_gate: f64,
    slew: Option<f64>,
    /// The load current in regulation and the quiescent current, A.
    load: f64,
    quiescent: f64,
    /// The cap at output voltage `v` from the limit (`None`: no cap there).
    cap: CapAt,
    /// Voltages where the cap changes shape, for finding maxima.
    knees: Vec<f64>,
}

fn draw(s: &Spec, u: &mut dyn FnMut() -> f64) -> Draw {
    let vout = s.output.at(u());
    let (cap, knees): (CapAt, Vec<f64>) = match &s.scheme {
        Scheme::Replica {
            ratio,
            reference,
            mismatch,
            drain,
            foldback,
        } => {
            let threshold =
                ratio * reference.at(u()) * (1.0 + u() * mismatch) * (1.0 + u() * drain);
            match foldback {
                // The foldback line runs from its current at 0 V to the limit
                // at regulation (the drawn output voltage, or a stated knee).
                Some((f, None, knee)) => {
                    let at0 = f.at(u());
                    let k = knee.map_or(vout, |k| k.at(u()));
                    (
                        Box::new(move |v: f64| Some(at0 + (threshold - at0) * (v / k).min(1.0))),
                        vec![k],
                    )
                }
                // With its own current at regulation it caps beside the limit.
                Some((f, Some(r), knee)) => {
                    let (at0, at_reg) = (f.at(u()), r.at(u()));
                    let k = knee.map_or(vout, |k| k.at(u()));
                    (
                        Box::new(move |v: f64| {
                            Some(threshold.min(at0 + (at_reg - at0) * (v / k).min(1.0)))
                        }),
                        vec![k],
                    )
                }
                None => (Box::new(move |_| Some(threshold)), vec![]),
            }
        }
        Scheme::Undervoltage {
            threshold,
            fixed,
            trip,
        } => {
            let vth = threshold.at(u());
            let fixed = fixed.at(u());
            let trip = trip.map(|t| t.at(u()));
            (
                Box::new(move |v: f64| if v < vth { Some(fixed) } else { trip }),
                vec![vth],
            )
        }
    };
    Draw {
        vin: s.supply.at(u()),
        vout,
        ambient: s.ambient.at(u()),
        theta: s.theta.at(u()),
        c: s.capacitance.at(u()),
        full_gate: s.full_gate.at(u()),
        slew: s.slew.map(|r| r.at(u())),
        load: Range {
            lo: 0.0,
            hi: s.load,
        }
        .at(u()),
        quiescent: Range {
            lo: 50e-6,
            hi: 200e-6,
        }
        .at(u()),
        cap,
        knees,
    }
}

impl Draw {
    /// The current the protections let through at output voltage `v`.
    fn current(&self, v: f64) -> f64 {
        match (self.cap)(v) {
            Some(c) => c.min(self.full_gate),
            None => self.full_gate,
        }
    }

    /// Output voltages to look at: a fine grid plus both sides of each knee.
    fn voltages(&self) -> Vec<f64> {
        let mut vs: Vec<f64> = (0..=400).map(|i| self.vout * i as f64 / 400.0).collect();
        for k in &self.knees {
            if *k <= self.vout {
                vs.extend([k * (1.0 - 1e-12), *k, k * (1.0 + 1e-12)]);
            }
        }
        vs.retain(|v| *v >= 0.0 && *v <= self.vout);
        vs
    }

    fn worst_current(&self) -> f64 {
        self.voltages()
            .into_iter()
            .map(|v| self.current(v))
            .fold(0.0, f64::max)
    }

    fn worst_power(&self) -> f64 {
        self.voltages()
            .into_iter()
            .map(|v| (self.vin - v) * self.current(v))
            .fold(0.0, f64::max)
    }

    /// Startup time by integrating dt = dV / min(slew, (I − load)/C) with
    /// the midpoint rule on each stretch between knees (where the current is
    /// linear in V); `None` if it stalls.
    fn startup_time(&self, load: f64) -> Option<f64> {
        let mut cuts: Vec<f64> = vec![0.0, self.vout];
        cuts.extend(
            self.knees
                .iter()
                .copied()
                .filter(|k| *k > 0.0 && *k < self.vout),
        );
        cuts.sort_by(f64::total_cmp);
        let mut t = 0.0;
        for w in cuts.windows(2) {
            let (a, b) = (w[0], w[1]);
            let steps = 2000;
            let dv = (b - a) / steps as f64;
            for i in 0..steps {
                let v = a + (i as f64 + 0.5) * dv;
                let net = self.current(v) - load;
                if net <= 0.0 {
                    return None;
                }
                let rate = match self.slew {
                    Some(s) => s.min(net / self.c),
                    None => net / self.c,
                };
                t += dv / rate;
            }
        }
        Some(t)
    }
}

fn tol(nom: std::ops::Range<f64>, t: std::ops::Range<f64>) -> impl Strategy<Value = Tol> {
    (nom, t).prop_map(|(nom, tol)| Tol { nom, tol })
}

fn range(lo: std::ops::Range<f64>, width: std::ops::Range<f64>) -> impl Strategy<Value = Range> {
    (lo, width).prop_map(|(lo, w)| Range {
        lo,
        hi: lo * (1.0 + w),
    })
}

fn scheme() -> impl Strategy<Value = Scheme> {
    prop_oneof![
        (
            500.0f64..5000.0,
            tol(20e-6..120e-6, 0.02..0.25),
            0.0f64..0.1,
            0.0f64..0.08,
            proptest::option::of((
                tol(0.02..0.15, 0.05..0.3),
                proptest::option::of(tol(0.01..0.4, 0.05..0.3)),
                proptest::option::of(range(0.3..2.0, 0.0..0.5)),
            )),
        )
            .prop_map(
                |(ratio, reference, mismatch, drain, foldback)| Scheme::Replica {
                    ratio,
                    reference,
                    mismatch,
                    drain,
                    foldback,
                }
            ),
        (
            tol(0.3..0.9, 0.01..0.05),
            tol(0.02..0.2, 0.05..0.25),
            proptest::option::of(range(0.1..0.5, 0.1..1.0)),
        )
            .prop_map(|(threshold, fixed, trip)| Scheme::Undervoltage {
                threshold,
                fixed,
                trip,
            }),
    ]
}

fn spec() -> impl Strategy<Value = Spec> {
    (
        (range(2.5..3.5, 0.05..0.5), tol(1.0..2.0, 0.01..0.05)),
        (
            0.01f64..0.2,
            range(253.0..300.0, 0.05..0.3),
            tol(40.0..120.0, 0.0..0.2),
        ),
        (tol(0.5e-6..10e-6, 0.05..0.3), range(0.15..0.6, 0.2..3.0)),
        scheme(),
        (
            proptest::option::of(range(500.0..20_000.0, 0.1..1.0)),
            0.0f64..0.02,
        ),
        (10e-6f64..2e-3, 5e-6f64..2e-3),
    )
        .prop_map(
            |(
                (supply, output),
                (load, ambient, theta),
                (capacitance, full_gate),
                scheme,
                (slew, startup_load),
                (time_max, width),
            )| Spec {
                supply,
                output,
                load,
                ambient,
                theta,
                junction_max: 398.15,
                capacitance,
                full_gate,
                scheme,
                slew,
                startup_load,
                time_max,
                width,
            },
        )
}

/// A generator of draws: the corners first, then points inside the box.
fn draws(s: &Spec, n: usize, seed: u64) -> Vec<Draw> {
    let mut state = seed;
    let mut next = move || {
        state = state.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = state;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^= z >> 31;
        (z >> 11) as f64 / (1u64 << 53) as f64 * 2.0 - 1.0
    };
    let mut out = Vec::new();
    for corner in [-1.0, 1.0] {
        out.push(draw(s, &mut || corner));
    }
    for i in 0..n {
        if i % 2 == 0 {
            // A random corner of the box.
            out.push(draw(s, &mut || if next() < 0.0 { -1.0 } else { 1.0 }));
        } else {
            out.push(draw(s, &mut next));
        }
    }
    out
}

fn within(x: f64, hi: f64) -> bool {
    x <= hi * (1.0 + 1e-6) + 1e-15
}

fn config() -> Config {
    Config {
        cases: 96,
        rng_seed: RngSeed::Fixed(0x6A5D_B0D7),
        failure_persistence: None,
        ..Config::default()
    }
}

proptest! {
    #![proptest_config(config())]

    #[test]
    fn every_sampled_corner_lies_inside_the_derived_bounds(s in spec()) {
        let text = spec_text(&s);
        let checked = check(&text);
        let d = &checked.derived[0];
        let worst = d.worst.as_ref().expect("worst current derived").value;
        let overload = d.overload.as_ref().expect("overload heat derived");
        let start = d.startup.as_ref().expect("startup derived");
        let normal = d.normal.as_ref().expect("heat at rated load derived");
        let currents = d.currents.as_ref().expect("currents");
        let (short_hi, _) = currents.upper_at(0.0).expect("short current");
        let short_lo = currents.lower_at(0.0);
        for p in draws(&s, 40, 7) {
            let i = p.worst_current();
            prop_assert!(within(i, worst), "current {i} above the worst {worst}\n{text}");
            let i0 = p.current(0.0);
            prop_assert!(within(i0, short_hi), "short {i0} above {short_hi}");
            if let Some(lo) = short_lo {
                prop_assert!(i0 >= lo * (1.0 - 1e-6), "short {i0} below {lo}");
            }
            // In regulation: P = (Vin − Vout)·I_load + I_q·Vin, T_J = T_A + P·θJA.
            let normal_tj = p.ambient
                + ((p.vin - p.vout).max(0.0) * p.load + p.quiescent * p.vin) * p.theta;
            prop_assert!(within(normal_tj, normal.junction), "rated-load junction {normal_tj} above {}\n{text}", normal.junction);
            let power = p.worst_power();
            prop_assert!(within(power, overload.power), "power {power} above {}\n{text}", overload.power);
            let tj = p.ambient + power * p.theta;
            prop_assert!(within(tj, overload.junction), "junction {tj} above {}", overload.junction);
            match (p.startup_time(s.startup_load), &start.time) {
                (Some(t), Ok(bound)) => {
                    prop_assert!(within(t, *bound), "startup {t} above {bound}\n{text}");
                    if let Some(lo) = start.time_lo {
                        prop_assert!(t >= lo * (1.0 - 1e-3), "startup {t} below {lo}");
                    }
                }
                (None, Ok(bound)) => prop_assert!(false, "a drawn point stalls but the bound is {bound}\n{text}"),
                (_, Err(_)) => {}
            }
        }
    }

    #[test]
    fn a_clean_spec_has_no_sampled_point_that_breaks_a_rule(s in spec()) {
        let text = spec_text(&s);
        let checked = check(&text);
        let errors: Vec<&str> = checked
            .diagnostics
            .iter()
            .filter(|d| d.severity == guardband_model::Severity::Error)
            .map(|d| d.rule)
            .collect();
        let clean = |rule: &str| !errors.contains(&rule);
        let d = &checked.derived[0];
        let rating = d.conductors[0].rating.as_ref().ok().copied();
        for p in draws(&s, 40, 11) {
            if clean("conductor-under-rated") && clean("unlimited-surge")
                && let Some(r) = rating
            {
                prop_assert!(within(p.worst_current(), r), "rating {r} below {}\n{text}", p.worst_current());
            }
            if clean("short-overheat") {
                let tj = p.ambient + p.worst_power() * p.theta;
                prop_assert!(within(tj, s.junction_max), "junction {tj}\n{text}");
            }
            if clean("slow-start") {
                let t = p.startup_time(s.startup_load);
                prop_assert!(t.is_some_and(|t| within(t, s.time_max)), "startup {t:?} over {}\n{text}", s.time_max);
            }
            if clean("limit-within-load") && let Scheme::Replica { .. } = s.scheme {
                let required = s.load * 1.2;
                let threshold = (p.cap)(p.vout).expect("replica caps");
                prop_assert!(threshold > required * (1.0 - 1e-9), "threshold {threshold} at or below {required}\n{text}");
            }
        }
    }
}

/// Two limits in either order: same figures and same findings.
#[test]
fn the_order_of_two_limits_changes_nothing() {
    let sensed = "    limit sensed { scheme = replica  ratio = 1000  reference = 150 uA ± 10 %  mismatch = ± 5 %  drain_error = ± 3 %  threshold = ratio * reference  clamp_drive = 90 uA .. 120 uA }\n";
    let other = "    limit second { scheme = replica  ratio = 1000  reference = 120 uA ± 12 %  mismatch = ± 5 %  drain_error = ± 3 %  threshold = ratio * reference  clamp_drive = 90 uA .. 120 uA }\n";
    let uv = "    limit uv { scheme = undervoltage_fixed  threshold_voltage = 0.8 V ± 3 %  fixed_current = 40 mA ± 15 %  trip_current = 100 mA .. 180 mA }\n";
    let body = |limits: &str| {
        format!(
            "regulator r {{\n    supply = 3 V .. 4 V\n    output = 1.5 V ± 2 %\n    load = 0 mA .. 60 mA\n    ambient = 0 °C .. 70 °C\n    theta_ja = 80 K/W ± 10 %\n    junction_max = 125 °C\n    pin vout {{ off_chip = true  capacitance = 2 uF ± 20 % }}\n    pass {{ full_gate_current = 0.2 A .. 0.8 A  amplifier_drive = 20 uA ± 10 % }}\n{limits}    startup {{ time_max = 100 us  load = 5 mA }}\n}}\n"
        )
    };
    for (a, b) in [(sensed, other), (sensed, uv), (other, uv)] {
        let one = check(&body(&format!("{a}{b}")));
        let two = check(&body(&format!("{b}{a}")));
        let figures = |c: &Checked| {
            let d = &c.derived[0];
            (
                d.worst
                    .as_ref()
                    .map(|w| (w.value, w.cause.what.clone()))
                    .ok(),
                d.short.as_ref().map(|h| (h.current, h.junction)).ok(),
                d.overload.as_ref().map(|h| (h.power, h.at_voltage)).ok(),
                d.startup.as_ref().map(|s| (s.surge, s.time)).ok(),
            )
        };
        assert_eq!(figures(&one), figures(&two));
        let findings = |c: &Checked| {
            let mut f: Vec<(String, String)> = c
                .diagnostics
                .iter()
                .map(|d| (d.rule.to_string(), d.message.clone()))
                .collect();
            f.sort();
            f
        };
        assert_eq!(findings(&one), findings(&two));
    }
}
