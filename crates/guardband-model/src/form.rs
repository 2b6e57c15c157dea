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

    /// The same node with each child replaced by `f(child)`; a leaf as it is.
    fn with_children(&self, f: &dyn Fn(&Arc<Form>) -> Arc<Form>) -> Form {
        match self {
            Form::Const(_) | Form::Param { .. } => self.clone(),
            Form::Add(a, b) => Form::Add(f(a), f(b)),
            Form::Sub(a, b) => Form::Sub(f(a), f(b)),
            Form::Mul(a, b) => Form::Mul(f(a), f(b)),
            Form::Div(a, b) => Form::Div(f(a), f(b)),
            Form::Min(a, b) => Form::Min(f(a), f(b)),
            Form::Max(a, b) => Form::Max(f(a), f(b)),
            Form::Neg(a) => Form::Neg(f(a)),
            Form::Abs(a) => Form::Abs(f(a)),
            Form::Sqrt(a) => Form::Sqrt(f(a)),
        }
    }

    /// The same form with each tolerance renamed by `map` (unmapped ones kept).
    pub fn renamed(self: &Arc<Form>, map: &dyn Fn(SourceId) -> Option<SourceId>) -> Arc<Form> {
        match &**self {
            Form::Const(_) => Arc::clone(self),
            Form::Param { source, lo, hi } => match map(*source) {
                Some(s) => Arc::new(Form::Param {
                    source: s,
                    lo: *lo,
                    hi: *hi,
                }),
                None => Arc::clone(self),
            },
            other => Arc::new(other.with_children(&|c| c.renamed(map))),
        }
    }
}

/// A product of factors: a constant, and each factor (compared as a form)
/// with its power.
fn factors(form: &Arc<Form>, power: i32, constant: &mut f64, out: &mut Vec<(Arc<Form>, i32)>) {
    match &**form {
        Form::Const(c) if power == 1 => *constant *= c,
        Form::Const(c) if power == -1 && *c != 0.0 => *constant /= c,
        Form::Mul(a, b) => {
            factors(a, power, constant, out);
            factors(b, power, constant, out);
        }
        Form::Div(a, b) => {
            factors(a, power, constant, out);
            factors(b, -power, constant, out);
        }
        _ => match out.iter_mut().find(|(f, _)| **f == **form) {
            Some((_, p)) => *p += power,
            None => out.push((Arc::clone(form), power)),
        },
    }
}

/// `form` with equal factors of each product or quotient cancelled, the
/// parts below rewritten the same way; the same function wherever `form`
/// is defined.
fn cancel(form: &Form) -> Arc<Form> {
    if !matches!(form, Form::Mul(..) | Form::Div(..)) {
        return Arc::new(form.with_children(&|c| cancel(c)));
    }
    let (mut constant, mut list) = (1.0, Vec::new());
    factors(&Arc::new(form.clone()), 1, &mut constant, &mut list);
    let mut out = Arc::new(Form::Const(constant));
    for (factor, power) in list {
        let factor = cancel(&factor);
        for _ in 0..power.unsigned_abs() {
            out = Arc::new(if power > 0 {
                Form::Mul(out, Arc::clone(&factor))
            } else {
                Form::Div(out, Arc::clone(&factor))
            });
        }
    }
    out
}

/// A closed interval `(lo, hi)`.
type Iv = (f64, f64);

fn iv_add(a: Iv, b: Iv) -> Iv {
    (a.0 + b.0, a.1 + b.1)
}

fn iv_neg(a: Iv) -> Iv {
    (-a.1, -a.0)
}

fn iv_mul(a: Iv, b: Iv) -> Iv {
    let p = [a.0 * b.0, a.0 * b.1, a.1 * b.0, a.1 * b.1];
    (
        p.iter().copied().fold(f64::INFINITY, f64::min),
        p.iter().copied().fold(f64::NEG_INFINITY, f64::max),
    )
}

fn iv_hull(a: Iv, b: Iv) -> Iv {
    (a.0.min(b.0), a.1.max(b.1))
}

/// The value of `form` and its derivative along tolerance `wrt` (per unit
/// of `u`), each enclosed over the whole box `u ∈ [-1, 1]` by interval
/// arithmetic (forward-mode differentiation on intervals). `None` where an
/// enclosure is not finite (a divisor or a square root that can reach zero).
fn slope(form: &Form, wrt: SourceId) -> Option<(Iv, Iv)> {
    let finite = |(v, d): (Iv, Iv)| {
        [v.0, v.1, d.0, d.1]
            .iter()
            .all(|x| x.is_finite())
            .then_some((v, d))
    };
    let out = match form {
        Form::Const(c) => ((*c, *c), (0.0, 0.0)),
        Form::Param { source, lo, hi } => {
            let half = (hi - lo) / 2.0;
            let d = if *source == wrt { half } else { 0.0 };
            ((lo.min(*hi), lo.max(*hi)), (d, d))
        }
        Form::Add(a, b) => {
            let ((va, da), (vb, db)) = (slope(a, wrt)?, slope(b, wrt)?);
            (iv_add(va, vb), iv_add(da, db))
        }
        Form::Sub(a, b) => {
            let ((va, da), (vb, db)) = (slope(a, wrt)?, slope(b, wrt)?);
            (iv_add(va, iv_neg(vb)), iv_add(da, iv_neg(db)))
        }
        Form::Mul(a, b) => {
            let ((va, da), (vb, db)) = (slope(a, wrt)?, slope(b, wrt)?);
            (iv_mul(va, vb), iv_add(iv_mul(da, vb), iv_mul(va, db)))
        }
        Form::Div(a, b) => {
            let ((va, da), (vb, db)) = (slope(a, wrt)?, slope(b, wrt)?);
            if vb.0 <= 0.0 && vb.1 >= 0.0 {
                return None;
            }
            let inv = (1.0 / vb.1, 1.0 / vb.0);
            let inv2 = iv_mul(inv, inv);
            // (a / b)' = (a' b − a b') / b²
            let num = iv_add(iv_mul(da, vb), iv_neg(iv_mul(va, db)));
            (iv_mul(va, inv), iv_mul(num, inv2))
        }
        Form::Neg(a) => {
            let (v, d) = slope(a, wrt)?;
            (iv_neg(v), iv_neg(d))
        }
        Form::Min(a, b) | Form::Max(a, b) => {
            let ((va, da), (vb, db)) = (slope(a, wrt)?, slope(b, wrt)?);
            let min = matches!(form, Form::Min(..));
            // Where one side always wins, its slope; else either side's.
            let (first_wins, second_wins) = if min {
                (va.1 <= vb.0, vb.1 <= va.0)
            } else {
                (va.0 >= vb.1, vb.0 >= va.1)
            };
            let v = if min {
                (va.0.min(vb.0), va.1.min(vb.1))
            } else {
                (va.0.max(vb.0), va.1.max(vb.1))
            };
            let d = if first_wins {
                da
            } else if second_wins {
                db
            } else {
                iv_hull(da, db)
            };
            (v, d)
        }
        Form::Abs(a) => {
            let (v, d) = slope(a, wrt)?;
            if v.0 >= 0.0 {
                (v, d)
            } else if v.1 <= 0.0 {
                (iv_neg(v), iv_neg(d))
            } else {
                ((0.0, v.1.max(-v.0)), iv_hull(d, iv_neg(d)))
            }
        }
        Form::Sqrt(a) => {
            let (v, d) = slope(a, wrt)?;
            if v.0 <= 0.0 {
                return None;
            }
            let root = (v.0.sqrt(), v.1.sqrt());
            let k = (0.5 / root.1, 0.5 / root.0);
            (root, iv_mul(d, k))
        }
    };
    finite(out)
}

/// Why corner evaluation was not used, or how many corners it took.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Corners {
    /// Bounds over every corner of these many tolerances.
    Exact(usize),
    /// More tolerances than [`MAX_CORNER_SOURCES`], or a form too large.
    TooMany,
    /// Monotonicity in some tolerance could not be proved (the enclosure of
    /// its derivative over the box spans zero), so the extremes may lie
    /// inside the box: interval bounds are kept.
    NotMonotonic,
}

/// The smallest and largest value of `form` over the corners of its
/// tolerances, when it is proved monotonic in each over the whole box (then
/// the corners hold its extremes).
pub fn corner_bounds(form: &Form, sources: &[SourceId]) -> Result<(f64, f64), Corners> {
    let n = sources.len();
    if n > MAX_CORNER_SOURCES {
        return Err(Corners::TooMany);
    }
    // Equal factors above and below a fraction cancel first (`a·s / (b·s)`
    // is `a / b` wherever the divisor is not zero, which evaluation already
    // requires): interval arithmetic cannot see that they move together.
    let simplified = cancel(form);
    let form = &*simplified;
    let index = |s: SourceId| sources.iter().position(|x| *x == s);
    // Monotonicity proof: the derivative along each tolerance, enclosed by
    // interval arithmetic over the whole box, must keep one sign. Then the
    // extremes lie at corners; otherwise they may lie inside the box.
    for &source in sources {
        match slope(form, source) {
            Some((_, d)) if d.0 >= 0.0 || d.1 <= 0.0 => {}
            _ => return Err(Corners::NotMonotonic),
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
    fn an_extreme_inside_the_box_keeps_the_interval_bounds() {
        // 2a/b + b has its least value where b = sqrt(2a), inside the box
        // for these ranges (found by the property test): the corners would
        // miss it, so monotonicity must be proved, not sampled.
        let a = p(0, 1.750_710_035_571_302_6, 2.815_970_523_6);
        let b = p(1, 1.354_985_728_847_007, 2.016_905_4);
        let two_a = Arc::new(Form::Add(Arc::clone(&a), Arc::clone(&a)));
        let f = Form::Add(Arc::new(Form::Div(two_a, Arc::clone(&b))), b);
        let sources = [SourceId(0), SourceId(1)];
        assert_eq!(corner_bounds(&f, &sources), Err(Corners::NotMonotonic));
    }

    #[test]
    fn equal_factors_cancel_before_the_proof() {
        // (1 + s) / (2 · (1 + s)) is 0.5 everywhere the divisor is not zero.
        let one_plus = Arc::new(Form::Add(Arc::new(Form::Const(1.0)), p(0, -0.1, 0.1)));
        let below = Arc::new(Form::Mul(Arc::new(Form::Const(2.0)), Arc::clone(&one_plus)));
        let f = Form::Div(one_plus, below);
        let (lo, hi) = corner_bounds(&f, &[SourceId(0)]).expect("proved");
        assert!((lo - 0.5).abs() < 1e-15 && (hi - 0.5).abs() < 1e-15);
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
