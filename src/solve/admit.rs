//! The electrical gate every candidate design passes: [`admissible`].
//!
//! The search treats every Error breach of the timing rules as a hard constraint; Warnings,
//! Cautions and Notes travel with the design into the report. The gate ([`admissible`],
//! [`blocking`]) evaluates the rules' predicates only (`timing::first_error`) and formats no
//! text; [`review`] words every finding for a design that is offered. This module only adapts:
//! the rules themselves, and the family figures, live in `timing`.

use crate::model::{Part, Technology};
pub use crate::timing::{Breach, CapFacts, Family, Finding, Form, Severity, Stage, family_by_name};

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

/// Every remark the timing checks make on a stage, worded (for the report of a design that is
/// offered; the gate below never words anything).
pub fn review(stage: &Stage, family: &Family) -> Vec<Finding> {
    crate::timing::check_stage(stage, family)
}

/// Whether a stage may be built at all: no Error breach. The search treats this as a hard
/// constraint. Decided on numbers only.
pub fn admissible(stage: &Stage, family: &Family) -> bool {
    blocking(stage, family).is_none()
}

/// The first Error breach, if any (its [`code`](Breach::code) counts why candidates were
/// refused; [`Breach::sentence`] words it when a report needs it). Runs the predicates only,
/// stopping at the first refusal; it is always the first Error of [`review`].
pub fn blocking(stage: &Stage, family: &Family) -> Option<Breach> {
    crate::timing::first_error(stage, family)
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
        assert_eq!(b.map(|f| f.code()), Some("discharge-current"));
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

    /// A random stage: every form and wiring, resistances from 0 to 100 MΩ, capacitances from
    /// 1 pF to 0.1 F, supplies from 0.5 V to 70 V, driven control pins (some out of range),
    /// diode and output drops, and capacitor facts of every dielectric with or without rating.
    fn any_stage() -> impl proptest::strategy::Strategy<Value = (Stage, bool)> {
        use proptest::prelude::*;
        let techs = [
            Technology::C0g,
            Technology::X7r,
            Technology::Y5v,
            Technology::Film,
            Technology::Electrolytic,
            Technology::Tantalum,
            Technology::Other,
        ];
        let ohms = prop_oneof![1 => Just(0.0), 12 => (0.0f64..8.0).prop_map(|e| 10f64.powf(e))];
        (
            (0usize..4, any::<bool>(), ohms.clone(), ohms, -12.0f64..-1.0),
            (
                0.5f64..70.0,
                proptest::option::of(0.1f64..1.2),
                0.0f64..1.0,
                0.0f64..2.0,
            ),
            proptest::option::of((0usize..techs.len(), proptest::option::of(1.0f64..100.0))),
            any::<bool>(),
        )
            .prop_map(
                move |((form, two, r1, r2, c), (vcc, control, vf, voh), cap, cmos)| {
                    let form = [Form::Monostable, Form::Astable, Form::Steered, Form::Square][form];
                    let stage = Stage {
                        form,
                        r1: Ohms::from_si(r1).unwrap_or(Ohms::ZERO),
                        r2: form
                            .has_r2()
                            .then(|| Ohms::from_si(r2).unwrap_or(Ohms::ZERO)),
                        c: Farads::from_si(10f64.powf(c)).unwrap_or(Farads::ZERO),
                        cap: cap.and_then(|(t, rating)| {
                            Some(CapFacts {
                                technology: techs[t],
                                voltage_rating: match rating {
                                    Some(v) => Some(Volts::from_si(v)?),
                                    None => None,
                                },
                                tolerance: crate::units::Tolerance::symmetric_percent(10.0)?,
                            })
                        }),
                        conditions: Conditions {
                            vcc: Volts::from_si(vcc).unwrap_or(Volts::ZERO),
                            // A fraction of the supply; above 1 it is out of range on purpose.
                            control: control.and_then(|k| Volts::from_si(k * vcc)),
                            diode_drop: Volts::from_si(vf).unwrap_or(Volts::ZERO),
                            output_high_drop: Volts::from_si(voh).unwrap_or(Volts::ZERO),
                        },
                        steering: if two {
                            Steering::TwoDiode
                        } else {
                            Steering::OneDiode
                        },
                    };
                    (stage, cmos)
                },
            )
    }

    proptest::proptest! {
        #![proptest_config(proptest::prelude::ProptestConfig::with_cases(3000))]

        /// The gate decides on the predicates alone, skipping the rules that never refuse and
        /// stopping at the first refusal; it must agree exactly with the worded findings: a
        /// stage is refused if and only if a worded Error exists, and the refusal is the first
        /// worded Error, code and sentence.
        #[test]
        fn the_gate_agrees_with_the_worded_findings((stage, cmos) in any_stage()) {
            let family = if cmos { Family::cmos() } else { Family::bipolar() };
            let worded = review(&stage, &family);
            let first = worded.iter().find(|f| f.severity == Severity::Error).cloned();
            let gate = blocking(&stage, &family).map(|b| b.finding());
            proptest::prop_assert_eq!(gate, first);
            proptest::prop_assert_eq!(
                admissible(&stage, &family),
                !crate::timing::has_error(&worded)
            );
            // And every worded finding is its breach's: code and severity from the value.
            let breaches =
                crate::timing::stage_breaches(&stage, &family, &crate::timing::Limits::default());
            proptest::prop_assert_eq!(breaches.len(), worded.len());
            for (b, f) in breaches.iter().zip(&worded) {
                proptest::prop_assert_eq!((b.code(), b.severity()), (f.code, f.severity));
            }
        }
    }
}
