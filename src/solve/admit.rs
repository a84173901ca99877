//! The electrical gate every candidate design passes: [`admissible`].
//!
//! The search treats every Error finding of the timing checks (`timing::check_stage`) as a hard
//! constraint; Warnings, Cautions and Notes travel with the design into the report. This module
//! only adapts: the checks themselves, and the family figures, live in `timing`.

use crate::model::{Part, Technology};
pub use crate::timing::{CapFacts, Family, Finding, Form, Severity, Stage, family_by_name};

/// What the checks and the evaluator know of a capacitor network, the one rule the search and
/// the brute force share: its least suitable dielectric (electrolytic or tantalum, then Y5V and
/// unknown, then X7R, then C0G and film), its lowest voltage rating (unknown when any piece's is
/// unknown), and its widest tolerance. `None` for no pieces.
pub fn network_cap_facts<'a>(pieces: impl IntoIterator<Item = &'a Part>) -> Option<CapFacts> {
    let rank = |t: Technology| match t {
        Technology::C0g | Technology::Film => 0,
        Technology::X7r => 1,
        Technology::Tantalum | Technology::Electrolytic => 3,
        _ => 2,
    };
    let mut facts: Option<CapFacts> = None;
    let mut unknown_rating = false;
    for part in pieces {
        unknown_rating |= part.voltage_rating.is_none();
        facts = Some(match facts {
            None => CapFacts {
                technology: part.technology,
                voltage_rating: part.voltage_rating,
                tolerance: part.tolerance,
            },
            Some(f) => CapFacts {
                technology: if rank(part.technology) > rank(f.technology) {
                    part.technology
                } else {
                    f.technology
                },
                voltage_rating: match (f.voltage_rating, part.voltage_rating) {
                    (Some(a), Some(b)) => Some(a.min(b)),
                    (a, b) => a.or(b),
                },
                tolerance: if part.tolerance.widest() > f.tolerance.widest() {
                    part.tolerance
                } else {
                    f.tolerance
                },
            },
        });
    }
    facts.map(|mut f| {
        if unknown_rating {
            f.voltage_rating = None;
        }
        f
    })
}

/// Every remark the timing checks make on a stage.
pub fn review(stage: &Stage, family: &Family) -> Vec<Finding> {
    crate::timing::check_stage(stage, family)
}

/// Whether a stage may be built at all: no Error finding. The search treats this as a hard
/// constraint.
pub fn admissible(stage: &Stage, family: &Family) -> bool {
    !crate::timing::has_error(&review(stage, family))
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
    use crate::timing::{Conditions, Steering};
    use crate::units::{Farads, Ohms, Volts};

    fn stage(form: Form, r1: f64, r2: Option<f64>, c: f64, vcc: f64) -> Stage {
        Stage {
            form,
            r1: Ohms::from_si(r1).expect("r1"),
            r2: r2.map(|r| Ohms::from_si(r).expect("r2")),
            c: Farads::from_si(c).expect("c"),
            cap: None,
            conditions: Conditions::ideal(Volts::from_si(vcc).expect("vcc")),
            steering: Steering::default(),
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
