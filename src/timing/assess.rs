//! The `check` workflow as one pure function: a design handed in as typed values (the form of
//! each stage, every position with its pieces and tolerances, the capacitor's technology, the
//! family, the supply conditions, the evaluator's [`Model`], a target window, a measured value)
//! goes through inference of the one unknown position → electrical checks → exact worst case →
//! Monte Carlo → verdict against the target → trimmer, and comes back as an [`Assessment`].
//! No wording and no I/O: `report::check` renders the result, `cli::check` converts arguments
//! into [`CheckInput`] and writes the files.

use super::checks::{
    Finding, Limits, check_dual, check_pair, check_pair_worst_case, check_stage_with, has_error,
};
use super::design::{CapFacts, Stage};
use super::evaluate::{Effect, Model, evaluate};
use super::family::Family;
use super::forms::FormError;
use super::tolerance::{
    Analysis, Circuit, Inference, Interval, MonteCarlo, Position, Quantity, Samples, Spread,
    StageModel, Target, ToleranceError, TrimPlan, Verdict, WorstCase,
};
use crate::units::{Farads, Ohms, Ratio, Tolerance};

/// How the stages of a checked design belong together.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Arrangement {
    /// One stage.
    Single,
    /// A pace astable (first stage) triggering a width monostable (second stage).
    Pair,
    /// The two independent halves of a dual package.
    Dual,
}

/// One stage as handed in: every position with its pieces (`model`) and what is known of its
/// timing capacitor. `label` names the stage in a two-stage design (`pace`, `timer A`), empty
/// for a single stage.
#[derive(Debug, Clone)]
pub struct StageSpec {
    /// Name of the stage in a two-stage design; empty otherwise.
    pub label: &'static str,
    /// Form, steering, positions with their pieces, conditions and the timer's own error.
    pub model: StageModel,
    /// Technology, rating and tolerance of the timing capacitor, where known.
    pub cap: Option<CapFacts>,
}

/// A measurement of the built circuit, from which the one position left out is inferred.
#[derive(Debug, Clone, PartialEq)]
pub struct Measurement {
    /// The position left out (a placeholder in its stage; replaced by the inferred value).
    pub position: String,
    /// What was measured.
    pub quantity: Quantity,
    /// The measured value, SI units (seconds, hertz or a ratio), taken exact.
    pub value: f64,
}

/// Monte Carlo: how many samples, from which seed, drawn how.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Sampling {
    /// Number of samples (0 skips Monte Carlo).
    pub samples: usize,
    /// Seed of the generator: the same seed draws the same samples.
    pub seed: u64,
    /// Distribution of each piece within its tolerance.
    pub spread: Spread,
}

/// Everything `assess` needs.
#[derive(Debug, Clone)]
pub struct CheckInput {
    /// How the stages belong together.
    pub arrangement: Arrangement,
    /// The stages, in order (pace before width, A before B).
    pub stages: Vec<StageSpec>,
    /// The timer family with any overridden figures (already at its limits for a guarantee).
    pub family: Family,
    /// The evaluator's model: real parts or ideal, which diodes.
    pub model: Model,
    /// Ratings the electrical checks judge against.
    pub limits: Limits,
    /// A measurement to infer the missing position from.
    pub measured: Option<Measurement>,
    /// A target window to judge the worst case against.
    pub target: Option<Target>,
    /// The position to suggest a trimmer for (its full name, e.g. `R2`).
    pub trim: Option<String>,
    /// Monte Carlo settings.
    pub sampling: Sampling,
}

/// One stage after the inference: at its nominal values (`stage`, what the checks, schematic
/// and netlist read) and with every piece (`model`, what the tolerance analysis reads).
#[derive(Debug, Clone)]
pub struct AssessedStage {
    /// Name of the stage in a two-stage design; empty otherwise.
    pub label: &'static str,
    /// Nominal stage.
    pub stage: Stage,
    /// Every piece with its tolerance.
    pub model: StageModel,
}

/// The analysis of one circuit: the whole design, or one half of a dual package.
#[derive(Debug, Clone)]
pub struct CircuitAnalysis {
    /// `timer A`/`timer B` for the halves of a dual package; empty otherwise.
    pub label: &'static str,
    /// Indices into [`Assessment::stages`] of the stages in this circuit.
    pub stages: Vec<usize>,
    /// The circuit as the tolerance analysis saw it.
    pub circuit: Circuit,
    /// The evaluator's effects of each stage, in stage order, with the stage they belong to.
    pub effects: Vec<(&'static str, Effect)>,
    /// The timer's own error of each stage (ratio).
    pub timer_error: Vec<f64>,
    /// Every quantity at the nominal values, with its model band.
    pub nominal: Vec<Interval>,
    /// Exact worst case over every corner; `None` with too many pieces for the corner search.
    pub worst_case: Option<WorstCase>,
    /// Monte Carlo statistics, when samples were asked for.
    pub monte_carlo: Option<MonteCarlo>,
    /// The drawn samples (empty without Monte Carlo), for the histogram pictures.
    pub samples: Samples,
    /// Positions made of several equal pieces, which average their random errors: name and
    /// number of pieces.
    pub averaging: Vec<(String, usize)>,
}

/// The result of `assess`.
#[derive(Debug, Clone)]
pub struct Assessment {
    /// The stages, with the inferred value in place.
    pub stages: Vec<AssessedStage>,
    /// What the measurement says of the missing position.
    pub inference: Option<Inference>,
    /// One analysis per circuit (two for a dual package, one otherwise).
    pub analyses: Vec<CircuitAnalysis>,
    /// Whether the target is guaranteed (the last circuit's verdict; targets are refused for a
    /// dual package).
    pub verdict: Option<Verdict>,
    /// The trimmer that covers the spread.
    pub trim: Option<TrimPlan>,
    /// Electrical findings, in the order the checks raise them (the renderer sorts).
    pub findings: Vec<Finding>,
    /// No error finding and the target (if any) guaranteed.
    pub ok: bool,
}

/// Why a design could not be assessed.
#[derive(Debug, thiserror::Error)]
pub enum AssessError {
    /// A stage cannot run, or a question has no answer.
    #[error(transparent)]
    Tolerance(#[from] ToleranceError),
    /// The evaluator refused a stage.
    #[error(transparent)]
    Form(#[from] FormError),
    /// The measurement has no answer with these parts.
    #[error("inferring {position}: {reason}")]
    Infer {
        /// The position asked for.
        position: String,
        /// Why.
        reason: ToleranceError,
    },
    /// The trimmer question has no answer.
    #[error("trim of {position}: {reason}")]
    Trim {
        /// The position asked for.
        position: String,
        /// Why.
        reason: ToleranceError,
    },
    /// The input does not fit the arrangement (wrong number of stages, a question a dual
    /// package cannot answer as one circuit, a value out of range).
    #[error("{0}")]
    Input(&'static str),
}

/// The stage of a model at its nominal values.
pub fn stage_of(m: &StageModel, cap: Option<CapFacts>) -> Result<Stage, AssessError> {
    let ohms = |v: f64| Ohms::from_si(v).ok_or(AssessError::Input("resistance out of range"));
    Ok(Stage {
        form: m.form,
        r1: ohms(m.r1.nominal())?,
        r2: m.r2.as_ref().map(|p| ohms(p.nominal())).transpose()?,
        c: Farads::from_si(m.c.nominal()).ok_or(AssessError::Input("capacitance out of range"))?,
        cap,
        conditions: m.conditions,
        steering: m.steering,
    })
}

fn circuit_of(arrangement: Arrangement, stages: &[AssessedStage]) -> Result<Circuit, AssessError> {
    match (arrangement, stages) {
        (Arrangement::Pair, [a, b]) => Ok(Circuit::Pair {
            pace: Box::new(a.model.clone()),
            width: Box::new(b.model.clone()),
        }),
        (Arrangement::Pair, _) => Err(AssessError::Input("a pair has two stages")),
        (_, [first, ..]) => Ok(Circuit::Single(Box::new(first.model.clone()))),
        (_, []) => Err(AssessError::Input("no stage")),
    }
}

/// Put `value` (taken exact) in place of the position `name` in every stage.
fn substitute(stages: &mut [AssessedStage], name: &str, value: f64) -> Result<(), AssessError> {
    for s in stages {
        let m = &mut s.model;
        let slots = std::iter::once(&mut m.r1)
            .chain(m.r2.as_mut())
            .chain(std::iter::once(&mut m.c));
        for p in slots {
            if p.name == name {
                let exact = Tolerance {
                    minus: Ratio::ZERO,
                    plus: Ratio::ZERO,
                };
                *p = Position::single(name, p.combine, value, exact);
            }
        }
        s.stage = stage_of(&s.model, s.stage.cap)?;
    }
    Ok(())
}

/// The quantity a trimmer sets when no target says: the pulse width of a one-shot (or of the
/// width stage of a pair), the period otherwise.
fn trim_quantity(arrangement: Arrangement, one_shot: bool, position: &str) -> Quantity {
    let width_stage = arrangement == Arrangement::Pair && (position == "R3" || position == "C2");
    if one_shot || width_stage {
        Quantity::High
    } else {
        Quantity::Period
    }
}

/// Run the check workflow on `input`: inference → checks → worst case → Monte Carlo → verdict
/// → trim.
pub fn assess(input: &CheckInput) -> Result<Assessment, AssessError> {
    let arrangement = input.arrangement;
    let dual = arrangement == Arrangement::Dual;
    if dual && (input.target.is_some() || input.measured.is_some() || input.trim.is_some()) {
        return Err(AssessError::Input(
            "a target, a measurement and a trimmer work on one circuit; check each half on its own",
        ));
    }
    let mut stages = input
        .stages
        .iter()
        .map(|s| {
            Ok(AssessedStage {
                label: s.label,
                stage: stage_of(&s.model, s.cap)?,
                model: s.model.clone(),
            })
        })
        .collect::<Result<Vec<_>, AssessError>>()?;
    let caps: Vec<Option<CapFacts>> = input.stages.iter().map(|s| s.cap).collect();
    let (family, model) = (&input.family, &input.model);
    let one_shot = arrangement == Arrangement::Single
        && stages
            .first()
            .is_some_and(|s| s.model.form == super::Form::Monostable);

    // The inverse question first: fill in the unknown position.
    let mut inference = None;
    if let Some(m) = &input.measured {
        let analysis =
            Analysis::with_physics(&circuit_of(arrangement, &stages)?, family, model, &caps)?;
        let infer = |e| AssessError::Infer {
            position: m.position.clone(),
            reason: e,
        };
        let pos = analysis.position(&m.position).map_err(infer)?;
        let inf = analysis.infer(pos, m.quantity, m.value).map_err(infer)?;
        substitute(&mut stages, &m.position, inf.nominal)?;
        inference = Some(inf);
    }

    let limits = &input.limits;
    let mut findings = match (arrangement, stages.as_slice()) {
        (Arrangement::Pair, [a, b]) => check_pair(&a.stage, &b.stage, family, limits),
        (Arrangement::Dual, [a, b]) => check_dual(&a.stage, &b.stage, family, limits),
        (Arrangement::Single, [a]) => check_stage_with(&a.stage, family, limits),
        _ => return Err(AssessError::Input("unexpected number of stages")),
    };

    let groups: Vec<(&'static str, Vec<usize>, Circuit)> = if dual {
        stages
            .iter()
            .enumerate()
            .map(|(i, s)| (s.label, vec![i], Circuit::Single(Box::new(s.model.clone()))))
            .collect()
    } else {
        vec![(
            "",
            (0..stages.len()).collect(),
            circuit_of(arrangement, &stages)?,
        )]
    };

    let target = input.target;
    let mut analyses = Vec::new();
    let mut verdict = None;
    let mut trim = None;
    for (label, members, circuit) in groups {
        let caps: Vec<Option<CapFacts>> = members.iter().map(|&i| stages[i].stage.cap).collect();
        let analysis = Analysis::with_physics(&circuit, family, model, &caps)?;
        let nominal = analysis.nominal();
        let mut banded = analysis.nominal_banded();
        let mut effects = Vec::new();
        for &i in &members {
            let ev = evaluate(&stages[i].stage, family, model)?;
            if let [_] = members[..] {
                // The evaluator's own bands of period, frequency and duty: the effects act on
                // high and low time together (the bias currents push them opposite ways), so
                // these are narrower than pairing the ends of the high and low bands, and the
                // same numbers `find` reports for the same parts.
                for (q, b) in [
                    (Quantity::Period, ev.period),
                    (Quantity::Frequency, ev.frequency),
                    (Quantity::Duty, ev.duty),
                ] {
                    if let Some(b) = b {
                        banded[q as usize] = [b.nominal, b.band_lo, b.band_hi];
                    }
                }
            }
            effects.extend(ev.effects.into_iter().map(|e| (stages[i].label, e)));
        }
        let worst = analysis.worst_case().ok();
        if arrangement == Arrangement::Pair
            && let Some(d) = worst.as_ref().and_then(|w| w.get(Quantity::Duty))
        {
            findings.extend(check_pair_worst_case(d.max));
        }
        let s = input.sampling;
        let (monte_carlo, samples) = if s.samples > 0 {
            let (mc, drawn) = analysis.monte_carlo_samples(s.samples, s.seed, s.spread, target)?;
            (Some(mc), drawn)
        } else {
            (None, Vec::new())
        };
        if let (Some(t), Some(wc)) = (target, &worst) {
            verdict = Some(analysis.verdict(wc, t)?);
        }
        if let Some(name) = &input.trim {
            let fail = |e| AssessError::Trim {
                position: name.clone(),
                reason: e,
            };
            let pos = analysis.position(name).map_err(fail)?;
            let (q, goal) = match target {
                Some(t) => (t.quantity, t.value),
                None => {
                    let q = trim_quantity(arrangement, one_shot, name);
                    (q, nominal[q as usize])
                }
            };
            trim = Some(analysis.trim(pos, q, goal).map_err(fail)?);
        }
        analyses.push(CircuitAnalysis {
            label,
            timer_error: members
                .iter()
                .map(|&i| stages[i].model.timer_error.si())
                .collect(),
            stages: members,
            circuit,
            effects,
            nominal: analysis
                .quantities()
                .into_iter()
                .map(|q| {
                    let [n, lo, hi] = banded[q as usize];
                    Interval {
                        band_lo: lo,
                        band_hi: hi,
                        ..Interval::point(q, n)
                    }
                })
                .collect(),
            worst_case: worst,
            monte_carlo,
            samples,
            averaging: analysis.averaging(),
        });
    }

    let target_met = verdict.is_none_or(|v| v.guaranteed);
    let ok = !has_error(&findings) && target_met;
    Ok(Assessment {
        stages,
        inference,
        analyses,
        verdict,
        trim,
        findings,
        ok,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::network::Combine;
    use crate::timing::{Form, Steering, family_by_name};
    use crate::units::Volts;

    // The reference in these tests is the textbook astable, f = 1 / (ln 2 · (R1 + 2·R2) · C)
    // with thresholds at 1/3 and 2/3 of the supply (common practice: every 555 data sheet
    // prints it), which the ideal model is.
    fn textbook_frequency(r1: f64, r2: f64, c: f64) -> f64 {
        1.0 / (std::f64::consts::LN_2 * (r1 + 2.0 * r2) * c)
    }

    fn pos(name: &str, value: f64, percent: f64) -> Position {
        let combine = if name.starts_with('C') {
            Combine::Capacitive
        } else {
            Combine::Resistive
        };
        let tol = Tolerance::symmetric_percent(percent).expect("tolerance");
        Position::single(name, combine, value, tol)
    }

    fn astable(r1: Position, r2: Position, c: Position) -> CheckInput {
        let family = family_by_name("bipolar").expect("bipolar");
        let model = StageModel {
            form: Form::Astable,
            steering: Steering::TwoDiode,
            r1,
            r2: Some(r2),
            c,
            conditions: crate::timing::Conditions::ideal(Volts::from_si(9.0).expect("9 V")),
            timer_error: Ratio::ZERO,
        };
        CheckInput {
            arrangement: Arrangement::Single,
            stages: vec![StageSpec {
                label: "",
                model,
                cap: None,
            }],
            family,
            model: Model::ideal(),
            limits: Limits::default(),
            measured: None,
            target: None,
            trim: None,
            sampling: Sampling {
                samples: 0,
                seed: 1,
                spread: Spread::Uniform,
            },
        }
    }

    fn window(percent: f64) -> Ratio {
        Ratio::from_si(percent / 100.0).expect("ratio")
    }

    fn frequency_target(value: f64, percent: f64) -> Target {
        Target {
            quantity: Quantity::Frequency,
            value,
            within: window(percent),
        }
    }

    #[test]
    fn a_design_inside_its_window_is_guaranteed_and_outside_it_is_not() {
        let f0 = textbook_frequency(4.7e3, 68e3, 10e-9);
        let base = || {
            astable(
                pos("R1", 4.7e3, 1.0),
                pos("R2", 68e3, 1.0),
                pos("C", 10e-9, 1.0),
            )
        };
        // 1 % parts move the frequency by about 2 %: inside ±5 %, not inside ±1 %.
        let mut wide = base();
        wide.target = Some(frequency_target(f0, 5.0));
        let a = assess(&wide).expect("assess");
        let v = a.verdict.expect("verdict");
        assert!(v.guaranteed && v.nominal_inside && a.ok, "{v:?}");
        let mut narrow = base();
        narrow.target = Some(frequency_target(f0, 1.0));
        let a = assess(&narrow).expect("assess");
        let v = a.verdict.expect("verdict");
        assert!(!v.guaranteed && v.nominal_inside && !a.ok, "{v:?}");
        // A target the nominal misses altogether.
        let mut off = base();
        off.target = Some(frequency_target(2.0 * f0, 5.0));
        let v = assess(&off).expect("assess").verdict.expect("verdict");
        assert!(!v.guaranteed && !v.nominal_inside, "{v:?}");
        // The nominal frequency is the textbook one under the ideal model.
        let f = a
            .analyses
            .first()
            .and_then(|x| x.nominal.iter().find(|i| i.quantity == Quantity::Frequency))
            .expect("frequency")
            .nominal;
        assert!((f / f0 - 1.0).abs() < 1e-9, "{f} {f0}");
    }

    #[test]
    fn each_position_of_an_astable_is_inferred_from_a_measured_frequency() {
        let (r1, r2, c) = (4.7e3, 68e3, 10e-9);
        let f0 = textbook_frequency(r1, r2, c);
        for (name, truth) in [("R1", r1), ("R2", r2), ("C", c)] {
            // The unknown position is a placeholder taken exact; the others are ±5 %.
            let value = |n: &str, v: f64| {
                if n == name {
                    pos(n, if n == "C" { 1e-9 } else { 1e3 }, 0.0)
                } else {
                    pos(n, v, 5.0)
                }
            };
            let mut input = astable(value("R1", r1), value("R2", r2), value("C", c));
            input.measured = Some(Measurement {
                position: name.to_string(),
                quantity: Quantity::Frequency,
                value: f0,
            });
            let a = assess(&input).expect("assess");
            let inf = a.inference.expect("inference");
            assert_eq!(inf.position, name);
            assert!((inf.nominal / truth - 1.0).abs() < 1e-3, "{name}: {inf:?}");
            assert!(
                inf.min <= inf.nominal && inf.nominal < inf.max,
                "{name}: {inf:?}"
            );
            // The inferred value is in the stages the report and the files read.
            let stage = &a.stages[0].stage;
            let in_place = match name {
                "R1" => stage.r1.si(),
                "R2" => stage.r2.expect("r2").si(),
                _ => stage.c.si(),
            };
            assert!((in_place / inf.nominal - 1.0).abs() < 1e-3, "{name}");
        }
    }

    #[test]
    fn an_error_finding_fails_the_design_and_a_dual_refuses_one_target() {
        // 100 Ω from 9 V into the discharge pin: 90 mA, above the bipolar limit.
        let input = astable(
            pos("R1", 100.0, 5.0),
            pos("R2", 10e3, 5.0),
            pos("C", 1e-6, 5.0),
        );
        let a = assess(&input).expect("assess");
        assert!(!a.ok);
        assert!(a.findings.iter().any(|f| f.code == "discharge-current"));
        let mut dual = astable(
            pos("R1", 1e3, 5.0),
            pos("R2", 10e3, 5.0),
            pos("C", 1e-7, 5.0),
        );
        let second = dual.stages[0].clone();
        dual.stages.push(second);
        dual.arrangement = Arrangement::Dual;
        let a = assess(&dual).expect("dual");
        assert_eq!(a.analyses.len(), 2);
        dual.target = Some(frequency_target(1e3, 5.0));
        assert!(matches!(assess(&dual), Err(AssessError::Input(_))));
    }

    #[test]
    fn monte_carlo_runs_from_its_seed_in_the_core() {
        let mut input = astable(
            pos("R1", 4.7e3, 5.0),
            pos("R2", 68e3, 5.0),
            pos("C", 10e-9, 10.0),
        );
        input.sampling.samples = 500;
        let a = assess(&input).expect("assess");
        let b = assess(&input).expect("assess");
        let (ma, mb) = (
            a.analyses[0].monte_carlo.as_ref().expect("mc"),
            b.analyses[0].monte_carlo.as_ref().expect("mc"),
        );
        assert_eq!(ma.samples, 500);
        assert_eq!(format!("{ma:?}"), format!("{mb:?}"));
        assert!(!a.analyses[0].samples.is_empty());
    }
}
