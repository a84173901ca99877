//! The design page's work: read the form into a search goal with the same defaults as
//! `onhand find`, run the exact search (`solve::search::solve`) on the live free stock, and
//! draw the best design's waveform with the picture renderer the command line uses. Pure but
//! for the time the search takes; the handler runs it on a blocking thread.

use super::error::WebError;
use crate::report::find as render;
use crate::report::pictures::waveform::Waveform;
use crate::solve::{Duty, Goal, Outcome, Rank, Settings, StageGoal, family_by_name, solve};
use crate::store::{Part, Technology};
use crate::timing::Conditions;
use crate::units::{
    Farads, Ohms, Seconds, parse_frequency, parse_time, parse_tolerance, parse_voltage, time_text,
};
use serde::{Deserialize, Serialize};
use std::time::Duration;

/// The design form as sent. Empty fields take `onhand find`'s defaults.
#[derive(Debug, Clone, Default, Deserialize, Serialize)]
pub struct DesignForm {
    /// `pulse` (one-shot), `astable`, `steered`, `square`, `pair` (an astable triggering a
    /// one-shot: `freq` and `width`) or `dual` (two stages in one 556: `first` and `second`).
    #[serde(default)]
    pub form: String,
    /// Pulse width (one-shot), e.g. `250ms`.
    #[serde(default)]
    pub width: String,
    /// Frequency (astable), e.g. `1kHz`.
    #[serde(default)]
    pub freq: String,
    /// Duty window or target (astable), e.g. `60..70%`; empty for any.
    #[serde(default)]
    pub duty: String,
    /// High time (steered).
    #[serde(default)]
    pub high: String,
    /// Low time (steered).
    #[serde(default)]
    pub low: String,
    /// Dual: the first stage as `onhand find dual` reads it (`pulse:250ms`, `astable:2Hz`,
    /// `square:1kHz`, `steered:1ms:200us`).
    #[serde(default)]
    pub first: String,
    /// Dual: the second stage, same forms.
    #[serde(default)]
    pub second: String,
    /// Allowed deviation, default 1 %.
    #[serde(default)]
    pub tol: String,
    /// Supply, default 9 V.
    #[serde(default)]
    pub vcc: String,
    /// `bipolar` (default) or `cmos`.
    #[serde(default)]
    pub family: String,
}

/// What the page shows for a search.
#[derive(Debug, Clone, Serialize)]
pub struct DesignResult {
    /// The ranked report, exactly as `onhand find` prints it.
    pub report: String,
    /// The best design's waveform, one per stage (SVG from the renderer the CLI uses).
    #[serde(skip)]
    pub waveforms: Vec<String>,
    /// The reach picture of the free stock around each stage's target (the one `onhand reach`
    /// draws), for the stages that have one (one-shot, astable, square).
    #[serde(skip)]
    pub reach: Vec<String>,
    /// The pieces of the best design: (part row id, pieces), for "hold these parts".
    pub kit: Vec<(i64, i64)>,
    /// The answer in the JSON form `onhand find --json` gives.
    pub json: serde_json::Value,
}

fn bad(what: &str, e: impl std::fmt::Display) -> WebError {
    WebError::BadInput(format!("{what}: {e}"))
}

fn or<'a>(s: &'a str, default: &'a str) -> &'a str {
    if s.trim().is_empty() {
        default
    } else {
        s.trim()
    }
}

fn time(what: &str, s: &str) -> Result<Seconds, WebError> {
    if s.trim().is_empty() {
        return Err(WebError::BadInput(format!("give the {what}, e.g. 250ms")));
    }
    let t = parse_time(s).map_err(|e| bad(what, e))?;
    if t.is_positive() {
        Ok(t)
    } else {
        Err(WebError::BadInput(format!("the {what} must be above zero")))
    }
}

/// A duty target in the one grammar every command shares (`model::parse_duty`).
fn duty(s: &str) -> Result<Duty, WebError> {
    let t = s.trim();
    if t.is_empty() {
        return Ok(Duty::Any);
    }
    let w = crate::model::parse_duty(t).map_err(|e| WebError::BadInput(e.to_string()))?;
    Ok(Duty::Window(w))
}

/// The goal and settings a form stands for, with `onhand find`'s defaults (1 %, 9 V, bipolar,
/// up to 3 pieces a position, electrolytics left out of timing, capacitor rating ≥ 1.5 × Vcc,
/// and the real-part timing model that `find` uses unless told otherwise).
pub fn request(f: &DesignForm, time_limit: Duration) -> Result<(Goal, Settings), WebError> {
    let tol = parse_tolerance(or(&f.tol, "1%"))
        .map_err(|e| bad("tolerance", e))?
        .widest()
        .si();
    let family_name = or(&f.family, "bipolar");
    let family = family_by_name(family_name).ok_or_else(|| {
        WebError::BadInput(format!(
            "unknown family {family_name:?}: use bipolar or cmos"
        ))
    })?;
    let vcc = parse_voltage(or(&f.vcc, "9V")).map_err(|e| bad("supply", e))?;
    if !vcc.is_positive() {
        return Err(WebError::BadInput("the supply must be above zero".into()));
    }
    let freq_period = |f: &DesignForm| -> Result<Seconds, WebError> {
        if f.freq.trim().is_empty() {
            return Err(WebError::BadInput("give the frequency, e.g. 1kHz".into()));
        }
        let hz = parse_frequency(&f.freq)
            .map_err(|e| bad("frequency", e))?
            .si();
        Seconds::from_si(1.0 / hz)
            .filter(|p| hz > 0.0 && p.is_positive())
            .ok_or_else(|| WebError::BadInput("the frequency must be above zero".into()))
    };
    let stages = match or(&f.form, "pulse") {
        "pulse" => vec![StageGoal::Pulse {
            width: time("pulse width", &f.width)?,
        }],
        "astable" => vec![StageGoal::Astable {
            period: freq_period(f)?,
            duty: duty(&f.duty)?,
        }],
        "steered" => vec![StageGoal::Steered {
            high: time("high time", &f.high)?,
            low: time("low time", &f.low)?,
        }],
        "square" => vec![StageGoal::Square {
            period: freq_period(f)?,
        }],
        "pair" => {
            let period = freq_period(f)?;
            let width = time("pulse width", &f.width)?;
            // As `onhand find pair`: the pulse must end before the next trigger, even at the
            // edges of the tolerance.
            if width.si() * (1.0 + tol) >= period.si() * (1.0 - tol) {
                return Err(WebError::BadInput(format!(
                    "the pulse width must stay below the period even at the edges of the \
                     tolerance: width {}, period {}",
                    time_text(width, 4),
                    time_text(period, 4)
                )));
            }
            vec![
                StageGoal::Astable {
                    period,
                    duty: Duty::Any,
                },
                StageGoal::Pulse { width },
            ]
        }
        "dual" => {
            // The stage grammar of `onhand find dual`, read by its own function.
            let stage = |what: &str, text: &str| -> Result<StageGoal, WebError> {
                if text.trim().is_empty() {
                    return Err(WebError::BadInput(format!(
                        "give the {what} stage, e.g. pulse:250ms or astable:2Hz"
                    )));
                }
                crate::cli::find::stage_of(text).map_err(|e| bad(what, e))
            };
            vec![stage("first", &f.first)?, stage("second", &f.second)?]
        }
        other => {
            return Err(WebError::BadInput(format!(
                "form {other:?}: use pulse, astable, steered, square, pair or dual"
            )));
        }
    };
    let goal = Goal::Stages(stages);
    let settings = Settings {
        tol,
        max_pieces: 3,
        alternatives: 3,
        guarantee: false,
        family,
        conditions: Conditions::ideal(vcc),
        // What a board on the bench does, as `find` defaults to.
        model: crate::timing::Model::real(),
        // As `find` does for timing: electrolytics and tantalum leak and drift (common practice).
        cap_techs: Some(vec![
            Technology::C0g,
            Technology::Film,
            Technology::X7r,
            Technology::Y5v,
            Technology::Other,
        ]),
        min_cap_rating: Some(vcc.si() * 1.5),
        time_limit: Some(time_limit),
        rank: Rank::FewestPieces,
        excursion: crate::solve::Excursion::default(),
    };
    Ok((goal, settings))
}

/// Run the search on `parts` and render what the page shows.
pub fn run(parts: &[Part], goal: &Goal, settings: &Settings) -> Result<DesignResult, WebError> {
    {
        if let Some(reason) =
            crate::solve::search::out_of_reach(goal, &settings.family, settings.tol)
        {
            return Ok(DesignResult {
                report: format!("Nothing can meet this target: {reason}."),
                waveforms: Vec::new(),
                reach: Vec::new(),
                kit: Vec::new(),
                json: serde_json::json!({"found": false, "reason": reason}),
            });
        }
    }
    let outcome: Outcome =
        solve(parts, goal, settings).map_err(|e| WebError::BadInput(e.to_string()))?;
    let view = render::View {
        goal,
        settings,
        parts,
        outcome: &outcome,
        advice: None,
    };
    let mut text = Vec::new();
    render::text(&mut text, &view).map_err(|e| WebError::Internal(e.to_string()))?;
    let mut json = Vec::new();
    render::json(&mut json, &view).map_err(|e| WebError::Internal(e.to_string()))?;
    let json = serde_json::from_slice(&json).map_err(|e| WebError::Internal(e.to_string()))?;
    let best = outcome.designs.first();
    let mut kit: Vec<(i64, i64)> = Vec::new();
    if let Some(d) = best {
        for p in &d.positions {
            for &row in &p.rows {
                if let Some(part) = parts.get(row) {
                    match kit.iter_mut().find(|(id, _)| *id == part.id) {
                        Some((_, n)) => *n += 1,
                        None => kit.push((part.id, 1)),
                    }
                }
            }
        }
    }
    let stages: &[StageGoal] = match goal {
        Goal::Stages(stages) => stages,
        Goal::Value { .. } => &[],
    };
    let waveforms = match best {
        Some(d) => stages
            .iter()
            .enumerate()
            .filter_map(|(i, g)| picture(i, g, d, settings))
            .collect(),
        None => Vec::new(),
    };
    let reach = stages
        .iter()
        .filter_map(|g| reach_picture(parts, g, settings))
        .collect();
    Ok(DesignResult {
        report: String::from_utf8_lossy(&text).into_owned(),
        waveforms,
        reach,
        kit,
        json,
    })
}

/// The reach picture (`solve::reach::reach`, drawn by `report::pictures::reach`) of the free
/// stock over a decade either side of one stage's target, with the page's settings; `None`
/// for the steered form (which has no reach question) or when the question cannot be asked.
pub fn reach_picture(parts: &[Part], g: &StageGoal, s: &Settings) -> Option<String> {
    use crate::solve::reach::{ReachForm, Request, reach};
    let (form, at) = match g {
        StageGoal::Pulse { width } => (ReachForm::Pulse, width.si()),
        StageGoal::Astable { period, .. } => (ReachForm::Astable, 1.0 / period.si()),
        StageGoal::Square { period } => (ReachForm::Square, 1.0 / period.si()),
        StageGoal::Steered { .. } => return None,
    };
    if !(at.is_finite() && at > 0.0) {
        return None;
    }
    let req = Request::around(form, (at / 10.0, at * 10.0), s, 6);
    let map = reach(parts, &req).ok()?;
    let what = match form {
        ReachForm::Pulse => "one-shot pulse width",
        ReachForm::Astable => "astable frequency",
        ReachForm::Square => "square-wave frequency",
    };
    let title = format!(
        "Reach of the free stock: {what} within ±{:.3}%, a decade either side of the target",
        s.tol * 100.0
    );
    Some(crate::report::pictures::reach::Reach::of_map(&map, &[], &title).to_svg())
}

/// The waveform of the best design's stage `stage`, from its nominal position values.
fn picture(stage: usize, g: &StageGoal, d: &crate::solve::Design, s: &Settings) -> Option<String> {
    let value = |name: &str| {
        d.positions
            .iter()
            .find(|p| p.stage == stage && p.name == name)
            .map(|p| p.value)
    };
    let r = |name: &str| value(name).and_then(Ohms::from_si);
    let c = value("C").and_then(Farads::from_si)?;
    let cond = crate::solve::search::stage_conditions(g, s);
    let w = match g {
        StageGoal::Pulse { .. } => Waveform::monostable(r("R")?, c, &cond),
        StageGoal::Astable { .. } => Waveform::astable(r("R1")?, r("R2")?, c, &cond),
        StageGoal::Steered { .. } => Waveform::steered(r("Ra")?, r("Rb")?, c, &cond),
        StageGoal::Square { .. } => Waveform::square(r("R")?, c, &cond),
    };
    w.ok().map(|w| w.to_svg())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn forms_read_with_find_defaults() {
        let f = DesignForm {
            form: "pulse".into(),
            width: "250ms".into(),
            ..DesignForm::default()
        };
        let (goal, s) = request(&f, Duration::from_secs(1)).expect("ok");
        assert_eq!(
            goal,
            Goal::Stages(vec![StageGoal::Pulse {
                width: Seconds::from_si(0.25).expect("time")
            }])
        );
        assert!((s.tol - 0.01).abs() < 1e-12);
        assert_eq!(s.max_pieces, 3);
        let bad = DesignForm {
            form: "astable".into(),
            ..DesignForm::default()
        };
        assert!(matches!(
            request(&bad, Duration::from_secs(1)),
            Err(WebError::BadInput(_))
        ));
        let duty = DesignForm {
            form: "astable".into(),
            freq: "1kHz".into(),
            duty: "60..70%".into(),
            ..DesignForm::default()
        };
        let (goal, _) = request(&duty, Duration::from_secs(1)).expect("ok");
        let Goal::Stages(st) = goal else {
            panic!("stages")
        };
        assert!(
            matches!(st[0], StageGoal::Astable { duty, .. } if duty.window_si() == Some((0.6, 0.7)))
        );
    }
}
