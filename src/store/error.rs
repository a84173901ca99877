//! The store's one error type. Every message says what was wrong in the user's terms (bin,
//! value, row and column) so the command layer can print it as is.

use std::path::PathBuf;

/// Something the store could not do. Nothing was written when one of these is returned.
#[derive(Debug, thiserror::Error)]
pub enum StoreError {
    /// No platform data directory to put the default database in.
    #[error("no data directory on this system; give the database with --db PATH or ONHAND_DB")]
    NoDataDir,
    /// The folder for the database could not be created.
    #[error("cannot create the folder {path}: {source}")]
    CreateDir {
        /// The folder.
        path: PathBuf,
        /// Why.
        source: std::io::Error,
    },
    /// The database file could not be opened or set up.
    #[error("cannot open the stock database {path}: {source}")]
    Open {
        /// The file.
        path: PathBuf,
        /// Why.
        source: rusqlite::Error,
    },
    /// The database was written by a newer onhand.
    #[error(
        "the stock database is at schema version {found}, but this onhand knows only up to {known}; \
         use a newer onhand"
    )]
    TooNew {
        /// Version in the file.
        found: i64,
        /// Newest version this binary has.
        known: i64,
    },
    /// A migration failed; the database stays at the version before it.
    #[error("migration {version} ({name}) failed: {source}")]
    Migration {
        /// Its number.
        version: i64,
        /// Its file name.
        name: &'static str,
        /// Why.
        source: rusqlite::Error,
    },
    /// Any other database failure.
    #[error("stock database: {0}")]
    Sql(#[from] rusqlite::Error),
    /// A row in the database that this binary cannot read.
    #[error("stock database row #{id} is damaged: {reason}")]
    Corrupt {
        /// Row id.
        id: i64,
        /// What is wrong.
        reason: String,
    },
    /// No part with this row id.
    #[error("no part #{0} in stock")]
    NoSuchPart(i64),
    /// Taking more than the shelf holds.
    #[error("{place} holds {have} × {label}, cannot take {want}")]
    NotEnough {
        /// "bin A3" or "part #12" when it has no bin.
        place: String,
        /// The part in words, e.g. "4.7 kΩ".
        label: String,
        /// Pieces there.
        have: i64,
        /// Pieces asked for.
        want: i64,
    },
    /// A count that is not a whole non-negative number of pieces.
    #[error("{what} must be a whole number of pieces, 0 or more (got {got})")]
    BadCount {
        /// Which count.
        what: &'static str,
        /// What was given.
        got: i64,
    },
    /// A count that would not fit.
    #[error("{label}: the count would overflow")]
    Overflow {
        /// The part in words.
        label: String,
    },
    /// A part description that cannot be stored (e.g. a diode without its type).
    #[error("{0}")]
    Invalid(String),
    /// Export could not be written.
    #[error("export failed: {0}")]
    Export(String),
    /// Import input with problems; every one is listed with its row and column.
    #[error("{}", render_row_errors(.0))]
    Import(Vec<RowError>),
}

/// One problem in an import file, cited by row (1 = the first data row; the header is row 0 in
/// CSV terms) and column name.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct RowError {
    /// Data row number, counting from 1; 0 for the header.
    pub row: usize,
    /// Column name, when the problem is in one cell.
    pub column: Option<String>,
    /// What is wrong.
    pub message: String,
}

impl std::fmt::Display for RowError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let place = if self.row == 0 {
            "header".to_string()
        } else {
            format!("row {}", self.row)
        };
        match &self.column {
            Some(c) => write!(f, "{place}, column {c:?}: {}", self.message),
            None => write!(f, "{place}: {}", self.message),
        }
    }
}

/// At most this many row errors are listed; the rest are counted.
const SHOWN_ERRORS: usize = 20;

fn render_row_errors(errors: &[RowError]) -> String {
    let mut s = format!(
        "import refused, nothing was changed ({} problem{}):",
        errors.len(),
        if errors.len() == 1 { "" } else { "s" }
    );
    for e in errors.iter().take(SHOWN_ERRORS) {
        s.push_str("\n  ");
        s.push_str(&e.to_string());
    }
    if errors.len() > SHOWN_ERRORS {
        s.push_str(&format!("\n  … and {} more", errors.len() - SHOWN_ERRORS));
    }
    s
}
