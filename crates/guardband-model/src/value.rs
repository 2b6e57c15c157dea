//! Evaluated values: nominal, guaranteed min/max bounds, and the stated
//! tolerances each value depends on.
//!
//! `lo`/`hi` come from interval arithmetic, so they bound every combination of
//! the inputs (signs handled; a divisor range that includes zero is an error).
//! `terms` are first-order deviations per stated tolerance, which lets the
//! rules combine a window statistically (root-sum-square) and rank contributors
//! while a tolerance used twice stays correlated with itself.

use crate::FileId;
use guardband_syntax::Span;
use guardband_units::{QuantityKind, TempSense};

/// Index of a stated tolerance in [`crate::Model::sources`].
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct SourceId(pub u32);

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
}

impl ToleranceSource {
    /// Dotted path of the field it was stated in, e.g. `probe_rail.sensed.reference`.
    pub fn label(&self, model: &crate::Model) -> String {
        format!("{}.{}", model.node(self.node).path, self.key)
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
        }
    }
}

type Result<T> = std::result::Result<T, ValueError>;

fn merge_terms(a: &[Term], ka: f64, b: &[Term], kb: f64) -> Vec<Term> {
    let mut out: Vec<Term> = a
        .iter()
        .map(|t| Term {
            source: t.source,
            low: t.low * ka,
            high: t.high * ka,
        })
        .collect();
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
        }
    }

    /// True when no tolerance or range was stated anywhere upstream.
    pub fn is_exact(&self) -> bool {
        self.lo == self.hi && self.terms.is_empty()
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
        }
        .check()
    }

    fn product_kind(a: QuantityKind, b: QuantityKind, divide: bool) -> QuantityKind {
        let dim = if divide {
            a.dim.per(b.dim)
        } else {
            a.dim.times(b.dim)
        };
        let temp = if dim.is_none() || dim != guardband_units::Dimension::TEMPERATURE {
            TempSense::Difference
        } else if a.temp == TempSense::Either || b.temp == TempSense::Either {
            TempSense::Either
        } else {
            TempSense::Difference
        };
        QuantityKind { dim, temp }
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
            kind: Self::product_kind(self.kind, other.kind, false),
            nom: self.nom * other.nom,
            lo: corners.iter().copied().fold(f64::INFINITY, f64::min),
            hi: corners.iter().copied().fold(f64::NEG_INFINITY, f64::max),
            terms: merge_terms(&self.terms, other.nom, &other.terms, self.nom),
            unit: self.kept_unit(other),
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
        let inverse = Value {
            kind: QuantityKind::of(other.kind.dim.powi(-1)),
            nom: 1.0 / other.nom,
            lo: 1.0 / other.hi,
            hi: 1.0 / other.lo,
            terms: scale_terms(&other.terms, -1.0 / (other.nom * other.nom)),
            unit: None,
        };
        let mut out = self.mul(&inverse)?;
        out.kind = Self::product_kind(self.kind, other.kind, true);
        out.unit = if other.kind.dim.is_none() {
            self.unit.clone()
        } else {
            None
        };
        out.check()
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
        }
        .check()
    }

    /// Applies a tolerance: relative (`tol` dimensionless, a fraction) or
    /// absolute (`tol` of the value's kind). `up` and `down` are magnitudes.
    pub fn with_tolerance(
        &self,
        tol_kind: QuantityKind,
        up: f64,
        down: f64,
        source: SourceId,
    ) -> Result<Value> {
        let (low_dev, high_dev) = if tol_kind.dim.is_none() {
            if self.kind.is_temperature() && self.kind.temp == TempSense::Absolute {
                return Err(ValueError::BadTolerance {
                    base: self.kind,
                    tolerance: tol_kind,
                });
            }
            let scale = Value {
                kind: QuantityKind::NONE,
                nom: 1.0,
                lo: 1.0 - down,
                hi: 1.0 + up,
                terms: Vec::new(),
                unit: None,
            };
            let scaled = self.mul(&scale)?;
            let mut out = Value {
                kind: self.kind,
                unit: self.unit.clone(),
                ..scaled
            };
            out.terms = merge_terms(
                &self.terms,
                1.0,
                &[Term {
                    source,
                    low: -down * self.nom,
                    high: up * self.nom,
                }],
                1.0,
            );
            return out.check();
        } else if tol_kind.dim == self.kind.dim
            && (!tol_kind.is_temperature() || tol_kind.temp != TempSense::Absolute)
        {
            (-down, up)
        } else {
            return Err(ValueError::BadTolerance {
                base: self.kind,
                tolerance: tol_kind,
            });
        };
        Value {
            kind: self.kind,
            nom: self.nom,
            lo: self.lo + low_dev,
            hi: self.hi + high_dev,
            terms: merge_terms(
                &self.terms,
                1.0,
                &[Term {
                    source,
                    low: low_dev,
                    high: high_dev,
                }],
                1.0,
            ),
            unit: self.unit.clone(),
        }
        .check()
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
