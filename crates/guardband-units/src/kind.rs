//! The kind of a quantity: its dimension, and for temperatures whether it is a
//! point on the scale (absolute) or a difference between two points.

use crate::Dimension;
use std::fmt;

/// Whether a temperature is absolute, a difference, or a kelvin value that may be either.
///
/// `25 °C` is absolute; `10 K` inside `K/W` is a difference. A bare kelvin
/// literal is `Either`: kelvin has no offset, so `398 K` may stand for a
/// junction temperature and `10 K` for a rise. Non-temperature kinds always
/// carry `Difference`, which makes no distinction.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum TempSense {
    Absolute,
    Difference,
    Either,
}

/// A dimension plus the absolute/difference distinction for temperatures.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub struct QuantityKind {
    pub dim: Dimension,
    pub temp: TempSense,
}

impl QuantityKind {
    /// A non-temperature kind (or a temperature difference) of the given dimension.
    pub const fn of(dim: Dimension) -> QuantityKind {
        QuantityKind {
            dim,
            temp: TempSense::Difference,
        }
    }
    pub const NONE: QuantityKind = QuantityKind::of(Dimension::NONE);
    pub const CURRENT: QuantityKind = QuantityKind::of(Dimension::CURRENT);
    pub const VOLTAGE: QuantityKind = QuantityKind::of(Dimension::VOLTAGE);
    pub const ABSOLUTE_TEMPERATURE: QuantityKind = QuantityKind {
        dim: Dimension::TEMPERATURE,
        temp: TempSense::Absolute,
    };
    pub const TEMPERATURE_DIFFERENCE: QuantityKind = QuantityKind::of(Dimension::TEMPERATURE);
    pub const KELVIN_EITHER: QuantityKind = QuantityKind {
        dim: Dimension::TEMPERATURE,
        temp: TempSense::Either,
    };

    /// True if this is a temperature of dimension Θ^1.
    pub fn is_temperature(self) -> bool {
        self.dim == Dimension::TEMPERATURE
    }

    /// True when a value of kind `self` may be used where `expected` is required.
    pub fn fits(self, expected: QuantityKind) -> bool {
        if self.dim != expected.dim {
            return false;
        }
        if !self.is_temperature() {
            return true;
        }
        matches!(
            (self.temp, expected.temp),
            (TempSense::Either, _)
                | (_, TempSense::Either)
                | (TempSense::Absolute, TempSense::Absolute)
                | (TempSense::Difference, TempSense::Difference)
        )
    }

    /// A human description with an article and a unit, e.g. `a current (A)`.
    pub fn describe(self) -> String {
        if self.is_temperature() {
            return match self.temp {
                TempSense::Absolute => "an absolute temperature (°C or K)".to_string(),
                TempSense::Difference => "a temperature difference (K)".to_string(),
                TempSense::Either => "a temperature (K)".to_string(),
            };
        }
        for (dim, name, unit) in NAMED {
            if *dim == self.dim {
                return format!("{name} ({unit})");
            }
        }
        format!("a quantity of dimension {}", self.dim)
    }

    /// The SI unit symbol used when showing values of this kind.
    pub fn si_symbol(self) -> String {
        if self.is_temperature() {
            return match self.temp {
                TempSense::Absolute => "°C".to_string(),
                _ => "K".to_string(),
            };
        }
        for (dim, _, unit) in NAMED {
            if *dim == self.dim {
                return (*unit).to_string();
            }
        }
        self.dim.to_string()
    }
}

impl fmt::Display for QuantityKind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.describe())
    }
}

/// Names for the dimensions a regulator spec uses, with their SI unit.
const NAMED: &[(Dimension, &str, &str)] = &[
    (Dimension::NONE, "a plain number", "1"),
    (Dimension::CURRENT, "a current", "A"),
    (Dimension::VOLTAGE, "a voltage", "V"),
    (Dimension::POWER, "a power", "W"),
    (Dimension::ENERGY, "an energy", "J"),
    (Dimension::RESISTANCE, "a resistance", "Ω"),
    (Dimension::RESISTIVITY, "a resistivity", "Ω·m"),
    (Dimension::CAPACITANCE, "a capacitance", "F"),
    (Dimension::INDUCTANCE, "an inductance", "H"),
    (Dimension::CHARGE, "a charge", "C"),
    (Dimension::TIME, "a time", "s"),
    (Dimension::FREQUENCY, "a frequency", "Hz"),
    (Dimension::LENGTH, "a length", "m"),
    (Dimension::AREA, "an area", "m^2"),
    (Dimension::MASS, "a mass", "kg"),
    (Dimension::CURRENT_DENSITY, "a current density", "A/m^2"),
    (Dimension::CURRENT_PER_LENGTH, "a current per width", "A/m"),
    (Dimension::THERMAL_RESISTANCE, "a thermal resistance", "K/W"),
    (
        Dimension::PER_TEMPERATURE,
        "a temperature coefficient",
        "1/K",
    ),
    (Dimension::SLEW_RATE, "a slew rate", "V/s"),
    (Dimension::ANGLE, "an angle", "rad"),
    (Dimension::LEVEL, "a level", "dB"),
];

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn describes_common_kinds() {
        assert_eq!(QuantityKind::CURRENT.describe(), "a current (A)");
        assert_eq!(QuantityKind::VOLTAGE.describe(), "a voltage (V)");
        assert_eq!(
            QuantityKind::of(Dimension::THERMAL_RESISTANCE).describe(),
            "a thermal resistance (K/W)"
        );
    }

    #[test]
    fn absolute_and_difference_do_not_mix() {
        let abs = QuantityKind::ABSOLUTE_TEMPERATURE;
        let diff = QuantityKind::TEMPERATURE_DIFFERENCE;
        assert!(!abs.fits(diff));
        assert!(!diff.fits(abs));
        assert!(QuantityKind::KELVIN_EITHER.fits(abs));
        assert!(QuantityKind::KELVIN_EITHER.fits(diff));
    }
}
