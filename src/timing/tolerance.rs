//! Tolerance analysis of a design whose positions are series/parallel networks of toleranced
//! pieces: exact worst case by corner search, seeded Monte Carlo, "is the target guaranteed?",
//! the trimmer that covers the spread, and the inverse question (infer an unknown part from a
//! measurement).
//!
//! **Why corners are exact.** A series or parallel network's value rises with every piece in it;
//! every time of every form is a product of network values and a positive factor, so high, low
//! and period rise (and frequency falls) with each piece. Duty is not monotone in one direction
//! across positions — it rises with R1 and falls with R2 — but it is still monotone in each piece
//! taken alone. A function monotone in each coordinate of a box takes its extremes at vertices,
//! so evaluating all `2^n` corners (each piece at its minimum or maximum) gives the exact
//! worst-case interval of every quantity; a linear (first-order) estimate would not.
//!
//! The timer's own error (initial error plus drift, from the family) enters as "pieces" of its
//! own: a factor `1 ± e` on the high (charge) time and, for a free-running stage, an independent
//! factor `1 ± e` on the low (discharge) time, so that duty feels the chip's error too (the
//! threshold errors move charge and discharge separately). Capacitor temperature coefficients are
//! not modelled.
//!
//! Built with [`Analysis::with_physics`], every time is computed by the one evaluator
//! (`timing::evaluate`: diode, output drop, saturation at their nominal; bias currents and DC-bias
//! loss as a band), and each interval carries the nominal's model band and a worst case that
//! includes the band at every corner; [`Analysis::new`] keeps the closed forms of the stage's
//! conditions. Pure: no I/O; randomness only from the caller's seed.

use super::design::{CapFacts, Form, Steering, cycle_si};
use super::evaluate::{Model, Physics};
use super::family::Family;
use super::forms::{Conditions, Factors, FormError};
use crate::network::{Combine, Net};
use crate::units::{Ratio, Tolerance, eseries::Series};
use rand::{Rng, SeedableRng, rngs::SmallRng};
use rand_distr::{Distribution, StandardNormal};
use serde::Serialize;

/// Largest number of toleranced pieces (parts plus timer factors) the corner search accepts:
/// 2^22 corners is about four million evaluations.
pub const MAX_CORNER_PIECES: usize = 22;

/// Track tolerance assumed for a trimmer (±20 %, from memory: a common cermet trimmer figure).
pub const TRIMMER_TOLERANCE_PERCENT: f64 = 20.0;

/// Trimmer values commonly stocked (1-2-5 steps, common practice), in ohms.
pub const TRIMMER_VALUES: [f64; 16] = [
    100.0, 200.0, 500.0, 1e3, 2e3, 5e3, 10e3, 20e3, 50e3, 100e3, 200e3, 500e3, 1e6, 2e6, 5e6, 10e6,
];

/// Why an analysis cannot be done.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ToleranceError {
    /// The form cannot run under the conditions.
    #[error(transparent)]
    Form(#[from] FormError),
    /// Too many pieces for an exact corner search.
    #[error("{pieces} toleranced pieces give 2^{pieces} corners; at most {max} are searched")]
    TooManyPieces {
        /// Pieces in the design.
        pieces: usize,
        /// The limit.
        max: usize,
    },
    /// The question has no answer with these parts.
    #[error("{0}")]
    NoSolution(String),
    /// Asked about a quantity this design does not have (e.g. the period of a one-shot).
    #[error("this design has no {0}")]
    NoQuantity(&'static str),
    /// No position of that name.
    #[error("no position called {0}")]
    NoPosition(String),
}

/// One part in a network: nominal value (SI) and tolerance.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Piece {
    /// Nominal value in SI units (ohms or farads).
    pub value: f64,
    /// Tolerance.
    pub tolerance: Tolerance,
}

impl Piece {
    /// Lowest and highest real value.
    pub fn bounds(&self) -> (f64, f64) {
        let (lo, hi) = self.tolerance.factors();
        (self.value * lo, self.value * hi)
    }
}

/// A position of the design (R1, R2, C…) filled by a network of pieces.
#[derive(Debug, Clone, PartialEq)]
pub struct Position {
    /// Its name as printed, e.g. `R1`, `C`, `pace R1`.
    pub name: String,
    /// Resistive or capacitive combination.
    pub combine: Combine,
    /// The network; leaves index `pieces`.
    pub net: Net,
    /// The pieces.
    pub pieces: Vec<Piece>,
}

impl Position {
    /// A position holding one piece.
    pub fn single(name: &str, combine: Combine, value: f64, tolerance: Tolerance) -> Self {
        Self {
            name: name.to_string(),
            combine,
            net: Net::Piece(0),
            pieces: vec![Piece { value, tolerance }],
        }
    }

    /// Nominal value of the network.
    pub fn nominal(&self) -> f64 {
        let v: Vec<f64> = self.pieces.iter().map(|p| p.value).collect();
        self.net.value(&v, self.combine)
    }

    /// If the network is `n ≥ 2` equal pieces (same value and tolerance) all in series or all in
    /// parallel, `n`.
    pub fn equal_pieces(&self) -> Option<usize> {
        let ch = match &self.net {
            Net::Series(ch) | Net::Parallel(ch) => ch,
            Net::Piece(_) => return None,
        };
        let first = self.pieces.first()?;
        let all_leaves = ch.iter().all(|c| matches!(c, Net::Piece(_)));
        let equal = self.pieces.iter().all(|p| p == first);
        (all_leaves && equal && ch.len() >= 2).then_some(ch.len())
    }
}

/// One stage to analyse: the form, its positions and the timer's own error.
#[derive(Debug, Clone, PartialEq)]
pub struct StageModel {
    /// Circuit form.
    pub form: Form,
    /// Diode wiring (steered only).
    pub steering: Steering,
    /// Monostable R, astable R1, steered Ra, square R.
    pub r1: Position,
    /// Astable R2, steered Rb.
    pub r2: Option<Position>,
    /// Timing capacitor.
    pub c: Position,
    /// Operating conditions.
    pub conditions: Conditions,
    /// The chip's own timing error either way (initial error plus drift).
    pub timer_error: Ratio,
}

/// What is analysed: one stage, or a pace astable triggering a width monostable.
#[derive(Debug, Clone, PartialEq)]
pub enum Circuit {
    /// One stage.
    Single(Box<StageModel>),
    /// Fixed frequency from `pace`, width from the monostable `width`.
    Pair {
        /// The free-running stage that sets the period.
        pace: Box<StageModel>,
        /// The monostable that sets the pulse width.
        width: Box<StageModel>,
    },
}

/// A quantity the analysis reports.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Quantity {
    /// Output high time (pulse width), seconds.
    High,
    /// Output low time, seconds.
    Low,
    /// Period, seconds.
    Period,
    /// Frequency, hertz.
    Frequency,
    /// Duty cycle, fraction.
    Duty,
}

impl Quantity {
    /// Every quantity, in output order.
    pub const ALL: [Quantity; 5] = [
        Quantity::High,
        Quantity::Low,
        Quantity::Period,
        Quantity::Frequency,
        Quantity::Duty,
    ];

    fn index(self) -> usize {
        self as usize
    }

    /// Plain name.
    pub fn label(self) -> &'static str {
        match self {
            Quantity::High => "high time",
            Quantity::Low => "low time",
            Quantity::Period => "period",
            Quantity::Frequency => "frequency",
            Quantity::Duty => "duty",
        }
    }

    /// Unit of its values: `s`, `Hz` or `ratio`.
    pub fn unit(self) -> &'static str {
        match self {
            Quantity::High | Quantity::Low | Quantity::Period => "s",
            Quantity::Frequency => "Hz",
            Quantity::Duty => "ratio",
        }
    }
}

/// A quantity's nominal value, model band and worst-case interval (SI units of the quantity).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Interval {
    /// Which quantity.
    pub quantity: Quantity,
    /// At nominal values.
    pub nominal: f64,
    /// Lowest over all corners (the model's nominal at each corner).
    pub min: f64,
    /// Highest over all corners.
    pub max: f64,
    /// Lowest the modelled effects allow at nominal part values (the model band).
    pub band_lo: f64,
    /// Highest the modelled effects allow at nominal part values.
    pub band_hi: f64,
    /// Lowest over all corners with the model band at each: the honest worst case.
    pub worst_lo: f64,
    /// Highest over all corners with the model band at each.
    pub worst_hi: f64,
}

impl Interval {
    /// An interval of one value (no band, no spread).
    pub fn point(quantity: Quantity, v: f64) -> Self {
        Self {
            quantity,
            nominal: v,
            min: v,
            max: v,
            band_lo: v,
            band_hi: v,
            worst_lo: v,
            worst_hi: v,
        }
    }
}

/// The exact worst case.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct WorstCase {
    /// How many corners were evaluated.
    pub corners: u64,
    /// Toleranced pieces (parts plus one timer factor per stage).
    pub pieces: usize,
    /// One interval per quantity the design has.
    pub intervals: Vec<Interval>,
}

impl WorstCase {
    /// The interval of `q`, if the design has it.
    pub fn get(&self, q: Quantity) -> Option<&Interval> {
        self.intervals.iter().find(|i| i.quantity == q)
    }
}

/// How each piece is drawn in Monte Carlo.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum Spread {
    /// Uniform between the tolerance limits (the default: makes no claim about the maker's
    /// sorting, and never leaves the limits).
    #[default]
    Uniform,
    /// Normal with the tolerance at 3σ on each side (unbounded).
    Normal,
}

/// Summary of one quantity over the samples.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Stats {
    /// Which quantity.
    pub quantity: Quantity,
    /// Mean.
    pub mean: f64,
    /// Standard deviation.
    pub std_dev: f64,
    /// 1st percentile.
    pub p1: f64,
    /// Median.
    pub p50: f64,
    /// 99th percentile.
    pub p99: f64,
}

/// Every Monte Carlo sample of every quantity a design has: one sorted list per quantity.
pub type Samples = Vec<(Quantity, Vec<f64>)>;

/// Monte Carlo result.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MonteCarlo {
    /// Samples drawn.
    pub samples: usize,
    /// The seed.
    pub seed: u64,
    /// How pieces were drawn.
    pub spread: Spread,
    /// One summary per quantity.
    pub stats: Vec<Stats>,
    /// Share of samples inside the target band, when a target was given.
    pub within_target: Option<f64>,
}

impl MonteCarlo {
    /// The summary of `q`.
    pub fn get(&self, q: Quantity) -> Option<&Stats> {
        self.stats.iter().find(|s| s.quantity == q)
    }
}

/// A target: quantity, value and allowed relative error either way.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Target {
    /// Which quantity.
    pub quantity: Quantity,
    /// Wanted value (SI units of the quantity).
    pub value: f64,
    /// Allowed error either way.
    pub within: Ratio,
}

impl Target {
    /// The band `[value·(1 − within), value·(1 + within)]`.
    pub fn band(&self) -> (f64, f64) {
        let w = self.within.si();
        (self.value * (1.0 - w), self.value * (1.0 + w))
    }
}

/// Whether the worst case stays within the target.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Verdict {
    /// The target.
    pub target: Target,
    /// True when every corner, with the model band at each, lies inside the band.
    pub guaranteed: bool,
    /// True when the nominal's model band lies inside the band.
    pub band_inside: bool,
    /// True when the nominal value lies inside the band.
    pub nominal_inside: bool,
    /// Worst-case interval of the quantity.
    pub interval: Interval,
}

/// A trimmer in series with a fixed part that can set the quantity exactly in every corner.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct TrimPlan {
    /// Quantity set by the trim.
    pub quantity: Quantity,
    /// Value it is set to.
    pub goal: f64,
    /// Lowest and highest resistance the position needs over all corners of the other parts
    /// and the timer error.
    pub need_min: f64,
    /// See `need_min`.
    pub need_max: f64,
    /// Resistance needed with everything else nominal.
    pub need_nominal: f64,
    /// Fixed resistor (E24), ohms; `None` when the trimmer alone is used.
    pub fixed: Option<f64>,
    /// Tolerance assumed for the fixed part.
    pub fixed_tolerance: Tolerance,
    /// Trimmer full-track value, ohms.
    pub trimmer: f64,
    /// Trimmer track tolerance assumed.
    pub trimmer_tolerance: Tolerance,
    /// Where the nominal setting sits on the trimmer's travel (0 = end, 1 = full).
    pub nominal_setting: f64,
}

/// The unknown part inferred from a measurement.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Inference {
    /// The position that was unknown.
    pub position: String,
    /// Value with every known part nominal, SI units.
    pub nominal: f64,
    /// Lowest value consistent with the known parts' tolerances and the timer error.
    pub min: f64,
    /// Highest such value.
    pub max: f64,
    /// Nearest preferred value (E24 for resistors, E12 for capacitors) to the nominal.
    pub nearest: f64,
    /// The series `nearest` was taken from.
    pub series: Series,
    /// Every value of that series inside `[min, max]`.
    pub candidates: Vec<f64>,
}

struct FlatStage {
    form: Form,
    steering: Steering,
    k: Factors,
    phys: Option<Physics>,
    r1: usize,
    r2: Option<usize>,
    c: usize,
    /// The chip's error on the charge (high) time.
    timer: usize,
    /// The chip's error on the discharge (low) time; the same piece for a one-shot.
    timer_low: usize,
}

struct FlatPos {
    name: String,
    combine: Combine,
    net: Net,
    start: usize,
    len: usize,
}

/// A circuit flattened for fast evaluation: every piece in one list.
pub struct Analysis {
    stages: Vec<FlatStage>,
    positions: Vec<FlatPos>,
    pieces: Vec<Piece>,
    pair: bool,
}

type Out = [f64; 5];

/// The evaluator's inputs for [`Analysis::with_physics`].
type Physical<'a> = (&'a Family, &'a Model, &'a [Option<CapFacts>]);

/// Every quantity at one point: nominal, band low, band high.
type Banded5 = [[f64; 3]; 5];

impl Analysis {
    /// Flatten `circuit` with the closed forms of each stage's conditions; fails when a stage
    /// cannot run under its conditions.
    pub fn new(circuit: &Circuit) -> Result<Self, ToleranceError> {
        Self::build(circuit, None)
    }

    /// Flatten `circuit` with every time from the one evaluator under `family` and `model`;
    /// `caps` holds what is known of each stage's timing capacitor (stage order; missing
    /// entries are unknown), for the DC-bias loss of class-2 ceramics.
    pub fn with_physics(
        circuit: &Circuit,
        family: &Family,
        model: &Model,
        caps: &[Option<CapFacts>],
    ) -> Result<Self, ToleranceError> {
        Self::build(circuit, Some((family, model, caps)))
    }

    fn build(circuit: &Circuit, physics: Option<Physical<'_>>) -> Result<Self, ToleranceError> {
        let mut a = Analysis {
            stages: Vec::new(),
            positions: Vec::new(),
            pieces: Vec::new(),
            pair: matches!(circuit, Circuit::Pair { .. }),
        };
        match circuit {
            Circuit::Single(s) => a.add_stage(s, physics)?,
            Circuit::Pair { pace, width } => {
                if !pace.form.is_periodic() || width.form != Form::Monostable {
                    return Err(ToleranceError::NoSolution(
                        "a pair is a free-running pace stage and a monostable width stage".into(),
                    ));
                }
                a.add_stage(pace, physics)?;
                a.add_stage(width, physics)?;
            }
        }
        Ok(a)
    }

    fn add_pos(&mut self, p: &Position) -> usize {
        let start = self.pieces.len();
        self.pieces.extend(p.pieces.iter().copied());
        self.positions.push(FlatPos {
            name: p.name.clone(),
            combine: p.combine,
            net: p.net.clone(),
            start,
            len: p.pieces.len(),
        });
        self.positions.len() - 1
    }

    fn add_stage(
        &mut self,
        s: &StageModel,
        physics: Option<Physical<'_>>,
    ) -> Result<(), ToleranceError> {
        let (k, phys) = match physics {
            None => (s.conditions.factors()?, None),
            Some((family, model, caps)) => {
                let stage = super::design::Stage {
                    form: s.form,
                    r1: crate::units::Ohms::from_si(s.r1.nominal()).unwrap_or_default(),
                    r2: s
                        .r2
                        .as_ref()
                        .map(|p| crate::units::Ohms::from_si(p.nominal()).unwrap_or_default()),
                    c: crate::units::Farads::from_si(s.c.nominal()).unwrap_or_default(),
                    cap: caps.get(self.stages.len()).copied().flatten(),
                    conditions: s.conditions,
                    steering: s.steering,
                };
                let phys = Physics::new(&stage, family, model)?;
                // The closed-form factors are not used with physics; keep the ideal ones.
                let k = Conditions::ideal(s.conditions.vcc)
                    .factors()
                    .unwrap_or(Factors {
                        one_shot: f64::NAN,
                        charge: f64::NAN,
                        discharge: f64::NAN,
                        steered_charge: f64::NAN,
                        steered_discharge: f64::NAN,
                        square_high: f64::NAN,
                        square_low: f64::NAN,
                    });
                (k, Some(phys))
            }
        };
        let r1 = self.add_pos(&s.r1);
        let r2 = match (&s.r2, s.form.has_r2()) {
            (Some(p), true) => Some(self.add_pos(p)),
            (None, true) => {
                return Err(ToleranceError::NoSolution(
                    "this form needs a second resistor".into(),
                ));
            }
            _ => None,
        };
        let c = self.add_pos(&s.c);
        self.pieces.push(Piece {
            value: 1.0,
            tolerance: Tolerance {
                minus: s.timer_error,
                plus: s.timer_error,
            },
        });
        let timer = self.pieces.len() - 1;
        let timer_low = if s.form.is_periodic() {
            self.pieces.push(Piece {
                value: 1.0,
                tolerance: Tolerance {
                    minus: s.timer_error,
                    plus: s.timer_error,
                },
            });
            self.pieces.len() - 1
        } else {
            timer
        };
        self.stages.push(FlatStage {
            form: s.form,
            steering: s.steering,
            k,
            phys,
            r1,
            r2,
            c,
            timer,
            timer_low,
        });
        let nom = self.nominal_vals();
        // An evaluator error at nominal values is the form's own error: report it.
        if let Some(p) = &phys {
            let st = self.stages.last().map(|st| {
                let r1 = self.pos_value(st.r1, &nom, None);
                let r2 = st.r2.map_or(0.0, |i| self.pos_value(i, &nom, None));
                let c = self.pos_value(st.c, &nom, None);
                p.evaluate_si(st.form, st.steering, r1, r2, c, true)
            });
            if let Some(Err(e)) = st {
                return Err(ToleranceError::Form(e));
            }
        }
        Ok(())
    }

    /// Every toleranced piece, parts then the stage's timer factor, stage by stage.
    pub fn pieces(&self) -> &[Piece] {
        &self.pieces
    }

    /// The quantities this design has.
    pub fn quantities(&self) -> Vec<Quantity> {
        if !self.pair
            && self
                .stages
                .first()
                .is_some_and(|s| s.form == Form::Monostable)
        {
            vec![Quantity::High]
        } else {
            Quantity::ALL.to_vec()
        }
    }

    /// Index of the position called `name` (case-insensitive).
    pub fn position(&self, name: &str) -> Result<usize, ToleranceError> {
        self.positions
            .iter()
            .position(|p| p.name.eq_ignore_ascii_case(name))
            .ok_or_else(|| ToleranceError::NoPosition(name.to_string()))
    }

    fn pos_value(&self, i: usize, vals: &[f64], replace: Option<(usize, f64)>) -> f64 {
        if let Some((j, v)) = replace
            && j == i
        {
            return v;
        }
        let p = &self.positions[i];
        p.net.value(&vals[p.start..p.start + p.len], p.combine)
    }

    /// High and low time of one stage at these values: `[nominal, band corners…]` pairs. Without
    /// physics (or without `band`) only the nominal. NaN where the evaluator finds no time.
    fn stage_times(
        &self,
        s: &FlatStage,
        vals: &[f64],
        rep: Option<(usize, f64)>,
        band: bool,
    ) -> Vec<(f64, f64)> {
        let r1 = self.pos_value(s.r1, vals, rep);
        let r2 = s.r2.map_or(0.0, |i| self.pos_value(i, vals, rep));
        let c = self.pos_value(s.c, vals, rep);
        let (th, tl) = (vals[s.timer], vals[s.timer_low]);
        match &s.phys {
            None => {
                let (h, l) = cycle_si(s.form, s.steering, r1, r2, c, &s.k);
                vec![(h * th, l.map_or(f64::NAN, |l| l * tl))]
            }
            Some(p) => match p.evaluate_si(s.form, s.steering, r1, r2, c, band) {
                Err(_) => vec![(f64::NAN, f64::NAN)],
                Ok(t) => {
                    let low = t.low;
                    let l =
                        |f: fn(&super::evaluate::Banded) -> f64| low.as_ref().map_or(f64::NAN, f);
                    let mut out = vec![(t.high.nominal * th, l(|b| b.nominal) * tl)];
                    if band {
                        // The band's ends of high and low (each time's extremes; pairing the
                        // ends gives a superset of period and duty too).
                        out.push((t.high.band_lo * th, l(|b| b.band_lo) * tl));
                        out.push((t.high.band_hi * th, l(|b| b.band_hi) * tl));
                        out.push((t.high.band_lo * th, l(|b| b.band_hi) * tl));
                        out.push((t.high.band_hi * th, l(|b| b.band_lo) * tl));
                    }
                    out
                }
            },
        }
    }

    /// Every quantity at these piece values (NaN where the design has none).
    pub fn eval_at(&self, vals: &[f64]) -> [f64; 5] {
        self.eval_with(vals, None)
    }

    fn eval_with(&self, vals: &[f64], rep: Option<(usize, f64)>) -> Out {
        let b = self.eval_points(vals, rep, false);
        b.first().copied().unwrap_or([f64::NAN; 5])
    }

    /// Every quantity at every band point (the first is the nominal).
    fn eval_points(&self, vals: &[f64], rep: Option<(usize, f64)>, band: bool) -> Vec<Out> {
        let Some(first) = self.stages.first() else {
            return vec![[f64::NAN; 5]];
        };
        let a = self.stage_times(first, vals, rep, band);
        if self.pair {
            let Some(second) = self.stages.get(1) else {
                return vec![[f64::NAN; 5]];
            };
            let w = self.stage_times(second, vals, rep, band);
            let mut out = Vec::new();
            for &(h, l) in &a {
                for &(wd, _) in &w {
                    let period = h + l;
                    out.push([wd, period - wd, period, 1.0 / period, wd / period]);
                }
            }
            return out;
        }
        a.into_iter()
            .map(|(h, l)| {
                if first.form == Form::Monostable {
                    [h, f64::NAN, f64::NAN, f64::NAN, f64::NAN]
                } else {
                    let period = h + l;
                    [h, l, period, 1.0 / period, h / period]
                }
            })
            .collect()
    }

    /// Every quantity at these values: nominal, band low, band high.
    fn eval_banded(&self, vals: &[f64], rep: Option<(usize, f64)>) -> Banded5 {
        let pts = self.eval_points(vals, rep, true);
        let mut out = [[f64::NAN; 3]; 5];
        for (q, o) in out.iter_mut().enumerate() {
            let nominal = pts.first().map_or(f64::NAN, |p| p[q]);
            let (mut lo, mut hi) = (nominal, nominal);
            for p in &pts {
                if p[q].is_nan() {
                    lo = f64::NAN;
                    hi = f64::NAN;
                    break;
                }
                lo = lo.min(p[q]);
                hi = hi.max(p[q]);
            }
            *o = [nominal, lo, hi];
        }
        out
    }

    fn nominal_vals(&self) -> Vec<f64> {
        self.pieces.iter().map(|p| p.value).collect()
    }

    /// Every quantity at nominal values.
    pub fn nominal(&self) -> [f64; 5] {
        self.eval_at(&self.nominal_vals())
    }

    /// Visit every corner of the pieces listed in `free` (others at nominal).
    fn corners(
        &self,
        free: &[usize],
        visit: &mut dyn FnMut(&[f64]) -> Result<(), ToleranceError>,
    ) -> Result<u64, ToleranceError> {
        if free.len() > MAX_CORNER_PIECES {
            return Err(ToleranceError::TooManyPieces {
                pieces: free.len(),
                max: MAX_CORNER_PIECES,
            });
        }
        let bounds: Vec<(f64, f64)> = free.iter().map(|&i| self.pieces[i].bounds()).collect();
        let mut vals = self.nominal_vals();
        let n: u64 = 1 << free.len();
        for mask in 0..n {
            for (bit, (&i, &(lo, hi))) in free.iter().zip(&bounds).enumerate() {
                vals[i] = if mask >> bit & 1 == 1 { hi } else { lo };
            }
            visit(&vals)?;
        }
        Ok(n)
    }

    /// Every quantity at nominal values with its model band: `[nominal, band_lo, band_hi]`.
    pub fn nominal_banded(&self) -> [[f64; 3]; 5] {
        self.eval_banded(&self.nominal_vals(), None)
    }

    /// Exact worst case over all `2^n` corners (with the model band at each corner for the
    /// `worst_*` ends). A corner where the capacitor never reaches a threshold is an error.
    pub fn worst_case(&self) -> Result<WorstCase, ToleranceError> {
        let qs = self.quantities();
        let nom = self.nominal_banded();
        let mut lo = [f64::INFINITY; 5];
        let mut hi = [f64::NEG_INFINITY; 5];
        let mut wlo = [f64::INFINITY; 5];
        let mut whi = [f64::NEG_INFINITY; 5];
        let free: Vec<usize> = (0..self.pieces.len()).collect();
        let corners = self.corners(&free, &mut |v| {
            let o = self.eval_banded(v, None);
            for q in &qs {
                let i = q.index();
                if o[i].iter().any(|x| !x.is_finite()) {
                    return Err(ToleranceError::NoSolution(format!(
                        "at some corner of the part tolerances the {} has no value: the capacitor never reaches a threshold there",
                        q.label()
                    )));
                }
                lo[i] = lo[i].min(o[i][0]);
                hi[i] = hi[i].max(o[i][0]);
                wlo[i] = wlo[i].min(o[i][1]);
                whi[i] = whi[i].max(o[i][2]);
            }
            Ok(())
        })?;
        Ok(WorstCase {
            corners,
            pieces: self.pieces.len(),
            intervals: qs
                .iter()
                .map(|&q| {
                    let i = q.index();
                    Interval {
                        quantity: q,
                        nominal: nom[i][0],
                        min: lo[i],
                        max: hi[i],
                        band_lo: nom[i][1],
                        band_hi: nom[i][2],
                        worst_lo: wlo[i],
                        worst_hi: whi[i],
                    }
                })
                .collect(),
        })
    }

    /// Whether the worst case stays inside the target band.
    pub fn verdict(&self, wc: &WorstCase, target: Target) -> Result<Verdict, ToleranceError> {
        let interval = *wc
            .get(target.quantity)
            .ok_or(ToleranceError::NoQuantity(target.quantity.label()))?;
        let (a, b) = target.band();
        Ok(Verdict {
            target,
            guaranteed: interval.worst_lo >= a && interval.worst_hi <= b,
            band_inside: interval.band_lo >= a && interval.band_hi <= b,
            nominal_inside: interval.nominal >= a && interval.nominal <= b,
            interval,
        })
    }

    fn draw(&self, rng: &mut SmallRng, spread: Spread, vals: &mut [f64]) {
        for (v, p) in vals.iter_mut().zip(&self.pieces) {
            *v = match spread {
                Spread::Uniform => {
                    let (lo, hi) = p.bounds();
                    if hi > lo {
                        rng.random_range(lo..=hi)
                    } else {
                        lo
                    }
                }
                Spread::Normal => {
                    let z: f64 = StandardNormal.sample(rng);
                    let side = if z < 0.0 {
                        p.tolerance.minus.si()
                    } else {
                        p.tolerance.plus.si()
                    };
                    p.value * (1.0 + z * side / 3.0)
                }
            };
        }
    }

    /// Monte Carlo over `samples` draws from `seed`.
    pub fn monte_carlo(
        &self,
        samples: usize,
        seed: u64,
        spread: Spread,
        target: Option<Target>,
    ) -> Result<MonteCarlo, ToleranceError> {
        self.monte_carlo_samples(samples, seed, spread, target)
            .map(|(mc, _)| mc)
    }

    /// [`Analysis::monte_carlo`], also handing back every sample of every quantity the design
    /// has (sorted ascending, one list per quantity), for a histogram. Same draws, same summary.
    pub fn monte_carlo_samples(
        &self,
        samples: usize,
        seed: u64,
        spread: Spread,
        target: Option<Target>,
    ) -> Result<(MonteCarlo, Samples), ToleranceError> {
        if samples == 0 {
            return Err(ToleranceError::NoSolution(
                "Monte Carlo needs at least one sample".into(),
            ));
        }
        if let Some(t) = target
            && !self.quantities().contains(&t.quantity)
        {
            return Err(ToleranceError::NoQuantity(t.quantity.label()));
        }
        let qs = self.quantities();
        let mut rng = SmallRng::seed_from_u64(seed);
        let mut vals = self.nominal_vals();
        let mut cols: Vec<Vec<f64>> = qs.iter().map(|_| Vec::with_capacity(samples)).collect();
        let mut inside = 0usize;
        for _ in 0..samples {
            self.draw(&mut rng, spread, &mut vals);
            let o = self.eval_at(&vals);
            for (col, q) in cols.iter_mut().zip(&qs) {
                col.push(o[q.index()]);
            }
            if let Some(t) = target {
                let (a, b) = t.band();
                let x = o[t.quantity.index()];
                if x >= a && x <= b {
                    inside += 1;
                }
            }
        }
        let stats = qs
            .iter()
            .zip(cols.iter_mut())
            .map(|(&q, col)| summarise(q, col))
            .collect();
        Ok((
            MonteCarlo {
                samples,
                seed,
                spread,
                stats,
                within_target: target.map(|_| inside as f64 / samples as f64),
            },
            qs.into_iter().zip(cols).collect(),
        ))
    }

    /// Positions whose equal pieces average their random errors: (name, pieces).
    pub fn averaging(&self) -> Vec<(String, usize)> {
        self.positions
            .iter()
            .filter_map(|p| {
                let pos = Position {
                    name: p.name.clone(),
                    combine: p.combine,
                    net: p.net.clone(),
                    pieces: self.pieces[p.start..p.start + p.len].to_vec(),
                };
                pos.equal_pieces().map(|n| (p.name.clone(), n))
            })
            .collect()
    }

    /// The value of position `pos` that makes quantity `q` equal `goal` with the other pieces
    /// at `vals`. Times rise with every part, so a bisection in log space finds it.
    fn solve_for(&self, pos: usize, q: Quantity, goal: f64, vals: &[f64]) -> Option<f64> {
        let (lo, hi) = match self.positions[pos].combine {
            Combine::Resistive => (1e-3f64.ln(), 1e13f64.ln()),
            Combine::Capacitive => (1e-16f64.ln(), 1e4f64.ln()),
        };
        let at = |x: f64| self.eval_with(vals, Some((pos, x.exp())))[q.index()] - goal;
        let (flo, fhi) = (at(lo), at(hi));
        if !(flo.is_finite() && fhi.is_finite()) || flo.signum() == fhi.signum() {
            return None;
        }
        bisect_root(lo, hi, flo, fhi, &at)
    }

    /// Whether, with the other pieces at `vals`, even the smallest value of `pos` overshoots
    /// `goal` (so the position would have to be below anything buildable: zero).
    fn overshoots_at_zero(&self, pos: usize, q: Quantity, goal: f64, vals: &[f64]) -> bool {
        let (lo, hi) = match self.positions[pos].combine {
            Combine::Resistive => (1e-3, 1e13),
            Combine::Capacitive => (1e-16, 1e4),
        };
        let at = |x: f64| self.eval_with(vals, Some((pos, x)))[q.index()] - goal;
        let (flo, fhi) = (at(lo), at(hi));
        // Rising quantity (times): the smallest value is already too long.
        flo.is_finite() && fhi.is_finite() && flo.signum() == fhi.signum() && {
            let rising = fhi > flo;
            if rising { flo > 0.0 } else { flo < 0.0 }
        }
    }

    /// Range of values of `pos` that make `q` equal `goal` over every corner of the other pieces.
    fn solve_range(
        &self,
        pos: usize,
        q: Quantity,
        goal: f64,
    ) -> Result<(f64, f64, f64), ToleranceError> {
        if !self.quantities().contains(&q) {
            return Err(ToleranceError::NoQuantity(q.label()));
        }
        if q == Quantity::Duty {
            return Err(ToleranceError::NoSolution(
                "solve for a time or a frequency, not the duty".into(),
            ));
        }
        let p = &self.positions[pos];
        let name = p.name.clone();
        let none = || {
            ToleranceError::NoSolution(format!(
                "no value of {name} gives a {} of {goal} with the other parts",
                q.label()
            ))
        };
        let nominal = self
            .solve_for(pos, q, goal, &self.nominal_vals())
            .ok_or_else(none)?;
        let free: Vec<usize> = (0..self.pieces.len())
            .filter(|&i| i < p.start || i >= p.start + p.len)
            .collect();
        let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
        self.corners(&free, &mut |v| {
            // A corner where even a vanishing value overshoots needs the position at zero: the
            // interval then reaches down to 0 rather than giving up.
            let x = match self.solve_for(pos, q, goal, v) {
                Some(x) => x,
                None if self.overshoots_at_zero(pos, q, goal, v) => 0.0,
                None => return Err(none()),
            };
            lo = lo.min(x);
            hi = hi.max(x);
            Ok(())
        })?;
        Ok((nominal, lo, hi))
    }

    /// Which trimmer in series with which fixed E24 resistor lets position `pos` be set so that
    /// `q` equals `goal` in every corner of the other parts and the timer error. The fixed part
    /// keeps the tolerance of the position's pieces; the trimmer's track is taken at ±20 %.
    pub fn trim(&self, pos: usize, q: Quantity, goal: f64) -> Result<TrimPlan, ToleranceError> {
        let p = &self.positions[pos];
        if p.combine != Combine::Resistive {
            return Err(ToleranceError::NoSolution(format!(
                "{} is a capacitor; trim a resistor position",
                p.name
            )));
        }
        let (need_nominal, need_min, need_max) = self.solve_range(pos, q, goal)?;
        let fixed_tolerance = self.pieces[p.start..p.start + p.len]
            .iter()
            .map(|x| x.tolerance)
            .max_by_key(|t| t.widest())
            .unwrap_or(Tolerance {
                minus: Ratio::ZERO,
                plus: Ratio::ZERO,
            });
        let trimmer_tolerance =
            Tolerance::symmetric_percent(TRIMMER_TOLERANCE_PERCENT).unwrap_or(fixed_tolerance);
        let (flo, fhi) = fixed_tolerance.factors();
        let (tlo, _) = trimmer_tolerance.factors();
        // The fixed part at its highest must not exceed the lowest need (so the trimmer can
        // always add); at its lowest plus the trimmer at its lowest track value must reach the
        // highest need.
        let fixed = floor_preferred(need_min / fhi, Series::E24).filter(|&f| f >= 1.0);
        let base = fixed.map_or(0.0, |f| f * flo);
        let trimmer = TRIMMER_VALUES
            .iter()
            .copied()
            .find(|&t| base + t * tlo >= need_max)
            .ok_or_else(|| {
                ToleranceError::NoSolution(format!(
                    "no stocked trimmer value (up to 10 MΩ) covers {} to {} Ω",
                    need_min, need_max
                ))
            })?;
        let nominal_setting = (need_nominal - fixed.unwrap_or(0.0)) / trimmer;
        Ok(TrimPlan {
            quantity: q,
            goal,
            need_min,
            need_max,
            need_nominal,
            fixed,
            fixed_tolerance,
            trimmer,
            trimmer_tolerance,
            nominal_setting,
        })
    }

    /// Infer the value of position `pos` (its pieces are ignored) from a measured quantity.
    /// The measurement itself is taken as exact.
    pub fn infer(
        &self,
        pos: usize,
        q: Quantity,
        measured: f64,
    ) -> Result<Inference, ToleranceError> {
        let (nominal, min, max) = self.solve_range(pos, q, measured)?;
        let p = &self.positions[pos];
        let series = match p.combine {
            Combine::Resistive => Series::E24,
            Combine::Capacitive => Series::E12,
        };
        let nearest = nearest_preferred(nominal, series).unwrap_or(nominal);
        Ok(Inference {
            position: p.name.clone(),
            nominal,
            min,
            max,
            nearest,
            series,
            candidates: preferred_between(min.max(nominal * 0.5), max, series),
        })
    }
}

/// Bisection in log space for the root of `at` between `lo` and `hi` (where it changes sign).
fn bisect_root(
    mut lo: f64,
    mut hi: f64,
    flo: f64,
    fhi: f64,
    at: &dyn Fn(f64) -> f64,
) -> Option<f64> {
    let rising = fhi > flo;
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        let fm = at(mid);
        if (fm > 0.0) == rising {
            hi = mid;
        } else {
            lo = mid;
        }
    }
    Some((0.5 * (lo + hi)).exp())
}

fn summarise(q: Quantity, col: &mut [f64]) -> Stats {
    let n = col.len() as f64;
    let mean = col.iter().sum::<f64>() / n;
    let var = col.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (n - 1.0).max(1.0);
    col.sort_by(f64::total_cmp);
    let pct = |p: f64| {
        let i = ((p / 100.0) * (col.len() - 1) as f64).round() as usize;
        col.get(i).copied().unwrap_or(f64::NAN)
    };
    Stats {
        quantity: q,
        mean,
        std_dev: var.sqrt(),
        p1: pct(1.0),
        p50: pct(50.0),
        p99: pct(99.0),
    }
}

fn preferred_values_around(x: f64, series: Series) -> Vec<f64> {
    if !(x.is_finite() && x > 0.0) {
        return Vec::new();
    }
    let d = x.log10().floor() as i32;
    let mut out = Vec::new();
    for dec in d - 1..=d + 1 {
        for m in series.mantissas() {
            out.push(f64::from(m) / 100.0 * 10f64.powi(dec));
        }
    }
    out
}

/// The largest preferred value of `series` not above `x` (within a part in 10^9).
pub fn floor_preferred(x: f64, series: Series) -> Option<f64> {
    preferred_values_around(x, series)
        .into_iter()
        .filter(|&v| v <= x * (1.0 + 1e-9))
        .max_by(f64::total_cmp)
}

/// The preferred value of `series` nearest `x` on a log scale.
pub fn nearest_preferred(x: f64, series: Series) -> Option<f64> {
    preferred_values_around(x, series)
        .into_iter()
        .min_by(|a, b| (a / x).ln().abs().total_cmp(&(b / x).ln().abs()))
}

/// Every preferred value of `series` in `[lo, hi]`.
pub fn preferred_between(lo: f64, hi: f64, series: Series) -> Vec<f64> {
    if !(lo.is_finite() && hi.is_finite() && lo > 0.0 && hi >= lo) {
        return Vec::new();
    }
    let mut out = Vec::new();
    let (d0, d1) = (lo.log10().floor() as i32, hi.log10().floor() as i32);
    for dec in d0..=d1.min(d0 + 12) {
        for m in series.mantissas() {
            let v = f64::from(m) / 100.0 * 10f64.powi(dec);
            if v >= lo * (1.0 - 1e-9) && v <= hi * (1.0 + 1e-9) {
                out.push(v);
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::network::parse_net;
    use crate::units::Volts;

    fn tol(p: f64) -> Tolerance {
        Tolerance::symmetric_percent(p).expect("tol")
    }
    fn cond() -> Conditions {
        Conditions::ideal(Volts::from_si(9.0).expect("v"))
    }
    fn pos(name: &str, combine: Combine, expr: &str, t: f64) -> Position {
        let (net, vals) = parse_net(expr, &mut |s: &str| s.parse::<f64>()).expect("net");
        Position {
            name: name.into(),
            combine,
            net,
            pieces: vals
                .into_iter()
                .map(|value| Piece {
                    value,
                    tolerance: tol(t),
                })
                .collect(),
        }
    }
    fn astable(r1: &str, r2: &str, c: &str, t: f64, timer: f64) -> Analysis {
        Analysis::new(&Circuit::Single(Box::new(StageModel {
            form: Form::Astable,
            steering: Steering::TwoDiode,
            r1: pos("R1", Combine::Resistive, r1, t),
            r2: Some(pos("R2", Combine::Resistive, r2, t)),
            c: pos("C", Combine::Capacitive, c, t),
            conditions: cond(),
            timer_error: Ratio::from_percent(timer).expect("r"),
        })))
        .expect("analysis")
    }
    fn mono(r: &str, rt: f64, c: &str, ct: f64) -> Analysis {
        Analysis::new(&Circuit::Single(Box::new(StageModel {
            form: Form::Monostable,
            steering: Steering::TwoDiode,
            r1: pos("R", Combine::Resistive, r, rt),
            r2: None,
            c: pos("C", Combine::Capacitive, c, ct),
            conditions: cond(),
            timer_error: Ratio::ZERO,
        })))
        .expect("analysis")
    }

    #[test]
    fn five_percent_of_one_megohm() {
        // common practice: a 5 % part of 1 MΩ lies between 950 kΩ and 1.05 MΩ.
        let p = Piece {
            value: 1e6,
            tolerance: tol(5.0),
        };
        let (lo, hi) = p.bounds();
        assert!((lo - 950e3).abs() < 1e-6 && (hi - 1.05e6).abs() < 1e-6);
        // And a one-shot of that part with an exact capacitor spans ±5 % of its width.
        let a = mono("1e6", 5.0, "1e-6", 0.0);
        let i = *a
            .worst_case()
            .expect("wc")
            .get(Quantity::High)
            .expect("high");
        assert!((i.min / i.nominal - 0.95).abs() < 1e-9);
        assert!((i.max / i.nominal - 1.05).abs() < 1e-9);
    }

    #[test]
    fn corners_are_never_exceeded_by_a_dense_grid() {
        // Exactness of the corner search: no interior point may fall outside it.
        let a = astable("2200+1000", "10000||47000", "1e-8", 5.0, 2.0);
        let wc = a.worst_case().expect("wc");
        assert_eq!(wc.corners, 1 << a.pieces().len());
        let n = a.pieces().len();
        let levels = 4usize;
        let total = levels.pow(n as u32);
        let mut vals = vec![0.0; n];
        let mut attained = [false; 5];
        for idx in 0..total {
            let mut k = idx;
            for (i, v) in vals.iter_mut().enumerate() {
                let (lo, hi) = a.pieces()[i].bounds();
                *v = lo + (hi - lo) * (k % levels) as f64 / (levels - 1) as f64;
                k /= levels;
            }
            let o = a.eval_at(&vals);
            for (j, q) in wc.intervals.iter().enumerate() {
                let x = o[q.quantity as usize];
                let eps = 1e-12 * x.abs();
                assert!(
                    x >= q.min - eps && x <= q.max + eps,
                    "{:?} {x} outside",
                    q.quantity
                );
                if (x - q.min).abs() <= eps || (x - q.max).abs() <= eps {
                    attained[j] = true;
                }
            }
        }
        assert!(
            attained.iter().all(|&b| b),
            "grid corners reach the extremes"
        );
        // Duty's extremes pair R1 high with R2 low: a linear guess that moves all pieces
        // together would miss them. Check the interval is wider than that.
        let d = wc.get(Quantity::Duty).expect("duty");
        let all_hi = a.pieces().iter().map(|p| p.bounds().1).collect::<Vec<_>>();
        let together = a.eval_at(&all_hi)[Quantity::Duty as usize];
        assert!(d.max > together + 1e-6);
    }

    #[test]
    fn monte_carlo_is_seeded_and_inside_worst_case() {
        let a = astable("4700", "68000", "1e-8", 1.0, 2.25);
        let m1 = a.monte_carlo(5000, 7, Spread::Uniform, None).expect("mc");
        let m2 = a.monte_carlo(5000, 7, Spread::Uniform, None).expect("mc");
        let m3 = a.monte_carlo(5000, 8, Spread::Uniform, None).expect("mc");
        assert_eq!(m1, m2);
        assert_ne!(m1, m3);
        let wc = a.worst_case().expect("wc");
        for s in &m1.stats {
            let i = wc.get(s.quantity).expect("q");
            assert!(s.p1 >= i.min && s.p99 <= i.max && s.p1 <= s.p50 && s.p50 <= s.p99);
            assert!((s.mean - i.nominal).abs() / i.nominal < 0.01);
        }
        let n = a.monte_carlo(5000, 7, Spread::Normal, None).expect("mc");
        let (u, g) = (
            m1.get(Quantity::Period).expect("p").std_dev,
            n.get(Quantity::Period).expect("p").std_dev,
        );
        // Uniform over ±t has σ = t/√3; normal with t = 3σ has σ = t/3: ratio ≈ 0.58.
        assert!(g < u && g / u > 0.45 && g / u < 0.7, "{g} vs {u}");
    }

    #[test]
    fn samples_handed_back_are_the_summarised_draws() {
        let a = astable("4700", "68000", "1e-8", 1.0, 2.25);
        let plain = a.monte_carlo(3000, 5, Spread::Uniform, None).expect("mc");
        let (mc, drawn) = a
            .monte_carlo_samples(3000, 5, Spread::Uniform, None)
            .expect("mc");
        assert_eq!(mc, plain);
        assert_eq!(
            drawn.iter().map(|(q, _)| *q).collect::<Vec<_>>(),
            a.quantities()
        );
        let wc = a.worst_case().expect("wc");
        for (q, col) in &drawn {
            assert_eq!(col.len(), 3000);
            let s = mc.get(*q).expect("stats");
            let mean = col.iter().sum::<f64>() / col.len() as f64;
            assert!((mean - s.mean).abs() <= 1e-12 * s.mean.abs().max(1.0));
            assert_eq!(col[col.len() / 2], s.p50);
            let i = wc.get(*q).expect("interval");
            assert!(col.iter().all(|v| *v >= i.min && *v <= i.max));
        }
    }

    #[test]
    fn equal_parts_in_series_halve_the_random_spread() {
        // common practice (averaging of independent errors): n equal parts in series spread
        // 1/√n as much as one part of the same tolerance; for n = 4, one half.
        let four = mono("4000+4000+4000+4000", 5.0, "1e-6", 0.0);
        let one = mono("16000", 5.0, "1e-6", 0.0);
        let s4 = four
            .monte_carlo(20000, 1, Spread::Uniform, None)
            .expect("mc");
        let s1 = one
            .monte_carlo(20000, 1, Spread::Uniform, None)
            .expect("mc");
        let ratio =
            s4.get(Quantity::High).expect("h").std_dev / s1.get(Quantity::High).expect("h").std_dev;
        assert!((ratio - 0.5).abs() < 0.03, "ratio {ratio}");
        assert_eq!(four.averaging(), vec![("R".to_string(), 4)]);
        assert!(one.averaging().is_empty());
        // The worst case does not shrink: all four can sit at the same limit.
        let w4 = four.worst_case().expect("wc");
        let w1 = one.worst_case().expect("wc");
        let (a, b) = (
            w4.get(Quantity::High).expect("h"),
            w1.get(Quantity::High).expect("h"),
        );
        assert!((a.max / a.nominal - b.max / b.nominal).abs() < 1e-9);
    }

    #[test]
    fn target_verdict() {
        let a = astable("4700", "68000", "1e-8", 1.0, 0.0);
        let wc = a.worst_case().expect("wc");
        let f = wc.get(Quantity::Frequency).expect("f").nominal;
        let t = |w: f64| Target {
            quantity: Quantity::Frequency,
            value: f,
            within: Ratio::from_percent(w).expect("r"),
        };
        // 1 % parts everywhere: frequency can move by about 2 %, so ±5 % is guaranteed and ±1 %
        // is not.
        assert!(a.verdict(&wc, t(5.0)).expect("v").guaranteed);
        let v = a.verdict(&wc, t(1.0)).expect("v");
        assert!(!v.guaranteed && v.nominal_inside);
        let m = a
            .monte_carlo(2000, 1, Spread::Uniform, Some(t(1.0)))
            .expect("mc");
        let share = m.within_target.expect("share");
        assert!(share > 0.3 && share < 1.0, "{share}");
    }

    #[test]
    fn inverse_recovers_a_known_capacitor() {
        // Build the "measurement" from a known 22 nF and recover it.
        let a = astable("4700", "68000", "22e-9", 1.0, 0.0);
        let f = a.nominal()[Quantity::Frequency as usize];
        let unknown = astable("4700", "68000", "1", 1.0, 0.0);
        let c = unknown.position("C").expect("pos");
        let inf = unknown.infer(c, Quantity::Frequency, f).expect("infer");
        assert!(
            (inf.nominal - 22e-9).abs() / 22e-9 < 1e-9,
            "{}",
            inf.nominal
        );
        assert!((inf.nearest - 22e-9).abs() < 1e-15);
        // 1 % resistors: C between about 22/1.01 and 22/0.99 nF.
        assert!(inf.min < 22e-9 && inf.max > 22e-9);
        assert!((inf.max / inf.min - 1.01 / 0.99).abs() < 1e-6);
        assert!(inf.candidates.iter().any(|&v| (v - 22e-9).abs() < 1e-15));
    }

    #[test]
    fn inverse_recovers_r2_and_refuses_the_impossible() {
        let a = astable("4700", "33000", "1e-8", 1.0, 0.0);
        let period = a.nominal()[Quantity::Period as usize];
        let unknown = astable("4700", "1", "1e-8", 1.0, 0.0);
        let r2 = unknown.position("R2").expect("pos");
        let inf = unknown.infer(r2, Quantity::Period, period).expect("infer");
        assert!((inf.nominal - 33000.0).abs() < 1e-3);
        // A period shorter than R1 alone allows has no R2.
        assert!(unknown.infer(r2, Quantity::Period, 1e-9).is_err());
    }

    #[test]
    fn trim_covers_the_whole_spread() {
        let a = mono("100000", 5.0, "1e-6", 10.0);
        let goal = 0.1;
        let r = a.position("R").expect("pos");
        let plan = a.trim(r, Quantity::High, goal).expect("trim");
        // Re-check in our own terms: the fixed part's highest is below every need, and fixed
        // lowest plus trimmer lowest reaches every need.
        let (flo, fhi) = plan.fixed_tolerance.factors();
        let fixed = plan.fixed.expect("fixed part");
        assert!(fixed * fhi <= plan.need_min + 1e-9);
        assert!(fixed * flo + plan.trimmer * 0.8 >= plan.need_max);
        assert!(TRIMMER_VALUES.contains(&plan.trimmer));
        // Need range: goal/(ln3·C) over C ±10 %: 91.0 kΩ/1.1 … /0.9.
        let centre = goal / (3f64.ln() * 1e-6);
        assert!((plan.need_max / plan.need_min - 1.1 / 0.9).abs() < 1e-6);
        assert!((plan.need_nominal - centre).abs() / centre < 1e-9);
        // A smaller trimmer from the list would not do.
        let idx = TRIMMER_VALUES
            .iter()
            .position(|&t| t == plan.trimmer)
            .expect("idx");
        if idx > 0 {
            assert!(fixed * flo + TRIMMER_VALUES[idx - 1] * 0.8 < plan.need_max);
        }
        assert!(
            a.trim(a.position("C").expect("c"), Quantity::High, goal)
                .is_err()
        );
    }

    #[test]
    fn preferred_value_helpers() {
        // IEC 60063 E24 contains 4.7, 5.1, 6.8; E12 contains 2.2, 2.7.
        assert_eq!(floor_preferred(5000.0, Series::E24), Some(4700.0));
        assert_eq!(
            nearest_preferred(2.3e-8, Series::E12).map(|v| (v * 1e10).round()),
            Some(220.0)
        );
        let between = preferred_between(4500.0, 7000.0, Series::E24);
        assert_eq!(between, vec![4700.0, 5100.0, 5600.0, 6200.0, 6800.0]);
    }

    #[test]
    fn pair_duty_is_width_over_period() {
        let pace = StageModel {
            form: Form::Astable,
            steering: Steering::TwoDiode,
            r1: pos("R1", Combine::Resistive, "1000", 1.0),
            r2: Some(pos("R2", Combine::Resistive, "10000", 1.0)),
            c: pos("C1", Combine::Capacitive, "1e-7", 5.0),
            conditions: cond(),
            timer_error: Ratio::ZERO,
        };
        let width = StageModel {
            form: Form::Monostable,
            steering: Steering::TwoDiode,
            r1: pos("R3", Combine::Resistive, "10000", 1.0),
            r2: None,
            c: pos("C2", Combine::Capacitive, "1e-8", 5.0),
            conditions: cond(),
            timer_error: Ratio::ZERO,
        };
        let a = Analysis::new(&Circuit::Pair {
            pace: Box::new(pace),
            width: Box::new(width),
        })
        .expect("pair");
        let o = a.nominal();
        let period = 2f64.ln() * 21e3 * 1e-7;
        let w = 3f64.ln() * 1e4 * 1e-8;
        assert!((o[Quantity::Period as usize] - period).abs() < 1e-12);
        assert!((o[Quantity::Duty as usize] - w / period).abs() < 1e-9);
    }
}
