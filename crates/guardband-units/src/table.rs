//! The table of unit symbols and SI prefixes that `.guard` files may use.
//!
//! Factors convert to coherent SI. Exact factors follow NIST SP 811 (2008),
//! appendix B; the electronvolt follows the CODATA 2018 exact value.

use crate::{Dimension, TempSense};

/// One unit symbol: how it converts to SI and what it measures.
#[derive(Debug, Clone, Copy)]
pub struct UnitDef {
    /// The spelling accepted in source.
    pub symbol: &'static str,
    /// A plain-words name, for the language reference.
    pub name: &'static str,
    /// Multiply by this to get the SI value.
    pub factor: f64,
    /// Add this after the factor to get the SI value (only `°C`).
    pub offset: f64,
    pub dim: Dimension,
    /// Whether SI prefixes may be put in front of the symbol.
    pub prefixable: bool,
    pub temp: TempSense,
}

const fn unit(
    symbol: &'static str,
    name: &'static str,
    factor: f64,
    dim: Dimension,
    prefixable: bool,
) -> UnitDef {
    UnitDef {
        symbol,
        name,
        factor,
        offset: 0.0,
        dim,
        prefixable,
        temp: TempSense::Difference,
    }
}

const fn celsius(symbol: &'static str) -> UnitDef {
    UnitDef {
        symbol,
        name: "degree Celsius (absolute)",
        factor: 1.0,
        offset: 273.15,
        dim: Dimension::TEMPERATURE,
        prefixable: false,
        temp: TempSense::Absolute,
    }
}

/// Every unit symbol the language knows, in the order the reference lists them.
pub const UNITS: &[UnitDef] = &[
    unit("m", "metre", 1.0, Dimension::LENGTH, true),
    // NIST SP 811 B.8: 1 mil = 2.54E-05 m (exact); 1 in = 2.54E-02 m (exact).
    unit(
        "mil",
        "mil (thousandth of an inch)",
        2.54e-5,
        Dimension::LENGTH,
        false,
    ),
    unit("inch", "inch", 0.0254, Dimension::LENGTH, false),
    unit("g", "gram", 1e-3, Dimension::MASS, true),
    unit("s", "second", 1.0, Dimension::TIME, true),
    unit("min", "minute", 60.0, Dimension::TIME, false),
    unit("h", "hour", 3600.0, Dimension::TIME, false),
    unit("day", "day", 86_400.0, Dimension::TIME, false),
    // NIST SP 811 B.8: year (365 days) = 3.1536E+07 s.
    unit("yr", "year (365 days)", 3.1536e7, Dimension::TIME, false),
    unit("A", "ampere", 1.0, Dimension::CURRENT, true),
    unit("V", "volt", 1.0, Dimension::VOLTAGE, true),
    unit("W", "watt", 1.0, Dimension::POWER, true),
    unit("J", "joule", 1.0, Dimension::ENERGY, true),
    // CODATA 2018: 1 eV = 1.602176634E-19 J (exact since the 2019 SI).
    unit(
        "eV",
        "electronvolt",
        1.602_176_634e-19,
        Dimension::ENERGY,
        true,
    ),
    unit("C", "coulomb", 1.0, Dimension::CHARGE, true),
    unit("F", "farad", 1.0, Dimension::CAPACITANCE, true),
    unit("H", "henry", 1.0, Dimension::INDUCTANCE, true),
    unit("Hz", "hertz", 1.0, Dimension::FREQUENCY, true),
    unit("ohm", "ohm", 1.0, Dimension::RESISTANCE, true),
    unit("Ω", "ohm", 1.0, Dimension::RESISTANCE, true),
    UnitDef {
        symbol: "K",
        name: "kelvin (absolute or difference)",
        factor: 1.0,
        offset: 0.0,
        dim: Dimension::TEMPERATURE,
        prefixable: true,
        temp: TempSense::Either,
    },
    celsius("°C"),
    celsius("degC"),
    unit(
        "mol",
        "mole",
        1.0,
        Dimension::base(crate::Base::Amount),
        true,
    ),
    unit("rad", "radian", 1.0, Dimension::ANGLE, true),
    // NIST SP 811 B.8: 1 degree = 1.745329E-02 rad (= pi/180).
    unit(
        "deg",
        "degree of angle",
        std::f64::consts::PI / 180.0,
        Dimension::ANGLE,
        false,
    ),
    unit(
        "°",
        "degree of angle",
        std::f64::consts::PI / 180.0,
        Dimension::ANGLE,
        false,
    ),
    unit("%", "percent", 1e-2, Dimension::NONE, false),
    unit("ppm", "part per million", 1e-6, Dimension::NONE, false),
    unit(
        "dB",
        "decibel (kept as a level, not converted)",
        1.0,
        Dimension::LEVEL,
        false,
    ),
];

/// An SI prefix.
#[derive(Debug, Clone, Copy)]
pub struct Prefix {
    pub symbol: &'static str,
    pub factor: f64,
}

/// SI prefixes; `u`, `µ` (micro sign) and `μ` (Greek mu) all mean micro.
pub const PREFIXES: &[Prefix] = &[
    Prefix {
        symbol: "T",
        factor: 1e12,
    },
    Prefix {
        symbol: "G",
        factor: 1e9,
    },
    Prefix {
        symbol: "M",
        factor: 1e6,
    },
    Prefix {
        symbol: "k",
        factor: 1e3,
    },
    Prefix {
        symbol: "c",
        factor: 1e-2,
    },
    Prefix {
        symbol: "m",
        factor: 1e-3,
    },
    Prefix {
        symbol: "u",
        factor: 1e-6,
    },
    Prefix {
        symbol: "µ",
        factor: 1e-6,
    },
    Prefix {
        symbol: "μ",
        factor: 1e-6,
    },
    Prefix {
        symbol: "n",
        factor: 1e-9,
    },
    Prefix {
        symbol: "p",
        factor: 1e-12,
    },
    Prefix {
        symbol: "f",
        factor: 1e-15,
    },
];

/// Looks up one unit atom (no operators), trying the whole symbol before a prefix split.
pub(crate) fn lookup_atom(atom: &str) -> Option<(UnitDef, f64)> {
    if let Some(def) = UNITS.iter().find(|u| u.symbol == atom) {
        return Some((*def, 1.0));
    }
    for prefix in PREFIXES {
        if let Some(rest) = atom.strip_prefix(prefix.symbol)
            && let Some(def) = UNITS.iter().find(|u| u.symbol == rest && u.prefixable)
        {
            return Some((*def, prefix.factor));
        }
    }
    None
}
