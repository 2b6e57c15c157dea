//! Conversion of checked SI values into `uom` typed quantities.
//!
//! The model keeps values as plain SI numbers with a [`QuantityKind`]; the
//! physics layer wants compile-time checked quantities. [`to_uom`] is the one
//! gate between the two: it refuses a value whose kind does not match.

use crate::{Dimension, QuantityKind};
use uom::si::f64 as q;

/// A `uom` quantity type that a checked SI value may be turned into.
pub trait UomQuantity: Sized {
    /// The kind a value must have to become this quantity.
    const KIND: QuantityKind;
    /// Builds the quantity from its value in coherent SI units.
    fn from_si(value: f64) -> Self;
    /// The quantity's value in coherent SI units.
    fn to_si(&self) -> f64;
}

macro_rules! bridge {
    ($ty:ty, $kind:expr, $unit:ty) => {
        impl UomQuantity for $ty {
            const KIND: QuantityKind = $kind;
            fn from_si(value: f64) -> Self {
                <$ty>::new::<$unit>(value)
            }
            fn to_si(&self) -> f64 {
                self.get::<$unit>()
            }
        }
    };
}

use uom::si::{
    angle, area, capacitance, electric_current, electric_current_density, electric_potential,
    electrical_resistance, electrical_resistivity, energy, length, power, ratio,
    temperature_interval, thermal_resistance, thermodynamic_temperature, time,
};

bridge!(
    q::ElectricCurrent,
    QuantityKind::CURRENT,
    electric_current::ampere
);
bridge!(
    q::ElectricPotential,
    QuantityKind::VOLTAGE,
    electric_potential::volt
);
bridge!(q::Power, QuantityKind::of(Dimension::POWER), power::watt);
bridge!(
    q::Energy,
    QuantityKind::of(Dimension::ENERGY),
    energy::joule
);
bridge!(
    q::Length,
    QuantityKind::of(Dimension::LENGTH),
    length::meter
);
bridge!(
    q::Area,
    QuantityKind::of(Dimension::AREA),
    area::square_meter
);
bridge!(q::Time, QuantityKind::of(Dimension::TIME), time::second);
bridge!(
    q::Capacitance,
    QuantityKind::of(Dimension::CAPACITANCE),
    capacitance::farad
);
bridge!(q::Ratio, QuantityKind::NONE, ratio::ratio);
bridge!(q::Angle, QuantityKind::of(Dimension::ANGLE), angle::radian);
bridge!(
    q::ElectricalResistance,
    QuantityKind::of(Dimension::RESISTANCE),
    electrical_resistance::ohm
);
bridge!(
    q::ElectricalResistivity,
    QuantityKind::of(Dimension::RESISTIVITY),
    electrical_resistivity::ohm_meter
);
bridge!(
    q::ElectricCurrentDensity,
    QuantityKind::of(Dimension::CURRENT_DENSITY),
    electric_current_density::ampere_per_square_meter
);
bridge!(
    q::ThermalResistance,
    QuantityKind::of(Dimension::THERMAL_RESISTANCE),
    thermal_resistance::kelvin_per_watt
);
bridge!(
    q::ThermodynamicTemperature,
    QuantityKind::ABSOLUTE_TEMPERATURE,
    thermodynamic_temperature::kelvin
);
bridge!(
    q::TemperatureInterval,
    QuantityKind::TEMPERATURE_DIFFERENCE,
    temperature_interval::kelvin
);

/// Converts an SI value of the given kind into the `uom` quantity `Q`.
///
/// Returns `None` when the kind does not fit `Q` (a voltage asked for as a
/// current, a temperature difference asked for as an absolute temperature).
pub fn to_uom<Q: UomQuantity>(si_value: f64, kind: QuantityKind) -> Option<Q> {
    kind.fits(Q::KIND).then(|| Q::from_si(si_value))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::parse_unit;
    use uom::si::f64::*;

    fn via_table(number: f64, unit: &str) -> (f64, QuantityKind) {
        let u = parse_unit(unit).unwrap();
        (u.to_si(number), u.kind)
    }

    fn close(a: f64, b: f64) -> bool {
        ((a - b) / b).abs() < 1e-12
    }

    // Cross-check of our unit table against uom's own unit definitions.
    #[test]
    fn table_agrees_with_uom_conversions() {
        use uom::si::{capacitance, electric_current, length, thermodynamic_temperature, time};
        let (v, k) = via_table(2.2, "uF");
        let c: Capacitance = to_uom(v, k).unwrap();
        assert!(close(c.get::<capacitance::microfarad>(), 2.2));
        let (v, k) = via_table(150.0, "mA");
        let i: ElectricCurrent = to_uom(v, k).unwrap();
        assert!(close(i.get::<electric_current::milliampere>(), 150.0));
        let (v, k) = via_table(3.0, "mil");
        let l: Length = to_uom(v, k).unwrap();
        assert!(close(l.get::<length::mil>(), 3.0));
        let (v, k) = via_table(25.0, "°C");
        let t: ThermodynamicTemperature = to_uom(v, k).unwrap();
        assert!(close(
            t.get::<thermodynamic_temperature::degree_celsius>(),
            25.0
        ));
        let (v, k) = via_table(2.0, "h");
        let d: Time = to_uom(v, k).unwrap();
        assert!(close(d.get::<time::hour>(), 2.0));
        let (v, k) = via_table(1.0, "yr");
        let d: Time = to_uom(v, k).unwrap();
        assert!(close(d.get::<time::day>(), 365.0));
    }

    #[test]
    fn refuses_wrong_kind() {
        let (v, k) = via_table(3.3, "V");
        assert!(to_uom::<ElectricCurrent>(v, k).is_none());
        let (v, k) = via_table(25.0, "°C");
        assert!(to_uom::<TemperatureInterval>(v, k).is_none());
        let (v, k) = via_table(10.0, "K");
        assert!(to_uom::<TemperatureInterval>(v, k).is_some());
    }
}
