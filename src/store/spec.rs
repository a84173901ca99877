//! A part as a person describes it (command-line options or one CSV row), resolved into a
//! complete description with the usual defaults filled in. No SQL here.
//!
//! Defaults are `common practice` for a hobby and repair drawer, not a standard: resistors are
//! 1 % metal film, axial, 0.25 W; capacitors take their technology from their value (C0G below
//! 1 nF, X7R from 1 nF up to 1 µF, aluminium electrolytic above) with that technology's usual
//! tolerance (C0G ±5 %, X7R ±10 %, film ±5 %, Y5V −20/+80 %, electrolytic ±20 %, tantalum ±10 %).

use super::part::{Kind, Technology, Value};
use super::text;
use crate::units::{self, Farads, Ratio, Tolerance, Volts, Watts};

/// The text of each field, as given; `None` or blank means "use the default".
#[derive(Debug, Clone, Default)]
pub struct PartText {
    /// `resistor`, `capacitor`, `trimmer`, `diode`; inferred from the value when absent.
    pub kind: Option<String>,
    /// The value (`4k7`, `100n`); for a diode its type (`1N4148`), kept with the package.
    pub value: String,
    /// Tolerance (`1%`, `-20/+80%`).
    pub tolerance: Option<String>,
    /// Technology (`metal_film`, `C0G`, …).
    pub technology: Option<String>,
    /// Voltage rating; `none` for explicitly unknown.
    pub volts: Option<String>,
    /// Power rating; `none` for explicitly unknown.
    pub watts: Option<String>,
    /// Package.
    pub package: Option<String>,
    /// Storage bin.
    pub bin: Option<String>,
    /// Low-stock level.
    pub low: Option<String>,
    /// Free note.
    pub note: Option<String>,
}

/// Which field of a description a problem is in (named as the CSV column).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Field {
    /// `kind`
    Kind,
    /// `value`
    Value,
    /// `tolerance`
    Tolerance,
    /// `technology`
    Technology,
    /// `volts`
    Volts,
    /// `watts`
    Watts,
    /// `package`
    Package,
    /// `low`
    Low,
    /// `bin`
    Bin,
    /// `note`
    Note,
}

impl Field {
    /// The CSV column name.
    pub fn column(self) -> &'static str {
        match self {
            Field::Kind => "kind",
            Field::Value => "value",
            Field::Tolerance => "tolerance",
            Field::Technology => "technology",
            Field::Volts => "volts",
            Field::Watts => "watts",
            Field::Package => "package",
            Field::Low => "low",
            Field::Bin => "bin",
            Field::Note => "note",
        }
    }

    /// The command-line option that sets it.
    pub fn option(self) -> &'static str {
        match self {
            Field::Kind => "--kind",
            Field::Value => "VALUE",
            Field::Tolerance => "--tol",
            Field::Technology => "--tech",
            Field::Volts => "--volts",
            Field::Watts => "--watts",
            Field::Package => "--package",
            Field::Low => "--low",
            Field::Bin => "--bin",
            Field::Note => "--note",
        }
    }
}

/// One problem with one field.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct FieldError {
    /// The field.
    pub field: Field,
    /// What is wrong.
    pub message: String,
}

/// A complete part description: the identity of a row (kind … bin) and the attributes a new
/// row gets. `given_*` say which attributes the person stated, so that describing an existing
/// row changes only what was stated.
#[derive(Debug, Clone, PartialEq)]
pub struct PartSpec {
    /// Kind.
    pub kind: Kind,
    /// Exact value.
    pub value: Value,
    /// Tolerance.
    pub tolerance: Tolerance,
    /// Technology.
    pub technology: Technology,
    /// Package (for a diode: its type, then its package).
    pub package: String,
    /// Bin ("" for none).
    pub bin: String,
    /// Voltage rating.
    pub voltage_rating: Option<Volts>,
    /// Power rating.
    pub power_rating: Option<Watts>,
    /// Low-stock level.
    pub low_stock: Option<i64>,
    /// Note.
    pub note: String,
    /// Whether the voltage rating was stated.
    pub given_volts: bool,
    /// Whether the power rating was stated.
    pub given_watts: bool,
    /// Whether the low-stock level was stated.
    pub given_low: bool,
    /// Whether the note was stated.
    pub given_note: bool,
}

fn given(field: &Option<String>) -> Option<&str> {
    field.as_deref().map(str::trim).filter(|s| !s.is_empty())
}

fn is_none_word(s: &str) -> bool {
    matches!(s.to_ascii_lowercase().as_str(), "none" | "unknown" | "-")
}

fn percent(p: f64) -> Tolerance {
    // The literals below are all small exact percentages; from_percent cannot fail on them.
    let r = Ratio::from_percent(p).unwrap_or(Ratio::ZERO);
    Tolerance { minus: r, plus: r }
}

/// The usual technology of a capacitor of this value (`common practice`).
pub fn default_capacitor_technology(c: Farads) -> Technology {
    if c.base() < 1_000_000 {
        Technology::C0g // below 1 nF
    } else if c.base() <= 1_000_000_000 {
        Technology::X7r // 1 nF … 1 µF
    } else {
        Technology::Electrolytic
    }
}

/// The tolerance written into a value's own marking, if any.
fn marked_tolerance(kind: Kind, value_text: &str) -> Option<Tolerance> {
    match kind {
        // Colour bands carry their tolerance band; a chip marking implies its usual tolerance.
        Kind::Resistor | Kind::Trimmer => {
            crate::model::marked_resistor(value_text).map(|m| m.tolerance)
        }
        Kind::Capacitor => units::parse_capacitor_marking(value_text)
            .ok()
            .and_then(|(_, t)| t),
        Kind::Diode => None,
    }
}

/// The usual tolerance of a part of this kind and technology (`common practice`).
pub fn default_tolerance(kind: Kind, tech: Technology) -> Tolerance {
    match (kind, tech) {
        (Kind::Diode, _) => percent(0.0),
        (Kind::Trimmer, _) => percent(10.0),
        (_, Technology::MetalFilm | Technology::ThickFilm) => percent(1.0),
        (_, Technology::CarbonFilm | Technology::Wirewound) => percent(5.0),
        (_, Technology::C0g | Technology::Film) => percent(5.0),
        (_, Technology::X7r | Technology::Tantalum) => percent(10.0),
        (_, Technology::Y5v) => Tolerance {
            minus: Ratio::from_percent(20.0).unwrap_or(Ratio::ZERO),
            plus: Ratio::from_percent(80.0).unwrap_or(Ratio::ZERO),
        },
        (_, Technology::Electrolytic) => percent(20.0),
        (Kind::Resistor, Technology::Other) => percent(5.0),
        (_, Technology::Other) => percent(20.0),
    }
}

/// The usual package of a kind (`common practice`); diodes have none by default.
pub fn default_package(kind: Kind) -> &'static str {
    match kind {
        Kind::Resistor => "axial",
        Kind::Capacitor => "radial",
        Kind::Trimmer => "trimmer",
        Kind::Diode => "",
    }
}

/// The usual power rating of a kind: 0.25 W for a through-hole resistor (`common practice`).
pub fn default_power(kind: Kind) -> Option<Watts> {
    (kind == Kind::Resistor).then(|| Watts::from_base(250_000))
}

/// Whether a technology belongs to a kind.
pub fn technology_fits(kind: Kind, tech: Technology) -> bool {
    use Technology as T;
    match kind {
        Kind::Resistor => matches!(
            tech,
            T::MetalFilm | T::CarbonFilm | T::ThickFilm | T::Wirewound | T::Other
        ),
        Kind::Capacitor => matches!(
            tech,
            T::C0g | T::X7r | T::Y5v | T::Film | T::Electrolytic | T::Tantalum | T::Other
        ),
        Kind::Trimmer => matches!(tech, T::CarbonFilm | T::Wirewound | T::Other),
        Kind::Diode => tech == T::Other,
    }
}

impl PartText {
    /// Every field's text checked before it is read: no control characters, no more than the
    /// field's cap (see `text::MAX_*`). A field that fails is reported with a short excerpt and
    /// not read further, so a huge or hostile cell is never echoed or parsed whole.
    fn check_texts(&self) -> Vec<FieldError> {
        let fields: [(Field, Option<&str>, usize); 10] = [
            (Field::Kind, self.kind.as_deref(), text::MAX_SHORT),
            (Field::Value, Some(self.value.as_str()), text::MAX_VALUE),
            (Field::Tolerance, self.tolerance.as_deref(), text::MAX_SHORT),
            (
                Field::Technology,
                self.technology.as_deref(),
                text::MAX_SHORT,
            ),
            (Field::Volts, self.volts.as_deref(), text::MAX_SHORT),
            (Field::Watts, self.watts.as_deref(), text::MAX_SHORT),
            (Field::Package, self.package.as_deref(), text::MAX_PACKAGE),
            (Field::Bin, self.bin.as_deref(), text::MAX_BIN),
            (Field::Low, self.low.as_deref(), text::MAX_SHORT),
            (Field::Note, self.note.as_deref(), text::MAX_NOTE),
        ];
        fields
            .into_iter()
            .filter_map(|(field, t, max)| {
                let t = t?;
                text::check_field(&format!("the {}", field.column()), t, max)
                    .err()
                    .map(|message| FieldError { field, message })
            })
            .collect()
    }

    /// Resolve into a complete description, filling defaults; every problem is returned.
    pub fn resolve(&self) -> Result<PartSpec, Vec<FieldError>> {
        let unsafe_text = self.check_texts();
        if !unsafe_text.is_empty() {
            return Err(unsafe_text);
        }
        let mut errors = Vec::new();
        let mut fail = |field: Field, message: String| errors.push(FieldError { field, message });
        let value_text = self.value.trim();

        let kind = match given(&self.kind) {
            Some(k) => match k.parse::<Kind>() {
                Ok(k) => k,
                Err(e) => {
                    fail(Field::Kind, e.to_string());
                    Kind::Resistor
                }
            },
            None => text::infer_kind(value_text),
        };

        let value = match kind {
            Kind::Diode => Value::None,
            _ if value_text.is_empty() => {
                fail(Field::Value, "a value is required".into());
                Value::None
            }
            _ if text::unit_contradicts(kind, value_text) => {
                fail(
                    Field::Value,
                    format!(
                        "{} is written as a {} value, but the kind is {kind}; fix the value or \
                         the kind",
                        text::excerpt(value_text),
                        text::infer_kind(value_text)
                    ),
                );
                Value::None
            }
            Kind::Resistor | Kind::Trimmer => match units::parse_resistance(value_text) {
                Ok(r) if r.is_positive() => Value::Resistance(r),
                Ok(_) => {
                    fail(Field::Value, "a resistance must be above zero".into());
                    Value::None
                }
                Err(e) => {
                    fail(Field::Value, e.to_string());
                    Value::None
                }
            },
            Kind::Capacitor => match units::parse_capacitance(value_text) {
                Ok(c) if c.is_positive() => Value::Capacitance(c),
                Ok(_) => {
                    fail(Field::Value, "a capacitance must be above zero".into());
                    Value::None
                }
                Err(e) => {
                    fail(Field::Value, e.to_string());
                    Value::None
                }
            },
        };

        let technology = match given(&self.technology) {
            Some(t) => match t.parse::<Technology>() {
                Ok(t) if technology_fits(kind, t) => t,
                Ok(t) => {
                    fail(
                        Field::Technology,
                        format!("{} is not a technology of a {kind}", t.label()),
                    );
                    t
                }
                Err(e) => {
                    fail(Field::Technology, e.to_string());
                    Technology::Other
                }
            },
            None => match (kind, value) {
                // A colour-banded or chip-marked part says what it is made of.
                (Kind::Resistor, _) => crate::model::marked_resistor(value_text)
                    .map_or(Technology::MetalFilm, |m| m.technology),
                (Kind::Capacitor, Value::Capacitance(c)) => default_capacitor_technology(c),
                _ => Technology::Other,
            },
        };

        let tolerance = match given(&self.tolerance) {
            Some(t) => match text::parse_tolerance(t) {
                Ok(t) => t,
                Err(e) => {
                    fail(Field::Tolerance, e.to_string());
                    default_tolerance(kind, technology)
                }
            },
            // A value read off the part may carry its own tolerance: the tolerance band of a
            // colour code (IEC 60062), or the letter after a capacitor code (`104K`).
            None => marked_tolerance(kind, value_text)
                .unwrap_or_else(|| default_tolerance(kind, technology)),
        };

        let volts = match given(&self.volts) {
            Some(v) if is_none_word(v) => None,
            Some(v) => match units::parse_voltage(v) {
                Ok(v) if v.is_positive() => Some(v),
                Ok(_) => {
                    fail(Field::Volts, "a voltage rating must be above zero".into());
                    None
                }
                Err(e) => {
                    fail(Field::Volts, e.to_string());
                    None
                }
            },
            None => None,
        };

        let watts = match given(&self.watts) {
            Some(w) if is_none_word(w) => None,
            Some(w) => match units::parse_power(w) {
                Ok(w) if w.is_positive() => Some(w),
                Ok(_) => {
                    fail(Field::Watts, "a power rating must be above zero".into());
                    None
                }
                Err(e) => {
                    fail(Field::Watts, e.to_string());
                    None
                }
            },
            None => default_power(kind),
        };

        let package = match (kind, given(&self.package)) {
            (Kind::Diode, p) => {
                let joined = [value_text, p.unwrap_or("")]
                    .iter()
                    .filter(|s| !s.is_empty())
                    .copied()
                    .collect::<Vec<_>>()
                    .join(" ");
                if joined.is_empty() {
                    fail(
                        Field::Value,
                        "a diode needs its type (e.g. 1N4148) as its value or package".into(),
                    );
                }
                joined
            }
            (_, Some(p)) => p.to_string(),
            (_, None) => default_package(kind).to_string(),
        };

        let low = match given(&self.low) {
            Some(l) if is_none_word(l) => None,
            Some(l) => match l.parse::<i64>() {
                Ok(n) if n >= 0 => Some(n),
                _ => {
                    fail(
                        Field::Low,
                        format!(
                            "cannot read {l:?} as a low-stock level (a whole number, 0 or more)"
                        ),
                    );
                    None
                }
            },
            None => None,
        };

        if !errors.is_empty() {
            return Err(errors);
        }
        Ok(PartSpec {
            kind,
            value,
            tolerance,
            technology,
            package,
            bin: given(&self.bin).unwrap_or("").to_string(),
            voltage_rating: volts,
            power_rating: watts,
            low_stock: low,
            note: given(&self.note).unwrap_or("").to_string(),
            given_volts: given(&self.volts).is_some(),
            given_watts: given(&self.watts).is_some(),
            given_low: given(&self.low).is_some(),
            given_note: given(&self.note).is_some(),
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn resolve(value: &str) -> PartSpec {
        PartText {
            value: value.into(),
            ..Default::default()
        }
        .resolve()
        .expect("resolves")
    }

    #[test]
    fn resistor_defaults() {
        // common practice: a drawer resistor is 1 % metal film, axial, 0.25 W.
        let s = resolve("4.7k");
        assert_eq!(s.kind, Kind::Resistor);
        assert_eq!(s.value.base(), 4_700_000);
        assert_eq!(s.technology, Technology::MetalFilm);
        assert_eq!(text::tolerance_text(s.tolerance), "1%");
        assert_eq!(s.package, "axial");
        assert_eq!(s.power_rating, Some(Watts::from_base(250_000)));
        assert!(!s.given_watts);
    }

    #[test]
    fn capacitor_technology_follows_value() {
        // common practice: C0G below 1 nF, X7R up to 1 µF, electrolytic above.
        let cases = [
            ("470p", Technology::C0g, "5%"),
            ("100n", Technology::X7r, "10%"),
            ("1u", Technology::X7r, "10%"),
            ("10u", Technology::Electrolytic, "20%"),
        ];
        for (v, tech, tol) in cases {
            let s = resolve(v);
            assert_eq!(s.kind, Kind::Capacitor, "{v}");
            assert_eq!(s.technology, tech, "{v}");
            assert_eq!(text::tolerance_text(s.tolerance), tol, "{v}");
            assert_eq!(s.power_rating, None);
        }
    }

    #[test]
    fn every_bad_field_is_reported() {
        let t = PartText {
            value: "4x7".into(),
            kind: Some("resistor".into()),
            technology: Some("x7r".into()),
            tolerance: Some("lots".into()),
            low: Some("-3".into()),
            ..Default::default()
        };
        let errs = t.resolve().expect_err("bad");
        let fields: Vec<Field> = errs.iter().map(|e| e.field).collect();
        assert_eq!(
            fields,
            vec![
                Field::Value,
                Field::Technology,
                Field::Tolerance,
                Field::Low
            ]
        );
    }

    #[test]
    fn diode_type_goes_with_package() {
        let t = PartText {
            value: "1N4148".into(),
            kind: Some("diode".into()),
            package: Some("DO-35".into()),
            ..Default::default()
        };
        let s = t.resolve().expect("diode");
        assert_eq!(s.value, Value::None);
        assert_eq!(s.package, "1N4148 DO-35");
        let t = PartText {
            kind: Some("diode".into()),
            ..Default::default()
        };
        assert!(t.resolve().is_err());
    }

    #[test]
    fn unsafe_or_contradicting_text_is_refused_by_field() {
        let t = PartText {
            value: "4k7".into(),
            kind: Some("capacitor".into()),
            ..Default::default()
        };
        let errs = t.resolve().expect_err("4k7 is not a capacitance");
        assert_eq!(errs[0].field, Field::Value);
        assert!(errs[0].message.contains("resistor value"), "{:?}", errs);
        let t = PartText {
            value: "1k".into(),
            bin: Some("A1\u{1b}[2J".into()),
            note: Some("x".repeat(100_000)),
            ..Default::default()
        };
        let errs = t.resolve().expect_err("unsafe");
        let fields: Vec<Field> = errs.iter().map(|e| e.field).collect();
        assert_eq!(fields, vec![Field::Bin, Field::Note]);
        assert!(errs.iter().all(|e| e.message.len() < 300), "{errs:?}");
    }

    #[test]
    fn none_means_unknown_rating() {
        let t = PartText {
            value: "10k".into(),
            watts: Some("none".into()),
            ..Default::default()
        };
        let s = t.resolve().expect("ok");
        assert_eq!(s.power_rating, None);
        assert!(s.given_watts);
    }
}
