//! The switch itself: supply extremes, load current, the off-state peak it must block, the
//! derated ratings it needs, and the base drive of a saturated BJT (circuit theory; forced beta
//! and derating are common practice).

use super::eseries::{self, Preferred, Series};
use super::{Worked, sources};
use crate::units::{Amps, Dim, Ohms, Volts, Watts, format_eng, format_number};

/// Vs_max = Vs (1 + tolerance) and Vs_min = Vs (1 - tolerance).
#[must_use]
pub fn supply_extremes(vs: Volts, tolerance: f64) -> (Worked<Volts>, Worked<Volts>) {
    let percent = tolerance * 100.0;
    let max = vs * (1.0 + tolerance);
    let min = vs * (1.0 - tolerance);
    (
        Worked::new(
            max,
            format!(
                "Vs_max = Vs × (1 + tol) = {vs} × (1 + {}) = {max}",
                format_number(tolerance)
            ),
            sources::COMMON_PRACTICE,
        )
        .with(format!(
            "the supply may sit {} % high",
            format_number(percent)
        )),
        Worked::new(
            min,
            format!(
                "Vs_min = Vs × (1 - tol) = {vs} × (1 - {}) = {min}",
                format_number(tolerance)
            ),
            sources::COMMON_PRACTICE,
        )
        .with(format!(
            "the supply may sit {} % low",
            format_number(percent)
        )),
    )
}

/// The on-state load current: IL = (Vs_max - V_sat) / R. `None` when the supply does not
/// exceed V_sat or R is not positive.
#[must_use]
pub fn load_current(vs_max: Volts, v_sat: Volts, r: Ohms) -> Option<Worked<Amps>> {
    let across = vs_max - v_sat;
    if across.0 <= 0.0 || r.0 <= 0.0 {
        return None;
    }
    let il: Amps = across / r;
    Some(Worked::new(
        il,
        format!("IL = (Vs_max - V_sat) / R = ({vs_max} - {v_sat}) / {r} = {il}"),
        sources::CIRCUIT_THEORY,
    ))
}

/// The LED series resistor: the exact value (Vs_max - VF - V_sat) / I_LED, and the E-series
/// value at or above it, so the current at Vs_max never exceeds the set current. `None` when
/// the supply does not exceed VF + V_sat.
#[must_use]
pub fn led_series_resistor(
    vs_max: Volts,
    led_vf: Volts,
    v_sat: Volts,
    current: Amps,
    series: Series,
) -> Option<Worked<Preferred>> {
    let across = vs_max - led_vf - v_sat;
    if across.0 <= 0.0 || current.0 <= 0.0 {
        return None;
    }
    let exact: Ohms = across / current;
    let pick = eseries::at_or_above(series, exact.0)?;
    let picked = Ohms(pick.value());
    let actual: Amps = across / picked;
    Some(Worked {
        value: pick,
        working: vec![
            format!(
                "R = (Vs_max - VF - V_sat) / I_LED = ({vs_max} - {led_vf} - {v_sat}) / {current} = {exact}"
            ),
            format!(
                "{series} value at or above it: {picked}, so the LED gets at most {actual} at Vs_max"
            ),
        ],
        source: eseries::SOURCE,
    })
}

/// What holds the switch's off-state voltage.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum OffState {
    /// No stored energy (resistive, LED, capacitive): the switch sees the supply.
    Supply,
    /// A coil clamped by a diode of forward voltage `vf`.
    Diode {
        /// Diode forward voltage.
        vf: Volts,
    },
    /// A coil clamped by a diode plus a zener.
    Zener {
        /// Zener voltage.
        vz: Volts,
        /// Diode forward voltage.
        vf: Volts,
    },
    /// A coil with no clamp: nothing bounds the voltage.
    Unclamped,
}

/// The highest voltage across the off switch: Vs_max; Vs_max + VF with a diode clamp;
/// Vs_max + VZ + VF with a diode plus zener; `None` for an unclamped coil.
#[must_use]
pub fn off_peak(vs_max: Volts, state: OffState) -> Worked<Option<Volts>> {
    match state {
        OffState::Supply => Worked::new(
            Some(vs_max),
            format!("off_peak = Vs_max = {vs_max}: the load stores no magnetic energy"),
            sources::CIRCUIT_THEORY,
        ),
        OffState::Diode { vf } => {
            let peak = vs_max + vf;
            Worked::new(
                Some(peak),
                format!("off_peak = Vs_max + VF = {vs_max} + {vf} = {peak}"),
                sources::CIRCUIT_THEORY,
            )
            .with("at switch-off the coil drives the collector above the supply until the clamp diode conducts".to_string())
        }
        OffState::Zener { vz, vf } => {
            let peak = vs_max + vz + vf;
            Worked::new(
                Some(peak),
                format!("off_peak = Vs_max + VZ + VF = {vs_max} + {vz} + {vf} = {peak}"),
                sources::CIRCUIT_THEORY,
            )
            .with("the zener holds the coil's reverse voltage at VZ + VF, trading a higher peak for a faster release".to_string())
        }
        OffState::Unclamped => Worked::new(
            None,
            "off_peak is not bounded: with no clamp the coil drives the switch into breakdown"
                .to_string(),
            sources::CIRCUIT_THEORY,
        ),
    }
}

/// A derated need: stress / factor (need = the rating a part must have so that it works at
/// `factor` of it).
#[must_use]
pub fn derated(
    stress: f64,
    factor: f64,
    dim: Dim,
    stress_name: &str,
    factor_name: &str,
) -> Worked<f64> {
    let need = stress / factor;
    Worked::new(
        need,
        format!(
            "{stress_name} / {factor_name} = {} / {} = {}",
            format_eng(stress, dim),
            format_number(factor),
            format_eng(need, dim)
        ),
        sources::DERATING,
    )
}

/// The base current of a saturated BJT: IL / forced beta, capped by what the drive can give.
/// Returns the current and whether the cap applied.
#[must_use]
pub fn base_current(il: Amps, forced_beta: f64, limit: Option<Amps>) -> (Worked<Amps>, bool) {
    let wanted = il / forced_beta;
    let mut worked = Worked::new(
        wanted,
        format!(
            "IB = IL / forced_beta = {il} / {} = {wanted}",
            format_number(forced_beta)
        ),
        "common practice (forced beta for hard saturation; 10 is the usual VCE(sat) test condition)",
    );
    match limit {
        Some(max) if max.0 < wanted.0 => {
            worked.value = max;
            worked.working.push(format!(
                "capped at the drive's max_current {max}: the switch then needs hFE of at least IL / IB"
            ));
            (worked, true)
        }
        _ => (worked, false),
    }
}

/// The largest base resistor that still gives `ib`: RB_max = (V_high - VBE) / IB. `None`
/// when the drive does not exceed VBE.
#[must_use]
pub fn base_resistor_max(high: Volts, vbe: Volts, ib: Amps) -> Option<Worked<Ohms>> {
    let across = high - vbe;
    if across.0 <= 0.0 || ib.0 <= 0.0 {
        return None;
    }
    let r: Ohms = across / ib;
    Some(Worked::new(
        r,
        format!("RB_max = (V_high - VBE) / IB = ({high} - {vbe}) / {ib} = {r}"),
        sources::CIRCUIT_THEORY,
    ))
}

/// The base current a resistor `rb` actually gives: (V_high - VBE) / RB.
#[must_use]
pub fn base_current_through(high: Volts, vbe: Volts, rb: Ohms) -> Amps {
    (high - vbe) / rb
}

/// The least hFE that saturates the switch with base current `ib`: IL / IB.
#[must_use]
pub fn gain_needed(il: Amps, ib: Amps) -> Worked<f64> {
    let gain = il / ib;
    Worked::new(
        gain,
        format!("hFE_min = IL / IB = {il} / {ib} = {}", format_number(gain)),
        sources::CIRCUIT_THEORY,
    )
    .with("a part whose hFE at this collector current is lower comes out of saturation".to_string())
}

/// The base current at the edge of saturation for a part of gain `hfe_min`: IL / hFE.
#[must_use]
pub fn edge_base_current(il: Amps, hfe_min: f64) -> Amps {
    il / hfe_min
}

/// The base resistor at the edge of saturation for a part: RB_edge = (V_high - VBE) hFE_min / IL.
/// Any resistor well below it saturates the part hard.
#[must_use]
pub fn base_resistor_edge(high: Volts, vbe: Volts, hfe_min: f64, il: Amps) -> Ohms {
    Ohms((high - vbe).0 * hfe_min / il.0)
}

/// A textbook saturation check of a BJT switch with a base resistor.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Saturation {
    /// IC(sat) = (VCC - VCE(sat)) / RC.
    pub ic_sat: Amps,
    /// IB = (VBB - VBE) / RB.
    pub ib: Amps,
    /// β IB, the collector current the base could support.
    pub ic_available: Amps,
    /// Whether β IB exceeds IC(sat).
    pub saturated: bool,
}

/// Checks whether a switch saturates: β (VBB - VBE) / RB > (VCC - VCE(sat)) / RC.
#[must_use]
pub fn saturation(
    vcc: Volts,
    rc: Ohms,
    vce_sat: Volts,
    vbb: Volts,
    vbe: Volts,
    rb: Ohms,
    beta: f64,
) -> Saturation {
    let ic_sat: Amps = (vcc - vce_sat) / rc;
    let ib: Amps = (vbb - vbe) / rb;
    let ic_available = ib * beta;
    Saturation {
        ic_sat,
        ib,
        ic_available,
        saturated: ic_available.0 > ic_sat.0,
    }
}

/// The power a resistor carrying `i` dissipates: I² R.
#[must_use]
pub fn resistor_power(i: Amps, r: Ohms) -> Watts {
    Watts(i.0 * i.0 * r.0)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn close(a: f64, b: f64, rel: f64) -> bool {
        (a - b).abs() <= rel * b.abs()
    }

    /// Floyd, Electronic Devices, ch. 4, example 4-9: VCC 10 V, RC 1.0 kΩ, VCE(sat) neglected,
    /// β 200, VIN 5 V, VBE 0.7 V -> IC(sat) 10 mA, IB(min) 50 µA, RB(max) 86 kΩ -> 82 k (E12).
    #[test]
    fn floyd_electronic_devices_example_4_9() {
        let ic = load_current(Volts(10.0), Volts(0.0), Ohms(1e3)).map_or(f64::NAN, |w| w.value.0);
        assert!(close(ic, 10e-3, 1e-12));
        let (ib, capped) = base_current(Amps(ic), 200.0, None);
        assert!(!capped);
        assert!(close(ib.value.0, 50e-6, 1e-12));
        let rb =
            base_resistor_max(Volts(5.0), Volts(0.7), ib.value).map_or(f64::NAN, |w| w.value.0);
        assert!(close(rb, 86e3, 1e-12));
        let pick = eseries::at_or_below(Series::E12, rb).map(Preferred::value);
        assert_eq!(pick, Some(82e3));
    }

    /// Floyd, Electronic Devices, ch. 4, example 4-4: VCE(sat) 0.2 V, VCC 10 V, RC 1.0 kΩ,
    /// VBB 3 V, RB 10 kΩ, β 50 -> IC(sat) 9.8 mA, IB 0.23 mA, β IB 11.5 mA > 9.8 mA: saturated.
    #[test]
    fn floyd_electronic_devices_example_4_4() {
        let s = saturation(
            Volts(10.0),
            Ohms(1e3),
            Volts(0.2),
            Volts(3.0),
            Volts(0.7),
            Ohms(10e3),
            50.0,
        );
        assert!(close(s.ic_sat.0, 9.8e-3, 1e-12));
        assert!(close(s.ib.0, 0.23e-3, 1e-12));
        assert!(close(s.ic_available.0, 11.5e-3, 1e-12));
        assert!(s.saturated);
    }

    /// Relay driver, common practice (REFERENCES.md): 6 V, 100 Ω coil -> 60 mA; forced beta 10
    /// -> IB 6 mA; 6 V drive, VBE(sat) 1 V -> RB 833 Ω -> 820 Ω (E12).
    #[test]
    fn relay_driver_common_practice() {
        let il = load_current(Volts(6.0), Volts(0.0), Ohms(100.0)).map_or(f64::NAN, |w| w.value.0);
        assert!(close(il, 60e-3, 1e-12));
        let (ib, _) = base_current(Amps(il), 10.0, None);
        assert!(close(ib.value.0, 6e-3, 1e-12));
        let rb =
            base_resistor_max(Volts(6.0), Volts(1.0), ib.value).map_or(f64::NAN, |w| w.value.0);
        assert!(close(rb, 833.3, 1e-4));
        assert_eq!(
            eseries::at_or_below(Series::E12, rb).map(Preferred::value),
            Some(820.0)
        );
    }

    /// Worked values of the trade (common practice, no source to cite): 10 V, 1 kΩ,
    /// VCE(sat) 0.2 V -> 9.8 mA; hFE 150 -> edge base current 65.3 µA; VBE 0.65 V and a 10 V
    /// drive -> edge base resistor 143 kΩ; 10 kΩ is well below it and saturates hard.
    #[test]
    fn edge_of_saturation_common_practice() {
        let il =
            load_current(Volts(10.0), Volts(0.2), Ohms(1e3)).map_or(Amps(f64::NAN), |w| w.value);
        assert_eq!(format_eng(il.0, Dim::Amp), "9.80 mA");
        assert_eq!(
            format_eng(edge_base_current(il, 150.0).0, Dim::Amp),
            "65.3 µA"
        );
        let edge = base_resistor_edge(Volts(10.0), Volts(0.65), 150.0, il);
        assert_eq!(format_eng(edge.0, Dim::Ohm), "143 kΩ");
        let hard = saturation(
            Volts(10.0),
            Ohms(1e3),
            Volts(0.2),
            Volts(10.0),
            Volts(0.65),
            Ohms(10e3),
            150.0,
        );
        assert!(hard.saturated && hard.ic_available.0 > 10.0 * hard.ic_sat.0);
    }

    /// Common practice: a 550 Ω coil on 10 V with VCE(sat) 0.2 V draws 17.8 mA; with a plain
    /// diode (VF 0.6 V) the collector stops near 10.6 V.
    #[test]
    fn coil_current_and_diode_clamp_common_practice() {
        let il = load_current(Volts(10.0), Volts(0.2), Ohms(550.0)).map_or(f64::NAN, |w| w.value.0);
        assert_eq!(format_eng(il, Dim::Amp), "17.8 mA");
        let peak = off_peak(Volts(10.0), OffState::Diode { vf: Volts(0.6) }).value;
        assert_eq!(peak.map(|v| v.0), Some(10.6));
        let zener = off_peak(
            Volts(10.0),
            OffState::Zener {
                vz: Volts(24.0),
                vf: Volts(0.7),
            },
        )
        .value;
        assert!(zener.is_some_and(|v| close(v.0, 34.7, 1e-12)));
        assert_eq!(off_peak(Volts(10.0), OffState::Unclamped).value, None);
    }

    #[test]
    fn capped_base_current_and_led_resistor() {
        let (ib, capped) = base_current(Amps(0.1), 10.0, Some(Amps(8e-3)));
        assert!(capped);
        assert_eq!(ib.value, Amps(8e-3));
        // 5.25 V - 2.0 V - 0.2 V = 3.05 V at 10 mA: 305 Ω exact, 330 Ω in E12 (at or above).
        let r = led_series_resistor(
            Volts(5.25),
            Volts(2.0),
            Volts(0.2),
            Amps(10e-3),
            Series::E12,
        );
        assert_eq!(r.map(|w| w.value.value()), Some(330.0));
        assert!(
            led_series_resistor(Volts(2.0), Volts(2.0), Volts(0.2), Amps(10e-3), Series::E12)
                .is_none()
        );
        assert!(load_current(Volts(0.1), Volts(0.2), Ohms(10.0)).is_none());
        assert!(base_resistor_max(Volts(0.5), Volts(0.7), Amps(1e-3)).is_none());
    }
}
