//! Schema migrations: the numbered files in `migrations/`, embedded at compile time and applied
//! in order against `PRAGMA user_version`. Each file and its version bump commit together, so a
//! failure leaves the database at the previous version. A database newer than this binary is
//! refused rather than guessed at. Landed files are never edited; changes get a new file.

use super::StoreError;
use rusqlite::{Connection, TransactionBehavior};

/// One migration: its number (1-based, contiguous), file name and SQL.
pub struct Migration {
    /// The schema version after it has run.
    pub version: i64,
    /// The file name in `migrations/`.
    pub name: &'static str,
    /// The SQL.
    pub sql: &'static str,
}

/// Every migration, in order. A test checks this list against the folder.
pub const MIGRATIONS: &[Migration] = &[
    Migration {
        version: 1,
        name: "0001_parts_and_ledger.sql",
        sql: include_str!("../../migrations/0001_parts_and_ledger.sql"),
    },
    Migration {
        version: 2,
        name: "0002_holds.sql",
        sql: include_str!("../../migrations/0002_holds.sql"),
    },
    Migration {
        version: 3,
        name: "0003_changes_and_retired_rows.sql",
        sql: include_str!("../../migrations/0003_changes_and_retired_rows.sql"),
    },
    Migration {
        version: 4,
        name: "0004_members_and_sessions.sql",
        sql: include_str!("../../migrations/0004_members_and_sessions.sql"),
    },
];

/// The schema version this binary writes.
pub fn latest() -> i64 {
    MIGRATIONS.last().map_or(0, |m| m.version)
}

/// The version recorded in the database.
pub fn current(conn: &Connection) -> Result<i64, rusqlite::Error> {
    conn.pragma_query_value(None, "user_version", |r| r.get(0))
}

/// Bring the database up to [`latest`]. Safe against another process migrating at the same
/// time: the version is re-read inside the write transaction.
pub fn apply(conn: &mut Connection) -> Result<(), StoreError> {
    let known = latest();
    let found = current(conn)?;
    if found > known {
        return Err(StoreError::TooNew { found, known });
    }
    for m in MIGRATIONS.iter().filter(|m| m.version > found) {
        let tx = conn.transaction_with_behavior(TransactionBehavior::Immediate)?;
        let now = current(&tx)?;
        if now > known {
            return Err(StoreError::TooNew { found: now, known });
        }
        if now >= m.version {
            continue; // someone else applied it meanwhile
        }
        let fail = |source: rusqlite::Error| StoreError::Migration {
            version: m.version,
            name: m.name,
            reason: super::error::short_sql_error(&source),
        };
        tx.execute_batch(m.sql).map_err(fail)?;
        tx.pragma_update(None, "user_version", m.version)
            .map_err(fail)?;
        tx.commit().map_err(fail)?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_file_is_listed_in_order_and_says_why() {
        let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("migrations");
        let mut files: Vec<String> = std::fs::read_dir(&dir)
            .expect("migrations folder")
            .map(|e| e.expect("entry").file_name().to_string_lossy().into_owned())
            .filter(|n| n.ends_with(".sql"))
            .collect();
        files.sort();
        let listed: Vec<&str> = MIGRATIONS.iter().map(|m| m.name).collect();
        assert_eq!(files, listed, "migrations/ and MIGRATIONS differ");
        // Versions rise; numbers are handed out per branch, so one may still be missing here.
        let mut last = 0;
        for m in MIGRATIONS {
            let n = m.version;
            assert!(n > last, "{} is out of sequence", m.name);
            last = n;
            assert!(
                m.name.starts_with(&format!("{n:04}_")),
                "{} should start with {n:04}_",
                m.name
            );
            let on_disk = std::fs::read_to_string(dir.join(m.name)).expect("read");
            assert_eq!(on_disk, m.sql);
            assert!(
                m.sql.trim_start().starts_with("--"),
                "{} must open with a SQL comment saying why",
                m.name
            );
        }
    }

    #[test]
    fn all_apply_to_an_empty_database() {
        let mut conn = Connection::open_in_memory().expect("memory db");
        apply(&mut conn).expect("migrate");
        assert_eq!(current(&conn).expect("version"), latest());
        let ok: String = conn
            .query_row("PRAGMA integrity_check", [], |r| r.get(0))
            .expect("integrity");
        assert_eq!(ok, "ok");
        let fk: Option<i64> = conn
            .query_row("PRAGMA foreign_key_check", [], |r| r.get(0))
            .ok();
        assert_eq!(fk, None);
        // Applying again is a no-op.
        apply(&mut conn).expect("again");
        assert_eq!(current(&conn).expect("version"), latest());
    }

    #[test]
    fn newer_database_is_refused() {
        let mut conn = Connection::open_in_memory().expect("memory db");
        conn.pragma_update(None, "user_version", latest() + 1)
            .expect("set");
        let err = apply(&mut conn).expect_err("too new");
        assert!(matches!(err, StoreError::TooNew { .. }), "{err}");
    }

    #[test]
    fn ledger_refuses_update_and_delete() {
        let mut conn = Connection::open_in_memory().expect("memory db");
        apply(&mut conn).expect("migrate");
        conn.execute_batch(
            "INSERT INTO part (kind, value, tol_minus_ppb, tol_plus_ppb, technology, quantity)
               VALUES ('resistor', 1000, 0, 0, 'metal_film', 1);
             INSERT INTO ledger (part_id, who, why, delta, quantity_after)
               VALUES (1, 't', 'test', 1, 1);",
        )
        .expect("seed");
        let upd = conn.execute("UPDATE ledger SET delta = 5", []);
        assert!(upd.is_err_and(|e| e.to_string().contains("append-only")));
        let del = conn.execute("DELETE FROM ledger", []);
        assert!(del.is_err_and(|e| e.to_string().contains("append-only")));
        let neg = conn.execute("UPDATE part SET quantity = -1", []);
        assert!(neg.is_err(), "CHECK (quantity >= 0) must hold");
    }
}
