//! What a drawer can reach: for a stock snapshot, a circuit form (one-shot pulse width, classic
//! astable or output-driven square-wave frequency) and a piece limit per position, the spans of
//! time or frequency the stocked resistor networks give with each capacitor network; the holes
//! in a requested range; and for each hole the one preferred-value purchase (IEC 60063 series)
//! that closes most of it, checked by recomputing the reach with that part added.
//!
//! **Reachable** means what `find` means without `--guarantee` (`solve::judge`): some buildable
//! design's **model band** lies inside the window `value·(1 ± tol)`. A design whose time (pulse
//! width, or period) has the band `[b_lo, b_hi]` therefore reaches exactly the values from
//! `b_hi/(1 + tol)` to `b_lo/(1 − tol)` (nothing when the band is wider than the window); the
//! spans of every buildable design are merged. A frequency's tolerance applies to its period,
//! as in `find`.
//!
//! **Every time comes from the one evaluator** (`timing::evaluate`, under the request's
//! [`Model`]: the real-part model by default, the textbook one with `Model::ideal()`). The
//! resistor side is evaluated once per resistor network at a capacitance of one farad, through
//! the evaluator's own core (`Physics::evaluate_si`, what [`evaluate`](crate::timing::evaluate)
//! runs, without the effect texts): every segment the evaluator integrates is `R·C` times a
//! function of the resistances alone, so a design's time is that per-farad value times its
//! capacitance. A class-2 ceramic's DC-bias loss widens the band's low end by the evaluator's
//! own factor ([`dc_bias_loss`]). [`credited`] gives the time and the reached span of one
//! concrete design, and the tests prove it equal to `evaluate` on that design's stage, and the
//! map equal to a brute force of `judge` over small drawers.
//!
//! The one closed form left is the frequency limit: `timing::checks` judges the family's
//! maximum frequency on the stage's closed-form times (`Stage::times`), so the reach applies
//! that limit by the same closed form — a check, not a time the reach reports.
//!
//! **Electrical limits.** The window of admissible resistance is derived in closed form from the
//! family figures, by the rules of `timing::checks` (each Error rule that bounds R):
//! - the resistor feeding the discharge pin (one-shot R, astable R1): `Vcc/R1` plus the
//!   capacitor's `Vu/R2` (astable) at most the discharge limit; `Vcc²/R1` at most 0.25 W;
//! - charging current at the upper threshold at least 10× the threshold-pin current; the
//!   discharge-path current at the lower threshold at least 10× the trigger-pin current
//!   (astable R2, square-wave R);
//! - an electrolytic's leakage at most half the charging current (only when electrolytics are
//!   allowed); frequency at most the family maximum.
//!
//! A unit test compares the closed forms with `timing::check_stage` over a grid, and at run time
//! the extreme networks of every row shown are passed through `check_stage` (a disagreement is
//! an error, never drawn).
//!
//! **Astable.** The duty is left to the drawer in one simple way (R2 ≫ R1 territory): for every
//! R2 network, R1 is the smallest network of one or two pieces that the discharge pin allows
//! with that R2 and that the stock can supply beside it; the period is then
//! `C·(k_c·R1 + (k_c + k_d)·R2)`. That keeps the duty as close to 50 % as the drawer allows.
//! Larger R1 reach a little further at the long end and can fill narrow gaps, so the astable
//! reach is a safe under-estimate: everything shown can be built, and a hole may sometimes be
//! filled with a larger R1 and a more uneven duty (`find astable` settles a given frequency).
//!
//! Pure: no I/O, no store.

use super::admit::{self, CapFacts, Family, Form, Stage};
use crate::model::{Kind, Part, Technology, Value};
use crate::network::{Cand, Combine, Item, Pool, Step};
use crate::timing::evaluate::{Physics, dc_bias_loss};
use crate::timing::{Banded, Conditions, FormError, Limits, Model, Steering};
use crate::units::eseries::{Series, values_between};
use crate::units::{Farads, Ohms, Ratio, Tolerance, Volts, format_sig};
use serde::Serialize;
use std::cell::RefCell;
use std::rc::Rc;
use std::time::{Duration, Instant};

/// Bias-current ratio below which `timing::checks` refuses a design.
const BIAS_RATIO: f64 = crate::timing::checks::BIAS_RATIO_ERROR;
/// Leakage share of the charging current above which `timing::checks` refuses a design.
const LEAK_SHARE: f64 = 0.5;
/// Relative slack on the closed-form windows before the exact predicate runs.
const SLACK: f64 = 1e-9;
/// Holes that get a purchase suggestion (the widest first).
const MAX_HOLES: usize = 8;
/// Purchases tried by full recomputation.
const MAX_RECOMPUTE: usize = 16;
/// Bought capacitors are looked for between these values (film parts are commonly sold up to
/// about 10 µF, common practice; above that timing needs an electrolytic).
const BUY_C: (f64, f64) = (100e-12, 10e-6);
/// A gap narrower than this share of the tolerance (on the log axis) is a narrow gap: counted,
/// not listed as a hole; any value in it lies within 1.05× the tolerance of a design.
pub const NARROW_SHARE: f64 = 0.1;
/// Bought resistors are looked for between these values.
const BUY_R: (f64, f64) = (10.0, 10e6);

/// The circuit whose reach is asked for.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum ReachForm {
    /// Monostable: the pulse width.
    Pulse,
    /// Classic astable: the frequency.
    Astable,
    /// Output-driven square wave: the frequency.
    Square,
}

impl ReachForm {
    /// What the axis shows.
    pub fn axis(self) -> &'static str {
        match self {
            ReachForm::Pulse => "pulse width",
            _ => "frequency",
        }
    }

    /// Unit of the axis.
    pub fn unit(self) -> &'static str {
        match self {
            ReachForm::Pulse => "s",
            _ => "Hz",
        }
    }

    fn timing_form(self) -> Form {
        match self {
            ReachForm::Pulse => Form::Monostable,
            ReachForm::Astable => Form::Astable,
            ReachForm::Square => Form::Square,
        }
    }
}

/// The question.
#[derive(Debug, Clone, PartialEq)]
pub struct Request {
    /// Which circuit.
    pub form: ReachForm,
    /// The range looked at: seconds for a pulse, hertz otherwise (low, high).
    pub range: (f64, f64),
    /// Target tolerance (0.01 for ±1 %).
    pub tol: f64,
    /// Most pieces in one position (1 to 3).
    pub max_pieces: usize,
    /// Timer family.
    pub family: Family,
    /// Supply and refinements (the square form takes the family's output drop itself).
    pub conditions: Conditions,
    /// Which effects the evaluator includes (`find`'s model: the real parts by default).
    pub model: Model,
    /// Capacitor technologies allowed (None: all).
    pub cap_techs: Option<Vec<Technology>>,
    /// Lowest acceptable known voltage rating of a capacitor, volts (a rating under the supply
    /// is always refused).
    pub min_cap_rating: Option<f64>,
    /// Most capacitor rows to list (the rest are summarised).
    pub max_rows: usize,
}

impl Request {
    /// The reach around a `find` request: the same tolerance, family, supply, model, capacitor
    /// technologies and rating, and at most three pieces a position (the picture `find` and the
    /// web design page draw beside a design).
    pub fn around(
        form: ReachForm,
        range: (f64, f64),
        s: &super::goal::Settings,
        max_rows: usize,
    ) -> Self {
        Request {
            form,
            range,
            tol: s.tol,
            max_pieces: s.max_pieces.min(3),
            family: s.family.clone(),
            conditions: s.conditions,
            model: s.model,
            cap_techs: s.cap_techs.clone(),
            min_cap_rating: s.min_cap_rating,
            max_rows,
        }
    }
}

/// Which side of the window a limit bounds.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Bound {
    /// The resistance must be at least this.
    AtLeast,
    /// The resistance must be at most this.
    AtMost,
}

/// One electrical limit on the resistance, as applied.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Limit {
    /// The position: `R`, `R1`, `R2`, `R1+R2`.
    pub position: &'static str,
    /// At least or at most.
    pub bound: Bound,
    /// The limit in ohms (for R1 of an astable: its value when R2 is very large).
    pub ohms: f64,
    /// The rule and the figures behind it.
    pub reason: String,
}

/// One capacitor network and what it reaches.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CapRow {
    /// The network written plainly: `10 nF ∥ 2.2 nF`.
    pub label: String,
    /// Its nominal value, farads.
    pub value: f64,
    /// Pieces in it.
    pub pieces: usize,
    /// Indices into the parts slice, one per piece.
    pub rows: Vec<usize>,
    /// Reached spans inside the range (axis units), merged, ascending.
    pub spans: Vec<(f64, f64)>,
}

/// The reach of a stock.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ReachMap {
    /// Which circuit.
    pub form: ReachForm,
    /// The range looked at (axis units).
    pub range: (f64, f64),
    /// Target tolerance.
    pub tol: f64,
    /// Most pieces per position.
    pub max_pieces: usize,
    /// The evaluator's model every time was computed under.
    pub model: Model,
    /// The electrical limits applied to the resistance.
    pub limits: Vec<Limit>,
    /// Resistor networks of up to `max_pieces` pieces the stock can supply.
    pub resistor_networks: usize,
    /// Of those, the ones the limits admit (astable: R2 networks that found an R1).
    pub usable_resistor_networks: usize,
    /// Capacitor networks the stock can supply (allowed technologies and ratings).
    pub capacitor_networks: usize,
    /// The rows listed: single capacitors, then two-piece networks that add reach.
    pub rows: Vec<CapRow>,
    /// Networks not listed.
    pub others: usize,
    /// What the networks not listed reach beyond the listed rows.
    pub others_add: Vec<(f64, f64)>,
    /// Everything reached, by any capacitor network.
    pub covered: Vec<(f64, f64)>,
    /// The ranges inside `range` nothing reaches, at least [`NARROW_SHARE`] of the tolerance
    /// wide.
    pub holes: Vec<(f64, f64)>,
    /// Gaps narrower than that (counted, not given purchases).
    pub narrow_gaps: Vec<(f64, f64)>,
}

/// A purchase that closes (part of) a hole.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Fix {
    /// Resistor or capacitor.
    pub kind: Kind,
    /// The preferred value, SI.
    pub value: f64,
    /// The series it comes from.
    pub series: Series,
    /// Share of the hole it closes (on the logarithmic axis), 0 to 1.
    pub closes: f64,
    /// What stays unreached of the hole with it.
    pub left: Vec<(f64, f64)>,
}

/// A hole and the purchase suggested for it.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Hole {
    /// Low end (axis units).
    pub lo: f64,
    /// High end.
    pub hi: f64,
    /// The best single purchase found, if any closes part of it.
    pub fix: Option<Fix>,
    /// Whether a purchase was looked for (only the widest holes are, within the time budget).
    pub searched: bool,
}

/// Why a reach cannot be computed.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum ReachError {
    /// A setting out of range.
    #[error("{0}")]
    Invalid(String),
    /// The operating conditions make the form impossible.
    #[error(transparent)]
    Form(#[from] FormError),
    /// The timer cannot run at all under these conditions (e.g. supply out of range).
    #[error("{0}")]
    Refused(String),
    /// The closed-form limits let through a network the electrical checks refuse (a bug).
    #[error("internal disagreement with the electrical checks: {0}")]
    Disagreement(String),
}

// ---------------------------------------------------------------------------------------------
// Spans on a positive axis.

/// Merge spans (any order) into ascending, disjoint spans.
pub fn merge(mut spans: Vec<(f64, f64)>) -> Vec<(f64, f64)> {
    spans.retain(|(a, b)| a.is_finite() && b.is_finite() && b >= a);
    spans.sort_unstable_by(|a, b| a.0.total_cmp(&b.0));
    let mut out: Vec<(f64, f64)> = Vec::with_capacity(spans.len());
    for (a, b) in spans {
        match out.last_mut() {
            Some(last) if a <= last.1 => last.1 = last.1.max(b),
            _ => out.push((a, b)),
        }
    }
    out
}

/// The parts of `range` that merged `covered` leaves out.
pub fn gaps(covered: &[(f64, f64)], range: (f64, f64)) -> Vec<(f64, f64)> {
    let mut out = Vec::new();
    let mut at = range.0;
    for &(a, b) in covered {
        if at >= range.1 {
            break;
        }
        if a > at {
            out.push((at, a.min(range.1)));
        }
        at = at.max(b);
    }
    if at < range.1 {
        out.push((at, range.1));
    }
    out.retain(|(a, b)| b > a);
    out
}

/// Join spans whose gap is narrower than `rel` on the log axis; also say how many gaps were
/// joined.
pub fn bridge(spans: &[(f64, f64)], rel: f64) -> (Vec<(f64, f64)>, usize) {
    let mut out: Vec<(f64, f64)> = Vec::with_capacity(spans.len());
    let mut joined = 0;
    for &(a, b) in spans {
        match out.last_mut() {
            Some(last) if a > 0.0 && (a / last.1).ln() < rel => {
                last.1 = last.1.max(b);
                joined += 1;
            }
            _ => out.push((a, b)),
        }
    }
    (out, joined)
}

/// Length on a logarithmic axis (natural log units) of merged spans.
pub fn log_length(spans: &[(f64, f64)]) -> f64 {
    spans
        .iter()
        .filter(|(a, b)| *a > 0.0 && b > a)
        .map(|(a, b)| (b / a).ln())
        .sum()
}

/// Merged spans clipped to `[lo, hi]`.
fn clip(spans: &[(f64, f64)], lo: f64, hi: f64) -> Vec<(f64, f64)> {
    spans
        .iter()
        .map(|&(a, b)| (a.max(lo), b.min(hi)))
        .filter(|(a, b)| b > a)
        .collect()
}

/// Log length of `a` not covered by `b` (both merged).
fn added_length(a: &[(f64, f64)], b: &[(f64, f64)]) -> f64 {
    let mut total = 0.0;
    for &(lo, hi) in a {
        total += log_length(&gaps(&clip(b, lo, hi), (lo, hi)));
    }
    total
}

// ---------------------------------------------------------------------------------------------
// The resistor side: C-independent.

/// Merged spans on the axis, ascending.
type Spans = Vec<(f64, f64)>;

/// One buildable resistor choice: the closed-form time per farad the frequency check judges
/// by, and the resistances behind it (its evaluated time lives in [`Side`]'s arrays).
#[derive(Debug, Clone, Copy, PartialEq)]
struct Entry {
    /// `Stage::times`' closed form per farad (the frequency check's own figure).
    check: f64,
    r1: f64,
    r2: f64,
}

/// A run of consecutive positions whose reached spans overlap: `[start, end)`; its first and
/// last positions reach something.
#[derive(Debug, Clone, Copy)]
struct Run {
    start: usize,
    end: usize,
}

/// The runs of the side's spans for capacitors that keep `kappa` of their value at the band's
/// low end (1 but for class-2 ceramics under DC bias): a position reaches `lo … kappa·hi`, or
/// nothing when that is empty.
struct Layer {
    kappa: f64,
    /// Highest reached end from the start of a position's run up to it.
    prefmax: Vec<f64>,
    runs: Vec<Run>,
}

struct Side {
    /// The resistor choices that reach anything, in ascending order of `lo`.
    entries: Vec<Entry>,
    /// Per farad, the low end of each entry's reached span: `band_hi/(1 + tol)` …
    lo: Vec<f64>,
    /// … and its high end without DC-bias loss, `band_lo/(1 − tol)` (the evaluator's band).
    hi: Vec<f64>,
    /// Lowest and highest `lo / check` (bounds the positions the frequency limit can cut).
    rho: (f64, f64),
    /// Resistor networks the limits admit (some may reach nothing: band wider than a window).
    usable: usize,
    total: usize,
    limits: Vec<Limit>,
    layers: RefCell<Vec<Rc<Layer>>>,
}

/// Spans pushed in ascending order of their low ends, merged as they come.
#[derive(Default)]
struct Merging {
    cur: Option<(f64, f64)>,
    out: Vec<(f64, f64)>,
}

impl Merging {
    fn push(&mut self, a: f64, b: f64) {
        match &mut self.cur {
            Some(c) if a <= c.1 => c.1 = c.1.max(b),
            _ => {
                if let Some(c) = self.cur.take() {
                    self.out.push(c);
                }
                self.cur = Some((a, b));
            }
        }
    }

    fn done(mut self) -> Vec<(f64, f64)> {
        if let Some(c) = self.cur.take() {
            self.out.push(c);
        }
        self.out
    }
}

/// Everything derived once from the request.
struct Prep<'a> {
    req: &'a Request,
    cond: Conditions,
    vcc: f64,
    vu: f64,
    vl: f64,
    /// The voltage the charging current is driven by at the upper threshold.
    charge_v: f64,
    /// The closed-form time per unit R·C (pulse, square) or `(k_c, k_c + k_d)` (astable) of
    /// `Stage::times`, for the frequency check only.
    check_k: (f64, f64),
    /// The evaluator's physics for these conditions, family and model (no capacitor facts).
    phys: Physics,
    power: f64,
    /// Time window (seconds) that maps onto the range.
    t_range: (f64, f64),
}

fn amps(a: f64) -> String {
    format_sig(a, 3, "A")
}
fn ohms(r: f64) -> String {
    format_sig(r, 3, "Ω")
}

impl<'a> Prep<'a> {
    fn new(req: &'a Request) -> Result<Self, ReachError> {
        let bad = |m: String| Err(ReachError::Invalid(m));
        let (lo, hi) = req.range;
        if !(lo.is_finite() && hi.is_finite() && lo > 0.0 && hi > lo) {
            return bad(format!(
                "the range must be two positive values, low before high (got {lo} … {hi})"
            ));
        }
        // Times are kept in picoseconds: about 106 days at most (units::quantity).
        let longest = match req.form {
            ReachForm::Pulse => hi,
            _ => 1.0 / lo,
        };
        if longest > 1e6 {
            return bad(format!(
                "the range reaches times over 10⁶ s ({}); keep it shorter",
                format_sig(longest, 3, "s")
            ));
        }
        if !(req.tol > 0.0 && req.tol < 1.0) {
            return bad(format!(
                "tolerance must lie between 0 and 100 %, not {} %",
                req.tol * 100.0
            ));
        }
        if !(1..=3).contains(&req.max_pieces) {
            return bad(format!(
                "pieces per position must be 1 to 3 here, not {}",
                req.max_pieces
            ));
        }
        let mut cond = req.conditions;
        if req.form == ReachForm::Square {
            cond.output_high_drop =
                Volts::from_si(req.family.output_high_drop.value).unwrap_or(Volts::ZERO);
        }
        let f = cond.factors()?;
        let (vu, vl) = cond.thresholds()?;
        let vcc = cond.vcc.si();
        let check_k = match req.form {
            ReachForm::Pulse => (f.one_shot, 0.0),
            ReachForm::Square => (f.square_high + f.square_low, 0.0),
            ReachForm::Astable => (f.charge, f.charge + f.discharge),
        };
        let charge_v = match req.form {
            ReachForm::Square => vcc - cond.output_high_drop.si() - vu,
            _ => vcc - vu,
        };
        let t_range = match req.form {
            ReachForm::Pulse => (lo, hi),
            _ => (1.0 / hi, 1.0 / lo),
        };
        let probe = Stage {
            form: req.form.timing_form(),
            r1: Ohms::from_si(10e3).unwrap_or(Ohms::ZERO),
            r2: (req.form == ReachForm::Astable)
                .then(|| Ohms::from_si(100e3).unwrap_or(Ohms::ZERO)),
            c: Farads::from_si(100e-9).unwrap_or(Farads::ZERO),
            cap: None,
            conditions: cond,
            steering: Steering::default(),
        };
        // Errors that no choice of parts avoids (supply range, unreachable thresholds).
        if let Some(f) = admit::review(&probe, &req.family).into_iter().find(|f| {
            f.severity == admit::Severity::Error && matches!(f.code, "supply-range" | "form")
        }) {
            return Err(ReachError::Refused(f.message));
        }
        // The evaluator refuses the form itself under this model (a bipolar square wave whose
        // output never rises above the upper threshold).
        crate::timing::evaluate(&probe, &req.family, &req.model)?;
        let phys = Physics::new(&probe, &req.family, &req.model)?;
        Ok(Self {
            req,
            cond,
            vcc,
            vu,
            vl,
            charge_v,
            check_k,
            phys,
            power: Limits::default().resistor_power.si(),
            t_range,
        })
    }

    fn stage(&self, r1: f64, r2: f64, c: f64, cap: Option<CapFacts>) -> Stage {
        let o = |v: f64| Ohms::from_si(v).unwrap_or(Ohms::ZERO);
        Stage {
            form: self.req.form.timing_form(),
            r1: o(r1),
            r2: (self.req.form == ReachForm::Astable).then(|| o(r2)),
            c: Farads::from_si(c).unwrap_or(Farads::ZERO),
            cap,
            conditions: self.cond,
            steering: Steering::default(),
        }
    }

    fn fam(&self) -> &Family {
        &self.req.family
    }

    /// The evaluator's time of these resistances per farad of capacitance (pulse width, or
    /// period), under the request's model; None when the evaluator refuses them.
    fn entry(&self, r1: f64, r2: f64) -> Option<(Entry, Banded)> {
        let form = self.req.form.timing_form();
        let t = self
            .phys
            .evaluate_si(form, Steering::default(), r1, r2, 1.0, true)
            .ok()?;
        let time = match self.req.form {
            ReachForm::Pulse => t.high,
            _ => t.period?,
        };
        Some((
            Entry {
                check: self.check_k.0 * r1 + self.check_k.1 * r2,
                r1,
                r2,
            },
            time,
        ))
    }

    /// Share of its capacitance a capacitor keeps at the band's low end: the evaluator's
    /// DC-bias loss of a class-2 ceramic at the upper threshold (1 when the model leaves it out).
    fn keep(&self, cap: Option<&CapFacts>) -> f64 {
        if self.req.model.dc_bias {
            1.0 - dc_bias_loss(cap, self.vu, self.vcc)
        } else {
            1.0
        }
    }

    /// The values (seconds) an entry reaches per farad with capacitors keeping `kappa`: the
    /// targets whose window `T·(1 ± tol)` holds the whole band (`solve::judge`). None when the
    /// band is wider than any window.
    fn span_of(&self, time: &Banded, kappa: f64) -> Option<(f64, f64)> {
        let t = self.req.tol;
        let lo = time.band_hi / (1.0 + t);
        let hi = kappa * time.band_lo / (1.0 - t);
        (hi >= lo).then_some((lo, hi))
    }

    /// The layer of `side` for capacitors keeping `kappa` (built once, then shared).
    fn layer(side: &Side, kappa: f64) -> Rc<Layer> {
        if let Some(l) = side
            .layers
            .borrow()
            .iter()
            .find(|l| l.kappa.to_bits() == kappa.to_bits())
        {
            return Rc::clone(l);
        }
        let (lo, hi) = (&side.lo, &side.hi);
        let mut runs: Vec<Run> = Vec::new();
        let mut prefmax: Vec<f64> = Vec::with_capacity(lo.len());
        let mut top = f64::NEG_INFINITY;
        for k in 0..lo.len() {
            let h = kappa * hi[k];
            if h >= lo[k] {
                match runs.last_mut() {
                    Some(r) if lo[k] <= top => {
                        r.end = k + 1;
                        top = top.max(h);
                    }
                    _ => {
                        runs.push(Run {
                            start: k,
                            end: k + 1,
                        });
                        top = h;
                    }
                }
            }
            prefmax.push(top);
        }
        let layer = Rc::new(Layer {
            kappa,
            prefmax,
            runs,
        });
        side.layers.borrow_mut().push(Rc::clone(&layer));
        layer
    }

    /// `bias` passes when `current` is at least 10× it (no bias figure: always).
    fn bias_ok(current: f64, bias: f64) -> bool {
        !(current.is_finite() && current > 0.0 && bias > 0.0) || current / bias >= BIAS_RATIO
    }

    /// The discharge-pin rules on R1 (one-shot R, astable R1), with the capacitor's current.
    fn r1_ok(&self, r1: f64, from_cap: f64) -> bool {
        let r1 = exact(r1);
        r1 > 0.0
            && self.vcc / r1 + from_cap <= self.fam().discharge_max.value
            && self.vcc * self.vcc / r1 <= self.power
    }

    /// Whether the electrical checks admit these resistances (capacitor-independent rules).
    fn admits(&self, r1: f64, r2: f64) -> bool {
        // The checks see the values as stored (whole milliohms); so does this.
        let (r1, r2) = (exact(r1), exact(r2));
        let fam = self.fam();
        let (ith, itr) = (fam.threshold_current.value, fam.trigger_current.value);
        match self.req.form {
            ReachForm::Pulse => self.r1_ok(r1, 0.0) && Self::bias_ok(self.charge_v / r1, ith),
            ReachForm::Square => {
                r1 > 0.0
                    && Self::bias_ok(self.charge_v / r1, ith)
                    && Self::bias_ok(self.vl / r1, itr)
            }
            ReachForm::Astable => {
                r2 > 0.0
                    && self.r1_ok(r1, self.vu / r2)
                    && Self::bias_ok(self.charge_v / (r1 + r2), ith)
                    && Self::bias_ok(self.vl / r2, itr)
            }
        }
    }

    /// Largest charging resistance an electrolytic of `c` farads with voltage rating `rating`
    /// allows (the checks' leakage rule, [`crate::timing::checks::leakage_estimate`]).
    fn leak_limit(&self, c: f64, tech: Technology, rating: Option<f64>) -> f64 {
        if !tech.is_electrolytic() {
            return f64::INFINITY;
        }
        let leak = crate::timing::checks::leakage_estimate(tech, c, rating, self.vcc);
        // leak / (V / R) ≤ ½  ⇔  R ≤ V / (2·leak).
        self.charge_v / (leak / LEAK_SHARE)
    }

    fn limits(&self) -> Vec<Limit> {
        let fam = self.fam();
        let imax = fam.discharge_max.value;
        let (ith, itr) = (fam.threshold_current.value, fam.trigger_current.value);
        let prov = |f: &crate::timing::Figure| f.provenance.label();
        let mut out = Vec::new();
        let feeds = matches!(self.req.form, ReachForm::Pulse | ReachForm::Astable);
        let first = if self.req.form == ReachForm::Astable {
            "R1"
        } else {
            "R"
        };
        if feeds {
            out.push(Limit {
                position: first,
                bound: Bound::AtLeast,
                ohms: self.vcc / imax,
                reason: format!(
                    "discharge-pin current Vcc/{first}{} at most {} ({})",
                    if self.req.form == ReachForm::Astable {
                        " + Vu/R2"
                    } else {
                        ""
                    },
                    amps(imax),
                    prov(&fam.discharge_max)
                ),
            });
            out.push(Limit {
                position: first,
                bound: Bound::AtLeast,
                ohms: self.vcc * self.vcc / self.power,
                reason: format!(
                    "dissipation Vcc²/{first} while discharging at most {} W (common practice)",
                    self.power
                ),
            });
        }
        let charge_pos = match self.req.form {
            ReachForm::Astable => "R1+R2",
            _ => "R",
        };
        if ith > 0.0 {
            out.push(Limit {
                position: charge_pos,
                bound: Bound::AtMost,
                ohms: self.charge_v / (BIAS_RATIO * ith),
                reason: format!(
                    "charging current at the upper threshold at least {BIAS_RATIO}× the threshold-pin current {} (common practice; figure {})",
                    amps(ith),
                    prov(&fam.threshold_current)
                ),
            });
        }
        if itr > 0.0 && self.req.form != ReachForm::Pulse {
            out.push(Limit {
                position: if self.req.form == ReachForm::Astable {
                    "R2"
                } else {
                    "R"
                },
                bound: Bound::AtMost,
                ohms: self.vl / (BIAS_RATIO * itr),
                reason: format!(
                    "discharge current at the lower threshold at least {BIAS_RATIO}× the trigger-pin current {} (common practice; figure {})",
                    amps(itr),
                    prov(&fam.trigger_current)
                ),
            });
        }
        out
    }

    /// The resistor pool of the stock (free pieces only).
    fn rpool(parts: &[Part]) -> Pool {
        Pool::new(
            parts
                .iter()
                .enumerate()
                .filter_map(|(row, p)| match (p.kind, p.value) {
                    (Kind::Resistor, Value::Resistance(r)) => Some(item(row, p, r.si())),
                    _ => None,
                })
                .collect(),
        )
    }

    /// The capacitor pool: allowed technologies, ratings not under the limits.
    fn cpool(&self, parts: &[Part]) -> Pool {
        let min_rating = self.req.min_cap_rating.unwrap_or(0.0).max(self.vcc);
        Pool::new(
            parts
                .iter()
                .enumerate()
                .filter_map(|(row, p)| match (p.kind, p.value) {
                    (Kind::Capacitor, Value::Capacitance(c)) => {
                        let tech_ok = self
                            .req
                            .cap_techs
                            .as_ref()
                            .is_none_or(|t| t.contains(&p.technology));
                        let rating_ok = p.voltage_rating.is_none_or(|v| v.si() >= min_rating);
                        (tech_ok && rating_ok).then(|| item(row, p, c.si()))
                    }
                    _ => None,
                })
                .collect(),
        )
    }

    fn side(&self, parts: &[Part]) -> Side {
        let pool = Self::rpool(parts);
        let k = self.req.max_pieces;
        let mut found: Vec<(Entry, Banded)> = Vec::new();
        let mut total = 0usize;
        match self.req.form {
            ReachForm::Pulse | ReachForm::Square => {
                for n in 1..=k {
                    let mut used = pool.fresh_usage();
                    pool.walk(n, 0.0, f64::INFINITY, &mut used, None, &mut |c, _| {
                        total += 1;
                        let r = exact(c.value);
                        if self.admits(r, 0.0)
                            && let Some(e) = self.entry(r, 0.0)
                        {
                            found.push(e);
                        }
                        Step::Go(0.0, f64::INFINITY)
                    });
                }
            }
            ReachForm::Astable => {
                // R1 candidates: networks of one or two pieces, ascending.
                let mut r1s: Vec<Cand> = Vec::new();
                for n in 1..=k.min(2) {
                    let mut used = pool.fresh_usage();
                    pool.walk(n, 0.0, f64::INFINITY, &mut used, None, &mut |c, _| {
                        r1s.push(*c);
                        Step::Go(0.0, f64::INFINITY)
                    });
                }
                r1s.sort_by(|x, y| x.value.total_cmp(&y.value));
                let imax = self.fam().discharge_max.value;
                let fresh = pool.fresh_usage();
                for n in 1..=k {
                    let mut used = pool.fresh_usage();
                    pool.walk(n, 0.0, f64::INFINITY, &mut used, None, &mut |r2c, _| {
                        total += 1;
                        let r2 = exact(r2c.value);
                        let room = imax - self.vu / r2;
                        if room <= 0.0 {
                            return Step::Go(0.0, f64::INFINITY);
                        }
                        let r1min = (self.vcc / room).max(self.vcc * self.vcc / self.power);
                        let start = r1s.partition_point(|c| c.value < r1min * (1.0 - SLACK));
                        for r1c in r1s.iter().skip(start) {
                            if !self.admits(r1c.value, r2) {
                                // Past the discharge limit means past every smaller one too;
                                // a failing bias limit only gets worse with larger R1.
                                if self.r1_ok(r1c.value, self.vu / r2) {
                                    break;
                                }
                                continue;
                            }
                            let mut both = [0u32; 8];
                            let (p1, p2) = (r1c.pieces(), r2c.pieces());
                            both[..p1.len()].copy_from_slice(p1);
                            both[p1.len()..p1.len() + p2.len()].copy_from_slice(p2);
                            if pool.fits(&both[..p1.len() + p2.len()], &fresh) {
                                if let Some(e) = self.entry(exact(r1c.value), r2) {
                                    found.push(e);
                                }
                                break;
                            }
                        }
                        Step::Go(0.0, f64::INFINITY)
                    });
                }
            }
        }
        let usable = found.len();
        let mut reaching: Vec<(Entry, f64, f64)> = found
            .into_iter()
            .filter_map(|(e, time)| self.span_of(&time, 1.0).map(|(a, b)| (e, a, b)))
            .collect();
        reaching.sort_unstable_by(|x, y| x.1.total_cmp(&y.1));
        let mut rho = (f64::INFINITY, f64::NEG_INFINITY);
        for (e, a, _) in &reaching {
            if e.check > 0.0 {
                rho = (rho.0.min(a / e.check), rho.1.max(a / e.check));
            }
        }
        Side {
            entries: reaching.iter().map(|x| x.0).collect(),
            lo: reaching.iter().map(|x| x.1).collect(),
            hi: reaching.iter().map(|x| x.2).collect(),
            rho,
            usable,
            total,
            limits: self.limits(),
            layers: RefCell::new(Vec::new()),
        }
    }

    /// Spans (seconds) of positions `[s, e)` with capacitance `c`, every position taken that
    /// reaches anything with the layer's capacitors.
    fn cover(side: &Side, l: &Layer, s: usize, e: usize, c: f64, out: &mut Merging) {
        if s >= e {
            return;
        }
        let kappa = l.kappa;
        let first = l.runs.partition_point(|r| r.end <= s);
        for r in &l.runs[first..] {
            if r.start >= e {
                break;
            }
            let (a, b) = (r.start.max(s), r.end.min(e));
            if a == r.start {
                // A run's prefix overlaps all the way: one span.
                out.push(side.lo[a] * c, l.prefmax[b - 1] * c);
                continue;
            }
            // Entered past the run's start: an entry left out may have bridged a gap, so walk
            // until this walk's own reach meets the run's (from there on it is the run's).
            let mut cur: Option<(f64, f64)> = None;
            for k in a..b {
                let h = kappa * side.hi[k];
                if h >= side.lo[k] {
                    match &mut cur {
                        Some(x) if side.lo[k] <= x.1 => x.1 = x.1.max(h),
                        _ => {
                            if let Some(x) = cur {
                                out.push(x.0 * c, x.1 * c);
                            }
                            cur = Some((side.lo[k], h));
                        }
                    }
                }
                if let Some(x) = &mut cur
                    && x.1 >= l.prefmax[k]
                {
                    x.1 = l.prefmax[b - 1];
                    break;
                }
            }
            if let Some(x) = cur {
                out.push(x.0 * c, x.1 * c);
            }
        }
    }

    /// Time spans to axis spans inside the range, merged.
    fn to_axis(&self, spans: Vec<(f64, f64)>) -> Vec<(f64, f64)> {
        let (lo, hi) = self.req.range;
        let spans = match self.req.form {
            ReachForm::Pulse => spans,
            _ => spans.into_iter().map(|(a, b)| (1.0 / b, 1.0 / a)).collect(),
        };
        clip(&merge(spans), lo, hi)
    }

    /// What capacitor network `net` reaches (axis units), and the extreme entries used.
    fn reach_of(&self, side: &Side, cap: &CapNet) -> (Spans, Option<(usize, usize)>) {
        let c = cap.value;
        let t = self.req.tol;
        let kappa = self.keep(Some(&cap.facts));
        // A span's high end is at most its low end × (1 + t)/(1 − t) (the band's low end is at
        // most its high end): positions before `i` lie wholly below the range. A capacitor
        // whose DC-bias loss alone is wider than that reaches nothing.
        let widen = (1.0 + t) / (1.0 - t);
        if kappa * widen < 1.0 || side.lo.is_empty() {
            return (Vec::new(), None);
        }
        let (tlo, thi) = self.t_range;
        let lo = &side.lo;
        let i = lo.partition_point(|&a| a * c * widen < tlo);
        let j = lo.partition_point(|&a| a * c <= thi);
        let periodic = self.req.form != ReachForm::Pulse;
        let fmax = self.fam().max_freq.value;
        // Frequency at most the family maximum, judged as the checks judge it (closed form).
        // Times are kept in whole picoseconds, so the checks' frequency can differ from this
        // one in the seventh digit: keep a hair's margin below the maximum.
        let freq_ok =
            |k: usize| !periodic || 1.0 / (side.entries[k].check * c) <= fmax * (1.0 - 1e-6);
        let limit =
            self.leak_limit(c, cap.tech, cap.facts.voltage_rating.map(|v| v.si())) * (1.0 - 1e-7);
        let mut spans = Merging::default();
        let mut used: Option<(usize, usize)> = None;
        let note = |used: &mut Option<(usize, usize)>, k: usize| {
            *used = Some(used.map_or((k, k), |(a, b)| (a.min(k), b.max(k))));
        };
        // One position on its own, if it reaches anything with this capacitor.
        let one = |k: usize, spans: &mut Merging, used: &mut Option<(usize, usize)>| {
            let h = kappa * side.hi[k];
            if h >= lo[k] {
                spans.push(lo[k] * c, h * c);
                note(used, k);
            }
        };
        if i < j && limit.is_finite() {
            // An electrolytic: the largest charging resistance its leakage allows, entry by
            // entry (rare, and not monotone along the positions).
            for k in i..j {
                let x = &side.entries[k];
                if x.r1 + x.r2 <= limit && freq_ok(k) {
                    one(k, &mut spans, &mut used);
                }
            }
        } else if i < j {
            // The frequency limit cuts nothing from `q` on and everything before `p`; between
            // them each entry is judged on its own.
            let (p, q) = if periodic {
                let amin = 1.0 / (fmax * (1.0 - 1e-6) * c);
                (
                    lo.partition_point(|&a| a < amin * side.rho.0 * (1.0 - 1e-9)),
                    lo.partition_point(|&a| a < amin * side.rho.1 * (1.0 + 1e-9)),
                )
            } else {
                (0, 0)
            };
            for k in p.max(i)..q.min(j) {
                if freq_ok(k) {
                    one(k, &mut spans, &mut used);
                }
            }
            let s = q.max(i);
            if s < j {
                let l = Self::layer(side, kappa);
                // The ends used: the first and last positions in [s, j) that reach anything.
                if let Some(a) = (s..j).find(|&k| kappa * side.hi[k] >= lo[k]) {
                    note(&mut used, a);
                }
                if let Some(b) = (s..j).rev().find(|&k| kappa * side.hi[k] >= lo[k]) {
                    note(&mut used, b);
                }
                Self::cover(side, &l, s, j, c, &mut spans);
            }
        }
        (self.to_axis(spans.done()), used)
    }

    /// Run the electrical checks on the extreme entries a row uses.
    fn verify(&self, side: &Side, cap: &CapNet, ends: (usize, usize)) -> Result<(), ReachError> {
        for n in [ends.0, ends.1] {
            let x = side.entries[n];
            let stage = self.stage(x.r1, x.r2, cap.value, Some(cap.facts));
            if let Some(f) = admit::blocking(&stage, self.fam()) {
                return Err(ReachError::Disagreement(format!(
                    "R1 {} R2 {} with C {}: {}",
                    ohms(x.r1),
                    ohms(x.r2),
                    format_sig(cap.value, 3, "F"),
                    f.sentence()
                )));
            }
        }
        Ok(())
    }
}

/// A resistance as the store and the checks hold it: rounded to whole milliohms.
fn exact(r: f64) -> f64 {
    Ohms::from_si(r).map_or(r, Ohms::si)
}

fn item(row: usize, p: &Part, value: f64) -> Item {
    let (fl, fh) = p.tolerance.factors();
    Item {
        row,
        value,
        lo: value * fl,
        hi: value * fh,
        avail: u32::try_from(p.available()).unwrap_or(u32::MAX),
        tol: p.tolerance.widest().si(),
    }
}

// ---------------------------------------------------------------------------------------------
// The capacitor side.

struct CapNet {
    cand: Cand,
    value: f64,
    tech: Technology,
    facts: CapFacts,
}

fn cap_nets(parts: &[Part], pool: &Pool, k: usize) -> Vec<CapNet> {
    let rank = |t: Technology| match t {
        Technology::C0g | Technology::Film => 0,
        Technology::X7r => 1,
        Technology::Tantalum | Technology::Electrolytic => 3,
        _ => 2,
    };
    let mut out = Vec::new();
    for n in 1..=k {
        let mut used = pool.fresh_usage();
        pool.walk(n, 0.0, f64::INFINITY, &mut used, None, &mut |c, _| {
            let mut tech = Technology::Film;
            let mut rating: Option<Volts> = None;
            let mut unknown = false;
            let mut tol = Tolerance {
                minus: Ratio::ZERO,
                plus: Ratio::ZERO,
            };
            for (m, &i) in c.pieces().iter().enumerate() {
                let p = &parts[pool.items()[i as usize].row];
                if m == 0 || rank(p.technology) > rank(tech) {
                    tech = p.technology;
                }
                unknown |= p.voltage_rating.is_none();
                rating = match (rating, p.voltage_rating) {
                    (Some(a), Some(b)) => Some(a.min(b)),
                    (a, b) => a.or(b),
                };
                if p.tolerance.widest() > tol.widest() {
                    tol = p.tolerance;
                }
            }
            out.push(CapNet {
                cand: *c,
                // As the store and the checks hold it: whole femtofarads.
                value: Farads::from_si(c.value).map_or(c.value, Farads::si),
                tech,
                facts: CapFacts {
                    technology: tech,
                    voltage_rating: if unknown { None } else { rating },
                    tolerance: tol,
                },
            });
            Step::Go(0.0, f64::INFINITY)
        });
    }
    out
}

fn cap_label(parts: &[Part], pool: &Pool, c: &Cand) -> String {
    let value = |i: usize| {
        c.idx
            .get(i)
            .and_then(|&j| pool.items().get(j as usize))
            .and_then(|it| parts.get(it.row))
            .map_or_else(String::new, |p| match p.value {
                Value::Capacitance(f) => format_sig(f.si(), 3, "F"),
                _ => String::new(),
            })
    };
    c.shape.to_net(Combine::Capacitive).describe(&value)
}

// ---------------------------------------------------------------------------------------------
// The public questions.

/// The reach of `parts` (free pieces only) for `req`.
pub fn reach(parts: &[Part], req: &Request) -> Result<ReachMap, ReachError> {
    let prep = Prep::new(req)?;
    let side = prep.side(parts);
    let cpool = prep.cpool(parts);
    let nets = cap_nets(parts, &cpool, req.max_pieces);
    let mut all: Vec<(Spans, Option<(usize, usize)>)> = Vec::with_capacity(nets.len());
    for n in &nets {
        all.push(prep.reach_of(&side, n));
    }
    let covered = merge(all.iter().flat_map(|(s, _)| s.iter().copied()).collect());
    let (holes, narrow_gaps): (Vec<_>, Vec<_>) = gaps(&covered, req.range)
        .into_iter()
        .partition(|(a, b)| (b / a).ln() >= NARROW_SHARE * req.tol);

    // Rows: the single capacitors (the most useful ones if there are too many), then the
    // two-piece networks that add the most reach, while they add any.
    let max_rows = req.max_rows.max(1);
    let mut chosen: Vec<usize> = Vec::new();
    let mut union: Vec<(f64, f64)> = Vec::new();
    let pick =
        |pool: Vec<usize>, chosen: &mut Vec<usize>, union: &mut Vec<(f64, f64)>, keep_all: bool| {
            let mut pool = pool;
            while chosen.len() < max_rows && !pool.is_empty() {
                let (best, gain) = pool
                    .iter()
                    .enumerate()
                    .map(|(pos, &n)| (pos, added_length(&all[n].0, union)))
                    .fold(
                        (0, f64::NEG_INFINITY),
                        |acc, x| if x.1 > acc.1 { x } else { acc },
                    );
                if !keep_all && gain <= 1e-6 {
                    break;
                }
                let n = pool.swap_remove(best);
                chosen.push(n);
                let mut u = std::mem::take(union);
                u.extend(all[n].0.iter().copied());
                *union = merge(u);
            }
        };
    // Single capacitors that reach into the range, one per value (two stock rows of one value
    // reach the same).
    let mut singles: Vec<usize> = Vec::new();
    for n in 0..nets.len() {
        let dup = singles.iter().any(|&m| nets[m].value == nets[n].value);
        if nets[n].cand.shape.pieces() == 1 && !all[n].0.is_empty() && !dup {
            singles.push(n);
        }
    }
    if singles.len() <= max_rows {
        for &n in &singles {
            chosen.push(n);
            union.extend(all[n].0.iter().copied());
        }
        union = merge(union);
    } else {
        pick(singles, &mut chosen, &mut union, true);
    }
    let pairs: Vec<usize> = (0..nets.len())
        .filter(|&n| nets[n].cand.shape.pieces() == 2)
        .collect();
    pick(pairs, &mut chosen, &mut union, false);
    chosen.sort_by(|&a, &b| nets[a].value.total_cmp(&nets[b].value));
    let mut rows = Vec::with_capacity(chosen.len());
    for &n in &chosen {
        let net = &nets[n];
        if let Some(ends) = all[n].1 {
            prep.verify(&side, net, ends)?;
        }
        rows.push(CapRow {
            label: cap_label(parts, &cpool, &net.cand),
            value: net.value,
            pieces: net.cand.shape.pieces(),
            rows: net
                .cand
                .pieces()
                .iter()
                .map(|&i| cpool.items()[i as usize].row)
                .collect(),
            spans: all[n].0.clone(),
        });
    }
    let mut others_add = Vec::new();
    for &(lo, hi) in &covered {
        others_add.extend(gaps(&clip(&union, lo, hi), (lo, hi)));
    }
    Ok(ReachMap {
        form: req.form,
        range: req.range,
        tol: req.tol,
        max_pieces: req.max_pieces,
        model: req.model,
        limits: side.limits.clone(),
        resistor_networks: side.total,
        usable_resistor_networks: side.usable,
        capacitor_networks: nets.len(),
        others: nets.len() - rows.len(),
        others_add,
        rows,
        covered,
        holes,
        narrow_gaps,
    })
}

/// What the reach credits one concrete design with.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Credit {
    /// Its time in seconds (the pulse width, or the period), nominal and model band.
    pub time: Banded,
    /// The values on the axis it reaches (the targets whose window holds the whole band), or
    /// None when the band is wider than any window.
    pub reaches: Option<(f64, f64)>,
}

/// The time and the reached span the reach gives the design `r1` (and `r2` for the astable;
/// ignored otherwise) with a capacitor of `c` farads and facts `cap`, by the same code the map
/// is built with (the per-farad evaluation times `c`). None when the evaluator refuses the
/// design. Electrical limits are not applied here (the map applies them before a design counts).
pub fn credited(
    req: &Request,
    r1: f64,
    r2: f64,
    c: f64,
    cap: Option<CapFacts>,
) -> Result<Option<Credit>, ReachError> {
    let prep = Prep::new(req)?;
    let r2 = if req.form == ReachForm::Astable {
        exact(r2)
    } else {
        0.0
    };
    let c = Farads::from_si(c).map_or(c, Farads::si);
    let Some((_, per_farad)) = prep.entry(exact(r1), r2) else {
        return Ok(None);
    };
    let kappa = prep.keep(cap.as_ref());
    let time = Banded {
        nominal: per_farad.nominal * c,
        band_lo: kappa * per_farad.band_lo * c,
        band_hi: per_farad.band_hi * c,
    };
    let reaches = prep
        .span_of(&per_farad, kappa)
        .map(|(a, b)| match req.form {
            ReachForm::Pulse => (a * c, b * c),
            _ => (1.0 / (b * c), 1.0 / (a * c)),
        });
    Ok(Some(Credit { time, reaches }))
}

/// Everything reached (axis units, merged), from a resistor side and the stock's capacitors.
fn covered_with(prep: &Prep<'_>, side: &Side, parts: &[Part]) -> Vec<(f64, f64)> {
    let cpool = prep.cpool(parts);
    let nets = cap_nets(parts, &cpool, prep.req.max_pieces);
    merge(nets.iter().flat_map(|n| prep.reach_of(side, n).0).collect())
}

/// A part as bought: resistors 1 % metal film, capacitors 5 % film rated at least 50 V (and
/// the requested margin over the supply); four of them.
pub fn bought(kind: Kind, value: f64, min_cap_rating: Option<f64>) -> Part {
    let (v, tol, tech) = match kind {
        Kind::Capacitor => (
            Value::Capacitance(Farads::from_si(value).unwrap_or(Farads::ZERO)),
            5.0,
            Technology::Film,
        ),
        _ => (
            Value::Resistance(Ohms::from_si(value).unwrap_or(Ohms::ZERO)),
            1.0,
            Technology::MetalFilm,
        ),
    };
    Part {
        id: -1,
        kind,
        value: v,
        tolerance: Tolerance::symmetric_percent(tol).unwrap_or(Tolerance {
            minus: Ratio::ZERO,
            plus: Ratio::ZERO,
        }),
        technology: tech,
        voltage_rating: (kind == Kind::Capacitor)
            .then(|| Volts::from_si(min_cap_rating.unwrap_or(0.0).max(50.0)))
            .flatten(),
        power_rating: None,
        package: String::new(),
        bin: "(to buy)".into(),
        quantity: 4,
        held: 0,
        low_stock: None,
        note: String::new(),
    }
}

/// Share of `hole` (log axis) that merged `spans` cover.
fn share(spans: &[(f64, f64)], hole: (f64, f64)) -> f64 {
    let whole = (hole.1 / hole.0).ln();
    if whole <= 0.0 {
        return 0.0;
    }
    log_length(&clip(spans, hole.0, hole.1)) / whole
}

/// For each hole of `map`, the single purchase from `series` that closes most of it. Candidates
/// are scored quickly by what the new part reaches on its own with the stock's other kind; the
/// best few are then checked by recomputing the whole reach with the part added. Stops trying
/// new purchases when `budget` is spent (holes left unsearched say so).
pub fn fixes(
    parts: &[Part],
    req: &Request,
    map: &ReachMap,
    series: Series,
    budget: Duration,
) -> Result<Vec<Hole>, ReachError> {
    let end = Instant::now() + budget;
    let prep = Prep::new(req)?;
    let side = prep.side(parts);
    let cpool = prep.cpool(parts);
    let nets = cap_nets(parts, &cpool, req.max_pieces);
    let mut order: Vec<usize> = (0..map.holes.len()).collect();
    order.sort_by(|&a, &b| {
        let w = |h: (f64, f64)| (h.1 / h.0).ln();
        w(map.holes[b]).total_cmp(&w(map.holes[a]))
    });
    order.truncate(MAX_HOLES);

    // Candidate values.
    let r_lo = side
        .limits
        .iter()
        .filter(|l| l.bound == Bound::AtLeast)
        .map(|l| l.ohms)
        .fold(BUY_R.0, f64::max);
    let r_hi = side
        .limits
        .iter()
        .filter(|l| l.bound == Bound::AtMost)
        .map(|l| l.ohms)
        .fold(BUY_R.1, f64::min);
    let rs: Vec<f64> = match (Ohms::from_si(r_lo), Ohms::from_si(r_hi)) {
        (Some(a), Some(b)) => values_between(series, a, b)
            .into_iter()
            .map(|o| o.si())
            .collect(),
        _ => Vec::new(),
    };
    let cs: Vec<f64> = match (Farads::from_si(BUY_C.0), Farads::from_si(BUY_C.1)) {
        (Some(a), Some(b)) => values_between(series, a, b)
            .into_iter()
            .map(|f| f.si())
            .collect(),
        _ => Vec::new(),
    };
    // Smallest R1 the stock offers for an R2 (astable quick score only).
    let rpool = Prep::rpool(parts);
    let r1_for = |r2: f64| -> Option<f64> {
        rpool
            .items()
            .iter()
            .map(|it| it.value)
            .find(|&r1| prep.admits(r1, r2))
    };
    // What a part alone reaches (quick score).
    let alone = |kind: Kind, v: f64| -> Vec<(f64, f64)> {
        match kind {
            Kind::Capacitor => {
                let net = CapNet {
                    cand: Cand {
                        shape: crate::network::Shape::One,
                        idx: [0; 4],
                        value: v,
                    },
                    value: v,
                    tech: Technology::Film,
                    facts: CapFacts {
                        technology: Technology::Film,
                        voltage_rating: None,
                        tolerance: Tolerance {
                            minus: Ratio::ZERO,
                            plus: Ratio::ZERO,
                        },
                    },
                };
                prep.reach_of(&side, &net).0
            }
            _ => {
                let v = exact(v);
                let entry = match req.form {
                    ReachForm::Astable => r1_for(v).and_then(|r1| prep.entry(exact(r1), v)),
                    _ if prep.admits(v, 0.0) => prep.entry(v, 0.0),
                    _ => None,
                };
                let Some((e, time)) = entry else {
                    return Vec::new();
                };
                let spans = nets
                    .iter()
                    .filter(|n| {
                        req.form == ReachForm::Pulse
                            || 1.0 / (e.check * n.value) <= req.family.max_freq.value
                    })
                    .filter_map(|n| {
                        prep.span_of(&time, prep.keep(Some(&n.facts)))
                            .map(|(a, b)| (a * n.value, b * n.value))
                    })
                    .collect();
                prep.to_axis(spans)
            }
        }
    };
    let mut shortlist: Vec<(Kind, f64, f64)> = Vec::new();
    for &h in &order {
        let hole = map.holes[h];
        for (kind, vals) in [(Kind::Resistor, &rs), (Kind::Capacitor, &cs)] {
            let mut scored: Vec<(f64, f64)> = vals
                .iter()
                .map(|&v| (v, share(&alone(kind, v), hole)))
                .filter(|x| x.1 > 1e-9)
                .collect();
            scored.sort_by(|a, b| b.1.total_cmp(&a.1).then(a.0.total_cmp(&b.0)));
            for &(v, s) in scored.iter().take(2) {
                match shortlist
                    .iter_mut()
                    .find(|x| x.0 == kind && (x.1 - v).abs() <= 1e-9 * v)
                {
                    Some(x) => x.2 = x.2.max(s),
                    None => shortlist.push((kind, v, s)),
                }
            }
        }
    }
    shortlist.sort_by(|a, b| b.2.total_cmp(&a.2));
    shortlist.truncate(MAX_RECOMPUTE);

    // Recompute the reach with each shortlisted part added.
    let mut tried: Vec<(Kind, f64, Spans)> = Vec::new();
    let mut complete = true;
    for (kind, v, _) in shortlist {
        if Instant::now() >= end {
            complete = false;
            break;
        }
        let mut with = parts.to_vec();
        with.push(bought(kind, v, req.min_cap_rating));
        let covered = if kind == Kind::Capacitor {
            covered_with(&prep, &side, &with)
        } else {
            covered_with(&prep, &prep.side(&with), &with)
        };
        tried.push((kind, v, covered));
    }
    let mut holes: Vec<Hole> = map
        .holes
        .iter()
        .map(|&(lo, hi)| Hole {
            lo,
            hi,
            fix: None,
            searched: false,
        })
        .collect();
    for &h in &order {
        let hole = map.holes[h];
        let mut best: Option<Fix> = None;
        for (kind, v, covered) in &tried {
            let closes = share(covered, hole);
            let better = best.as_ref().is_none_or(|b| {
                closes > b.closes + 1e-9
                    || ((closes - b.closes).abs() <= 1e-9
                        && *kind == Kind::Resistor
                        && b.kind == Kind::Capacitor)
            });
            if closes > 1e-9 && better {
                best = Some(Fix {
                    kind: *kind,
                    value: *v,
                    series,
                    closes: closes.min(1.0),
                    left: gaps(&clip(covered, hole.0, hole.1), hole),
                });
            }
        }
        holes[h].fix = best;
        holes[h].searched = complete || holes[h].fix.is_some();
    }
    Ok(holes)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::units::Volts;

    fn part(kind: Kind, v: f64, qty: i64, tech: Technology) -> Part {
        let mut p = bought(kind, v, None);
        p.quantity = qty;
        p.technology = tech;
        p.bin = "test".into();
        p
    }
    fn r(v: f64, qty: i64) -> Part {
        part(Kind::Resistor, v, qty, Technology::MetalFilm)
    }
    fn c(v: f64, qty: i64) -> Part {
        part(Kind::Capacitor, v, qty, Technology::Film)
    }

    fn request(form: ReachForm, range: (f64, f64), tol: f64, k: usize) -> Request {
        Request {
            form,
            range,
            tol,
            max_pieces: k,
            family: Family::bipolar(),
            conditions: Conditions::ideal(Volts::from_si(9.0).expect("vcc")),
            model: Model::ideal(),
            cap_techs: None,
            min_cap_rating: None,
            max_rows: 25,
        }
    }

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= 1e-9 * b.abs()
    }

    #[test]
    fn closed_form_limits_agree_with_the_checks() {
        // The closed forms must say exactly what timing::check_stage says, over a grid that
        // crosses every limit, for both families and every form.
        let grid: Vec<f64> = (0..=44).map(|i| 10f64.powf(i as f64 / 4.0)).collect();
        for family in [Family::bipolar(), Family::cmos()] {
            for form in [ReachForm::Pulse, ReachForm::Square, ReachForm::Astable] {
                let mut req = request(form, (1.0, 2.0), 0.01, 1);
                req.family = family.clone();
                let prep = Prep::new(&req).expect("prep");
                let r2s: Vec<f64> = if form == ReachForm::Astable {
                    grid.clone()
                } else {
                    vec![0.0]
                };
                let mut seen = (0, 0);
                for &r1 in &grid {
                    for &r2 in &r2s {
                        // A film capacitor giving a time constant of 1 ms: no frequency or
                        // capacitor error can arise, and every time stays representable.
                        let stage = prep.stage(r1, r2, 1e-3 / (r1 + r2), None);
                        let want = admit::admissible(&stage, &family);
                        assert_eq!(
                            prep.admits(r1, r2),
                            want,
                            "{} {form:?} R1 {r1} R2 {r2}: {:?}",
                            family.name,
                            admit::blocking(&stage, &family)
                        );
                        if want {
                            seen.0 += 1;
                        } else {
                            seen.1 += 1;
                        }
                    }
                }
                assert!(seen.0 > 0 && seen.1 > 0, "grid must cross the limits");
            }
        }
    }

    #[test]
    fn leakage_limit_agrees_with_the_checks() {
        let mut req = request(ReachForm::Pulse, (1.0, 2.0), 0.01, 1);
        req.cap_techs = None;
        let prep = Prep::new(&req).expect("prep");
        let c = 100e-6;
        let limit = prep.leak_limit(c, Technology::Electrolytic, Some(25.0));
        let facts = CapFacts {
            technology: Technology::Electrolytic,
            voltage_rating: Some(Volts::from_si(25.0).expect("v")),
            tolerance: Tolerance::symmetric_percent(20.0).expect("tol"),
        };
        let ok = |r: f64| admit::admissible(&prep.stage(r, 0.0, c, Some(facts)), &req.family);
        assert!(ok(limit * 0.99), "just inside the leakage limit");
        assert!(!ok(limit * 1.01), "just outside the leakage limit");
        assert!(
            prep.leak_limit(c, Technology::Film, Some(25.0))
                .is_infinite()
        );
    }

    #[test]
    fn a_known_hole_has_the_hand_computed_bounds() {
        // common practice: a one-shot's pulse is t = ln 3 · R · C (the ideal model). 10 kΩ and
        // 12 kΩ with 1 µF give 10.99 ms and 13.18 ms. find accepts a target T when the time lies
        // within T·(1 ± 5 %), i.e. T from t/1.05 to t/0.95: the hole is
        // (ln3·10k·1µ/0.95, ln3·12k·1µ/1.05).
        let parts = vec![r(10e3, 1), r(12e3, 1), c(1e-6, 1)];
        let req = request(ReachForm::Pulse, (10.5e-3, 13.5e-3), 0.05, 1);
        let map = reach(&parts, &req).expect("reach");
        let ln3 = 3f64.ln();
        assert_eq!(map.holes.len(), 1, "{:?}", map.holes);
        let (lo, hi) = map.holes[0];
        assert!(close(lo, ln3 * 10e3 * 1e-6 / 0.95), "{lo}");
        assert!(close(hi, ln3 * 12e3 * 1e-6 / 1.05), "{hi}");
        assert_eq!(map.rows.len(), 1);
        assert_eq!(map.resistor_networks, 2);
        // The purchase closes it, checked by recomputing with the part added.
        let holes = fixes(&parts, &req, &map, Series::E24, Duration::from_secs(5)).expect("fixes");
        let fix = holes[0].fix.as_ref().expect("a purchase");
        assert!(fix.closes > 0.999, "{fix:?}");
        let mut with = parts.clone();
        with.push(bought(fix.kind, fix.value, None));
        assert!(reach(&with, &req).expect("reach").holes.is_empty());
    }

    #[test]
    fn astable_takes_the_smallest_r1_the_stock_can_spare() {
        // One 1 kΩ and one 10 kΩ: with R2 = 10 kΩ, R1 is the 1 kΩ; with R2 = 1 kΩ the only
        // other piece is 10 kΩ. DESIGN: period = ln 2 · (R1 + 2·R2) · C in the ideal model.
        let parts = vec![r(1e3, 1), r(10e3, 1), c(10e-9, 1)];
        let req = request(ReachForm::Astable, (1.0, 1e6), 0.01, 1);
        let map = reach(&parts, &req).expect("reach");
        let ln2 = 2f64.ln();
        let f = |r1: f64, r2: f64| 1.0 / (ln2 * (r1 + 2.0 * r2) * 10e-9);
        let centres: Vec<f64> = map.covered.iter().map(|(a, b)| (a * b).sqrt()).collect();
        assert_eq!(centres.len(), 2, "{:?}", map.covered);
        let want = [f(1e3, 10e3), f(10e3, 1e3)];
        for (got, want) in centres.iter().zip(want) {
            // The span is [1/(T·1.01), 1/(T·0.99)]: its geometric centre is off by ≈ t²/2.
            assert!((got / want - 1.0).abs() < 1e-3, "{got} vs {want}");
        }
        assert_eq!(map.usable_resistor_networks, 2);
    }

    #[test]
    fn frequency_stops_at_the_family_maximum() {
        // With 1 nF, R1 = R2 = 1 kΩ would run at 481 kHz and R1 = 10 kΩ, R2 = 1 kΩ at 120 kHz:
        // both above the bipolar family's 100 kHz (from memory). Only R1 = 1 kΩ, R2 = 10 kΩ
        // (68.7 kHz, DESIGN: f = 1/(ln 2 · (R1 + 2·R2) · C)) is left.
        let parts = vec![r(1e3, 2), r(10e3, 1), c(1e-9, 1)];
        let req = request(ReachForm::Astable, (1.0, 10e6), 0.01, 1);
        let map = reach(&parts, &req).expect("reach");
        assert_eq!(map.covered.len(), 1, "{:?}", map.covered);
        let (lo, hi) = map.covered[0];
        let want = 1.0 / (2f64.ln() * 21e3 * 1e-9);
        assert!(
            lo < want && want < hi && hi < req.family.max_freq.value,
            "{lo} {hi}"
        );
    }

    #[test]
    fn bad_requests_are_refused() {
        let parts = vec![r(10e3, 1), c(1e-6, 1)];
        let mut req = request(ReachForm::Pulse, (2.0, 1.0), 0.01, 1);
        assert!(matches!(reach(&parts, &req), Err(ReachError::Invalid(_))));
        req.range = (1e-3, 1.0);
        req.conditions = Conditions::ideal(Volts::from_si(30.0).expect("v"));
        assert!(matches!(reach(&parts, &req), Err(ReachError::Refused(_))));
    }

    #[test]
    fn the_real_model_moves_the_hole_by_the_evaluators_band() {
        // The same drawer under the default real-part model: the hole's ends are the
        // evaluator's band ends of the two designs over the window factors (solve::judge).
        let parts = vec![r(10e3, 1), r(12e3, 1), c(1e-6, 1)];
        let mut req = request(ReachForm::Pulse, (10.5e-3, 13.5e-3), 0.05, 1);
        req.model = Model::real();
        let map = reach(&parts, &req).expect("reach");
        let ev = |rr: f64| {
            let st = Stage::monostable(
                Ohms::from_si(rr).expect("r"),
                Farads::from_si(1e-6).expect("c"),
                req.conditions,
            );
            crate::timing::evaluate(&st, &req.family, &req.model)
                .expect("eval")
                .high
        };
        assert_eq!(map.holes.len(), 1, "{:?}", map.holes);
        let (lo, hi) = map.holes[0];
        assert!((lo / (ev(10e3).band_lo / 0.95) - 1.0).abs() < 1e-12, "{lo}");
        assert!((hi / (ev(12e3).band_hi / 1.05) - 1.0).abs() < 1e-12, "{hi}");
        // And it is not where the textbook puts it (saturation shortens the pulse by ~1 %).
        assert!(
            (lo / (3f64.ln() * 10e3 * 1e-6 / 0.95) - 1.0).abs() > 1e-3,
            "{lo}"
        );
    }

    fn stage_for(
        form: ReachForm,
        r1: f64,
        r2: f64,
        cf: f64,
        cond: Conditions,
        family: &Family,
    ) -> Stage {
        let o = |v: f64| Ohms::from_si(v).expect("ohms");
        let f = Farads::from_si(cf).expect("farads");
        let mut st = match form {
            ReachForm::Pulse => Stage::monostable(o(r1), f, cond),
            ReachForm::Astable => Stage::astable(o(r1), o(r2), f, cond),
            ReachForm::Square => Stage::square(o(r1), f, cond),
        };
        if form == ReachForm::Square {
            // As find's stage and the reach's: the family's output drop in the conditions.
            st.conditions.output_high_drop =
                Volts::from_si(family.output_high_drop.value).unwrap_or(Volts::ZERO);
        }
        st
    }

    /// The quantity the reach is about, from an evaluation.
    fn of(form: ReachForm, e: &crate::timing::Evaluation) -> crate::timing::Banded {
        match form {
            ReachForm::Pulse => e.high,
            _ => e.period.expect("period"),
        }
    }

    const FORMS: [ReachForm; 3] = [ReachForm::Pulse, ReachForm::Astable, ReachForm::Square];
    const TECHS: [Technology; 4] = [
        Technology::Film,
        Technology::C0g,
        Technology::X7r,
        Technology::Y5v,
    ];

    proptest::proptest! {
        #![proptest_config(proptest::prelude::ProptestConfig {
            cases: 96,
            failure_persistence: Some(Box::new(
                proptest::test_runner::FileFailurePersistence::SourceParallel("proptest-regressions"),
            )),
            ..proptest::prelude::ProptestConfig::default()
        })]

        /// The time the reach credits a concrete design is the evaluator's, nominal and both band
        /// ends, and the span it reaches is the set of targets `solve::judge` accepts it for.
        #[test]
        fn credited_time_is_the_evaluators(
            form_ix in 0usize..3,
            l1 in 2.0f64..6.7,
            l2 in 2.0f64..6.7,
            lc in -9.0f64..-4.0,
            tech_ix in 0usize..4,
            rating in 10.0f64..100.0,
            vcc in 5.0f64..15.0,
            cmos in proptest::bool::ANY,
            real in proptest::bool::ANY,
            tol in 0.002f64..0.1,
        ) {
            let form = FORMS[form_ix];
            let mut req = request(form, (1e-6, 1.0), tol, 1);
            req.family = if cmos { Family::cmos() } else { Family::bipolar() };
            req.model = if real { Model::real() } else { Model::ideal() };
            req.conditions = Conditions::ideal(Volts::from_si(vcc).expect("vcc"));
            let (r1, r2, cf) = (10f64.powf(l1), 10f64.powf(l2), 10f64.powf(lc));
            let cap = CapFacts {
                technology: TECHS[tech_ix],
                voltage_rating: Volts::from_si(rating),
                tolerance: Tolerance::symmetric_percent(10.0).expect("tol"),
            };
            let Ok(credit) = credited(&req, r1, r2, cf, Some(cap)) else {
                // The form itself refused (a bipolar square wave at a low supply): by the
                // evaluator, or by the checks find applies too (they judge the form on the
                // closed form with the family's output drop, whatever the model).
                let st = stage_for(form, r1, r2, cf, req.conditions, &req.family);
                let checks_refuse = admit::review(&st, &req.family).iter().any(|f| {
                    f.severity == admit::Severity::Error && matches!(f.code, "supply-range" | "form")
                });
                proptest::prop_assert!(
                    checks_refuse || crate::timing::evaluate(&st, &req.family, &req.model).is_err()
                );
                return Ok(());
            };
            let mut st = stage_for(form, r1, r2, cf, req.conditions, &req.family);
            st.cap = Some(cap);
            let ev = crate::timing::evaluate(&st, &req.family, &req.model);
            match (credit, ev) {
                (None, Err(_)) => {}
                (Some(c), Ok(e)) => {
                    let want = of(form, &e);
                    let same = |a: f64, b: f64| (a - b).abs() <= 1e-12 * b.abs();
                    proptest::prop_assert!(same(c.time.nominal, want.nominal), "{c:?} vs {want:?}");
                    proptest::prop_assert!(same(c.time.band_lo, want.band_lo), "{c:?} vs {want:?}");
                    proptest::prop_assert!(same(c.time.band_hi, want.band_hi), "{c:?} vs {want:?}");
                    // Reached targets: T with the whole band inside T·(1 ± tol).
                    let (lo_t, hi_t) = (want.band_hi / (1.0 + tol), want.band_lo / (1.0 - tol));
                    match c.reaches {
                        None => proptest::prop_assert!(hi_t < lo_t),
                        Some((a, b)) => {
                            let (a, b) = match form {
                                ReachForm::Pulse => (a, b),
                                _ => (1.0 / b, 1.0 / a),
                            };
                            proptest::prop_assert!(same(a, lo_t) && same(b, hi_t), "{a} {b} vs {lo_t} {hi_t}");
                        }
                    }
                }
                (c, e) => proptest::prop_assert!(false, "reach {c:?}, evaluator {e:?}"),
            }
        }

        /// On small drawers, a value is reached exactly when some single-piece design from the
        /// drawer passes the electrical checks and `solve::judge` accepts it (pulse and square
        /// wave); the astable keeps only the smallest R1, so there a reached value must have
        /// such a design (the reach never claims what find cannot build).
        #[test]
        fn the_map_agrees_with_a_brute_force_of_the_acceptance_rule(
            form_ix in 0usize..3,
            rs in proptest::collection::vec((2.0f64..6.8, 1i64..3), 1..5),
            cs in proptest::collection::vec((-9.0f64..-4.5, 0usize..4), 1..4),
            vcc in 5.0f64..15.0,
            cmos in proptest::bool::ANY,
            real in proptest::bool::ANY,
            tol in 0.005f64..0.15,
            picks in proptest::collection::vec((0.0f64..1.0, 0.0f64..1.0, -1.5f64..1.5), 40),
        ) {
            use crate::solve::goal::{Duty, StageGoal};
            let form = FORMS[form_ix];
            let mut parts: Vec<Part> = rs.iter().map(|&(l, q)| r(exact(10f64.powf(l)), q)).collect();
            for &(l, t) in &cs {
                let mut p = c(Farads::from_si(10f64.powf(l)).map_or(0.0, Farads::si), 1);
                p.technology = TECHS[t];
                p.voltage_rating = Volts::from_si(25.0);
                parts.push(p);
            }
            let range = match form {
                ReachForm::Pulse => (1e-6, 100.0),
                _ => (0.01, 200e3),
            };
            let mut req = request(form, range, tol, 1);
            req.family = if cmos { Family::cmos() } else { Family::bipolar() };
            req.model = if real { Model::real() } else { Model::ideal() };
            req.conditions = Conditions::ideal(Volts::from_si(vcc).expect("vcc"));
            let Ok(map) = reach(&parts, &req) else { return Ok(()); };
            let value = |p: &Part| match p.value {
                Value::Resistance(o) => o.si(),
                Value::Capacitance(f) => f.si(),
                Value::None => f64::NAN,
            };
            let facts = |p: &Part| CapFacts {
                technology: p.technology,
                voltage_rating: p.voltage_rating,
                tolerance: p.tolerance,
            };
            let res: Vec<usize> = (0..parts.len()).filter(|&i| parts[i].kind == Kind::Resistor).collect();
            let caps: Vec<usize> = (0..parts.len()).filter(|&i| parts[i].kind == Kind::Capacitor).collect();
            // Every single-piece design the drawer can build, with the checks passed.
            let mut designs: Vec<(Stage, bool)> = Vec::new();
            for &a in &res {
                for &b in &res {
                    if form != ReachForm::Astable && b != a {
                        continue;
                    }
                    if form == ReachForm::Astable && a == b && parts[a].quantity < 2 {
                        continue;
                    }
                    for &k in &caps {
                        let mut st = stage_for(form, value(&parts[a]), value(&parts[b]), value(&parts[k]), req.conditions, &req.family);
                        st.cap = Some(facts(&parts[k]));
                        let ok = admit::admissible(&st, &req.family);
                        designs.push((st, ok));
                    }
                }
            }
            let evals: Vec<Option<crate::timing::Evaluation>> = designs
                .iter()
                .map(|(st, ok)| if *ok { crate::timing::evaluate(st, &req.family, &req.model).ok() } else { None })
                .collect();
            let (lo, hi) = range;
            let times: Vec<f64> = evals.iter().flatten().map(|e| of(form, e).nominal).collect();
            for &(u, w, off) in &picks {
                // Half the values anywhere in the range, half close to a design's own time.
                let x = if u < 0.5 || times.is_empty() {
                    lo * (hi / lo).powf(2.0 * u.min(0.5))
                } else {
                    let t = times[((w * times.len() as f64) as usize).min(times.len() - 1)];
                    let t = t * (1.0 + off * tol);
                    if form == ReachForm::Pulse { t } else { 1.0 / t }
                };
                if !(lo..=hi).contains(&x) {
                    continue;
                }
                // Values within rounding of a span's end are left out (judge allows 1e-9).
                let near = map.covered.iter().any(|&(a, b)| ((x / a) - 1.0).abs() < 1e-7 || ((x / b) - 1.0).abs() < 1e-7);
                if near {
                    continue;
                }
                let covered = map.covered.iter().any(|&(a, b)| a <= x && x <= b);
                let goal = match form {
                    ReachForm::Pulse => StageGoal::pulse_si(x),
                    ReachForm::Astable => StageGoal::astable_si(1.0 / x, Duty::Any),
                    ReachForm::Square => StageGoal::square_si(1.0 / x),
                }
                .expect("a positive time");
                let built = evals
                    .iter()
                    .flatten()
                    .any(|e| crate::solve::judge::judge(&goal, e, None, tol).is_some());
                if form == ReachForm::Astable {
                    proptest::prop_assert!(!covered || built, "{x} reached but no design: {:?}", map.covered);
                } else {
                    proptest::prop_assert_eq!(covered, built, "{} {:?}", x, map.covered);
                }
            }
        }
    }

    #[test]
    fn spans_merge_and_gaps_complement() {
        let m = merge(vec![(3.0, 4.0), (1.0, 2.0), (1.5, 2.5)]);
        assert_eq!(m, vec![(1.0, 2.5), (3.0, 4.0)]);
        assert_eq!(
            gaps(&m, (0.5, 5.0)),
            vec![(0.5, 1.0), (2.5, 3.0), (4.0, 5.0)]
        );
        assert!(close(added_length(&[(1.0, 4.0)], &m), (3.0f64 / 2.5).ln()));
    }
}
