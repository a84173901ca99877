//! The physics of 555-family timers: the one evaluator with the real parts in it (`evaluate`),
//! closed-form times for the screen and the textbook model (`forms`), a stage as a design
//! (`design`), timer families as data with typical figures and limits (`family`), electrical
//! checks (`checks`: the rules as predicates on numbers; their sentences apart in `wording`)
//! and tolerance analysis — worst case, Monte Carlo, trim, inverse (`tolerance`). Pure
//! functions; no I/O, no store, no rendering.

pub mod assess;
pub mod checks;
pub mod design;
pub mod evaluate;
pub mod family;
pub mod forms;
pub mod tolerance;
pub mod wording;

pub use checks::{
    Breach, Degree, Finding, Limits, Pin, Place, Placed, Severity, check_dual, check_pair,
    check_pair_worst_case, check_stage, check_stage_with, dual_breaches, first_error, has_error,
    pair_breaches, stage_breaches,
};
pub use design::{CapFacts, Form, Stage, StageTimes, Steering, cycle_si};
pub use evaluate::{
    Banded, DiodeModel, DiodeParams, Effect, Evaluation, Model, SMALL_SIGNAL_DIODE, dc_bias_loss,
    evaluate, evaluate_times, factor_bounds, factor_bounds_between,
};
pub use family::{Family, FamilyError, Figure, FigureKind, Provenance, family_by_name};
pub use forms::{Conditions, Cycle, Factors, FormError, astable, monostable, square, steered};
pub use tolerance::{
    Analysis, Circuit, Inference, Interval, MonteCarlo, Piece, Position, Quantity, Spread,
    StageModel, Stats, Target, ToleranceError, TrimPlan, Verdict, WorstCase,
};
