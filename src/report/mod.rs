//! Pure renderers: tables, JSON, CSV, pictures, netlists.

pub mod find;
