//! The one acceptance rule for a timer stage, shared by the search and the brute force: given
//! the evaluator's answer (`timing::evaluate`) for a design — and, with `--guarantee`, its
//! worst case — is the design inside the target window, and what is its error? Also the
//! quantities a found design reports, from the same numbers.
//!
//! A design is accepted only if the **model band** of every targeted quantity lies inside its
//! window (the nominal alone is not enough: a design the model says may run long beyond the
//! window is never offered). With `guarantee`, the worst case — part tolerances at their
//! extremes, the model band on top, and the timer's own initial error — must lie inside too.
//! Pure.

use super::goal::{Duty, Quantity, StageGoal, inside};
use crate::timing::{Banded, Evaluation};

/// The worst case of a stage's quantities: `(lowest, highest)`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Worst {
    /// High time (the width of a one-shot).
    pub high: (f64, f64),
    /// Low time.
    pub low: Option<(f64, f64)>,
    /// Period.
    pub period: Option<(f64, f64)>,
    /// Frequency.
    pub frequency: Option<(f64, f64)>,
    /// Duty.
    pub duty: Option<(f64, f64)>,
}

/// The worst case from evaluations at the corners: every part at its lowest (`lo`) and highest
/// (`hi`) value (times rise with every resistance and capacitance), and for the duty the two
/// corners that push it down (`duty_lo`: charge resistor lowest, discharge resistor highest)
/// and up (`duty_hi`). Times take the band's far edge and the timer's initial error `ie`.
pub fn worst(
    lo: &Evaluation,
    hi: &Evaluation,
    duty_lo: &Evaluation,
    duty_hi: &Evaluation,
    ie: f64,
) -> Worst {
    let t = |a: Option<Banded>, b: Option<Banded>| match (a, b) {
        (Some(a), Some(b)) => Some((a.band_lo * (1.0 - ie), b.band_hi * (1.0 + ie))),
        _ => None,
    };
    let period = t(lo.period, hi.period);
    let duty = match (duty_lo.duty, duty_hi.duty) {
        (Some(a), Some(b)) => Some((a.band_lo.min(b.band_lo), a.band_hi.max(b.band_hi))),
        _ => None,
    };
    Worst {
        high: (lo.high.band_lo * (1.0 - ie), hi.high.band_hi * (1.0 + ie)),
        low: t(lo.low, hi.low),
        period,
        frequency: period.map(|(a, b)| (1.0 / b, 1.0 / a)),
        duty,
    }
}

/// `[t(1 − tol), t(1 + tol)]`.
fn window(t: f64, tol: f64) -> (f64, f64) {
    (t * (1.0 - tol), t * (1.0 + tol))
}

fn rel(x: f64, t: f64) -> f64 {
    ((x - t) / t).abs()
}

/// Whether `[a, b]` lies inside `w` (with the shared rounding allowance).
fn spans(a: f64, b: f64, w: (f64, f64)) -> bool {
    inside(a, w.0, w.1) && inside(b, w.0, w.1)
}

/// One targeted quantity: evaluated, worst case, window, target for the error.
type Targeted = (Banded, Option<(f64, f64)>, (f64, f64), Option<f64>);

/// The targeted quantities of a stage.
fn targeted(g: &StageGoal, ev: &Evaluation, w: Option<&Worst>, tol: f64) -> Option<Vec<Targeted>> {
    Some(match *g {
        StageGoal::Pulse { width } => {
            vec![(ev.high, w.map(|w| w.high), window(width, tol), Some(width))]
        }
        StageGoal::Square { period } => vec![(
            ev.period?,
            w.and_then(|w| w.period),
            window(period, tol),
            Some(period),
        )],
        StageGoal::Steered { high, low } => vec![
            (ev.high, w.map(|w| w.high), window(high, tol), Some(high)),
            (ev.low?, w.and_then(|w| w.low), window(low, tol), Some(low)),
        ],
        StageGoal::Astable { period, duty } => {
            let mut v = vec![(
                ev.period?,
                w.and_then(|w| w.period),
                window(period, tol),
                Some(period),
            )];
            match duty {
                Duty::Any => {}
                Duty::Range(a, b) => v.push((ev.duty?, w.and_then(|w| w.duty), (a, b), None)),
                Duty::Point(d) => {
                    v.push((ev.duty?, w.and_then(|w| w.duty), window(d, tol), Some(d)))
                }
            }
            v
        }
    })
}

/// The stage's error (largest relative deviation of a targeted nominal) if it is accepted:
/// every targeted band inside its window, and with `worst` (guarantee) every worst case too.
pub fn judge(g: &StageGoal, ev: &Evaluation, worst: Option<&Worst>, tol: f64) -> Option<f64> {
    let mut err: f64 = 0.0;
    for (b, wc, win, target) in targeted(g, ev, worst, tol)? {
        if !spans(b.band_lo, b.band_hi, win) {
            return None;
        }
        if worst.is_some() {
            let (lo, hi) = wc?;
            if !spans(lo, hi, win) {
                return None;
            }
        }
        if let Some(t) = target {
            err = err.max(rel(b.nominal, t));
        }
    }
    Some(err)
}

fn quantity(
    name: &'static str,
    unit: &'static str,
    target: Option<f64>,
    window: Option<(f64, f64)>,
    b: Banded,
    worst: (f64, f64),
) -> Quantity {
    Quantity {
        name,
        unit,
        target,
        nominal: b.nominal,
        band_lo: b.band_lo,
        band_hi: b.band_hi,
        window,
        error: target.map(|t| rel(b.nominal, t)),
        worst_lo: worst.0,
        worst_hi: worst.1,
    }
}

/// What a found stage reports, from the evaluation and the worst case that accepted it.
pub fn quantities(g: &StageGoal, ev: &Evaluation, w: &Worst, tol: f64) -> Vec<Quantity> {
    let nan = Banded::exact(f64::NAN);
    let none = (f64::NAN, f64::NAN);
    let (period, freq, duty, low) = (
        ev.period.unwrap_or(nan),
        ev.frequency.unwrap_or(nan),
        ev.duty.unwrap_or(nan),
        ev.low.unwrap_or(nan),
    );
    let (wp, wf, wd, wl) = (
        w.period.unwrap_or(none),
        w.frequency.unwrap_or(none),
        w.duty.unwrap_or(none),
        w.low.unwrap_or(none),
    );
    let win = |t: f64| Some(window(t, tol));
    match *g {
        StageGoal::Pulse { width } => {
            vec![quantity(
                "width",
                "s",
                Some(width),
                win(width),
                ev.high,
                w.high,
            )]
        }
        StageGoal::Square { period: t } => vec![
            quantity("period", "s", Some(t), win(t), period, wp),
            quantity("frequency", "Hz", Some(1.0 / t), None, freq, wf),
            quantity("duty", "", None, None, duty, wd),
        ],
        StageGoal::Steered { high, low: lt } => vec![
            quantity("high", "s", Some(high), win(high), ev.high, w.high),
            quantity("low", "s", Some(lt), win(lt), low, wl),
            quantity("period", "s", Some(high + lt), None, period, wp),
            quantity("frequency", "Hz", Some(1.0 / (high + lt)), None, freq, wf),
            quantity("duty", "", None, None, duty, wd),
        ],
        StageGoal::Astable {
            period: t,
            duty: want,
        } => {
            let (dt, dw) = match want {
                Duty::Any => (None, None),
                Duty::Range(a, b) => (None, Some((a, b))),
                Duty::Point(d) => (Some(d), win(d)),
            };
            vec![
                quantity("period", "s", Some(t), win(t), period, wp),
                quantity("frequency", "Hz", Some(1.0 / t), None, freq, wf),
                quantity("duty", "", dt, dw, duty, wd),
                quantity("high", "s", None, None, ev.high, w.high),
                quantity("low", "s", None, None, low, wl),
            ]
        }
    }
}
