//! What is printed on a chip (SMD) resistor, read only when the person says it is a marking.
//!
//! A typed `472` is 472 Ω: a bare number is a value in ohms everywhere in this tool. Written
//! `marking:472` it is read as the part's printed code instead: 47 × 10² = 4.7 kΩ. The forms:
//!
//! - three digits: two significant digits and the number of zeros (`472` = 4.7 kΩ, `100` = 10 Ω,
//!   `000` = a 0 Ω link); usually a ±5 % part (common practice);
//! - four digits: three significant digits and the number of zeros (`4702` = 47 kΩ,
//!   `1001` = 1 kΩ); usually a ±1 % part (common practice);
//! - `R` as the decimal point, three or four characters (`4R7` = 4.7 Ω, `R47` = 0.47 Ω,
//!   `10R0` = 10 Ω, `R100` = 0.1 Ω); the three-character form is usually ±5 %, the four-character
//!   form ±1 % (common practice);
//! - EIA-96: two digits 01 … 96 naming the n-th value of the E96 series, then a multiplier letter
//!   (`01C` = 100 × 100 = 10 kΩ, `68X` = 499 × 0.1 = 49.9 Ω); a ±1 % part.
//!
//! The E96 values come from our IEC 60063 table; the letters are the EIA-96 multipliers as
//! published (Z 0.001, Y or R 0.01, X or S 0.1, A 1, B or H 10, C 100, D 1000, E 10⁴, F 10⁵;
//! cross-checked in `tests/external_eseries.rs`). Pure; no I/O.

use super::eseries::Series;
use super::parse::{ParseError, err};
use super::{Ohms, Ratio, Tolerance};

/// The prefix that says "this is what is printed on the part": `marking:472`.
pub const MARKING_PREFIX: &str = "marking:";

const EXPECTED: &str = "a chip-resistor marking such as marking:472, marking:4702, marking:4R7 \
                        or marking:01C (EIA-96)";

/// Which printed form a marking was.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum MarkingForm {
    /// Two significant digits and a multiplier digit (`472`).
    ThreeDigit,
    /// Three significant digits and a multiplier digit (`4702`).
    FourDigit,
    /// `R` as the decimal point (`4R7`, `R100`).
    RDecimal,
    /// EIA-96: an E96 index and a multiplier letter (`01C`).
    Eia96,
}

/// A chip-resistor marking, read.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ResistorMarking {
    /// The resistance it stands for.
    pub value: Ohms,
    /// Which form it was written in.
    pub form: MarkingForm,
    /// The tolerance a part printed this way usually has (common practice: three-character
    /// codes ±5 %, four-character and EIA-96 codes ±1 %).
    pub usual_tolerance: Tolerance,
}

/// The text after the marking prefix, when the text has it (any letter case).
pub fn strip_marking_prefix(text: &str) -> Option<&str> {
    let t = text.trim();
    let head = t.get(..MARKING_PREFIX.len())?;
    head.eq_ignore_ascii_case(MARKING_PREFIX)
        .then(|| t[MARKING_PREFIX.len()..].trim())
}

/// The EIA-96 multiplier of a letter as a power of ten (published EIA-96 table).
fn eia96_exponent(letter: char) -> Option<i32> {
    Some(match letter.to_ascii_uppercase() {
        'Z' => -3,
        'Y' | 'R' => -2,
        'X' | 'S' => -1,
        'A' => 0,
        'B' | 'H' => 1,
        'C' => 2,
        'D' => 3,
        'E' => 4,
        'F' => 5,
        _ => return None,
    })
}

fn percent(p: u32) -> Tolerance {
    // 1 % is 10^7 parts per 10^9.
    let r = Ratio::from_base(i64::from(p) * 10_000_000);
    Tolerance { minus: r, plus: r }
}

/// `significant × 10^exp` ohms, exactly, in milliohms.
fn ohms(text: &str, significant: i64, exp: i32) -> Result<Ohms, ParseError> {
    let shift = exp + 3; // milliohms
    let too_large = || err(text, EXPECTED, "too large to store");
    let milli = if shift >= 0 {
        10i64
            .checked_pow(shift.unsigned_abs())
            .and_then(|p| significant.checked_mul(p))
            .ok_or_else(too_large)?
    } else {
        let p = 10i64.pow(shift.unsigned_abs());
        if significant % p != 0 {
            return Err(err(text, EXPECTED, "below the finest step, 1 mΩ"));
        }
        significant / p
    };
    Ok(Ohms::from_base(milli))
}

/// Read a chip-resistor marking (without the `marking:` prefix): `472`, `4702`, `4R7`, `R47`,
/// `10R0`, `01C`. Letters may be in either case.
pub fn parse_resistor_marking(text: &str) -> Result<ResistorMarking, ParseError> {
    let code = strip_marking_prefix(text).unwrap_or(text).trim();
    let fail = |reason: String| err(text, EXPECTED, reason);
    let c: Vec<char> = code.chars().collect();
    let digit = |ch: char| ch.to_digit(10).map(i64::from);
    let all_digits = |s: &[char]| s.iter().all(char::is_ascii_digit);
    let number = |s: &[char]| {
        s.iter()
            .filter_map(|&ch| digit(ch))
            .fold(0, |a, d| a * 10 + d)
    };
    let r_count = c.iter().filter(|ch| ch.eq_ignore_ascii_case(&'R')).count();

    if (c.len() == 3 || c.len() == 4) && all_digits(&c) {
        let n = c.len();
        let significant = number(&c[..n - 1]);
        let exp = digit(c[n - 1]).map_or(0, |d| d as i32);
        let (form, tol) = if n == 3 {
            (MarkingForm::ThreeDigit, 5)
        } else {
            (MarkingForm::FourDigit, 1)
        };
        return Ok(ResistorMarking {
            value: ohms(text, significant, exp)?,
            form,
            usual_tolerance: percent(tol),
        });
    }
    if (c.len() == 3 || c.len() == 4) && r_count == 1 {
        let at = c
            .iter()
            .position(|ch| ch.eq_ignore_ascii_case(&'R'))
            .unwrap_or(0);
        let (int, frac) = (&c[..at], &c[at + 1..]);
        // A trailing R after two digits is the EIA-96 letter for 0.01 (`02R`), read below.
        if all_digits(int) && all_digits(frac) && !frac.is_empty() {
            let digits: Vec<char> = int.iter().chain(frac).copied().collect();
            let exp = -i32::try_from(frac.len()).unwrap_or(0);
            let tol = if c.len() == 3 { 5 } else { 1 };
            return Ok(ResistorMarking {
                value: ohms(text, number(&digits), exp)?,
                form: MarkingForm::RDecimal,
                usual_tolerance: percent(tol),
            });
        }
    }
    if c.len() == 3 && all_digits(&c[..2]) && c[2].is_ascii_alphabetic() {
        let index = number(&c[..2]);
        let Some(exp) = eia96_exponent(c[2]) else {
            return Err(fail(format!(
                "{:?} is not an EIA-96 multiplier letter; known: Z, Y or R, X or S, A, B or H, \
                 C, D, E, F",
                c[2]
            )));
        };
        let table = Series::E96.table();
        let Some(&base) = usize::try_from(index)
            .ok()
            .filter(|&i| (1..=table.len()).contains(&i))
            .and_then(|i| table.get(i - 1))
        else {
            return Err(fail(format!(
                "an EIA-96 code starts with 01 … 96 (the n-th E96 value), not {index:02}"
            )));
        };
        return Ok(ResistorMarking {
            value: ohms(text, i64::from(base), exp)?,
            form: MarkingForm::Eia96,
            usual_tolerance: percent(1),
        });
    }
    Err(fail(
        "expected three digits (472), four digits (4702), R as the decimal point (4R7, R47, \
         10R0) or two digits and a letter (01C)"
            .into(),
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn read(code: &str) -> (i64, MarkingForm, String) {
        let m = parse_resistor_marking(code).expect(code);
        (m.value.base(), m.form, m.usual_tolerance.to_string())
    }

    #[test]
    fn every_form() {
        use MarkingForm::*;
        // Code rules: common practice for chip-resistor markings (see the module header).
        let cases: &[(&str, i64, MarkingForm)] = &[
            ("472", 4_700_000, ThreeDigit),
            ("100", 10_000, ThreeDigit),
            ("000", 0, ThreeDigit),
            ("105", 1_000_000_000, ThreeDigit),
            ("4702", 47_000_000, FourDigit),
            ("1001", 1_000_000, FourDigit),
            ("4991", 4_990_000, FourDigit),
            ("4R7", 4_700, RDecimal),
            ("R47", 470, RDecimal),
            ("r22", 220, RDecimal),
            ("10R0", 10_000, RDecimal),
            ("R100", 100, RDecimal),
            ("01C", 10_000_000, Eia96),
            ("01c", 10_000_000, Eia96),
            ("68X", 49_900, Eia96),
            ("96F", 97_600_000_000, Eia96),
            ("01Z", 100, Eia96),
            ("02R", 1_020, Eia96),
            ("marking:472", 4_700_000, ThreeDigit),
            ("MARKING: 01C", 10_000_000, Eia96),
        ];
        for &(code, milli, form) in cases {
            let (m, f, _) = read(code);
            assert_eq!((m, f), (milli, form), "{code}");
        }
    }

    #[test]
    fn usual_tolerances() {
        // common practice: three-character codes on ±5 % parts, four-character and EIA-96 ±1 %.
        assert_eq!(read("472").2, "±5 %");
        assert_eq!(read("4R7").2, "±5 %");
        assert_eq!(read("4702").2, "±1 %");
        assert_eq!(read("10R0").2, "±1 %");
        assert_eq!(read("01C").2, "±1 %");
    }

    #[test]
    fn bad_codes_are_refused_with_the_reason() {
        for (code, says) in [
            ("97A", "01 … 96"),
            ("00A", "01 … 96"),
            ("01Q", "multiplier letter"),
            ("47", "expected three digits"),
            ("47021", "expected three digits"),
            ("4R7R", "expected three digits"),
            ("", "expected three digits"),
            ("R", "expected three digits"),
        ] {
            let e = parse_resistor_marking(code).expect_err(code);
            assert!(e.to_string().contains(says), "{code}: {e}");
        }
    }

    #[test]
    fn prefix_is_recognised_in_any_case() {
        assert_eq!(strip_marking_prefix("marking:472"), Some("472"));
        assert_eq!(strip_marking_prefix("Marking: 01C"), Some("01C"));
        assert_eq!(strip_marking_prefix("472"), None);
        assert_eq!(strip_marking_prefix("mark"), None);
    }
}
