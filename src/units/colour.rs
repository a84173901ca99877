//! Resistor colour bands (IEC 60062) as an input form: `yellow-violet-red-gold` is 4.7 kΩ ±5 %.
//!
//! 3 bands: two digits and a multiplier (no tolerance band: ±20 %). 4 bands: two digits,
//! multiplier, tolerance. 5 bands: three digits, multiplier, tolerance. 6 bands: as 5, then a
//! temperature-coefficient band, which is checked to be a colour and otherwise ignored.
//! Owns only this decoding; no I/O.

use super::parse::{ParseError, err};
use super::{Ohms, Ratio, Tolerance};

const EXPECTED: &str = "resistor colour bands such as yellow-violet-red-gold (3 to 6 bands, separated by -, space or ,)";

/// One band colour.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Colour {
    Black,
    Brown,
    Red,
    Orange,
    Yellow,
    Green,
    Blue,
    Violet,
    Grey,
    White,
    Gold,
    Silver,
    /// The absent band of a 3-band resistor, written out.
    None,
}

fn colour(word: &str) -> Option<Colour> {
    use Colour::*;
    Some(match word.to_ascii_lowercase().as_str() {
        "black" => Black,
        "brown" => Brown,
        "red" => Red,
        "orange" => Orange,
        "yellow" => Yellow,
        "green" => Green,
        "blue" => Blue,
        "violet" | "purple" => Violet,
        "grey" | "gray" => Grey,
        "white" => White,
        "gold" => Gold,
        "silver" => Silver,
        "none" => None,
        _ => return Option::None,
    })
}

impl Colour {
    /// The digit of a significant-figure band.
    fn digit(self) -> Option<i64> {
        use Colour::*;
        Some(match self {
            Black => 0,
            Brown => 1,
            Red => 2,
            Orange => 3,
            Yellow => 4,
            Green => 5,
            Blue => 6,
            Violet => 7,
            Grey => 8,
            White => 9,
            Gold | Silver | None => return Option::None,
        })
    }

    /// The multiplier band as a power of ten (IEC 60062: black ×1 … white ×10^9, gold ×0.1,
    /// silver ×0.01).
    fn multiplier_exp(self) -> Option<i32> {
        match self {
            Colour::Gold => Some(-1),
            Colour::Silver => Some(-2),
            c => c.digit().map(|d| d as i32),
        }
    }

    /// The tolerance band in parts per 10^9 (IEC 60062: brown 1 %, red 2 %, green 0.5 %,
    /// blue 0.25 %, violet 0.1 %, grey 0.05 %, gold 5 %, silver 10 %, none 20 %).
    fn tolerance_ppb(self) -> Option<i64> {
        use Colour::*;
        Some(match self {
            Brown => 10_000_000,
            Red => 20_000_000,
            Green => 5_000_000,
            Blue => 2_500_000,
            Violet => 1_000_000,
            Grey => 500_000,
            Gold => 50_000_000,
            Silver => 100_000_000,
            None => 200_000_000,
            _ => return Option::None,
        })
    }
}

fn words(text: &str) -> Vec<&str> {
    text.split(['-', ' ', ',', '\t'])
        .filter(|w| !w.is_empty())
        .collect()
}

/// Whether the text is meant as colour bands: its first word is a colour name.
pub(crate) fn looks_like_bands(text: &str) -> bool {
    words(text).first().is_some_and(|w| colour(w).is_some())
}

/// Parse resistor colour bands such as `yellow-violet-red-gold` into the value and its tolerance.
/// Colour names are case-insensitive (`grey`/`gray`, `violet`/`purple`); separators are `-`,
/// space or `,`. A 3-band resistor has no tolerance band and is ±20 %, so the tolerance is
/// always given for the forms accepted today.
pub fn parse_colour_bands(text: &str) -> Result<(Ohms, Option<Tolerance>), ParseError> {
    let w = words(text);
    let fail = |reason: String| err(text, EXPECTED, reason);
    let mut bands = Vec::with_capacity(w.len());
    for word in &w {
        bands.push(colour(word).ok_or_else(|| fail(format!("{word:?} is not a band colour")))?);
    }
    let (digits, multiplier, tolerance) = match bands.as_slice() {
        [a, b, m] => (vec![*a, *b], *m, Colour::None),
        [a, b, m, t] => (vec![*a, *b], *m, *t),
        [a, b, c, m, t] | [a, b, c, m, t, _] => (vec![*a, *b, *c], *m, *t),
        _ => {
            let n = bands.len();
            let plural = if n == 1 { "band" } else { "bands" };
            return Err(fail(format!("{n} {plural}; a resistor has 3, 4, 5 or 6")));
        }
    };
    let mut significant: i64 = 0;
    for (i, d) in digits.iter().enumerate() {
        let v = d.digit().ok_or_else(|| {
            fail(format!(
                "band {} is a digit band, and {d:?} is not a digit colour",
                i + 1
            ))
        })?;
        significant = significant * 10 + v;
    }
    let m = multiplier.multiplier_exp().ok_or_else(|| {
        fail(format!(
            "band {} is the multiplier, and {multiplier:?} is not a multiplier colour",
            digits.len() + 1
        ))
    })?;
    let t = tolerance.tolerance_ppb().ok_or_else(|| {
        fail(format!(
            "band {} is the tolerance, and {tolerance:?} is not a tolerance colour",
            digits.len() + 2
        ))
    })?;
    if bands.len() == 6 && bands[5] == Colour::None {
        return Err(fail(
            "the sixth band is the temperature coefficient, a colour".into(),
        ));
    }
    // Value in milliohms: significant × 10^(m + 3); m ≥ -2, so the exponent is ≥ 1.
    let milli = 10i64
        .checked_pow((m + 3).unsigned_abs())
        .and_then(|p| significant.checked_mul(p))
        .ok_or_else(|| fail("too large to store".into()))?;
    let r = Ratio::from_base(t);
    Ok((
        Ohms::from_base(milli),
        Some(Tolerance { minus: r, plus: r }),
    ))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn ohms(v: f64) -> Ohms {
        Ohms::from_si(v).expect("in range")
    }
    fn pct(p: f64) -> Option<Tolerance> {
        Tolerance::symmetric_percent(p)
    }

    #[test]
    fn decodes_bands() {
        // Band meanings: IEC 60062 colour code.
        let cases: &[(&str, f64, f64)] = &[
            ("yellow-violet-red-gold", 4_700.0, 5.0),
            ("Yellow Violet Red Gold", 4_700.0, 5.0),
            ("brown,black,orange,silver", 10_000.0, 10.0),
            ("brown-black-black", 10.0, 20.0),
            ("brown-black-black-none", 10.0, 20.0),
            ("red-red-gold-gold", 2.2, 5.0),
            ("brown-black-silver-brown", 0.1, 1.0),
            ("orange-orange-black-brown-brown", 3_300.0, 1.0),
            ("green-blue-black-black-brown", 560.0, 1.0),
            ("brown-black-black-red-green-brown", 10_000.0, 0.5),
            ("grey-red-blue-violet", 82_000_000.0, 0.1),
            ("gray-red-yellow-gray", 820_000.0, 0.05),
            ("blue-grey-black-brown-blue", 6_800.0, 0.25),
            ("purple-green-black-red", 75.0, 2.0),
            ("white-white-white-white-violet", 999e9, 0.1),
        ];
        for (text, v, t) in cases {
            assert_eq!(parse_colour_bands(text), Ok((ohms(*v), pct(*t))), "{text}");
        }
    }

    #[test]
    fn refuses_bad_bands() {
        for text in [
            "yellow-violet",
            "gold-violet-red-gold",
            "yellow-violet-pink-gold",
            "yellow-violet-red-orange",
            "yellow-violet-red-gold-gold-gold-gold",
            "yellow-violet-red-gold-brown-none",
            "brown-black-none",
        ] {
            let e = parse_colour_bands(text).expect_err(text);
            assert_eq!(e.text, text);
            assert!(!e.reason.is_empty());
        }
    }
}
