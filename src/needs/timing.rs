//! First-order RC timing of a capacitive load: τ = R C, the step response v/V∞ = 1 - e^(-t/τ),
//! the 10-90 % rise time τ ln 9 and settling within 0.7 % at 5 τ (circuit theory).

use super::{Worked, sources};
use crate::units::{Farads, Ohms, Seconds};

/// The fraction of its final value a first-order step response has reached after `t_over_tau`
/// time constants: 1 - e^(-t/τ).
#[must_use]
pub fn step_fraction(t_over_tau: f64) -> f64 {
    1.0 - (-t_over_tau).exp()
}

/// Time, in time constants, for a first-order step to reach `fraction` of its final value:
/// -ln(1 - fraction). Infinite for a fraction of 1 or more.
#[must_use]
pub fn time_to_fraction(fraction: f64) -> f64 {
    if fraction >= 1.0 {
        f64::INFINITY
    } else {
        -(1.0 - fraction).ln()
    }
}

/// τ = R C.
#[must_use]
pub fn rc_tau(r: Ohms, c: Farads) -> Worked<Seconds> {
    let tau: Seconds = r * c;
    Worked::new(
        tau,
        format!("τ = R × C = {r} × {c} = {tau}"),
        sources::FIRST_ORDER,
    )
}

/// The 10-90 % rise time of a first-order step, τ ln 9 (from τ ln 10 - τ ln(10/9)).
#[must_use]
pub fn rise_time(tau: Seconds) -> Worked<Seconds> {
    let rise = tau * 9f64.ln();
    Worked::new(
        rise,
        format!("t(10-90 %) = τ ln 9 = {tau} × 2.197 = {rise}"),
        sources::FIRST_ORDER,
    )
    .with(format!(
        "the 10 % point is at τ ln(10/9) = {}, the 90 % point at τ ln 10 = {}",
        tau * (10.0f64 / 9.0).ln(),
        tau * 10f64.ln()
    ))
}

/// Settling time: 5 τ, by which the step is within 0.7 % of its final value (99.33 %).
#[must_use]
pub fn settle_time(tau: Seconds) -> Worked<Seconds> {
    let settle = tau * 5.0;
    Worked::new(
        settle,
        format!(
            "t(settle) = 5 τ = 5 × {tau} = {settle}: the voltage is then at {:.2} % of its final value",
            step_fraction(5.0) * 100.0
        ),
        sources::FIRST_ORDER,
    )
}

#[cfg(test)]
mod tests {
    use super::*;

    /// REFERENCES.md, RC step (circuit theory; ngspice 39 agrees to 4 digits):
    /// v/V∞ at 1..5 τ = 0.6321, 0.8647, 0.9502, 0.9817, 0.9933.
    #[test]
    fn step_fractions_at_one_to_five_tau_circuit_theory() {
        let expected = [0.6321, 0.8647, 0.9502, 0.9817, 0.9933];
        for (n, want) in expected.iter().enumerate() {
            let got = step_fraction((n + 1) as f64);
            assert!((got - want).abs() < 5e-5, "{} τ: {got}", n + 1);
        }
    }

    /// REFERENCES.md: 10-90 % rise = τ ln 9 = 2.1972 τ; the 10 % point is at τ ln(10/9).
    #[test]
    fn rise_time_is_tau_ln_9_circuit_theory() {
        let rise = rise_time(Seconds(1.0)).value;
        assert!((rise.0 - 2.1972).abs() < 5e-5);
        let ten = time_to_fraction(0.1);
        assert!((ten - (10.0f64 / 9.0).ln()).abs() < 1e-12);
        assert!((time_to_fraction(0.9) - ten - rise.0).abs() < 1e-12);
        assert_eq!(time_to_fraction(1.0), f64::INFINITY);
    }

    /// Worked value of the trade (common practice): 1 kΩ with 0.1 µF gives τ 100 µs, 63.2 %
    /// at τ, and about 500 µs (5 τ) to settle.
    #[test]
    fn one_kohm_and_100_nf_common_practice() {
        let tau = rc_tau(Ohms(1e3), Farads(0.1e-6));
        assert!((tau.value.0 - 100e-6).abs() < 1e-15);
        assert_eq!(tau.value.to_string(), "100 µs");
        assert!((step_fraction(1.0) - 0.632).abs() < 5e-4);
        let settle = settle_time(tau.value);
        assert!((settle.value.0 - 500e-6).abs() < 1e-15);
        assert!(
            settle.working[0].contains("99.33 %"),
            "{:?}",
            settle.working
        );
    }
}
