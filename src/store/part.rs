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
