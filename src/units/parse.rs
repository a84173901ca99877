//! Parsing of values as a technician types them or reads them off a part.
//!
//! One small grammar serves every quantity: digits with an optional decimal point and exponent,
//! an optional SI prefix (`p n u µ μ m k K M meg MEG G T`, `f` for femto), and an optional unit
//! symbol, with or without spaces (`4.7k`, `4.7 kΩ`, `100nF`, `38 kHz`). Without a point, the
//! prefix letter may stand for the decimal point as in the IEC 60062 letter code (`4k7`, `1M5`,
//! `4n7`, `p68`; for resistance also `R`: `2R2`, `R47`, `0R1`). On top of that: capacitor
//! three-digit codes (`104`), resistor colour bands (see `colour.rs`), tolerance codes.
//!
//! Numbers are kept as exact decimals until they are scaled once into the integer base unit, so
//! what is typed is what is stored. Every failure is a [`ParseError`] naming the text and what
//! was expected; nothing here panics on any input. No I/O.

use super::decimal::{Decimal, MAX_DIGITS, ScaleError, engineering};
use super::{Amps, Farads, Hertz, Ohms, Ratio, Seconds, Tolerance, Volts, Watts};
use super::{colour, marking};
use std::str::FromStr;

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

pub(crate) fn err(text: &str, expected: &'static str, reason: impl Into<String>) -> ParseError {
    ParseError {
        text: text.to_string(),
        expected,
        reason: reason.into(),
    }
}

/// What one kind of quantity accepts.
struct Grammar {
    expected: &'static str,
    /// The base unit is 10^-base_digits of the SI unit.
    base_digits: u32,
    /// Unit symbol, for messages.
    symbol: &'static str,
    /// Unit spellings accepted exactly.
    units: &'static [&'static str],
    /// Unit words accepted in any letter case.
    words: &'static [&'static str],
    /// `R` is the decimal marker / unit (resistance).
    r_code: bool,
    /// Upper-case `N` and `P` mean nano and pico, as printed on some capacitors.
    upper_np: bool,
    /// SI prefixes allowed at all (not for ratios).
    prefixes: bool,
    /// What may follow the number, for messages.
    hint: &'static str,
}

const RESISTANCE: Grammar = Grammar {
    expected: "a resistance such as 4k7, 4.7 kΩ, 470R or yellow-violet-red-gold",
    base_digits: Ohms::BASE_DIGITS,
    symbol: Ohms::SYMBOL,
    // U+03A9 Greek capital omega and U+2126 ohm sign look the same; accept both.
    units: &["Ω", "\u{2126}", "R"],
    words: &["ohm", "ohms"],
    r_code: true,
    upper_np: false,
    prefixes: true,
    hint: "an SI prefix (m k K M meg G) and/or the unit Ω, ohm or R",
};

const CAPACITANCE: Grammar = Grammar {
    expected: "a capacitance such as 100n, 4n7, 0.1 µF or the code 104",
    base_digits: Farads::BASE_DIGITS,
    symbol: Farads::SYMBOL,
    units: &["F", "f"],
    words: &[],
    r_code: false,
    upper_np: true,
    prefixes: true,
    hint: "an SI prefix (f p n u µ m) and/or the unit F",
};

const TIME: Grammar = Grammar {
    expected: "a time such as 10ms, 250 ms or 1.5 s",
    base_digits: Seconds::BASE_DIGITS,
    symbol: Seconds::SYMBOL,
    units: &["s"],
    words: &["sec"],
    r_code: false,
    upper_np: false,
    prefixes: true,
    hint: "an SI prefix (p n u µ m k) and/or the unit s",
};

const FREQUENCY: Grammar = Grammar {
    expected: "a frequency such as 1k, 440 Hz or 38 kHz",
    base_digits: Hertz::BASE_DIGITS,
    symbol: Hertz::SYMBOL,
    units: &["Hz"],
    words: &["hz"],
    r_code: false,
    upper_np: false,
    prefixes: true,
    hint: "an SI prefix (m k M) and/or the unit Hz",
};

const VOLTAGE: Grammar = Grammar {
    expected: "a voltage such as 9, 12 V or 700mV",
    base_digits: Volts::BASE_DIGITS,
    symbol: Volts::SYMBOL,
    units: &["V", "v"],
    words: &[],
    r_code: false,
    upper_np: false,
    prefixes: true,
    hint: "an SI prefix (µ m k) and/or the unit V",
};

const CURRENT: Grammar = Grammar {
    expected: "a current such as 200mA, 50 nA or 0.1 A",
    base_digits: Amps::BASE_DIGITS,
    symbol: Amps::SYMBOL,
    units: &["A"],
    words: &[],
    r_code: false,
    upper_np: false,
    prefixes: true,
    hint: "an SI prefix (p n µ m) and/or the unit A",
};

const POWER: Grammar = Grammar {
    expected: "a power such as 0.25, 1/4 W or 250 mW",
    base_digits: Watts::BASE_DIGITS,
    symbol: Watts::SYMBOL,
    units: &["W", "w"],
    words: &[],
    r_code: false,
    upper_np: false,
    prefixes: true,
    hint: "an SI prefix (µ m k) and/or the unit W",
};

const RATIO: Grammar = Grammar {
    expected: "a ratio such as 0.6 or 60%",
    base_digits: Ratio::BASE_DIGITS,
    symbol: Ratio::SYMBOL,
    units: &[],
    words: &[],
    r_code: false,
    upper_np: false,
    prefixes: false,
    hint: "nothing, or a % sign",
};

const NUMBER: Grammar = Grammar {
    expected: "a number with an optional SI prefix such as 250n, 1.5m or 10k",
    base_digits: 0,
    symbol: "",
    units: &[],
    words: &[],
    r_code: false,
    upper_np: false,
    prefixes: true,
    hint: "an SI prefix (f p n u µ m k M G T)",
};

/// A number as scanned, before scaling into a base unit.
#[derive(Debug, Clone, Copy)]
struct Scanned {
    value: Decimal,
    has_prefix: bool,
    has_unit: bool,
    has_exponent: bool,
}

fn prefix_exp(c: char, g: &Grammar) -> Option<i32> {
    Some(match c {
        'f' => -15,
        'p' => -12,
        'n' => -9,
        'u' | 'U' | 'µ' | 'μ' => -6,
        'm' => -3,
        'k' | 'K' => 3,
        'M' => 6,
        'G' => 9,
        'T' => 12,
        'N' if g.upper_np => -9,
        'P' if g.upper_np => -12,
        _ => return None,
    })
}

fn starts_with_meg(c: &[char]) -> bool {
    c.len() >= 3
        && c[..3]
            .iter()
            .collect::<String>()
            .eq_ignore_ascii_case("meg")
}

/// Scan `text` by grammar `g`. `text` is only used for messages; `body` is what is scanned.
fn scan(text: &str, body: &str, g: &Grammar) -> Result<Scanned, ParseError> {
    let fail = |reason: String| err(text, g.expected, reason);
    let t = body.trim();
    if t.is_empty() {
        return Err(fail("the text is empty".into()));
    }
    let c: Vec<char> = t.chars().collect();
    let n = c.len();
    match c[0] {
        '-' | '−' => return Err(fail("negative values are not allowed".into())),
        '+' => return Err(fail("no sign is expected before the number".into())),
        _ => {}
    }
    let mut i = 0;
    let mut digits = String::new();
    let mut count = 0usize;
    let mut frac_len: i32 = 0;
    while i < n && c[i].is_ascii_digit() {
        digits.push(c[i]);
        count += 1;
        i += 1;
    }
    let int_len = count;
    let mut point = false;
    if i < n && c[i] == '.' {
        point = true;
        i += 1;
        while i < n && c[i].is_ascii_digit() {
            digits.push(c[i]);
            count += 1;
            frac_len += 1;
            i += 1;
        }
        if i < n && c[i] == '.' {
            return Err(fail("more than one decimal point".into()));
        }
    }
    if i + 1 < n && c[i] == ',' && c[i + 1].is_ascii_digit() && int_len > 0 {
        return Err(fail(
            "use a decimal point, not a comma (4.7k or 4k7), and no thousands separators".into(),
        ));
    }
    let mut exp10: i32 = 0;
    let mut has_exponent = false;
    if count > 0 && i < n && (c[i] == 'e' || c[i] == 'E') {
        let mut j = i + 1;
        let mut negative = false;
        if j < n && (c[j] == '+' || c[j] == '-') {
            negative = c[j] == '-';
            j += 1;
        }
        if j < n && c[j].is_ascii_digit() {
            let mut e: i32 = 0;
            while j < n && c[j].is_ascii_digit() {
                let d = c[j].to_digit(10).map_or(0, |d| d as i32);
                // Cap the magnitude; anything this large is out of range anyway.
                e = (e * 10 + d).min(100_000);
                j += 1;
            }
            exp10 = if negative { -e } else { e };
            has_exponent = true;
            i = j;
        }
    }
    let number_end = i;
    while i < n && c[i].is_whitespace() {
        i += 1;
    }
    let spaced = i > number_end;

    let mut prefix: i32 = 0;
    let mut has_prefix = false;
    let mut letter = false;
    if i < n && g.prefixes {
        if starts_with_meg(&c[i..]) {
            prefix = 6;
            has_prefix = true;
            i += 3;
        } else if let Some(e) = prefix_exp(c[i], g) {
            prefix = e;
            has_prefix = true;
            letter = true;
            i += 1;
        } else if g.r_code && c[i] == 'R' {
            letter = true;
            i += 1;
        }
    }
    // IEC 60062 letter code: the letter stands for the decimal point (4k7, R47, 2R2, p68).
    if letter && !point && !has_exponent && !spaced {
        while i < n && c[i].is_ascii_digit() {
            digits.push(c[i]);
            count += 1;
            frac_len += 1;
            i += 1;
        }
    }
    if count == 0 {
        return Err(fail("there are no digits".into()));
    }
    while i < n && c[i].is_whitespace() {
        i += 1;
    }
    let mut has_unit = letter && !has_prefix; // a bare `R` is the unit
    if i < n {
        let rest: String = c[i..].iter().collect();
        let known = g.units.contains(&rest.as_str())
            || g.words.iter().any(|w| w.eq_ignore_ascii_case(&rest));
        if !known {
            return Err(fail(format!(
                "unexpected {rest:?} after the number; expected {}",
                g.hint
            )));
        }
        has_unit = true;
    }
    let significant = digits.trim_start_matches('0');
    if significant.len() > MAX_DIGITS {
        return Err(fail(format!("more than {MAX_DIGITS} digits")));
    }
    let mantissa: u128 = if significant.is_empty() {
        0
    } else {
        significant
            .parse()
            .map_err(|_| fail("not a number".into()))?
    };
    Ok(Scanned {
        value: Decimal {
            mantissa,
            exp: exp10 - frac_len + prefix,
        },
        has_prefix,
        has_unit,
        has_exponent,
    })
}

/// Scale a scanned decimal (already in SI units × 10^extra) into base units.
fn to_base(text: &str, g: &Grammar, value: Decimal, extra: i32) -> Result<i64, ParseError> {
    let shift = i32::try_from(g.base_digits).unwrap_or(0) + extra;
    value.to_integer(shift).map_err(|e| match e {
        ScaleError::TooLarge => err(text, g.expected, "too large to store"),
        ScaleError::TooFine => {
            let step = engineering(
                false,
                "1",
                -i32::try_from(g.base_digits).unwrap_or(0),
                g.symbol,
            );
            err(
                text,
                g.expected,
                format!("not zero but below the finest step, {step}"),
            )
        }
    })
}

fn parse_with(text: &str, g: &Grammar) -> Result<i64, ParseError> {
    let s = scan(text, text, g)?;
    to_base(text, g, s.value, 0)
}

/// Parse a resistance: `4k7`, `4.7k`, `4.7 kΩ`, `4700`, `1M`, `1meg`, `10 ohm`, `2R2`, `R47`,
/// `0R1`, or colour bands such as `yellow-violet-red-gold` (the tolerance band is dropped; use
/// [`parse_colour_bands`] to keep it). A bare number is ohms.
///
/// A chip-resistor marking is read only with the `marking:` prefix (`marking:472` = 4.7 kΩ,
/// `marking:01C` = 10 kΩ; see [`parse_resistor_marking`](super::parse_resistor_marking)):
/// without it `472` is 472 Ω.
pub fn parse_resistance(text: &str) -> Result<Ohms, ParseError> {
    if let Some(code) = marking::strip_marking_prefix(text) {
        return marking::parse_resistor_marking(code).map(|m| m.value);
    }
    if colour::looks_like_bands(text) {
        return colour::parse_colour_bands(text).map(|(r, _)| r);
    }
    parse_with(text, &RESISTANCE).map(Ohms::from_base)
}

/// Tolerance letters that may follow a capacitor three-digit code (`104K`). `F` is left out:
/// `100F` reads as a hundred farads.
const CODE_TOLERANCE_LETTERS: &[char] = &['B', 'C', 'D', 'G', 'J', 'K', 'M', 'Z'];

/// A three-digit code, optionally followed by a tolerance letter: `Some(Ok(..))` when it is one,
/// `Some(Err(..))` when it is one with a bad digit, `None` when the text is something else.
fn capacitor_code(text: &str) -> Option<Result<(Farads, Option<char>), ParseError>> {
    let t = text.trim();
    let c: Vec<char> = t.chars().collect();
    if c.len() < 3 || !c[..3].iter().all(char::is_ascii_digit) {
        return None;
    }
    let rest: String = c[3..].iter().collect();
    let rest = rest.trim();
    let letter = match rest.chars().collect::<Vec<_>>().as_slice() {
        [] => None,
        [l] if CODE_TOLERANCE_LETTERS.contains(l) => Some(*l),
        _ => return None,
    };
    let d: Vec<i64> = c[..3]
        .iter()
        .map(|ch| ch.to_digit(10).map_or(0, i64::from))
        .collect();
    let expected = CAPACITANCE.expected;
    if d[0] == 0 {
        return Some(Err(err(
            text,
            expected,
            "a three-digit capacitor code does not start with 0",
        )));
    }
    let two = d[0] * 10 + d[1];
    // Code: two significant digits, then the number of zeros, in picofarads (common practice).
    // A third digit of 9 means ×0.1 (109 = 1.0 pF, 479 = 4.7 pF; common practice). 7 and 8 are
    // refused: they are not in use on parts we know of.
    let femto = match d[2] {
        m @ 0..=6 => two * 1000 * 10i64.pow(m as u32),
        9 => two * 100,
        m => {
            return Some(Err(err(
                text,
                expected,
                format!(
                    "the third digit of a capacitor code is the multiplier: 0–6 zeros, or 9 for ×0.1; {m} is not used"
                ),
            )));
        }
    };
    Some(Ok((Farads::from_base(femto), letter)))
}

/// Parse a capacitance: `100n`, `0.1u`, `0.1µF`, `4n7`, `p68`, `2.2mF`, `100 nF`, or a
/// three-digit code in picofarads (`104` = 100 nF, `472` = 4.7 nF, `220` = 22 pF, `109` = 1 pF),
/// optionally followed by a tolerance letter (`104K`; dropped here, kept by
/// [`parse_capacitor_marking`]). A bare number that is not a three-digit code is refused as
/// ambiguous (is `4700` picofarads or microfarads?).
///
/// `marking:104` is the same as `104` (the code is what is printed on the part).
pub fn parse_capacitance(text: &str) -> Result<Farads, ParseError> {
    let text = marking::strip_marking_prefix(text).unwrap_or(text);
    if let Some(code) = capacitor_code(text) {
        return code.map(|(f, _)| f);
    }
    let s = scan(text, text, &CAPACITANCE)?;
    if !s.has_prefix && !s.has_unit && !s.has_exponent {
        return Err(err(
            text,
            CAPACITANCE.expected,
            "a bare number is ambiguous for a capacitance (picofarads or microfarads?): add a \
             prefix or unit, e.g. 4700p, 4n7, 4.7u or 4.7 µF; three-digit codes such as 472 are read too",
        ));
    }
    to_base(text, &CAPACITANCE, s.value, 0).map(Farads::from_base)
}

/// Parse what is printed on a capacitor: a value as [`parse_capacitance`] reads it, and for a
/// three-digit code with a tolerance letter (`104K`, `474J`, `105M`, `103Z`) that tolerance too.
/// Below 10 pF the letters B, C and D mean ±0.1, ±0.25 and ±0.5 pF (from memory of IEC 60062);
/// they are turned into the equivalent ratio of the value.
pub fn parse_capacitor_marking(text: &str) -> Result<(Farads, Option<Tolerance>), ParseError> {
    let text = marking::strip_marking_prefix(text).unwrap_or(text);
    match capacitor_code(text) {
        Some(code) => {
            let (f, letter) = code?;
            let Some(letter) = letter else {
                return Ok((f, None));
            };
            let absolute_ff = match letter {
                'B' => 100,
                'C' => 250,
                'D' => 500,
                _ => 0,
            };
            if absolute_ff > 0 && f.base() < 10_000 {
                // ppb = absolute / value × 10^9
                let ppb = (absolute_ff * 1_000_000_000 + f.base() / 2) / f.base();
                let r = Ratio::from_base(ppb);
                return Ok((f, Some(Tolerance { minus: r, plus: r })));
            }
            let tol = Tolerance::from_letter(letter)
                .ok_or_else(|| err(text, CAPACITANCE.expected, "unknown tolerance letter"))?;
            Ok((f, Some(tol)))
        }
        None => parse_capacitance(text).map(|f| (f, None)),
    }
}

/// Parse a time: `10ms`, `250 ms`, `1.5 s`, `100us`, `2.5` (seconds), and the long units the
/// reports print (`90 min`, `1.5 h`, `2 d`).
pub fn parse_time(text: &str) -> Result<Seconds, ParseError> {
    if let Some(t) = long_time(text) {
        return t;
    }
    parse_with(text, &TIME).map(Seconds::from_base)
}

/// A time in minutes, hours or days — the units `time_text` prints for long times, so a
/// printed time can be typed back. `None` when the text does not end in one of them.
fn long_time(text: &str) -> Option<Result<Seconds, ParseError>> {
    let t = text.trim();
    let (number, per) = [("min", 60_i64), ("h", 3600), ("d", 86_400)]
        .into_iter()
        .find_map(|(unit, per)| t.strip_suffix(unit).map(|n| (n.trim_end(), per)))?;
    // Only a plain number before the unit: `1.5 h`, not `1.5ms h`.
    if number.is_empty() || !number.chars().all(|c| c.is_ascii_digit() || c == '.') {
        return None;
    }
    Some(parse_with(number, &TIME).and_then(|base| {
        base.checked_mul(per)
            .map(Seconds::from_base)
            .ok_or_else(|| err(text, TIME.expected, "too long"))
    }))
}

/// Parse a frequency: `1k`, `440 Hz`, `38 kHz`, `0.5` (hertz).
pub fn parse_frequency(text: &str) -> Result<Hertz, ParseError> {
    parse_with(text, &FREQUENCY).map(Hertz::from_base)
}

/// Like [`parse_with`], but a bare number is refused: it must carry a prefix or the unit, so
/// `250` cannot silently mean 250 seconds when 250 ms was meant.
fn parse_strict(text: &str, g: &Grammar, examples: &str) -> Result<i64, ParseError> {
    let s = scan(text, text, g)?;
    if !s.has_prefix && !s.has_unit {
        let t = text.trim();
        return Err(err(
            text,
            g.expected,
            format!("{t} what? Give the unit: {}", examples.replace("{}", t)),
        ));
    }
    to_base(text, g, s.value, 0)
}

/// Parse a time that must say its unit: `250ms`, `1.5 s`, `100u`; a bare `250` is refused with
/// "250 what? …". For every option and argument where a time is asked for.
pub fn parse_time_strict(text: &str) -> Result<Seconds, ParseError> {
    if let Some(t) = long_time(text) {
        return t;
    }
    parse_strict(text, &TIME, "{}ms, {} s or {}us").map(Seconds::from_base)
}

/// Parse a frequency that must say its unit: `440Hz`, `38 kHz`, `1k`; a bare `440` is refused.
pub fn parse_frequency_strict(text: &str) -> Result<Hertz, ParseError> {
    parse_strict(text, &FREQUENCY, "{} Hz or {}k").map(Hertz::from_base)
}

/// Parse a voltage: `9`, `12 V`, `700mV`.
pub fn parse_voltage(text: &str) -> Result<Volts, ParseError> {
    parse_with(text, &VOLTAGE).map(Volts::from_base)
}

/// Parse a current: `200mA`, `50 nA`, `0.1`.
pub fn parse_current(text: &str) -> Result<Amps, ParseError> {
    parse_with(text, &CURRENT).map(Amps::from_base)
}

/// Parse a power: `0.25`, `250 mW`, `2W`, or a fraction as printed on resistor ratings
/// (`1/4 W`, `1/8W`).
pub fn parse_power(text: &str) -> Result<Watts, ParseError> {
    if let Some((num, den)) = text.split_once('/') {
        return parse_power_fraction(text, num, den);
    }
    parse_with(text, &POWER).map(Watts::from_base)
}

fn parse_power_fraction(text: &str, num: &str, den: &str) -> Result<Watts, ParseError> {
    let fail = |reason: &str| err(text, POWER.expected, reason);
    let num = num.trim();
    let den = den.trim();
    let den = den.strip_suffix(['W', 'w']).map_or(den, str::trim_end);
    let whole = |s: &str| -> Option<i64> {
        (!s.is_empty() && s.len() <= 6 && s.chars().all(|c| c.is_ascii_digit()))
            .then(|| s.parse().ok())
            .flatten()
    };
    let (Some(n), Some(d)) = (whole(num), whole(den)) else {
        return Err(fail("a fraction is two whole numbers, e.g. 1/4 W"));
    };
    if d == 0 {
        return Err(fail("division by zero"));
    }
    let per = Watts::PER_SI;
    Ok(Watts::from_base((n * per + d / 2) / d))
}

/// Parse a plain number with an optional SI prefix and no unit (`250n`, `1.5m`, `10k`, `2e-9`),
/// for figures finer than any quantity type stores (pin bias currents of a few nanoamps,
/// leakage per volt). The one SI-number reader; commands strip their unit symbol first.
pub fn parse_si_number(text: &str) -> Result<f64, ParseError> {
    let s = scan(text, text, &NUMBER)?;
    let v = s.value.mantissa as f64 * 10f64.powi(s.value.exp);
    if v.is_finite() {
        Ok(v)
    } else {
        Err(err(text, NUMBER.expected, "too large"))
    }
}

/// Parse a ratio: `0.6` or `60%`.
pub fn parse_ratio(text: &str) -> Result<Ratio, ParseError> {
    let t = text.trim();
    let (body, extra) = match t.strip_suffix('%') {
        Some(p) => (p, -2),
        None => (t, 0),
    };
    let s = scan(text, body, &RATIO)?;
    to_base(text, &RATIO, s.value, extra).map(Ratio::from_base)
}

const TOLERANCE_EXPECTED: &str = "a tolerance such as 1%, ±5 %, -20/+80 % or a letter F, J, K";

/// A percentage (no sign) as a ratio.
fn percent(text: &str, body: &str) -> Result<Ratio, ParseError> {
    let s = scan(text, body, &RATIO).map_err(|e| ParseError {
        expected: TOLERANCE_EXPECTED,
        ..e
    })?;
    if s.has_exponent {
        return Err(err(
            text,
            TOLERANCE_EXPECTED,
            "write the percentage plainly",
        ));
    }
    to_base(text, &RATIO, s.value, -2)
        .map(Ratio::from_base)
        .map_err(|e| ParseError {
            expected: TOLERANCE_EXPECTED,
            ..e
        })
}

/// Parse a tolerance: `1%`, `±5 %`, `0.5%`, `+-2%`, `+/-10%`; IEC 60062 letters B C D F G J K M
/// (±0.1, 0.25, 0.5, 1, 2, 5, 10, 20 %) and `Z` (−20/+80 %); asymmetric `-20/+80 %` or
/// `+80/-20%`. A bare number without `%` is refused (is `5` five percent or 0.05?).
pub fn parse_tolerance(text: &str) -> Result<Tolerance, ParseError> {
    let fail = |reason: &str| err(text, TOLERANCE_EXPECTED, reason);
    let t = text.trim().replace('−', "-");
    if t.is_empty() {
        return Err(fail("the text is empty"));
    }
    let mut letters = t.chars();
    if let (Some(l), None) = (letters.next(), letters.next()) {
        if l.is_alphabetic() {
            return Tolerance::from_letter(l.to_ascii_uppercase()).ok_or_else(|| {
                fail("unknown tolerance letter; known: B C D F G J K M (IEC 60062) and Z")
            });
        }
    }
    let symmetric = ["±", "+/-", "+-", "-/+", "-+"]
        .iter()
        .find_map(|p| t.strip_prefix(p));
    let tol = if let Some(rest) = symmetric {
        symmetric_part(text, rest)?
    } else if let Some((a, b)) = t.split_once('/') {
        let (a, b) = (a.trim(), b.trim());
        let had_percent = a.ends_with('%') || b.ends_with('%');
        if !had_percent {
            return Err(fail("no % sign"));
        }
        let side = |s: &str| -> Result<(char, Ratio), ParseError> {
            let s = s.trim_end_matches('%').trim();
            let mut ch = s.chars();
            match ch.next() {
                Some(sign @ ('-' | '+')) => Ok((sign, percent(text, ch.as_str())?)),
                _ => Err(fail(
                    "each side of an asymmetric tolerance needs its sign: -20/+80 %",
                )),
            }
        };
        let (sa, ra) = side(a)?;
        let (sb, rb) = side(b)?;
        match (sa, sb) {
            ('-', '+') => Tolerance {
                minus: ra,
                plus: rb,
            },
            ('+', '-') => Tolerance {
                minus: rb,
                plus: ra,
            },
            _ => return Err(fail("one side must be - and the other +")),
        }
    } else if t.starts_with('-') || t.starts_with('+') {
        return Err(fail(
            "a one-sided tolerance needs both sides (-20/+80 %), or write ±5 % for both",
        ));
    } else {
        symmetric_part(text, &t)?
    };
    if tol.minus.base() >= Ratio::PER_SI {
        return Err(fail("the minus side must be below 100 %"));
    }
    if tol.plus.base() > 10 * Ratio::PER_SI {
        return Err(fail("the plus side must be at most 1000 %"));
    }
    Ok(tol)
}

fn symmetric_part(text: &str, rest: &str) -> Result<Tolerance, ParseError> {
    let rest = rest.trim();
    let Some(body) = rest.strip_suffix('%') else {
        return Err(err(
            text,
            TOLERANCE_EXPECTED,
            "no % sign (write 5%, or a letter such as J)",
        ));
    };
    let r = percent(text, body)?;
    Ok(Tolerance { minus: r, plus: r })
}

pub use colour::parse_colour_bands;

macro_rules! from_str {
    ($($t:ty => $f:ident),* $(,)?) => {$(
        impl FromStr for $t {
            type Err = ParseError;
            /// Same as the matching `parse_*` function, so clap can use it as a value parser.
            fn from_str(s: &str) -> Result<Self, Self::Err> {
                $f(s)
            }
        }
    )*};
}

from_str!(
    Ohms => parse_resistance,
    Farads => parse_capacitance,
    Seconds => parse_time,
    Hertz => parse_frequency,
    Volts => parse_voltage,
    Amps => parse_current,
    Watts => parse_power,
    Ratio => parse_ratio,
    Tolerance => parse_tolerance,
);
