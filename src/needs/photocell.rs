//! A CdS photocell in a divider: its resistance by light level, the fixed resistor that puts
//! the divider's node at a threshold at the switching light level, where a picked resistor
//! really switches, and what the divider can deliver to the switch.
//!
//! The photocell law R(E) = R10 (E / 10 lux)^-γ, with γ = log10(R10 / R100) typically 0.5-1.0,
//! is common practice. Light-activated: photocell to the supply, fixed resistor to ground, so the
//! node rises with light. Dark-activated: fixed resistor to the supply, photocell to ground, so
//! the node rises as the light falls.

use super::{Worked, sources};
use crate::stage::Activate;
use crate::units::{Amps, Lux, Ohms, Volts, Watts, format_eng, format_number};

/// R(E) = R10 (E / 10 lux)^-γ.
#[must_use]
pub fn resistance_at(r10: Ohms, gamma: f64, lux: Lux) -> Ohms {
    Ohms(r10.0 * (lux.0 / 10.0).powf(-gamma))
}

/// γ = log10(R10 / R100), from the resistances at 10 and 100 lux.
#[must_use]
pub fn gamma_from(r10: Ohms, r100: Ohms) -> f64 {
    (r10.0 / r100.0).log10()
}

/// The light level at which the photocell has resistance `r`: E = 10 lux (r / R10)^(-1/γ).
#[must_use]
pub fn lux_at(r10: Ohms, gamma: f64, r: Ohms) -> Lux {
    Lux(10.0 * (r.0 / r10.0).powf(-1.0 / gamma))
}

/// The node voltage of a divider: Vs × bottom / (top + bottom).
#[must_use]
pub fn divider_node(vs: Volts, top: Ohms, bottom: Ohms) -> Volts {
    vs * (bottom.0 / (top.0 + bottom.0))
}

/// The photocell resistance at which a fixed resistor `r_fixed` puts the node at `threshold`.
#[must_use]
pub fn photocell_resistance_for(
    activate: Activate,
    r_fixed: Ohms,
    vs: Volts,
    threshold: Volts,
) -> Ohms {
    let above = (vs - threshold).0;
    match activate {
        // Photocell on top: node = Vs Rf / (Rf + Rp) = th  =>  Rp = Rf (Vs - th) / th.
        Activate::Light => Ohms(r_fixed.0 * above / threshold.0),
        // Photocell below: node = Vs Rp / (Rf + Rp) = th  =>  Rp = Rf th / (Vs - th).
        Activate::Dark => Ohms(r_fixed.0 * threshold.0 / above),
    }
}

/// The fixed resistor that puts the node at `threshold` when the photocell is `r_on`:
/// light-activated R_on th / (Vs - th); dark-activated R_on (Vs - th) / th.
#[must_use]
pub fn fixed_resistor_exact(
    activate: Activate,
    r_on: Ohms,
    vs: Volts,
    threshold: Volts,
) -> Worked<Ohms> {
    let above = vs - threshold;
    let (value, line) = match activate {
        Activate::Light => {
            let r = Ohms(r_on.0 * threshold.0 / above.0);
            (
                r,
                format!(
                    "light-activated (photocell to the supply, resistor to ground): R = R_on × th / (Vs - th) = {r_on} × {threshold} / ({vs} - {threshold}) = {r}"
                ),
            )
        }
        Activate::Dark => {
            let r = Ohms(r_on.0 * above.0 / threshold.0);
            (
                r,
                format!(
                    "dark-activated (resistor to the supply, photocell to ground): R = R_on × (Vs - th) / th = {r_on} × ({vs} - {threshold}) / {threshold} = {r}"
                ),
            )
        }
    };
    Worked::new(value, line, "circuit theory (voltage divider)")
}

/// The light level at which a fixed resistor `r_fixed` switches the divider: the photocell
/// resistance that puts the node at the threshold, turned into lux by the photocell law.
#[must_use]
pub fn switching_lux(
    activate: Activate,
    r_fixed: Ohms,
    vs: Volts,
    threshold: Volts,
    r10: Ohms,
    gamma: f64,
) -> Worked<Lux> {
    let r = photocell_resistance_for(activate, r_fixed, vs, threshold);
    let lux = lux_at(r10, gamma, r);
    Worked::new(
        lux,
        format!(
            "the node is at {threshold} when the photocell is {r}; E = 10 lux × (R / R10)^(-1/γ) = 10 lux × ({r} / {r10})^(-1/{}) = {}",
            format_number(gamma),
            format_eng(lux.0, crate::units::Dim::Lux)
        ),
        sources::PHOTOCELL_LAW,
    )
}

/// The most a photocell can dissipate in a divider with `r_fixed`: Vs² / (4 R_fixed), reached
/// when its resistance equals R_fixed (maximum power transfer, circuit theory).
#[must_use]
pub fn worst_power(vs: Volts, r_fixed: Ohms) -> Worked<Watts> {
    let p = Watts(vs.0 * vs.0 / (4.0 * r_fixed.0));
    Worked::new(
        p,
        format!(
            "P(max) = Vs² / (4 R_fixed) = ({vs})² / (4 × {r_fixed}) = {p}, when the photocell equals R_fixed"
        ),
        "circuit theory (maximum power transfer)",
    )
}

/// The current a divider can push into a switch input held at `threshold` (a base at VBE),
/// one decade of light past the switching level (a tenth of `on_lux` for dark-activated, ten
/// times for light-activated): (V_open - th) / R_thevenin, at supply `vs`. Zero or negative
/// means the divider cannot drive the input at all.
#[must_use]
pub fn drive_current(
    activate: Activate,
    r10: Ohms,
    gamma: f64,
    on_lux: Lux,
    r_fixed: Ohms,
    vs: Volts,
    threshold: Volts,
) -> Worked<Amps> {
    let (lux, top, bottom) = match activate {
        Activate::Light => {
            let lux = Lux(on_lux.0 * 10.0);
            (lux, resistance_at(r10, gamma, lux), r_fixed)
        }
        Activate::Dark => {
            let lux = Lux(on_lux.0 / 10.0);
            (lux, r_fixed, resistance_at(r10, gamma, lux))
        }
    };
    let open = divider_node(vs, top, bottom);
    let thevenin = Ohms(top.0 * bottom.0 / (top.0 + bottom.0));
    let current: Amps = (open - threshold) / thevenin;
    Worked::new(
        current,
        format!(
            "one decade past the switching level ({}): top {top}, bottom {bottom}; open node {open}, source resistance {thevenin}",
            format_eng(lux.0, crate::units::Dim::Lux)
        ),
        "circuit theory (Thévenin equivalent of the divider)",
    )
    .with(format!(
        "I = (V_open - th) / R_th = ({open} - {threshold}) / {thevenin} = {current} into an input held at {threshold}"
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(a: f64, b: f64, rel: f64) -> bool {
        (a - b).abs() <= rel * b.abs()
    }

    /// REFERENCES.md, CdS photocell (common practice law), R10 = 10 kΩ:
    /// γ 0.5: 31.62 k, 3162, 1000; γ 0.7: 50.12 k, 1995, 398; γ 1.0: 100 k, 1000, 100
    /// at 1, 100 and 1000 lux.
    #[test]
    fn photocell_table_common_practice() {
        let table = [
            (0.5, [31.62e3, 3162.0, 1000.0]),
            (0.7, [50.12e3, 1995.0, 398.0]),
            (1.0, [100e3, 1000.0, 100.0]),
        ];
        for (gamma, row) in table {
            for (lux, want) in [1.0, 100.0, 1000.0].into_iter().zip(row) {
                let got = resistance_at(Ohms(10e3), gamma, Lux(lux)).0;
                assert!(close(got, want, 1.5e-3), "γ {gamma} at {lux} lux: {got}");
                let back = lux_at(Ohms(10e3), gamma, Ohms(got)).0;
                assert!(close(back, lux, 1e-9));
            }
        }
        assert!(close(gamma_from(Ohms(10e3), Ohms(1995.0)), 0.7, 1e-3));
    }

    /// REFERENCES.md divider (circuit theory with the common-practice law): 5 V, photocell on
    /// top, 10 kΩ to ground, γ 0.7: 0.8317 V at 1 lux, 2.500 V at 10 lux, 4.168 V at 100 lux.
    #[test]
    fn light_divider_voltages_references() {
        for (lux, want) in [(1.0, 0.8317), (10.0, 2.5), (100.0, 4.168)] {
            let rp = resistance_at(Ohms(10e3), 0.7, Lux(lux));
            let v = divider_node(Volts(5.0), rp, Ohms(10e3)).0;
            assert!((v - want).abs() < 5e-4, "{lux} lux: {v}");
        }
    }

    /// REFERENCES.md: with 4.7 kΩ to ground, 2.5 V is reached at 29.41 lux; and the exact
    /// resistor for 2.5 V at 10 lux is 10 kΩ.
    #[test]
    fn switching_level_of_a_picked_resistor_references() {
        let lux = switching_lux(
            Activate::Light,
            Ohms(4.7e3),
            Volts(5.0),
            Volts(2.5),
            Ohms(10e3),
            0.7,
        );
        assert!((lux.value.0 - 29.41).abs() < 0.01, "{}", lux.value.0);
        let exact = fixed_resistor_exact(Activate::Light, Ohms(10e3), Volts(5.0), Volts(2.5));
        assert!(close(exact.value.0, 10e3, 1e-12));
    }

    /// The two divider orientations are each other's mirror (circuit theory): a dark-activated
    /// divider with the resistor on top reaches the threshold at the same photocell resistance
    /// the formula gives.
    #[test]
    fn dark_divider_reaches_its_threshold() {
        let r_on = resistance_at(Ohms(20e3), 0.7, Lux(15.0));
        let rf = fixed_resistor_exact(Activate::Dark, r_on, Volts(5.0), Volts(0.7)).value;
        let node = divider_node(Volts(5.0), rf, r_on);
        assert!((node.0 - 0.7).abs() < 1e-12);
        let lux = switching_lux(Activate::Dark, rf, Volts(5.0), Volts(0.7), Ohms(20e3), 0.7);
        assert!(close(lux.value.0, 15.0, 1e-9));
    }

    /// Maximum power transfer (circuit theory): Vs² / (4 R) is the largest photocell
    /// dissipation over every photocell resistance.
    #[test]
    fn worst_power_is_the_maximum_over_the_photocell_range() {
        let (vs, rf) = (Volts(12.0), Ohms(10e3));
        let bound = worst_power(vs, rf).value.0;
        let max = (0..2000)
            .map(|k| {
                let rp = 10f64.powf(1.0 + k as f64 * 0.003);
                let i = vs.0 / (rp + rf.0);
                i * i * rp
            })
            .fold(0.0, f64::max);
        assert!(max <= bound * (1.0 + 1e-12) && max > bound * 0.999);
    }

    #[test]
    fn drive_current_is_positive_past_the_switching_level() {
        // The tool-cabinet case: 5 V, 20 kΩ cell, γ 0.7, dark at 10 lux, 120 kΩ on top.
        let i = drive_current(
            Activate::Dark,
            Ohms(20e3),
            0.7,
            Lux(10.0),
            Ohms(120e3),
            Volts(5.0),
            Volts(0.7),
        );
        assert!(i.value.0 > 20e-6 && i.value.0 < 40e-6, "{}", i.value);
    }
}
