//! The current the pass device can deliver as a function of the output
//! voltage, bounded above and below over every corner the spec admits.
//!
//! Each protection is a cap on the current: the full-gate current (always),
//! a sensed limit (always), a foldback (a line from its current at 0 V up
//! to the sensed limit at regulation), an undervoltage-triggered limit (its
//! fixed current below its threshold voltage and, with a characterised trip
//! current, that current above it). The current that flows when the load
//! asks for more is the smallest cap in force, so together the caps bound
//! it whatever the order of the blocks. Each bound is piecewise linear in
//! the output voltage; the pieces let the worst current, the worst
//! dissipation `(Vin − V)·I(V)` and the startup time be found exactly.

/// A straight line `I = a + b·V`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Line {
    pub a: f64,
    pub b: f64,
}

impl Line {
    /// A constant current.
    pub fn flat(i: f64) -> Line {
        Line { a: i, b: 0.0 }
    }

    /// The line through `(v0, i0)` and `(v1, i1)`.
    pub fn through(v0: f64, i0: f64, v1: f64, i1: f64) -> Line {
        let b = if v1 > v0 { (i1 - i0) / (v1 - v0) } else { 0.0 };
        Line { a: i0 - b * v0, b }
    }

    /// The current at output voltage `v`.
    pub fn at(self, v: f64) -> f64 {
        self.a + self.b * v
    }
}

/// One protection's cap as pieces over output voltage: `(from, to, line)`,
/// with `None` where it does not cap the current.
#[derive(Debug, Clone, PartialEq)]
pub struct Cap {
    /// Which protection this is, for the figures' reasons (an index the
    /// caller gives meaning to).
    pub by: usize,
    pub pieces: Vec<(f64, f64, Option<Line>)>,
}

impl Cap {
    /// A cap of `i` at every voltage.
    pub fn flat(by: usize, i: f64) -> Cap {
        Cap {
            by,
            pieces: vec![(f64::NEG_INFINITY, f64::INFINITY, Some(Line::flat(i)))],
        }
    }

    fn line_at(&self, v: f64) -> Option<Option<Line>> {
        self.pieces
            .iter()
            .find(|(a, b, _)| *a <= v && v <= *b)
            .map(|(_, _, l)| *l)
    }
}

/// A piece of the envelope: on `v0 ..= v1` the bound is `line`, set by cap `by`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Piece {
    pub v0: f64,
    pub v1: f64,
    pub line: Line,
    pub by: usize,
}

/// The smallest of `caps` at each output voltage over `0 ..= vmax`, as
/// pieces; `Err((from, to))` names a stretch of voltage that no cap bounds.
pub fn lowest(caps: &[Cap], vmax: f64) -> Result<Vec<Piece>, (f64, f64)> {
    let vmax = vmax.max(0.0);
    let mut cuts: Vec<f64> = vec![0.0, vmax];
    for c in caps {
        for (a, b, _) in &c.pieces {
            for x in [*a, *b] {
                if x > 0.0 && x < vmax {
                    cuts.push(x);
                }
            }
        }
    }
    cuts.sort_by(f64::total_cmp);
    cuts.dedup();
    let mut out: Vec<Piece> = Vec::new();
    let stretches: Vec<(f64, f64)> = if cuts.len() == 1 {
        vec![(0.0, 0.0)]
    } else {
        cuts.windows(2).map(|w| (w[0], w[1])).collect()
    };
    for (x0, x1) in stretches {
        let mid = (x0 + x1) / 2.0;
        let lines: Vec<(Line, usize)> = caps
            .iter()
            .filter_map(|c| c.line_at(mid).flatten().map(|l| (l, c.by)))
            .collect();
        if lines.is_empty() {
            return Err((x0, x1));
        }
        // Where two lines cross inside the stretch, the lowest may change.
        let mut sub = vec![x0, x1];
        for (i, (p, _)) in lines.iter().enumerate() {
            for (q, _) in &lines[i + 1..] {
                if p.b != q.b {
                    let x = (q.a - p.a) / (p.b - q.b);
                    if x > x0 && x < x1 {
                        sub.push(x);
                    }
                }
            }
        }
        sub.sort_by(f64::total_cmp);
        sub.dedup();
        let parts: Vec<(f64, f64)> = if sub.len() == 1 {
            vec![(x0, x1)]
        } else {
            sub.windows(2).map(|w| (w[0], w[1])).collect()
        };
        for (a, b) in parts {
            let m = (a + b) / 2.0;
            let (line, by) = lines
                .iter()
                .copied()
                .min_by(|(p, _), (q, _)| p.at(m).total_cmp(&q.at(m)))
                .expect("at least one line");
            match out.last_mut() {
                Some(last) if last.line == line && last.by == by && last.v1 == a => last.v1 = b,
                _ => out.push(Piece {
                    v0: a,
                    v1: b,
                    line,
                    by,
                }),
            }
        }
    }
    Ok(out)
}

/// The bound at output voltage `v` (the lowest piece there).
pub fn at(pieces: &[Piece], v: f64) -> Option<(f64, usize)> {
    pieces
        .iter()
        .filter(|p| p.v0 <= v && v <= p.v1)
        .map(|p| (p.line.at(v), p.by))
        .min_by(|a, b| a.0.total_cmp(&b.0))
}

/// The largest current over the pieces, with the voltage and cap where it falls.
pub fn highest(pieces: &[Piece]) -> Option<(f64, f64, usize)> {
    pieces
        .iter()
        .flat_map(|p| [(p.line.at(p.v0), p.v0, p.by), (p.line.at(p.v1), p.v1, p.by)])
        .max_by(|a, b| a.0.total_cmp(&b.0).then(b.1.total_cmp(&a.1)))
}

/// The smallest current over the pieces.
pub fn least(pieces: &[Piece]) -> Option<f64> {
    pieces
        .iter()
        .flat_map(|p| [p.line.at(p.v0), p.line.at(p.v1)])
        .min_by(f64::total_cmp)
}

/// The largest dissipation `(supply − V)·I(V)` over the pieces, with the
/// output voltage where it falls, the current there and the cap that sets it.
///
/// On a piece `I = a + b·V` the dissipation is the parabola
/// `supply·a + (supply·b − a)·V − b·V²`: its maximum is at an end of the
/// piece or, when `b > 0`, at its vertex `V = (supply·b − a) / 2b`.
pub fn hottest(pieces: &[Piece], supply: f64) -> Option<(f64, f64, f64, usize)> {
    let power = |l: Line, v: f64| (supply - v) * l.at(v);
    let mut best: Option<(f64, f64, f64, usize)> = None;
    for p in pieces {
        let mut candidates = vec![p.v0, p.v1];
        if p.line.b > 0.0 {
            let vertex = (supply * p.line.b - p.line.a) / (2.0 * p.line.b);
            if vertex > p.v0 && vertex < p.v1 {
                candidates.push(vertex);
            }
        }
        for v in candidates {
            let w = power(p.line, v);
            if best.is_none_or(|(bw, bv, ..)| w > bw || (w == bw && v < bv)) {
                best = Some((w, v, p.line.at(v), p.by));
            }
        }
    }
    best
}

/// Time to charge `capacitance` from 0 V to `v_end` when the current
/// available at each output voltage is at least `pieces` minus a straight
/// `load` line (a constant current, or `V/R` for a resistance), and the output rises no faster than `slew` (when given):
/// `t = ∫ max(1/slew, C / (I(V) − load)) dV`. `Err(v)` when the net
/// current is not positive at output voltage `v`: the output stalls there.
pub fn charge_time(
    pieces: &[Piece],
    capacitance: f64,
    load: Line,
    v_end: f64,
    slew: Option<f64>,
) -> Result<f64, f64> {
    let mut total = 0.0;
    for p in pieces {
        let (v0, v1) = (p.v0.max(0.0), p.v1.min(v_end));
        if v1 < v0 || (v1 == v0 && v_end > 0.0) {
            continue;
        }
        let net = Line {
            a: p.line.a - load.a,
            b: p.line.b - load.b,
        };
        for v in [v0, v1] {
            if net.at(v) <= 0.0 {
                return Err(v);
            }
        }
        // Where the charging current equals C·slew the slower of the two changes.
        let mut cuts = vec![v0, v1];
        if let Some(s) = slew
            && net.b != 0.0
        {
            let x = (capacitance * s - net.a) / net.b;
            if x > v0 && x < v1 {
                cuts.push(x);
            }
        }
        cuts.sort_by(f64::total_cmp);
        for w in cuts.windows(2) {
            let (a, b) = (w[0], w[1]);
            let mid = net.at((a + b) / 2.0);
            let limited_by_slew = slew.is_some_and(|s| capacitance * s <= mid);
            total += if limited_by_slew {
                (b - a) / slew.unwrap_or(f64::INFINITY)
            } else if net.b == 0.0 {
                capacitance * (b - a) / net.a
            } else {
                capacitance * (net.at(b) / net.at(a)).ln() / net.b
            };
        }
    }
    Ok(total)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= 1e-9 * (1.0 + a.abs().max(b.abs()))
    }

    #[test]
    fn lowest_cap_wins_whatever_the_order() {
        let a = Cap::flat(0, 0.3);
        let b = Cap::flat(1, 0.2);
        for caps in [vec![a.clone(), b.clone()], vec![b, a]] {
            let env = lowest(&caps, 1.8).unwrap();
            assert_eq!(env.len(), 1);
            assert!(close(env[0].line.a, 0.2));
            assert_eq!(env[0].by, 1);
        }
    }

    #[test]
    fn crossing_lines_split_the_envelope() {
        // A foldback line 0.1 A at 0 V rising to 0.4 A at 1.5 V, under a flat 0.3 A cap.
        let fold = Cap {
            by: 0,
            pieces: vec![(0.0, 1.5, Some(Line::through(0.0, 0.1, 1.5, 0.4)))],
        };
        let env = lowest(&[fold, Cap::flat(1, 0.3)], 1.5).unwrap();
        assert_eq!(env.len(), 2);
        assert!(close(env[0].v1, 1.0)); // 0.1 + 0.2·V = 0.3 at V = 1 V
        assert_eq!(highest(&env).map(|h| h.0), Some(0.3));
    }

    #[test]
    fn an_uncapped_stretch_is_reported() {
        let uv = Cap {
            by: 0,
            pieces: vec![(0.0, 1.0, Some(Line::flat(0.05))), (1.0, 1.8, None)],
        };
        assert_eq!(lowest(&[uv], 1.8), Err((1.0, 1.8)));
    }

    // The dissipation (Vin − V)·(a + b·V) is a parabola; with Vin = 4 V and
    // I = 0.1 + 0.1·V its vertex is at V = (4·0.1 − 0.1)/(2·0.1) = 1.5 V,
    // where P = 2.5 V × 0.25 A = 0.625 W (hand calculation).
    #[test]
    fn hottest_point_of_a_rising_line_is_its_vertex() {
        let env = lowest(
            &[Cap {
                by: 0,
                pieces: vec![(0.0, 3.0, Some(Line { a: 0.1, b: 0.1 }))],
            }],
            3.0,
        )
        .unwrap();
        let (p, v, i, _) = hottest(&env, 4.0).unwrap();
        assert!(close(v, 1.5) && close(p, 0.625) && close(i, 0.25));
        // A flat cap is hottest at 0 V: Vin · I.
        let flat = lowest(&[Cap::flat(0, 0.2)], 3.0).unwrap();
        assert!(close(hottest(&flat, 4.0).unwrap().0, 0.8));
    }

    // t = C·V/(I − load): 10 µF to 3.3 V with 150 mA less 50 mA is 330 µs; a
    // 1 V/ms soft start is slower (3.3 ms) and sets the time instead.
    #[test]
    fn charge_time_of_a_flat_current_and_of_a_soft_start() {
        let env = lowest(&[Cap::flat(0, 0.15)], 3.3).unwrap();
        let t = charge_time(&env, 10e-6, Line::flat(0.05), 3.3, None).unwrap();
        assert!(close(t, 330e-6));
        let t = charge_time(&env, 10e-6, Line::flat(0.05), 3.3, Some(1e3)).unwrap();
        assert!(close(t, 3.3e-3));
        assert_eq!(
            charge_time(&env, 10e-6, Line::flat(0.15), 3.3, None),
            Err(0.0)
        );
    }

    // A linearly rising current I = a + b·V gives t = C·ln(I(V1)/I(V0))/b
    // (the integral of C/I): from 0.1 A at 0 V to 0.3 A at 2 V with 1 µF,
    // t = 1e-6 · ln(3) / 0.1 = 10.986 µs.
    #[test]
    fn charge_time_along_a_rising_line() {
        let env = lowest(
            &[Cap {
                by: 0,
                pieces: vec![(0.0, 2.0, Some(Line::through(0.0, 0.1, 2.0, 0.3)))],
            }],
            2.0,
        )
        .unwrap();
        let t = charge_time(&env, 1e-6, Line::flat(0.0), 2.0, None).unwrap();
        assert!(close(t, 1e-6 * 3f64.ln() / 0.1));
    }
}
