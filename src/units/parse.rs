//! Parsing of values as typed or read off parts.
//!
//! FIRST CUT (to be completed in the units work): plain decimal numbers with an optional SI prefix
//! and optional unit symbol. The full grammar (IEC 60062 letter codes, capacitor codes, colour
//! bands, tolerance letters) replaces this.

use super::{Farads, Hertz, Ohms, Ratio, Seconds, Tolerance, Volts, Watts};

/// A value that could not be read. Always names the text and what was expected.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("cannot read {text:?} as {expected}: {reason}")]
pub struct ParseError {
    /// The text as given.
    pub text: String,
    /// What kind of value was expected, e.g. "a resistance such as 4k7 or 4.7 kΩ".
    pub expected: &'static str,
    /// What went wrong.
    pub reason: String,
}

fn err(text: &str, expected: &'static str, reason: impl Into<String>) -> ParseError {
    ParseError {
        text: text.to_string(),
        expected,
        reason: reason.into(),
    }
}

fn prefix_exp(c: char) -> Option<i32> {
    Some(match c {
        'p' => -12,
        'n' => -9,
        'u' | 'µ' | 'μ' => -6,
        'm' => -3,
        'k' | 'K' => 3,
        'M' => 6,
        'G' => 9,
        _ => return None,
    })
}

fn parse_si(text: &str, units: &[&str], expected: &'static str) -> Result<f64, ParseError> {
    let mut s: &str = text.trim();
    for u in units {
        if let Some(rest) = s.strip_suffix(u) {
            s = rest.trim_end();
            break;
        }
    }
    let mut exp = 0;
    if let Some(c) = s.chars().last() {
        if let Some(e) = prefix_exp(c) {
            exp = e;
            s = &s[..s.len() - c.len_utf8()];
        }
    }
    let v: f64 = s
        .trim()
        .parse()
        .map_err(|_| err(text, expected, "not a number"))?;
    if !v.is_finite() || v < 0.0 {
        return Err(err(text, expected, "must be a finite, non-negative number"));
    }
    Ok(v * 10f64.powi(exp))
}

macro_rules! simple {
    ($fn:ident, $t:ty, $units:expr, $expected:expr) => {
        /// Parse a value of this kind.
        pub fn $fn(text: &str) -> Result<$t, ParseError> {
            let v = parse_si(text, $units, $expected)?;
            <$t>::from_si(v).ok_or_else(|| err(text, $expected, "out of range"))
        }
    };
}

simple!(
    parse_resistance,
    Ohms,
    &["ohms", "ohm", "Ω", "R"],
    "a resistance such as 4k7 or 4.7 kΩ"
);
simple!(
    parse_capacitance,
    Farads,
    &["F"],
    "a capacitance such as 100n or 4.7 µF"
);
simple!(parse_time, Seconds, &["s"], "a time such as 10ms or 1.5 s");
simple!(
    parse_frequency,
    Hertz,
    &["Hz"],
    "a frequency such as 1k or 38 kHz"
);
simple!(parse_voltage, Volts, &["V"], "a voltage such as 9 or 12 V");
simple!(parse_power, Watts, &["W"], "a power such as 0.25 or 250 mW");

/// Parse a ratio: `0.6` or `60%`.
pub fn parse_ratio(text: &str) -> Result<Ratio, ParseError> {
    const EXPECTED: &str = "a ratio such as 0.6 or 60%";
    let t = text.trim();
    let v = if let Some(p) = t.strip_suffix('%') {
        parse_si(p, &[], EXPECTED)? / 100.0
    } else {
        parse_si(t, &[], EXPECTED)?
    };
    Ratio::from_si(v).ok_or_else(|| err(text, EXPECTED, "out of range"))
}

/// Parse a tolerance: `1%`, `±5 %`.
pub fn parse_tolerance(text: &str) -> Result<Tolerance, ParseError> {
    const EXPECTED: &str = "a tolerance such as 1%, ±5 % or J";
    let t = text.trim().trim_start_matches('±');
    let p = t
        .strip_suffix('%')
        .ok_or_else(|| err(text, EXPECTED, "no % sign"))?;
    let v = parse_si(p, &[], EXPECTED)?;
    Tolerance::symmetric_percent(v).ok_or_else(|| err(text, EXPECTED, "out of range"))
}

/// Parse resistor colour bands such as `yellow-violet-red-gold`.
pub fn parse_colour_bands(text: &str) -> Result<(Ohms, Option<Tolerance>), ParseError> {
    Err(err(text, "resistor colour bands", "not yet supported"))
}
