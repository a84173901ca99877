//! The physics of 555-family timers: closed-form times for every circuit form, timer families,
//! electrical limits, tolerance analysis. Pure functions; no I/O, no store.

pub mod forms;

pub use forms::{Conditions, Cycle, Factors, FormError, astable, monostable, square, steered};
