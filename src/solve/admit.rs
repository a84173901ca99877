//! The electrical gate every candidate design passes: [`admissible`].
//!
//! STAND-IN until the timing work lands. The types below copy the shape agreed with the timing
//! work (`timing::family::Family`, `timing::design::{Form, CapFacts, Stage}`,
//! `timing::checks::{Severity, Finding, check_stage}`); the limits are deliberately few and
//! labelled. After the merge, replace the stand-in types by
//! `pub use crate::timing::{Family, family_by_name, Form, CapFacts, Stage, Severity, Finding};`
//! and the body of [`review`] by `crate::timing::check_stage(stage, family)`; the search calls
//! only [`admissible`] and [`review`], so nothing else changes.

use crate::store::Technology;
use crate::timing::Conditions;
use crate::units::{Farads, Ohms, Tolerance, Volts};

/// A timer family's limits (stand-in; see the module header).
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Family {
    /// "bipolar" or "cmos".
    pub name: &'static str,
    /// Lowest and highest supply, volts.
    pub supply: (f64, f64),
    /// Threshold-pin bias current, amperes.
    pub threshold_current: f64,
    /// Highest current the discharge pin should sink, amperes.
    pub discharge_limit: f64,
    /// Highest useful output frequency, hertz.
    pub max_frequency: f64,
    /// Initial timing error of the chip itself (one-shot, astable), as ratios.
    pub initial_error: (f64, f64),
    /// How far below the supply the output sits when high, volts.
    pub output_high_drop: f64,
}

impl Family {
    /// A bipolar 555-type timer. Figures from memory (typical data-sheet values), kept
    /// deliberately round: supply 4.5–16 V, threshold current 0.25 µA, discharge sink 15 mA,
    /// 500 kHz, initial error 1 % (one-shot) and 2.25 % (astable), output high 1.7 V below the
    /// supply.
    pub fn bipolar() -> Self {
        Self {
            name: "bipolar",
            supply: (4.5, 16.0),
            threshold_current: 0.25e-6,
            discharge_limit: 15e-3,
            max_frequency: 500e3,
            initial_error: (0.01, 0.0225),
            output_high_drop: 1.7,
        }
    }

    /// A CMOS 555-type timer. Figures from memory: supply 2–15 V, threshold current 10 pA,
    /// discharge sink 10 mA, 1 MHz, initial error 2 % (one-shot and astable), output close to
    /// the rails (0.1 V).
    pub fn cmos() -> Self {
        Self {
            name: "cmos",
            supply: (2.0, 15.0),
            threshold_current: 10e-12,
            discharge_limit: 10e-3,
            max_frequency: 1e6,
            initial_error: (0.02, 0.02),
            output_high_drop: 0.1,
        }
    }
}

/// The family by name: "bipolar" or "cmos".
pub fn family_by_name(name: &str) -> Option<Family> {
    match name.trim().to_ascii_lowercase().as_str() {
        "bipolar" => Some(Family::bipolar()),
        "cmos" => Some(Family::cmos()),
        _ => None,
    }
}

/// Circuit form of a timer stage.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Form {
    /// One-shot.
    Monostable,
    /// Classic astable.
    Astable,
    /// Diode-steered astable.
    Steered,
    /// Output-driven square wave.
    Square,
}

/// What is known of the timing capacitor.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct CapFacts {
    /// Dielectric (for a network: the least suitable piece's).
    pub technology: Technology,
    /// Voltage rating (for a network: the lowest piece's), if known.
    pub voltage_rating: Option<Volts>,
    /// Tolerance (for a network: the widest piece's).
    pub tolerance: Tolerance,
}

/// One timer stage as the checks see it.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Stage {
    /// Circuit form.
    pub form: Form,
    /// Monostable R, astable R1, steered Ra (charge path), square R.
    pub r1: Ohms,
    /// Astable R2, steered Rb (discharge path); None otherwise.
    pub r2: Option<Ohms>,
    /// Timing capacitance.
    pub c: Farads,
    /// What is known of the capacitor.
    pub cap: Option<CapFacts>,
    /// Supply and refinements.
    pub conditions: Conditions,
}

/// How serious a finding is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Severity {
    /// The design must not be built: the search treats it as infeasible.
    Error,
    /// Works, with a drawback worth knowing.
    Warning,
    /// A safety caution.
    Caution,
}

/// One remark on a stage.
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize)]
pub struct Finding {
    /// How serious.
    pub severity: Severity,
    /// Stable short code, e.g. "discharge-current".
    pub code: &'static str,
    /// Plain explanation.
    pub message: String,
}

fn finding(severity: Severity, code: &'static str, message: String) -> Finding {
    Finding {
        severity,
        code,
        message,
    }
}

/// Every remark on a stage (stand-in for `timing::check_stage`).
pub fn review(stage: &Stage, family: &Family) -> Vec<Finding> {
    let mut out = Vec::new();
    let vcc = stage.conditions.vcc.si();
    let (smin, smax) = family.supply;
    if vcc < smin || vcc > smax {
        out.push(finding(
            Severity::Error,
            "supply-range",
            format!(
                "supply {vcc} V is outside the {} family's {smin}–{smax} V",
                family.name
            ),
        ));
    }
    let r1 = stage.r1.si();
    let c = stage.c.si();
    if r1 <= 0.0 || c <= 0.0 {
        out.push(finding(
            Severity::Error,
            "zero-part",
            "a timing resistor or capacitor is zero".into(),
        ));
        return out;
    }
    // The discharge pin shorts the lower end of R1 (Ra, R) to ground: Vcc/R1 flows through it.
    if stage.form != Form::Square && vcc / r1 > family.discharge_limit {
        out.push(finding(
            Severity::Error,
            "discharge-current",
            format!(
                "{:.1} mA through the discharge pin (limit {:.0} mA): raise R1",
                vcc / r1 * 1e3,
                family.discharge_limit * 1e3
            ),
        ));
    }
    // Charging current at the threshold must dwarf the threshold bias current (common practice:
    // at least ten times).
    let charge_r = match stage.form {
        Form::Astable => r1 + stage.r2.map_or(0.0, Ohms::si),
        _ => r1,
    };
    let i_at_threshold = vcc / 3.0 / charge_r;
    if i_at_threshold < 10.0 * family.threshold_current {
        out.push(finding(
            Severity::Error,
            "charge-resistance",
            format!(
                "charging resistance {} is too high for the threshold bias current",
                crate::units::format_sig(charge_r, 3, "Ω")
            ),
        ));
    }
    let f = match stage.conditions.factors() {
        Ok(f) => f,
        Err(e) => {
            out.push(finding(Severity::Error, "conditions", e.to_string()));
            return out;
        }
    };
    let r2 = stage.r2.map_or(0.0, Ohms::si);
    let period = match stage.form {
        Form::Monostable => None,
        Form::Astable => Some(c * (f.charge * (r1 + r2) + f.discharge * r2)),
        Form::Steered => Some(c * (f.steered_charge * r1 + f.steered_discharge * r2)),
        Form::Square => Some(c * r1 * (f.square_high + f.square_low)),
    };
    if let Some(period) = period {
        if 1.0 / period > family.max_frequency {
            out.push(finding(
                Severity::Error,
                "max-frequency",
                format!(
                    "{} is above the {} family's {}",
                    crate::units::format_sig(1.0 / period, 3, "Hz"),
                    family.name,
                    crate::units::format_sig(family.max_frequency, 3, "Hz")
                ),
            ));
        }
    }
    if stage.form == Form::Square && family.output_high_drop > 0.5 {
        out.push(finding(
            Severity::Warning,
            "not-rail-to-rail",
            format!(
                "the {} output is not rail-to-rail: high time is longer than low time",
                family.name
            ),
        ));
    }
    // Stray capacitance of a board is a few picofarads (common practice).
    if c < 100e-12 {
        out.push(finding(
            Severity::Warning,
            "small-capacitor",
            "timing capacitor under 100 pF: board stray capacitance shifts the timing".into(),
        ));
    }
    if let Some(cap) = stage.cap {
        if cap.technology.is_electrolytic() {
            out.push(finding(
                Severity::Warning,
                "electrolytic",
                "electrolytic timing capacitor: leakage and wide tolerance; fit it the right way round".into(),
            ));
        }
        if matches!(cap.technology, Technology::X7r | Technology::Y5v) {
            out.push(finding(
                Severity::Warning,
                "class-2-ceramic",
                "class 2 ceramic timing capacitor: its value drifts with voltage and temperature"
                    .into(),
            ));
        }
        if cap.voltage_rating.is_none() {
            out.push(finding(
                Severity::Warning,
                "unknown-rating",
                "capacitor voltage rating unknown: check it is above the supply".into(),
            ));
        }
    }
    // ½·C·V² above 0.1 J bites (common practice for a handling caution).
    if 0.5 * c * vcc * vcc > 0.1 {
        out.push(finding(
            Severity::Caution,
            "stored-energy",
            "large charged capacitor: discharge it before handling; follow local codes and licensed practice".into(),
        ));
    }
    out
}

/// Whether a stage may be built at all: no Error finding. The search treats this as a hard
/// constraint.
pub fn admissible(stage: &Stage, family: &Family) -> bool {
    !review(stage, family)
        .iter()
        .any(|f| f.severity == Severity::Error)
}

/// The first Error finding, if any (for counting why candidates were refused).
pub fn blocking(stage: &Stage, family: &Family) -> Option<Finding> {
    review(stage, family)
        .into_iter()
        .find(|f| f.severity == Severity::Error)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn stage(form: Form, r1: f64, r2: Option<f64>, c: f64, vcc: f64) -> Stage {
        Stage {
            form,
            r1: Ohms::from_si(r1).expect("r1"),
            r2: r2.map(|r| Ohms::from_si(r).expect("r2")),
            c: Farads::from_si(c).expect("c"),
            cap: None,
            conditions: Conditions::ideal(Volts::from_si(vcc).expect("vcc")),
        }
    }

    #[test]
    fn small_r1_is_refused() {
        let fam = Family::bipolar();
        // 9 V / 100 Ω = 90 mA through the discharge pin: far over the limit.
        assert!(!admissible(
            &stage(Form::Astable, 100.0, Some(10e3), 10e-9, 9.0),
            &fam
        ));
        assert!(admissible(
            &stage(Form::Astable, 10e3, Some(10e3), 10e-9, 9.0),
            &fam
        ));
        let b = blocking(&stage(Form::Monostable, 100.0, None, 1e-6, 9.0), &fam);
        assert_eq!(b.map(|f| f.code), Some("discharge-current"));
    }

    #[test]
    fn supply_outside_family_is_refused() {
        assert!(!admissible(
            &stage(Form::Monostable, 10e3, None, 1e-6, 3.0),
            &Family::bipolar()
        ));
        assert!(admissible(
            &stage(Form::Monostable, 10e3, None, 1e-6, 3.0),
            &Family::cmos()
        ));
    }

    #[test]
    fn huge_charge_resistance_is_refused_for_bipolar_only() {
        let s = stage(Form::Monostable, 10e6, None, 1e-6, 9.0);
        assert!(!admissible(&s, &Family::bipolar()));
        assert!(admissible(&s, &Family::cmos()));
    }
}
