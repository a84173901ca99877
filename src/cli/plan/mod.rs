//! Plans: many units of one or more stages against shared stock.

pub mod file;
