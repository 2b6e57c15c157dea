//! Startup: surge into the output capacitor and the time to charge it.

use uom::si::f64::ElectricCharge;
use uom::si::f64::{Capacitance, ElectricCurrent, ElectricPotential, Time};

/// A ramp rate of voltage per time, as uom has no named quantity for it.
pub type SlewRate = uom::si::Quantity<
    uom::si::ISQ<
        uom::typenum::P2,
        uom::typenum::P1,
        uom::typenum::N4,
        uom::typenum::N1,
        uom::typenum::Z0,
        uom::typenum::Z0,
        uom::typenum::Z0,
    >,
    uom::si::SI<f64>,
    f64,
>;

/// Current drawn while the output ramps at `slew`: I = C·dV/dt + load.
pub fn ramp_surge(
    capacitance: Capacitance,
    slew: SlewRate,
    load: ElectricCurrent,
) -> ElectricCurrent {
    let charging: ElectricCurrent = capacitance * slew;
    charging + load
}

/// Time to charge `capacitance` to `voltage` with `charge` current while
/// `load` draws part of it: t = C·V / (I − load). `None` when I ≤ load
/// (the output never starts).
pub fn charge_time(
    capacitance: Capacitance,
    voltage: ElectricPotential,
    charge: ElectricCurrent,
    load: ElectricCurrent,
) -> Option<Time> {
    let net = charge - load;
    if net.value <= 0.0 {
        return None;
    }
    let q: ElectricCharge = capacitance * voltage;
    Some(q / net)
}

#[cfg(test)]
mod tests {
    use super::*;
    use uom::si::{
        capacitance::microfarad, electric_current::milliampere, electric_potential::volt,
        time::microsecond,
    };

    // Q = C·V and t = Q/I (any circuits textbook): 10 µF to 3.3 V with a net
    // 100 mA takes 330 µs; 2.2 µF × 1 V/µs draws 2.2 A plus the load.
    #[test]
    fn capacitor_charging() {
        let t = charge_time(
            Capacitance::new::<microfarad>(10.0),
            ElectricPotential::new::<volt>(3.3),
            ElectricCurrent::new::<milliampere>(150.0),
            ElectricCurrent::new::<milliampere>(50.0),
        )
        .unwrap();
        assert!((t.get::<microsecond>() - 330.0).abs() < 1e-9);
        assert!(
            charge_time(
                Capacitance::new::<microfarad>(1.0),
                ElectricPotential::new::<volt>(1.0),
                ElectricCurrent::new::<milliampere>(50.0),
                ElectricCurrent::new::<milliampere>(50.0)
            )
            .is_none()
        );
        let slew = SlewRate {
            dimension: std::marker::PhantomData,
            units: std::marker::PhantomData,
            value: 1e6,
        };
        let i = ramp_surge(
            Capacitance::new::<microfarad>(2.2),
            slew,
            ElectricCurrent::new::<milliampere>(100.0),
        );
        assert!((i.get::<milliampere>() - 2300.0).abs() < 1e-9);
    }
}
