//! Exact text forms of stored values, for CSV/JSON export and messages, and the small helpers
//! that read part descriptions on top of `units` (kind inferred from a value's text, the
//! asymmetric `-20/+80%` tolerance form).
//!
//! Export must import back to the same integers, so the text is produced from the stored
//! integer by decimal arithmetic (never through a float) in a form the units parser reads:
//! `4.7 kΩ`, `100 nF`, `2200 µF`, `1%`, `-20/+80%`, `16 V`, `0.25 W`.

use super::part::{Kind, Value};
use crate::units::{self, Farads, Ohms, ParseError, Ratio, Tolerance, Volts, Watts};

/// `n / 10^scale` as an exact decimal without trailing zeros: `decimal(4700, 3)` is `4.7`.
fn decimal(n: i64, scale: u32) -> String {
    let sign = if n < 0 { "-" } else { "" };
    let n = n.unsigned_abs();
    let d = 10u64.pow(scale);
    let (int, frac) = (n / d, n % d);
    if frac == 0 {
        return format!("{sign}{int}");
    }
    let frac = format!("{frac:0width$}", width = scale as usize);
    format!("{sign}{int}.{}", frac.trim_end_matches('0'))
}

/// Exact text of a resistance: `0.47 Ω`, `470 Ω`, `4.7 kΩ`, `1 MΩ`.
pub fn ohms_text(r: Ohms) -> String {
    let b = r.base(); // milliohms
    let (scale, prefix) = match b.unsigned_abs() {
        0..1_000_000 => (3, ""),
        1_000_000..1_000_000_000 => (6, "k"),
        1_000_000_000..1_000_000_000_000 => (9, "M"),
        _ => (12, "G"),
    };
    format!("{} {prefix}Ω", decimal(b, scale))
}

/// Exact text of a capacitance in the prefixes technicians use: `470 pF`, `100 nF`,
/// `2200 µF` (never mF), `1 F`.
pub fn farads_text(c: Farads) -> String {
    let b = c.base(); // femtofarads
    let (scale, prefix) = match b.unsigned_abs() {
        0..1_000_000 => (3, "p"),
        1_000_000..1_000_000_000 => (6, "n"),
        1_000_000_000..1_000_000_000_000_000 => (9, "µ"),
        _ => (15, ""),
    };
    format!("{} {prefix}F", decimal(b, scale))
}

/// Exact text of a value; empty for a diode (its type lives in the package column).
pub fn value_text(v: Value) -> String {
    match v {
        Value::Resistance(r) => ohms_text(r),
        Value::Capacitance(c) => farads_text(c),
        Value::None => String::new(),
    }
}

/// Exact text of a voltage rating: `16 V`, `6.3 V`.
pub fn volts_text(v: Volts) -> String {
    format!("{} V", decimal(v.base(), 6))
}

/// Exact text of a power rating: `0.25 W`.
pub fn watts_text(w: Watts) -> String {
    format!("{} W", decimal(w.base(), 6))
}

/// Exact percentage of a ratio: `1`, `0.1`, `20` (1 % is 10^7 parts per 10^9).
fn percent_text(r: Ratio) -> String {
    decimal(r.base(), 7)
}

/// Exact text of a tolerance: `1%`, or `-20/+80%` when the sides differ.
pub fn tolerance_text(t: Tolerance) -> String {
    if t.is_symmetric() {
        format!("{}%", percent_text(t.plus))
    } else {
        format!("-{}/+{}%", percent_text(t.minus), percent_text(t.plus))
    }
}

/// Read a tolerance: whatever `units::parse_tolerance` reads, plus the asymmetric forms
/// `-20/+80%` and `+80/-20%` (so an export always imports back).
pub fn parse_tolerance(text: &str) -> Result<Tolerance, ParseError> {
    let first = match units::parse_tolerance(text) {
        Ok(t) => return Ok(t),
        Err(e) => e,
    };
    let t: String = text.chars().filter(|c| !c.is_whitespace()).collect();
    let t = t.strip_suffix('%').unwrap_or(&t);
    let Some((a, b)) = t.split_once('/') else {
        return Err(first);
    };
    let side = |s: &str| -> Option<(char, Ratio)> {
        let sign = s.chars().next()?;
        let rest = s.get(sign.len_utf8()..)?.trim_end_matches('%');
        let tol = units::parse_tolerance(&format!("{rest}%")).ok()?;
        matches!(sign, '-' | '+' | '−').then_some((sign, tol.plus))
    };
    match (side(a), side(b)) {
        (Some(('-' | '−', minus)), Some(('+', plus)))
        | (Some(('+', plus)), Some(('-' | '−', minus))) => Ok(Tolerance { minus, plus }),
        _ => Err(first),
    }
}

/// Guess the kind from how a value is written (one rule for every command; see
/// [`super::read::infer_kind`]).
pub fn infer_kind(text: &str) -> Kind {
    super::read::infer_kind(text)
}

/// Longest note, in characters (a note is a line about the part, not a document).
pub const MAX_NOTE: usize = 500;
/// Longest bin name, in characters.
pub const MAX_BIN: usize = 40;
/// Longest package or diode type, in characters.
pub const MAX_PACKAGE: usize = 60;
/// Longest value text (`4k7`, a colour code), in characters.
pub const MAX_VALUE: usize = 80;
/// Longest name (a user, a plan, a stage), in characters.
pub const MAX_NAME: usize = 80;
/// Longest reason for the ledger (`--why`), in characters.
pub const MAX_REASON: usize = 200;
/// Longest other short field (kind, tolerance, technology, ratings, low level), in characters.
pub const MAX_SHORT: usize = 40;

/// Characters that change what a terminal shows rather than showing themselves: every control
/// character (C0 such as ESC, NUL, TAB and newline; DEL; C1) and the bidirectional overrides
/// and isolates that reorder text on screen.
pub fn is_unsafe_char(c: char) -> bool {
    c.is_control() || matches!(c, '\u{202a}'..='\u{202e}' | '\u{2066}'..='\u{2069}')
}

/// Check one text field a person gave: no control characters, at most `max` characters.
/// The message names the field and shows a short, escaped excerpt, never the whole input.
pub fn check_field(what: &str, text: &str, max: usize) -> Result<(), String> {
    if let Some((i, c)) = text.chars().enumerate().find(|&(_, c)| is_unsafe_char(c)) {
        return Err(format!(
            "{what} {} contains a control character ({}) at character {}; only printable text \
             is stored",
            excerpt(text),
            c.escape_unicode(),
            i + 1
        ));
    }
    let n = text.chars().count();
    if n > max {
        return Err(format!(
            "{what} is {n} characters long, at most {max} are stored ({})",
            excerpt(text)
        ));
    }
    Ok(())
}

/// At most this many characters of bad input are echoed in a message.
const EXCERPT: usize = 32;

/// A short, quoted, escaped excerpt of text for a message: `"4k7\u{1b}[2J…" (10240 characters)`.
pub fn excerpt(text: &str) -> String {
    let n = text.chars().count();
    let head: String = text.chars().take(EXCERPT).collect();
    let mut s = format!("\"{}", for_terminal(&head));
    if n > EXCERPT {
        s.push_str(&format!("…\" ({n} characters)"));
    } else {
        s.push('"');
    }
    s
}

/// Text as it may reach a terminal: every character of [`is_unsafe_char`] shown as an escape
/// (`\u{1b}`, `\n`) instead of acting on the screen.
pub fn for_terminal(text: &str) -> std::borrow::Cow<'_, str> {
    if !text.chars().any(is_unsafe_char) {
        return std::borrow::Cow::Borrowed(text);
    }
    let mut s = String::with_capacity(text.len() + 8);
    for c in text.chars() {
        if is_unsafe_char(c) {
            s.extend(c.escape_default());
        } else {
            s.push(c);
        }
    }
    std::borrow::Cow::Owned(s)
}

/// A capacitor's three-digit code with its optional tolerance letter (IEC 60062): `104`,
/// `473J`, `102K`.
fn is_capacitor_code(t: &str) -> bool {
    let b = t.as_bytes();
    matches!(b.len(), 3 | 4)
        && b[..3].iter().all(u8::is_ascii_digit)
        && b.get(3).is_none_or(|c| b"BCDFGJKMZ".contains(c))
}

/// Whether the text of a value, given for a part of `kind`, is written in the other kind's
/// units: `4k7` or `10 Ω` for a capacitor, `100n` or `4.7 µF` for a resistor. A bare number or
/// a capacitor code (`104`, `104K`) contradicts nothing.
pub fn unit_contradicts(kind: Kind, text: &str) -> bool {
    let t = text.trim();
    match kind {
        Kind::Resistor | Kind::Trimmer => infer_kind(t) == Kind::Capacitor,
        Kind::Capacitor => {
            let lower = t.to_lowercase();
            let farad_like = t
                .chars()
                .any(|c| matches!(c, 'F' | 'f' | 'p' | 'n' | 'u' | 'µ' | 'μ'));
            let ohm_like = t.contains('Ω')
                || lower.contains("ohm")
                || t.chars().any(|c| matches!(c, 'k' | 'R' | 'r' | 'G'))
                || t.chars()
                    .zip(t.chars().skip(1))
                    .any(|(a, b)| matches!(a, 'K' | 'M') && b.is_ascii_digit());
            ohm_like && !farad_like && !is_capacitor_code(t)
        }
        Kind::Diode => false,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn control_characters_and_long_text_are_refused_with_an_excerpt() {
        for bad in [
            "a\u{1b}[2J",
            "x\ny",
            "t\tab",
            "nul\0",
            "\u{9b}31m",
            "rtl\u{202e}gnp.exe",
            "del\u{7f}",
        ] {
            let e = check_field("bin", bad, 40).expect_err(bad);
            assert!(e.contains("control character"), "{e}");
            assert!(
                !e.chars().any(is_unsafe_char),
                "the message itself is safe: {e:?}"
            );
        }
        check_field("bin", "A3 – top shelf, µ parts", 40).expect("printable text is fine");
        let long = "x".repeat(10_000);
        let e = check_field("note", &long, 500).expect_err("long");
        assert!(e.contains("10000 characters"), "{e}");
        assert!(
            e.len() < 200,
            "only an excerpt is echoed: {} bytes",
            e.len()
        );
        assert_eq!(for_terminal("ok"), "ok");
        assert_eq!(for_terminal("a\u{1b}]0;x\u{7}b"), "a\\u{1b}]0;x\\u{7}b");
        assert_eq!(for_terminal("l1\nl2"), "l1\\nl2");
    }

    #[test]
    fn a_value_in_the_other_kind_s_units_is_noticed() {
        for t in ["4k7", "10 Ω", "4R7", "1M5", "10 ohm", "2K2"] {
            assert!(unit_contradicts(Kind::Capacitor, t), "{t}");
        }
        for t in [
            "100n", "104", "104K", "473J", "4.7 µF", "10uF", "2200", "1F",
        ] {
            assert!(!unit_contradicts(Kind::Capacitor, t), "{t}");
        }
        for t in ["100n", "4.7 µF", "22p"] {
            assert!(unit_contradicts(Kind::Resistor, t), "{t}");
        }
        for t in ["4k7", "470", "brown-black-red-gold", "0R22", "1M"] {
            assert!(!unit_contradicts(Kind::Resistor, t), "{t}");
        }
    }

    #[test]
    fn exact_value_text() {
        let cases: &[(i64, &str)] = &[
            (470, "0.47 Ω"),
            (470_000, "470 Ω"),
            (4_700_000, "4.7 kΩ"),
            (4_750_000, "4.75 kΩ"),
            (1_000_000_000, "1 MΩ"),
            (2_200_000_000_000, "2.2 GΩ"),
        ];
        for &(b, text) in cases {
            assert_eq!(ohms_text(Ohms::from_base(b)), text);
        }
        let cases: &[(i64, &str)] = &[
            (500, "0.5 pF"),
            (470_000, "470 pF"),
            (100_000_000, "100 nF"),
            (4_700_000_000, "4.7 µF"),
            (2_200_000_000_000, "2200 µF"),
            (1_000_000_000_000_000, "1 F"),
        ];
        for &(b, text) in cases {
            assert_eq!(farads_text(Farads::from_base(b)), text);
        }
    }

    #[test]
    fn value_text_parses_back_exactly() {
        for b in [
            1,
            470,
            999_999,
            1_000_000,
            4_700_000,
            12_345_678,
            10_000_000_000,
        ] {
            let r = Ohms::from_base(b);
            assert_eq!(units::parse_resistance(&ohms_text(r)), Ok(r), "{b}");
        }
        for b in [1, 500, 470_000, 3_300_000, 100_000_000, 2_200_000_000_000] {
            let c = Farads::from_base(b);
            assert_eq!(units::parse_capacitance(&farads_text(c)), Ok(c), "{b}");
        }
        for b in [1_000_000, 6_300_000, 450_000_000] {
            let v = Volts::from_base(b);
            assert_eq!(units::parse_voltage(&volts_text(v)), Ok(v));
        }
        let w = Watts::from_base(250_000);
        assert_eq!(units::parse_power(&watts_text(w)), Ok(w));
    }

    #[test]
    fn tolerance_text_round_trips() {
        let sym = Tolerance::symmetric_percent(1.0).expect("1%");
        assert_eq!(tolerance_text(sym), "1%");
        assert_eq!(parse_tolerance("1%"), Ok(sym));
        let tenth = Tolerance::symmetric_percent(0.1).expect("0.1%");
        assert_eq!(tolerance_text(tenth), "0.1%");
        assert_eq!(parse_tolerance(&tolerance_text(tenth)), Ok(tenth));
        let asym = Tolerance {
            minus: Ratio::from_percent(20.0).expect("20"),
            plus: Ratio::from_percent(80.0).expect("80"),
        };
        assert_eq!(tolerance_text(asym), "-20/+80%");
        assert_eq!(parse_tolerance("-20/+80%"), Ok(asym));
        assert_eq!(parse_tolerance("+80/-20 %"), Ok(asym));
        assert!(parse_tolerance("20/80%").is_err());
        assert!(parse_tolerance("-20/-80%").is_err());
    }

    #[test]
    fn kind_from_value_text() {
        // The rule of the brief: farad unit or p/n/u/µ multiplier means capacitor.
        for t in ["100n", "4u7", "2.2 µF", "10uF", "22p", "1F", "4n7"] {
            assert_eq!(infer_kind(t), Kind::Capacitor, "{t}");
        }
        for t in [
            "4k7",
            "470",
            "1M",
            "4.7 kΩ",
            "10 ohm",
            "yellow-violet-red-gold",
            "0R22",
        ] {
            assert_eq!(infer_kind(t), Kind::Resistor, "{t}");
        }
    }
}
