//! The plain data of a stocked part, shared by the store (which persists it) and the solver
//! (which reads an in-memory snapshot of it). No SQL here.

use crate::units::{Farads, Ohms, Tolerance, Volts, Watts};
use serde::Serialize;

/// What a part is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Kind {
    /// Fixed resistor.
    Resistor,
    /// Capacitor.
    Capacitor,
    /// Trimmer potentiometer (value is its full track resistance).
    Trimmer,
    /// Diode (value unused; for steering).
    Diode,
}

/// What a part is made of; decides default tolerance, polarity and fitness for timing.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Technology {
    /// Metal-film resistor.
    MetalFilm,
    /// Carbon-film resistor.
    CarbonFilm,
    /// Thick-film chip resistor.
    ThickFilm,
    /// Wirewound resistor.
    Wirewound,
    /// Class 1 ceramic (C0G/NP0): stable, good for timing.
    C0g,
    /// Class 2 ceramic X7R: drifts with voltage and temperature.
    X7r,
    /// Class 2 ceramic Y5V/Z5U: poor for timing.
    Y5v,
    /// Plastic film (polyester, polypropylene): good for timing.
    Film,
    /// Aluminium electrolytic: polarised, leaky, wide tolerance.
    Electrolytic,
    /// Tantalum: polarised.
    Tantalum,
    /// Anything else.
    Other,
}

impl Technology {
    /// Whether the part must be fitted the right way round.
    pub fn is_polarised(self) -> bool {
        matches!(self, Technology::Electrolytic | Technology::Tantalum)
    }

    /// Whether the part leaks enough to upset long timing (excluded from timing unless allowed).
    pub fn is_electrolytic(self) -> bool {
        matches!(self, Technology::Electrolytic | Technology::Tantalum)
    }
}

/// The value of a part: resistors and trimmers in ohms, capacitors in farads.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize)]
#[serde(untagged)]
pub enum Value {
    /// A resistance.
    Resistance(Ohms),
    /// A capacitance.
    Capacitance(Farads),
    /// No value (diodes).
    None,
}

/// One stocked row: the same value/tolerance/technology/package/bin is one row.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Part {
    /// Row id in the store.
    pub id: i64,
    /// What it is.
    pub kind: Kind,
    /// Exact nominal value.
    pub value: Value,
    /// Tolerance.
    pub tolerance: Tolerance,
    /// Technology.
    pub technology: Technology,
    /// Voltage rating, if known.
    pub voltage_rating: Option<Volts>,
    /// Power rating, if known.
    pub power_rating: Option<Watts>,
    /// Package, e.g. "axial", "0805", "radial 5mm".
    pub package: String,
    /// Storage location.
    pub bin: String,
    /// Count on the shelf (including held parts).
    pub quantity: i64,
    /// Count held by reservations (not available to new designs).
    pub held: i64,
    /// Warn when the quantity falls to this level or below.
    pub low_stock: Option<i64>,
    /// Free note.
    pub note: String,
}

impl Part {
    /// Pieces free for a new design: on the shelf minus held.
    pub fn available(&self) -> i64 {
        (self.quantity - self.held).max(0)
    }
}

/// A kind or technology name that is not one of ours.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("unknown {what} {text:?}; expected one of: {choices}")]
pub struct UnknownName {
    /// "kind" or "technology".
    pub what: &'static str,
    /// The text as given.
    pub text: String,
    /// The accepted names.
    pub choices: &'static str,
}

/// Lower-case, with spaces, dashes and underscores removed, so `Metal Film`, `metal-film` and
/// `metal_film` compare equal.
fn squash(text: &str) -> String {
    text.chars()
        .filter(|c| !matches!(c, ' ' | '-' | '_'))
        .flat_map(char::to_lowercase)
        .collect()
}

impl Kind {
    /// Every kind, in display order.
    pub const ALL: [Kind; 4] = [Kind::Resistor, Kind::Capacitor, Kind::Trimmer, Kind::Diode];

    /// The stored and exported name.
    pub fn as_str(self) -> &'static str {
        match self {
            Kind::Resistor => "resistor",
            Kind::Capacitor => "capacitor",
            Kind::Trimmer => "trimmer",
            Kind::Diode => "diode",
        }
    }

    /// Whether the value of this kind is a resistance.
    pub fn is_resistive(self) -> bool {
        matches!(self, Kind::Resistor | Kind::Trimmer)
    }
}

impl std::fmt::Display for Kind {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.as_str())
    }
}

impl std::str::FromStr for Kind {
    type Err = UnknownName;

    /// Accepts the names and a few usual short forms (`r`, `c`, `pot`, `d`).
    fn from_str(text: &str) -> Result<Self, Self::Err> {
        Ok(match squash(text).as_str() {
            "resistor" | "resistors" | "r" | "res" => Kind::Resistor,
            "capacitor" | "capacitors" | "c" | "cap" => Kind::Capacitor,
            "trimmer" | "trimmers" | "pot" | "trimpot" | "preset" => Kind::Trimmer,
            "diode" | "diodes" | "d" => Kind::Diode,
            _ => {
                return Err(UnknownName {
                    what: "kind",
                    text: text.to_string(),
                    choices: "resistor, capacitor, trimmer, diode",
                });
            }
        })
    }
}

impl Technology {
    /// Every technology, in display order.
    pub const ALL: [Technology; 11] = [
        Technology::MetalFilm,
        Technology::CarbonFilm,
        Technology::ThickFilm,
        Technology::Wirewound,
        Technology::C0g,
        Technology::X7r,
        Technology::Y5v,
        Technology::Film,
        Technology::Electrolytic,
        Technology::Tantalum,
        Technology::Other,
    ];

    /// The stored and exported name (the same as in JSON).
    pub fn as_str(self) -> &'static str {
        match self {
            Technology::MetalFilm => "metal_film",
            Technology::CarbonFilm => "carbon_film",
            Technology::ThickFilm => "thick_film",
            Technology::Wirewound => "wirewound",
            Technology::C0g => "c0g",
            Technology::X7r => "x7r",
            Technology::Y5v => "y5v",
            Technology::Film => "film",
            Technology::Electrolytic => "electrolytic",
            Technology::Tantalum => "tantalum",
            Technology::Other => "other",
        }
    }

    /// A short label for tables: "metal film", "C0G".
    pub fn label(self) -> &'static str {
        match self {
            Technology::MetalFilm => "metal film",
            Technology::CarbonFilm => "carbon film",
            Technology::ThickFilm => "thick film",
            Technology::Wirewound => "wirewound",
            Technology::C0g => "C0G",
            Technology::X7r => "X7R",
            Technology::Y5v => "Y5V",
            Technology::Film => "film",
            Technology::Electrolytic => "electrolytic",
            Technology::Tantalum => "tantalum",
            Technology::Other => "other",
        }
    }
}

impl std::fmt::Display for Technology {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.label())
    }
}

impl std::str::FromStr for Technology {
    type Err = UnknownName;

    /// Accepts the stored names, the labels and the usual trade names (`NP0` for C0G,
    /// `polyester`/`polypropylene` for film, `elko` for electrolytic, …).
    fn from_str(text: &str) -> Result<Self, Self::Err> {
        Ok(match squash(text).as_str() {
            "metalfilm" | "mf" | "metal" => Technology::MetalFilm,
            "carbonfilm" | "cf" | "carbon" => Technology::CarbonFilm,
            "thickfilm" | "thick" | "chip" => Technology::ThickFilm,
            "wirewound" | "ww" => Technology::Wirewound,
            "c0g" | "cog" | "np0" | "npo" | "c0gceramic" | "ceramicc0g" | "np0ceramic" => {
                Technology::C0g
            }
            "x7r" | "x5r" | "x7rceramic" | "ceramicx7r" => Technology::X7r,
            "y5v" | "z5u" | "y5vceramic" => Technology::Y5v,
            "film" | "polyester" | "pet" | "mylar" | "polypropylene" | "pp" | "mkt" | "mkp"
            | "mks" | "polystyrene" | "ps" | "filmcapacitor" => Technology::Film,
            "electrolytic"
            | "elko"
            | "elco"
            | "elec"
            | "alu"
            | "aluminium"
            | "aluminum"
            | "aluminiumelectrolytic"
            | "aluminumelectrolytic"
            | "alelectrolytic" => Technology::Electrolytic,
            "tantalum" | "tant" | "tantal" => Technology::Tantalum,
            "other" => Technology::Other,
            _ => {
                return Err(UnknownName {
                    what: "technology",
                    text: text.to_string(),
                    choices: "metal_film, carbon_film, thick_film, wirewound, c0g, x7r, y5v, \
                              film, electrolytic, tantalum, other",
                });
            }
        })
    }
}

impl Value {
    /// The exact stored integer: milliohms, femtofarads, or 0 for no value.
    pub fn base(self) -> i64 {
        match self {
            Value::Resistance(r) => r.base(),
            Value::Capacitance(c) => c.base(),
            Value::None => 0,
        }
    }

    /// The value in SI units (Ω or F; 0 for no value).
    pub fn si(self) -> f64 {
        match self {
            Value::Resistance(r) => r.si(),
            Value::Capacitance(c) => c.si(),
            Value::None => 0.0,
        }
    }

    /// The value a part of `kind` has when its stored integer is `base`.
    pub fn from_base(kind: Kind, base: i64) -> Self {
        match kind {
            Kind::Resistor | Kind::Trimmer => Value::Resistance(Ohms::from_base(base)),
            Kind::Capacitor => Value::Capacitance(Farads::from_base(base)),
            Kind::Diode => Value::None,
        }
    }

    /// Whether a part of `kind` carries this sort of value.
    pub fn fits(self, kind: Kind) -> bool {
        matches!(
            (self, kind),
            (Value::Resistance(_), Kind::Resistor | Kind::Trimmer)
                | (Value::Capacitance(_), Kind::Capacitor)
                | (Value::None, Kind::Diode)
        )
    }
}

impl std::fmt::Display for Value {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        // Exact decimal text from the stored integer (the same text as the CSV export).
        match self {
            Value::None => f.write_str("-"),
            v => f.write_str(&super::text::value_text(*v)),
        }
    }
}

impl Part {
    /// The part in a few words for messages: "4.7 kΩ 1% metal film", "1N4148 diode".
    pub fn label(&self) -> String {
        match self.kind {
            Kind::Diode => format!("{} diode", self.package),
            _ => format!(
                "{} {} {}{}",
                self.value,
                super::text::tolerance_text(self.tolerance),
                self.technology.label(),
                if self.kind == Kind::Trimmer {
                    " trimmer"
                } else {
                    ""
                }
            ),
        }
    }

    /// Where it is, for messages: "bin A3", or "part #12" when it has no bin.
    pub fn place(&self) -> String {
        if self.bin.is_empty() {
            format!("part #{}", self.id)
        } else {
            format!("bin {}", self.bin)
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn names_round_trip() {
        for k in Kind::ALL {
            assert_eq!(k.as_str().parse::<Kind>(), Ok(k));
        }
        for t in Technology::ALL {
            assert_eq!(t.as_str().parse::<Technology>(), Ok(t));
            assert_eq!(t.label().parse::<Technology>(), Ok(t));
        }
    }

    #[test]
    fn trade_names_are_accepted() {
        // common practice: NP0 and C0G name the same class 1 dielectric.
        assert_eq!("NP0".parse::<Technology>(), Ok(Technology::C0g));
        assert_eq!(
            "Metal-Film".parse::<Technology>(),
            Ok(Technology::MetalFilm)
        );
        assert!("unobtainium".parse::<Technology>().is_err());
        assert!("inductor".parse::<Kind>().is_err());
    }

    #[test]
    fn buyer_spellings_are_one_parser() {
        // common practice: how buyers and catalogues write these technologies.
        for (text, tech) in [
            ("MKT", Technology::Film),
            ("mkp", Technology::Film),
            ("polystyrene", Technology::Film),
            ("c0g", Technology::C0g),
            ("NP0 ceramic", Technology::C0g),
            ("X7R", Technology::X7r),
            ("elko", Technology::Electrolytic),
            ("aluminium electrolytic", Technology::Electrolytic),
            ("elec", Technology::Electrolytic),
            ("tantal", Technology::Tantalum),
        ] {
            assert_eq!(text.parse::<Technology>(), Ok(tech), "{text}");
        }
    }

    #[test]
    fn value_fits_kind() {
        let v = Value::from_base(Kind::Capacitor, 100);
        assert!(v.fits(Kind::Capacitor));
        assert!(!v.fits(Kind::Resistor));
        assert_eq!(v.base(), 100);
        assert_eq!(Value::from_base(Kind::Diode, 0), Value::None);
    }
}
