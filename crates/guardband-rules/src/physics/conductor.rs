//! Conductor ratings: electromigration of on-die metal (Black's equation),
//! fusing of bond wires (Preece) and board traces (IPC-2221).

use uom::si::f64::{
    Area, ElectricCurrent, ElectricCurrentDensity, Energy, Length, Ratio, ThermodynamicTemperature,
    Time,
};
use uom::si::f64::{
    ElectricalResistance, ElectricalResistivity, TemperatureCoefficient, TemperatureInterval,
};
use uom::si::{area::square_inch, electric_current::ampere, length::inch, temperature_interval};

/// The Boltzmann constant in eV/K (CODATA 2018, exact since the 2019 SI:
/// k = 1.380649e-23 J/K and e = 1.602176634e-19 C give 8.617333262e-5 eV/K).
pub const BOLTZMANN_EV_PER_K: f64 = 8.617_333_262e-5;

/// Boltzmann constant as an energy per kelvin, from its exact SI value.
pub fn boltzmann_energy_per_kelvin() -> Energy {
    Energy::new::<uom::si::energy::joule>(1.380_649e-23)
}

/// What Black's equation needs to derate a current-density limit.
#[derive(Debug, Clone, Copy)]
pub struct BlackParameters {
    pub activation_energy: Energy,
    pub current_exponent: Ratio,
}

/// Allowed current-density ratio J(T, L) / J(T_ref, L_ref) from Black's
/// equation, MTTF = A · J^-n · exp(Ea / (k·T)), holding the lifetime target.
///
/// Solving for J at equal MTTF: J = J_ref · exp(Ea/(n·k) · (1/T − 1/T_ref)) ·
/// (L_ref / L)^(1/n). Hotter or longer-lived than the reference gives < 1.
pub fn black_derating(
    params: BlackParameters,
    temperature: ThermodynamicTemperature,
    reference_temperature: ThermodynamicTemperature,
    lifetime: Option<(Time, Time)>,
) -> Ratio {
    let k = boltzmann_energy_per_kelvin();
    let n = params.current_exponent;
    // Ea / k has the dimension of temperature; keep it as a uom quotient.
    let ea_over_k = (params.activation_energy / k).value; // kelvin
    let inv = 1.0 / temperature.value - 1.0 / reference_temperature.value; // 1/K
    let thermal = (ea_over_k * inv / n.value).exp();
    let life = match lifetime {
        Some((target, reference)) => {
            let ratio: Ratio = reference / target;
            ratio.value.powf(1.0 / n.value)
        }
        None => 1.0,
    };
    Ratio::new::<uom::si::ratio::ratio>(thermal * life)
}

/// Resistivity at temperature `t` from its value at `t_ref` and a linear
/// temperature coefficient: ρ(T) = ρ_ref · (1 + α · (T − T_ref)).
pub fn resistivity_at(
    rho_ref: ElectricalResistivity,
    alpha: TemperatureCoefficient,
    t: ThermodynamicTemperature,
    t_ref: ThermodynamicTemperature,
) -> ElectricalResistivity {
    let rise: TemperatureInterval =
        TemperatureInterval::new::<temperature_interval::kelvin>(t.value - t_ref.value);
    let growth: Ratio = alpha * rise;
    rho_ref * (Ratio::new::<uom::si::ratio::ratio>(1.0) + growth)
}

/// Resistance of a rectangular line: R = ρ · L / (w · t).
pub fn line_resistance(
    rho: ElectricalResistivity,
    length: Length,
    width: Length,
    thickness: Length,
) -> ElectricalResistance {
    rho * length / (width * thickness)
}

/// Electromigration rating of a metal line of given width and thickness.
pub fn metal_rating(
    width: Length,
    thickness: Length,
    density: ElectricCurrentDensity,
    derating: Ratio,
) -> ElectricCurrent {
    let area: Area = width * thickness;
    density * area * derating
}

/// Preece's fusing constants, with the wire diameter in inches and the
/// current in amperes: I = a · d^(3/2). Copper 10244, aluminium 7585 (Preece 1884).
pub fn preece_constant(material: &str) -> Option<f64> {
    match material {
        "copper" => Some(10_244.0),
        "aluminium" => Some(7_585.0),
        _ => None,
    }
}

/// Preece fusing current of a wire: I = a · d^(3/2), d in inches.
pub fn preece_fusing_current(constant: f64, diameter: Length) -> ElectricCurrent {
    let d_in = diameter.get::<inch>();
    ElectricCurrent::new::<ampere>(constant * d_in.powf(1.5))
}

/// IPC-2221 board conductor: I = k · ΔT^0.44 · A^0.725 with I in A, ΔT in °C
/// rise and A in square mils; k = 0.048 for external and 0.024 for internal layers.
pub fn ipc2221_current(
    external: bool,
    rise: TemperatureInterval,
    cross_section: Area,
) -> ElectricCurrent {
    let k = if external { 0.048 } else { 0.024 };
    let dt = rise.get::<temperature_interval::kelvin>();
    // 1 in² = 10^6 mil² exactly (1 mil = 0.001 in).
    let a = cross_section.get::<square_inch>() * 1e6;
    ElectricCurrent::new::<ampere>(k * dt.powf(0.44) * a.powf(0.725))
}

#[cfg(test)]
mod tests {
    use super::*;
    use uom::si::{
        electric_current::milliampere,
        energy::electronvolt,
        length::{micrometer, mil},
        thermodynamic_temperature::degree_celsius,
        time::year,
    };

    fn close(a: f64, b: f64, rel: f64) -> bool {
        ((a - b) / b).abs() < rel
    }

    // CODATA 2018 recommended value: k = 8.617333262e-5 eV/K.
    #[test]
    fn boltzmann_in_ev_per_kelvin() {
        let k = boltzmann_energy_per_kelvin().get::<electronvolt>();
        assert!(close(k, 8.617_333_262e-5, 1e-9));
        assert!(close(k, BOLTZMANN_EV_PER_K, 1e-9));
    }

    // Black's-equation derating as used in JEDEC-style electromigration
    // practice (JEP122 gives MTTF = A·J^-n·exp(Ea/kT)): with Ea = 0.7 eV and
    // n = 2, moving from 105 °C to 125 °C multiplies the allowed J by
    // exp(0.7/(2k)·(1/398.15 − 1/378.15)) = 0.5830 (hand calculation of the
    // published equation).
    #[test]
    fn black_temperature_derating() {
        let p = BlackParameters {
            activation_energy: Energy::new::<electronvolt>(0.7),
            current_exponent: Ratio::new::<uom::si::ratio::ratio>(2.0),
        };
        let t = ThermodynamicTemperature::new::<degree_celsius>(125.0);
        let t_ref = ThermodynamicTemperature::new::<degree_celsius>(105.0);
        let r = black_derating(p, t, t_ref, None).value;
        let expected = (0.7_f64 / (2.0 * 8.617_333_262e-5) * (1.0 / 398.15 - 1.0 / 378.15)).exp();
        assert!(close(r, expected, 1e-6));
        assert!(close(r, 0.5830, 1e-3));
        // Equal temperatures and lifetimes: no derating.
        assert!(close(black_derating(p, t, t, None).value, 1.0, 1e-12));
        // Lifetime doubles, n = 2: J scales by (1/2)^(1/2).
        let life = Some((Time::new::<year>(20.0), Time::new::<year>(10.0)));
        assert!(close(
            black_derating(p, t, t, life).value,
            0.5f64.sqrt(),
            1e-12
        ));
    }

    // Preece's constants as tabulated from Preece (1884): a 1 mil copper wire
    // fuses at 10244 · 0.001^1.5 = 0.324 A; aluminium 0.240 A.
    #[test]
    fn preece_examples() {
        let d = Length::new::<mil>(1.0);
        let cu = preece_fusing_current(preece_constant("copper").unwrap(), d).get::<ampere>();
        assert!(close(cu, 0.3239, 1e-3));
        let al = preece_fusing_current(preece_constant("aluminium").unwrap(), d).get::<ampere>();
        assert!(close(al, 0.2399, 1e-3));
        assert!(preece_constant("gold").is_none());
    }

    // IPC-2221 formula (section 6.2): an external 10 mil wide trace of 1 oz
    // copper (1.378 mil, the usual figure, from memory) with a 10 °C rise:
    // A = 13.78 mil², I = 0.048·10^0.44·13.78^0.725 = 0.8855 A (hand
    // calculation). Internal layers (k = 0.024) carry half for the same inputs.
    #[test]
    fn ipc2221_examples() {
        let rise = TemperatureInterval::new::<temperature_interval::kelvin>(10.0);
        let a = Length::new::<mil>(10.0) * Length::new::<mil>(1.378);
        let ext = ipc2221_current(true, rise, a).get::<ampere>();
        assert!(close(
            ext,
            0.048 * 10f64.powf(0.44) * 13.78f64.powf(0.725),
            1e-9
        ));
        assert!(close(ext, 0.8855, 1e-3));
        let int = ipc2221_current(false, rise, a).get::<ampere>();
        assert!(close(int, ext / 2.0, 1e-12));
    }

    // IEC 60028: annealed copper has ρ = 1/58 Ω·mm²/m = 1.7241e-8 Ω·m at
    // 20 °C and a temperature coefficient of 0.00393 /K there, so at 75 °C
    // ρ = 1.7241e-8 · (1 + 0.00393 · 55) = 2.0968e-8 Ω·m.
    #[test]
    fn iec60028_copper_resistivity() {
        use uom::si::{electrical_resistivity::ohm_meter, temperature_coefficient::per_kelvin};
        let rho = resistivity_at(
            ElectricalResistivity::new::<ohm_meter>(1.0 / 58.0 * 1e-6),
            TemperatureCoefficient::new::<per_kelvin>(0.00393),
            ThermodynamicTemperature::new::<degree_celsius>(75.0),
            ThermodynamicTemperature::new::<degree_celsius>(20.0),
        );
        assert!(close(rho.get::<ohm_meter>(), 2.0968e-8, 1e-4));
        // 1 m of 1 mm² copper at 20 °C: 17.24 mΩ (the IEC 60028 definition of the standard).
        let r = line_resistance(
            ElectricalResistivity::new::<ohm_meter>(1.0 / 58.0 * 1e-6),
            Length::new::<uom::si::length::meter>(1.0),
            Length::new::<uom::si::length::millimeter>(1.0),
            Length::new::<uom::si::length::millimeter>(1.0),
        );
        assert!(close(
            r.get::<uom::si::electrical_resistance::ohm>(),
            0.017_241,
            1e-4
        ));
    }

    // Aluminium: ρ = 2.65e-8 Ω·m at 20 °C and α about 0.0039 /K (handbook
    // values, from memory of the CRC Handbook tables), so a line 1000 um long,
    // 10 um wide and 1 um thick is 2.65 Ω at 20 °C; at 125 °C ρ grows by 1 + 0.0039·105.
    #[test]
    fn handbook_aluminium_line() {
        use uom::si::{
            electrical_resistivity::ohm_meter, length::micrometer,
            temperature_coefficient::per_kelvin,
        };
        let rho20 = ElectricalResistivity::new::<ohm_meter>(2.65e-8);
        let r = line_resistance(
            rho20,
            Length::new::<micrometer>(1000.0),
            Length::new::<micrometer>(10.0),
            Length::new::<micrometer>(1.0),
        );
        assert!(close(
            r.get::<uom::si::electrical_resistance::ohm>(),
            2.65,
            1e-9
        ));
        let hot = resistivity_at(
            rho20,
            TemperatureCoefficient::new::<per_kelvin>(0.0039),
            ThermodynamicTemperature::new::<degree_celsius>(125.0),
            ThermodynamicTemperature::new::<degree_celsius>(20.0),
        );
        assert!(close(
            hot.get::<ohm_meter>(),
            2.65e-8 * (1.0 + 0.0039 * 105.0),
            1e-9
        ));
    }

    #[test]
    fn metal_rating_from_geometry() {
        let j = ElectricCurrentDensity::new::<
            uom::si::electric_current_density::ampere_per_square_meter,
        >(1e-3 / 1e-12);
        let i = metal_rating(
            Length::new::<micrometer>(30.0),
            Length::new::<micrometer>(0.9),
            j,
            Ratio::new::<uom::si::ratio::ratio>(1.0),
        );
        assert!(close(i.get::<milliampere>(), 27.0, 1e-12));
    }
}
