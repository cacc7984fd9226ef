//! Quantities as types, so the derivations cannot mix up volts and amps: `Volts / Ohms` is
//! `Amps`, `Volts * Amps` is `Watts`, `Ohms * Farads` is `Seconds`.

use super::{Dim, Quantity, format_eng};
use std::fmt;
use std::ops::{Add, Div, Mul, Neg, Sub};

macro_rules! quantity_type {
    ($(#[$doc:meta])* $name:ident, $dim:expr) => {
        $(#[$doc])*
        #[derive(Debug, Clone, Copy, PartialEq, PartialOrd, Default)]
        pub struct $name(pub f64);

        impl $name {
            /// The dimension this type measures.
            pub const DIM: Dim = $dim;

            /// The value in SI base units.
            #[must_use]
            pub fn value(self) -> f64 {
                self.0
            }

            /// The value as a dynamic [`Quantity`].
            #[must_use]
            pub fn quantity(self) -> Quantity {
                Quantity::new(self.0, $dim)
            }

            /// The smaller of two values.
            #[must_use]
            pub fn min(self, other: Self) -> Self {
                $name(self.0.min(other.0))
            }

            /// The larger of two values.
            #[must_use]
            pub fn max(self, other: Self) -> Self {
                $name(self.0.max(other.0))
            }
        }

        impl TryFrom<Quantity> for $name {
            type Error = Quantity;

            /// Accepts a quantity of this type's dimension; gives the quantity back otherwise.
            fn try_from(q: Quantity) -> Result<Self, Quantity> {
                if q.dim == $dim { Ok($name(q.value)) } else { Err(q) }
            }
        }

        impl fmt::Display for $name {
            fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
                f.write_str(&format_eng(self.0, $dim))
            }
        }

        impl Add for $name {
            type Output = $name;
            fn add(self, other: $name) -> $name {
                $name(self.0 + other.0)
            }
        }

        impl Sub for $name {
            type Output = $name;
            fn sub(self, other: $name) -> $name {
                $name(self.0 - other.0)
            }
        }

        impl Neg for $name {
            type Output = $name;
            fn neg(self) -> $name {
                $name(-self.0)
            }
        }

        impl Mul<f64> for $name {
            type Output = $name;
            fn mul(self, k: f64) -> $name {
                $name(self.0 * k)
            }
        }

        impl Mul<$name> for f64 {
            type Output = $name;
            fn mul(self, q: $name) -> $name {
                $name(self * q.0)
            }
        }

        impl Div<f64> for $name {
            type Output = $name;
            fn div(self, k: f64) -> $name {
                $name(self.0 / k)
            }
        }

        impl Div for $name {
            type Output = f64;
            fn div(self, other: $name) -> f64 {
                self.0 / other.0
            }
        }
    };
}

quantity_type!(
    /// Electric potential in volts.
    Volts,
    Dim::Volt
);
quantity_type!(
    /// Current in amperes.
    Amps,
    Dim::Amp
);
quantity_type!(
    /// Resistance in ohms.
    Ohms,
    Dim::Ohm
);
quantity_type!(
    /// Power in watts.
    Watts,
    Dim::Watt
);
quantity_type!(
    /// Capacitance in farads.
    Farads,
    Dim::Farad
);
quantity_type!(
    /// Inductance in henries.
    Henries,
    Dim::Henry
);
quantity_type!(
    /// Time in seconds.
    Seconds,
    Dim::Second
);
quantity_type!(
    /// Frequency in hertz.
    Hertz,
    Dim::Hertz
);
quantity_type!(
    /// Energy in joules.
    Joules,
    Dim::Joule
);
quantity_type!(
    /// Illuminance in lux.
    Lux,
    Dim::Lux
);
quantity_type!(
    /// Temperature in degrees Celsius.
    Celsius,
    Dim::Celsius
);
quantity_type!(
    /// A temperature difference in kelvins.
    Kelvins,
    Dim::Kelvin
);
quantity_type!(
    /// A ratio held as a fraction and shown as a percentage.
    Ratio,
    Dim::Percent
);

macro_rules! product {
    ($a:ident * $b:ident = $out:ident) => {
        impl Mul<$b> for $a {
            type Output = $out;
            fn mul(self, other: $b) -> $out {
                $out(self.0 * other.0)
            }
        }
        impl Mul<$a> for $b {
            type Output = $out;
            fn mul(self, other: $a) -> $out {
                $out(self.0 * other.0)
            }
        }
        impl Div<$a> for $out {
            type Output = $b;
            fn div(self, other: $a) -> $b {
                $b(self.0 / other.0)
            }
        }
        impl Div<$b> for $out {
            type Output = $a;
            fn div(self, other: $b) -> $a {
                $a(self.0 / other.0)
            }
        }
    };
}

// Ohm's law, power, time constants and energy.
product!(Amps * Ohms = Volts);
product!(Volts * Amps = Watts);
product!(Ohms * Farads = Seconds);
product!(Watts * Seconds = Joules);

impl Div<Ohms> for Henries {
    type Output = Seconds;
    /// τ = L / R.
    fn div(self, r: Ohms) -> Seconds {
        Seconds(self.0 / r.0)
    }
}

impl Henries {
    /// The energy ½ L I² stored at current `i`.
    #[must_use]
    pub fn energy_at(self, i: Amps) -> Joules {
        Joules(0.5 * self.0 * i.0 * i.0)
    }
}

impl Celsius {
    /// The temperature difference from `base` up to this temperature.
    #[must_use]
    pub fn above(self, base: Celsius) -> Kelvins {
        Kelvins(self.0 - base.0)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    // Identities of circuit theory (Ohm's law, Joule's law, the RC and RL time constants).
    #[test]
    fn ohms_law_and_power_identities() {
        let v = Volts(10.0);
        let r = Ohms(1000.0);
        let i: Amps = v / r;
        assert_eq!(i, Amps(0.01));
        assert_eq!(i * r, v);
        assert_eq!(v / i, r);
        let p: Watts = v * i;
        assert_eq!(p, Watts(0.1));
        assert_eq!(p / v, i);
        assert_eq!(p / i, v);
    }

    #[test]
    fn time_constants_and_energy() {
        let tau: Seconds = Ohms(1000.0) * Farads(0.1e-6);
        assert!((tau.value() - 100e-6).abs() < 1e-15);
        assert_eq!(tau.to_string(), "100 µs");
        let tau_l: Seconds = Henries(0.1) / Ohms(550.0);
        assert!((tau_l.value() - 181.818e-6).abs() < 1e-9);
        // REFERENCES.md: 100 mH at 18.05 mA holds 16.3 µJ.
        let e = Henries(0.1).energy_at(Amps(18.05e-3));
        assert_eq!(e.to_string(), "16.3 µJ");
        assert_eq!(Watts(2.0) * Seconds(3.0), Joules(6.0));
    }

    #[test]
    fn conversions_check_the_dimension() {
        assert_eq!(
            Volts::try_from(Quantity::new(5.0, Dim::Volt)),
            Ok(Volts(5.0))
        );
        assert!(Volts::try_from(Quantity::new(5.0, Dim::Amp)).is_err());
        assert_eq!(Celsius(60.0).above(Celsius(20.0)), Kelvins(40.0));
    }
}
