//! A relay's coil and contacts: inrush by load kind, the utilization category the contacts
//! work in, and the coil's copper warming with the ambient (common practice unless named).

use super::{Worked, sources};
use crate::stage::ContactLoad;
use crate::units::{Amps, Celsius, Volts};

/// Temperature coefficient of copper resistance at 20 °C, per kelvin (IEC 60028).
pub const COPPER_TEMPCO: f64 = 0.00393;

/// The inrush multiplier of a contact load, catalogue convention: resistive 1, motor 6 (locked
/// rotor 5-8×), lamp 10 (cold tungsten 10-15×), capacitive 20 (charging spikes 20-100× for
/// under 1 ms). Common practice.
#[must_use]
pub fn inrush_multiplier(kind: ContactLoad) -> f64 {
    match kind {
        ContactLoad::Resistive => 1.0,
        ContactLoad::Motor => 6.0,
        ContactLoad::Lamp => 10.0,
        ContactLoad::Capacitive => 20.0,
    }
}

/// What the range behind a kind's multiplier is, for the working.
fn inrush_range(kind: ContactLoad) -> &'static str {
    match kind {
        ContactLoad::Resistive => "a resistive load draws no inrush",
        ContactLoad::Motor => "a motor's locked-rotor current is 5-8× its running current",
        ContactLoad::Lamp => "a cold tungsten filament draws 10-15× its running current",
        ContactLoad::Capacitive => "capacitive and LED-driver loads draw 20-100× for under 1 ms",
    }
}

/// The current the contacts must make at closing: amps × multiplier (the stage's own
/// `inrush`, else the kind's).
#[must_use]
pub fn inrush(amps: Amps, kind: ContactLoad, multiplier: Option<f64>) -> Worked<Amps> {
    let (factor, why) = match multiplier {
        Some(m) => (m, format!("multiplier {m} from [contacts] inrush")),
        None => (
            inrush_multiplier(kind),
            format!(
                "multiplier {} for a {} load (catalogue convention: {})",
                inrush_multiplier(kind),
                kind.name(),
                inrush_range(kind)
            ),
        ),
    };
    let value = amps * factor;
    Worked::new(
        value,
        format!("I(inrush) = amps × multiplier = {amps} × {factor} = {value}"),
        "common practice (inrush by load kind, catalogue convention)",
    )
    .with(why)
}

/// The utilization category a contact load falls in (IEC 60947-4-1 / -5-1), for the working.
/// AC-1 and AC-3 are as REFERENCES.md names them; AC-5b, AC-6b, DC-1 and DC-3 are from memory.
#[must_use]
pub fn utilization_category(kind: ContactLoad, ac: bool) -> &'static str {
    match (kind, ac) {
        (ContactLoad::Resistive, true) => "AC-1 (resistive)",
        (ContactLoad::Motor, true) => "AC-3 (squirrel-cage motors)",
        (ContactLoad::Lamp, true) => "AC-5b (incandescent lamps)",
        (ContactLoad::Capacitive, true) => "AC-6b (capacitor banks)",
        (ContactLoad::Resistive | ContactLoad::Lamp | ContactLoad::Capacitive, false) => {
            "DC-1 (resistive or slightly inductive)"
        }
        (ContactLoad::Motor, false) => "DC-3 (shunt motors)",
    }
}

/// R(T) / R(20 °C) of a copper coil at `temperature`: 1 + 0.00393 (T - 20) (IEC 60028).
#[must_use]
pub fn copper_factor(temperature: Celsius) -> f64 {
    1.0 + COPPER_TEMPCO * (temperature.0 - 20.0)
}

/// The relay coil's operating window at the supply's extremes: the coil gets Vs_min - V_sat at
/// worst and must still pull in; it gets Vs_max - V_sat at most and must stand it.
#[must_use]
pub fn operate_voltage(vs_min: Volts, v_sat: Volts, ambient: Celsius) -> Worked<Volts> {
    let value = vs_min - v_sat;
    let factor = copper_factor(ambient);
    let mut worked = Worked::new(
        value,
        format!("V(coil, min) = Vs_min - V_sat = {vs_min} - {v_sat} = {value}"),
        sources::COMMON_PRACTICE,
    )
    .with("a relay's must-operate voltage must be at most this (must-operate is usually at most 80 % of the rated coil voltage)".to_string());
    if ambient.0 > 20.0 {
        worked = worked.with(format!(
            "at {ambient} the copper coil is {factor:.4} × its 20 °C resistance (IEC 60028, 0.00393 /K), so a must-operate rated at 20 °C rises by that factor: keep the 20 °C figure at most {}",
            value / factor
        ));
    }
    worked
}

/// The worst-case must-operate need: a relay's must-operate voltage, stated at 20 °C, scales
/// with its copper coil's resistance (pull-in is a current threshold), so with the coil at
/// `coil_temperature` the 20 °C figure may be at most (Vs_min - V_sat) / (1 + 0.00393 (T - 20))
/// (IEC 60028 for copper).
#[must_use]
pub fn operate_voltage_hot(
    vs_min: Volts,
    v_sat: Volts,
    coil_temperature: Celsius,
) -> Worked<Volts> {
    let across = vs_min - v_sat;
    let factor = copper_factor(coil_temperature);
    let value = across / factor;
    Worked::new(
        value,
        format!(
            "V(operate, 20 °C) <= (Vs_min - V_sat) / (1 + 0.00393 × (T_coil - 20)) = ({vs_min} - {v_sat}) / {factor:.4} = {value}"
        ),
        "IEC 60028 (copper, 0.00393 /K); pull-in at a coil current (common practice)",
    )
    .with(format!(
        "the coil at {coil_temperature} has {factor:.4} × its 20 °C resistance, so it needs that much more voltage for the same pull-in current"
    ))
    .with("a relay's must-operate voltage (at 20 °C) must be at most this".to_string())
}

#[cfg(test)]
mod tests {
    use super::*;

    /// REFERENCES.md, loads and relays (common practice): catalogue convention lamp 10×,
    /// motor 6×; capacitive 20× (the low end of 20-100×).
    #[test]
    fn inrush_multipliers_common_practice() {
        assert_eq!(inrush_multiplier(ContactLoad::Lamp), 10.0);
        assert_eq!(inrush_multiplier(ContactLoad::Motor), 6.0);
        assert_eq!(inrush_multiplier(ContactLoad::Capacitive), 20.0);
        assert_eq!(inrush_multiplier(ContactLoad::Resistive), 1.0);
        let w = inrush(Amps(0.5), ContactLoad::Motor, None);
        assert!((w.value.0 - 3.0).abs() < 1e-12);
        let w = inrush(Amps(0.5), ContactLoad::Motor, Some(8.0));
        assert!((w.value.0 - 4.0).abs() < 1e-12);
    }

    /// REFERENCES.md: copper tempco 0.00393 /K (IEC 60028): a coil 50 K above 20 °C has
    /// 1.1965 × R20.
    #[test]
    fn copper_coil_warms_iec_60028() {
        assert!((copper_factor(Celsius(70.0)) - 1.1965).abs() < 1e-12);
        assert_eq!(copper_factor(Celsius(20.0)), 1.0);
    }

    /// REFERENCES.md: utilization categories of IEC 60947-4-1 / -5-1 (AC-1 resistive, AC-3 motors).
    #[test]
    fn utilization_categories_iec_60947() {
        assert!(utilization_category(ContactLoad::Resistive, true).starts_with("AC-1"));
        assert!(utilization_category(ContactLoad::Motor, true).starts_with("AC-3"));
    }

    /// IEC 60028 (0.00393 /K) by hand for a 24 V stage, V_sat 0.2 V, coil at 60 °C + 30 K:
    /// factor 1 + 0.00393 × 70 = 1.2751; (24 - 0.2) / 1.2751 = 18.665 V.
    #[test]
    fn hot_coil_operate_voltage_iec_60028() {
        let w = operate_voltage_hot(Volts(24.0), Volts(0.2), Celsius(90.0));
        assert!((w.value.0 - 23.8 / 1.2751).abs() < 1e-9, "{}", w.value);
        assert!((w.value.0 - 18.665).abs() < 5e-4);
        assert!(w.working.iter().any(|l| l.contains("1.2751")));
    }

    #[test]
    fn operate_voltage_notes_the_hot_coil() {
        let w = operate_voltage(Volts(10.8), Volts(0.2), Celsius(40.0));
        assert!((w.value.0 - 10.6).abs() < 1e-12);
        assert!(
            w.working.iter().any(|l| l.contains("1.0786")),
            "{:?}",
            w.working
        );
    }
}
