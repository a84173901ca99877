//! The electrical gate every candidate design passes: [`admissible`].
//!
//! The search treats every Error finding of the timing checks (`timing::check_stage`) as a hard
//! constraint; Warnings, Cautions and Notes travel with the design into the report. This module
//! only adapts: the checks themselves, and the family figures, live in `timing`.

pub use crate::timing::{CapFacts, Family, Finding, Form, Severity, Stage, family_by_name};

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
