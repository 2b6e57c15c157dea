//! Dimension algebra: integer exponents over the SI base dimensions plus angle and level.

use std::fmt;

/// One of the base dimensions a [`Dimension`] is built from.
///
/// Angle and level (decibels) are kept separate from "dimensionless" so that a
/// phase margin in degrees cannot be compared with a plain ratio.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Base {
    Length,
    Mass,
    Time,
    Current,
    Temperature,
    Amount,
    Luminosity,
    Angle,
    Level,
}

impl Base {
    /// All base dimensions in storage order.
    pub const ALL: [Base; 9] = [
        Base::Length,
        Base::Mass,
        Base::Time,
        Base::Current,
        Base::Temperature,
        Base::Amount,
        Base::Luminosity,
        Base::Angle,
        Base::Level,
    ];

    fn symbol(self) -> &'static str {
        match self {
            Base::Length => "m",
            Base::Mass => "kg",
            Base::Time => "s",
            Base::Current => "A",
            Base::Temperature => "K",
            Base::Amount => "mol",
            Base::Luminosity => "cd",
            Base::Angle => "rad",
            Base::Level => "dB",
        }
    }
}

/// A physical dimension as exponents of the base dimensions.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Default)]
pub struct Dimension(pub [i8; 9]);

impl Dimension {
    /// The dimension of a pure number (ratios, percentages, counts).
    pub const NONE: Dimension = Dimension([0; 9]);
    pub const LENGTH: Dimension = Dimension::base(Base::Length);
    pub const MASS: Dimension = Dimension::base(Base::Mass);
    pub const TIME: Dimension = Dimension::base(Base::Time);
    pub const CURRENT: Dimension = Dimension::base(Base::Current);
    pub const TEMPERATURE: Dimension = Dimension::base(Base::Temperature);
    pub const ANGLE: Dimension = Dimension::base(Base::Angle);
    pub const LEVEL: Dimension = Dimension::base(Base::Level);
    /// kg m^2 s^-2
    pub const ENERGY: Dimension = Dimension([2, 1, -2, 0, 0, 0, 0, 0, 0]);
    /// kg m^2 s^-3
    pub const POWER: Dimension = Dimension([2, 1, -3, 0, 0, 0, 0, 0, 0]);
    /// kg m^2 s^-3 A^-1
    pub const VOLTAGE: Dimension = Dimension([2, 1, -3, -1, 0, 0, 0, 0, 0]);
    /// kg m^2 s^-3 A^-2
    pub const RESISTANCE: Dimension = Dimension([2, 1, -3, -2, 0, 0, 0, 0, 0]);
    /// kg m^3 s^-3 A^-2
    pub const RESISTIVITY: Dimension = Dimension([3, 1, -3, -2, 0, 0, 0, 0, 0]);
    /// kg^-1 m^-2 s^4 A^2
    pub const CAPACITANCE: Dimension = Dimension([-2, -1, 4, 2, 0, 0, 0, 0, 0]);
    /// kg m^2 s^-2 A^-2
    pub const INDUCTANCE: Dimension = Dimension([2, 1, -2, -2, 0, 0, 0, 0, 0]);
    /// A s
    pub const CHARGE: Dimension = Dimension([0, 0, 1, 1, 0, 0, 0, 0, 0]);
    /// s^-1
    pub const FREQUENCY: Dimension = Dimension([0, 0, -1, 0, 0, 0, 0, 0, 0]);
    /// A m^-2
    pub const CURRENT_DENSITY: Dimension = Dimension([-2, 0, 0, 1, 0, 0, 0, 0, 0]);
    /// A m^-1
    pub const CURRENT_PER_LENGTH: Dimension = Dimension([-1, 0, 0, 1, 0, 0, 0, 0, 0]);
    /// K W^-1 = K kg^-1 m^-2 s^3
    pub const THERMAL_RESISTANCE: Dimension = Dimension([-2, -1, 3, 0, 1, 0, 0, 0, 0]);
    /// K^-1
    pub const PER_TEMPERATURE: Dimension = Dimension([0, 0, 0, 0, -1, 0, 0, 0, 0]);
    /// V s^-1
    pub const SLEW_RATE: Dimension = Dimension([2, 1, -4, -1, 0, 0, 0, 0, 0]);
    /// m^2
    pub const AREA: Dimension = Dimension([2, 0, 0, 0, 0, 0, 0, 0, 0]);

    /// The dimension made of one base dimension to the first power.
    pub const fn base(base: Base) -> Dimension {
        let mut exps = [0i8; 9];
        exps[base as usize] = 1;
        Dimension(exps)
    }

    /// Product of two dimensions (exponents add). Saturates instead of overflowing.
    pub fn times(self, other: Dimension) -> Dimension {
        let mut out = [0i8; 9];
        for (i, slot) in out.iter_mut().enumerate() {
            *slot = self.0[i].saturating_add(other.0[i]);
        }
        Dimension(out)
    }

    /// Quotient of two dimensions (exponents subtract).
    pub fn per(self, other: Dimension) -> Dimension {
        self.times(other.powi(-1))
    }

    /// Product of two dimensions, or `None` when an exponent would leave
    /// -127 ..= 127 (a unit such as `m^12` multiplied many times).
    pub fn checked_times(self, other: Dimension) -> Option<Dimension> {
        let mut out = [0i8; 9];
        for (i, slot) in out.iter_mut().enumerate() {
            let v = self.0[i] as i32 + other.0[i] as i32;
            if !(-127..=127).contains(&v) {
                return None;
            }
            *slot = v as i8;
        }
        Some(Dimension(out))
    }

    /// Quotient of two dimensions, or `None` when an exponent would overflow.
    pub fn checked_per(self, other: Dimension) -> Option<Dimension> {
        self.checked_times(other.checked_powi(-1)?)
    }

    /// Integer power, or `None` when an exponent would leave -127 ..= 127.
    pub fn checked_powi(self, n: i32) -> Option<Dimension> {
        let mut out = [0i8; 9];
        for (i, slot) in out.iter_mut().enumerate() {
            let v = (self.0[i] as i32).checked_mul(n)?;
            if !(-127..=127).contains(&v) {
                return None;
            }
            *slot = v as i8;
        }
        Some(Dimension(out))
    }

    /// Integer power of a dimension.
    pub fn powi(self, n: i32) -> Dimension {
        let mut out = [0i8; 9];
        for (i, slot) in out.iter_mut().enumerate() {
            let v = (self.0[i] as i32).saturating_mul(n).clamp(-127, 127);
            *slot = v as i8;
        }
        Dimension(out)
    }

    /// Square root, when every exponent is even.
    pub fn sqrt(self) -> Option<Dimension> {
        let mut out = [0i8; 9];
        for (i, slot) in out.iter_mut().enumerate() {
            if self.0[i] % 2 != 0 {
                return None;
            }
            *slot = self.0[i] / 2;
        }
        Some(Dimension(out))
    }

    /// True for the dimension of a pure number.
    pub fn is_none(self) -> bool {
        self == Dimension::NONE
    }
}

impl fmt::Display for Dimension {
    /// Writes the dimension in SI base symbols, e.g. `kg·m^2·s^-3·A^-1`; `1` for none.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let mut parts = Vec::new();
        for base in Base::ALL {
            let e = self.0[base as usize];
            match e {
                0 => {}
                1 => parts.push(base.symbol().to_string()),
                _ => parts.push(format!("{}^{}", base.symbol(), e)),
            }
        }
        if parts.is_empty() {
            write!(f, "1")
        } else {
            write!(f, "{}", parts.join("·"))
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn derived_dimensions_compose() {
        assert_eq!(Dimension::POWER.per(Dimension::CURRENT), Dimension::VOLTAGE);
        assert_eq!(
            Dimension::VOLTAGE.per(Dimension::CURRENT),
            Dimension::RESISTANCE
        );
        assert_eq!(
            Dimension::RESISTANCE.times(Dimension::LENGTH),
            Dimension::RESISTIVITY
        );
        assert_eq!(
            Dimension::CHARGE.per(Dimension::VOLTAGE),
            Dimension::CAPACITANCE
        );
        assert_eq!(
            Dimension::TEMPERATURE.per(Dimension::POWER),
            Dimension::THERMAL_RESISTANCE
        );
        assert_eq!(Dimension::AREA.sqrt(), Some(Dimension::LENGTH));
        assert_eq!(Dimension::LENGTH.sqrt(), None);
    }

    #[test]
    fn display_uses_base_symbols() {
        assert_eq!(Dimension::VOLTAGE.to_string(), "m^2·kg·s^-3·A^-1");
        assert_eq!(Dimension::NONE.to_string(), "1");
    }

    #[test]
    fn extreme_powers_saturate() {
        let d = Dimension::LENGTH.powi(1000);
        assert_eq!(d.0[0], 127);
    }
}
