//! Searches: the exact fewest-pieces design search (`search`) with its electrical gate
//! (`admit`), the request and answer types (`goal`), a plain brute-force reference (`brute`)
//! that the property tests and the benchmark compare against, the advice given when nothing
//! fits (`suggest`), and the integer programs that allocate many units and choose purchases
//! (`allocate`), and what a drawer can reach at all (`reach`). Pure: no I/O, no store; the
//! caller hands in a snapshot of parts.

pub mod admit;
pub mod allocate;
pub mod brute;
pub mod goal;
pub mod judge;
pub mod kits;
pub mod plan;
pub mod plan_file;
mod program;
pub mod reach;
pub mod search;
pub mod suggest;

#[cfg(test)]
mod proptests;

pub use admit::{Family, admissible, family_by_name};
pub use goal::{
    Design, Duty, Excursion, Goal, Outcome, Position, Quantity, Rank, Settings, SolveError,
    StageGoal, StageReport,
};
pub use search::solve;
