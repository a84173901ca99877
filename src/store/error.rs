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
    /// Import input with problems: the first ones with their row and column, and how many
    /// more there were (a file of any size keeps only [`RowErrors::KEPT`] in memory).
    #[error("{}", render_row_errors(.0))]
    Import(RowErrors),
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

/// The problems of one import: the first [`RowErrors::KEPT`] in file order, and a count of
/// the rest, so a file of any size with a problem in every row takes the same memory. Reads as
/// a slice of the kept problems.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct RowErrors {
    kept: Vec<RowError>,
    more: usize,
}

impl RowErrors {
    /// How many problems are kept (and listed); the rest are only counted.
    pub const KEPT: usize = 20;

    /// No problems yet.
    pub fn new() -> Self {
        Self::default()
    }

    /// Add a problem: kept while fewer than [`RowErrors::KEPT`] are, else counted.
    pub fn push(&mut self, e: RowError) {
        if self.kept.len() < Self::KEPT {
            self.kept.push(e);
        } else {
            self.more = self.more.saturating_add(1);
        }
    }

    /// Every problem, kept or only counted.
    pub fn total(&self) -> usize {
        self.kept.len().saturating_add(self.more)
    }

    /// The problems counted but not kept.
    pub fn more(&self) -> usize {
        self.more
    }
}

impl std::ops::Deref for RowErrors {
    type Target = [RowError];
    fn deref(&self) -> &[RowError] {
        &self.kept
    }
}

impl Extend<RowError> for RowErrors {
    fn extend<I: IntoIterator<Item = RowError>>(&mut self, iter: I) {
        iter.into_iter().for_each(|e| self.push(e));
    }
}

impl From<Vec<RowError>> for RowErrors {
    fn from(v: Vec<RowError>) -> Self {
        let mut e = RowErrors::new();
        e.extend(v);
        e
    }
}

impl From<RowError> for RowErrors {
    fn from(one: RowError) -> Self {
        RowErrors {
            kept: vec![one],
            more: 0,
        }
    }
}

fn render_row_errors(errors: &RowErrors) -> String {
    let total = errors.total();
    let mut s = format!(
        "import refused, nothing was changed ({} problem{}):",
        total,
        if total == 1 { "" } else { "s" }
    );
    for e in errors.iter() {
        s.push_str("\n  ");
        s.push_str(&e.to_string());
    }
    if errors.more() > 0 {
        s.push_str(&format!("\n  … and {} more", errors.more()));
    }
    s
}
