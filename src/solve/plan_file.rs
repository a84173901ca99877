//! From a plan file ([`crate::model::plan`]) to its searches and its answer: the goal and
//! settings of every stage, then how many units the stock builds. The one plan computation of
//! `onhand plan`, `onhand reorder` and the web plan page. Pure: the caller reads the file and the
//! stock and prints the answer (`report::plan`).

use super::allocate::Limits;
use super::plan::{self, Buildable, Mix, PlanError, PlanStage};
use super::{Duty, Goal, Rank, Settings, StageGoal, family_by_name};
use crate::model::plan::{PlanSpec, StageSpec, TargetSpec};
use crate::model::{Part, Technology, Value};
use crate::timing::{Conditions, Model};
use std::time::Duration;

/// Why a plan file could not be turned into searches or planned.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum PlanFileError {
    /// A stage of the file asks for something no search can look for.
    #[error("{0}")]
    Stage(String),
    /// The plan itself failed (a search refused a target, or the integer program failed).
    #[error("planning: {0}")]
    Plan(#[from] PlanError),
}

/// The capacitor technologies a timing search uses unless told otherwise: everything but
/// electrolytics and tantalum, whose leakage and tolerance upset timing (common practice).
pub fn timing_technologies() -> Vec<Technology> {
    vec![
        Technology::C0g,
        Technology::Film,
        Technology::X7r,
        Technology::Y5v,
        Technology::Other,
    ]
}

/// How long one stage's search may run in a plan.
pub const STAGE_TIME_LIMIT: Duration = Duration::from_secs(10);

/// The search goal and settings of one plan stage: the file's target, tolerance, pieces and
/// guarantee; the real-part model; capacitors rated at least 1.5 × the supply (common practice)
/// and, for timing, no electrolytics.
pub fn stage_plan(spec: &PlanSpec, s: &StageSpec) -> Result<PlanStage, PlanFileError> {
    let family = family_by_name(&spec.family).ok_or_else(|| {
        PlanFileError::Stage(format!(
            "unknown family {:?}: use bipolar or cmos",
            spec.family
        ))
    })?;
    let goal = match &s.target {
        TargetSpec::Value {
            kind,
            resistance,
            capacitance,
        } => Goal::Value {
            kind: *kind,
            target: resistance
                .map(Value::Resistance)
                .or(capacitance.map(Value::Capacitance))
                .unwrap_or(Value::None),
        },
        TargetSpec::Pulse { width } => Goal::Stages(vec![StageGoal::Pulse { width: *width }]),
        TargetSpec::Astable { period, duty } => Goal::Stages(vec![StageGoal::Astable {
            period: *period,
            duty: duty.map_or(Duty::Any, Duty::Window),
        }]),
        TargetSpec::Steered { high, low } => Goal::Stages(vec![StageGoal::Steered {
            high: *high,
            low: *low,
        }]),
        TargetSpec::Square { period } => Goal::Stages(vec![StageGoal::Square { period: *period }]),
        TargetSpec::Pair { period, width } => {
            let tol = s.tolerance.si();
            if width.si() * (1.0 + tol) >= period.si() * (1.0 - tol) {
                return Err(PlanFileError::Stage(format!(
                    "stage {:?}: the pulse width must stay below the period even at the edges of the tolerance",
                    s.name
                )));
            }
            Goal::Stages(vec![
                StageGoal::Astable {
                    period: *period,
                    duty: Duty::Any,
                },
                StageGoal::Pulse { width: *width },
            ])
        }
    };
    let timing = !matches!(goal, Goal::Value { .. });
    Ok(PlanStage {
        name: s.name.clone(),
        goal,
        settings: Settings {
            tol: s.tolerance.si(),
            max_pieces: s.pieces,
            alternatives: 1,
            guarantee: s.guarantee,
            family,
            model: Model::real(),
            conditions: Conditions::ideal(spec.supply),
            cap_techs: timing.then(timing_technologies),
            min_cap_rating: Some(spec.supply.si() * 1.5),
            time_limit: Some(STAGE_TIME_LIMIT),
            rank: Rank::FewestPieces,
            excursion: crate::solve::Excursion::default(),
        },
    })
}

/// The plan computation: the search goal of each stage, then how many units the stock `parts`
/// builds, with at most `variants` designs per stage when given (any mix otherwise).
pub fn plan_answer(
    spec: &PlanSpec,
    parts: &[Part],
    candidates: usize,
    variants: Option<u32>,
    limits: Limits,
) -> Result<(Vec<PlanStage>, Buildable), PlanFileError> {
    let stages: Vec<PlanStage> = spec
        .stages
        .iter()
        .map(|s| stage_plan(spec, s))
        .collect::<Result<_, _>>()?;
    let mix = variants.map_or(Mix::Mixed, |variants| Mix::Kits { variants });
    let answer = plan::plan_units(parts, &stages, spec.units, candidates, mix, limits)?;
    Ok((stages, answer))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::plan::parse_plan;

    #[test]
    fn each_stage_becomes_its_search_with_the_files_settings() {
        let spec = parse_plan(
            "name = \"t\"\nsupply = \"5 V\"\ntolerance = \"2%\"\n\
             [[stage]]\nname = \"a\"\nform = \"astable\"\nfrequency = \"2 Hz\"\nduty = \"55%..70%\"\n\
             [[stage]]\nname = \"v\"\nform = \"value\"\nvalue = \"68k\"\n",
        )
        .expect("plan");
        let a = stage_plan(&spec, &spec.stages[0]).expect("astable");
        match &a.goal {
            Goal::Stages(g) => match g[..] {
                [StageGoal::Astable { period, duty }] => {
                    assert_eq!(period.si(), 0.5);
                    assert_eq!(duty.window_si(), Some((0.55, 0.70)));
                }
                _ => panic!("{g:?}"),
            },
            other => panic!("{other:?}"),
        }
        assert!((a.settings.tol - 0.02).abs() < 1e-12);
        assert_eq!(a.settings.min_cap_rating, Some(7.5));
        assert_eq!(a.settings.cap_techs, Some(timing_technologies()));
        let v = stage_plan(&spec, &spec.stages[1]).expect("value");
        assert_eq!(
            v.settings.cap_techs, None,
            "a value stage may use any capacitor"
        );
        assert!(
            matches!(v.goal, Goal::Value { target: Value::Resistance(r), .. } if r.si() == 68e3)
        );
    }

    #[test]
    fn a_pair_whose_pulse_outlasts_its_period_is_refused() {
        let spec = parse_plan(
            "name = \"t\"\n[[stage]]\nname = \"p\"\nform = \"pair\"\nperiod = \"10 ms\"\nwidth = \"10 ms\"\n",
        )
        .expect("plan");
        let e = stage_plan(&spec, &spec.stages[0]).expect_err("pulse too long");
        assert!(e.to_string().contains("below the period"), "{e}");
    }
}
