//! Display of quantities in engineering form: `4.7 kΩ`, `100 nF`, `10 s`, `1 kHz`, `680 fF`.
//!
//! `Display` is exact: it moves the decimal point of the stored integer, picks the SI prefix that
//! puts the leading digit in [1, 1000) and drops trailing zeros, so parsing what it prints gives
//! back the same value. [`Engineering::eng`] rounds to a number of significant digits for
//! reports (`3.33 kΩ`). Owns formatting only; no parsing, no I/O.

use super::decimal::{engineering, plain, round_sig};
use super::{Amps, Farads, Hertz, Ohms, Ratio, Seconds, Volts, Watts};
use std::fmt;

/// A value shown with an SI prefix chosen so the mantissa lies in [1, 1000).
pub trait Engineering {
    /// Value in SI units.
    fn si_value(&self) -> f64;
    /// Unit symbol.
    fn symbol(&self) -> &'static str;
    /// Engineering form rounded to `sig` significant digits (half up), trailing zeros dropped:
    /// 3333.3 Ω with `sig` 3 is `3.33 kΩ`.
    fn eng(&self, sig: usize) -> String {
        format_sig(self.si_value(), sig, self.symbol())
    }
}

/// Format `v` (SI units) with an engineering prefix and up to `sig` significant digits, trailing
/// zeros dropped. Rounding that carries into the next prefix is handled (999.96 → `1 k`).
/// Not-finite values are written as Rust writes them (`NaN`, `inf`).
pub fn format_sig(v: f64, sig: usize, symbol: &str) -> String {
    if v == 0.0 || !v.is_finite() {
        return format!("{v} {symbol}").trim_end().to_string();
    }
    let sig = sig.clamp(1, 17);
    // Scientific notation does the rounding: "3.33e3" → digits "333", exponent 3 - 2.
    let sci = format!("{:.*e}", sig - 1, v.abs());
    let (mantissa, exp) = sci.split_once('e').unwrap_or((&sci, "0"));
    let exp: i32 = exp.parse().unwrap_or(0);
    let digits: String = mantissa.chars().filter(char::is_ascii_digit).collect();
    let places = i32::try_from(sig - 1).unwrap_or(0);
    engineering(v < 0.0, &digits, exp - places, symbol)
}

/// Exact engineering form of a count of base units `10^-base_digits` of the SI unit, optionally
/// rounded to `sig` significant digits.
fn exact(base: i64, base_digits: u32, symbol: &str, sig: Option<usize>) -> String {
    let mut magnitude = u128::from(base.unsigned_abs());
    if let Some(sig) = sig {
        magnitude = round_sig(magnitude, sig);
    }
    let exp = -i32::try_from(base_digits).unwrap_or(0);
    engineering(base < 0, &magnitude.to_string(), exp, symbol)
}

macro_rules! eng_display {
    ($($t:ty),*) => {$(
        impl Engineering for $t {
            fn si_value(&self) -> f64 { self.si() }
            fn symbol(&self) -> &'static str { Self::SYMBOL }
            /// Exact rounding of the stored integer (no floating point).
            fn eng(&self, sig: usize) -> String {
                exact(self.base(), Self::BASE_DIGITS, Self::SYMBOL, Some(sig))
            }
        }
        impl fmt::Display for $t {
            /// Exact value, fewest digits, SI prefix: `4.7 kΩ`.
            fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
                f.pad(&exact(self.base(), Self::BASE_DIGITS, Self::SYMBOL, None))
            }
        }
    )*};
}
eng_display!(Ohms, Farads, Seconds, Hertz, Volts, Amps, Watts);

impl Ratio {
    /// The percentage rounded to `sig` significant digits, without the `%` sign: `33.3`.
    pub fn percent_text(self, sig: usize) -> String {
        let b = self.base();
        let magnitude = round_sig(u128::from(b.unsigned_abs()), sig);
        let sign = if b < 0 { "-" } else { "" };
        format!("{sign}{}", plain(&magnitude.to_string(), -7))
    }
}

impl fmt::Display for Ratio {
    /// Exact percentage: `60 %`, `0.25 %`.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let b = self.base();
        let sign = if b < 0 { "-" } else { "" };
        f.pad(&format!(
            "{sign}{} %",
            plain(&b.unsigned_abs().to_string(), -7)
        ))
    }
}

/// `1 piece`, `2 pieces`, `0 rows`: a count with its noun, singular only for exactly one.
pub fn count<N>(n: N, one: &str, many: &str) -> String
where
    N: TryInto<i64> + Copy + fmt::Display,
{
    let noun = if n.try_into().ok() == Some(1) {
        one
    } else {
        many
    };
    format!("{n} {noun}")
}

/// A capacitance for reports in the prefixes technicians use — `470 pF`, `100 nF`, `4700 µF`,
/// never `4.7 mF` — rounded to `sig` significant digits (exactly, from the stored integer).
pub fn capacitance_text(c: Farads, sig: usize) -> String {
    let b = c.base(); // femtofarads
    let magnitude = round_sig(u128::from(b.unsigned_abs()), sig);
    let (exp, prefix) = match magnitude {
        0..1_000_000 => (-3, "p"),
        1_000_000..1_000_000_000 => (-6, "n"),
        1_000_000_000..1_000_000_000_000_000 => (-9, "µ"),
        _ => (-15, ""),
    };
    let sign = if b < 0 { "-" } else { "" };
    format!("{sign}{} {prefix}F", plain(&magnitude.to_string(), exp))
}

/// A time for reports in the units people use: below a minute in SI form (`250 ms`, `12.5 s`),
/// then minutes, hours and days (`1.5 min`, `1 h`, `2.5 d`), never `3.6 ks`; `sig` significant
/// digits.
pub fn time_text(t: Seconds, sig: usize) -> String {
    let s = t.si();
    let (value, unit) = if s.abs() < 60.0 {
        return t.eng(sig);
    } else if s.abs() < 3600.0 {
        (s / 60.0, "min")
    } else if s.abs() < 86_400.0 {
        (s / 3600.0, "h")
    } else {
        (s / 86_400.0, "d")
    };
    format!("{} {unit}", decimal_text(value, sig))
}

/// A number rounded to `sig` significant digits in plain decimal form, never scientific
/// notation: `0.0123`, `1230`, `12.5`. Trailing zeros after the point are dropped.
pub fn decimal_text(v: f64, sig: usize) -> String {
    if v == 0.0 || !v.is_finite() {
        return format!("{v}");
    }
    let sig = sig.clamp(1, 17);
    let magnitude = v.abs().log10().floor() as i32;
    let places = (i32::try_from(sig).unwrap_or(3) - 1 - magnitude).max(0);
    let text = format!("{:.*}", places.unsigned_abs() as usize, v);
    let text = if text.contains('.') {
        text.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        // More integer digits than `sig`: round them too (12345 with 3 → 12300).
        let scale = 10f64.powi(magnitude + 1 - i32::try_from(sig).unwrap_or(3));
        format!("{:.0}", (v / scale).round() * scale)
    };
    if text == "-0" { "0".to_string() } else { text }
}

/// A share as a percentage for reports, with `sig` significant digits and never scientific
/// notation; below 0.0001 % it says so (`< 0.0001 %`) rather than print a long row of zeros.
pub fn percent_text(share: f64, sig: usize) -> String {
    let p = share * 100.0;
    if p != 0.0 && p.abs() < 1e-4 {
        return if p < 0.0 {
            "> -0.0001 %".to_string()
        } else {
            "< 0.0001 %".to_string()
        };
    }
    format!("{} %", decimal_text(p, sig))
}

#[cfg(test)]
mod report_tests {
    use super::*;

    #[test]
    fn counts_agree_with_their_noun() {
        assert_eq!(count(1, "piece", "pieces"), "1 piece");
        assert_eq!(count(0usize, "row", "rows"), "0 rows");
        assert_eq!(count(2i64, "row", "rows"), "2 rows");
    }

    #[test]
    fn capacitances_use_the_usual_prefixes() {
        let f = |fem: i64| capacitance_text(Farads::from_base(fem), 3);
        assert_eq!(f(4_700_000_000_000), "4700 µF");
        assert_eq!(f(100_000_000), "100 nF");
        assert_eq!(f(470_000), "470 pF");
        assert_eq!(f(3_333_000_000), "3.33 µF");
        assert_eq!(f(2_000_000_000_000_000), "2 F");
    }

    #[test]
    fn long_times_in_minutes_hours_days() {
        let t = |s: f64| time_text(Seconds::from_si(s).expect("in range"), 3);
        assert_eq!(t(0.25), "250 ms");
        assert_eq!(t(12.5), "12.5 s");
        assert_eq!(t(90.0), "1.5 min");
        assert_eq!(t(3600.0), "1 h");
        assert_eq!(t(5400.0), "1.5 h");
        assert_eq!(t(2.5 * 86_400.0), "2.5 d");
    }

    #[test]
    fn no_scientific_notation() {
        assert_eq!(decimal_text(0.012345, 3), "0.0123");
        assert_eq!(decimal_text(12345.0, 3), "12300");
        assert_eq!(decimal_text(12.5, 3), "12.5");
        assert_eq!(decimal_text(1.0, 3), "1");
        assert_eq!(percent_text(9.9e-9, 2), "< 0.0001 %");
        assert_eq!(percent_text(0.0123, 3), "1.23 %");
        assert_eq!(percent_text(0.0, 3), "0 %");
        assert!(!percent_text(1.5e-6, 2).contains('e'));
    }
}
