//! What a search is asked for (targets, settings) and what it answers (ranked designs).
//!
//! Objective, in order (exact over the network space):
//! 1. every hard constraint: each targeted quantity within `tol` of its target (or, with
//!    `guarantee`, its whole worst-case interval within that window), duty windows, stock counts
//!    across all positions, and the electrical checks ([`super::admit::admissible`]);
//! 2. fewest total pieces;
//! 3. smallest error: the largest relative deviation `|actual − target| / target` of the
//!    nominal result over all targeted quantities of all stages (a duty *range* is a window only
//!    and adds nothing to the error);
//! 4. tighter parts: smallest sum over all pieces of each piece's wider tolerance side;
//! 5. sparing scarce stock: smallest largest fraction `used / available` over the rows used;
//! 6. then the order the walk met them (stable, deterministic).
//!
//! With [`Rank::SmallestError`] items 2 and 3 swap (used to find the closest design when nothing
//! meets the target).

use super::admit::{Family, Finding, Form};
use crate::model::Kind;
pub use crate::model::{Duty, Goal, StageGoal};
use crate::network::Net;
use crate::timing::Conditions;
use serde::Serialize;
use std::time::Duration;

/// Relative allowance for floating-point rounding when a result is tested against its window:
/// results are computed through logarithms and divisions, and a design exactly on the edge (a
/// duty of exactly 75 %, 1005 Ω for 1 kΩ ± 0.5 %) must not be lost to the last bit. A
/// billionth is far below any part's or target's resolution. The search and the brute force
/// share this test.
pub const ROUNDING: f64 = 1e-9;

/// Whether `x` lies in `[lo, hi]`, allowing [`ROUNDING`].
#[inline]
pub fn inside(x: f64, lo: f64, hi: f64) -> bool {
    x >= lo - ROUNDING * lo.abs() && x <= hi + ROUNDING * hi.abs()
}

/// Whether a relative error `err` is no more than `bound`, allowing [`ROUNDING`] (to first
/// order the same allowance as [`inside`]; a negative bound admits nothing).
#[inline]
pub fn no_worse(err: f64, bound: f64) -> bool {
    bound >= 0.0 && err <= bound + ROUNDING
}

/// How designs are ranked.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Rank {
    /// Fewest pieces, then smallest error (the normal objective).
    FewestPieces,
    /// Smallest error, then fewest pieces.
    SmallestError,
}

/// The conditions the timer's own error is judged over: its temperature drift over
/// `temp_span_c` either side of 25 °C and its supply drift over `supply_swing` either way, on
/// top of its initial error. `check` takes the same figures (`--temp-span`, `--supply-swing`)
/// with the same defaults, so both give one worst case for the same parts.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Excursion {
    /// Temperature either side of 25 °C, °C.
    pub temp_span_c: f64,
    /// Supply either way.
    pub supply_swing: crate::units::Volts,
}

impl Excursion {
    /// The default span: ±25 °C (a bench to a warm enclosure, common practice), a steady supply.
    pub const DEFAULT_TEMP_SPAN_C: f64 = 25.0;

    /// No drift at all: the timer's initial error alone.
    pub fn none() -> Self {
        Self {
            temp_span_c: 0.0,
            supply_swing: crate::units::Volts::ZERO,
        }
    }
}

impl Excursion {
    /// The drift part of the timer's error in words: `±0.375 % drift over ±25 °C` (and the
    /// supply swing when there is one). `drift` is the fraction the excursion adds.
    pub fn drift_text(&self, drift: f64) -> String {
        let supply = if self.supply_swing.si() > 0.0 {
            format!(" and ±{} of supply", self.supply_swing)
        } else {
            String::new()
        };
        format!(
            "±{} drift over ±{} °C{supply}",
            crate::units::percent_text(drift.max(0.0), 3),
            crate::units::format_sig(self.temp_span_c, 3, "").trim(),
        )
    }
}

impl Default for Excursion {
    fn default() -> Self {
        Self {
            temp_span_c: Self::DEFAULT_TEMP_SPAN_C,
            supply_swing: crate::units::Volts::ZERO,
        }
    }
}

/// Everything besides the targets.
#[derive(Debug, Clone, PartialEq)]
pub struct Settings {
    /// Allowed relative deviation of each targeted quantity (0.01 for 1 %).
    pub tol: f64,
    /// Most pieces in one position (1..=4).
    pub max_pieces: usize,
    /// How many ranked designs to return.
    pub alternatives: usize,
    /// Require the worst-case interval (parts' tolerance and the timer's initial error) inside
    /// the window, not just the nominal.
    pub guarantee: bool,
    /// Timer family.
    pub family: Family,
    /// Which effects beyond the ideal closed forms the evaluator includes (default: all, the
    /// real board; `Model::ideal()` is the textbook).
    pub model: crate::timing::Model,
    /// Supply and refinements (the square form adds the family's output drop itself).
    pub conditions: Conditions,
    /// Capacitor technologies allowed (None: all).
    pub cap_techs: Option<Vec<crate::model::Technology>>,
    /// Lowest acceptable capacitor voltage rating, volts; rows with a lower known rating are
    /// left out, rows with no rating are allowed (and warned about).
    pub min_cap_rating: Option<f64>,
    /// Stop after this long and report the best found with what was proven.
    pub time_limit: Option<Duration>,
    /// Ranking.
    pub rank: Rank,
    /// What the timer's own error covers besides its initial error.
    pub excursion: Excursion,
}

impl Settings {
    /// The timer's own error for a stage, as a fraction: the family's initial error for its
    /// form (a limit under `--guarantee`, where the family holds limits) plus the drift over
    /// [`Settings::excursion`]. The search, the brute force and the reports share it.
    pub fn timer_error(&self, g: &StageGoal) -> f64 {
        self.family
            .timer_error(
                matches!(g, StageGoal::Pulse { .. }),
                self.excursion.temp_span_c,
                self.excursion.supply_swing,
            )
            .si()
    }
}

/// One filled position of a design.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Position {
    /// Which stage (0 for the first; always 0 for a value search).
    pub stage: usize,
    /// Position name: "R", "C", "R1", "Ra", "value" …
    pub name: &'static str,
    /// Resistor or capacitor.
    pub kind: Kind,
    /// The network; leaf `i` is `rows[i]`.
    #[serde(skip)]
    pub net: Net,
    /// Row index into the parts slice for each leaf.
    pub rows: Vec<usize>,
    /// Nominal value, SI.
    pub value: f64,
    /// Worst-case lowest value, SI.
    pub lo: f64,
    /// Worst-case highest value, SI.
    pub hi: f64,
}

/// A quantity a design produces, with its target and worst case.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Quantity {
    /// "value", "width", "period", "frequency", "duty", "high", "low".
    pub name: &'static str,
    /// Unit symbol ("s", "Hz", "Ω", "F", "" for duty).
    pub unit: &'static str,
    /// The target, when this quantity has one.
    pub target: Option<f64>,
    /// Nominal: what the model predicts.
    pub nominal: f64,
    /// Lowest value the model's effects allow with every part at its nominal value.
    pub band_lo: f64,
    /// Highest value the model's effects allow with every part at its nominal value.
    pub band_hi: f64,
    /// The interval this quantity must lie in (a hard constraint), when it has one.
    pub window: Option<(f64, f64)>,
    /// Relative error of the nominal against the target.
    pub error: Option<f64>,
    /// Worst-case lowest, including the timer's initial error for times.
    pub worst_lo: f64,
    /// Worst-case highest.
    pub worst_hi: f64,
}

/// One stage of a design as reported.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StageReport {
    /// Circuit form (None for a value search).
    pub form: Option<Form>,
    /// The quantities.
    pub quantities: Vec<Quantity>,
    /// The model's effects the evaluator used, each with its figure and where it comes from.
    pub effects: Vec<crate::timing::Effect>,
    /// Warnings and cautions from the electrical checks (errors never appear: such designs are
    /// refused).
    pub findings: Vec<Finding>,
}

/// One ranked design.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Design {
    /// Total pieces.
    pub pieces: usize,
    /// The error (objective item 3).
    pub error: f64,
    /// Sum of the pieces' tolerances (objective item 4).
    pub tolerance_sum: f64,
    /// Largest fraction of a row's available stock used (objective item 5).
    pub scarcity: f64,
    /// Whether every targeted quantity's worst case lies within the window.
    pub guaranteed: bool,
    /// Filled positions, stage by stage.
    pub positions: Vec<Position>,
    /// Per stage: results and remarks.
    pub stages: Vec<StageReport>,
}

/// What the search did, besides its answers.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Outcome {
    /// Ranked designs, best first.
    pub designs: Vec<Design>,
    /// False when the time limit stopped the search.
    pub complete: bool,
    /// Every design with fewer pieces than this was ruled out (proven bound).
    pub no_design_below: usize,
    /// Networks examined.
    pub networks_seen: u64,
    /// Candidates refused by the electrical checks, by finding code: each candidate judged and
    /// refused counts once, and a rule that cuts a whole range of values from the walk (the
    /// astable's pin-bias limits on R1 + R2 and R2) counts once per range it cuts.
    pub refused: Vec<(String, u64)>,
    /// Wall time, seconds.
    pub seconds: f64,
}

/// Why a search could not run.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum SolveError {
    /// A setting or target out of range.
    #[error("{0}")]
    Invalid(String),
    /// The operating conditions make the form impossible.
    #[error(transparent)]
    Form(#[from] crate::timing::FormError),
}
