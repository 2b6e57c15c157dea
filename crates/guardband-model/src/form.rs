//! How a value depends on its stated tolerances: a small expression over
//! them, kept beside the interval bounds. It lets the checker find a worst
//! case exactly at the corners of the tolerances (where interval arithmetic
//! overestimates because a tolerance enters twice) and lets tests sample
//! every tolerance at random points.

use crate::value::SourceId;
use std::sync::Arc;

/// An expression over stated tolerances, in SI units.
///
/// A stated tolerance is a [`Form::Param`]: its value is `centre + u · half`
/// with `u` running over `-1 ..= 1` between the stated extremes.
#[derive(Debug, Clone, PartialEq)]
pub enum Form {
    Const(f64),
    /// A stated tolerance or range: `lo` at `u = -1`, `hi` at `u = +1`.
    Param {
        source: SourceId,
        lo: f64,
        hi: f64,
    },
    Add(Arc<Form>, Arc<Form>),
    Sub(Arc<Form>, Arc<Form>),
    Mul(Arc<Form>, Arc<Form>),
    Div(Arc<Form>, Arc<Form>),
    Neg(Arc<Form>),
    Min(Arc<Form>, Arc<Form>),
    Max(Arc<Form>, Arc<Form>),
    Abs(Arc<Form>),
    Sqrt(Arc<Form>),
}

/// Most nodes a form may have (counted as a tree) for corner evaluation;
/// larger forms keep their interval bounds.
pub const MAX_FORM_NODES: usize = 4096;

/// Most distinct tolerances evaluated at all their corners (2^12 = 4096 corners).
pub const MAX_CORNER_SOURCES: usize = 12;

impl Form {
    /// The value with each tolerance at `u(source)` (in `-1 ..= 1` at its extremes).
    pub fn eval(&self, u: &dyn Fn(SourceId) -> f64) -> f64 {
        match self {
            Form::Const(c) => *c,
            Form::Param { source, lo, hi } => {
                let centre = (lo + hi) / 2.0;
                let half = (hi - lo) / 2.0;
                centre + u(*source) * half
            }
            Form::Add(a, b) => a.eval(u) + b.eval(u),
            Form::Sub(a, b) => a.eval(u) - b.eval(u),
            Form::Mul(a, b) => a.eval(u) * b.eval(u),
            Form::Div(a, b) => a.eval(u) / b.eval(u),
            Form::Neg(a) => -a.eval(u),
            Form::Min(a, b) => a.eval(u).min(b.eval(u)),
            Form::Max(a, b) => a.eval(u).max(b.eval(u)),
            Form::Abs(a) => a.eval(u).abs(),
            Form::Sqrt(a) => a.eval(u).max(0.0).sqrt(),
        }
    }

    /// Calls `visit` on every tolerance occurrence, counting `nodes` as a
    /// tree (shared parts once per use) and stopping past `limit` nodes.
    fn walk(&self, nodes: &mut usize, limit: usize, visit: &mut dyn FnMut(SourceId)) {
        *nodes += 1;
        if *nodes > limit {
            return;
        }
        match self {
            Form::Const(_) => {}
            Form::Param { source, .. } => visit(*source),
            Form::Add(a, b)
            | Form::Sub(a, b)
            | Form::Mul(a, b)
            | Form::Div(a, b)
            | Form::Min(a, b)
            | Form::Max(a, b) => {
                a.walk(nodes, limit, visit);
                b.walk(nodes, limit, visit);
            }
            Form::Neg(a) | Form::Abs(a) | Form::Sqrt(a) => a.walk(nodes, limit, visit),
        }
    }

    /// The distinct tolerances this form depends on, in first-use order,
    /// and whether any of them occurs more than once. `None` when the form
    /// is larger than [`MAX_FORM_NODES`].
    pub fn sources(&self) -> Option<(Vec<SourceId>, bool)> {
        let mut nodes = 0;
        let mut seen: Vec<SourceId> = Vec::new();
        let mut repeated = false;
        self.walk(&mut nodes, MAX_FORM_NODES, &mut |s| {
            if seen.contains(&s) {
                repeated = true;
            } else {
                seen.push(s);
            }
        });
        (nodes <= MAX_FORM_NODES).then_some((seen, repeated))
    }

    /// The same form with each tolerance renamed by `map` (unmapped ones kept).
    pub fn renamed(self: &Arc<Form>, map: &dyn Fn(SourceId) -> Option<SourceId>) -> Arc<Form> {
        let two = |a: &Arc<Form>, b: &Arc<Form>| (a.renamed(map), b.renamed(map));
        Arc::new(match &**self {
            Form::Const(_) => return Arc::clone(self),
            Form::Param { source, lo, hi } => match map(*source) {
                Some(s) => Form::Param {
                    source: s,
                    lo: *lo,
                    hi: *hi,
                },
                None => return Arc::clone(self),
            },
            Form::Add(a, b) => {
                let (a, b) = two(a, b);
                Form::Add(a, b)
            }
            Form::Sub(a, b) => {
                let (a, b) = two(a, b);
                Form::Sub(a, b)
            }
            Form::Mul(a, b) => {
                let (a, b) = two(a, b);
                Form::Mul(a, b)
            }
            Form::Div(a, b) => {
                let (a, b) = two(a, b);
                Form::Div(a, b)
            }
            Form::Min(a, b) => {
                let (a, b) = two(a, b);
                Form::Min(a, b)
            }
            Form::Max(a, b) => {
                let (a, b) = two(a, b);
                Form::Max(a, b)
            }
            Form::Neg(a) => Form::Neg(a.renamed(map)),
            Form::Abs(a) => Form::Abs(a.renamed(map)),
            Form::Sqrt(a) => Form::Sqrt(a.renamed(map)),
        })
    }
}

/// A small deterministic generator (SplitMix64), so that the monotonicity
/// probe gives the same answer on every run and machine.
struct Probe(u64);

impl Probe {
    fn next(&mut self) -> f64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^= z >> 31;
        // In -1 ..= 1.
        (z >> 11) as f64 / (1u64 << 53) as f64 * 2.0 - 1.0
    }
}

/// Why corner evaluation was not used, or how many corners it took.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Corners {
    /// Bounds over every corner of these many tolerances.
    Exact(usize),
    /// More tolerances than [`MAX_CORNER_SOURCES`], or a form too large.
    TooMany,
    /// Sampling found the value not monotonic in some tolerance, so its
    /// extremes may lie inside the box: interval bounds are kept.
    NotMonotonic,
}

/// The smallest and largest value of `form` over the corners of its
/// tolerances, when sampling finds it monotonic in each (then the corners
/// hold its extremes).
pub fn corner_bounds(form: &Form, sources: &[SourceId]) -> Result<(f64, f64), Corners> {
    let n = sources.len();
    if n > MAX_CORNER_SOURCES {
        return Err(Corners::TooMany);
    }
    let index = |s: SourceId| sources.iter().position(|x| *x == s);
    // Monotonicity probe: along each tolerance, from three random points of
    // the box, five steps from -1 to +1 must not change direction.
    let mut probe = Probe(0x5EED_0FC0_FFEE);
    for i in 0..n {
        for _ in 0..3 {
            let base: Vec<f64> = (0..n).map(|_| probe.next()).collect();
            let mut last: Option<f64> = None;
            let (mut up, mut down) = (false, false);
            for step in 0..5 {
                let t = -1.0 + 0.5 * step as f64;
                let y = form.eval(&|s| match index(s) {
                    Some(j) if j == i => t,
                    Some(j) => base[j],
                    None => 0.0,
                });
                if !y.is_finite() {
                    return Err(Corners::NotMonotonic);
                }
                if let Some(prev) = last {
                    let slack = 1e-12 * (1.0 + prev.abs().max(y.abs()));
                    if y > prev + slack {
                        up = true;
                    } else if y < prev - slack {
                        down = true;
                    }
                }
                last = Some(y);
            }
            if up && down {
                return Err(Corners::NotMonotonic);
            }
        }
    }
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for corner in 0u32..(1u32 << n) {
        let y = form.eval(&|s| match index(s) {
            Some(j) if corner & (1 << j) != 0 => 1.0,
            Some(_) => -1.0,
            None => 0.0,
        });
        if !y.is_finite() {
            return Err(Corners::NotMonotonic);
        }
        lo = lo.min(y);
        hi = hi.max(y);
    }
    Ok((lo, hi))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn p(id: u32, lo: f64, hi: f64) -> Arc<Form> {
        Arc::new(Form::Param {
            source: SourceId(id),
            lo,
            hi,
        })
    }

    #[test]
    fn repeated_tolerance_is_exact_at_corners() {
        // r · x / x · x with x in 164 .. 236: the true range is r·164 .. r·236,
        // while interval arithmetic widens it by x/x = 164/236 .. 236/164.
        let x = p(0, 164.0, 236.0);
        let r = Arc::new(Form::Const(1.0));
        let f = Form::Mul(
            Arc::new(Form::Div(Arc::new(Form::Mul(r, x.clone())), x.clone())),
            x,
        );
        let (sources, repeated) = f.sources().unwrap();
        assert_eq!(sources, vec![SourceId(0)]);
        assert!(repeated);
        let (lo, hi) = corner_bounds(&f, &sources).unwrap();
        assert!((lo - 164.0).abs() < 1e-9 && (hi - 236.0).abs() < 1e-9);
    }

    #[test]
    fn non_monotonic_forms_are_refused() {
        // x · x over -1 .. 1 has its minimum inside the box.
        let x = p(0, -1.0, 1.0);
        let f = Form::Mul(x.clone(), x);
        let (sources, _) = f.sources().unwrap();
        assert_eq!(corner_bounds(&f, &sources), Err(Corners::NotMonotonic));
    }

    #[test]
    fn renaming_replaces_only_mapped_sources() {
        let f = Arc::new(Form::Add(p(0, 0.0, 1.0), p(1, 0.0, 1.0)));
        let g = f.renamed(&|s| (s == SourceId(1)).then_some(SourceId(7)));
        assert_eq!(g.sources().unwrap().0, vec![SourceId(0), SourceId(7)]);
    }
}
