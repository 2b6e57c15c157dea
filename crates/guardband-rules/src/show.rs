//! Showing SI values back in the units the user wrote.

use guardband_model::Value;
use guardband_units::{QuantityKind, TempSense, parse_unit};

/// A number with three significant digits, without trailing zeros.
pub fn number(x: f64) -> String {
    digits(x, 3)
}

/// Rounds up to three significant digits, so that a size shown for a fix
/// never falls short (261.2 → 262).
pub fn ceil3(x: f64) -> f64 {
    if x <= 0.0 || !x.is_finite() {
        return x;
    }
    let step = 10f64.powi(x.log10().floor() as i32 - 2);
    let r = (x / step).ceil() * step;
    // Undo float noise such as 261.00000000000003.
    (r / step).round() * step
}

/// A number with `significant` digits, without trailing zeros.
pub fn digits(x: f64, significant: i32) -> String {
    if x == 0.0 || !x.is_finite() {
        return format!("{x}");
    }
    let digits = significant - 1 - x.abs().log10().floor() as i32;
    let s = if digits > 0 {
        format!("{:.*}", digits as usize, x)
    } else {
        format!("{:.0}", x)
    };
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

/// An SI value in `unit` (when it measures the same thing), else in SI with a prefix.
pub fn in_unit(si: f64, kind: QuantityKind, unit: Option<&str>) -> String {
    in_unit_digits(si, kind, unit, 3)
}

/// Two figures that a message compares, each with enough significant
/// digits (3 to 9) that they read differently when they differ by more
/// than noise: never "rated 190 mA but up to 190 mA can flow".
pub fn versus(a: f64, b: f64, kind: QuantityKind, unit: Option<&str>) -> (String, String) {
    let equal = !crate::compare::exceeds(a, b) && !crate::compare::below(a, b);
    for d in 3..=9 {
        let (x, y) = (
            in_unit_digits(a, kind, unit, d),
            in_unit_digits(b, kind, unit, d),
        );
        if equal || x != y {
            return (x, y);
        }
    }
    (
        in_unit_digits(a, kind, unit, 9),
        in_unit_digits(b, kind, unit, 9),
    )
}

/// The difference `a − b` as a magnitude in the unit, e.g. `12.4 mA`.
pub fn difference(a: f64, b: f64, kind: QuantityKind, unit: Option<&str>) -> String {
    let kind = if kind.is_temperature() {
        QuantityKind::TEMPERATURE_DIFFERENCE
    } else {
        kind
    };
    let unit = if kind.is_temperature() {
        Some("K")
    } else {
        unit
    };
    in_unit((a - b).abs(), kind, unit)
}

/// A share of parts in ppm, readable at any size: beyond what a normal
/// model supports it reads "< 0.001 ppm (beyond 6 σ)" instead of digits.
pub fn ppm(ppm: f64, sigmas: Option<f64>) -> String {
    if ppm >= 0.001 {
        return format!("{} ppm", number(ppm));
    }
    match sigmas {
        Some(z) if z.is_finite() => {
            format!("< 0.001 ppm (beyond {} σ)", number(z.floor().max(0.0)))
        }
        _ => "< 0.001 ppm".to_string(),
    }
}

/// An SI value in `unit` with `significant` digits (see [`in_unit`]).
pub fn in_unit_digits(si: f64, kind: QuantityKind, unit: Option<&str>, d: i32) -> String {
    let number = |x: f64| digits(x, d);
    if let Some(u) = unit.and_then(|u| parse_unit(u).ok().map(|p| (u, p))) {
        let (text, parsed) = u;
        if parsed.kind.dim == kind.dim {
            let absolute = kind.is_temperature() && kind.temp == TempSense::Absolute;
            let v = if absolute {
                parsed.from_si(si)
            } else {
                parsed.diff_from_si(si)
            };
            // Keep the user's unit unless the number would be awkward (150000 uA).
            if absolute || kind.is_temperature() || (0.1..1000.0).contains(&v.abs()) || v == 0.0 {
                return format!("{} {text}", number(v));
            }
        }
    }
    if kind.is_temperature() && kind.temp == TempSense::Absolute {
        return format!("{} °C", number(si - 273.15));
    }
    let symbol = kind.si_symbol();
    let prefixable = ["A", "V", "W", "F", "H", "s", "m", "Ω", "J"].contains(&symbol.as_str());
    if !prefixable {
        return if symbol == "1" {
            number(si)
        } else {
            format!("{} {symbol}", number(si))
        };
    }
    let (factor, prefix) = [
        (1e-12, "p"),
        (1e-9, "n"),
        (1e-6, "u"),
        (1e-3, "m"),
        (1.0, ""),
        (1e3, "k"),
        (1e6, "M"),
    ]
    .iter()
    .rev()
    .find(|(f, _)| si.abs() >= *f)
    .copied()
    .unwrap_or((1.0, ""));
    format!("{} {prefix}{symbol}", number(si / factor))
}

/// A value's nominal in its own unit.
pub fn nominal(v: &Value) -> String {
    in_unit(v.nom, v.kind, v.unit.as_deref())
}

/// A value's bounds in its own unit, e.g. `120 mA .. 205 mA`.
pub fn bounds(v: &Value) -> String {
    format!(
        "{} .. {}",
        in_unit(v.lo, v.kind, v.unit.as_deref()),
        in_unit(v.hi, v.kind, v.unit.as_deref())
    )
}

/// A fraction as a percentage, e.g. `20 %`.
pub fn percent(f: f64) -> String {
    format!("{} %", number(f * 100.0))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rounds_up_to_three_digits() {
        assert_eq!(ceil3(260.1), 261.0);
        assert!((ceil3(0.012341) - 0.0124).abs() < 1e-15);
        assert_eq!(ceil3(1200.0), 1200.0);
    }

    #[test]
    fn comparisons_show_enough_digits() {
        // 0.19 A against 0.1904 A reads alike at three digits.
        let (a, b) = versus(0.19, 0.1904, QuantityKind::CURRENT, Some("mA"));
        assert_eq!((a.as_str(), b.as_str()), ("190 mA", "190.4 mA"));
        let (a, b) = versus(0.19, 0.19, QuantityKind::CURRENT, Some("mA"));
        assert_eq!(a, b);
        assert_eq!(ppm(2e-40, Some(13.2)), "< 0.001 ppm (beyond 13 σ)");
        assert_eq!(ppm(12.345, None), "12.3 ppm");
    }

    #[test]
    fn formats_in_user_units() {
        assert_eq!(in_unit(0.142, QuantityKind::CURRENT, Some("mA")), "142 mA");
        assert_eq!(in_unit(0.18, QuantityKind::CURRENT, None), "180 mA");
        assert_eq!(
            in_unit(398.15, QuantityKind::ABSOLUTE_TEMPERATURE, Some("°C")),
            "125 °C"
        );
        assert_eq!(
            in_unit(
                2.2e-6,
                QuantityKind::of(guardband_units::Dimension::CAPACITANCE),
                None
            ),
            "2.2 uF"
        );
        assert_eq!(percent(0.2), "20 %");
        assert_eq!(in_unit(0.15, QuantityKind::CURRENT, Some("uA")), "150 mA");
        assert_eq!(number(1234.6), "1235");
        assert_eq!(number(0.000123), "0.000123");
    }
}
