//! Display of quantities in engineering form: `4.7 kΩ`, `100 nF`, `10 s`, `1 kHz`.
//!
//! FIRST CUT (to be completed in the units work).

use super::{Amps, Farads, Hertz, Ohms, Ratio, Seconds, Volts, Watts};
use std::fmt;

/// A value with an SI prefix chosen so the mantissa lies in [1, 1000).
pub trait Engineering {
    /// Value in SI units.
    fn si_value(&self) -> f64;
    /// Unit symbol.
    fn symbol(&self) -> &'static str;
    /// Engineering form with at most `sig` significant digits.
    fn eng(&self, sig: usize) -> String {
        format_sig(self.si_value(), sig, self.symbol())
    }
}

/// Format `v` with an engineering prefix and up to `sig` significant digits, trailing zeros dropped.
pub fn format_sig(v: f64, sig: usize, symbol: &str) -> String {
    if v == 0.0 || !v.is_finite() {
        return format!("{v} {symbol}").trim_end().to_string();
    }
    const PREFIXES: [(i32, &str); 9] = [
        (-15, "f"),
        (-12, "p"),
        (-9, "n"),
        (-6, "µ"),
        (-3, "m"),
        (0, ""),
        (3, "k"),
        (6, "M"),
        (9, "G"),
    ];
    let exp3 = ((v.abs().log10().floor() as i32).div_euclid(3) * 3).clamp(-15, 9);
    let (_, p) = PREFIXES
        .iter()
        .find(|(e, _)| *e == exp3)
        .copied()
        .unwrap_or((0, ""));
    let m = v / 10f64.powi(exp3);
    let digits_before = (m.abs().log10().floor() as i32 + 1).max(1) as usize;
    let decimals = sig.saturating_sub(digits_before);
    let mut s = format!("{m:.decimals$}");
    if s.contains('.') {
        s = s.trim_end_matches('0').trim_end_matches('.').to_string();
    }
    format!("{s} {p}{symbol}").trim_end().to_string()
}

macro_rules! eng_display {
    ($($t:ty),*) => {$(
        impl Engineering for $t {
            fn si_value(&self) -> f64 { self.si() }
            fn symbol(&self) -> &'static str { Self::SYMBOL }
        }
        impl fmt::Display for $t {
            fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
                // Enough digits to be exact for any stored value.
                f.write_str(&self.eng(19))
            }
        }
    )*};
}
eng_display!(Ohms, Farads, Seconds, Hertz, Volts, Amps, Watts);

impl fmt::Display for Ratio {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let s = format!("{:.7}", self.percent());
        let s = s.trim_end_matches('0').trim_end_matches('.');
        write!(f, "{s} %")
    }
}
