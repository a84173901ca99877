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
