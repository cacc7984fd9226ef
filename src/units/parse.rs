//! Reading quantities as people write them: `4k7`, `4.7 kΩ`, `100mA`, `2.2e-3`, `1 MEG`,
//! `4,7k` (decimal comma), `25 °C`, `10 %`.
//!
//! Works on `&str` without allocating, because the library reader calls it for every cell.

use super::{Dim, Quantity};
use thiserror::Error;

/// Why a text is not a quantity of the expected dimension. Every variant carries the text.
#[derive(Debug, Clone, PartialEq, Error)]
pub enum UnitError {
    /// Nothing to read.
    #[error("empty value: expected {expected}")]
    Empty {
        /// What was expected, e.g. "a voltage".
        expected: &'static str,
    },
    /// The text does not start with a number.
    #[error("\"{text}\" is not a number")]
    NotANumber {
        /// The text as given.
        text: String,
    },
    /// NaN or infinity written out.
    #[error("\"{text}\" is not a finite value")]
    NotFinite {
        /// The text as given.
        text: String,
    },
    /// A number too large or too small for a 64-bit float.
    #[error("\"{text}\" is out of range")]
    OutOfRange {
        /// The text as given.
        text: String,
    },
    /// The unit names another dimension, e.g. amps where volts are expected.
    #[error("\"{text}\" is {found}, expected {expected}")]
    WrongDimension {
        /// The text as given.
        text: String,
        /// What the unit measures.
        found: &'static str,
        /// What was expected.
        expected: &'static str,
    },
    /// Something after the number that is neither a prefix nor a unit.
    #[error(
        "\"{text}\" is not a number (unknown unit or prefix \"{suffix}\"; expected {expected})"
    )]
    UnknownUnit {
        /// The text as given.
        text: String,
        /// The part that could not be read.
        suffix: String,
        /// What was expected.
        expected: &'static str,
    },
    /// A decimal comma where the file does not use them.
    #[error(
        "\"{text}\": a comma in a number is read as a decimal comma only in ;-delimited files; write a dot"
    )]
    CommaNotAllowed {
        /// The text as given.
        text: String,
    },
}

/// Options that depend on where the text comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ParseOptions {
    /// Whether `,` may stand for the decimal point (`4,7k`). True for typed input and stage files
    /// and for `;`-delimited libraries; false for `,`-delimited ones, where `1,000` is ambiguous.
    pub decimal_comma: bool,
}

impl Default for ParseOptions {
    fn default() -> Self {
        ParseOptions {
            decimal_comma: true,
        }
    }
}

/// Parses `text` as a quantity of dimension `expected`, with a decimal comma allowed.
///
/// # Errors
/// [`UnitError`] when the text is empty, not a number, not finite, out of range, or carries a
/// unit of another dimension or an unknown suffix.
pub fn parse(text: &str, expected: Dim) -> Result<Quantity, UnitError> {
    parse_with(text, expected, ParseOptions::default())
}

/// Parses `text` as a quantity of dimension `expected` under `options`.
///
/// # Errors
/// As [`parse`], and [`UnitError::CommaNotAllowed`] for a comma when `options` forbid it.
pub fn parse_with(text: &str, expected: Dim, options: ParseOptions) -> Result<Quantity, UnitError> {
    let trimmed = text.trim();
    if trimmed.is_empty() {
        return Err(UnitError::Empty {
            expected: expected.noun(),
        });
    }
    let scan = scan_number(trimmed).ok_or_else(|| classify_non_number(trimmed))?;
    if scan.comma && !options.decimal_comma {
        return Err(UnitError::CommaNotAllowed {
            text: trimmed.to_string(),
        });
    }
    let mantissa =
        number_value(&trimmed[..scan.end], scan.comma).ok_or_else(|| not_a_number(trimmed))?;
    let rest = &trimmed[scan.end..];

    // The `4k7` / `4R7` / `4V7` style: a letter standing for the decimal point.
    if !scan.has_dot_or_exp
        && let Some((value, after)) = letter_as_point(&trimmed[..scan.end], rest)
    {
        let unit = after.trim_start();
        let scale = if unit.is_empty() {
            value.scale
        } else {
            value.scale * read_suffix(unit, expected, trimmed)?
        };
        return finish(value.number * scale, expected, trimmed, value.letter_dim);
    }

    let suffix = rest.trim_start();
    let scale = if suffix.is_empty() {
        1.0
    } else {
        read_suffix(suffix, expected, trimmed)?
    };
    finish(mantissa * scale, expected, trimmed, None)
}

/// Where the number at the start of a text ends, and how it was written.
struct Scan {
    end: usize,
    comma: bool,
    has_dot_or_exp: bool,
}

/// Finds the extent of a leading number: sign, digits, one decimal separator, an exponent.
fn scan_number(text: &str) -> Option<Scan> {
    let bytes = text.as_bytes();
    let mut i = 0;
    if matches!(bytes.first(), Some(b'+' | b'-')) {
        i += 1;
    }
    let digits_start = i;
    while i < bytes.len() && bytes[i].is_ascii_digit() {
        i += 1;
    }
    let mut digits = i - digits_start;
    let mut comma = false;
    let mut has_dot_or_exp = false;
    if i < bytes.len() && (bytes[i] == b'.' || bytes[i] == b',') {
        let separator = bytes[i];
        let frac_start = i + 1;
        let mut j = frac_start;
        while j < bytes.len() && bytes[j].is_ascii_digit() {
            j += 1;
        }
        // "4," followed by nothing numeric is not a decimal (and a bare "." is not a number).
        if j > frac_start || (separator == b'.' && digits > 0) {
            digits += j - frac_start;
            comma = separator == b',';
            has_dot_or_exp = true;
            i = j;
        }
    }
    if digits == 0 {
        return None;
    }
    if i < bytes.len() && (bytes[i] == b'e' || bytes[i] == b'E') {
        let mut j = i + 1;
        if j < bytes.len() && (bytes[j] == b'+' || bytes[j] == b'-') {
            j += 1;
        }
        let exp_start = j;
        while j < bytes.len() && bytes[j].is_ascii_digit() {
            j += 1;
        }
        if j > exp_start {
            i = j;
            has_dot_or_exp = true;
        }
    }
    Some(Scan {
        end: i,
        comma,
        has_dot_or_exp,
    })
}

/// The value of a scanned number, turning a decimal comma into a point without allocating.
fn number_value(number: &str, comma: bool) -> Option<f64> {
    if !comma {
        return number.parse::<f64>().ok();
    }
    let mut buffer = [0u8; 64];
    let bytes = number.as_bytes();
    if bytes.len() > buffer.len() {
        return None;
    }
    for (slot, &byte) in buffer.iter_mut().zip(bytes) {
        *slot = if byte == b',' { b'.' } else { byte };
    }
    std::str::from_utf8(&buffer[..bytes.len()])
        .ok()?
        .parse::<f64>()
        .ok()
}

/// A value written with a letter for the decimal point.
struct LetterValue {
    number: f64,
    scale: f64,
    letter_dim: Option<Dim>,
}

/// Reads `4k7`, `4R7`, `4V7`: integer digits, a prefix or unit letter, fraction digits.
/// Returns the value and what follows the fraction digits.
fn letter_as_point<'a>(integer: &str, rest: &'a str) -> Option<(LetterValue, &'a str)> {
    let mut chars = rest.char_indices();
    let (_, letter) = chars.next()?;
    let after_letter = letter.len_utf8();
    let fraction_len = rest[after_letter..]
        .bytes()
        .take_while(u8::is_ascii_digit)
        .count();
    if fraction_len == 0 {
        return None;
    }
    let (scale, letter_dim) = match letter {
        'R' | 'r' => (1.0, Some(Dim::Ohm)),
        'V' => (1.0, Some(Dim::Volt)),
        other => (prefix_scale_char(other)?, None),
    };
    let fraction = &rest[after_letter..after_letter + fraction_len];
    let whole: f64 = integer.parse().ok()?;
    let frac: f64 = fraction.parse().ok()?;
    let number = whole.abs() + frac / 10f64.powi(fraction_len as i32);
    let number = if whole.is_sign_negative() || integer.starts_with('-') {
        -number
    } else {
        number
    };
    Some((
        LetterValue {
            number,
            scale,
            letter_dim,
        },
        &rest[after_letter + fraction_len..],
    ))
}

/// Checks the final value and that a letter-point unit (`4R7`, `4V7`) suits the dimension.
fn finish(
    value: f64,
    expected: Dim,
    text: &str,
    letter_dim: Option<Dim>,
) -> Result<Quantity, UnitError> {
    if let Some(found) = letter_dim
        && found != expected
    {
        return Err(UnitError::WrongDimension {
            text: text.to_string(),
            found: found.noun(),
            expected: expected.noun(),
        });
    }
    if !value.is_finite() {
        return Err(UnitError::OutOfRange {
            text: text.to_string(),
        });
    }
    Ok(Quantity::new(value, expected))
}

/// Reads what follows the number: a prefix, a unit, or both. Returns the scale to apply.
fn read_suffix(suffix: &str, expected: Dim, text: &str) -> Result<f64, UnitError> {
    // 1. The expected unit alone ("m" is metres when a length is expected).
    if let Some(scale) = unit_scale(suffix, expected) {
        return Ok(scale);
    }
    // 2. A prefix alone, the unit left out ("4.7k", "100m", "1 MEG").
    if let Some(scale) = prefix_scale(suffix) {
        return Ok(scale);
    }
    // 3. A prefix followed by the expected unit; 4. by another dimension's unit.
    for (start, _) in suffix.char_indices().skip(1) {
        let (prefix, unit) = suffix.split_at(start);
        let Some(prefix_value) = prefix_scale(prefix) else {
            continue;
        };
        if let Some(scale) = unit_scale(unit, expected) {
            return Ok(prefix_value * scale);
        }
    }
    if let Some(found) = dimension_of(suffix) {
        return Err(UnitError::WrongDimension {
            text: text.to_string(),
            found: found.noun(),
            expected: expected.noun(),
        });
    }
    for (start, _) in suffix.char_indices().skip(1) {
        let (prefix, unit) = suffix.split_at(start);
        if prefix_scale(prefix).is_some()
            && let Some(found) = dimension_of(unit)
        {
            return Err(UnitError::WrongDimension {
                text: text.to_string(),
                found: found.noun(),
                expected: expected.noun(),
            });
        }
    }
    Err(UnitError::UnknownUnit {
        text: text.to_string(),
        suffix: suffix.to_string(),
        expected: expected.noun(),
    })
}

/// The value of an SI prefix written on its own, including the `MEG` of circuit simulators
/// (SI Brochure, 9th edition, table 7, for the letters; `u` for micro is common practice).
fn prefix_scale(prefix: &str) -> Option<f64> {
    match prefix {
        "MEG" | "meg" | "Meg" => Some(1e6),
        _ => {
            let mut chars = prefix.chars();
            let first = chars.next()?;
            if chars.next().is_some() {
                return None;
            }
            prefix_scale_char(first)
        }
    }
}

/// The value of a one-letter SI prefix. `K` is accepted for kilo as resistor codes write it.
fn prefix_scale_char(letter: char) -> Option<f64> {
    Some(match letter {
        'f' => 1e-15,
        'p' => 1e-12,
        'n' => 1e-9,
        'u' | 'µ' | 'μ' => 1e-6,
        'm' => 1e-3,
        'k' | 'K' => 1e3,
        'M' => 1e6,
        'G' => 1e9,
        'T' => 1e12,
        _ => return None,
    })
}

/// The scale of a unit spelling in `dim`, if `unit` is one of its spellings. Percent scales by
/// 1/100 so that "10 %" holds 0.1.
fn unit_scale(unit: &str, dim: Dim) -> Option<f64> {
    let spellings: &[&str] = match dim {
        Dim::Volt => &[
            "V", "v", "volt", "volts", "Vdc", "VDC", "Vac", "VAC", "Vrms", "V rms",
        ],
        Dim::Amp => &["A", "amp", "amps", "ampere", "amperes", "Adc", "Aac"],
        Dim::Ohm => &["Ω", "\u{2126}", "ohm", "ohms", "Ohm", "Ohms", "OHM", "R"],
        Dim::Watt => &["W", "watt", "watts"],
        Dim::Farad => &["F", "farad", "farads"],
        Dim::Henry => &["H", "henry", "henries", "henrys"],
        Dim::Second => &["s", "sec", "secs", "second", "seconds"],
        Dim::Hertz => &["Hz", "hz", "HZ"],
        Dim::Joule => &["J", "joule", "joules"],
        Dim::Lux => &["lux", "lx", "Lux", "LUX"],
        Dim::Celsius => &["C", "°C", "ºC", "degC", "deg C", "℃"],
        Dim::Kelvin => &["K", "kelvin"],
        Dim::KelvinPerWatt => &["K/W", "C/W", "°C/W", "ºC/W"],
        Dim::Metre => &["m", "metre", "meter", "metres", "meters"],
        Dim::Percent => return matches!(unit, "%" | "percent").then_some(0.01),
        Dim::Number => &["x", "X", "×"],
        Dim::VoltPerKelvin => &["V/K", "V/°C", "V/ºC", "V/C", "V/degC"],
        Dim::PercentPerKelvin => {
            return matches!(unit, "%/K" | "%/°C" | "%/ºC" | "%/C" | "%/degC").then_some(0.01);
        }
    };
    spellings.contains(&unit).then_some(1.0)
}

/// All dimensions, to name the one a mistaken unit belongs to.
const ALL_DIMS: [Dim; 18] = [
    Dim::Volt,
    Dim::Amp,
    Dim::Ohm,
    Dim::Watt,
    Dim::Farad,
    Dim::Henry,
    Dim::Second,
    Dim::Hertz,
    Dim::Joule,
    Dim::Lux,
    Dim::Celsius,
    Dim::Kelvin,
    Dim::KelvinPerWatt,
    Dim::Metre,
    Dim::Percent,
    Dim::Number,
    Dim::VoltPerKelvin,
    Dim::PercentPerKelvin,
];

/// The dimension a unit spelling belongs to, if any.
fn dimension_of(unit: &str) -> Option<Dim> {
    ALL_DIMS
        .into_iter()
        .find(|&dim| unit_scale(unit, dim).is_some())
}

/// Names why a text that does not start with digits is not a quantity.
fn classify_non_number(text: &str) -> UnitError {
    let lower = text.trim_start_matches(['+', '-']).to_ascii_lowercase();
    if lower.starts_with("nan") || lower.starts_with("inf") {
        UnitError::NotFinite {
            text: text.to_string(),
        }
    } else {
        not_a_number(text)
    }
}

fn not_a_number(text: &str) -> UnitError {
    UnitError::NotANumber {
        text: text.to_string(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn value(text: &str, dim: Dim) -> f64 {
        match parse(text, dim) {
            Ok(q) => q.value,
            Err(e) => panic!("{text}: {e}"),
        }
    }

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= 1e-12 * a.abs().max(b.abs())
    }

    #[test]
    fn forms_listed_in_the_issue() {
        for text in ["4k7", "4.7k", "4.7 kΩ", "4.7 kohm", "4,7k", "4K7", "4.7kΩ"] {
            assert!(close(value(text, Dim::Ohm), 4700.0), "{text}");
        }
        assert!(close(value("100mA", Dim::Amp), 0.1));
        assert!(close(value("0.1 A", Dim::Amp), 0.1));
        for text in ["10 µF", "10 uF", "10 μF", "10µF"] {
            assert!(close(value(text, Dim::Farad), 10e-6), "{text}");
        }
        assert!(close(value("2.2e-3", Dim::Second), 2.2e-3));
        assert!(close(value("1M", Dim::Ohm), 1e6));
        assert!(close(value("1m", Dim::Ohm), 1e-3));
        assert!(close(value("1 MEG", Dim::Ohm), 1e6));
        assert!(close(value("40 V", Dim::Volt), 40.0));
        assert!(close(value("10 %", Dim::Percent), 0.1));
        assert!(close(value("25 C", Dim::Celsius), 25.0));
        assert!(close(value("25 °C", Dim::Celsius), 25.0));
        assert!(close(value("-20 °C", Dim::Celsius), -20.0));
        assert!(close(value("4R7", Dim::Ohm), 4.7));
        assert!(close(value("4V7", Dim::Volt), 4.7));
        assert!(close(value("100R", Dim::Ohm), 100.0));
        assert!(close(value("540 nm", Dim::Metre), 540e-9));
        assert!(close(value("200 C/W", Dim::KelvinPerWatt), 200.0));
        assert!(close(value("6x", Dim::Number), 6.0));
    }

    /// Temperature coefficients as the worst-case keys take them: a base-emitter drift of
    /// -2 mV/K and a gain drift of +0.5 %/K (values of issue 10; the units are SI, V/K, and
    /// a percentage per kelvin held as a fraction like every percentage).
    #[test]
    fn temperature_coefficients_parse() {
        assert!(close(value("-2 mV/K", Dim::VoltPerKelvin), -2e-3));
        assert!(close(value("-2mV/K", Dim::VoltPerKelvin), -2e-3));
        assert!(close(value("-0.002 V/°C", Dim::VoltPerKelvin), -2e-3));
        assert!(close(value("+0.5 %/K", Dim::PercentPerKelvin), 0.005));
        assert!(close(value("0,5 %/°C", Dim::PercentPerKelvin), 0.005));
        assert!(matches!(
            parse("-2 mV", Dim::VoltPerKelvin),
            Err(UnitError::WrongDimension { .. })
        ));
        assert!(matches!(
            parse("0.5 %/K", Dim::VoltPerKelvin),
            Err(UnitError::WrongDimension { .. })
        ));
        assert!(matches!(
            parse("-2 mV/K", Dim::Volt),
            Err(UnitError::WrongDimension { .. })
        ));
        assert_eq!(
            super::super::format_eng(-2e-3, Dim::VoltPerKelvin),
            "-2.00 mV/K"
        );
        assert_eq!(
            super::super::format_eng(0.005, Dim::PercentPerKelvin),
            "0.500 %/K"
        );
    }

    /// Every prefix of the SI Brochure (BIPM, 9th edition, 2019, table 7) from femto to tera.
    #[test]
    fn si_prefix_values_bipm_si_brochure_table_7() {
        let table = [
            ("f", 1e-15),
            ("p", 1e-12),
            ("n", 1e-9),
            ("µ", 1e-6),
            ("m", 1e-3),
            ("k", 1e3),
            ("M", 1e6),
            ("G", 1e9),
            ("T", 1e12),
        ];
        for (prefix, scale) in table {
            let text = format!("3 {prefix}V");
            assert!(close(value(&text, Dim::Volt), 3.0 * scale), "{text}");
        }
    }

    #[test]
    fn wrong_dimension_is_an_error_naming_the_text() {
        let error = parse("40 A", Dim::Volt).unwrap_err();
        assert_eq!(
            error,
            UnitError::WrongDimension {
                text: "40 A".into(),
                found: "a current",
                expected: "a voltage"
            }
        );
        assert!(error.to_string().contains("40 A"));
        assert!(matches!(
            parse("100 mA", Dim::Volt),
            Err(UnitError::WrongDimension { .. })
        ));
        assert!(matches!(
            parse("4R7", Dim::Volt),
            Err(UnitError::WrongDimension { .. })
        ));
    }

    #[test]
    fn garbage_nan_infinity_and_overflow_are_errors() {
        assert!(matches!(
            parse("NaN", Dim::Volt),
            Err(UnitError::NotFinite { .. })
        ));
        assert!(matches!(
            parse("inf", Dim::Volt),
            Err(UnitError::NotFinite { .. })
        ));
        assert!(matches!(
            parse("-infinity", Dim::Volt),
            Err(UnitError::NotFinite { .. })
        ));
        assert!(matches!(
            parse("1e400", Dim::Volt),
            Err(UnitError::OutOfRange { .. })
        ));
        assert!(matches!(
            parse("4O V", Dim::Volt),
            Err(UnitError::UnknownUnit { .. })
        ));
        assert!(matches!(
            parse("abc", Dim::Volt),
            Err(UnitError::NotANumber { .. })
        ));
        assert!(matches!(parse("", Dim::Volt), Err(UnitError::Empty { .. })));
        assert!(matches!(
            parse(".", Dim::Volt),
            Err(UnitError::NotANumber { .. })
        ));
    }

    #[test]
    fn comma_is_refused_where_the_file_does_not_use_decimal_commas() {
        let strict = ParseOptions {
            decimal_comma: false,
        };
        assert!(matches!(
            parse_with("0,2 V", Dim::Volt, strict),
            Err(UnitError::CommaNotAllowed { .. })
        ));
        assert!(close(value("0,2 V", Dim::Volt), 0.2));
    }

    #[test]
    fn negative_values_parse_for_the_reader_to_judge() {
        assert!(close(value("-40 V", Dim::Volt), -40.0));
        assert!(close(value("-4k7", Dim::Ohm), -4700.0));
    }

    proptest! {
        /// Display then parse returns the value within 0.5 % (three significant figures).
        #[test]
        fn display_then_parse_round_trips(mantissa in 1.0f64..10.0, exponent in -14i32..12, negative: bool) {
            let raw = mantissa * 10f64.powi(exponent);
            let raw = if negative { -raw } else { raw };
            for dim in [Dim::Volt, Dim::Amp, Dim::Ohm, Dim::Farad, Dim::Henry, Dim::Second, Dim::Watt, Dim::Number, Dim::Percent] {
                let shown = super::super::format_eng(raw, dim);
                let back = parse(&shown, dim).map_err(|e| TestCaseError::fail(format!("{shown}: {e}")))?;
                prop_assert!((back.value - raw).abs() <= 0.005 * raw.abs(), "{} -> {} -> {}", raw, shown, back.value);
            }
        }

        /// The parser never panics, whatever the text.
        #[test]
        fn parse_never_panics(text in "\\PC{0,24}") {
            let _ = parse(&text, Dim::Volt);
            let _ = parse(&text, Dim::Ohm);
        }
    }
}
