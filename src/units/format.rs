//! Engineering notation: three significant figures and an SI prefix in steps of 10³.

use super::Dim;

/// SI prefixes by power of ten, from 10⁻¹⁵ to 10¹² (SI Brochure, 9th edition, table 7).
const PREFIXES: [(i32, &str); 10] = [
    (-15, "f"),
    (-12, "p"),
    (-9, "n"),
    (-6, "µ"),
    (-3, "m"),
    (0, ""),
    (3, "k"),
    (6, "M"),
    (9, "G"),
    (12, "T"),
];

/// Shows `value` (SI base units) of `dim` with three significant figures and the right prefix:
/// `format_eng(0.0098, Dim::Amp)` is `"9.80 mA"`, `format_eng(143e3, Dim::Ohm)` is `"143 kΩ"`.
/// Percent is shown as a percentage of the fraction (0.1 is `"10.0 %"`); °C, K, lux and plain
/// numbers take no prefix. Non-finite values show as `"—"`.
#[must_use]
pub fn format_eng(value: f64, dim: Dim) -> String {
    if !value.is_finite() {
        return "—".to_string();
    }
    if !dim.takes_prefix() {
        let shown = if matches!(dim, Dim::Percent | Dim::PercentPerKelvin) {
            value * 100.0
        } else {
            value
        };
        let number = format_number(shown);
        return match dim.symbol() {
            "" => number,
            symbol => format!("{number} {symbol}"),
        };
    }
    let (mantissa, prefix) = split_engineering(value);
    format!("{} {}{}", three_figures(mantissa), prefix, dim.symbol())
}

/// A plain number with three significant figures, without prefix: `0.700`, `150`, `1.20e6`.
/// Very large or small magnitudes switch to exponent notation.
#[must_use]
pub fn format_number(value: f64) -> String {
    if !value.is_finite() {
        return "—".to_string();
    }
    let magnitude = value.abs();
    if magnitude == 0.0 || (1e-3..1e6).contains(&magnitude) {
        return three_figures(value);
    }
    let text = format!("{value:.2e}");
    text
}

/// Splits a value into a mantissa in [1, 1000) (after rounding to three figures) and a prefix.
fn split_engineering(value: f64) -> (f64, &'static str) {
    if value == 0.0 {
        return (0.0, "");
    }
    let magnitude = value.abs();
    let mut exponent = (magnitude.log10() / 3.0).floor() as i32 * 3;
    // Rounding to three figures can carry 999.6 up to 1000: move to the next prefix then.
    let rounded = round_to_figures(magnitude / 10f64.powi(exponent), 3);
    if rounded >= 1000.0 {
        exponent += 3;
    }
    let exponent = exponent.clamp(PREFIXES[0].0, PREFIXES[PREFIXES.len() - 1].0);
    let prefix = PREFIXES
        .iter()
        .find(|(power, _)| *power == exponent)
        .map_or("", |(_, symbol)| symbol);
    (value / 10f64.powi(exponent), prefix)
}

/// Rounds a positive value to `figures` significant figures.
fn round_to_figures(value: f64, figures: i32) -> f64 {
    if value == 0.0 {
        return 0.0;
    }
    let digits = figures - 1 - value.abs().log10().floor() as i32;
    let scale = 10f64.powi(digits);
    (value * scale).round() / scale
}

/// Writes a number with three significant figures, keeping trailing zeros (`9.80`, `65.3`, `143`).
fn three_figures(value: f64) -> String {
    if value == 0.0 {
        return "0.00".to_string();
    }
    let rounded = round_to_figures(value, 3);
    let integer_digits = rounded.abs().log10().floor() as i32 + 1;
    let decimals = (3 - integer_digits).max(0) as usize;
    format!("{rounded:.decimals$}")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn engineering_examples_from_the_issue() {
        assert_eq!(format_eng(9.8e-3, Dim::Amp), "9.80 mA");
        assert_eq!(format_eng(65.3e-6, Dim::Amp), "65.3 µA");
        assert_eq!(format_eng(143e3, Dim::Ohm), "143 kΩ");
        assert_eq!(format_eng(100e-6, Dim::Second), "100 µs");
    }

    #[test]
    fn rounding_carries_into_the_next_prefix() {
        assert_eq!(format_eng(999.96, Dim::Ohm), "1.00 kΩ");
        assert_eq!(format_eng(0.99996, Dim::Volt), "1.00 V");
        assert_eq!(format_eng(12.0, Dim::Volt), "12.0 V");
    }

    #[test]
    fn negative_and_zero() {
        assert_eq!(format_eng(-0.0147, Dim::Volt), "-14.7 mV");
        assert_eq!(format_eng(0.0, Dim::Amp), "0.00 A");
    }

    #[test]
    fn dimensions_without_prefix() {
        assert_eq!(format_eng(0.1, Dim::Percent), "10.0 %");
        assert_eq!(format_eng(25.0, Dim::Celsius), "25.0 °C");
        assert_eq!(format_eng(150.0, Dim::Number), "150");
        assert_eq!(format_eng(0.7, Dim::Number), "0.700");
        assert_eq!(format_eng(2.5e6, Dim::Number), "2.50e6");
        assert_eq!(format_eng(f64::NAN, Dim::Volt), "—");
    }

    #[test]
    fn extremes_clamp_to_the_prefix_table() {
        assert_eq!(format_eng(1e-18, Dim::Farad), "0.00100 fF");
        assert_eq!(format_eng(5e14, Dim::Ohm), "500 TΩ");
    }
}
