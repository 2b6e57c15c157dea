//! Evaluating a tolerance: `x ± t`, `x +a -b`, a bare `± t`, a spread
//! referenced as the tolerance (which keeps its own sources, so that its
//! uses stay correlated), and `at K sigma`.

use super::Evaluator;
use crate::model::NodeId;
use crate::value::{Spread, Value, ValueError};
use crate::{Diagnostic, FileId};
use guardband_syntax::{Expr, ExprKind};
use guardband_units::{QuantityKind, TempSense};

/// The number of a unit-less literal (through parentheses and signs).
pub(super) fn plain_number(e: &Expr) -> Option<f64> {
    match &e.kind {
        ExprKind::Number { value, unit: None } => Some(*value),
        ExprKind::Paren(inner) => plain_number(inner),
        _ => None,
    }
}

/// The unit written on the first literal of an expression, for hints.
pub(super) fn first_unit(e: &Expr) -> Option<&str> {
    match &e.kind {
        ExprKind::Number { unit, .. } => unit.as_ref().map(|u| u.text.as_str()),
        ExprKind::Paren(x) | ExprKind::Neg(x) => first_unit(x),
        ExprKind::Binary(_, a, b) | ExprKind::Range(a, b) => {
            first_unit(a).or_else(|| first_unit(b))
        }
        ExprKind::Tolerance { base: Some(b), .. } => first_unit(b),
        _ => None,
    }
}

/// Largest `K` accepted in `at K sigma`.
const MAX_SIGMA: f64 = 10.0;

impl Evaluator<'_> {
    /// `base ± tolerance`, `base +up -down`, or a bare tolerance.
    pub(super) fn tolerance(
        &mut self,
        node: NodeId,
        expr: &Expr,
        base: Option<&Expr>,
        (plus, minus, symmetric): (&Expr, &Expr, bool),
        sigma: Option<&Expr>,
        key: &str,
    ) -> Option<Value> {
        let file = self.file_of(node);
        let sides = [plus, minus];
        for side in &sides[..if symmetric { 1 } else { 2 }] {
            if plain_number(side).is_some() {
                self.plain_number_tolerance(file, side, base);
                return None;
            }
        }
        let k = match sigma {
            None => None,
            Some(e) => Some(self.sigma_factor(file, e)?),
        };
        let up_v = self.quantity(node, plus, key)?;
        let down_v = if symmetric {
            up_v.clone()
        } else {
            self.quantity(node, minus, key)?
        };
        if !up_v.kind.fits(down_v.kind) {
            let err = ValueError::Mismatch {
                left: up_v.kind,
                right: down_v.kind,
            };
            self.value_error(
                file,
                expr.span.clone(),
                err,
                &[(plus, &up_v), (minus, &down_v)],
            );
            return None;
        }
        if up_v.kind.is_temperature() && up_v.kind.temp == TempSense::Absolute {
            let err = ValueError::AbsoluteTemperature(
                "a tolerance cannot be an absolute temperature; use K",
            );
            self.value_error(file, expr.span.clone(), err, &[(plus, &up_v)]);
            return None;
        }
        // A stated spread (zero nominal, such as `wren180.resistor`) used as
        // the tolerance keeps its own sources: two values toleranced by the
        // same spread move together.
        let shared =
            symmetric && !up_v.is_exact() && up_v.nom == 0.0 && up_v.lo <= 0.0 && up_v.hi >= 0.0;
        if shared && k.is_some() {
            self.push(
                Diagnostic::error(
                    "invalid-value",
                    file,
                    sigma.map(|s| s.span.clone()).unwrap_or(expr.span.clone()),
                    "`at N sigma` cannot be set where a named spread is used",
                )
                .primary("the spread is stated elsewhere")
                .help("write `at N sigma` where the spread itself is stated"),
            );
            return None;
        }
        let tol_span = match base {
            Some(b) => b.span.end..expr.span.end,
            None => expr.span.clone(),
        };
        let Some(b) = base else {
            if shared {
                return Some(up_v);
            }
            let mag = |v: &Value| v.nom.abs().max(v.lo.abs()).max(v.hi.abs());
            let id = self.new_source(node, key, file, tol_span, Spread::Normal(k));
            let kind = QuantityKind {
                temp: TempSense::Difference,
                ..up_v.kind
            };
            let mut v = Value::spread(kind, mag(&down_v), mag(&up_v), id);
            v.unit = up_v.unit.clone();
            return Some(v);
        };
        let base_v = self.quantity(node, b, key)?;
        let result = if shared {
            if up_v.kind.dim.is_none() {
                base_v.scaled_by(&up_v)
            } else if up_v.kind.dim == base_v.kind.dim {
                base_v.shifted_by(&up_v)
            } else {
                Err(ValueError::BadTolerance {
                    base: base_v.kind,
                    tolerance: up_v.kind,
                })
            }
        } else {
            let mag = |v: &Value| v.nom.abs().max(v.lo.abs()).max(v.hi.abs());
            let id = self.new_source(node, key, file, tol_span.clone(), Spread::Normal(k));
            base_v.with_tolerance(up_v.kind, mag(&up_v), mag(&down_v), id)
        };
        result
            .map_err(|e| self.value_error(file, tol_span, e, &[(b, &base_v), (plus, &up_v)]))
            .ok()
    }

    /// A tolerance written as a bare number: `± 2` could mean 2 %, 2 units or
    /// 200 %, so it is an error with both spellings offered.
    fn plain_number_tolerance(&mut self, file: FileId, side: &Expr, base: Option<&Expr>) {
        let written = self.text(file, &side.span);
        let written = written.trim_start_matches(['+', '-']);
        let help = match base.and_then(first_unit) {
            Some(unit) => format!(
                "write `± {written} %` for a relative tolerance, or `± {written} {unit}` in the value's unit"
            ),
            None => format!("write `± {written} %` for a relative tolerance"),
        };
        self.push(
            Diagnostic::error(
                "unit-mismatch",
                file,
                side.span.clone(),
                format!("the tolerance `{written}` has no unit, so it is ambiguous"),
            )
            .primary("a percentage, ppm or a unit is missing here")
            .help(help),
        );
    }

    /// The `K` of `at K sigma`: a positive number written with `sigma`.
    fn sigma_factor(&mut self, file: FileId, e: &Expr) -> Option<f64> {
        if let ExprKind::Number {
            value,
            unit: Some(u),
        } = &e.kind
            && u.text == "sigma"
            && *value > 0.0
            && *value <= MAX_SIGMA
        {
            return Some(*value);
        }
        self.push(
            Diagnostic::error(
                "invalid-value",
                file,
                e.span.clone(),
                format!("`at` takes a number of standard deviations up to {MAX_SIGMA}, e.g. `at 3 sigma`"),
            )
            .primary("not a number of sigma")
            .help("write `at 3 sigma` (the stated extremes are three standard deviations from the centre)"),
        );
        None
    }
}
