//! Dissipation and temperature of the switch: what a saturated BJT or an on MOSFET dissipates,
//! a PD rating derated to the ambient, and the junction temperature through RthJA.

use super::{Worked, sources};
use crate::units::{Amps, Celsius, Ohms, Volts, Watts};

/// Factor on RDS(on) for a hot MOSFET: RDS(on) rises about 1.5× from 25 °C to a hot junction
/// (common practice for silicon MOSFETs).
pub const RDS_ON_HOT_FACTOR: f64 = 1.5;

/// A saturated BJT's dissipation: P = VCE(sat) IC + VBE IB.
#[must_use]
pub fn bjt_dissipation(vce_sat: Volts, ic: Amps, vbe: Volts, ib: Amps) -> Worked<Watts> {
    let collector: Watts = vce_sat * ic;
    let base: Watts = vbe * ib;
    let p = collector + base;
    Worked::new(
        p,
        format!(
            "P = VCE(sat) × IL + VBE × IB = {vce_sat} × {ic} + {vbe} × {ib} = {collector} + {base} = {p}"
        ),
        sources::CIRCUIT_THEORY,
    )
}

/// An on MOSFET's dissipation, hot: P = IL² RDS(on) × 1.5 (the 1.5 for a hot junction is
/// common practice).
#[must_use]
pub fn mosfet_dissipation(il: Amps, rds_on: Ohms) -> Worked<Watts> {
    let p = mosfet_power(il, rds_on);
    Worked::new(
        p,
        format!("P = IL² × RDS(on) × 1.5 = ({il})² × {rds_on} × 1.5 = {p}"),
        "common practice (RDS(on) × 1.5 for a hot junction)",
    )
}

/// The value of [`mosfet_dissipation`] without its working: a ranking holds a million MOSFETs
/// against the stage and must not write a sentence for each.
#[must_use]
pub fn mosfet_power(il: Amps, rds_on: Ohms) -> Watts {
    Watts(il.0 * il.0 * rds_on.0 * RDS_ON_HOT_FACTOR)
}

/// A PD rating (given at 25 °C) derated linearly to zero at TJmax, at `ambient`: the usual
/// datasheet derating curve (common practice). At or below 25 °C the full rating applies.
#[must_use]
pub fn derated_pd(pd: Watts, tj_max: Celsius, ambient: Celsius) -> Watts {
    if ambient.0 <= 25.0 {
        return pd;
    }
    let span = tj_max.0 - 25.0;
    if span <= 0.0 {
        return Watts(0.0);
    }
    pd * ((tj_max.0 - ambient.0) / span).clamp(0.0, 1.0)
}

/// TJ = Ta + P RthJA, with RthJA in K/W.
#[must_use]
pub fn junction_temperature(ambient: Celsius, p: Watts, rth_ja: f64) -> Celsius {
    Celsius(ambient.0 + p.0 * rth_ja)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Floyd, Electronic Devices, example 4-4 conditions with the relation P = VCE(sat) IC +
    /// VBE IB (circuit theory): 0.2 V × 9.8 mA + 0.7 V × 0.23 mA = 2.12 mW.
    #[test]
    fn bjt_dissipation_circuit_theory() {
        let p = bjt_dissipation(Volts(0.2), Amps(9.8e-3), Volts(0.7), Amps(0.23e-3));
        assert!((p.value.0 - 2.121e-3).abs() < 1e-9, "{}", p.value);
    }

    /// Common practice: the hot-MOSFET factor 1.5 on IL² RDS(on): 2 A in 50 mΩ is 0.3 W.
    #[test]
    fn mosfet_dissipation_common_practice() {
        let p = mosfet_dissipation(Amps(2.0), Ohms(0.05));
        assert!((p.value.0 - 0.3).abs() < 1e-12);
        assert_eq!(mosfet_power(Amps(2.0), Ohms(0.05)), p.value);
    }

    /// Linear derating to TJmax (common practice): 625 mW at 25 °C, TJmax 150 °C, at 40 °C:
    /// 625 × 110 / 125 = 550 mW; zero at TJmax; full at 25 °C and below.
    #[test]
    fn linear_pd_derating_common_practice() {
        let pd = Watts(0.625);
        assert!((derated_pd(pd, Celsius(150.0), Celsius(40.0)).0 - 0.55).abs() < 1e-12);
        assert_eq!(derated_pd(pd, Celsius(150.0), Celsius(150.0)).0, 0.0);
        assert_eq!(derated_pd(pd, Celsius(150.0), Celsius(200.0)).0, 0.0);
        assert_eq!(derated_pd(pd, Celsius(150.0), Celsius(10.0)), pd);
        let tj = junction_temperature(Celsius(40.0), Watts(0.2), 200.0);
        assert!((tj.0 - 80.0).abs() < 1e-12);
    }
}
