//! Dissipation and junction temperature in a sustained short.

use uom::si::f64::{
    ElectricCurrent, ElectricPotential, Power, TemperatureInterval, ThermalResistance,
    ThermodynamicTemperature,
};

/// Power in the pass device with the output at 0 V: the whole supply across it.
pub fn short_dissipation(supply_max: ElectricPotential, short_current: ElectricCurrent) -> Power {
    supply_max * short_current
}

/// Junction temperature: ambient plus power times junction-to-ambient resistance.
pub fn junction_temperature(
    ambient: ThermodynamicTemperature,
    power: Power,
    theta_ja: ThermalResistance,
) -> ThermodynamicTemperature {
    let rise: TemperatureInterval = power * theta_ja;
    ambient + rise
}

#[cfg(test)]
mod tests {
    use super::*;
    use uom::si::{
        electric_current::milliampere, electric_potential::volt, power::watt,
        thermal_resistance::kelvin_per_watt, thermodynamic_temperature::degree_celsius,
    };

    // Textbook relation T_J = T_A + P·θ_JA: 4.2 V × 0.3 A = 1.26 W into
    // 85 K/W from 70 °C gives 70 + 107.1 = 177.1 °C.
    #[test]
    fn junction_from_ambient() {
        let p = short_dissipation(
            ElectricPotential::new::<volt>(4.2),
            ElectricCurrent::new::<milliampere>(300.0),
        );
        assert!((p.get::<watt>() - 1.26).abs() < 1e-12);
        let tj = junction_temperature(
            ThermodynamicTemperature::new::<degree_celsius>(70.0),
            p,
            ThermalResistance::new::<kelvin_per_watt>(85.0),
        );
        assert!((tj.get::<degree_celsius>() - 177.1).abs() < 1e-9);
    }
}
