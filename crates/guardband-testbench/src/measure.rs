//! Reading a bench's measurements back: the `guardband-measure NAME VALUE`
//! lines a deck prints, and the loop gain the loop-gain bench writes, from
//! which the unity-gain frequency, phase margin and gain margin are
//! computed here.
//!
//! The loop-gain bench breaks the loop at the pass gate with a 0 V source
//! and injects twice (a voltage in the source, then a current into the
//! device side), the double-injection method: with the first run's device-
//! side voltage `V` (per volt injected) and the second run's current `I`
//! through the source (per ampere injected), the voltage and current loop
//! gains are `T_v = (1 − V)/V` and `T_i = I/(1 − I)`, and the loop gain is
//! `T = (T_v·T_i − 1)/(T_v + T_i + 2)`, which simplifies to
//! `T = 1/(V + 1 − I) − 1`; the deck computes that.

use std::collections::BTreeMap;

/// The `guardband-measure` lines of ngspice's output, by name. A value
/// ngspice could not compute (a failed `meas`) is left out.
pub fn printed(stdout: &str) -> BTreeMap<String, f64> {
    let mut out = BTreeMap::new();
    for line in stdout.lines() {
        let mut words = line.split_whitespace();
        if words.next() != Some("guardband-measure") {
            continue;
        }
        let (Some(name), Some(value)) = (words.next(), words.next()) else {
            continue;
        };
        if let Ok(x) = value.parse::<f64>()
            && x.is_finite()
        {
            out.insert(name.to_string(), x);
        }
    }
    out
}

/// The figures of a loop gain.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct LoopFigures {
    /// Hz.
    pub unity_gain: f64,
    /// Degrees: 180° plus the loop gain's phase at the unity-gain frequency.
    pub phase_margin: f64,
    /// dB below unity at the first −180° crossing after the unity-gain
    /// one, when the phase reaches it within the sweep.
    pub gain_margin: Option<f64>,
}

/// One point of a loop gain: frequency and complex value.
#[derive(Debug, Clone, Copy)]
pub struct Point {
    pub f: f64,
    pub re: f64,
    pub im: f64,
}

/// The points of an ngspice `wrdata` file of one complex vector: lines of
/// frequency, real part, imaginary part (a repeated frequency column, as
/// some versions write, is skipped).
pub fn read_points(text: &str) -> Result<Vec<Point>, String> {
    let mut out = Vec::new();
    for (i, line) in text.lines().enumerate() {
        let numbers: Result<Vec<f64>, _> = line.split_whitespace().map(str::parse).collect();
        let numbers =
            numbers.map_err(|_| format!("line {} of the loop gain is not numbers", i + 1))?;
        let p = match numbers.as_slice() {
            [] => continue,
            [f, re, im] => Point {
                f: *f,
                re: *re,
                im: *im,
            },
            [f, re, _, im] => Point {
                f: *f,
                re: *re,
                im: *im,
            },
            _ => {
                return Err(format!(
                    "line {} of the loop gain has {} columns",
                    i + 1,
                    numbers.len()
                ));
            }
        };
        out.push(p);
    }
    if out.len() < 2 {
        return Err("the loop gain has fewer than two points".into());
    }
    Ok(out)
}

/// The unity-gain frequency, phase margin and gain margin of a loop gain
/// sampled from low to high frequency, by linear interpolation in
/// log-frequency of the magnitude in dB and of the unwrapped phase.
pub fn loop_gain(points: &[Point]) -> Result<LoopFigures, String> {
    let db = |p: &Point| 20.0 * p.re.hypot(p.im).log10();
    // Phase in degrees, unwrapped from the first point.
    let mut phase = Vec::with_capacity(points.len());
    for p in points {
        let raw = p.im.atan2(p.re).to_degrees();
        let value = match phase.last() {
            None => raw,
            Some(&prev) => {
                let mut x = raw;
                while x - prev > 180.0 {
                    x -= 360.0;
                }
                while x - prev < -180.0 {
                    x += 360.0;
                }
                x
            }
        };
        phase.push(value);
    }
    let first = points[0];
    if first.re <= 0.0 || db(&first) <= 0.0 {
        return Err(format!(
            "the loop gain at {} Hz is {:.3} {:+.3}j: not a negative-feedback loop with gain above unity, so it has no phase margin",
            first.f, first.re, first.im
        ));
    }
    // The fraction of the way from a to b at which target is met.
    let lerp = |a: f64, b: f64, target: f64| if b == a { 0.0 } else { (target - a) / (b - a) };
    let mut unity = None;
    for i in 0..points.len() - 1 {
        let (a, b) = (db(&points[i]), db(&points[i + 1]));
        if a > 0.0 && b <= 0.0 {
            let t = lerp(a, b, 0.0);
            let f = (points[i].f.ln() + t * (points[i + 1].f.ln() - points[i].f.ln())).exp();
            let ph = phase[i] + t * (phase[i + 1] - phase[i]);
            unity = Some((i, f, ph));
            break;
        }
    }
    let Some((at, unity_gain, ph)) = unity else {
        return Err(format!(
            "the loop gain stays above unity up to {} Hz: no unity-gain frequency in the sweep",
            points[points.len() - 1].f
        ));
    };
    // The first point's real part is positive, so its phase lies within
    // ±90° and the unwrapped phase is measured from 0°.
    let phase_margin = 180.0 + ph;
    let mut gain_margin = None;
    for i in at..points.len() - 1 {
        let (a, b) = (phase[i], phase[i + 1]);
        if a > -180.0 && b <= -180.0 {
            let t = lerp(a, b, -180.0);
            gain_margin = Some(-(db(&points[i]) + t * (db(&points[i + 1]) - db(&points[i]))));
            break;
        }
    }
    Ok(LoopFigures {
        unity_gain,
        phase_margin,
        gain_margin,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A two-pole loop gain A0 / ((1 + s/p1)(1 + s/p2)) sampled like an
    /// ngspice `ac dec 50` sweep.
    fn two_pole(a0: f64, p1: f64, p2: f64) -> Vec<Point> {
        (0..=500)
            .map(|k| {
                let f = 10f64.powf(k as f64 / 50.0);
                // 1/((1 + j f/p1)(1 + j f/p2)) by complex arithmetic.
                let (ar, ai) = (1.0, f / p1);
                let (br, bi) = (1.0, f / p2);
                let (dr, di) = (ar * br - ai * bi, ar * bi + ai * br);
                let m = dr * dr + di * di;
                Point {
                    f,
                    re: a0 * dr / m,
                    im: -a0 * di / m,
                }
            })
            .collect()
    }

    #[test]
    fn two_pole_phase_margin_matches_the_closed_form() {
        // Closed form: |T(fu)| = 1 solved for fu, PM = 180° − atan(fu/p1) − atan(fu/p2)
        // (textbook result for two real poles; solved here by bisection).
        let (a0, p1, p2) = (1000.0, 100.0, 1e6);
        let mag = |f: f64| a0 / ((1.0 + (f / p1).powi(2)).sqrt() * (1.0 + (f / p2).powi(2)).sqrt());
        let (mut lo, mut hi) = (p1, 1e9);
        for _ in 0..200 {
            let mid = (lo * hi).sqrt();
            if mag(mid) > 1.0 { lo = mid } else { hi = mid }
        }
        let fu = lo;
        let pm = 180.0 - (fu / p1).atan().to_degrees() - (fu / p2).atan().to_degrees();
        let got = loop_gain(&two_pole(a0, p1, p2)).unwrap();
        assert!((got.unity_gain / fu - 1.0).abs() < 0.01, "{got:?} vs {fu}");
        assert!((got.phase_margin - pm).abs() < 0.5, "{got:?} vs {pm}");
        // Two poles never reach −180°: no gain margin.
        assert_eq!(got.gain_margin, None);
    }

    #[test]
    fn three_equal_poles_give_the_closed_form_gain_margin() {
        // Three equal real poles p: the phase is −180° where atan(f/p) = 60°,
        // f = √3·p, and there |T| = A0 / (1 + 3)^(3/2) = A0 / 8, so the
        // gain margin is 20·log10(8 / A0) (textbook result).
        let (a0, p) = (4.0, 1000.0);
        let points: Vec<Point> = (0..=400)
            .map(|k| {
                let f = 10f64.powf(k as f64 / 50.0);
                let x = f / p;
                // (1 + jx)^-3 = (1 − jx)^3 / (1 + x²)^3
                let (r, i) = (1.0 - 3.0 * x * x, -3.0 * x + x * x * x);
                let m = (1.0 + x * x).powi(3);
                Point {
                    f,
                    re: a0 * r / m,
                    im: a0 * i / m,
                }
            })
            .collect();
        let got = loop_gain(&points).unwrap();
        let gm = 20.0 * (8.0 / a0).log10();
        assert!(
            (got.gain_margin.unwrap() - gm).abs() < 0.05,
            "{got:?} vs {gm}"
        );
    }

    #[test]
    fn a_loop_without_gain_has_no_margin() {
        assert!(loop_gain(&two_pole(0.5, 100.0, 1e6)).is_err());
        assert!(loop_gain(&two_pole(-1000.0, 100.0, 1e6)).is_err());
    }

    #[test]
    fn printed_lines_are_read_and_failures_left_out() {
        let out = "noise\nguardband-measure current 1.578e-01\nguardband-measure time nan\nguardband-measure output\n";
        let m = printed(out);
        assert_eq!(m.get("current"), Some(&0.1578));
        assert_eq!(m.len(), 1);
    }

    #[test]
    fn wrdata_columns_are_read() {
        let p = read_points("1 2 3\n10 4 5\n").unwrap();
        assert_eq!(p.len(), 2);
        assert_eq!(p[1].im, 5.0);
        assert!(read_points("1 x 3\n").is_err());
    }
}
