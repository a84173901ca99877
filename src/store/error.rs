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
    #[error("cannot create the folder {}", path.display())]
    CreateDir {
        /// The folder.
        path: PathBuf,
        /// Why.
        source: std::io::Error,
    },
    /// The database file could not be opened or set up.
    #[error("cannot open the stock database {}: {reason}", path.display())]
    Open {
        /// The file.
        path: PathBuf,
        /// Why, in SQLite's words.
        reason: String,
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
    #[error(
        "updating the stock database to schema version {version} ({name}) failed: {reason}; \
         the database was left at the version before it"
    )]
    Migration {
        /// Its number.
        version: i64,
        /// Its file name.
        name: &'static str,
        /// SQLite's message, without the statement text.
        reason: String,
    },
    /// Another process holds the write lock longer than the busy timeout.
    #[error("another onhand is writing to the stock database; try again")]
    Busy,
    /// SQLite found the file damaged.
    #[error(
        "the stock database{} is damaged ({detail}); nothing was written. Keep a copy of the \
         file, then restore your last backup, or export what can still be read \
         (`onhand export --out rescue.csv`) and import it into a new database",
        if path.as_os_str().is_empty() { String::new() } else { format!(" {}", path.display()) }
    )]
    Damaged {
        /// The file.
        path: PathBuf,
        /// The first lines of SQLite's own report.
        detail: String,
    },
    /// Any other database failure.
    #[error("stock database: {0}")]
    Sql(rusqlite::Error),
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
    /// Taking pieces that are on the shelf but held for plans.
    #[error(
        "{place} holds {have} × {label}, but {held} of them are held ({}); only {} free, \
         cannot take {want}. Release a hold (`onhand release --plan NAME`) or draw a plan's \
         pieces with `onhand use --plan NAME`",
        render_holders(.holders), .have - .held
    )]
    HeldBack {
        /// "bin A3" or "part #12".
        place: String,
        /// The part in words.
        label: String,
        /// Pieces on the shelf.
        have: i64,
        /// Pieces held for plans.
        held: i64,
        /// (plan, pieces) for each plan holding some.
        holders: Vec<(String, i64)>,
        /// Pieces asked for.
        want: i64,
    },
    /// A stock-take that would leave fewer pieces than are held.
    #[error(
        "cannot recount {place} ({label}) to {counted}: {held} are held ({}); release those \
         holds first (`onhand release --plan NAME`), then recount",
        render_holders(.holders)
    )]
    RecountBelowHeld {
        /// "bin A3" or "part #12".
        place: String,
        /// The part in words.
        label: String,
        /// The count given.
        counted: i64,
        /// Pieces held for plans.
        held: i64,
        /// (plan, pieces) for each plan holding some.
        holders: Vec<(String, i64)>,
    },
    /// A hold asking for more than is free; nothing was held.
    #[error("cannot hold for plan {plan:?}, nothing was held:{}", render_free_shortfalls(.short))]
    NotFree {
        /// The plan.
        plan: String,
        /// Every item that did not fit.
        short: Vec<Shortfall>,
    },
    /// Using more held pieces than the plan holds; nothing was used.
    #[error("cannot use for plan {plan:?}, nothing was used:{}", render_held_shortfalls(.short))]
    NotHeld {
        /// The plan.
        plan: String,
        /// Every item that is not held in that number.
        short: Vec<Shortfall>,
    },
    /// A release or use that matches no live hold.
    #[error("plan {plan:?} holds nothing{scope}; see `onhand holds`")]
    NothingHeld {
        /// The plan.
        plan: String,
        /// What was asked about, e.g. ` for member "unit 2"` or ` of #3 4.7 kΩ …`.
        scope: String,
    },
    /// A count that is not a whole non-negative number of pieces.
    #[error("{what} must be a whole number of pieces, 0 or more (got {got})")]
    BadCount {
        /// Which count.
        what: &'static str,
        /// What was given.
        got: i64,
    },
    /// A count that would pass the most pieces one row counts ([`super::MAX_PIECES`]).
    #[error(
        "{label}: the count would pass {} pieces, more than onhand counts in one row; nothing \
         was changed",
        super::MAX_PIECES
    )]
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

impl From<rusqlite::Error> for StoreError {
    /// A busy or damaged database gets its own message (once, not SQLite's text twice).
    fn from(e: rusqlite::Error) -> Self {
        match e.sqlite_error_code() {
            Some(rusqlite::ErrorCode::DatabaseBusy | rusqlite::ErrorCode::DatabaseLocked) => {
                StoreError::Busy
            }
            Some(rusqlite::ErrorCode::DatabaseCorrupt | rusqlite::ErrorCode::NotADatabase) => {
                StoreError::Damaged {
                    path: PathBuf::new(),
                    detail: short_sql_error(&e),
                }
            }
            _ => StoreError::Sql(e),
        }
    }
}

/// SQLite's message without the statement text it may carry (a migration's SQL is pages long).
pub(crate) fn short_sql_error(e: &rusqlite::Error) -> String {
    let text = match e {
        rusqlite::Error::SqlInputError { msg, .. } => msg.clone(),
        rusqlite::Error::SqliteFailure(f, Some(msg)) => format!("{msg} ({:?})", f.code),
        other => other.to_string(),
    };
    let first = text.lines().next().unwrap_or("").to_string();
    if first.chars().count() > 200 {
        let head: String = first.chars().take(200).collect();
        format!("{head}…")
    } else {
        first
    }
}

/// One item of a hold or use that cannot be met, with the counts that decide it.
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize)]
pub struct Shortfall {
    /// The part row.
    pub part_id: i64,
    /// The part and its place in words: "#3 4.7 kΩ 1% metal film in bin A3".
    pub part: String,
    /// Pieces asked for.
    pub want: i64,
    /// Pieces on the shelf.
    pub on_hand: i64,
    /// Pieces held (for a hold: by every plan; for a use: by this plan).
    pub held: i64,
    /// Pieces that could be had: free ones for a hold, this plan's held ones for a use.
    pub can: i64,
    /// (plan, pieces) for each plan holding some.
    pub holders: Vec<(String, i64)>,
}

fn render_holders(holders: &[(String, i64)]) -> String {
    if holders.is_empty() {
        return "by no plan".to_string();
    }
    holders
        .iter()
        .map(|(plan, n)| format!("{n} for plan {plan:?}"))
        .collect::<Vec<_>>()
        .join(", ")
}

fn render_free_shortfalls(short: &[Shortfall]) -> String {
    short
        .iter()
        .map(|s| {
            let held = if s.held == 0 {
                "none held".to_string()
            } else {
                format!("{} held ({})", s.held, render_holders(&s.holders))
            };
            format!(
                "\n  {}: asked for {}, {} on the shelf, {held}, {} free",
                s.part, s.want, s.on_hand, s.can
            )
        })
        .collect()
}

fn render_held_shortfalls(short: &[Shortfall]) -> String {
    short
        .iter()
        .map(|s| {
            format!(
                "\n  {}: asked for {}, the plan holds {}",
                s.part, s.want, s.can
            )
        })
        .collect()
}

/// One problem in an import file, cited by row (as a spreadsheet numbers a CSV file: the header
/// is row 1, the first data row row 2; JSON items from 1) and column name.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct RowError {
    /// Row number as above; 0 for the header itself.
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
