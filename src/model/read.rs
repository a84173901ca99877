//! Reading a part from how it is written: the kind a value's text implies, diodes named by their
//! type number, and what the way a resistor is marked says about what it is made of.
//!
//! One place for these guesses so every command reads a description the same way. The choices
//! are `common practice` or `from memory` and are labelled so; `--kind`, `--tech` and `--tol`
//! always win. Pure; depends only on `units` and the rest of `model`.

use super::part::{Kind, Technology};
use crate::units::{self, Ratio, Tolerance};

/// A small-signal or rectifier diode named by its type number.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct DiodeType {
    /// The type number as usually printed: `1N4148`.
    pub name: &'static str,
    /// What it is: silicon small-signal, Schottky, rectifier, germanium.
    pub family: DiodeFamily,
}

/// The broad sort of a diode; decides its usual forward drop.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum DiodeFamily {
    /// Silicon small-signal switching diode.
    Silicon,
    /// Schottky barrier diode (lower drop, more leakage).
    Schottky,
    /// Silicon rectifier.
    Rectifier,
    /// Germanium point-contact diode.
    Germanium,
}

/// Common diode type numbers a timer builder steers with (from memory of the usual parts).
const DIODES: &[DiodeType] = &[
    diode("1N4148", DiodeFamily::Silicon),
    diode("1N914", DiodeFamily::Silicon),
    diode("1N4448", DiodeFamily::Silicon),
    diode("1N4151", DiodeFamily::Silicon),
    diode("BAS16", DiodeFamily::Silicon),
    diode("BAV21", DiodeFamily::Silicon),
    diode("BAW62", DiodeFamily::Silicon),
    diode("BAT41", DiodeFamily::Schottky),
    diode("BAT42", DiodeFamily::Schottky),
    diode("BAT43", DiodeFamily::Schottky),
    diode("BAT46", DiodeFamily::Schottky),
    diode("BAT54", DiodeFamily::Schottky),
    diode("BAT85", DiodeFamily::Schottky),
    diode("1N5711", DiodeFamily::Schottky),
    diode("1N5817", DiodeFamily::Schottky),
    diode("1N5818", DiodeFamily::Schottky),
    diode("1N5819", DiodeFamily::Schottky),
    diode("1N4001", DiodeFamily::Rectifier),
    diode("1N4002", DiodeFamily::Rectifier),
    diode("1N4004", DiodeFamily::Rectifier),
    diode("1N4007", DiodeFamily::Rectifier),
    diode("1N34A", DiodeFamily::Germanium),
    diode("1N60", DiodeFamily::Germanium),
    diode("OA91", DiodeFamily::Germanium),
];

const fn diode(name: &'static str, family: DiodeFamily) -> DiodeType {
    DiodeType { name, family }
}

/// The diode a type number names, if it is one we know. Letter case and a trailing package or
/// grade suffix are ignored (`1n4148`, `1N4148W`, `BAT54S`, `1N4148-TAP`).
pub fn diode_type(text: &str) -> Option<DiodeType> {
    let t = text.trim().to_ascii_uppercase();
    let word = t.split([' ', '-', '/', ',']).next().unwrap_or("");
    DIODES
        .iter()
        .filter(|d| word.starts_with(d.name))
        // The longest name that fits: `1N4148` before a hypothetical `1N41`.
        .max_by_key(|d| d.name.len())
        .filter(|d| {
            // What follows the number is a suffix of letters, not more digits (`1N40012`).
            !word[d.name.len()..].starts_with(|c: char| c.is_ascii_digit())
        })
        .copied()
}

/// Whether the text looks like a diode type number even when it is not in our table: the JEDEC
/// `1N` + digits form, or the European `BA` + letter + digits form (`BAV99`). Common practice.
pub fn looks_like_diode(text: &str) -> bool {
    if diode_type(text).is_some() {
        return true;
    }
    let t = text.trim().to_ascii_uppercase();
    let digits_after =
        |rest: &str| rest.len() >= 2 && rest.chars().take(2).all(|c| c.is_ascii_digit());
    if let Some(rest) = t.strip_prefix("1N") {
        return digits_after(rest);
    }
    if let Some(rest) = t.strip_prefix("BA") {
        let mut c = rest.chars();
        return c.next().is_some_and(|l| l.is_ascii_alphabetic()) && digits_after(c.as_str());
    }
    false
}

/// Guess the kind from how a value is written: a diode type number (`1N4148`, `BAT85`) is a
/// diode; a farad unit, or a `p`/`n`/`u`/`µ` multiplier (`100n`, `4u7`, `2.2 µF`), a capacitor;
/// anything else (`4k7`, `470`, `1M`, `yellow-violet-red-gold`, `marking:472`) a resistor.
/// `--kind` overrides.
pub fn infer_kind(text: &str) -> Kind {
    let t = text.trim();
    if looks_like_diode(t) {
        return Kind::Diode;
    }
    if units::strip_marking_prefix(t).is_some() {
        return Kind::Resistor;
    }
    if t.ends_with('F') || t.ends_with('f') {
        return Kind::Capacitor;
    }
    // A word of three or more letters (ohm, colour names) is never a capacitor multiplier.
    let mut run = 0;
    for c in t.chars() {
        run = if c.is_alphabetic() { run + 1 } else { 0 };
        if run >= 3 {
            return Kind::Resistor;
        }
    }
    if t.chars().any(|c| matches!(c, 'p' | 'n' | 'u' | 'µ' | 'μ')) {
        Kind::Capacitor
    } else {
        Kind::Resistor
    }
}

/// What the way a resistor's value was written says about the part: its usual technology and
/// the tolerance it carries, when the text is read off the part.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Marked {
    /// The technology a part marked this way usually is.
    pub technology: Technology,
    /// The tolerance the marking carries or implies.
    pub tolerance: Tolerance,
}

/// The technology and tolerance a resistor marked like `text` has, when the text is a marking:
///
/// - colour bands carry their tolerance band; a part with a band of ±2 % or wider is a carbon
///   film part, one of ±1 % or tighter a metal film part (common practice: through-hole
///   resistors looser than 1 % are carbon film; the 5-band, 1 % parts are metal film);
/// - a chip-resistor marking (`marking:472`) is a thick-film chip with the tolerance its form
///   usually has (common practice).
///
/// `None` for a plain value such as `4k7`: the usual defaults apply.
pub fn marked_resistor(text: &str) -> Option<Marked> {
    if let Some(code) = units::strip_marking_prefix(text) {
        let m = units::parse_resistor_marking(code).ok()?;
        return Some(Marked {
            technology: Technology::ThickFilm,
            tolerance: m.usual_tolerance,
        });
    }
    let letters = text.chars().filter(char::is_ascii_alphabetic).count();
    // Only colour words (several of them) carry a tolerance in a resistor value.
    if letters <= 6 {
        return None;
    }
    let (_, tolerance) = units::parse_colour_bands(text).ok()?;
    let tolerance = tolerance?;
    let one_percent = Ratio::from_base(10_000_000);
    let technology = if tolerance.widest() <= one_percent {
        Technology::MetalFilm
    } else {
        Technology::CarbonFilm
    };
    Some(Marked {
        technology,
        tolerance,
    })
}

/// The tolerance text of a part for tables: a diode has none (`-`), not "0%".
pub fn tolerance_cell(kind: Kind, tolerance: Tolerance) -> String {
    match kind {
        Kind::Diode => "-".to_string(),
        _ => super::text::tolerance_text(tolerance),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn diode_type_numbers() {
        // Type numbers: from memory of the usual small-signal and Schottky parts.
        for (t, name, fam) in [
            ("1N4148", "1N4148", DiodeFamily::Silicon),
            ("1n4148", "1N4148", DiodeFamily::Silicon),
            ("1N4148W", "1N4148", DiodeFamily::Silicon),
            ("1N4148-TAP", "1N4148", DiodeFamily::Silicon),
            ("BAT85", "BAT85", DiodeFamily::Schottky),
            ("1N5819", "1N5819", DiodeFamily::Schottky),
            ("1N34A", "1N34A", DiodeFamily::Germanium),
        ] {
            let d = diode_type(t).expect(t);
            assert_eq!((d.name, d.family), (name, fam), "{t}");
        }
        assert_eq!(diode_type("1N41480"), None);
        assert_eq!(diode_type("4k7"), None);
    }

    #[test]
    fn kind_from_value_text() {
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
            "marking:472",
            "marking:01C",
        ] {
            assert_eq!(infer_kind(t), Kind::Resistor, "{t}");
        }
        for t in ["1N4148", "bat85", "1N5399", "BAV99", "1N4148W"] {
            assert_eq!(infer_kind(t), Kind::Diode, "{t}");
        }
    }

    #[test]
    fn colour_bands_say_carbon_or_metal_film() {
        // common practice: ±5 % through-hole parts are carbon film, ±1 % parts metal film.
        let m = marked_resistor("yellow-violet-red-gold").expect("bands");
        assert_eq!(m.technology, Technology::CarbonFilm);
        assert_eq!(m.tolerance.to_string(), "±5 %");
        let m = marked_resistor("brown-black-black-red-brown").expect("bands");
        assert_eq!(m.technology, Technology::MetalFilm);
        assert_eq!(m.tolerance.to_string(), "±1 %");
        let m = marked_resistor("marking:4702").expect("chip");
        assert_eq!(m.technology, Technology::ThickFilm);
        assert_eq!(m.tolerance.to_string(), "±1 %");
        assert_eq!(marked_resistor("4k7"), None);
        assert_eq!(marked_resistor("472"), None);
    }

    #[test]
    fn a_diode_has_no_tolerance_cell() {
        let t = Tolerance::symmetric_percent(0.0).expect("0");
        assert_eq!(tolerance_cell(Kind::Diode, t), "-");
        let t = Tolerance::symmetric_percent(5.0).expect("5");
        assert_eq!(tolerance_cell(Kind::Resistor, t), "5%");
    }
}
