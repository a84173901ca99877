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

#[cfg(test)]
mod tests {
    use super::*;

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
