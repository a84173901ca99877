//! IEC 60063 preferred-number series E3 … E192, and look-ups on exact quantities.
//!
//! The tables hold the values of one decade as three-digit integers (100 … 999): E3–E24 with the
//! historic two-digit values exactly as IEC 60063 lists them (they are not all
//! `round(10^(i/24))`: 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7 and 8.2 differ), E48/E96/E192 with three
//! digits as the standard lists them (equal to `round(100·10^(i/N))` except E192's 920, where
//! the formula gives 919). E12, E6 and E3 are every 2nd, 4th and 8th E24 value; E96 and E48
//! every 2nd and 4th E192 value. E24 is not a subset of E192.
//!
//! Look-ups work on any quantity's exact base units (every base unit is a power of ten of the SI
//! unit, so a preferred value is `m × 10^k` base units). A preferred value finer than the base
//! unit (1.1 mΩ) or too large to store does not exist for these functions. "Nearest" is by ratio
//! (the series are geometric); ties go to the lower value. Owns tables and look-ups; no I/O.

use super::BaseUnits;
use std::fmt;
use std::str::FromStr;

/// A preferred-number series.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, serde::Serialize)]
pub enum Series {
    /// 3 values per decade.
    E3,
    /// 6 values per decade.
    E6,
    /// 12 values per decade.
    E12,
    /// 24 values per decade.
    E24,
    /// 48 values per decade.
    E48,
    /// 96 values per decade.
    E96,
    /// 192 values per decade.
    E192,
}

/// IEC 60063 E24 (historic values), ×100.
const E24: [u16; 24] = [
    100, 110, 120, 130, 150, 160, 180, 200, 220, 240, 270, 300, 330, 360, 390, 430, 470, 510, 560,
    620, 680, 750, 820, 910,
];

/// IEC 60063 E192, three significant digits ×100. Note 920 (formula: 919).
const E192: [u16; 192] = [
    100, 101, 102, 104, 105, 106, 107, 109, 110, 111, 113, 114, 115, 117, 118, 120, 121, 123, 124,
    126, 127, 129, 130, 132, 133, 135, 137, 138, 140, 142, 143, 145, 147, 149, 150, 152, 154, 156,
    158, 160, 162, 164, 165, 167, 169, 172, 174, 176, 178, 180, 182, 184, 187, 189, 191, 193, 196,
    198, 200, 203, 205, 208, 210, 213, 215, 218, 221, 223, 226, 229, 232, 234, 237, 240, 243, 246,
    249, 252, 255, 258, 261, 264, 267, 271, 274, 277, 280, 284, 287, 291, 294, 298, 301, 305, 309,
    312, 316, 320, 324, 328, 332, 336, 340, 344, 348, 352, 357, 361, 365, 370, 374, 379, 383, 388,
    392, 397, 402, 407, 412, 417, 422, 427, 432, 437, 442, 448, 453, 459, 464, 470, 475, 481, 487,
    493, 499, 505, 511, 517, 523, 530, 536, 542, 549, 556, 562, 569, 576, 583, 590, 597, 604, 612,
    619, 626, 634, 642, 649, 657, 665, 673, 681, 690, 698, 706, 715, 723, 732, 741, 750, 759, 768,
    777, 787, 796, 806, 816, 825, 835, 845, 856, 866, 876, 887, 898, 909, 920, 931, 942, 953, 965,
    976, 988,
];

/// Every `step`-th value of `src`, starting with the first.
const fn every<const N: usize>(src: &[u16], step: usize) -> [u16; N] {
    let mut out = [0u16; N];
    let mut i = 0;
    while i < N {
        out[i] = src[i * step];
        i += 1;
    }
    out
}

const E12: [u16; 12] = every(&E24, 2);
const E6: [u16; 6] = every(&E24, 4);
const E3: [u16; 3] = every(&E24, 8);
const E96: [u16; 96] = every(&E192, 2);
const E48: [u16; 48] = every(&E192, 4);

/// Why a series name was not understood.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("unknown series {0:?}; known: E3, E6, E12, E24, E48, E96, E192")]
pub struct UnknownSeries(pub String);

impl Series {
    /// Every series, smallest first.
    pub const ALL: [Series; 7] = [
        Series::E3,
        Series::E6,
        Series::E12,
        Series::E24,
        Series::E48,
        Series::E96,
        Series::E192,
    ];

    /// The values of one decade as three-digit integers 100 … 999 (E24's 4.7 is 470).
    pub fn table(self) -> &'static [u16] {
        match self {
            Series::E3 => &E3,
            Series::E6 => &E6,
            Series::E12 => &E12,
            Series::E24 => &E24,
            Series::E48 => &E48,
            Series::E96 => &E96,
            Series::E192 => &E192,
        }
    }

    /// The values of one decade as three-digit integers (same as [`table`](Self::table)).
    pub fn mantissas(self) -> Vec<u16> {
        self.table().to_vec()
    }

    /// Values per decade.
    pub fn per_decade(self) -> usize {
        self.table().len()
    }

    /// Significant digits the standard gives: 2 for E3–E24, 3 for E48–E192.
    pub fn significant_digits(self) -> u32 {
        if self <= Series::E24 { 2 } else { 3 }
    }

    /// The decade values as the standard writes them, without the trailing zero of the
    /// two-digit series: 10, 11, 12 … for E24, 100, 102, 105 … for E96.
    pub fn base_numbers(self) -> Vec<u16> {
        let div = if self.significant_digits() == 2 {
            10
        } else {
            1
        };
        self.table().iter().map(|m| m / div).collect()
    }

    /// The tolerance the series is usually sold at, in percent (common practice): E6 ±20 %,
    /// E12 ±10 %, E24 ±5 %, E48 ±2 %, E96 ±1 %, E192 ±0.5 % and tighter. `None` for E3, which
    /// is meant for tolerances wider than ±20 %.
    pub fn usual_tolerance_percent(self) -> Option<f64> {
        match self {
            Series::E3 => None,
            Series::E6 => Some(20.0),
            Series::E12 => Some(10.0),
            Series::E24 => Some(5.0),
            Series::E48 => Some(2.0),
            Series::E96 => Some(1.0),
            Series::E192 => Some(0.5),
        }
    }

    /// Whether the exact value is in this series.
    pub fn contains<Q: BaseUnits>(self, x: Q) -> bool {
        normalise(x.base()).is_some_and(|m| self.table().binary_search(&m).is_ok())
    }
}

impl fmt::Display for Series {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.pad(&format!("E{}", self.per_decade()))
    }
}

impl FromStr for Series {
    type Err = UnknownSeries;
    /// `E24`, `e96`, ` E192 `.
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        let t = s.trim();
        Series::ALL
            .into_iter()
            .find(|x| x.to_string().eq_ignore_ascii_case(t))
            .ok_or_else(|| UnknownSeries(s.to_string()))
    }
}

/// The three significant digits of `x` (100 … 999) if it has at most three, else `None`.
fn normalise(x: i64) -> Option<u16> {
    if x <= 0 {
        return None;
    }
    let mut v = x;
    while v >= 1000 {
        if v % 10 != 0 {
            return None;
        }
        v /= 10;
    }
    while v < 100 {
        v *= 10;
    }
    u16::try_from(v).ok()
}

/// Exponent `k` such that `x` lies in [100·10^k, 1000·10^k): the decade of `x` in table terms.
fn decade_of(x: i64) -> i32 {
    // x ≥ 1: ilog10 is 0 … 18, so k is −2 … 16.
    x.max(1).ilog10() as i32 - 2
}

/// `m × 10^k` as base units, if it is a whole number that fits.
fn value(m: u16, k: i32) -> Option<i64> {
    let m = i64::from(m);
    if k >= 0 {
        10i64
            .checked_pow(k.unsigned_abs())
            .and_then(|p| m.checked_mul(p))
    } else {
        let p = 10i64.checked_pow(k.unsigned_abs())?;
        (m % p == 0).then_some(m / p)
    }
}

/// Smallest decade exponent that can hold a whole number of base units.
const MIN_DECADE: i32 = -2;
/// Largest decade exponent that can hold any value (10^18 · 100 already overflows).
const MAX_DECADE: i32 = 16;

/// Preferred values of `series` in ascending order, starting at decade `k`.
fn ascending(series: Series, from: i32) -> impl Iterator<Item = i64> {
    (from.max(MIN_DECADE)..=MAX_DECADE)
        .flat_map(move |k| series.table().iter().map(move |&m| value(m, k)))
        .flatten()
}

/// Preferred values of `series` in descending order, starting at decade `k`.
fn descending(series: Series, from: i32) -> impl Iterator<Item = i64> {
    (MIN_DECADE..=from.min(MAX_DECADE))
        .rev()
        .flat_map(move |k| series.table().iter().rev().map(move |&m| value(m, k)))
        .flatten()
}

/// The smallest preferred value strictly above `x`.
pub fn next_above<Q: BaseUnits>(series: Series, x: Q) -> Option<Q> {
    let b = x.base();
    ascending(series, decade_of(b))
        .find(|&v| v > b)
        .map(Q::from_base)
}

/// The largest preferred value strictly below `x`.
pub fn next_below<Q: BaseUnits>(series: Series, x: Q) -> Option<Q> {
    let b = x.base();
    if b <= 0 {
        return None;
    }
    descending(series, decade_of(b))
        .find(|&v| v < b)
        .map(Q::from_base)
}

/// The preferred value nearest to `x` by ratio (`x` itself when it is in the series); ties go to
/// the lower value. `None` for zero or negative `x`.
pub fn nearest<Q: BaseUnits>(series: Series, x: Q) -> Option<Q> {
    let b = x.base();
    if b <= 0 {
        return None;
    }
    if series.contains(x) {
        return Some(x);
    }
    match (next_below(series, x), next_above(series, x)) {
        (Some(lo), Some(hi)) => {
            // x/lo vs hi/x  ⇔  x² vs lo·hi (exact in i128).
            let x2 = i128::from(b) * i128::from(b);
            let prod = i128::from(lo.base()) * i128::from(hi.base());
            Some(if x2 > prod { hi } else { lo })
        }
        (lo, hi) => lo.or(hi),
    }
}

/// The smallest series (fewest values per decade) that contains `x` exactly, if any.
pub fn series_of<Q: BaseUnits>(x: Q) -> Option<Series> {
    Series::ALL.into_iter().find(|s| s.contains(x))
}

/// Every series that contains `x` exactly, smallest first.
pub fn member_of<Q: BaseUnits>(x: Q) -> Vec<Series> {
    Series::ALL.into_iter().filter(|s| s.contains(x)).collect()
}

/// Every preferred value of `series` from `lo` to `hi`, both ends included, ascending. Empty
/// when `lo > hi`. For full assortments and purchase catalogues.
pub fn values_between<Q: BaseUnits>(series: Series, lo: Q, hi: Q) -> Vec<Q> {
    let (lo, hi) = (lo.base(), hi.base());
    if lo > hi || hi <= 0 {
        return Vec::new();
    }
    ascending(series, decade_of(lo.max(1)))
        .skip_while(|&v| v < lo)
        .take_while(|&v| v <= hi)
        .map(Q::from_base)
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::units::{Farads, Ohms, parse_capacitance, parse_resistance};

    fn r(s: &str) -> Ohms {
        parse_resistance(s).expect("resistance")
    }
    fn c(s: &str) -> Farads {
        parse_capacitance(s).expect("capacitance")
    }

    #[test]
    fn e24_is_the_historic_list() {
        // IEC 60063, E24: 1.0 1.1 1.2 1.3 1.5 1.6 1.8 2.0 2.2 2.4 2.7 3.0 3.3 3.6 3.9 4.3 4.7
        // 5.1 5.6 6.2 6.8 7.5 8.2 9.1.
        let listed = [
            10, 11, 12, 13, 15, 16, 18, 20, 22, 24, 27, 30, 33, 36, 39, 43, 47, 51, 56, 62, 68, 75,
            82, 91,
        ];
        assert_eq!(Series::E24.base_numbers(), listed);
        // IEC 60063: E12, E6, E3 as listed there.
        assert_eq!(
            Series::E12.base_numbers(),
            [10, 12, 15, 18, 22, 27, 33, 39, 47, 56, 68, 82]
        );
        assert_eq!(Series::E6.base_numbers(), [10, 15, 22, 33, 47, 68]);
        assert_eq!(Series::E3.base_numbers(), [10, 22, 47]);
    }

    #[test]
    fn e24_differs_from_the_formula_where_history_says() {
        // IEC 60063: the E3–E24 values predate the formula; these eight differ from
        // round(10·10^(i/24)).
        let differing: Vec<u16> = E24
            .iter()
            .enumerate()
            .filter(|(i, m)| {
                let f = (10f64.powf(*i as f64 / 24.0) * 10.0).round() as u16 * 10;
                f != **m
            })
            .map(|(_, m)| *m)
            .collect();
        assert_eq!(differing, [270, 300, 330, 360, 390, 430, 470, 820]);
    }

    #[test]
    fn three_digit_series_follow_the_formula_but_for_920() {
        // IEC 60063: E48/E96/E192 are round(100·10^(i/N)) except E192 index 185, listed as
        // 920 (the formula gives 919).
        for s in [Series::E48, Series::E96, Series::E192] {
            let n = s.per_decade();
            for (i, &m) in s.table().iter().enumerate() {
                let f = (10f64.powf(i as f64 / n as f64) * 100.0).round() as u16;
                if s == Series::E192 && i == 185 {
                    assert_eq!((f, m), (919, 920));
                } else {
                    assert_eq!(f, m, "{s} index {i}");
                }
            }
        }
    }

    #[test]
    fn tables_are_sorted_and_nested() {
        for s in Series::ALL {
            let t = s.table();
            assert!(t.windows(2).all(|w| w[0] < w[1]), "{s} sorted");
            assert!(t.iter().all(|m| (100..1000).contains(m)), "{s} range");
        }
        assert!(E96.iter().all(|m| E192.contains(m)));
        assert!(E48.iter().all(|m| E96.contains(m)));
        assert!(E12.iter().all(|m| E24.contains(m)));
        // E24 is not inside E192: 2.7 is not there (267, 271 are).
        assert!(!E192.contains(&270));
    }

    #[test]
    fn parse_series_names() {
        assert_eq!("E24".parse(), Ok(Series::E24));
        assert_eq!("e96".parse(), Ok(Series::E96));
        assert_eq!(" E192 ".parse(), Ok(Series::E192));
        assert!("E20".parse::<Series>().is_err());
        assert!("".parse::<Series>().is_err());
        assert_eq!(Series::E6.to_string(), "E6");
    }

    #[test]
    fn lookups_on_resistances() {
        // Expected values read from the IEC 60063 tables by hand.
        let cases: &[(Series, &str, &str, &str, &str)] = &[
            // series, x, nearest, next below, next above
            (Series::E12, "5k", "4k7", "4k7", "5k6"),
            (Series::E12, "4k7", "4k7", "3k9", "5k6"),
            (Series::E24, "4k7", "4k7", "4k3", "5k1"),
            (Series::E24, "9k5", "9k1", "9k1", "10k"),
            (Series::E24, "9k6", "10k", "9k1", "10k"),
            (Series::E3, "1k", "1k", "470", "2k2"),
            (Series::E96, "4k7", "4k75", "4k64", "4k75"),
            (Series::E192, "9k19", "9k2", "9k09", "9k2"),
            (Series::E6, "0R1", "0R1", "68m", "0R15"),
        ];
        for (s, x, n, b, a) in cases {
            let x = r(x);
            assert_eq!(nearest(*s, x), Some(r(n)), "nearest {s} {x}");
            assert_eq!(next_below(*s, x), Some(r(b)), "below {s} {x}");
            assert_eq!(next_above(*s, x), Some(r(a)), "above {s} {x}");
        }
    }

    #[test]
    fn nearest_is_by_ratio() {
        // 2k between 1k8 and 2k2 (E12): 2/1.8 = 1.11 > 2.2/2 = 1.10, so 2k2.
        assert_eq!(nearest(Series::E12, r("2k")), Some(r("2k2")));
        // The geometric mean of 1k and 2k2 is 1483.2: 1483 goes down, 1484 up.
        assert_eq!(nearest(Series::E3, r("1483")), Some(r("1k")));
        assert_eq!(nearest(Series::E3, r("1484")), Some(r("2k2")));
    }

    #[test]
    fn lookups_at_the_edges() {
        // 1 mΩ is the finest step: nothing below it, and 1.1 mΩ does not exist.
        assert_eq!(next_below(Series::E24, Ohms::from_base(1)), None);
        assert_eq!(
            next_above(Series::E24, Ohms::from_base(1)),
            Some(Ohms::from_base(2))
        );
        assert_eq!(nearest(Series::E24, Ohms::ZERO), None);
        assert_eq!(next_above(Series::E24, Ohms::MAX), None);
        assert!(nearest(Series::E24, Ohms::MAX).is_some());
        assert_eq!(
            next_above(Series::E24, Ohms::ZERO),
            Some(Ohms::from_base(1))
        );
    }

    #[test]
    fn membership() {
        assert_eq!(series_of(r("4k7")), Some(Series::E3));
        assert_eq!(series_of(r("5k6")), Some(Series::E12));
        assert_eq!(series_of(r("5k1")), Some(Series::E24));
        assert_eq!(series_of(r("4k87")), Some(Series::E48));
        assert_eq!(series_of(r("4k99")), Some(Series::E96));
        assert_eq!(series_of(r("4k81")), Some(Series::E192));
        assert_eq!(series_of(r("4k8")), None);
        assert_eq!(series_of(r("4k701")), None);
        assert_eq!(series_of(c("100n")), Some(Series::E3));
        assert_eq!(
            member_of(r("1k")),
            Series::ALL.to_vec(),
            "1.00 is in every series"
        );
        assert_eq!(
            member_of(r("2k2")),
            [Series::E3, Series::E6, Series::E12, Series::E24]
        );
    }

    #[test]
    fn ranges_include_both_ends() {
        let got = values_between(Series::E12, r("1k"), r("10k"));
        let want: Vec<Ohms> = [
            "1k", "1k2", "1k5", "1k8", "2k2", "2k7", "3k3", "3k9", "4k7", "5k6", "6k8", "8k2",
            "10k",
        ]
        .iter()
        .map(|s| r(s))
        .collect();
        assert_eq!(got, want);
        assert_eq!(
            values_between(Series::E24, r("1k"), r("1M")).len(),
            3 * 24 + 1
        );
        assert_eq!(
            values_between(Series::E192, c("1p"), c("1F")).len(),
            12 * 192 + 1
        );
        assert!(values_between(Series::E6, r("10k"), r("1k")).is_empty());
        assert_eq!(
            values_between(Series::E6, r("1k1"), r("1k4")),
            Vec::<Ohms>::new()
        );
        // From zero: starts at the finest step, 1 mΩ; 2.2 mΩ and 4.7 mΩ cannot be stored.
        assert_eq!(
            values_between(Series::E3, Ohms::ZERO, r("0R022")),
            [1, 10, 22].map(Ohms::from_base)
        );
    }
}
