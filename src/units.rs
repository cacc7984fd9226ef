//! Quantities with units: parsing what people type ("4k7", "100 mA", "0,2 V", "10 µF") and
//! showing values in engineering notation ("9.80 mA", "143 kΩ").
//!
//! Two layers:
//! - [`Quantity`]: a value in SI base units with its [`Dim`], what parsing and display work on;
//! - typed quantities ([`Volts`], [`Amps`], [`Ohms`] ...): what the derivations compute with, so
//!   that `Volts / Ohms` is `Amps` and a volt can never be added to an amp.

mod format;
mod parse;
mod typed;

pub use format::{format_eng, format_number};
pub use parse::{ParseOptions, UnitError, parse, parse_with};
pub use typed::{
    Amps, Celsius, Farads, Henries, Hertz, Joules, Kelvins, Lux, Ohms, Ratio, Seconds, Volts, Watts,
};

use std::fmt;

/// The physical dimension of a quantity. Values are always held in SI base units
/// (volts, amps, ohms ...); percent is held as a fraction (10 % is 0.1) and temperature in °C.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum Dim {
    /// Electric potential, V.
    Volt,
    /// Current, A.
    Amp,
    /// Resistance, Ω.
    Ohm,
    /// Power, W.
    Watt,
    /// Capacitance, F.
    Farad,
    /// Inductance, H.
    Henry,
    /// Time, s.
    Second,
    /// Frequency, Hz.
    Hertz,
    /// Energy, J.
    Joule,
    /// Illuminance, lux.
    Lux,
    /// Temperature on the Celsius scale, °C.
    Celsius,
    /// Temperature difference, K.
    Kelvin,
    /// Thermal resistance, K/W (°C/W).
    KelvinPerWatt,
    /// Length, m (a photocell's peak wavelength in nm).
    Metre,
    /// A ratio shown as a percentage; held as a fraction.
    Percent,
    /// A plain number (hFE, gamma, a multiplier).
    Number,
    /// A voltage temperature coefficient, V/K (a base-emitter voltage's drift, typed "-2 mV/K").
    VoltPerKelvin,
    /// A relative temperature coefficient, %/K, held as a fraction per kelvin (0.5 %/K is
    /// 0.005), like [`Dim::Percent`].
    PercentPerKelvin,
}

impl Dim {
    /// The symbol shown after a value.
    #[must_use]
    pub fn symbol(self) -> &'static str {
        match self {
            Dim::Volt => "V",
            Dim::Amp => "A",
            Dim::Ohm => "Ω",
            Dim::Watt => "W",
            Dim::Farad => "F",
            Dim::Henry => "H",
            Dim::Second => "s",
            Dim::Hertz => "Hz",
            Dim::Joule => "J",
            Dim::Lux => "lux",
            Dim::Celsius => "°C",
            Dim::Kelvin => "K",
            Dim::KelvinPerWatt => "K/W",
            Dim::Metre => "m",
            Dim::Percent => "%",
            Dim::Number => "",
            Dim::VoltPerKelvin => "V/K",
            Dim::PercentPerKelvin => "%/K",
        }
    }

    /// The plain-ASCII unit name used in machine-readable outputs (`ohm` rather than `Ω`).
    #[must_use]
    pub fn ascii(self) -> &'static str {
        match self {
            Dim::Ohm => "ohm",
            Dim::Celsius => "C",
            Dim::Number | Dim::Percent => "",
            Dim::PercentPerKelvin => "1/K",
            other => other.symbol(),
        }
    }

    /// A word for the dimension, for messages ("expected a voltage").
    #[must_use]
    pub fn noun(self) -> &'static str {
        match self {
            Dim::Volt => "a voltage",
            Dim::Amp => "a current",
            Dim::Ohm => "a resistance",
            Dim::Watt => "a power",
            Dim::Farad => "a capacitance",
            Dim::Henry => "an inductance",
            Dim::Second => "a time",
            Dim::Hertz => "a frequency",
            Dim::Joule => "an energy",
            Dim::Lux => "an illuminance",
            Dim::Celsius => "a temperature",
            Dim::Kelvin => "a temperature difference",
            Dim::KelvinPerWatt => "a thermal resistance",
            Dim::Metre => "a length",
            Dim::Percent => "a percentage",
            Dim::Number => "a plain number",
            Dim::VoltPerKelvin => "a voltage temperature coefficient",
            Dim::PercentPerKelvin => "a relative temperature coefficient",
        }
    }

    /// Whether SI prefixes are used when showing this dimension (not for °C, %, plain numbers).
    #[must_use]
    pub fn takes_prefix(self) -> bool {
        !matches!(
            self,
            Dim::Celsius
                | Dim::Kelvin
                | Dim::Percent
                | Dim::PercentPerKelvin
                | Dim::Number
                | Dim::Lux
                | Dim::KelvinPerWatt
        )
    }
}

/// A value in SI base units together with its dimension.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Quantity {
    /// The value in SI base units (a fraction for percent, °C for temperature).
    pub value: f64,
    /// What the value measures.
    pub dim: Dim,
}

impl Quantity {
    /// A quantity of `value` (SI base units) in `dim`.
    #[must_use]
    pub fn new(value: f64, dim: Dim) -> Self {
        Quantity { value, dim }
    }
}

impl fmt::Display for Quantity {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&format_eng(self.value, self.dim))
    }
}
