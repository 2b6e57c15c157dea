//! Parsing of unit spellings such as `mA/um^2`, `ohm*m`, `K/W` or `°C`.

use crate::table::{UNITS, lookup_atom};
use crate::{Dimension, QuantityKind, TempSense};
use std::fmt;

/// A unit spelling resolved to a factor (and offset) to SI and a quantity kind.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ParsedUnit {
    /// SI value = number * factor + offset.
    pub factor: f64,
    pub offset: f64,
    pub kind: QuantityKind,
}

impl ParsedUnit {
    /// Converts a number written in this unit to SI.
    pub fn to_si(&self, number: f64) -> f64 {
        number * self.factor + self.offset
    }

    /// Converts an SI value back into this unit.
    pub fn from_si(&self, si: f64) -> f64 {
        (si - self.offset) / self.factor
    }

    /// Converts an SI *difference* back into this unit (offsets do not apply).
    pub fn diff_from_si(&self, si: f64) -> f64 {
        si / self.factor
    }
}

/// Why a unit spelling was not understood.
#[derive(Debug, Clone, PartialEq)]
pub enum UnitError {
    /// An atom that is not in the table; carries close spellings that are.
    Unknown {
        atom: String,
        suggestions: Vec<String>,
    },
    /// A malformed spelling such as `A//m` or `m^x`.
    Malformed(String),
}

impl fmt::Display for UnitError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            UnitError::Unknown { atom, .. } => write!(f, "unknown unit `{atom}`"),
            UnitError::Malformed(why) => write!(f, "malformed unit: {why}"),
        }
    }
}

/// Parses a unit spelling into a factor to SI and a kind.
///
/// Atoms are joined by `*`, `·` or `/` (a `/` divides by the next atom only)
/// and may carry an integer power `^n`. A lone `°C` is an absolute
/// temperature; inside a compound unit (`°C/W`) it is a difference. Never
/// panics; bad spellings give a [`UnitError`].
pub fn parse_unit(text: &str) -> Result<ParsedUnit, UnitError> {
    let mut factor = 1.0;
    let mut dim = Dimension::NONE;
    let mut atoms = 0usize;
    let mut lone_temp = None;
    let mut offset = 0.0;
    let mut divide = false;
    let mut rest = text;
    loop {
        let end = rest.find(['*', '/', '·']).unwrap_or(rest.len());
        let piece = &rest[..end];
        if piece.is_empty() {
            return Err(UnitError::Malformed(format!(
                "`{text}` has an operator with nothing on one side"
            )));
        }
        let (name, power) = split_power(piece, text)?;
        let (def, prefix) = lookup_atom(name).ok_or_else(|| UnitError::Unknown {
            atom: name.to_string(),
            suggestions: suggest(name),
        })?;
        let power = if divide { -power } else { power };
        factor *= (def.factor * prefix).powi(power);
        dim = def
            .dim
            .checked_powi(power)
            .and_then(|d| dim.checked_times(d))
            .ok_or_else(|| {
                UnitError::Malformed(format!("`{text}` has a power beyond ±127 of a base unit"))
            })?;
        atoms += 1;
        if atoms == 1 && power == 1 && !divide {
            lone_temp = Some(def.temp);
            offset = def.offset;
        }
        if end == rest.len() {
            break;
        }
        let op = rest[end..].chars().next().unwrap_or('*');
        divide = op == '/';
        rest = &rest[end + op.len_utf8()..];
    }
    let temp = if atoms == 1 && dim == Dimension::TEMPERATURE {
        lone_temp.unwrap_or(TempSense::Difference)
    } else {
        offset = 0.0;
        TempSense::Difference
    };
    Ok(ParsedUnit {
        factor,
        offset,
        kind: QuantityKind { dim, temp },
    })
}

fn split_power<'a>(piece: &'a str, whole: &str) -> Result<(&'a str, i32), UnitError> {
    match piece.split_once('^') {
        None => Ok((piece, 1)),
        Some((name, power)) => {
            let power: i32 = power.parse().map_err(|_| {
                UnitError::Malformed(format!("`{whole}`: the power after `^` must be an integer"))
            })?;
            if name.is_empty() {
                return Err(UnitError::Malformed(format!(
                    "`{whole}`: `^` needs a unit before it"
                )));
            }
            if !(-12..=12).contains(&power) {
                return Err(UnitError::Malformed(format!(
                    "`{whole}`: power {power} is out of range"
                )));
            }
            Ok((name, power))
        }
    }
}

/// Unit symbols within a small edit distance of `atom`, closest first.
fn suggest(atom: &str) -> Vec<String> {
    let lower = atom.to_lowercase();
    let mut found: Vec<(usize, String)> = Vec::new();
    for u in UNITS {
        let d = edit_distance(&lower, &u.symbol.to_lowercase());
        if d <= 1 && u.symbol.chars().count() > 1 {
            found.push((d, u.symbol.to_string()));
        }
        // Spelled-out names: `volt` -> `V`, `ohms` -> `ohm`, `years` -> `yr`.
        let word = u.name.split([' ', '(']).next().unwrap_or(u.name);
        if edit_distance(&lower, word) <= 1 || lower.trim_end_matches('s') == word {
            found.push((0, u.symbol.to_string()));
        }
    }
    // Common abbreviations that are not symbols here.
    for (said, meant) in [
        ("sec", "s"),
        ("secs", "s"),
        ("hr", "h"),
        ("hrs", "h"),
        ("yrs", "yr"),
        ("y", "yr"),
        ("amp", "A"),
        ("amps", "A"),
        ("celsius", "degC"),
        ("degc", "degC"),
        ("deg_c", "degC"),
        ("percent", "%"),
    ] {
        if lower == said {
            found.push((0, meant.to_string()));
        }
    }
    // The right letters in the wrong case, prefix included: `uf` -> `uF`, `MA` -> `mA`.
    for u in UNITS {
        if u.symbol.to_lowercase() == lower {
            found.push((0, u.symbol.to_string()));
        }
        if !u.prefixable {
            continue;
        }
        for p in crate::table::PREFIXES {
            let spelled = format!("{}{}", p.symbol, u.symbol);
            if spelled.to_lowercase() == lower {
                // The prefix as written wins: `ma` is more likely mA than MA.
                let rank = usize::from(!atom.starts_with(p.symbol));
                found.push((rank, spelled));
            }
        }
    }
    // A known prefix in front of a near-miss: `mAA` -> `mA`.
    for p in crate::table::PREFIXES {
        if let Some(rest) = atom.strip_prefix(p.symbol) {
            for u in UNITS.iter().filter(|u| u.prefixable) {
                if !rest.is_empty()
                    && edit_distance(rest, u.symbol) == 1
                    && rest.starts_with(u.symbol)
                {
                    found.push((1, format!("{}{}", p.symbol, u.symbol)));
                }
            }
        }
    }
    found.sort();
    found.dedup_by(|a, b| a.1 == b.1);
    found.into_iter().take(3).map(|(_, s)| s).collect()
}

/// Levenshtein distance over Unicode scalar values, for "did you mean" hints.
pub fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut cur = vec![i + 1; b.len() + 1];
        for (j, cb) in b.iter().enumerate() {
            let cost = usize::from(ca != *cb);
            cur[j + 1] = (prev[j] + cost).min(prev[j + 1] + 1).min(cur[j] + 1);
        }
        prev = cur;
    }
    prev[b.len()]
}

#[cfg(test)]
mod tests {
    use super::*;

    fn si(text: &str, n: f64) -> f64 {
        parse_unit(text).unwrap().to_si(n)
    }

    fn close(a: f64, b: f64) -> bool {
        ((a - b) / b).abs() < 1e-12
    }

    // Factors from NIST SP 811 (2008), appendix B.8 and B.9, and the SI prefixes (SP 811 table 5).
    #[test]
    fn nist_sp811_factors() {
        assert!(close(si("mil", 1.0), 2.54e-5)); // mil -> m, exact
        assert!(close(si("inch", 1.0), 2.54e-2)); // inch -> m, exact
        assert!(close(si("h", 1.0), 3.6e3)); // hour -> s, exact
        assert!(close(si("yr", 1.0), 3.1536e7)); // year (365 days) -> s
        // SP 811 gives 1.745329 E-02 rad, seven digits.
        assert!((si("deg", 1.0) / 1.745_329e-2 - 1.0).abs() < 1e-6);
        assert!(close(si("eV", 1.0), 1.602_176_634e-19)); // CODATA 2018 exact
        assert!(close(si("mA", 1.0), 1e-3));
        assert!(close(si("uF", 2.2), 2.2e-6));
        assert!(close(si("µF", 2.2), 2.2e-6));
        assert!(close(si("kohm", 4.7), 4.7e3));
        assert!(close(si("MΩ", 1.0), 1e6));
        assert!(close(si("ns", 5.0), 5e-9));
    }

    // NIST SP 811 section 4.2.1.1: T/K = t/°C + 273.15.
    #[test]
    fn celsius_is_absolute_with_offset() {
        let c = parse_unit("°C").unwrap();
        assert_eq!(c.kind, QuantityKind::ABSOLUTE_TEMPERATURE);
        assert!(close(c.to_si(25.0), 298.15));
        assert!(close(parse_unit("degC").unwrap().to_si(-40.0), 233.15));
        assert_eq!(parse_unit("K").unwrap().kind.temp, TempSense::Either);
    }

    #[test]
    fn compound_units() {
        let j = parse_unit("mA/um^2").unwrap();
        assert_eq!(j.kind.dim, Dimension::CURRENT_DENSITY);
        assert!(close(j.factor, 1e-3 / 1e-12));
        let rho = parse_unit("uohm*cm").unwrap();
        assert_eq!(rho.kind.dim, Dimension::RESISTIVITY);
        assert!(close(rho.factor, 1e-8));
        let th = parse_unit("K/W").unwrap();
        assert_eq!(th.kind, QuantityKind::of(Dimension::THERMAL_RESISTANCE));
        let th_c = parse_unit("°C/W").unwrap();
        assert_eq!(th_c.kind, QuantityKind::of(Dimension::THERMAL_RESISTANCE));
        assert_eq!(th_c.offset, 0.0);
        assert_eq!(parse_unit("V/us").unwrap().kind.dim, Dimension::SLEW_RATE);
        assert!(close(parse_unit("V/us").unwrap().factor, 1e6));
        assert_eq!(
            parse_unit("µΩ·cm").unwrap().kind.dim,
            Dimension::RESISTIVITY
        );
        assert_eq!(
            parse_unit("mA/um").unwrap().kind.dim,
            Dimension::CURRENT_PER_LENGTH
        );
        assert!(close(parse_unit("%/K").unwrap().factor, 1e-2));
    }

    #[test]
    fn bad_spellings_are_errors() {
        assert!(matches!(parse_unit("mAA"), Err(UnitError::Unknown { .. })));
        assert!(matches!(parse_unit("A//m"), Err(UnitError::Malformed(_))));
        assert!(matches!(parse_unit("m^x"), Err(UnitError::Malformed(_))));
        assert!(matches!(parse_unit("m^99"), Err(UnitError::Malformed(_))));
        assert!(matches!(parse_unit("k%"), Err(UnitError::Unknown { .. })));
        match parse_unit("mAA") {
            Err(UnitError::Unknown { suggestions, .. }) => {
                assert_eq!(suggestions.first().map(String::as_str), Some("mA"))
            }
            other => panic!("unexpected {other:?}"),
        }
        match parse_unit("Volt") {
            Err(UnitError::Unknown { suggestions, .. }) => {
                assert!(suggestions.contains(&"V".to_string()))
            }
            other => panic!("unexpected {other:?}"),
        }
        match parse_unit("ohms") {
            Err(UnitError::Unknown { suggestions, .. }) => {
                assert!(suggestions.contains(&"ohm".to_string()))
            }
            other => panic!("unexpected {other:?}"),
        }
    }
}
