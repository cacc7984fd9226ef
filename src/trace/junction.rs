//! Junctions: the exponential elements of a trace's circuit. One form covers a Shockley diode,
//! a zener or a switch in breakdown, and a diode in series with a zener; each is monotone, so
//! the node equation of every step has exactly one root.

/// Boltzmann's constant over the elementary charge, times 300.15 K: the thermal voltage at
/// 27 °C, the default temperature of SPICE simulators, so junctions with the same IS and N
/// give the same voltages as a deck does (CODATA 2018 values of k and q).
pub const VT: f64 = 1.380649e-23 * 300.15 / 1.602176634e-19;

/// Past this exponent a junction's exponential is continued as a straight line (its tangent),
/// so a Newton iterate far up the curve cannot overflow; e^80 amperes-per-IS is far above any
/// current the solution ever has.
const EXP_LIMIT: f64 = 80.0;

/// e^x and its derivative, continued linearly past [`EXP_LIMIT`].
fn exp_limited(x: f64) -> (f64, f64) {
    if x <= EXP_LIMIT {
        let e = x.exp();
        (e, e)
    } else {
        let e = EXP_LIMIT.exp();
        (e * (1.0 + x - EXP_LIMIT), e)
    }
}

/// An exponential junction: i = IS (e^((v - offset)/(N Vt)) - e^(-offset/(N Vt))), zero at
/// zero volts and increasing everywhere.
///
/// - a Shockley diode: `offset` 0;
/// - a zener or a switch in breakdown at VZ: `is` the current at VZ (1 mA, as a SPICE
///   diode's IBV), `nvt` Vt, `offset` VZ;
/// - a diode (IS, N) in series with a zener (IBV at VZ): one junction carrying the same
///   current, v = N Vt ln(i/IS) + VZ + Vt ln(i/IBV), so IS' = IS^(N/(N+1)) IBV^(1/(N+1)),
///   N' = N + 1 and the offset VZ (exact while the current is well above both diodes'
///   leakage, which is every current that matters here).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Junction {
    /// The current scale IS, A.
    pub is: f64,
    /// N Vt, V.
    pub nvt: f64,
    /// The voltage the exponential starts from, V.
    pub offset: f64,
}

impl Junction {
    /// A Shockley diode with saturation current `is` and emission coefficient `n`.
    #[must_use]
    pub fn diode(is: f64, n: f64) -> Junction {
        Junction {
            is,
            nvt: n * VT,
            offset: 0.0,
        }
    }

    /// A breakdown at `volts`, carrying `at_current` there and rising e-fold every Vt above
    /// (the breakdown of a SPICE diode with BV and IBV, NBV 1).
    #[must_use]
    pub fn breakdown(volts: f64, at_current: f64) -> Junction {
        Junction {
            is: at_current,
            nvt: VT,
            offset: volts,
        }
    }

    /// A diode (IS, N) in series with a zener of `vz` carrying `ibv` at `vz`, as one junction.
    #[must_use]
    pub fn diode_and_zener(is: f64, n: f64, vz: f64, ibv: f64) -> Junction {
        let total = n + 1.0;
        Junction {
            is: (is.ln() * n / total + ibv.ln() / total).exp(),
            nvt: total * VT,
            offset: vz,
        }
    }

    /// The current at `v` and its derivative di/dv.
    #[must_use]
    pub fn current(&self, v: f64) -> (f64, f64) {
        let (e, de) = exp_limited((v - self.offset) / self.nvt);
        // e^(-offset/nvt) underflows to zero for a zener: it only makes the current 0 at 0 V.
        let e0 = (-self.offset / self.nvt).exp();
        (self.is * (e - e0), self.is * de / self.nvt)
    }

    /// The voltage at which the junction carries `i` (the inverse of [`Junction::current`]);
    /// NaN for a current it cannot carry.
    #[must_use]
    pub fn voltage_at(&self, i: f64) -> f64 {
        let e0 = (-self.offset / self.nvt).exp();
        self.offset + self.nvt * (i / self.is + e0).ln()
    }

    /// SPICE's junction limiting: a Newton step that would take the junction far up its
    /// exponential is shortened to the logarithm of the step, so the iterate climbs the curve
    /// instead of leaping past the root. `sign` is +1 for a junction forward with the node
    /// voltage, -1 for one that conducts when the node goes negative.
    pub fn limit(&self, v_old: f64, v_new: f64, sign: f64) -> f64 {
        let old = sign * v_old - self.offset;
        let new = sign * v_new - self.offset;
        let critical = self.nvt * (self.nvt / (std::f64::consts::SQRT_2 * self.is)).ln();
        if new <= critical || (new - old).abs() <= 2.0 * self.nvt {
            return v_new;
        }
        let limited = if old > 0.0 {
            let arg = 1.0 + (new - old) / self.nvt;
            if arg > 0.0 {
                old + self.nvt * arg.ln()
            } else {
                critical
            }
        } else {
            self.nvt * (new / self.nvt).ln()
        };
        sign * (limited + self.offset)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The thermal voltage at 27 °C: kT/q = 25.865 mV (CODATA 2018 k and q).
    #[test]
    fn thermal_voltage_at_27_c() {
        assert!((VT - 0.025865).abs() < 1e-6, "{VT}");
    }

    /// Shockley relation, REFERENCES.md's clamp diode (IS 1e-9 A, N 1.8) at 18.05 mA:
    /// VF = N Vt ln(I/IS) = 0.778 V, which puts the simulated stage's peak at 10.78 V.
    #[test]
    fn shockley_forward_voltage_of_the_reference_diode() {
        let d = Junction::diode(1e-9, 1.8);
        let vf = d.voltage_at(18.05e-3);
        assert!((vf - 0.7780).abs() < 5e-4, "{vf}");
        let (i, g) = d.current(vf);
        assert!((i - 18.05e-3).abs() < 1e-9);
        // The small-signal conductance I / (N Vt) of the Shockley relation.
        assert!((g - (i + 1e-9) / (1.8 * VT)).abs() / g < 1e-9);
        assert_eq!(d.current(0.0).0, 0.0);
    }

    /// The series diode-plus-zener junction against the sum of its parts (Shockley for the
    /// diode, v = VZ + Vt ln(i / IBV) for the breakdown): at 1 mA to 1 A both give the same
    /// voltage to within a microvolt.
    #[test]
    fn diode_and_zener_is_the_sum_of_its_parts() {
        let both = Junction::diode_and_zener(1e-9, 1.8, 24.0, 1e-3);
        let diode = Junction::diode(1e-9, 1.8);
        let zener = Junction::breakdown(24.0, 1e-3);
        for i in [1e-3, 18e-3, 0.3, 1.0] {
            let sum = diode.voltage_at(i) + zener.voltage_at(i);
            assert!((both.voltage_at(i) - sum).abs() < 1e-6, "{i}");
        }
        // Below VZ nothing flows: at 20 V the pair carries less than a picoampere.
        assert!(both.current(20.0).0 < 1e-12);
    }

    #[test]
    fn exponential_is_continued_as_its_tangent() {
        let d = Junction::diode(1e-9, 1.0);
        let (i, g) = d.current(1000.0);
        assert!(i.is_finite() && g.is_finite() && i > 0.0);
        let (i2, _) = d.current(1001.0);
        assert!((i2 - i - g).abs() / g < 1e-9);
    }

    /// Junction limiting keeps an iterate from leaping up the exponential.
    #[test]
    fn limiting_shortens_a_leap() {
        let d = Junction::diode(1e-9, 1.8);
        let limited = d.limit(0.7, 50.0, 1.0);
        // 0.7 V + N Vt ln(1 + 49.3 V / N Vt) = 1.02 V, not 50 V.
        assert!(limited > 0.7 && limited < 1.1, "{limited}");
        assert_eq!(d.limit(0.70, 0.71, 1.0), 0.71);
    }
}
