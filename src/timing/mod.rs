//! The physics of 555-family timers: closed-form times for every circuit form (`forms`), a stage
//! as a design (`design`), timer families as data (`family`), electrical checks (`checks`) and
//! tolerance analysis — worst case, Monte Carlo, trim, inverse (`tolerance`). Pure functions; no
//! I/O, no store, no rendering.

pub mod checks;
pub mod design;
pub mod evaluate;
pub mod family;
pub mod forms;
pub mod tolerance;

pub use checks::{
    Finding, Limits, Severity, check_dual, check_pair, check_pair_worst_case, check_stage,
    check_stage_with, has_error,
};
pub use design::{CapFacts, Form, Stage, StageTimes, Steering, cycle_si};
pub use evaluate::{Banded, DiodeModel, Effect, Evaluation, Model, evaluate, factor_bounds};
pub use family::{Family, FamilyError, Figure, Provenance, family_by_name};
pub use forms::{Conditions, Cycle, Factors, FormError, astable, monostable, square, steered};
pub use tolerance::{
    Analysis, Circuit, Inference, Interval, MonteCarlo, Piece, Position, Quantity, Spread,
    StageModel, Stats, Target, ToleranceError, TrimPlan, Verdict, WorstCase,
};
