//! Pure renderers: tables, JSON, CSV, pictures, netlists. Nothing here reads the store or the
//! file system; renderers return strings or write to an `impl Write`.

pub mod check;
pub mod find;
pub mod list;
pub mod netlist;
pub mod pictures;
pub mod plan;
pub mod reach_text;
pub mod reorder;
pub mod schematic;
pub mod series;
pub mod sheet;
pub mod style;
pub mod svg;
pub mod table;
