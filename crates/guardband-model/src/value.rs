//! Evaluated values: nominal, guaranteed min/max bounds, and the stated
//! tolerances each value depends on.
//!
//! `lo`/`hi` come from interval arithmetic, so they bound every combination of
//! the inputs (signs handled; a divisor range that includes zero is an error).
//! Where a tolerance enters an expression more than once, interval arithmetic
//! overestimates; [`Value::tighten`] then evaluates the value's [`Form`] at
//! every corner of its tolerances, which is exact for values monotonic in each
//! of them. `terms` are first-order deviations per stated tolerance, which
//! lets the rules combine a window statistically (root-sum-square) and rank
//! contributors while a tolerance used twice stays correlated with itself.

use crate::FileId;
use crate::form::{Corners, Form, corner_bounds};
use guardband_syntax::Span;
use guardband_units::{QuantityKind, TempSense};
use std::sync::Arc;

/// Index of a stated tolerance in [`crate::Model::sources`].
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct SourceId(pub u32);

/// How a stated tolerance is spread between its extremes, for the
/// statistical window.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Spread {
    /// `± x`, `+a -b`: a normal distribution whose stated extremes are `k`
    /// standard deviations from its centre; `None` takes the configured
    /// `sigma`, `Some(k)` was written as `at k sigma`.
    Normal(Option<f64>),
    /// `lo .. hi`: a bound (corner data), not a normal distribution; the
    /// configuration says how it enters the statistical window.
    Range,
}

/// A tolerance or range as the user stated it, with where. Its name and
/// text are looked up when shown, so that stating one costs no strings.
#[derive(Debug, Clone, PartialEq)]
pub struct ToleranceSource {
    /// The block of the field it was stated in.
    pub node: crate::NodeId,
    /// The key of that field.
    pub key: compact_str::CompactString,
    pub file: FileId,
    /// The tolerance as written, e.g. `± 18 %`.
    pub span: Span,
    pub spread: Spread,
    /// Stated inside `local(...)`: each use of the field gets its own copy.
    pub local: bool,
    /// For a copy of a local part: the part it was copied from.
    pub copy_of: Option<SourceId>,
}

impl ToleranceSource {
    /// Dotted path of the field it was stated in, e.g. `probe_rail.sensed.reference`;
    /// a copy of a local part says whose part it is.
    pub fn label(&self, model: &crate::Model) -> String {
        let own = format!("{}.{}", model.node(self.node).path, self.key);
        match self.copy_of {
            Some(original) => format!(
                "{own} (its own local part of `{}`)",
                model.source(original).label(model)
            ),
            None => own,
        }
    }

    /// The text as written, e.g. `± 18 %`.
    pub fn text<'w>(&self, ws: &'w crate::Workspace) -> &'w str {
        ws.file(self.file).text.get(self.span.clone()).unwrap_or("")
    }
}

/// The first-order deviation of a value when one stated tolerance sits at its
/// low extreme (`low`) or its high extreme (`high`), in SI units.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Term {
    pub source: SourceId,
    pub low: f64,
    pub high: f64,
}

/// How a value's `lo` and `hi` were found, for hovers.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Bounds {
    /// Interval arithmetic; exact when each tolerance enters once.
    #[default]
    Interval,
    /// Evaluated at every corner of this many tolerances (one entered more
    /// than once, so interval arithmetic would overestimate).
    Corners(u8),
    /// Interval arithmetic kept because corner evaluation did not apply.
    Fallback(Corners),
}

impl Bounds {
    /// One sentence for hovers.
    pub fn describe(self) -> String {
        match self {
            Bounds::Interval => "interval arithmetic (exact: each tolerance enters once)".into(),
            Bounds::Corners(n) => format!(
                "evaluated at all {} corners of its {n} tolerances (one enters more than once)",
                1u32 << n
            ),
            Bounds::Fallback(Corners::TooMany) => {
                "interval arithmetic (a safe overestimate: too many tolerances for corner evaluation)"
                    .into()
            }
            Bounds::Fallback(_) => {
                "interval arithmetic (a safe overestimate: monotonicity in every tolerance could not be proved)"
                    .into()
            }
        }
    }
}

/// A quantity evaluated to nominal and bounds, in SI units.
#[derive(Debug, Clone, PartialEq)]
pub struct Value {
    pub kind: QuantityKind,
    pub nom: f64,
    pub lo: f64,
    pub hi: f64,
    pub terms: Vec<Term>,
    /// The unit the user wrote, used to show results back in it.
    pub unit: Option<compact_str::CompactString>,
    /// How the value depends on its tolerances; `None` for an exact value.
    pub form: Option<Arc<Form>>,
    /// How `lo` and `hi` were found.
    pub bounds: Bounds,
}

/// Why an operation on values is not defined.
#[derive(Debug, Clone, PartialEq)]
pub enum ValueError {
    /// Operands of `+`, `-`, `..`, `min`, `max` have different kinds.
    Mismatch {
        left: QuantityKind,
        right: QuantityKind,
    },
    /// An absolute temperature used where only differences make sense.
    AbsoluteTemperature(&'static str),
    /// `a / b` where `b`'s range includes zero.
    DivisorIncludesZero,
    /// `sqrt` of a range that goes below zero, or of an odd dimension.
    BadSqrt(&'static str),
    /// A tolerance that is neither relative nor in the value's kind.
    BadTolerance {
        base: QuantityKind,
        tolerance: QuantityKind,
    },
    /// A result that is not a finite number.
    NotFinite,
    /// A product or quotient whose unit powers leave the representable range.
    DimensionOverflow,
}

impl std::fmt::Display for ValueError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            ValueError::Mismatch { left, right } => write!(
                f,
                "cannot combine {} with {}",
                left.describe(),
                right.describe()
            ),
            ValueError::AbsoluteTemperature(why) => f.write_str(why),
            ValueError::DivisorIncludesZero => f.write_str("division by a range that includes zero"),
            ValueError::BadSqrt(why) => f.write_str(why),
            ValueError::BadTolerance { base, tolerance }
                if base.is_temperature() && base.temp == TempSense::Absolute && tolerance.dim.is_none() =>
            {
                f.write_str("a percentage of an absolute temperature depends on the temperature scale; give the tolerance in K")
            }
            ValueError::BadTolerance { base, tolerance } => write!(
                f,
                "a tolerance on {} must be relative (%, ppm) or {}, found {}",
                base.describe(),
                if base.is_temperature() {
                    "a temperature difference (K)".to_string()
                } else {
                    base.describe()
                },
                tolerance.describe()
            ),
            ValueError::NotFinite => f.write_str("the result is not a finite number"),
            ValueError::DimensionOverflow => f.write_str(
                "the unit of this product has a power beyond ±127 of a base unit",
            ),
        }
    }
}

type Result<T> = std::result::Result<T, ValueError>;

fn merge_terms(a: &[Term], ka: f64, b: &[Term], kb: f64) -> Vec<Term> {
    let mut out: Vec<Term> = Vec::with_capacity(a.len() + b.len());
    out.extend(a.iter().map(|t| Term {
        source: t.source,
        low: t.low * ka,
        high: t.high * ka,
    }));
    for t in b {
        match out.iter_mut().find(|o| o.source == t.source) {
            Some(o) => {
                o.low += t.low * kb;
                o.high += t.high * kb;
            }
            None => out.push(Term {
                source: t.source,
                low: t.low * kb,
                high: t.high * kb,
            }),
        }
    }
    out
}

fn scale_terms(a: &[Term], k: f64) -> Vec<Term> {
    merge_terms(a, k, &[], 0.0)
}

/// The form of a combination of two values; `None` when both are exact.
fn combine(a: &Value, b: &Value, make: fn(Arc<Form>, Arc<Form>) -> Form) -> Option<Arc<Form>> {
    if a.form.is_none() && b.form.is_none() {
        return None;
    }
    Some(Arc::new(make(a.form_or_const(), b.form_or_const())))
}

impl Value {
    /// An exact value (no tolerance).
    pub fn exact(kind: QuantityKind, si: f64) -> Value {
        Value {
            kind,
            nom: si,
            lo: si,
            hi: si,
            terms: Vec::new(),
            unit: None,
            form: None,
            bounds: Bounds::Interval,
        }
    }

    /// A range `lo .. hi` stated by the user: nominal at the middle, one source.
    pub fn range(kind: QuantityKind, lo: f64, hi: f64, source: SourceId) -> Value {
        let nom = (lo + hi) / 2.0;
        Value {
            kind,
            nom,
            lo,
            hi,
            terms: vec![Term {
                source,
                low: lo - nom,
                high: hi - nom,
            }],
            unit: None,
            form: Some(Arc::new(Form::Param { source, lo, hi })),
            bounds: Bounds::Interval,
        }
    }

    /// A bare tolerance `± x` (or a spread): zero nominal, `-down .. up`.
    pub fn spread(kind: QuantityKind, down: f64, up: f64, source: SourceId) -> Value {
        Value {
            kind,
            nom: 0.0,
            lo: -down,
            hi: up,
            terms: vec![Term {
                source,
                low: -down,
                high: up,
            }],
            unit: None,
            form: Some(Arc::new(Form::Param {
                source,
                lo: -down,
                hi: up,
            })),
            bounds: Bounds::Interval,
        }
    }

    /// True when no tolerance or range was stated anywhere upstream.
    pub fn is_exact(&self) -> bool {
        self.lo == self.hi && self.terms.is_empty()
    }

    /// The form, or the constant nominal for an exact value.
    pub fn form_or_const(&self) -> Arc<Form> {
        match &self.form {
            Some(f) => Arc::clone(f),
            None => Arc::new(Form::Const(self.nom)),
        }
    }

    /// The value at one point of its tolerances (`u` in `-1 ..= 1` at the
    /// stated extremes of each).
    pub fn at(&self, u: &dyn Fn(SourceId) -> f64) -> f64 {
        match &self.form {
            Some(f) => f.eval(u),
            None => self.nom,
        }
    }

    /// Narrows `lo`/`hi` to the extremes over the corners of the value's
    /// tolerances when one of them enters more than once (interval
    /// arithmetic then overestimates) and the value is monotonic in each;
    /// otherwise the interval bounds stay. Never widens the bounds.
    pub fn tighten(&mut self) {
        let Some(form) = &self.form else { return };
        let Some((sources, repeated)) = form.sources() else {
            self.bounds = Bounds::Fallback(Corners::TooMany);
            return;
        };
        if !repeated {
            return;
        }
        match corner_bounds(form, &sources) {
            Ok((lo, hi)) => {
                // Corners lie inside the sound interval; clamping only removes rounding.
                self.lo = lo.max(self.lo);
                self.hi = hi.min(self.hi);
                if self.lo > self.hi {
                    let mid = (lo + hi) / 2.0;
                    self.lo = mid;
                    self.hi = mid;
                }
                self.bounds = Bounds::Corners(sources.len() as u8);
            }
            Err(why) => self.bounds = Bounds::Fallback(why),
        }
    }

    fn check(self) -> Result<Value> {
        if self.nom.is_finite() && self.lo.is_finite() && self.hi.is_finite() {
            Ok(self)
        } else {
            Err(ValueError::NotFinite)
        }
    }

    fn additive_kind(a: QuantityKind, b: QuantityKind, subtract: bool) -> Result<QuantityKind> {
        if a.dim != b.dim {
            return Err(ValueError::Mismatch { left: a, right: b });
        }
        if !a.is_temperature() {
            return Ok(a);
        }
        use TempSense::*;
        let temp = match (a.temp, b.temp, subtract) {
            (Absolute, Absolute, false) => {
                return Err(ValueError::AbsoluteTemperature(
                    "two absolute temperatures cannot be added; one of them should be a difference (K)",
                ));
            }
            (Absolute, Absolute, true) => Difference,
            (Absolute, _, _) => Absolute,
            (_, Absolute, false) => Absolute,
            (_, Absolute, true) => {
                return Err(ValueError::AbsoluteTemperature(
                    "an absolute temperature cannot be subtracted from a difference",
                ));
            }
            (Either, Either, _) => Either,
            _ => Difference,
        };
        Ok(QuantityKind { dim: a.dim, temp })
    }

    fn no_absolute(&self, what: &'static str) -> Result<()> {
        if self.kind.is_temperature() && self.kind.temp == TempSense::Absolute {
            Err(ValueError::AbsoluteTemperature(what))
        } else {
            Ok(())
        }
    }

    /// `self + other`.
    pub fn add(&self, other: &Value) -> Result<Value> {
        Value {
            kind: Self::additive_kind(self.kind, other.kind, false)?,
            nom: self.nom + other.nom,
            lo: self.lo + other.lo,
            hi: self.hi + other.hi,
            terms: merge_terms(&self.terms, 1.0, &other.terms, 1.0),
            unit: self.unit.clone().or_else(|| other.unit.clone()),
            form: combine(self, other, Form::Add),
            bounds: Bounds::Interval,
        }
        .check()
    }

    /// `self - other`.
    pub fn sub(&self, other: &Value) -> Result<Value> {
        let kind = Self::additive_kind(self.kind, other.kind, true)?;
        let unit = if kind.temp == TempSense::Difference && self.kind.temp == TempSense::Absolute {
            Some("K".into())
        } else {
            self.unit.clone().or_else(|| other.unit.clone())
        };
        Value {
            kind,
            nom: self.nom - other.nom,
            lo: self.lo - other.hi,
            hi: self.hi - other.lo,
            terms: merge_terms(&self.terms, 1.0, &other.terms, -1.0),
            unit,
            form: combine(self, other, Form::Sub),
            bounds: Bounds::Interval,
        }
        .check()
    }

    /// `-self`.
    pub fn neg(&self) -> Result<Value> {
        self.no_absolute(
            "an absolute temperature cannot be negated; write the minus sign on the number",
        )?;
        Value {
            kind: self.kind,
            nom: -self.nom,
            lo: -self.hi,
            hi: -self.lo,
            terms: scale_terms(&self.terms, -1.0),
            unit: self.unit.clone(),
            form: self
                .form
                .as_ref()
                .map(|f| Arc::new(Form::Neg(Arc::clone(f)))),
            bounds: Bounds::Interval,
        }
        .check()
    }

    fn product_kind(a: QuantityKind, b: QuantityKind, divide: bool) -> Result<QuantityKind> {
        let dim = if divide {
            a.dim.checked_per(b.dim)
        } else {
            a.dim.checked_times(b.dim)
        }
        .ok_or(ValueError::DimensionOverflow)?;
        let temp = if dim.is_none() || dim != guardband_units::Dimension::TEMPERATURE {
            TempSense::Difference
        } else if a.temp == TempSense::Either || b.temp == TempSense::Either {
            TempSense::Either
        } else {
            TempSense::Difference
        };
        Ok(QuantityKind { dim, temp })
    }

    fn kept_unit(&self, other: &Value) -> Option<compact_str::CompactString> {
        if other.kind.dim.is_none() {
            self.unit.clone()
        } else if self.kind.dim.is_none() {
            other.unit.clone()
        } else {
            None
        }
    }

    /// `self * other`; bounds are the extremes of the four corner products.
    pub fn mul(&self, other: &Value) -> Result<Value> {
        self.no_absolute("an absolute temperature cannot be multiplied; use a difference (K)")?;
        other.no_absolute("an absolute temperature cannot be multiplied; use a difference (K)")?;
        let corners = [
            self.lo * other.lo,
            self.lo * other.hi,
            self.hi * other.lo,
            self.hi * other.hi,
        ];
        Value {
            kind: Self::product_kind(self.kind, other.kind, false)?,
            nom: self.nom * other.nom,
            lo: corners.iter().copied().fold(f64::INFINITY, f64::min),
            hi: corners.iter().copied().fold(f64::NEG_INFINITY, f64::max),
            terms: merge_terms(&self.terms, other.nom, &other.terms, self.nom),
            unit: self.kept_unit(other),
            form: combine(self, other, Form::Mul),
            bounds: Bounds::Interval,
        }
        .check()
    }

    /// `self / other`; an error when `other`'s range includes zero.
    pub fn div(&self, other: &Value) -> Result<Value> {
        self.no_absolute("an absolute temperature cannot be divided; use a difference (K)")?;
        other.no_absolute("cannot divide by an absolute temperature; use a difference (K)")?;
        if other.lo <= 0.0 && other.hi >= 0.0 {
            return Err(ValueError::DivisorIncludesZero);
        }
        let kind = Self::product_kind(self.kind, other.kind, true)?;
        let inv = [1.0 / other.hi, 1.0 / other.lo];
        let corners = [
            self.lo * inv[0],
            self.lo * inv[1],
            self.hi * inv[0],
            self.hi * inv[1],
        ];
        let inv_nom = 1.0 / other.nom;
        Value {
            kind,
            nom: self.nom * inv_nom,
            lo: corners.iter().copied().fold(f64::INFINITY, f64::min),
            hi: corners.iter().copied().fold(f64::NEG_INFINITY, f64::max),
            terms: merge_terms(
                &self.terms,
                inv_nom,
                &other.terms,
                -self.nom * inv_nom * inv_nom,
            ),
            unit: if other.kind.dim.is_none() {
                self.unit.clone()
            } else {
                None
            },
            form: combine(self, other, Form::Div),
            bounds: Bounds::Interval,
        }
        .check()
    }

    /// The smaller of two values, bound by bound.
    pub fn min(&self, other: &Value) -> Result<Value> {
        let kind = self.same_kind(other)?;
        let pick = if self.nom <= other.nom { self } else { other };
        Value {
            kind,
            nom: self.nom.min(other.nom),
            lo: self.lo.min(other.lo),
            hi: self.hi.min(other.hi),
            terms: pick.terms.clone(),
            unit: self.unit.clone().or_else(|| other.unit.clone()),
            form: combine(self, other, Form::Min),
            bounds: Bounds::Interval,
        }
        .check()
    }

    /// The larger of two values, bound by bound.
    pub fn max(&self, other: &Value) -> Result<Value> {
        let kind = self.same_kind(other)?;
        let pick = if self.nom >= other.nom { self } else { other };
        Value {
            kind,
            nom: self.nom.max(other.nom),
            lo: self.lo.max(other.lo),
            hi: self.hi.max(other.hi),
            terms: pick.terms.clone(),
            unit: self.unit.clone().or_else(|| other.unit.clone()),
            form: combine(self, other, Form::Max),
            bounds: Bounds::Interval,
        }
        .check()
    }

    fn same_kind(&self, other: &Value) -> Result<QuantityKind> {
        if self.kind.fits(other.kind) {
            Ok(if self.kind.temp == TempSense::Either {
                other.kind
            } else {
                self.kind
            })
        } else {
            Err(ValueError::Mismatch {
                left: self.kind,
                right: other.kind,
            })
        }
    }

    /// `|self|`; a range that crosses zero has a low bound of zero.
    pub fn abs(&self) -> Result<Value> {
        self.no_absolute(
            "`abs` of an absolute temperature depends on the scale; use a difference",
        )?;
        let (lo, hi) = if self.lo >= 0.0 {
            (self.lo, self.hi)
        } else if self.hi <= 0.0 {
            (-self.hi, -self.lo)
        } else {
            (0.0, self.hi.max(-self.lo))
        };
        let sign = if self.nom < 0.0 { -1.0 } else { 1.0 };
        Value {
            kind: self.kind,
            nom: self.nom.abs(),
            lo,
            hi,
            terms: scale_terms(&self.terms, sign),
            unit: self.unit.clone(),
            form: self
                .form
                .as_ref()
                .map(|f| Arc::new(Form::Abs(Arc::clone(f)))),
            bounds: Bounds::Interval,
        }
        .check()
    }

    /// `sqrt(self)`; needs even exponents and a range that stays at or above zero.
    pub fn sqrt(&self) -> Result<Value> {
        self.no_absolute("`sqrt` of an absolute temperature depends on the scale")?;
        let dim = self.kind.dim.sqrt().ok_or(ValueError::BadSqrt(
            "the square root of this unit has fractional powers",
        ))?;
        if self.lo < 0.0 {
            return Err(ValueError::BadSqrt(
                "square root of a range that goes below zero",
            ));
        }
        let root = self.nom.sqrt();
        let slope = if root > 0.0 { 0.5 / root } else { 0.0 };
        Value {
            kind: QuantityKind::of(dim),
            nom: root,
            lo: self.lo.sqrt(),
            hi: self.hi.sqrt(),
            terms: scale_terms(&self.terms, slope),
            unit: None,
            form: self
                .form
                .as_ref()
                .map(|f| Arc::new(Form::Sqrt(Arc::clone(f)))),
            bounds: Bounds::Interval,
        }
        .check()
    }

    /// Applies a stated tolerance: relative (`tol` dimensionless, a
    /// fraction) or absolute (`tol` of the value's kind). `up` and `down`
    /// are magnitudes; the tolerance becomes the new source `source`.
    pub fn with_tolerance(
        &self,
        tol_kind: QuantityKind,
        up: f64,
        down: f64,
        source: SourceId,
    ) -> Result<Value> {
        let spread = Value::spread(QuantityKind::NONE, down, up, source);
        if tol_kind.dim.is_none() {
            if self.kind.is_temperature() && self.kind.temp == TempSense::Absolute {
                return Err(ValueError::BadTolerance {
                    base: self.kind,
                    tolerance: tol_kind,
                });
            }
            self.scaled_by(&spread)
        } else if tol_kind.dim == self.kind.dim
            && (!tol_kind.is_temperature() || tol_kind.temp != TempSense::Absolute)
        {
            self.shifted_by(&Value {
                kind: tol_kind,
                ..spread
            })
        } else {
            Err(ValueError::BadTolerance {
                base: self.kind,
                tolerance: tol_kind,
            })
        }
    }

    /// `self · (1 + spread)`: a relative spread that keeps its own sources,
    /// so that two values toleranced by the same spread stay correlated.
    pub fn scaled_by(&self, spread: &Value) -> Result<Value> {
        if self.kind.is_temperature() && self.kind.temp == TempSense::Absolute {
            return Err(ValueError::BadTolerance {
                base: self.kind,
                tolerance: spread.kind,
            });
        }
        let one_plus = Value::exact(QuantityKind::NONE, 1.0).add(spread)?;
        let mut out = self.mul(&one_plus)?;
        out.kind = self.kind;
        out.unit = self.unit.clone();
        out.check()
    }

    /// `self + spread`: a spread in the value's own unit, keeping its sources.
    pub fn shifted_by(&self, spread: &Value) -> Result<Value> {
        let mut out = self.add(spread)?;
        out.kind = self.kind;
        out.unit = self.unit.clone();
        out.check()
    }

    /// A fixed corner of this value (`.min`, `.nom`, `.max`), with no tolerance left.
    pub fn corner(&self, which: Corner) -> Value {
        let si = match which {
            Corner::Min => self.lo,
            Corner::Nom => self.nom,
            Corner::Max => self.hi,
        };
        Value {
            unit: self.unit.clone(),
            ..Value::exact(self.kind, si)
        }
    }

    /// The same value with each tolerance renamed by `map` (others kept).
    pub fn renamed(&self, map: &dyn Fn(SourceId) -> Option<SourceId>) -> Value {
        Value {
            terms: self
                .terms
                .iter()
                .map(|t| Term {
                    source: map(t.source).unwrap_or(t.source),
                    ..*t
                })
                .collect(),
            form: self.form.as_ref().map(|f| f.renamed(map)),
            ..self.clone()
        }
    }
}

/// The accessors `.min`, `.nom`, `.max`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Corner {
    Min,
    Nom,
    Max,
}

#[cfg(test)]
mod tests {
    use super::*;
    use guardband_units::Dimension;

    fn r(lo: f64, hi: f64, id: u32) -> Value {
        Value::range(QuantityKind::CURRENT, lo, hi, SourceId(id))
    }
    fn n(lo: f64, hi: f64, id: u32) -> Value {
        Value::range(QuantityKind::NONE, lo, hi, SourceId(id))
    }

    #[test]
    fn multiplication_crossing_zero() {
        let a = n(-2.0, 3.0, 0);
        let b = n(-5.0, 4.0, 1);
        let p = a.mul(&b).unwrap();
        assert_eq!((p.lo, p.hi), (-15.0, 12.0));
        let c = n(-3.0, -1.0, 2);
        let q = a.mul(&c).unwrap();
        assert_eq!((q.lo, q.hi), (-9.0, 6.0));
    }

    #[test]
    fn division_by_range_with_zero_is_an_error() {
        let a = r(1.0, 2.0, 0);
        assert_eq!(
            a.div(&n(-1.0, 1.0, 1)),
            Err(ValueError::DivisorIncludesZero)
        );
        assert_eq!(a.div(&n(0.0, 1.0, 1)), Err(ValueError::DivisorIncludesZero));
        let q = a.div(&n(2.0, 4.0, 1)).unwrap();
        assert_eq!((q.lo, q.hi), (0.25, 1.0));
        let neg = a.div(&n(-4.0, -2.0, 1)).unwrap();
        assert_eq!((neg.lo, neg.hi), (-1.0, -0.25));
    }

    #[test]
    fn relative_tolerance_and_correlated_terms() {
        let reference = Value::exact(QuantityKind::CURRENT, 45e-6)
            .with_tolerance(QuantityKind::NONE, 0.18, 0.18, SourceId(7))
            .unwrap();
        assert!((reference.lo - 36.9e-6).abs() < 1e-12);
        assert!((reference.hi - 53.1e-6).abs() < 1e-12);
        // reference - reference is exactly zero in first order: the term cancels.
        let zero = reference.sub(&reference).unwrap();
        assert!(
            zero.terms
                .iter()
                .all(|t| t.low.abs() < 1e-18 && t.high.abs() < 1e-18)
        );
        // ... while the guaranteed bounds stay conservative.
        assert!(zero.hi > 0.0);
    }

    #[test]
    fn temperatures_follow_affine_rules() {
        let t_abs = Value::exact(QuantityKind::ABSOLUTE_TEMPERATURE, 343.15);
        let rise = Value::exact(QuantityKind::TEMPERATURE_DIFFERENCE, 40.0);
        assert_eq!(
            t_abs.add(&rise).unwrap().kind,
            QuantityKind::ABSOLUTE_TEMPERATURE
        );
        assert_eq!(
            t_abs.sub(&t_abs).unwrap().kind,
            QuantityKind::TEMPERATURE_DIFFERENCE
        );
        assert!(t_abs.add(&t_abs).is_err());
        assert!(t_abs.mul(&Value::exact(QuantityKind::NONE, 2.0)).is_err());
        assert!(
            t_abs
                .with_tolerance(QuantityKind::NONE, 0.1, 0.1, SourceId(0))
                .is_err()
        );
        let theta = Value::exact(QuantityKind::of(Dimension::THERMAL_RESISTANCE), 85.0);
        let p = Value::exact(QuantityKind::of(Dimension::POWER), 0.5);
        let dt = theta.mul(&p).unwrap();
        assert_eq!(dt.kind, QuantityKind::TEMPERATURE_DIFFERENCE);
        assert_eq!(t_abs.add(&dt).unwrap().nom, 343.15 + 42.5);
    }

    #[test]
    fn abs_and_sqrt() {
        let a = n(-2.0, 3.0, 0).abs().unwrap();
        assert_eq!((a.lo, a.hi), (0.0, 3.0));
        let area = Value::exact(QuantityKind::of(Dimension::AREA), 4.0);
        assert_eq!(area.sqrt().unwrap().kind.dim, Dimension::LENGTH);
        assert!(n(-1.0, 1.0, 0).sqrt().is_err());
        assert!(Value::exact(QuantityKind::CURRENT, 1.0).sqrt().is_err());
    }

    // The example of a repeated tolerance: ratio · reference / reference ·
    // reference with reference 200 uA ± 18 % (164 .. 236 uA) and ratio 1000
    // is physically 164 .. 236 mA, where interval arithmetic gives
    // 164·164/236 .. 236·236/164 mA = 114 .. 340 mA (hand calculation).
    #[test]
    fn a_repeated_tolerance_is_bounded_exactly() {
        let reference = Value::exact(QuantityKind::CURRENT, 200e-6)
            .with_tolerance(QuantityKind::NONE, 0.18, 0.18, SourceId(0))
            .unwrap();
        let ratio = Value::exact(QuantityKind::NONE, 1000.0);
        let mut v = ratio
            .mul(&reference)
            .and_then(|x| x.div(&reference))
            .and_then(|x| x.mul(&reference))
            .unwrap();
        assert!((v.lo - 0.164 * 0.164 / 0.236).abs() < 1e-9);
        assert!((v.hi - 0.236 * 0.236 / 0.164).abs() < 1e-9);
        v.tighten();
        assert_eq!(v.bounds, Bounds::Corners(1));
        assert!((v.lo - 0.164).abs() < 1e-12 && (v.hi - 0.236).abs() < 1e-12);
    }

    #[test]
    fn a_shared_spread_stays_correlated() {
        // Two values toleranced by one spread: their ratio does not spread.
        let spread = Value::spread(QuantityKind::NONE, 0.1, 0.1, SourceId(0));
        let a = Value::exact(QuantityKind::CURRENT, 1.0)
            .scaled_by(&spread)
            .unwrap();
        let b = Value::exact(QuantityKind::CURRENT, 2.0)
            .scaled_by(&spread)
            .unwrap();
        let mut r = a.div(&b).unwrap();
        r.tighten();
        assert!((r.lo - 0.5).abs() < 1e-12 && (r.hi - 0.5).abs() < 1e-12);
        assert!(
            r.terms
                .iter()
                .all(|t| t.low.abs() < 1e-15 && t.high.abs() < 1e-15)
        );
    }

    #[test]
    fn adding_mismatched_kinds_fails() {
        let v = Value::exact(QuantityKind::VOLTAGE, 1.0);
        let i = Value::exact(QuantityKind::CURRENT, 1.0);
        assert!(matches!(v.add(&i), Err(ValueError::Mismatch { .. })));
    }
}

#[cfg(test)]
mod properties {
    //! Interval arithmetic is sound (every combination of points inside the
    //! operands lands inside the result) and, for independent operands of
    //! `+`, `-`, `*`, `/`, `min` and `max`, tight (the bounds are reached).
    use super::*;
    use proptest::prelude::*;

    fn ranged(source: u32) -> impl Strategy<Value = Value> {
        (-1e3f64..1e3, 0.0f64..1e3).prop_map(move |(lo, width)| {
            Value::range(QuantityKind::NONE, lo, lo + width, SourceId(source))
        })
    }

    fn at(v: &Value, t: f64) -> f64 {
        v.lo + (v.hi - v.lo) * t
    }

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= 1e-9 * (1.0 + a.abs().max(b.abs()))
    }

    type Op = (
        &'static str,
        fn(&Value, &Value) -> Result<Value>,
        fn(f64, f64) -> f64,
    );

    const OPS: &[Op] = &[
        ("add", Value::add, |x, y| x + y),
        ("sub", Value::sub, |x, y| x - y),
        ("mul", Value::mul, |x, y| x * y),
        ("div", Value::div, |x, y| x / y),
        ("min", Value::min, f64::min),
        ("max", Value::max, f64::max),
    ];

    proptest! {
        #![proptest_config(ProptestConfig::with_cases(512))]

        #[test]
        fn binary_operations_are_sound_and_tight(
            a in ranged(0),
            b in ranged(1),
            op in 0..OPS.len(),
            points in proptest::collection::vec((0.0f64..=1.0, 0.0f64..=1.0), 16),
        ) {
            let (name, apply, point) = OPS[op];
            let Ok(r) = apply(&a, &b) else {
                // Only division by a range holding zero is refused.
                prop_assert!(name == "div" && b.lo <= 0.0 && b.hi >= 0.0);
                return Ok(());
            };
            for (s, t) in points {
                let y = point(at(&a, s), at(&b, t));
                prop_assert!(r.lo - 1e-9 * (1.0 + y.abs()) <= y && y <= r.hi + 1e-9 * (1.0 + y.abs()),
                    "{name}: {y} outside {}..{}", r.lo, r.hi);
            }
            // Independent operands: the extremes are at corners, so the bounds are reached.
            let corners = [(a.lo, b.lo), (a.lo, b.hi), (a.hi, b.lo), (a.hi, b.hi)]
                .map(|(x, y)| point(x, y));
            let lo = corners.iter().copied().fold(f64::INFINITY, f64::min);
            let hi = corners.iter().copied().fold(f64::NEG_INFINITY, f64::max);
            prop_assert!(close(r.lo, lo) && close(r.hi, hi), "{name}: {}..{} vs corners {lo}..{hi}", r.lo, r.hi);
        }

        #[test]
        fn nested_expressions_stay_sound(
            a in ranged(0),
            b in ranged(1),
            c in ranged(2),
            points in proptest::collection::vec((0.0f64..=1.0, 0.0f64..=1.0, 0.0f64..=1.0), 16),
        ) {
            // (a + b) * c - a: `a` appears twice, so the result may be wider than
            // the true range, but never narrower.
            let r = a.add(&b).and_then(|s| s.mul(&c)).and_then(|p| p.sub(&a)).expect("defined");
            for (s, t, u) in points {
                let (x, y, z) = (at(&a, s), at(&b, t), at(&c, u));
                let v = (x + y) * z - x;
                let slack = 1e-9 * (1.0 + v.abs());
                prop_assert!(r.lo - slack <= v && v <= r.hi + slack);
            }
        }

        #[test]
        fn corner_bounds_are_never_wider_and_never_exclude_a_point(
            ops in proptest::collection::vec((0usize..3, 0usize..4), 1..6),
            ranges in proptest::collection::vec((0.5f64..5.0, 0.0f64..0.8), 3),
            points in proptest::collection::vec(proptest::collection::vec(-1.0f64..=1.0, 3), 24),
        ) {
            // Positive ranges, so no division by zero; sources repeat freely.
            let leaf = |i: usize| {
                let (lo, w) = ranges[i];
                Value::range(QuantityKind::NONE, lo, lo * (1.0 + w), SourceId(i as u32))
            };
            let mut v = leaf(0);
            for (source, op) in &ops {
                let x = leaf(*source);
                v = match op {
                    0 => v.add(&x),
                    1 => v.mul(&x),
                    2 => v.div(&x),
                    _ => v.sub(&x).and_then(|d| d.add(&x)).and_then(|d| d.add(&x)),
                }
                .expect("defined on positive ranges");
            }
            let interval = (v.lo, v.hi);
            let mut t = v.clone();
            t.tighten();
            prop_assert!(t.lo >= interval.0 - 1e-12 * interval.0.abs().max(1.0));
            prop_assert!(t.hi <= interval.1 + 1e-12 * interval.1.abs().max(1.0));
            for u in &points {
                let y = v.at(&|s| u[s.0 as usize]);
                let slack = 1e-9 * (1.0 + y.abs());
                prop_assert!(t.lo - slack <= y && y <= t.hi + slack,
                    "{y} outside {}..{} ({:?})", t.lo, t.hi, t.bounds);
            }
        }

        #[test]
        fn abs_and_sqrt_are_sound(a in ranged(0), t in 0.0f64..=1.0) {
            let x = at(&a, t);
            let r = a.abs().expect("abs");
            prop_assert!(r.lo - 1e-9 <= x.abs() && x.abs() <= r.hi + 1e-9);
            if a.lo >= 0.0 {
                let s = a.sqrt().expect("sqrt of a non-negative range");
                prop_assert!(s.lo - 1e-9 <= x.sqrt() && x.sqrt() <= s.hi + 1e-9);
            }
        }
    }
}
