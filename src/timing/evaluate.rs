//! The one evaluator: (stage, family, model) → high time, low time, period, frequency and duty,
//! each with its nominal value and its **model band** — what the modelled effects (diode
//! conduction, output drop, discharge saturation, pin bias currents, DC-bias loss of class-2
//! ceramics) can do to it without any part tolerance. Every command that prints, accepts, plans
//! or buys on a time goes through [`evaluate`]; the search may screen with [`factor_bounds`]
//! (cheap `R·C·k` brackets) but confirms every answer here.
//!
//! Pure; no I/O.

// `!(x > y)` is meant: it is also true when a value is NaN, which must be refused too.
#![allow(clippy::neg_cmp_op_on_partial_ord)]

use super::design::{CapFacts, Form, Stage, Steering, cycle_si};
use super::family::Family;
use super::forms::{Factors, FormError};
use crate::model::Technology;
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

/// Parameters of a junction diode: `Vd(I) = N·Vt·ln(1 + I/IS) + I·RS` (Shockley with series
/// resistance).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct DiodeParams {
    /// Saturation current, amperes.
    pub is: f64,
    /// Emission coefficient.
    pub n: f64,
    /// Series resistance, ohms.
    pub rs: f64,
}

/// A generic small-signal silicon diode (IS 2.52 nA, N 1.752, RS 0.568 Ω; from memory, the
/// figures usually given for the common small-signal switching diode). About 0.58 V at 1 mA.
pub const SMALL_SIGNAL_DIODE: DiodeParams = DiodeParams {
    is: 2.52e-9,
    n: 1.752,
    rs: 0.568,
};

/// Thermal voltage kT/q at 27 °C (SPICE's default nominal temperature), volts.
pub const THERMAL_VOLTAGE: f64 = 0.025_865;

/// Capacitance lost at the full rated DC voltage, by class-2 dielectric (from memory: X7R
/// multilayer ceramics keep roughly 60 % at their rating, Y5V about 30 %; small packages lose
/// more). The loss is taken in proportion to the applied share of the rating.
pub const DC_BIAS_LOSS_X7R: f64 = 0.4;
/// See [`DC_BIAS_LOSS_X7R`].
pub const DC_BIAS_LOSS_Y5V: f64 = 0.7;

impl DiodeParams {
    fn nvt(&self) -> f64 {
        self.n * THERMAL_VOLTAGE
    }

    /// Forward drop at current `i` (amperes, ≥ 0).
    pub fn drop_at(&self, i: f64) -> f64 {
        self.nvt() * (i / self.is).ln_1p() + i * self.rs
    }
}

/// The share of its capacitance a class-2 ceramic loses at `applied` volts DC, with its rating
/// (the supply when the rating is unknown). Zero for every other dielectric.
pub fn dc_bias_loss(cap: Option<&CapFacts>, applied: f64, vcc: f64) -> f64 {
    let Some(cap) = cap else { return 0.0 };
    let full = match cap.technology {
        Technology::X7r => DC_BIAS_LOSS_X7R,
        Technology::Y5v => DC_BIAS_LOSS_Y5V,
        _ => return 0.0,
    };
    let rating = cap.voltage_rating.map_or(vcc, |v| v.si());
    if rating <= 0.0 {
        return full;
    }
    full * (applied / rating).clamp(0.0, 1.0)
}

/// Everything the time integrals need, in SI units, prepared once per stage.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Physics {
    vcc: f64,
    vu: f64,
    vl: f64,
    /// Discharge-pin voltage while on.
    vsat: f64,
    /// Output-high voltage (output-driven forms).
    voh: f64,
    diode: Diode,
    /// Threshold-pin current drawn from the capacitor node, at most (A).
    ith: f64,
    /// Trigger-pin current pushed into the capacitor node, at most (A).
    itr: f64,
    /// Whether the trigger pin sits on the capacitor (every periodic form).
    trigger_on_cap: bool,
    /// Share of C lost under DC bias, at most.
    cap_loss: f64,
}

#[derive(Debug, Clone, Copy, PartialEq)]
enum Diode {
    Fixed(f64),
    Junction(DiodeParams),
}

fn unreachable(what: &str) -> FormError {
    FormError::Unreachable(what.to_string())
}

impl Physics {
    pub(crate) fn new(stage: &Stage, family: &Family, model: &Model) -> Result<Self, FormError> {
        let c = &stage.conditions;
        let vcc = c.vcc.si();
        let (vu, vl) = c.thresholds()?;
        let periodic = stage.form.is_periodic();
        Ok(Self {
            vcc,
            vu,
            vl,
            vsat: if model.saturation {
                family.discharge_saturation.value
            } else {
                0.0
            },
            voh: if model.output_drop {
                vcc - family.output_high_drop.value
            } else {
                vcc
            },
            diode: match model.diode {
                DiodeModel::Ideal => Diode::Fixed(0.0),
                DiodeModel::Fixed(v) => Diode::Fixed(v.si()),
                DiodeModel::SmallSignal => Diode::Junction(SMALL_SIGNAL_DIODE),
            },
            ith: if model.bias_currents {
                family.threshold_current.value
            } else {
                0.0
            },
            itr: if model.bias_currents && periodic {
                family.trigger_current.value
            } else {
                0.0
            },
            trigger_on_cap: periodic,
            cap_loss: if model.dc_bias {
                dc_bias_loss(stage.cap.as_ref(), vu, vcc)
            } else {
                0.0
            },
        })
    }

    /// The net currents drawn from the capacitor node that the band spans: none (first), then
    /// each pin at its constant figure alone and both together.
    fn drains(&self, band: bool) -> Vec<f64> {
        let mut out = vec![0.0];
        if band {
            if self.ith > 0.0 {
                out.push(self.ith);
            }
            if self.trigger_on_cap && self.itr > 0.0 {
                out.push(-self.itr);
                if self.ith > 0.0 {
                    out.push(self.ith - self.itr);
                }
            }
        }
        out
    }

    /// The net drains the model band spans (see `drains`), the first none.
    pub(crate) fn band_drains(&self) -> Vec<f64> {
        self.drains(true)
    }

    /// The classic astable's drain-free charge and discharge factors `(k_c, k_d)`: with no
    /// pin current its high time is exactly `(R1 + R2)·C·k_c` and its low time `R2·C·k_d`
    /// (what `times` computes with `d = 0`). None when the thresholds do not allow the form.
    pub(crate) fn astable_factors(&self) -> Option<(f64, f64)> {
        let (vcc, vu, vl, vs) = (self.vcc, self.vu, self.vl, self.vsat);
        let regular = vs < vl && vl < vu && vu < vcc;
        regular.then(|| (((vcc - vl) / (vcc - vu)).ln(), ((vu - vs) / (vl - vs)).ln()))
    }

    /// A classic astable's period per farad of timing capacitance under the net drain `d`,
    /// with charging resistance `s` (R1 + R2) and discharge resistance `r2`: exactly the high
    /// plus low time `times` gives at one farad (every segment is `R·C` times a function of the
    /// resistances and the drain), infinite where a threshold is never reached.
    pub(crate) fn astable_period_per_farad(&self, s: f64, r2: f64, d: f64) -> f64 {
        match self.times(Form::Astable, Steering::default(), s - r2, r2, 1.0, d) {
            Ok((h, Some(l))) => h + l,
            _ => f64::INFINITY,
        }
    }

    /// High and low time (seconds) of `form` with these values and a net drain `d` (A).
    fn times(
        &self,
        form: Form,
        steering: Steering,
        r1: f64,
        r2: f64,
        c: f64,
        d: f64,
    ) -> Result<(f64, Option<f64>), FormError> {
        let (vcc, vu, vl, vs) = (self.vcc, self.vu, self.vl, self.vsat);
        Ok(match form {
            Form::Monostable => (rc_segment(r1 * c, vcc - r1 * d, vs, vu, "one-shot")?, None),
            Form::Astable => (
                rc_segment((r1 + r2) * c, vcc - (r1 + r2) * d, vl, vu, "astable charge")?,
                Some(rc_segment(
                    r2 * c,
                    vs - r2 * d,
                    vu,
                    vl,
                    "astable discharge",
                )?),
            ),
            Form::Square => {
                if self.voh <= vu {
                    return Err(super::forms::output_never_switches(self.voh, vu));
                }
                (
                    rc_segment(r1 * c, self.voh - r1 * d, vl, vu, "square-wave high")?,
                    Some(rc_segment(r1 * c, -r1 * d, vu, vl, "square-wave low")?),
                )
            }
            Form::Steered => match steering {
                Steering::TwoDiode => (
                    self.diode_charge(r1, c, d)?,
                    Some(self.diode_discharge(r2, c, d)?),
                ),
                Steering::OneDiode => (
                    self.one_diode_charge(r1, r2, c, d)?,
                    Some(rc_segment(
                        r2 * c,
                        vs - r2 * d,
                        vu,
                        vl,
                        "steered discharge",
                    )?),
                ),
            },
        })
    }

    /// Two-diode charge: supply → RA → diode → capacitor, from Vl to Vu.
    fn diode_charge(&self, ra: f64, c: f64, d: f64) -> Result<f64, FormError> {
        match self.diode {
            Diode::Fixed(vf) => rc_segment(
                ra * c,
                self.vcc - vf - ra * d,
                self.vl,
                self.vu,
                "steered charge",
            ),
            Diode::Junction(p) => junction_segment(
                &p,
                ra,
                c,
                self.vcc - self.vl,
                self.vcc - self.vu,
                d,
                "steered charge",
            ),
        }
    }

    /// Two-diode discharge: capacitor → RB → diode → discharge pin (at Vsat), from Vu to Vl.
    fn diode_discharge(&self, rb: f64, c: f64, d: f64) -> Result<f64, FormError> {
        match self.diode {
            Diode::Fixed(vf) => rc_segment(
                rb * c,
                self.vsat + vf - rb * d,
                self.vu,
                self.vl,
                "steered discharge",
            ),
            Diode::Junction(p) => junction_segment(
                &p,
                rb,
                c,
                self.vu - self.vsat,
                self.vl - self.vsat,
                -d,
                "steered discharge",
            ),
        }
    }

    /// One-diode charge: supply → RA → node; from the node RB and the diode in parallel to the
    /// capacitor. RB shunts the diode: it conducts only while RB's share of the voltage exceeds
    /// its drop.
    fn one_diode_charge(&self, ra: f64, rb: f64, c: f64, d: f64) -> Result<f64, FormError> {
        let (vcc, vl, vu) = (self.vcc, self.vl, self.vu);
        match self.diode {
            Diode::Fixed(vf) => {
                // Diode on while v ≤ v* = Vcc − Vf·(RA+RB)/RB: charging toward Vcc − Vf through
                // RA; above v*, through RA+RB toward Vcc.
                let vstar = if rb > 0.0 {
                    vcc - vf * (ra + rb) / rb
                } else {
                    f64::NEG_INFINITY
                };
                let mut t = 0.0;
                if vstar > vl {
                    let top = vstar.min(vu);
                    t += rc_segment(ra * c, vcc - vf - ra * d, vl, top, "steered charge")?;
                }
                if vstar < vu {
                    let bottom = vstar.max(vl);
                    t += rc_segment(
                        (ra + rb) * c,
                        vcc - (ra + rb) * d,
                        bottom,
                        vu,
                        "steered charge",
                    )?;
                }
                Ok(t)
            }
            Diode::Junction(p) => one_diode_junction(&p, ra, rb, c, vcc, vl, vu, d),
        }
    }
}

/// Time for `v` to go from `v0` to `v1` charging (or discharging) with time constant `tau`
/// toward the asymptote `a`: `τ·ln((a − v0)/(a − v1))`.
fn rc_segment(tau: f64, a: f64, v0: f64, v1: f64, what: &str) -> Result<f64, FormError> {
    let (n, m) = (a - v0, a - v1);
    if v0 == v1 {
        return Ok(0.0);
    }
    if !(n / m > 1.0) || !(tau > 0.0) {
        return Err(FormError::Unreachable(format!(
            "{what}: the capacitor never reaches the threshold under these conditions"
        )));
    }
    Ok(tau * (n / m).ln())
}

/// The current through `r` plus a junction that drops `delta` volts in total: the root of
/// `I·(r + RS) + N·Vt·ln(1 + I/IS) = delta`.
fn junction_current(p: &DiodeParams, r: f64, delta: f64) -> f64 {
    if delta <= 0.0 {
        return 0.0;
    }
    let rt = r + p.rs;
    let g = |i: f64| i * rt + p.drop_at(i) - i * p.rs - delta;
    // g is increasing; the root lies in (0, delta/rt].
    let (mut lo, mut hi) = (0.0, delta / rt);
    let mut i = hi;
    for _ in 0..200 {
        let gi = g(i);
        if gi.abs() <= 1e-15 * delta {
            return i;
        }
        if gi > 0.0 {
            hi = i;
        } else {
            lo = i;
        }
        if hi - lo <= 1e-15 * hi {
            break;
        }
        let dg = rt + p.nvt() / (p.is + i);
        let next = i - gi / dg;
        i = if next > lo && next < hi {
            next
        } else {
            0.5 * (lo + hi)
        };
    }
    i
}

/// Time for a capacitor fed through `r` and a junction diode with a net drain `d` on its node,
/// while the voltage across the path goes from `delta0` to `delta1` (`delta0 > delta1`).
/// With `v = E − g(I)`, `g(I) = I·(r+RS) + N·Vt·ln(1 + I/IS)`, `t = C·∫ g'(I)/(I − d) dI` from
/// the end current to the start current, in closed form.
fn junction_segment(
    p: &DiodeParams,
    r: f64,
    c: f64,
    delta0: f64,
    delta1: f64,
    d: f64,
    what: &str,
) -> Result<f64, FormError> {
    let never = || {
        FormError::Unreachable(format!(
            "{what}: the capacitor never reaches the threshold under these conditions"
        ))
    };
    if !(delta1 > 0.0 && delta0 > delta1) {
        return Err(never());
    }
    let i0 = junction_current(p, r, delta0);
    let i1 = junction_current(p, r, delta1);
    if !(i1 > d) {
        return Err(never());
    }
    let rt = r + p.rs;
    let resist = rt * ((i0 - d) / (i1 - d)).ln();
    let a = p.is + d;
    let dynamic = if a.abs() < 1e-30 {
        p.nvt() * (1.0 / (i1 + p.is) - 1.0 / (i0 + p.is))
    } else {
        p.nvt() / a * ((-a / (i0 + p.is)).ln_1p() - (-a / (i1 + p.is)).ln_1p())
    };
    Ok(c * (resist + dynamic))
}

/// Gauss–Legendre nodes and weights on [−1, 1], 8 points.
const GL8: [(f64, f64); 8] = [
    (-0.960_289_856_497_536_3, 0.101_228_536_290_376_26),
    (-0.796_666_477_413_626_7, 0.222_381_034_453_374_48),
    (-0.525_532_409_916_329, 0.313_706_645_877_887_3),
    (-0.183_434_642_495_649_8, 0.362_683_783_378_362),
    (0.183_434_642_495_649_8, 0.362_683_783_378_362),
    (0.525_532_409_916_329, 0.313_706_645_877_887_3),
    (0.796_666_477_413_626_7, 0.222_381_034_453_374_48),
    (0.960_289_856_497_536_3, 0.101_228_536_290_376_26),
];

/// One-diode charge with a junction diode, integrated numerically along the diode current `j`
/// (log scale): the diode drop `x(j)` is explicit, RB carries `x/RB`, RA the sum, and
/// `v = Vcc − x − RA·(j + x/RB)`.
#[allow(clippy::too_many_arguments)]
fn one_diode_junction(
    p: &DiodeParams,
    ra: f64,
    rb: f64,
    c: f64,
    vcc: f64,
    vl: f64,
    vu: f64,
    d: f64,
) -> Result<f64, FormError> {
    let never = || {
        unreachable(
            "steered charge: the capacitor never reaches the threshold under these conditions",
        )
    };
    if !(rb > 0.0) {
        return Err(never());
    }
    let x = |j: f64| p.drop_at(j);
    let total = |j: f64| j + x(j) / rb;
    let v_of = |j: f64| vcc - x(j) - ra * total(j);
    // v falls as j rises; find ln j where v = target by bisection in ln j.
    let solve = |target: f64| -> Option<f64> {
        if target >= vcc {
            return None;
        }
        let (mut lo, mut hi) = ((1e-40f64).ln(), (vcc / ra.max(1e-3) + 1.0).ln());
        if v_of(lo.exp()) < target {
            // Even a vanishing diode current leaves v below the target: no diode current at
            // all (cannot happen for v < Vcc, but keep the bracket honest).
            return Some(lo);
        }
        for _ in 0..200 {
            let mid = 0.5 * (lo + hi);
            if v_of(mid.exp()) > target {
                lo = mid;
            } else {
                hi = mid;
            }
            if hi - lo < 1e-13 {
                break;
            }
        }
        Some(0.5 * (lo + hi))
    };
    let (Some(s0), Some(s1)) = (solve(vl), solve(vu)) else {
        return Err(never());
    };
    // t = C ∫ (−dv/dj)/(I − d) dj, dj = j ds; −dv/dj = x'(j)·(1 + RA/RB) + RA.
    let integrand = |s: f64| -> f64 {
        let j = s.exp();
        let dx = p.nvt() / (p.is + j) + p.rs;
        let dv = dx * (1.0 + ra / rb) + ra;
        dv * j / (total(j) - d)
    };
    if total(s1.exp()) <= d {
        return Err(never());
    }
    let panels = 24;
    let h = (s0 - s1) / f64::from(panels);
    let mut sum = 0.0;
    for k in 0..panels {
        let a = s1 + h * f64::from(k);
        for (xk, wk) in GL8 {
            sum += wk * integrand(a + 0.5 * h * (xk + 1.0));
        }
    }
    Ok(c * 0.5 * h * sum)
}

fn banded(values: &[f64]) -> Banded {
    let nominal = values.first().copied().unwrap_or(f64::NAN);
    Banded {
        nominal,
        band_lo: values.iter().copied().fold(nominal, f64::min),
        band_hi: values.iter().copied().fold(nominal, f64::max),
    }
}

/// High and low time (and the derived quantities) with their bands, SI, at these values. The
/// nominal is the first drain (none); the band spans every drain corner and the DC-bias loss.
pub(crate) struct Times {
    pub(crate) high: Banded,
    pub(crate) low: Option<Banded>,
    pub(crate) period: Option<Banded>,
    pub(crate) frequency: Option<Banded>,
    pub(crate) duty: Option<Banded>,
}

impl Physics {
    /// Every time of `form` at these values (SI); with `band`, the model band as well (else the
    /// band equals the nominal).
    #[allow(clippy::too_many_arguments)]
    pub(crate) fn evaluate_si(
        &self,
        form: Form,
        steering: Steering,
        r1: f64,
        r2: f64,
        c: f64,
        band: bool,
    ) -> Result<Times, FormError> {
        if !(c > 0.0) {
            return Err(unreachable("the timing capacitance must be above zero"));
        }
        // A classic astable's R1 may be zero for the times (the checks refuse it as a short of
        // the supply); every other resistance must be above zero.
        let r1_ok = r1 > 0.0 || (form == Form::Astable && r1 == 0.0);
        if !r1_ok || (form.has_r2() && !(r2 > 0.0)) {
            return Err(unreachable(
                "both the high and the low time must be above zero (a resistance is zero)",
            ));
        }
        let mut highs = Vec::new();
        let mut lows = Vec::new();
        for d in self.drains(band) {
            let (h, l) = self.times(form, steering, r1, r2, c, d)?;
            highs.push(h);
            if let Some(l) = l {
                lows.push(l);
            }
        }
        let keep = if band { 1.0 - self.cap_loss } else { 1.0 };
        let scaled = |v: &[f64]| -> Vec<f64> {
            let mut out = v.to_vec();
            if keep < 1.0 {
                out.extend(v.iter().map(|x| x * keep));
            }
            out
        };
        let high = banded(&scaled(&highs));
        if lows.is_empty() {
            return Ok(Times {
                high,
                low: None,
                period: None,
                frequency: None,
                duty: None,
            });
        }
        let periods: Vec<f64> = highs.iter().zip(&lows).map(|(h, l)| h + l).collect();
        let duties: Vec<f64> = highs.iter().zip(&lows).map(|(h, l)| h / (h + l)).collect();
        let period = banded(&scaled(&periods));
        let freqs: Vec<f64> = scaled(&periods).iter().map(|p| 1.0 / p).collect();
        Ok(Times {
            high,
            low: Some(banded(&scaled(&lows))),
            period: Some(period),
            frequency: Some(banded(&freqs)),
            duty: Some(banded(&duties)),
        })
    }

    /// The effects these physics include, in words.
    fn effects(&self, stage: &Stage, family: &Family, model: &Model) -> Vec<Effect> {
        let mut out = Vec::new();
        let fam = |f: &super::family::Figure| f.provenance.label();
        let kind = |f: &super::family::Figure| f.kind.label();
        if stage.form == Form::Steered {
            let wiring = match stage.steering {
                Steering::TwoDiode => "a diode in the charge and in the discharge path",
                Steering::OneDiode => {
                    "one diode across RB (RB shunts it: it conducts only while RB's share of the voltage exceeds its drop)"
                }
            };
            out.push(match model.diode {
                DiodeModel::SmallSignal => Effect {
                    code: "diode",
                    text: format!(
                        "steering diodes: small-signal silicon junction, drop following the charging current (IS {} nA, N {}, RS {} Ω; {:.2} V at 1 mA); {wiring}",
                        SMALL_SIGNAL_DIODE.is * 1e9,
                        SMALL_SIGNAL_DIODE.n,
                        SMALL_SIGNAL_DIODE.rs,
                        SMALL_SIGNAL_DIODE.drop_at(1e-3)
                    ),
                    provenance: "from memory",
                },
                DiodeModel::Fixed(v) => Effect {
                    code: "diode",
                    text: format!("steering diodes: a fixed {v} drop whatever the current; {wiring}"),
                    provenance: "set by user",
                },
                DiodeModel::Ideal => Effect {
                    code: "diode",
                    text: format!("steering diodes: ideal (no drop; the textbook model); {wiring}"),
                    provenance: "set by user",
                },
            });
        }
        if stage.form == Form::Square && model.output_drop {
            out.push(Effect {
                code: "output-drop",
                text: format!(
                    "output high {:.2} V below the supply at light load ({} figure of the {} family), so the capacitor charges toward {:.3} V",
                    family.output_high_drop.value,
                    kind(&family.output_high_drop),
                    family.name,
                    self.voh
                ),
                provenance: fam(&family.output_high_drop),
            });
        }
        if stage.form != Form::Square && model.saturation {
            out.push(Effect {
                code: "saturation",
                text: format!(
                    "discharge transistor saturates at {:.2} V ({} figure): {}",
                    self.vsat,
                    kind(&family.discharge_saturation),
                    if stage.form == Form::Monostable {
                        "the one-shot starts from it, t = R·C·ln((Vcc − Vsat)/(Vcc − Vu))"
                    } else {
                        "every discharge ends on it, so the low time runs longer"
                    }
                ),
                provenance: fam(&family.discharge_saturation),
            });
        }
        if model.bias_currents && (self.ith > 0.0 || self.itr > 0.0) {
            let formula = match stage.form {
                Form::Monostable => {
                    "none up to the constant-current form t = R·C·ln((Vcc − R·Ith − Vs)/(Vcc − R·Ith − Vu))"
                }
                _ => {
                    "each pin from none up to its constant figure (threshold current drawn from the capacitor, trigger current pushed into it; charging toward Vcc − R·(Ith − Itr), discharging toward Vsat − R·(Ith − Itr)): the two push high and low time in opposite directions"
                }
            };
            out.push(Effect {
                code: "bias-current",
                text: format!(
                    "pin bias currents as a one-sided band: threshold {}{} ({} figures); {formula}; the input stages draw mostly near their trip points, so the true shift lies between none and this",
                    crate::units::format_sig(self.ith, 3, "A"),
                    if self.trigger_on_cap {
                        format!(", trigger {}", crate::units::format_sig(self.itr, 3, "A"))
                    } else {
                        String::new()
                    },
                    kind(&family.threshold_current),
                ),
                provenance: fam(&family.threshold_current),
            });
        }
        if self.cap_loss > 0.0
            && let Some(cap) = &stage.cap
        {
            out.push(Effect {
                code: "dc-bias",
                text: format!(
                    "class-2 ceramic ({}) under DC bias: up to {:.0} % less capacitance at {:.2} V against a rating of {} (loss {:.0} % at the full rating, in proportion below it), as a one-sided band",
                    cap.technology.label(),
                    self.cap_loss * 100.0,
                    self.vu,
                    cap.voltage_rating.map_or_else(
                        || format!("{} (rating unknown, taken as the supply)", stage.conditions.vcc),
                        |v| v.to_string()
                    ),
                    if cap.technology == Technology::Y5v {
                        DC_BIAS_LOSS_Y5V * 100.0
                    } else {
                        DC_BIAS_LOSS_X7R * 100.0
                    }
                ),
                provenance: "from memory",
            });
        }
        out
    }
}

/// Evaluate one stage under `family` and `model`.
///
/// The stage's `conditions` give the supply and a driven control voltage; the diode, output-drop
/// and saturation figures come from `model` and `family` (the stage's `diode_drop` and
/// `output_high_drop`, which [`Stage::times`] uses, are not read here).
pub fn evaluate(stage: &Stage, family: &Family, model: &Model) -> Result<Evaluation, FormError> {
    let mut ev = evaluate_times(stage, family, model)?;
    ev.effects = Physics::new(stage, family, model)?.effects(stage, family, model);
    Ok(ev)
}

/// The same numbers as [`evaluate`] without the effects' wording (`effects` is empty): what
/// the search and the brute force judge every candidate on. Writing the effects' sentences
/// costs more than the physics, so it is done only for the designs that are reported.
pub fn evaluate_times(
    stage: &Stage,
    family: &Family,
    model: &Model,
) -> Result<Evaluation, FormError> {
    let phys = Physics::new(stage, family, model)?;
    let r2 = match (stage.form.has_r2(), stage.r2) {
        (true, Some(r)) => r.si(),
        (true, None) => return Err(unreachable("this form needs a second resistor")),
        (false, _) => 0.0,
    };
    let t = phys.evaluate_si(
        stage.form,
        stage.steering,
        stage.r1.si(),
        r2,
        stage.c.si(),
        true,
    )?;
    Ok(Evaluation {
        high: t.high,
        low: t.low,
        period: t.period,
        frequency: t.frequency,
        duty: t.duty,
        effects: Vec::new(),
    })
}

/// Lowest charging resistance [`factor_bounds`] covers (1 Ω).
pub const SCREEN_R_MIN: f64 = 1.0;

/// Relative margin added to sampled factor bounds (the small-signal diode's factor is sampled on
/// a log grid of resistances, not bounded in closed form).
const SAMPLED_MARGIN: f64 = 2e-3;

/// Factors `k_lo`, `k_hi` of `form` such that for every charging resistance up to `r_max`, every
/// time [`evaluate`] reports (nominal and band) lies within `R·C·[k_lo, k_hi]` of the form's
/// closed form (see [`cycle_si`]). The search screens with these and confirms with
/// [`evaluate`]. Resistances from [`SCREEN_R_MIN`] up are covered; the capacitor facts of
/// `stage` (DC-bias loss of a class-2 ceramic) are taken as given.
pub fn factor_bounds(
    stage: &Stage,
    family: &Family,
    model: &Model,
    r_max: Ohms,
) -> Result<(Factors, Factors), FormError> {
    factor_bounds_between(stage, family, model, SCREEN_R_MIN, r_max.si())
}

/// [`factor_bounds`] for charging resistances in `[r_min, r_max]` ohms.
pub fn factor_bounds_between(
    stage: &Stage,
    family: &Family,
    model: &Model,
    r_min: f64,
    r_max: f64,
) -> Result<(Factors, Factors), FormError> {
    let phys = Physics::new(stage, family, model)?;
    let r_min = r_min.max(1e-3);
    let r_max = r_max.max(r_min);
    let keep = 1.0 - phys.cap_loss;
    let drains = phys.drains(model.bias_currents);
    let grid: Vec<f64> = (0..=400)
        .map(|i| r_min * (r_max / r_min).powf(f64::from(i) / 400.0))
        .collect();
    // Per unit R·C (c = 1): a time of one path with resistance r under every drain.
    let span = |f: &dyn Fn(f64, f64) -> Result<f64, FormError>,
                rs: &[f64]|
     -> Result<(f64, f64), FormError> {
        let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
        for &r in rs {
            for &d in &drains {
                match f(r, d) {
                    Ok(t) => {
                        lo = lo.min(t / r);
                        hi = hi.max(t / r);
                    }
                    // Near a resistance where the capacitor stops reaching the threshold the
                    // time grows without bound: no finite upper factor.
                    Err(_) => hi = f64::INFINITY,
                }
            }
        }
        // The same relative margin as the sampled paths: the screen only has to be a
        // superset (the search confirms every answer with `evaluate`), and the property test
        // below found the ends of the range alone a few parts in a thousand short.
        Ok((
            lo * keep * (1.0 - SAMPLED_MARGIN),
            hi * (1.0 + SAMPLED_MARGIN),
        ))
    };
    // Linear paths: k depends on r·d only, monotone, so the two ends of the range suffice.
    let ends = [r_min, r_max];
    let (vcc, vu, vl, vs) = (phys.vcc, phys.vu, phys.vl, phys.vsat);
    let one_shot = span(
        &|r, d| rc_segment(r, vcc - r * d, vs, vu, "one-shot"),
        &ends,
    )?;
    let charge = span(
        &|r, d| rc_segment(r, vcc - r * d, vl, vu, "astable charge"),
        &ends,
    )?;
    let discharge = span(
        &|r, d| rc_segment(r, vs - r * d, vu, vl, "astable discharge"),
        &ends,
    )?;
    let square_high = if phys.voh > vu {
        span(
            &|r, d| rc_segment(r, phys.voh - r * d, vl, vu, "square-wave high"),
            &ends,
        )?
    } else {
        (f64::INFINITY, f64::INFINITY)
    };
    let square_low = span(
        &|r, d| rc_segment(r, -r * d, vu, vl, "square-wave low"),
        &ends,
    )?;
    let sampled = matches!(phys.diode, Diode::Junction(_));
    let rs: &[f64] = if sampled { &grid } else { &ends };
    let widen = |(lo, hi): (f64, f64)| {
        if sampled {
            (lo * (1.0 - SAMPLED_MARGIN), hi * (1.0 + SAMPLED_MARGIN))
        } else {
            (lo, hi)
        }
    };
    let steered_charge = match stage.steering {
        Steering::TwoDiode => widen(span(&|r, d| phys.diode_charge(r, 1.0, d), rs)?),
        Steering::OneDiode => {
            // RA alone with an ideal diode is the fastest any wiring charges; RA+RB in series
            // (diode never on) the slowest, and RB/RA is at most r_max/r_min.
            let fastest = span(
                &|r, d| rc_segment(r, vcc - r * d, vl, vu, "steered charge"),
                &ends,
            )?;
            let slowest = span(
                &|r, d| rc_segment(r, vcc - r * d, vl, vu, "steered charge"),
                &[r_min, 2.0 * r_max],
            )?;
            (fastest.0, slowest.1 * (1.0 + r_max / r_min))
        }
    };
    let steered_discharge = match stage.steering {
        Steering::TwoDiode => widen(span(&|r, d| phys.diode_discharge(r, 1.0, d), rs)?),
        Steering::OneDiode => discharge,
    };
    let pick = |f: fn(&(f64, f64)) -> f64| Factors {
        one_shot: f(&one_shot),
        charge: f(&charge),
        discharge: f(&discharge),
        steered_charge: f(&steered_charge),
        steered_discharge: f(&steered_discharge),
        square_high: f(&square_high),
        square_low: f(&square_low),
    };
    Ok((pick(|x| x.0), pick(|x| x.1)))
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

#[cfg(test)]
mod tests {
    use super::*;
    use crate::timing::forms::Conditions;
    use crate::units::{Farads, Volts};

    fn v(x: f64) -> Volts {
        Volts::from_si(x).expect("volts")
    }
    fn r(x: f64) -> Ohms {
        Ohms::from_si(x).expect("ohms")
    }
    fn c(x: f64) -> Farads {
        Farads::from_si(x).expect("farads")
    }

    /// Our own fixed-step RK4 of `dv/dt = f(v)` from `v0` until `v` crosses `v1`; the crossing is
    /// interpolated. Independent of the closed forms (it never sees a logarithm of thresholds).
    fn rk4_time(f: &dyn Fn(f64) -> f64, v0: f64, v1: f64, dt: f64) -> f64 {
        let (mut t, mut x) = (0.0, v0);
        let up = v1 > v0;
        for _ in 0..20_000_000 {
            let k1 = f(x);
            let k2 = f(x + 0.5 * dt * k1);
            let k3 = f(x + 0.5 * dt * k2);
            let k4 = f(x + dt * k3);
            let nx = x + dt / 6.0 * (k1 + 2.0 * k2 + 2.0 * k3 + k4);
            if (up && nx >= v1) || (!up && nx <= v1) {
                return t + dt * (v1 - x) / (nx - x);
            }
            x = nx;
            t += dt;
        }
        f64::NAN
    }

    /// The current through `r` + diode with `delta` across, by bisection (independent of the
    /// evaluator's Newton).
    fn current(p: &DiodeParams, r: f64, delta: f64) -> f64 {
        let (mut lo, mut hi) = (0.0, delta / r);
        for _ in 0..200 {
            let m = 0.5 * (lo + hi);
            if m * r + p.drop_at(m) > delta {
                hi = m;
            } else {
                lo = m;
            }
        }
        0.5 * (lo + hi)
    }

    #[test]
    fn junction_current_solves_its_equation() {
        let p = SMALL_SIGNAL_DIODE;
        for (rr, delta) in [
            (1e3, 6.0),
            (10e3, 6.0),
            (10e3, 3.0),
            (1e6, 0.5),
            (4.7e3, 2.4),
            (10.0, 9.0),
        ] {
            let i = junction_current(&p, rr, delta);
            let want = current(&p, rr, delta);
            assert!(
                (i - want).abs() <= 1e-9 * want,
                "{rr} {delta}: {i} vs {want}"
            );
        }
    }

    #[test]
    fn steered_small_signal_matches_an_independent_integration() {
        let p = SMALL_SIGNAL_DIODE;
        let fam = Family::bipolar();
        let mut model = Model::real();
        model.bias_currents = false;
        for (ra, rb, vcc) in [(10e3, 4.7e3, 9.0), (1e3, 1e3, 5.0), (1e6, 100e3, 15.0)] {
            let cap = 100e-9;
            let st = Stage::steered(r(ra), r(rb), c(cap), Conditions::ideal(v(vcc)));
            let e = evaluate(&st, &fam, &model).expect("eval");
            let (vu, vl) = (vcc * 2.0 / 3.0, vcc / 3.0);
            let vs = fam.discharge_saturation.value;
            let tau = ra * cap;
            let dt = tau / 20_000.0;
            let high = rk4_time(&|x| current(&p, ra, vcc - x) / cap, vl, vu, dt);
            let low = rk4_time(
                &|x| -current(&p, rb, x - vs) / cap,
                vu,
                vl,
                rb * cap / 20_000.0,
            );
            let eh = (e.high.nominal - high).abs() / high;
            let el = (e.low.expect("low").nominal - low).abs() / low;
            assert!(eh < 1e-4 && el < 1e-4, "{ra} {rb} {vcc}: {eh} {el}");
        }
    }

    fn stage_one_diode(ra: f64, rb: f64, cap: f64, vcc: f64, control: Option<f64>) -> Stage {
        let mut cond = Conditions::ideal(v(vcc));
        cond.control = control.map(v);
        let mut st = Stage::steered(r(ra), r(rb), c(cap), cond);
        st.steering = Steering::OneDiode;
        st
    }

    #[test]
    fn one_diode_never_conducting_charges_through_both() {
        // Issue case: RA 100 k, RB 1 k, 1 µF, 5 V, fixed 0.7 V: RB·(Vcc − v)/(RA + RB) never
        // reaches 0.7 V, so the high time is (RA + RB)·C·ln 2 = 70.0 ms (DESIGN physics table,
        // classic astable charge).
        let st = stage_one_diode(100e3, 1e3, 1e-6, 5.0, None);
        let mut m = Model::ideal();
        m.diode = DiodeModel::Fixed(v(0.7));
        let e = evaluate(&st, &Family::bipolar(), &m).expect("eval");
        let want = 101e3 * 1e-6 * 2f64.ln();
        assert!((e.high.nominal - want).abs() < 1e-9, "{}", e.high.nominal);
        // The same with the small-signal diode: it barely conducts, so nearly the same.
        m.diode = DiodeModel::SmallSignal;
        let e = evaluate(&st, &Family::bipolar(), &m).expect("eval");
        assert!(
            (e.high.nominal / want - 1.0).abs() < 0.01,
            "{}",
            e.high.nominal
        );
    }

    #[test]
    fn one_diode_piecewise_matches_an_integration() {
        // Fixed drop, diode on below v* and off above: RK4 of the two-branch equation.
        let (ra, rb, cap, vcc, vf) = (10e3, 10e3, 10e-9, 9.0, 0.6);
        let st = stage_one_diode(ra, rb, cap, vcc, None);
        let mut m = Model::ideal();
        m.diode = DiodeModel::Fixed(v(vf));
        let e = evaluate(&st, &Family::bipolar(), &m).expect("eval");
        let f = |x: f64| {
            let off = (vcc - x) / (ra + rb);
            if off * rb >= vf {
                (vcc - x - vf) / ra / cap
            } else {
                off / cap
            }
        };
        let t = rk4_time(&f, 3.0, 6.0, ra * cap / 20_000.0);
        assert!(
            (e.high.nominal - t).abs() / t < 1e-5,
            "{} vs {t}",
            e.high.nominal
        );
        // Small-signal one-diode against RK4 of the node equation solved by bisection.
        let p = SMALL_SIGNAL_DIODE;
        m.diode = DiodeModel::SmallSignal;
        let e = evaluate(&st, &Family::bipolar(), &m).expect("eval");
        let g = |x: f64| {
            // Node voltage u: (Vcc − u)/RA = (u − x)/RB + Id(u − x); bisect on u.
            let (mut lo, mut hi) = (x, vcc);
            for _ in 0..100 {
                let u = 0.5 * (lo + hi);
                let id = current(&p, 1e-9, u - x);
                if (vcc - u) / ra > (u - x) / rb + id {
                    lo = u;
                } else {
                    hi = u;
                }
            }
            (vcc - 0.5 * (lo + hi)) / ra / cap
        };
        let t = rk4_time(&g, 3.0, 6.0, ra * cap / 4_000.0);
        assert!(
            (e.high.nominal - t).abs() / t < 1e-3,
            "{} vs {t}",
            e.high.nominal
        );
    }

    #[test]
    fn one_diode_is_not_refused_where_the_two_diode_form_would_be() {
        // Issue case: 5 V, control 1.5 V, 0.8 V: the two-diode discharge could never reach
        // Vl − Vf < 0, but the one-diode discharge has no diode in its path.
        let st = stage_one_diode(10e3, 10e3, 10e-9, 5.0, Some(1.5));
        let mut m = Model::real();
        m.diode = DiodeModel::Fixed(v(0.8));
        let e = evaluate(&st, &Family::bipolar(), &m).expect("one-diode runs");
        assert!(e.high.nominal > 0.0 && e.low.expect("low").nominal > 0.0);
        let mut two = st.clone();
        two.steering = Steering::TwoDiode;
        assert!(evaluate(&two, &Family::bipolar(), &m).is_err());
    }

    #[test]
    fn square_on_bipolar_uses_the_output_drop_and_refuses_at_5_volts() {
        // Issue case: 4.7 kΩ, 100 nF, 9 V, drop 1.7 V (family figure, from memory): high
        // R·C·ln((7.3 − 3)/(7.3 − 6)), low R·C·ln 2 → about 888 µs and 63 %.
        let st = Stage::square(r(4.7e3), c(100e-9), Conditions::ideal(v(9.0)));
        let e = evaluate(&st, &Family::bipolar(), &Model::real()).expect("eval");
        let tau = 4.7e3 * 100e-9;
        let high = tau * (4.3f64 / 1.3).ln();
        let low = tau * 2f64.ln();
        assert!((e.high.nominal - high).abs() < 1e-12);
        assert!((e.period.expect("p").nominal - (high + low)).abs() < 1e-12);
        assert!((e.duty.expect("d").nominal - 0.633).abs() < 0.001);
        let at5 = Stage::square(r(4.7e3), c(100e-9), Conditions::ideal(v(5.0)));
        let err = evaluate(&at5, &Family::bipolar(), &Model::real()).expect_err("never switches");
        assert!(err.to_string().contains("never switches"), "{err}");
        // The textbook model is one option away.
        assert!(evaluate(&at5, &Family::bipolar(), &Model::ideal()).is_ok());
    }

    #[test]
    fn saturation_shortens_the_one_shot_and_lengthens_the_low_time() {
        // from memory (issue 9): Vsat ~0.1 V: one-shot −1 %, astable low +2.5 % at 9 V.
        let fam = Family::bipolar();
        let mut m = Model::ideal();
        m.saturation = true;
        let one = Stage::monostable(r(100e3), c(1e-6), Conditions::ideal(v(9.0)));
        let e = evaluate(&one, &fam, &m).expect("eval");
        let want = 0.1 * (8.9f64 / 3.0).ln();
        assert!((e.high.nominal - want).abs() < 1e-12);
        let ast = Stage::astable(r(1e3), r(10e3), c(1e-6), Conditions::ideal(v(9.0)));
        let e = evaluate(&ast, &fam, &m).expect("eval");
        let want = 10e3 * 1e-6 * (5.9f64 / 2.9).ln();
        assert!((e.low.expect("low").nominal - want).abs() < 1e-12);
        assert!(e.effects.iter().any(|x| x.code == "saturation"));
    }

    #[test]
    fn bias_currents_give_a_one_sided_band_with_the_constant_current_form() {
        // One-shot: band from none to t = R·C·ln((Vcc − R·Ith − Vs)/(Vcc − R·Ith − Vu)).
        let fam = Family::bipolar();
        let mut m = Model::ideal();
        m.bias_currents = true;
        let (rr, cc) = (970e3, 470e-9);
        let one = Stage::monostable(r(rr), c(cc), Conditions::ideal(v(9.0)));
        let e = evaluate(&one, &fam, &m).expect("eval");
        let ith = fam.threshold_current.value;
        let cc_form = rr * cc * ((9.0 - rr * ith) / (9.0 - rr * ith - 6.0)).ln();
        assert_eq!(e.high.band_lo, e.high.nominal);
        assert!((e.high.band_hi - cc_form).abs() < 1e-12);
        // Astable: threshold and trigger push high and low in opposite directions, so both
        // times get a band on both sides of the nominal.
        let ast = Stage::astable(r(100e3), r(1e6), c(10e-9), Conditions::ideal(v(9.0)));
        let e = evaluate(&ast, &fam, &m).expect("eval");
        let low = e.low.expect("low");
        assert!(e.high.band_lo < e.high.nominal && e.high.band_hi > e.high.nominal);
        assert!(low.band_lo < low.nominal && low.band_hi > low.nominal);
    }

    #[test]
    fn class_2_ceramics_lose_capacitance_under_bias() {
        let mut st = Stage::monostable(r(10e3), c(1e-6), Conditions::ideal(v(9.0)));
        let plain = evaluate(&st, &Family::bipolar(), &Model::real()).expect("eval");
        st.cap = Some(CapFacts {
            technology: Technology::Y5v,
            voltage_rating: Some(v(16.0)),
            tolerance: crate::units::Tolerance::symmetric_percent(20.0).expect("tol"),
        });
        let e = evaluate(&st, &Family::bipolar(), &Model::real()).expect("eval");
        // from memory: Y5V loses ~70 % at its rating; 6 V of 16 V → 26.25 %.
        let keep = 1.0 - 0.7 * 6.0 / 16.0;
        assert_eq!(e.high.nominal, plain.high.nominal);
        assert!((e.high.band_lo / plain.high.band_lo - keep).abs() < 1e-9);
        assert!(e.effects.iter().any(|x| x.code == "dc-bias"));
    }

    #[test]
    fn ideal_model_is_the_closed_form() {
        let st = Stage::steered(r(10e3), r(4.7e3), c(100e-9), Conditions::ideal(v(9.0)));
        let e = evaluate(&st, &Family::bipolar(), &Model::ideal()).expect("eval");
        let t = st.times().expect("times");
        assert!((e.high.nominal - t.high.si()).abs() < 1e-12);
        assert_eq!(e.high.band_lo, e.high.band_hi);
    }

    proptest::proptest! {
        #![proptest_config(proptest::prelude::ProptestConfig {
            cases: 64,
            failure_persistence: Some(Box::new(
                proptest::test_runner::FileFailurePersistence::SourceParallel("proptest-regressions"),
            )),
            ..proptest::prelude::ProptestConfig::default()
        })]
        /// The screen's brackets are a true superset of what the evaluator reports.
        #[test]
        fn factor_bounds_bracket_every_evaluation(
            form_ix in 0usize..4,
            la in 2.0f64..6.0,
            lb in 2.0f64..6.0,
            vcc in 5.0f64..15.0,
            cmos in proptest::bool::ANY,
        ) {
            let form = [Form::Monostable, Form::Astable, Form::Steered, Form::Square][form_ix];
            let fam = if cmos { Family::cmos() } else { Family::bipolar() };
            let (ra, rb) = (10f64.powf(la), 10f64.powf(lb));
            let cond = Conditions::ideal(v(vcc));
            let st = match form {
                Form::Monostable => Stage::monostable(r(ra), c(1e-8), cond),
                Form::Astable => Stage::astable(r(ra), r(rb), c(1e-8), cond),
                Form::Steered => Stage::steered(r(ra), r(rb), c(1e-8), cond),
                Form::Square => Stage::square(r(ra), c(1e-8), cond),
            };
            let m = Model::real();
            let Ok(e) = evaluate(&st, &fam, &m) else { return Ok(()); };
            // The contract covers charging resistances up to r_max: the whole charge path here.
            let (lo, hi) = factor_bounds(&st, &fam, &m, r(ra + rb)).expect("bounds");
            let (hl, ll) = closed_form(&st, &lo);
            let (hh, lh) = closed_form(&st, &hi);
            let eps = 1e-9;
            proptest::prop_assert!(e.high.band_lo >= hl * (1.0 - eps) && e.high.band_hi <= hh * (1.0 + eps),
                "high {:?} outside {hl} … {hh}", e.high);
            if let (Some(l), Some(a), Some(b)) = (e.low, ll, lh) {
                proptest::prop_assert!(l.band_lo >= a * (1.0 - eps) && l.band_hi <= b * (1.0 + eps),
                    "low {l:?} outside {a} … {b}");
            }
        }
    }
}
