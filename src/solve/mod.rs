//! Searches: the exact fewest-pieces design search, and integer programs for plans.
pub mod allocate;
