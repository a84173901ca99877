//! Pure renderers: tables, JSON, CSV, pictures, netlists.
