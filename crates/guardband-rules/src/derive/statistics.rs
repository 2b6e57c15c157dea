//! The statistical window: a value's stated tolerances combined by
//! root-sum-square, each as the spread it was stated as.
//!
//! - A tolerance (`± x`, `+a -b`) is a normal distribution whose stated
//!   extremes lie `k` standard deviations from its centre: `k` is the
//!   tolerance's own `at k sigma`, else the configured `sigma`.
//! - A range `lo .. hi` is a bound (corner data), not a normal tail. By
//!   default it enters as a uniform distribution over the range, standard
//!   deviation half-width / √3 (the rectangular distribution of the GUM,
//!   JCGM 100:2008 §4.3.7); with `ranges = "bound"` it is kept out of the
//!   root-sum-square and its whole half-width is added to both edges.
//! - An asymmetric tolerance shifts the mean to the centre of its stated
//!   extremes: `1 A +10 % -20 %` has mean 0.95 A.
//!
//! The window is first order (the value's linear terms); tests check it
//! against a seeded Monte Carlo of the exact value.

use crate::physics::statistics::normal_cdf;
use guardband_model::{Model, SourceId, Spread, Value};

/// How ranges (`lo .. hi`) enter the statistical window.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum RangeMode {
    /// As a uniform distribution over the range.
    #[default]
    Uniform,
    /// As a bound added to the edges, outside the root-sum-square.
    Bound,
}

/// What the statistical window needs from the configuration.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StatSettings {
    /// Standard deviations a stated `±` stands for, and the window's half-width in σ.
    pub sigma: f64,
    pub ranges: RangeMode,
}

/// Share of one stated tolerance in a statistical window.
#[derive(Debug, Clone, PartialEq)]
pub struct Contributor {
    pub source: SourceId,
    /// Its standard deviation, SI (0 for a range kept as a bound).
    pub sigma: f64,
    /// Its fraction of the total variance (0..1).
    pub share: f64,
    /// For a range kept as a bound: its half-width, SI.
    pub bound: f64,
}

/// A root-sum-square window: mean ± k·sigma, widened by any bounds.
#[derive(Debug, Clone, PartialEq)]
pub struct Statistical {
    pub mean: f64,
    pub sigma: f64,
    /// Half-widths of ranges kept out of the root-sum-square, summed.
    pub bound: f64,
    /// The `k` of the edges.
    pub k: f64,
    pub lo: f64,
    pub hi: f64,
    pub contributors: Vec<Contributor>,
}

/// The standard deviation a stated spread of half-width `half` stands for.
fn deviation(model: &Model, source: SourceId, half: f64, s: &StatSettings) -> (f64, f64) {
    match model.sources.get(source.0 as usize).map(|t| t.spread) {
        Some(Spread::Range) if s.ranges == RangeMode::Bound => (0.0, half),
        Some(Spread::Range) => (half / 3f64.sqrt(), 0.0),
        Some(Spread::Normal(Some(k))) => (half / k, 0.0),
        _ => (half / s.sigma, 0.0),
    }
}

/// Combines a value's stated tolerances into the statistical window, ranked
/// by share of the variance.
pub fn statistical(model: &Model, v: &Value, s: &StatSettings) -> Statistical {
    let mut mean = v.nom;
    let mut variance = 0.0;
    let mut bound = 0.0;
    let mut contributors = Vec::with_capacity(v.terms.len());
    for t in &v.terms {
        mean += (t.high + t.low) / 2.0;
        let half = (t.high - t.low).abs() / 2.0;
        let (sd, b) = deviation(model, t.source, half, s);
        variance += sd * sd;
        bound += b;
        contributors.push(Contributor {
            source: t.source,
            sigma: sd,
            share: 0.0,
            bound: b,
        });
    }
    for c in &mut contributors {
        c.share = if variance > 0.0 {
            c.sigma * c.sigma / variance
        } else {
            0.0
        };
    }
    contributors.sort_by(|a, b| {
        b.share
            .total_cmp(&a.share)
            .then(b.bound.total_cmp(&a.bound))
    });
    let sigma = variance.sqrt();
    Statistical {
        mean,
        sigma,
        bound,
        k: s.sigma,
        lo: mean - s.sigma * sigma - bound,
        hi: mean + s.sigma * sigma + bound,
        contributors,
    }
}

/// Parts per million whose value falls at or below `threshold`: the normal
/// tail below it, with any bounded part placed at its worst (lowest) end.
pub fn escape_ppm(stat: &Statistical, threshold: f64) -> f64 {
    let low_mean = stat.mean - stat.bound;
    if stat.sigma <= 0.0 {
        return if low_mean <= threshold { 1e6 } else { 0.0 };
    }
    normal_cdf((threshold - low_mean) / stat.sigma) * 1e6
}

/// How many standard deviations `threshold` lies below the (worst-placed)
/// mean; `None` without a spread.
pub fn sigmas_below(stat: &Statistical, threshold: f64) -> Option<f64> {
    (stat.sigma > 0.0).then(|| (stat.mean - stat.bound - threshold) / stat.sigma)
}

#[cfg(test)]
mod tests {
    use super::*;
    use guardband_model::{NodeId, ToleranceSource};
    use guardband_units::QuantityKind;

    /// A model holding `n` sources of the given spreads (the statistics
    /// only read their spread).
    fn model(spreads: &[Spread]) -> Model {
        let mut m = Model::default();
        for s in spreads {
            m.sources.push(ToleranceSource {
                node: NodeId(0),
                key: "x".into(),
                file: guardband_model::FileId(0),
                span: 0..0,
                spread: *s,
                local: false,
                copy_of: None,
            });
        }
        m
    }

    fn tol(nom: f64, rel: f64, id: u32) -> Value {
        Value::exact(QuantityKind::NONE, nom)
            .with_tolerance(QuantityKind::NONE, rel, rel, SourceId(id))
            .unwrap()
    }

    const THREE: StatSettings = StatSettings {
        sigma: 3.0,
        ranges: RangeMode::Uniform,
    };

    // Tolerance stack-up, worst case vs root-sum-square: three independent
    // parts of ±0.1, ±0.2 and ±0.2 about 1 each (sum 3 ± 0.5 worst case)
    // stack to ±sqrt(0.01 + 0.04 + 0.04) = ±0.3 by RSS, the textbook
    // comparison of the two methods (any tolerance-analysis text).
    #[test]
    fn rss_versus_worst_case_stack() {
        let m = model(&[Spread::Normal(None); 3]);
        let v = tol(1.0, 0.1, 0)
            .add(&tol(1.0, 0.2, 1))
            .unwrap()
            .add(&tol(1.0, 0.2, 2))
            .unwrap();
        assert!((v.lo - 2.5).abs() < 1e-12 && (v.hi - 3.5).abs() < 1e-12);
        let s = statistical(&m, &v, &THREE);
        assert!((s.hi - s.mean - 0.3).abs() < 1e-12);
        assert!((s.contributors[0].share - 0.04 / 0.09).abs() < 1e-12);
        assert_eq!(s.contributors[2].source, SourceId(0));
    }

    // A tolerance stated `at 6 sigma` has a third of the standard deviation
    // of the same tolerance at 3 sigma (its extremes are twice as far out).
    #[test]
    fn own_sigma_of_a_tolerance() {
        let m = model(&[Spread::Normal(Some(6.0))]);
        let s = statistical(&m, &tol(1.0, 0.06, 0), &THREE);
        assert!((s.sigma - 0.01).abs() < 1e-12);
    }

    // GUM (JCGM 100:2008) §4.3.7: a rectangular distribution of half-width
    // a has standard uncertainty a/√3; a range 0.8 .. 1.2 has σ = 0.2/√3.
    #[test]
    fn a_range_is_uniform_or_a_bound() {
        let m = model(&[Spread::Range]);
        let v = Value::range(QuantityKind::NONE, 0.8, 1.2, SourceId(0));
        let s = statistical(&m, &v, &THREE);
        assert!((s.sigma - 0.2 / 3f64.sqrt()).abs() < 1e-12);
        let b = statistical(
            &m,
            &v,
            &StatSettings {
                sigma: 3.0,
                ranges: RangeMode::Bound,
            },
        );
        assert_eq!((b.sigma, b.lo, b.hi), (0.0, 0.8, 1.2));
        assert_eq!(escape_ppm(&b, 0.85), 1e6);
    }

    // The mean of an asymmetric tolerance is the centre of its extremes:
    // 1 +10 % -20 % runs 0.8 .. 1.1, centre 0.95.
    #[test]
    fn asymmetric_tolerance_shifts_the_mean() {
        let m = model(&[Spread::Normal(None)]);
        let v = Value::exact(QuantityKind::NONE, 1.0)
            .with_tolerance(QuantityKind::NONE, 0.1, 0.2, SourceId(0))
            .unwrap();
        assert!((statistical(&m, &v, &THREE).mean - 0.95).abs() < 1e-12);
    }

    #[test]
    fn escape_rate_from_normal_tail() {
        let s = Statistical {
            mean: 1.0,
            sigma: 0.1,
            bound: 0.0,
            k: 3.0,
            lo: 0.7,
            hi: 1.3,
            contributors: vec![],
        };
        // Φ(-3) = 0.001349898 (standard normal table) → 1349.9 ppm.
        assert!((escape_ppm(&s, 0.7) - 1349.898).abs() < 0.1);
        assert!((sigmas_below(&s, 0.7).unwrap() - 3.0).abs() < 1e-9);
    }
}

#[cfg(test)]
mod monte_carlo {
    //! The first-order window against a seeded Monte Carlo of the exact
    //! value: each tolerance drawn from the distribution it is stated as.
    use super::*;
    use guardband_model::{NodeId, ToleranceSource};
    use guardband_units::QuantityKind;

    struct Rng(u64);
    impl Rng {
        fn uniform(&mut self) -> f64 {
            self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
            let mut z = self.0;
            z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
            z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
            z ^= z >> 31;
            ((z >> 11) as f64 + 0.5) / (1u64 << 53) as f64
        }
        /// A standard normal draw (Box–Muller).
        fn normal(&mut self) -> f64 {
            let (a, b) = (self.uniform(), self.uniform());
            (-2.0 * a.ln()).sqrt() * (std::f64::consts::TAU * b).cos()
        }
    }

    fn model(n: usize) -> Model {
        let mut m = Model::default();
        for _ in 0..n {
            m.sources.push(ToleranceSource {
                node: NodeId(0),
                key: "x".into(),
                file: guardband_model::FileId(0),
                span: 0..0,
                spread: Spread::Normal(None),
                local: false,
                copy_of: None,
            });
        }
        m
    }

    /// The sample quantile at probability `p` (sorted input).
    fn quantile(sorted: &[f64], p: f64) -> f64 {
        sorted[((sorted.len() - 1) as f64 * p).round() as usize]
    }

    #[test]
    fn linear_window_matches_a_monte_carlo_of_a_nonlinear_ratio() {
        // threshold = ratio · reference · (1 + mismatch) / (1 + drain), with
        // reference 100 uA ± 15 %, mismatch ± 8 %, drain ± 10 %: the divisor
        // makes it nonlinear. Each ± is 3 σ.
        let m = model(3);
        let reference = Value::exact(QuantityKind::CURRENT, 100e-6)
            .with_tolerance(QuantityKind::NONE, 0.15, 0.15, SourceId(0))
            .unwrap();
        let one = Value::exact(QuantityKind::NONE, 1.0);
        let mismatch = one
            .add(&Value::spread(QuantityKind::NONE, 0.08, 0.08, SourceId(1)))
            .unwrap();
        let drain = one
            .add(&Value::spread(QuantityKind::NONE, 0.10, 0.10, SourceId(2)))
            .unwrap();
        let v = Value::exact(QuantityKind::NONE, 2000.0)
            .mul(&reference)
            .and_then(|x| x.mul(&mismatch))
            .and_then(|x| x.div(&drain))
            .unwrap();
        let settings = StatSettings {
            sigma: 3.0,
            ranges: RangeMode::Uniform,
        };
        let stat = statistical(&m, &v, &settings);
        let mut rng = Rng(20261202);
        let n = 400_000;
        let mut samples: Vec<f64> = (0..n)
            .map(|_| {
                let u: Vec<f64> = (0..3).map(|_| rng.normal() / 3.0).collect();
                v.at(&|s| u[s.0 as usize])
            })
            .collect();
        samples.sort_by(f64::total_cmp);
        // Φ(-3) = 0.0013499 and Φ(3) = 0.9986501 (standard normal table).
        let (lo, hi) = (
            quantile(&samples, 0.001_349_9),
            quantile(&samples, 0.998_650_1),
        );
        let half = (stat.hi - stat.lo) / 2.0;
        let err_lo = (stat.lo - lo) / half;
        let err_hi = (stat.hi - hi) / half;
        println!(
            "linear {:.4e} .. {:.4e}, sampled {lo:.4e} .. {hi:.4e}: edge errors {:.1} % and {:.1} % of the half-width",
            stat.lo,
            stat.hi,
            err_lo * 100.0,
            err_hi * 100.0
        );
        // The divisor skews the distribution upward (E[1/(1+d)] > 1): first
        // order puts both edges a few per cent of the half-width low. The low
        // edge, which limit-within-load holds against the load, errs on the
        // safe side; metal is checked against the worst case, not this window.
        assert!(
            err_lo.abs() < 0.1 && err_hi.abs() < 0.1,
            "{err_lo} {err_hi}"
        );
        assert!(
            stat.lo <= lo,
            "the linear low edge is not above the sampled one"
        );
        // The escape rate below mean − 2σ: normal tail Φ(-2) = 2.275 %.
        let threshold = stat.mean - 2.0 * stat.sigma;
        let sampled = samples.iter().filter(|x| **x <= threshold).count() as f64 / n as f64 * 1e6;
        let model_ppm = escape_ppm(&stat, threshold);
        println!(
            "escape below mean − 2σ: {model_ppm:.0} ppm by the normal model, {sampled:.0} ppm sampled"
        );
        // The normal model overstates this tail (conservative), within 1.5×.
        assert!(
            model_ppm >= sampled && model_ppm < 1.5 * sampled,
            "{model_ppm} vs {sampled}"
        );
    }

    #[test]
    fn a_range_entered_as_uniform_matches_its_sampled_spread() {
        let mut m = model(0);
        m.sources.push(ToleranceSource {
            node: NodeId(0),
            key: "r".into(),
            file: guardband_model::FileId(0),
            span: 0..0,
            spread: Spread::Range,
            local: false,
            copy_of: None,
        });
        let v = Value::range(QuantityKind::NONE, 0.8, 1.2, SourceId(0));
        let stat = statistical(
            &m,
            &v,
            &StatSettings {
                sigma: 3.0,
                ranges: RangeMode::Uniform,
            },
        );
        let mut rng = Rng(7);
        let n = 200_000;
        let xs: Vec<f64> = (0..n)
            .map(|_| {
                let u = rng.uniform() * 2.0 - 1.0;
                v.at(&|_| u)
            })
            .collect();
        let mean = xs.iter().sum::<f64>() / n as f64;
        let sd = (xs.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / n as f64).sqrt();
        assert!(
            (sd - stat.sigma).abs() / stat.sigma < 0.01,
            "{sd} vs {}",
            stat.sigma
        );
    }
}

#[cfg(test)]
mod properties {
    //! Root-sum-square never gives a wider window than the worst case.
    use super::*;
    use guardband_model::{NodeId, ToleranceSource};
    use guardband_units::QuantityKind;
    use proptest::prelude::*;

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(512))]

        #[test]
        fn rss_never_exceeds_the_worst_case(
            parts in proptest::collection::vec((0.1f64..100.0, 0.0f64..0.5), 1..8),
            multiply in proptest::bool::ANY,
            k in 1.0f64..6.0,
        ) {
            let mut model = Model::default();
            let mut acc: Option<Value> = None;
            for (i, (nominal, tolerance)) in parts.iter().enumerate() {
                model.sources.push(ToleranceSource {
                    node: NodeId(0), key: "x".into(), file: guardband_model::FileId(0),
                    span: 0..0, spread: Spread::Normal(None), local: false, copy_of: None,
                });
                let v = Value::exact(QuantityKind::NONE, *nominal)
                    .with_tolerance(QuantityKind::NONE, *tolerance, *tolerance, SourceId(i as u32))
                    .expect("tolerance");
                acc = Some(match acc {
                    None => v,
                    Some(a) if multiply => a.mul(&v).expect("mul"),
                    Some(a) => a.add(&v).expect("add"),
                });
            }
            let v = acc.expect("at least one part");
            let stat = statistical(&model, &v, &StatSettings { sigma: k, ranges: RangeMode::Uniform });
            let worst = v.hi - v.lo;
            prop_assert!(stat.hi - stat.lo <= worst * (1.0 + 1e-9) + 1e-12,
                "RSS {} wider than worst case {worst}", stat.hi - stat.lo);
            let shares: f64 = stat.contributors.iter().map(|c| c.share).sum();
            prop_assert!(stat.sigma == 0.0 || (shares - 1.0).abs() < 1e-9, "shares sum to one");
        }
    }
}
