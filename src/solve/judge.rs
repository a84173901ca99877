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

use super::goal::{Quantity, StageGoal, inside};
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

/// The worst case over evaluations at EVERY corner of the part tolerances (each position at its
/// lowest or highest value), the same rule as the tolerance analysis `check` uses
/// (`timing::Analysis::worst_case`): the chip's error as its own factor `1 ± ie` on the charge
/// and (separately) the discharge time, and at each corner the ends of the high and low bands
/// paired every way. `corners` must hold the evaluation of every corner; None when empty.
pub fn worst_of(corners: &[Evaluation], ie: f64) -> Option<Worst> {
    let first = corners.first()?;
    let span = |v: &mut (f64, f64), x: f64| {
        v.0 = v.0.min(x);
        v.1 = v.1.max(x);
    };
    let empty = (f64::INFINITY, f64::NEG_INFINITY);
    let mut high = empty;
    let periodic = first.low.is_some();
    let (mut low, mut period, mut duty) = (empty, empty, empty);
    let factors = [1.0 - ie, 1.0 + ie];
    for ev in corners {
        for th in factors {
            match ev.low {
                None => {
                    span(&mut high, ev.high.band_lo * th);
                    span(&mut high, ev.high.band_hi * th);
                }
                Some(lb) => {
                    let hb = ev.high;
                    let pairs = [
                        (hb.band_lo, lb.band_lo),
                        (hb.band_hi, lb.band_hi),
                        (hb.band_lo, lb.band_hi),
                        (hb.band_hi, lb.band_lo),
                    ];
                    for tl in factors {
                        for (h, l) in pairs {
                            let (h, l) = (h * th, l * tl);
                            span(&mut high, h);
                            span(&mut low, l);
                            span(&mut period, h + l);
                            span(&mut duty, h / (h + l));
                        }
                    }
                }
            }
        }
    }
    Some(Worst {
        high,
        low: periodic.then_some(low),
        period: periodic.then_some(period),
        frequency: periodic.then(|| (1.0 / period.1, 1.0 / period.0)),
        duty: periodic.then_some(duty),
    })
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
            let width = width.si();
            vec![(ev.high, w.map(|w| w.high), window(width, tol), Some(width))]
        }
        StageGoal::Square { period } => {
            let period = period.si();
            vec![(
                ev.period?,
                w.and_then(|w| w.period),
                window(period, tol),
                Some(period),
            )]
        }
        StageGoal::Steered { high, low } => {
            let (high, low) = (high.si(), low.si());
            vec![
                (ev.high, w.map(|w| w.high), window(high, tol), Some(high)),
                (ev.low?, w.and_then(|w| w.low), window(low, tol), Some(low)),
            ]
        }
        StageGoal::Astable { period, duty } => {
            let period = period.si();
            let mut v = vec![(
                ev.period?,
                w.and_then(|w| w.period),
                window(period, tol),
                Some(period),
            )];
            if let Some(win) = duty.window_si() {
                v.push((ev.duty?, w.and_then(|w| w.duty), win, None));
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
            let width = width.si();
            vec![quantity(
                "width",
                "s",
                Some(width),
                win(width),
                ev.high,
                w.high,
            )]
        }
        StageGoal::Square { period: t } => {
            let t = t.si();
            vec![
                quantity("period", "s", Some(t), win(t), period, wp),
                quantity("frequency", "Hz", Some(1.0 / t), None, freq, wf),
                quantity("duty", "", None, None, duty, wd),
            ]
        }
        StageGoal::Steered { high, low: lt } => {
            let (high, lt) = (high.si(), lt.si());
            vec![
                quantity("high", "s", Some(high), win(high), ev.high, w.high),
                quantity("low", "s", Some(lt), win(lt), low, wl),
                quantity("period", "s", Some(high + lt), None, period, wp),
                quantity("frequency", "Hz", Some(1.0 / (high + lt)), None, freq, wf),
                quantity("duty", "", None, None, duty, wd),
            ]
        }
        StageGoal::Astable {
            period: t,
            duty: want,
        } => {
            let t = t.si();
            vec![
                quantity("period", "s", Some(t), win(t), period, wp),
                quantity("frequency", "Hz", Some(1.0 / t), None, freq, wf),
                quantity("duty", "", None, want.window_si(), duty, wd),
                quantity("high", "s", None, None, ev.high, w.high),
                quantity("low", "s", None, None, low, wl),
            ]
        }
    }
}
