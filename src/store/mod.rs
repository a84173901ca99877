//! The SQLite store: open, pragmas, migrations from `../migrations`, parts, quantities, the
//! append-only ledger, CSV/JSON import and export. The only module that touches the database;
//! everything above it gets plain data ([`Part`], [`LedgerEntry`], [`Change`]).
//!
//! Every write runs in one `BEGIN IMMEDIATE` transaction that also appends the ledger entry, so
//! two processes drawing from the same drawer never lose an update, and a count can always be
//! re-derived from the ledger. Holds (reservations for a plan) live in `holds.rs`: a part's
//! `held` is the sum of its holds, and held pieces are left out of what new designs may use.

mod change;
mod error;
mod exchange;
pub mod holds;
mod import;
mod members;
mod migrate;
pub use crate::model::part;
mod query;
pub mod spec;
pub use crate::model::text;

pub use change::{Change, LedgerEntry};
pub use error::{RowError, Shortfall, StoreError};
pub use exchange::{COLUMNS, ExportFormat, Record, export, neutralise_cell, read_csv, read_json};
pub use holds::{Hold, HoldAction, HoldChange, HoldFilter, HoldLine};
pub use import::{ImportLine, ImportReport};
pub use members::{LogFilter, MAX_MEMBER_NAME, Member, Session, clean_member_name};
pub use part::{Kind, Part, Technology, UnknownName, Value};
pub use query::PartFilter;
pub use spec::{PartSpec, PartText};

use rusqlite::Connection;
use std::path::{Path, PathBuf};
use std::time::Duration;

/// How long a writer waits for another process's transaction before giving up.
const BUSY_TIMEOUT: Duration = Duration::from_secs(5);

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
        let open_err = |source| StoreError::Open {
            path: path.to_path_buf(),
            source,
        };
        let mut conn = Connection::open(path).map_err(open_err)?;
        conn.busy_timeout(BUSY_TIMEOUT).map_err(open_err)?;
        // WAL lets readers run beside a writer; it is a property of the file and persists.
        let mode: String = conn
            .pragma_update_and_check(None, "journal_mode", "WAL", |r| r.get(0))
            .map_err(open_err)?;
        if !mode.eq_ignore_ascii_case("wal") && !mode.eq_ignore_ascii_case("memory") {
            return Err(open_err(rusqlite::Error::InvalidParameterName(format!(
                "journal_mode stayed {mode}"
            ))));
        }
        conn.pragma_update(None, "foreign_keys", "ON")
            .map_err(open_err)?;
        migrate::apply(&mut conn)?;
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
