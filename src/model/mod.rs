//! The domain types every layer shares: a stocked part (kind, technology, value, tolerance,
//! ratings), the exact text forms of its values, and what a stage is asked to do (form, typed
//! target times, the duty window, position names), and the plan file that asks for many units
//! of several stages (plan.rs: its TOML text read into typed stages). Pure data on top of `units`; depends on
//! nothing else in the crate. `store` persists these types, `timing` and `solve` compute with
//! them, `report` renders them — none of those layers owns them.

pub mod duty;
pub mod goal;
pub mod part;
pub mod plan;
pub mod read;
pub mod text;

pub use duty::{DutyError, DutyWindow, parse_duty};
pub use goal::{Duty, Form, Goal, StageGoal};
pub use part::{Kind, Part, Technology, UnknownName, Value};
pub use read::{DiodeFamily, DiodeType, diode_type, infer_kind, marked_resistor};
