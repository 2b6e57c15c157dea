//! Showing SI values back in the units the user wrote.

use guardband_model::Value;
use guardband_units::{QuantityKind, TempSense, parse_unit};

/// A number with three significant digits, without trailing zeros.
pub fn number(x: f64) -> String {
    if x == 0.0 || !x.is_finite() {
        return format!("{x}");
    }
    let digits = 3 - 1 - x.abs().log10().floor() as i32;
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
    let prefixable = ["A", "V", "W", "F", "s", "m", "Ω", "J"].contains(&symbol.as_str());
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
