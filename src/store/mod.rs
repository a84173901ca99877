//! The SQLite store: open, pragmas, migrations from `../migrations`, parts, quantities, the
//! append-only ledger, CSV import/export. The only module that touches the database.

pub mod part;

pub use part::{Kind, Part, Technology, Value};
