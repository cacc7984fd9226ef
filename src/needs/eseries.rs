//! Preferred number series for resistors (IEC 60063:2015, tables 1 and 2): E6, E12, E24, E48
//! and E96, and the three picks a derivation makes from them: the largest value at or below a
//! maximum, the smallest at or above a minimum, and the value nearest by ratio.
//!
//! Values are held as an integer three-digit mantissa and a power of ten, never as a float
//! mantissa: 8.2 × 100 is 819.999… in floating point, and a pick must not lose 820 to that.

use std::fmt;

/// A preferred-number series of IEC 60063.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Series {
    /// 6 values a decade, ±20 %.
    E6,
    /// 12 values a decade, ±10 %.
    E12,
    /// 24 values a decade, ±5 %.
    E24,
    /// 48 values a decade, ±2 %.
    E48,
    /// 96 values a decade, ±1 %.
    E96,
}

/// IEC 60063:2015 table 1, E6, as three-digit mantissas.
const E6: [u16; 6] = [100, 150, 220, 330, 470, 680];

/// IEC 60063:2015 table 1, E12, as three-digit mantissas.
const E12: [u16; 12] = [100, 120, 150, 180, 220, 270, 330, 390, 470, 560, 680, 820];

/// IEC 60063:2015 table 1, E24, as three-digit mantissas. Not the rounding of 10^(i/24): the
/// standard keeps the older values 27, 30, 33, 36, 39, 43, 47 and 82 (tested below).
const E24: [u16; 24] = [
    100, 110, 120, 130, 150, 160, 180, 200, 220, 240, 270, 300, 330, 360, 390, 430, 470, 510, 560,
    620, 680, 750, 820, 910,
];

/// IEC 60063:2015 table 2, E96: every value is round(100 · 10^(i/96)) (tested below).
const E96: [u16; 96] = [
    100, 102, 105, 107, 110, 113, 115, 118, 121, 124, 127, 130, 133, 137, 140, 143, 147, 150, 154,
    158, 162, 165, 169, 174, 178, 182, 187, 191, 196, 200, 205, 210, 215, 221, 226, 232, 237, 243,
    249, 255, 261, 267, 274, 280, 287, 294, 301, 309, 316, 324, 332, 340, 348, 357, 365, 374, 383,
    392, 402, 412, 422, 432, 442, 453, 464, 475, 487, 499, 511, 523, 536, 549, 562, 576, 590, 604,
    619, 634, 649, 665, 681, 698, 715, 732, 750, 768, 787, 806, 825, 845, 866, 887, 909, 931, 953,
    976,
];

/// IEC 60063:2015 table 2, E48: every second E96 value, round(100 · 10^(i/48)) (tested below).
const E48: [u16; 48] = [
    100, 105, 110, 115, 121, 127, 133, 140, 147, 154, 162, 169, 178, 187, 196, 205, 215, 226, 237,
    249, 261, 274, 287, 301, 316, 332, 348, 365, 383, 402, 422, 442, 464, 487, 511, 536, 562, 590,
    619, 649, 681, 715, 750, 787, 825, 866, 909, 953,
];

/// The source named beside every pick.
pub const SOURCE: &str = "IEC 60063:2015, tables 1 and 2 (preferred number series)";

impl Series {
    /// Every series, coarsest first.
    pub const ALL: [Series; 5] = [
        Series::E6,
        Series::E12,
        Series::E24,
        Series::E48,
        Series::E96,
    ];

    /// The name used in stage files and outputs (`E12`).
    #[must_use]
    pub fn name(self) -> &'static str {
        match self {
            Series::E6 => "E6",
            Series::E12 => "E12",
            Series::E24 => "E24",
            Series::E48 => "E48",
            Series::E96 => "E96",
        }
    }

    /// Reads a series name, ignoring case and spaces (`E12`, `e 24`).
    #[must_use]
    pub fn from_name(text: &str) -> Option<Series> {
        let squashed: String = text
            .chars()
            .filter(|c| !c.is_whitespace())
            .collect::<String>()
            .to_ascii_uppercase();
        Series::ALL.into_iter().find(|s| s.name() == squashed)
    }

    /// The mantissas of one decade, three digits each (100 ..= 976), ascending.
    #[must_use]
    pub fn mantissas(self) -> &'static [u16] {
        match self {
            Series::E6 => &E6,
            Series::E12 => &E12,
            Series::E24 => &E24,
            Series::E48 => &E48,
            Series::E96 => &E96,
        }
    }

    /// The tolerance the series is made for, as a fraction (E12: 0.10).
    #[must_use]
    pub fn tolerance(self) -> f64 {
        match self {
            Series::E6 => 0.20,
            Series::E12 => 0.10,
            Series::E24 => 0.05,
            Series::E48 => 0.02,
            Series::E96 => 0.01,
        }
    }
}

impl fmt::Display for Series {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

/// A value of a series: `mantissa` × 10^`exponent`, the mantissa three digits (820 × 10⁻¹ is
/// 82 Ω). Exact, so it can be compared and shown without floating-point residue.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub struct Preferred {
    /// Three-digit mantissa, 100 ..= 976.
    pub mantissa: u16,
    /// Power of ten applied to the mantissa.
    pub exponent: i32,
}

impl Preferred {
    /// The value as a float, correctly rounded: the mantissa is multiplied or divided by an
    /// exact power of ten, so 820 × 10⁻² gives the float nearest 8.2.
    #[must_use]
    pub fn value(self) -> f64 {
        let mantissa = f64::from(self.mantissa);
        if self.exponent >= 0 {
            mantissa * 10f64.powi(self.exponent)
        } else {
            mantissa / 10f64.powi(-self.exponent)
        }
    }

    /// Whether this value belongs to `series`.
    #[must_use]
    pub fn is_in(self, series: Series) -> bool {
        series.mantissas().contains(&self.mantissa)
    }
}

/// Relative slack when comparing a series value with a bound: a bound computed as 8.2 × 100
/// (819.999…) still admits 820, while 819.9 does not.
const RELATIVE_SLACK: f64 = 1e-9;

/// Values of the series in the decades around `x`, ascending. Covers the decade below and
/// above, so a pick at a decade edge (1000, 999.99) finds its neighbour whatever `log10` rounds to.
fn around(series: Series, x: f64) -> impl Iterator<Item = Preferred> {
    // x/10^decade lies in [100, 1000). Callers pass a finite positive x, so the floor of its
    // log10 is a small integer (|log10| < 330) and the cast is exact.
    let decade = x.log10().floor() as i32 - 2;
    (decade - 1..=decade + 1).flat_map(move |exponent| {
        series
            .mantissas()
            .iter()
            .map(move |&mantissa| Preferred { mantissa, exponent })
    })
}

/// Whether `x` is a value a pick can work on: positive and within 10⁻¹² ..= 10¹⁵, far beyond
/// any resistor, so the powers of ten stay exact and finite.
fn pickable(x: f64) -> bool {
    (1e-12..=1e15).contains(&x)
}

/// The largest value of `series` at or below `max` (a base resistor that must not exceed a
/// maximum). `None` when `max` is not a positive number within 10⁻¹² ..= 10¹⁵.
#[must_use]
pub fn at_or_below(series: Series, max: f64) -> Option<Preferred> {
    if !pickable(max) {
        return None;
    }
    let limit = max * (1.0 + RELATIVE_SLACK);
    around(series, max)
        .filter(|p| p.value() <= limit)
        .max_by(|a, b| a.value().total_cmp(&b.value()))
}

/// The smallest value of `series` at or above `min` (a series resistor that must hold a
/// current below a maximum). `None` when `min` is not a positive number within 10⁻¹² ..= 10¹⁵.
#[must_use]
pub fn at_or_above(series: Series, min: f64) -> Option<Preferred> {
    if !pickable(min) {
        return None;
    }
    let limit = min * (1.0 - RELATIVE_SLACK);
    around(series, min)
        .filter(|p| p.value() >= limit)
        .min_by(|a, b| a.value().total_cmp(&b.value()))
}

/// The value of `series` nearest `target` by ratio (smallest |ln(value / target)|), the pick
/// for a resistor that sets a threshold either way. A tie goes to the lower value.
/// `None` when `target` is not a positive number within 10⁻¹² ..= 10¹⁵.
#[must_use]
pub fn nearest(series: Series, target: f64) -> Option<Preferred> {
    if !pickable(target) {
        return None;
    }
    let distance = |p: &Preferred| (p.value() / target).ln().abs();
    around(series, target).reduce(|best, candidate| {
        if distance(&candidate) < distance(&best) * (1.0 - RELATIVE_SLACK) {
            candidate
        } else {
            best
        }
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn below(series: Series, max: f64) -> f64 {
        at_or_below(series, max).map_or(f64::NAN, Preferred::value)
    }

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= 1e-9 * b.abs()
    }

    /// IEC 60063:2015 table 1, as listed in REFERENCES.md.
    #[test]
    fn e12_and_e24_match_iec_60063_table_1() {
        let e12 = [10, 12, 15, 18, 22, 27, 33, 39, 47, 56, 68, 82];
        let e24 = [
            10, 11, 12, 13, 15, 16, 18, 20, 22, 24, 27, 30, 33, 36, 39, 43, 47, 51, 56, 62, 68, 75,
            82, 91,
        ];
        let two_digit = |s: Series| s.mantissas().iter().map(|m| m / 10).collect::<Vec<_>>();
        assert_eq!(two_digit(Series::E12), e12);
        assert_eq!(two_digit(Series::E24), e24);
        assert!(Series::E12.mantissas().iter().all(|m| m % 10 == 0));
        assert_eq!(two_digit(Series::E6), [10, 15, 22, 33, 47, 68]);
    }

    /// IEC 60063:2015 table 1: E24 cannot be generated by rounding 10^(i/24); exactly the
    /// values 27 30 33 36 39 43 47 82 differ (REFERENCES.md).
    #[test]
    fn e24_is_not_the_rounded_geometric_series_iec_60063() {
        let differing: Vec<u16> = Series::E24
            .mantissas()
            .iter()
            .enumerate()
            .filter(|&(i, &m)| {
                let rounded = (10.0 * 10f64.powf(i as f64 / 24.0)).round() as u16;
                rounded * 10 != m
            })
            .map(|(_, &m)| m / 10)
            .collect();
        assert_eq!(differing, [27, 30, 33, 36, 39, 43, 47, 82]);
    }

    /// IEC 60063:2015 table 2: every E96 value is round(100 · 10^(i/96)), every E48 value
    /// round(100 · 10^(i/48)) (REFERENCES.md).
    #[test]
    fn e48_and_e96_follow_the_iec_60063_table_2_relation() {
        for (n, series) in [(96, Series::E96), (48, Series::E48)] {
            let values = series.mantissas();
            assert_eq!(values.len(), n);
            for (i, &m) in values.iter().enumerate() {
                let expected = (100.0 * 10f64.powf(i as f64 / n as f64)).round() as u16;
                assert_eq!(m, expected, "{series} index {i}");
            }
        }
        assert_eq!(Series::E96.mantissas()[95], 976);
    }

    /// REFERENCES.md table "largest value at or below a maximum" (common practice pick over
    /// IEC 60063:2015 tables 1 and 2).
    #[test]
    fn largest_at_or_below_references_table_iec_60063() {
        let rows = [
            (833.3, 820.0, 820.0, 825.0),
            (2357.0, 2200.0, 2200.0, 2320.0),
            (86e3, 82e3, 82e3, 84.5e3),
            (999.99, 820.0, 910.0, 976.0),
            (1000.0, 1000.0, 1000.0, 1000.0),
        ];
        for (max, e12, e24, e96) in rows {
            assert!(close(below(Series::E12, max), e12), "E12 {max}");
            assert!(close(below(Series::E24, max), e24), "E24 {max}");
            assert!(close(below(Series::E96, max), e96), "E96 {max}");
        }
    }

    /// The floating-point trap REFERENCES.md warns of: 8.2 × 100 is 819.999…; the pick keeps 820.
    #[test]
    fn a_bound_with_float_residue_keeps_its_value() {
        let max = 8.2 * 100.0;
        assert!(max < 820.0);
        assert_eq!(below(Series::E12, max), 820.0);
        assert_eq!(below(Series::E12, 819.9), 680.0);
        assert_eq!(
            at_or_above(Series::E12, 8.2 * 100.0).map(Preferred::value),
            Some(820.0)
        );
        assert_eq!(below(Series::E12, 0.82), 0.82);
        assert_eq!(below(Series::E12, 2.2e6), 2.2e6);
    }

    #[test]
    fn smallest_at_or_above_and_nearest() {
        // Common practice picks over IEC 60063 table 1.
        assert_eq!(
            at_or_above(Series::E12, 460.0).map(Preferred::value),
            Some(470.0)
        );
        assert_eq!(
            at_or_above(Series::E12, 830.0).map(Preferred::value),
            Some(1000.0)
        );
        assert_eq!(nearest(Series::E12, 10e3).map(Preferred::value), Some(10e3));
        // 4.45 kΩ: 3.9 k is a ratio of 1.141 away, 4.7 k a ratio of 1.056: 4.7 k.
        assert_eq!(
            nearest(Series::E12, 4450.0).map(Preferred::value),
            Some(4700.0)
        );
        assert_eq!(
            nearest(Series::E24, 4450.0).map(Preferred::value),
            Some(4300.0)
        );
        for bad in [0.0, -1.0, f64::NAN, f64::INFINITY] {
            assert_eq!(at_or_below(Series::E12, bad), None);
            assert_eq!(at_or_above(Series::E12, bad), None);
            assert_eq!(nearest(Series::E12, bad), None);
        }
    }

    #[test]
    fn names_read_back() {
        for series in Series::ALL {
            assert_eq!(Series::from_name(series.name()), Some(series));
        }
        assert_eq!(Series::from_name(" e 24"), Some(Series::E24));
        assert_eq!(Series::from_name("E192"), None);
    }

    fn any_series() -> impl Strategy<Value = Series> {
        prop::sample::select(Series::ALL.to_vec())
    }

    proptest! {
        /// Every pick is a member of its series and within its bound; "at or below" is the
        /// largest such member and "at or above" the smallest (IEC 60063 series, common-practice picks).
        #[test]
        fn picks_are_in_the_series_and_within_the_bound(series in any_series(), exp in -3.0f64..9.0) {
            let x = 10f64.powf(exp);
            let low = at_or_below(series, x).ok_or_else(|| TestCaseError::fail("no pick below"))?;
            let high = at_or_above(series, x).ok_or_else(|| TestCaseError::fail("no pick above"))?;
            let near = nearest(series, x).ok_or_else(|| TestCaseError::fail("no nearest"))?;
            for p in [low, high, near] {
                prop_assert!(p.is_in(series), "{:?} not in {}", p, series);
            }
            prop_assert!(low.value() <= x * (1.0 + 1e-9));
            prop_assert!(high.value() >= x * (1.0 - 1e-9));
            // No member lies strictly between the two picks and the bound.
            for p in around(series, x) {
                let v = p.value();
                prop_assert!(!(v > low.value() * (1.0 + 1e-12) && v <= x * (1.0 - 1e-12)), "{} between", v);
                prop_assert!(!(v < high.value() * (1.0 - 1e-12) && v >= x * (1.0 + 1e-12)), "{} between", v);
            }
            // The nearest by ratio is one of the two neighbours, the closer one.
            prop_assert!(near == low || near == high);
            let d = |p: Preferred| (p.value() / x).ln().abs();
            prop_assert!(d(near) <= d(low).min(d(high)) * (1.0 + 1e-9) + 1e-15);
        }
    }
}
