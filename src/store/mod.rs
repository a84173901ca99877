//! The SQLite store: open, pragmas, migrations from `../migrations`, parts, quantities, the
//! append-only ledger, CSV/JSON import and export. The only module that touches the database;
//! everything above it gets plain data ([`Part`], [`LedgerEntry`], [`Change`]).
//!
//! Every write runs in one `BEGIN IMMEDIATE` transaction that also appends the ledger entry, so
//! two processes drawing from the same drawer never lose an update, and a count can always be
//! re-derived from the ledger. Holds (reservations for a plan) live in `holds.rs`: a part's
//! `held` is the sum of its holds, and held pieces are left out of what new designs may use.

pub mod backup;
mod care;
mod change;
mod error;
mod exchange;
pub mod holds;
mod import;
pub mod log;
mod members;
mod migrate;
pub use crate::model::part;
mod query;
pub mod spec;
pub use crate::model::text;
pub mod undo;

pub use backup::{Contents, FullExport};
pub use care::Merge;
pub use change::{Change, LedgerEntry};
pub use error::{RowError, RowErrors, Shortfall, StoreError};
pub use exchange::{
    COLUMNS, ExportFormat, MAX_RECORD_BYTES, Record, each_csv_record, each_json_record, export,
    neutralise_cell, read_csv, read_json,
};
pub use holds::{
    Hold, HoldAction, HoldChange, HoldFilter, HoldLine, unit_member, unit_of, units_text,
};
pub use import::{ImportLine, ImportReport, KEPT_LINES, PROGRESS_EVERY};
pub use log::{LogEntry, LogFilter};
pub use members::{MAX_MEMBER_NAME, Member, Session, clean_member_name};
pub use part::{Kind, Part, Technology, UnknownName, Value};
pub use query::PartFilter;
pub use spec::{PartSpec, PartText};
pub use undo::{Undo, UndoLine, UndoTarget};

use rusqlite::Connection;
use std::path::{Path, PathBuf};
use std::time::Duration;

/// How long a writer waits for another process's transaction before giving up.
const BUSY_TIMEOUT: Duration = Duration::from_secs(5);

/// The most pieces one row counts: a sanity cap (our choice, far above any real drawer or
/// warehouse bin) so that sums over many rows stay exact and a typo of extra digits is caught.
pub const MAX_PIECES: i64 = 1_000_000_000;

/// How long opening waits, in all, when other processes are creating or migrating the same
/// file at the same moment (switching to WAL and the first migration need a brief lock that
/// SQLite does not always wait for).
const OPEN_PATIENCE: Duration = Duration::from_secs(10);

/// An open stock database.
pub struct Store {
    conn: Connection,
    path: PathBuf,
}

impl std::fmt::Debug for Store {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.debug_struct("Store").field("path", &self.path).finish()
    }
}

impl Store {
    /// The default database file: `stock.db` in the platform data directory for `onhand`
    /// (on Linux `$XDG_DATA_HOME/onhand/stock.db`).
    pub fn default_path() -> Result<PathBuf, StoreError> {
        directories::ProjectDirs::from("", "", "onhand")
            .map(|d| d.data_dir().join("stock.db"))
            .ok_or(StoreError::NoDataDir)
    }

    /// Open the database at `path`, creating the file and its folder on first use, setting the
    /// pragmas and applying any pending migrations.
    pub fn open(path: &Path) -> Result<Store, StoreError> {
        if let Some(dir) = path.parent().filter(|d| !d.as_os_str().is_empty()) {
            std::fs::create_dir_all(dir).map_err(|source| StoreError::CreateDir {
                path: dir.to_path_buf(),
                source,
            })?;
        }
        let started = std::time::Instant::now();
        let mut pause = Duration::from_millis(5);
        loop {
            match Self::open_once(path) {
                Err(StoreError::Busy) if started.elapsed() < OPEN_PATIENCE => {
                    std::thread::sleep(pause);
                    pause = (pause * 2).min(Duration::from_millis(200));
                }
                other => return other,
            }
        }
    }

    /// [`Store::open`], then SQLite's quick consistency check (`PRAGMA quick_check`), for a
    /// command that is about to write: a damaged file is refused with advice before anything
    /// is written to it.
    pub fn open_for_writing(path: &Path) -> Result<Store, StoreError> {
        let store = Self::open(path)?;
        store.quick_check()?;
        Ok(store)
    }

    /// SQLite's quick check (pages, cells, order; not the index contents); an error naming the
    /// damage when it finds any.
    pub fn quick_check(&self) -> Result<(), StoreError> {
        let damaged = |detail: String| StoreError::Damaged {
            path: self.path.clone(),
            detail,
        };
        let lines: Vec<String> =
            match self
                .conn
                .prepare("PRAGMA quick_check(3)")
                .and_then(|mut st| {
                    st.query_map([], |r| r.get(0))?
                        .collect::<Result<Vec<String>, _>>()
                }) {
                Ok(l) => l,
                Err(e) => {
                    return Err(match StoreError::from(e) {
                        StoreError::Damaged { detail, .. } => damaged(detail),
                        other => other,
                    });
                }
            };
        if lines.len() == 1 && lines[0] == "ok" {
            return Ok(());
        }
        Err(damaged(format!("SQLite's check: {}", lines.join("; "))))
    }

    /// One attempt at opening; [`StoreError::Busy`] when another process holds the lock.
    fn open_once(path: &Path) -> Result<Store, StoreError> {
        let open_err = |source: rusqlite::Error| match StoreError::from(source) {
            StoreError::Busy => StoreError::Busy,
            StoreError::Damaged { detail, .. } => StoreError::Damaged {
                path: path.to_path_buf(),
                detail,
            },
            StoreError::Sql(e) => StoreError::Open {
                path: path.to_path_buf(),
                reason: error::short_sql_error(&e),
            },
            other => other,
        };
        let mut conn = Connection::open(path).map_err(open_err)?;
        conn.busy_timeout(BUSY_TIMEOUT).map_err(open_err)?;
        // WAL lets readers run beside a writer; it is a property of the file and persists.
        let mode: String = conn
            .pragma_update_and_check(None, "journal_mode", "WAL", |r| r.get(0))
            .map_err(open_err)?;
        if !mode.eq_ignore_ascii_case("wal") && !mode.eq_ignore_ascii_case("memory") {
            return Err(StoreError::Open {
                path: path.to_path_buf(),
                reason: format!("journal_mode stayed {mode}"),
            });
        }
        conn.pragma_update(None, "foreign_keys", "ON")
            .map_err(open_err)?;
        migrate::apply(&mut conn).map_err(|e| match e {
            StoreError::Damaged { detail, .. } => StoreError::Damaged {
                path: path.to_path_buf(),
                detail,
            },
            other => other,
        })?;
        Ok(Store {
            conn,
            path: path.to_path_buf(),
        })
    }

    /// The database file.
    pub fn path(&self) -> &Path {
        &self.path
    }

    /// The schema version of the file (after migrations, the newest this binary knows).
    pub fn schema_version(&self) -> Result<i64, StoreError> {
        Ok(migrate::current(&self.conn)?)
    }

    /// SQLite's own consistency check plus the foreign-key check; `"ok"` when all is well.
    pub fn integrity_check(&self) -> Result<String, StoreError> {
        let mut stmt = self.conn.prepare("PRAGMA integrity_check")?;
        let lines: Vec<String> = stmt
            .query_map([], |r| r.get(0))?
            .collect::<Result<_, _>>()?;
        let fk: Option<String> = self
            .conn
            .query_row("PRAGMA foreign_key_check", [], |r| r.get(0))
            .ok();
        let mut report = lines.join("\n");
        if let Some(table) = fk {
            report.push_str(&format!("\nforeign key violation in {table}"));
        }
        Ok(report)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn open_creates_folder_and_file_with_pragmas() {
        let dir = tempfile::tempdir().expect("tmp");
        let path = dir.path().join("nested/deeper/stock.db");
        let store = Store::open(&path).expect("open");
        assert!(path.exists());
        assert_eq!(store.schema_version().expect("v"), migrate::latest());
        let mode: String = store
            .conn
            .query_row("PRAGMA journal_mode", [], |r| r.get(0))
            .expect("mode");
        assert_eq!(mode, "wal");
        let fk: i64 = store
            .conn
            .query_row("PRAGMA foreign_keys", [], |r| r.get(0))
            .expect("fk");
        assert_eq!(fk, 1);
        assert_eq!(store.integrity_check().expect("check"), "ok");
        drop(store);
        // Reopening an existing file is fine and keeps the version.
        let again = Store::open(&path).expect("reopen");
        assert_eq!(again.schema_version().expect("v"), migrate::latest());
    }
}
