//! onhand: timer-circuit design from the parts in stock.
//!
//! Data flows one way: `cli` (arguments → validated config) → `store` (reads a snapshot of
//! stock) → `solve` / `timing` (pure computation) → `report` (renderers) → output.

pub mod cli;
pub mod model;
pub mod network;
pub mod report;
pub mod solve;
pub mod store;
pub mod timing;
pub mod units;
pub mod web;

pub use cli::run;
