//! Timer families as data: the figures of a bipolar and a CMOS 555-type timer that the checks
//! and the tolerance analysis use, each with where it came from.
//!
//! Every figure here is recalled, not quoted from a datasheet, so each says `from memory` (or
//! `common practice` for a working rule of the trade) and the report prints that label beside it.
//! Users override any figure by its key ([`Family::set`]); an overridden figure says `set by user`.
//! Owns no I/O and no parsing of text.

use crate::units::{Amps, Hertz, Ratio, Volts};
use serde::Serialize;

/// Where a figure came from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Provenance {
    /// Recalled by us; no source cited. Check it against the datasheet of the part you fit.
    FromMemory,
    /// A working rule of the trade with no single citable source.
    CommonPractice,
    /// Given on the command line.
    SetByUser,
}

impl Provenance {
    /// The label printed beside the figure.
    pub fn label(self) -> &'static str {
        match self {
            Provenance::FromMemory => "from memory",
            Provenance::CommonPractice => "common practice",
            Provenance::SetByUser => "set by user",
        }
    }
}

/// One figure of a family: a value in SI units (ratios as fractions, drift per volt or per °C).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Figure {
    /// The value, in SI units (see `unit`).
    pub value: f64,
    /// What the value is measured in: `V`, `A`, `Hz`, `ratio`, `ratio/V`, `ratio/°C`.
    pub unit: &'static str,
    /// Where the value came from.
    pub provenance: Provenance,
    /// Whether `value` is a typical figure or a data-sheet limit.
    pub kind: FigureKind,
    /// The data-sheet limit (the worst value a part may show), when one is known; `--guarantee`
    /// uses it ([`Family::at_limits`]). `None` where the typical figure is all we have.
    pub limit: Option<f64>,
}

/// Whether a figure is what a typical part shows or what every part is specified to meet.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum FigureKind {
    /// What a typical part shows.
    Typical,
    /// A limit every part meets.
    Limit,
}

impl FigureKind {
    /// The word printed beside the figure.
    pub fn label(self) -> &'static str {
        match self {
            FigureKind::Typical => "typical",
            FigureKind::Limit => "limit",
        }
    }
}

/// A typical figure recalled from data sheets, with its limit when one is recalled too.
const fn mem(value: f64, unit: &'static str, limit: Option<f64>) -> Figure {
    Figure {
        value,
        unit,
        provenance: Provenance::FromMemory,
        kind: FigureKind::Typical,
        limit,
    }
}

/// A figure that is itself a limit (a rating or a range), from memory.
const fn lim(value: f64, unit: &'static str) -> Figure {
    Figure {
        value,
        unit,
        provenance: Provenance::FromMemory,
        kind: FigureKind::Limit,
        limit: None,
    }
}

/// A figure key that no family has, or a value that makes no sense for it.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum FamilyError {
    /// The key names no figure.
    #[error("no timer figure is called {key:?}; known figures: {known}")]
    UnknownFigure {
        /// The key given.
        key: String,
        /// The known keys, comma-separated.
        known: String,
    },
    /// Negative, zero where it must be positive, or not finite.
    #[error("figure {key} cannot be {value}")]
    BadValue {
        /// The key.
        key: String,
        /// The value given.
        value: f64,
    },
}

/// The figures of one timer family. Ratios are fractions (0.01 is 1 %).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Family {
    /// `bipolar` or `cmos`.
    pub name: &'static str,
    /// Lowest supply it is specified for, volts.
    pub supply_min: Figure,
    /// Highest supply, volts.
    pub supply_max: Figure,
    /// Current drawn by the threshold pin, amperes.
    pub threshold_current: Figure,
    /// Current drawn by the trigger pin, amperes.
    pub trigger_current: Figure,
    /// Largest current the discharge pin should sink, amperes.
    pub discharge_max: Figure,
    /// Highest practical astable frequency, hertz.
    pub max_freq: Figure,
    /// Initial timing error of a one-shot (chip alone, ideal parts), fraction.
    pub error_one_shot: Figure,
    /// Initial timing error of an astable, fraction.
    pub error_astable: Figure,
    /// Timing drift with temperature, one-shot, fraction per °C.
    pub drift_temp_one_shot: Figure,
    /// Timing drift with temperature, astable, fraction per °C.
    pub drift_temp_astable: Figure,
    /// Timing drift with supply, one-shot, fraction per volt.
    pub drift_supply_one_shot: Figure,
    /// Timing drift with supply, astable, fraction per volt.
    pub drift_supply_astable: Figure,
    /// How far below Vcc the output sits when high at light load, volts.
    pub output_high_drop: Figure,
    /// Voltage left across the discharge transistor when it is on (saturation), volts.
    pub discharge_saturation: Figure,
}

/// Every figure key, in the order [`Family::figures`] lists them.
pub const FIGURE_KEYS: [&str; 14] = [
    "supply_min",
    "supply_max",
    "threshold_current",
    "trigger_current",
    "discharge_max",
    "max_freq",
    "error_one_shot",
    "error_astable",
    "drift_temp_one_shot",
    "drift_temp_astable",
    "drift_supply_one_shot",
    "drift_supply_astable",
    "output_high_drop",
    "discharge_saturation",
];

/// The families we know, by name.
pub const FAMILY_NAMES: [&str; 2] = ["bipolar", "cmos"];

/// The family called `name` (`bipolar` or `cmos`, any case).
pub fn family_by_name(name: &str) -> Option<Family> {
    match name.trim().to_ascii_lowercase().as_str() {
        "bipolar" => Some(Family::bipolar()),
        "cmos" => Some(Family::cmos()),
        _ => None,
    }
}

impl Family {
    /// The classic bipolar 555. All figures from memory (typical datasheet values).
    pub fn bipolar() -> Self {
        Self {
            name: "bipolar",
            supply_min: lim(4.5, "V"),
            supply_max: lim(16.0, "V"),
            // Typical ~0.1 µA; data-sheet maxima are higher (about 0.25 µA).
            threshold_current: mem(0.1e-6, "A", Some(0.25e-6)),
            trigger_current: mem(0.5e-6, "A", Some(0.9e-6)),
            discharge_max: lim(50e-3, "A"),
            max_freq: lim(100e3, "Hz"),
            error_one_shot: mem(0.01, "ratio", Some(0.03)),
            error_astable: mem(0.0225, "ratio", Some(0.05)),
            drift_temp_one_shot: mem(50e-6, "ratio/°C", Some(150e-6)),
            drift_temp_astable: mem(150e-6, "ratio/°C", Some(500e-6)),
            drift_supply_one_shot: mem(0.001, "ratio/V", Some(0.005)),
            drift_supply_astable: mem(0.003, "ratio/V", Some(0.01)),
            // Light load (a few mA); near 2 V at 100 mA.
            output_high_drop: mem(1.7, "V", Some(2.25)),
            // At the few mA of a timing network; up to about 0.4 V at the data sheet's 15 mA.
            discharge_saturation: mem(0.1, "V", Some(0.4)),
        }
    }

    /// A CMOS 555 (the low-power versions). All figures from memory (typical datasheet values).
    pub fn cmos() -> Self {
        Self {
            name: "cmos",
            supply_min: lim(2.0, "V"),
            supply_max: lim(15.0, "V"),
            threshold_current: mem(10e-12, "A", Some(100e-12)),
            trigger_current: mem(10e-12, "A", Some(100e-12)),
            discharge_max: lim(10e-3, "A"),
            max_freq: lim(1e6, "Hz"),
            error_one_shot: mem(0.01, "ratio", Some(0.03)),
            error_astable: mem(0.02, "ratio", Some(0.05)),
            drift_temp_one_shot: mem(75e-6, "ratio/°C", Some(250e-6)),
            drift_temp_astable: mem(75e-6, "ratio/°C", Some(250e-6)),
            drift_supply_one_shot: mem(0.003, "ratio/V", Some(0.01)),
            drift_supply_astable: mem(0.003, "ratio/V", Some(0.01)),
            // Light load; the output stage is a MOSFET, so the drop grows with the load current.
            output_high_drop: mem(0.1, "V", Some(0.3)),
            discharge_saturation: mem(0.05, "V", Some(0.2)),
        }
    }

    /// Every figure with its key, in a fixed order.
    pub fn figures(&self) -> Vec<(&'static str, &Figure)> {
        vec![
            ("supply_min", &self.supply_min),
            ("supply_max", &self.supply_max),
            ("threshold_current", &self.threshold_current),
            ("trigger_current", &self.trigger_current),
            ("discharge_max", &self.discharge_max),
            ("max_freq", &self.max_freq),
            ("error_one_shot", &self.error_one_shot),
            ("error_astable", &self.error_astable),
            ("drift_temp_one_shot", &self.drift_temp_one_shot),
            ("drift_temp_astable", &self.drift_temp_astable),
            ("drift_supply_one_shot", &self.drift_supply_one_shot),
            ("drift_supply_astable", &self.drift_supply_astable),
            ("output_high_drop", &self.output_high_drop),
            ("discharge_saturation", &self.discharge_saturation),
        ]
    }

    fn figure_mut(&mut self, key: &str) -> Option<&mut Figure> {
        Some(match key {
            "supply_min" => &mut self.supply_min,
            "supply_max" => &mut self.supply_max,
            "threshold_current" => &mut self.threshold_current,
            "trigger_current" => &mut self.trigger_current,
            "discharge_max" => &mut self.discharge_max,
            "max_freq" => &mut self.max_freq,
            "error_one_shot" => &mut self.error_one_shot,
            "error_astable" => &mut self.error_astable,
            "drift_temp_one_shot" => &mut self.drift_temp_one_shot,
            "drift_temp_astable" => &mut self.drift_temp_astable,
            "drift_supply_one_shot" => &mut self.drift_supply_one_shot,
            "drift_supply_astable" => &mut self.drift_supply_astable,
            "output_high_drop" => &mut self.output_high_drop,
            "discharge_saturation" => &mut self.discharge_saturation,
            _ => return None,
        })
    }

    /// The unit of the figure called `key`, if there is one.
    pub fn unit_of(&self, key: &str) -> Option<&'static str> {
        self.figures()
            .into_iter()
            .find(|(k, _)| *k == key)
            .map(|(_, f)| f.unit)
    }

    /// Override one figure (value in SI units); it is then labelled `set by user`.
    pub fn set(&mut self, key: &str, value: f64) -> Result<(), FamilyError> {
        let known = self
            .figures()
            .iter()
            .map(|(k, _)| *k)
            .collect::<Vec<_>>()
            .join(", ");
        let fig = self
            .figure_mut(key)
            .ok_or_else(|| FamilyError::UnknownFigure {
                key: key.to_string(),
                known,
            })?;
        let must_be_positive = matches!(key, "supply_max" | "discharge_max" | "max_freq");
        if !value.is_finite() || value < 0.0 || (must_be_positive && value == 0.0) {
            return Err(FamilyError::BadValue {
                key: key.to_string(),
                value,
            });
        }
        fig.value = value;
        fig.provenance = Provenance::SetByUser;
        fig.kind = FigureKind::Limit;
        fig.limit = None;
        Ok(())
    }

    /// The same family with every typical figure replaced by its data-sheet limit where one is
    /// known (from memory, like the typical figures): what `--guarantee` designs against. A
    /// figure with no recalled limit keeps its typical value and says so in [`Family::typical_only`].
    pub fn at_limits(&self) -> Family {
        let mut f = self.clone();
        for key in FIGURE_KEYS {
            if let Some(fig) = f.figure_mut(key)
                && fig.kind == FigureKind::Typical
                && let Some(l) = fig.limit
            {
                fig.value = l;
                fig.kind = FigureKind::Limit;
            }
        }
        f
    }

    /// The keys of the figures that are still typical values (no limit recalled).
    pub fn typical_only(&self) -> Vec<&'static str> {
        self.figures()
            .into_iter()
            .filter(|(_, f)| f.kind == FigureKind::Typical)
            .map(|(k, _)| k)
            .collect()
    }

    /// Supply range as volts.
    pub fn supply_range(&self) -> (Volts, Volts) {
        (
            Volts::from_si(self.supply_min.value).unwrap_or_default(),
            Volts::from_si(self.supply_max.value).unwrap_or_default(),
        )
    }

    /// Discharge-pin current limit.
    pub fn discharge_limit(&self) -> Amps {
        Amps::from_si(self.discharge_max.value).unwrap_or_default()
    }

    /// Highest practical frequency.
    pub fn max_frequency(&self) -> Hertz {
        Hertz::from_si(self.max_freq.value).unwrap_or_default()
    }

    /// The chip's own timing error bound (a fraction either way) for a one-shot or an astable:
    /// initial error plus temperature drift over `temp_span_c` °C away from 25 °C plus supply
    /// drift over `supply_swing` volts away from the nominal supply. Linear sum, worst case.
    pub fn timer_error(&self, one_shot: bool, temp_span_c: f64, supply_swing: Volts) -> Ratio {
        let (e, dt, dv) = if one_shot {
            (
                self.error_one_shot.value,
                self.drift_temp_one_shot.value,
                self.drift_supply_one_shot.value,
            )
        } else {
            (
                self.error_astable.value,
                self.drift_temp_astable.value,
                self.drift_supply_astable.value,
            )
        };
        let total = e + dt * temp_span_c.abs() + dv * supply_swing.si().abs();
        Ratio::from_si(total).unwrap_or_default()
    }

    /// Whether the output swings close enough to the supply for the output-driven square wave
    /// (high drop under 0.5 V, common practice).
    pub fn rail_to_rail(&self) -> bool {
        self.output_high_drop.value < 0.5
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn both_families_are_known_by_name() {
        for name in FAMILY_NAMES {
            let f = family_by_name(name).expect("family");
            assert_eq!(f.name, name);
            assert!(f.supply_min.value < f.supply_max.value);
        }
        assert!(family_by_name("tube").is_none());
    }

    #[test]
    fn cmos_draws_far_less_bias_than_bipolar() {
        // DESIGN "The physics": bipolar parts draw far more threshold current than CMOS (from memory).
        assert!(
            Family::bipolar().threshold_current.value
                > 1000.0 * Family::cmos().threshold_current.value
        );
        assert!(Family::cmos().rail_to_rail());
        assert!(!Family::bipolar().rail_to_rail());
    }

    #[test]
    fn set_overrides_and_relabels() {
        let mut f = Family::bipolar();
        f.set("max_freq", 500e3).expect("set");
        assert_eq!(f.max_freq.value, 500e3);
        assert_eq!(f.max_freq.provenance, Provenance::SetByUser);
        assert!(matches!(
            f.set("warp", 1.0),
            Err(FamilyError::UnknownFigure { .. })
        ));
        assert!(matches!(
            f.set("max_freq", 0.0),
            Err(FamilyError::BadValue { .. })
        ));
        assert!(f.set("supply_min", -1.0).is_err());
    }

    #[test]
    fn limits_replace_typical_figures() {
        let f = Family::bipolar();
        assert_eq!(f.threshold_current.kind, FigureKind::Typical);
        let l = f.at_limits();
        // from memory: bipolar threshold current 0.1 µA typical, 0.25 µA maximum.
        assert_eq!(l.threshold_current.value, 0.25e-6);
        assert_eq!(l.threshold_current.kind, FigureKind::Limit);
        assert!(l.error_astable.value > f.error_astable.value);
        assert!(l.typical_only().is_empty(), "{:?}", l.typical_only());
        assert_eq!(f.figures().len(), FIGURE_KEYS.len());
        for ((k, _), want) in f.figures().iter().zip(FIGURE_KEYS) {
            assert_eq!(*k, want);
        }
        // A figure set by the user is taken as given, not replaced.
        let mut u = Family::bipolar();
        u.set("threshold_current", 50e-9).expect("set");
        assert_eq!(u.at_limits().threshold_current.value, 50e-9);
    }

    #[test]
    fn timer_error_sums_initial_and_drift() {
        let f = Family::bipolar();
        let v = Volts::from_si(1.0).expect("volts");
        let e = f.timer_error(false, 25.0, v).si();
        let want = 0.0225 + 150e-6 * 25.0 + 0.003;
        assert!((e - want).abs() < 1e-9, "{e} vs {want}");
        assert!((f.timer_error(true, 0.0, Volts::ZERO).si() - 0.01).abs() < 1e-9);
    }
}
