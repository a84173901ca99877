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
    Farads, Ohms, parse_frequency, parse_ratio, parse_time, parse_tolerance, parse_voltage,
};
use serde::{Deserialize, Serialize};
use std::time::Duration;

/// The design form as sent. Empty fields take `onhand find`'s defaults.
#[derive(Debug, Clone, Default, Deserialize, Serialize)]
pub struct DesignForm {
    /// `pulse` (one-shot), `astable` or `steered`.
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
    /// The best design's waveform (SVG from our own renderer), when one was found.
    #[serde(skip)]
    pub waveform: Option<String>,
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

fn time(what: &str, s: &str) -> Result<f64, WebError> {
    if s.trim().is_empty() {
        return Err(WebError::BadInput(format!("give the {what}, e.g. 250ms")));
    }
    let t = parse_time(s).map_err(|e| bad(what, e))?.si();
    if t > 0.0 {
        Ok(t)
    } else {
        Err(WebError::BadInput(format!("the {what} must be above zero")))
    }
}

fn duty(s: &str) -> Result<Duty, WebError> {
    let t = s.trim();
    if t.is_empty() {
        return Ok(Duty::Any);
    }
    let ratio =
        |x: &str| -> Result<f64, WebError> { Ok(parse_ratio(x).map_err(|e| bad("duty", e))?.si()) };
    Ok(match t.split_once("..") {
        Some((a, b)) => {
            let a = if b.trim().ends_with('%') && !a.trim().ends_with('%') {
                format!("{a}%")
            } else {
                a.to_string()
            };
            Duty::Range(ratio(&a)?, ratio(b)?)
        }
        None => Duty::Point(ratio(t)?),
    })
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
    let stage = match or(&f.form, "pulse") {
        "pulse" => StageGoal::Pulse {
            width: time("pulse width", &f.width)?,
        },
        "astable" => {
            if f.freq.trim().is_empty() {
                return Err(WebError::BadInput("give the frequency, e.g. 1kHz".into()));
            }
            let hz = parse_frequency(&f.freq)
                .map_err(|e| bad("frequency", e))?
                .si();
            if hz <= 0.0 {
                return Err(WebError::BadInput(
                    "the frequency must be above zero".into(),
                ));
            }
            StageGoal::Astable {
                period: 1.0 / hz,
                duty: duty(&f.duty)?,
            }
        }
        "steered" => StageGoal::Steered {
            high: time("high time", &f.high)?,
            low: time("low time", &f.low)?,
        },
        other => {
            return Err(WebError::BadInput(format!(
                "form {other:?}: use pulse, astable or steered"
            )));
        }
    };
    let goal = Goal::Stages(vec![stage]);
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
                waveform: None,
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
    let waveform = match (goal, best) {
        (Goal::Stages(stages), Some(d)) => stages.first().and_then(|g| picture(g, d, settings)),
        _ => None,
    };
    Ok(DesignResult {
        report: String::from_utf8_lossy(&text).into_owned(),
        waveform,
        kit,
        json,
    })
}

/// The waveform of the best design's first stage, from its nominal position values.
fn picture(g: &StageGoal, d: &crate::solve::Design, s: &Settings) -> Option<String> {
    let value = |name: &str| {
        d.positions
            .iter()
            .find(|p| p.stage == 0 && p.name == name)
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
        assert_eq!(goal, Goal::Stages(vec![StageGoal::Pulse { width: 0.25 }]));
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
            matches!(st[0], StageGoal::Astable { duty: Duty::Range(a, b), .. } if (a - 0.6).abs() < 1e-9 && (b - 0.7).abs() < 1e-9)
        );
    }
}
