//! Backup and restore: a consistent copy of the live store through SQLite's online backup API
//! (other processes may keep writing), the checks a backup must pass before it replaces the
//! store (SQLite header, integrity, schema version not newer than this binary, counts that
//! re-derive from the ledger), and a full JSON form (parts, holds and ledger with their ids)
//! that restores to the same state.
//!
//! Copying the `.db` file alone is not a backup: in WAL mode recent commits live in the
//! `-wal` file until a checkpoint, so the copy misses them, and a copy put next to a stale
//! `-wal` is read together with it and comes out damaged. The backup API reads the database
//! the way a reader does (one consistent snapshot, WAL included) and writes a single file.
//!
//! This module writes only the files the command layer names (a temporary file it chose) and
//! the store itself.

use super::change::{ENTRY_COLUMNS, LedgerEntry, entry_from_row};
use super::migrate;
use super::{Store, StoreError};
use rusqlite::backup::{Backup, StepResult};
use rusqlite::{Connection, OpenFlags};
use serde::{Deserialize, Serialize};
use std::path::Path;
use std::time::Duration;

/// How often a backup or restore step that meets a busy database is tried again, and the pause
/// between tries: about 10 s in all, twice the busy timeout of a writer.
const BUSY_TRIES: u32 = 100;
const BUSY_PAUSE: Duration = Duration::from_millis(100);

/// The first 16 bytes of every SQLite database file.
const SQLITE_MAGIC: &[u8; 16] = b"SQLite format 3\0";

/// The `format` field of a full JSON export.
pub const FULL_JSON_FORMAT: &str = "onhand full export";

/// What a backup file (or the store) holds, from its own tables.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct Contents {
    /// Schema version.
    pub schema_version: i64,
    /// Stock rows (including removed ones).
    pub rows: i64,
    /// Pieces on the shelves.
    pub pieces: i64,
    /// Pieces held.
    pub held: i64,
    /// Ledger entries.
    pub entries: i64,
    /// Time of the newest ledger entry, UTC.
    pub newest: Option<String>,
}

/// One part row exactly as stored (integers in base units), for the full JSON form.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct RawPart {
    /// Row id.
    pub id: i64,
    /// Kind name.
    pub kind: String,
    /// Value in base units (mΩ, fF; 0 for diodes).
    pub value: i64,
    /// Tolerance below, ppb.
    pub tol_minus_ppb: i64,
    /// Tolerance above, ppb.
    pub tol_plus_ppb: i64,
    /// Technology name.
    pub technology: String,
    /// Voltage rating, µV.
    pub volts_uv: Option<i64>,
    /// Power rating, µW.
    pub watts_uw: Option<i64>,
    /// Package.
    pub package: String,
    /// Bin.
    pub bin: String,
    /// Pieces on the shelf.
    pub quantity: i64,
    /// Low-stock level.
    pub low_stock: Option<i64>,
    /// Note.
    pub note: String,
    /// When the row was made, UTC.
    pub created_at: String,
    /// When the row was removed, UTC.
    #[serde(default)]
    pub retired_at: Option<String>,
}

/// One hold exactly as stored.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct RawHold {
    /// Hold id.
    pub id: i64,
    /// Plan.
    pub plan: String,
    /// Member.
    pub member: String,
    /// Part row.
    pub part_id: i64,
    /// Pieces held.
    pub quantity: i64,
    /// When made, UTC.
    pub created_at: String,
    /// Who made it.
    pub who: String,
    /// Reason.
    pub note: String,
}

/// The whole store as JSON: parts, holds and the ledger with their ids.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct FullExport {
    /// Always [`FULL_JSON_FORMAT`].
    pub format: String,
    /// Schema version of the store it came from.
    pub schema_version: i64,
    /// Every part row, by id.
    pub parts: Vec<RawPart>,
    /// Every hold, by id.
    pub holds: Vec<RawHold>,
    /// Every ledger entry, by id.
    pub ledger: Vec<RawEntry>,
}

/// One ledger entry as stored, for the full JSON form.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct RawEntry {
    /// Entry id.
    pub id: i64,
    /// Part row.
    pub part_id: i64,
    /// When, UTC.
    pub at: String,
    /// Who.
    pub who: String,
    /// Why.
    pub why: String,
    /// Shelf change.
    pub delta: i64,
    /// Shelf count after.
    pub quantity_after: i64,
    /// Held change.
    pub held_delta: i64,
    /// Held count after.
    pub held_after: i64,
    /// Plan.
    pub plan: Option<String>,
    /// Hold row.
    pub hold_id: Option<i64>,
    /// Change group (absent: its own change).
    #[serde(default)]
    pub change_id: Option<i64>,
    /// Change it compensates.
    #[serde(default)]
    pub undoes: Option<i64>,
}

/// Run a backup from `from` into `to` in one step (one consistent snapshot), retrying while
/// either side is busy.
fn copy(from: &Connection, to: &mut Connection) -> Result<(), StoreError> {
    let backup = Backup::new(from, to)?;
    for _ in 0..BUSY_TRIES {
        match backup.step(-1)? {
            StepResult::Done => return Ok(()),
            StepResult::More | StepResult::Busy | StepResult::Locked => {
                std::thread::sleep(BUSY_PAUSE);
            }
            _ => std::thread::sleep(BUSY_PAUSE),
        }
    }
    Err(StoreError::Invalid(
        "another onhand kept the store busy; try again".into(),
    ))
}

fn contents_of(conn: &Connection) -> Result<Contents, StoreError> {
    let one = |sql: &str| -> Result<i64, StoreError> { Ok(conn.query_row(sql, [], |r| r.get(0))?) };
    Ok(Contents {
        schema_version: migrate::current(conn)?,
        rows: one("SELECT COUNT(*) FROM part")?,
        pieces: one("SELECT COALESCE(SUM(quantity), 0) FROM part")?,
        held: one("SELECT COALESCE(SUM(quantity), 0) FROM hold")?,
        entries: one("SELECT COUNT(*) FROM ledger")?,
        newest: conn.query_row("SELECT MAX(at) FROM ledger", [], |r| r.get(0))?,
    })
}

/// SQLite's integrity check, the foreign keys, and the ledger re-deriving every count: each
/// part's shelf count is the sum of its ledger deltas and each hold the sum of the held deltas
/// that name it. `Ok(())` or the first problems found.
fn verify(conn: &Connection) -> Result<(), String> {
    let sql_err = |e: rusqlite::Error| e.to_string();
    let check: String = conn
        .query_row("PRAGMA integrity_check", [], |r| r.get(0))
        .map_err(sql_err)?;
    if check != "ok" {
        return Err(format!("SQLite integrity check: {check}"));
    }
    let fk: Option<String> = conn
        .query_row("PRAGMA foreign_key_check", [], |r| r.get(0))
        .ok();
    if let Some(table) = fk {
        return Err(format!("a foreign key in table {table} points nowhere"));
    }
    let bad_part: Option<(i64, i64, i64)> = conn
        .query_row(
            "SELECT p.id, p.quantity, COALESCE(SUM(l.delta), 0) FROM part p \
             LEFT JOIN ledger l ON l.part_id = p.id GROUP BY p.id \
             HAVING p.quantity <> COALESCE(SUM(l.delta), 0) LIMIT 1",
            [],
            |r| Ok((r.get(0)?, r.get(1)?, r.get(2)?)),
        )
        .ok();
    if let Some((id, q, sum)) = bad_part {
        return Err(format!(
            "row #{id} has {q} pieces but its ledger adds up to {sum}"
        ));
    }
    let bad_hold: Option<(i64, i64, i64)> = conn
        .query_row(
            "SELECT h.id, h.quantity, COALESCE(SUM(l.held_delta), 0) FROM hold h \
             LEFT JOIN ledger l ON l.hold_id = h.id GROUP BY h.id \
             HAVING h.quantity <> COALESCE(SUM(l.held_delta), 0) LIMIT 1",
            [],
            |r| Ok((r.get(0)?, r.get(1)?, r.get(2)?)),
        )
        .ok();
    if let Some((id, q, sum)) = bad_hold {
        return Err(format!(
            "hold #{id} holds {q} pieces but its ledger adds up to {sum}"
        ));
    }
    Ok(())
}

/// Open a backup file read-only and check it: a SQLite file, intact, of a schema this binary
/// knows, with counts that re-derive from its ledger.
fn open_checked(path: &Path) -> Result<Connection, StoreError> {
    let refuse = |why: String| StoreError::Invalid(format!("{} is refused: {why}", path.display()));
    let mut head = [0u8; 16];
    {
        use std::io::Read as _;
        let mut f =
            std::fs::File::open(path).map_err(|e| refuse(format!("cannot read it ({e})")))?;
        f.read_exact(&mut head)
            .map_err(|_| refuse("it is too short to be a database".into()))?;
    }
    if &head != SQLITE_MAGIC {
        return Err(refuse("it is not a SQLite database".into()));
    }
    let conn = Connection::open_with_flags(
        path,
        OpenFlags::SQLITE_OPEN_READ_ONLY | OpenFlags::SQLITE_OPEN_NO_MUTEX,
    )
    .map_err(|e| refuse(e.to_string()))?;
    let version = migrate::current(&conn).map_err(|e| refuse(e.to_string()))?;
    let known = migrate::latest();
    if version > known {
        return Err(refuse(format!(
            "it is at schema version {version}, this onhand knows only up to {known}; use a \
             newer onhand"
        )));
    }
    if version < 1 {
        return Err(refuse("it is not an onhand stock database".into()));
    }
    verify(&conn).map_err(refuse)?;
    Ok(conn)
}

/// Load `from` (a checked backup, any older schema) into a fresh in-memory database brought up
/// to this binary's schema, and check it again there.
fn staged_from(from: &Connection) -> Result<Connection, StoreError> {
    let mut mem = Connection::open_in_memory()?;
    copy(from, &mut mem)?;
    migrate::apply(&mut mem)?;
    verify(&mem).map_err(StoreError::Invalid)?;
    Ok(mem)
}

impl Store {
    /// What the store holds now.
    pub fn contents(&self) -> Result<Contents, StoreError> {
        contents_of(&self.conn)
    }

    /// Copy the whole store, consistently, into a new single-file database at `path` (which
    /// must not exist: the command layer gives a fresh temporary file and renames it into
    /// place). Other processes may keep writing meanwhile; the copy is one snapshot. The copy
    /// is checked before this returns.
    pub fn backup_to(&self, path: &Path) -> Result<Contents, StoreError> {
        if path.exists() {
            return Err(StoreError::Invalid(format!(
                "{} exists; a backup is written to a new file",
                path.display()
            )));
        }
        let mut dst = Connection::open(path)?;
        copy(&self.conn, &mut dst)?;
        // One self-contained file: no -wal beside it.
        let _mode: String =
            dst.pragma_update_and_check(None, "journal_mode", "DELETE", |r| r.get(0))?;
        verify(&dst).map_err(|e| StoreError::Invalid(format!("the copy failed its check: {e}")))?;
        let contents = contents_of(&dst)?;
        dst.close().map_err(|(_, e)| StoreError::Sql(e))?;
        Ok(contents)
    }

    /// Check a backup file without changing anything: what it holds, or why it is refused.
    pub fn check_backup(path: &Path) -> Result<Contents, StoreError> {
        let conn = open_checked(path)?;
        contents_of(&staged_from(&conn)?)
    }

    /// Replace the whole store with the backup at `path`, in one step that other processes
    /// see atomically (SQLite's backup API into the live database, under its write lock). The
    /// file is checked first (see [`Store::check_backup`]); an older schema is brought up to
    /// date on the way in. Returns what the store holds now.
    pub fn restore_from(&mut self, path: &Path) -> Result<Contents, StoreError> {
        let conn = open_checked(path)?;
        let staged = staged_from(&conn)?;
        drop(conn);
        self.replace_with(&staged)
    }

    fn replace_with(&mut self, staged: &Connection) -> Result<Contents, StoreError> {
        copy(staged, &mut self.conn)?;
        verify(&self.conn).map_err(StoreError::Invalid)?;
        contents_of(&self.conn)
    }

    /// The whole store as one JSON-ready value: every part (with removed rows), hold and
    /// ledger entry, with their ids, exactly as stored.
    pub fn full_export(&self) -> Result<FullExport, StoreError> {
        let mut stmt = self.conn.prepare(
            "SELECT id, kind, value, tol_minus_ppb, tol_plus_ppb, technology, volts_uv, \
             watts_uw, package, bin, quantity, low_stock, note, created_at, retired_at \
             FROM part ORDER BY id",
        )?;
        let parts = stmt
            .query_map([], |r| {
                Ok(RawPart {
                    id: r.get(0)?,
                    kind: r.get(1)?,
                    value: r.get(2)?,
                    tol_minus_ppb: r.get(3)?,
                    tol_plus_ppb: r.get(4)?,
                    technology: r.get(5)?,
                    volts_uv: r.get(6)?,
                    watts_uw: r.get(7)?,
                    package: r.get(8)?,
                    bin: r.get(9)?,
                    quantity: r.get(10)?,
                    low_stock: r.get(11)?,
                    note: r.get(12)?,
                    created_at: r.get(13)?,
                    retired_at: r.get(14)?,
                })
            })?
            .collect::<Result<Vec<_>, _>>()?;
        let mut stmt = self.conn.prepare(
            "SELECT id, plan, member, part_id, quantity, created_at, who, note FROM hold \
             ORDER BY id",
        )?;
        let holds = stmt
            .query_map([], |r| {
                Ok(RawHold {
                    id: r.get(0)?,
                    plan: r.get(1)?,
                    member: r.get(2)?,
                    part_id: r.get(3)?,
                    quantity: r.get(4)?,
                    created_at: r.get(5)?,
                    who: r.get(6)?,
                    note: r.get(7)?,
                })
            })?
            .collect::<Result<Vec<_>, _>>()?;
        let mut stmt = self.conn.prepare(&format!(
            "SELECT {ENTRY_COLUMNS}, ledger.change_id FROM ledger ORDER BY id"
        ))?;
        let ledger = stmt
            .query_map([], |r| {
                let e: LedgerEntry = entry_from_row(r)?;
                let stored_change: Option<i64> = r.get(13)?;
                Ok(RawEntry {
                    id: e.id,
                    part_id: e.part_id,
                    at: e.at,
                    who: e.who,
                    why: e.why,
                    delta: e.delta,
                    quantity_after: e.quantity_after,
                    held_delta: e.held_delta,
                    held_after: e.held_after,
                    plan: e.plan,
                    hold_id: e.hold_id,
                    change_id: stored_change,
                    undoes: e.undoes,
                })
            })?
            .collect::<Result<Vec<_>, _>>()?;
        Ok(FullExport {
            format: FULL_JSON_FORMAT.to_string(),
            schema_version: migrate::current(&self.conn)?,
            parts,
            holds,
            ledger,
        })
    }

    /// Build the state a full JSON export describes in a fresh database and check it (every
    /// count re-derives from the ledger); with `apply`, then replace the store with it the way
    /// [`Store::restore_from`] does. Returns what the restored store holds.
    pub fn restore_full_export(
        &mut self,
        data: &FullExport,
        apply: bool,
    ) -> Result<Contents, StoreError> {
        if data.format != FULL_JSON_FORMAT {
            return Err(StoreError::Invalid(format!(
                "not a full export of onhand (format {:?}, expected {FULL_JSON_FORMAT:?})",
                data.format
            )));
        }
        if data.schema_version > migrate::latest() {
            return Err(StoreError::Invalid(format!(
                "the export is at schema version {}, this onhand knows only up to {}",
                data.schema_version,
                migrate::latest()
            )));
        }
        let mut mem = Connection::open_in_memory()?;
        migrate::apply(&mut mem)?;
        {
            let tx = mem.transaction()?;
            {
                let mut ins = tx.prepare(
                    "INSERT INTO part (id, kind, value, tol_minus_ppb, tol_plus_ppb, technology, \
                     volts_uv, watts_uw, package, bin, quantity, low_stock, note, created_at, \
                     retired_at) VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12, ?13, \
                     ?14, ?15)",
                )?;
                for p in &data.parts {
                    ins.execute(rusqlite::params![
                        p.id,
                        p.kind,
                        p.value,
                        p.tol_minus_ppb,
                        p.tol_plus_ppb,
                        p.technology,
                        p.volts_uv,
                        p.watts_uw,
                        p.package,
                        p.bin,
                        p.quantity,
                        p.low_stock,
                        p.note,
                        p.created_at,
                        p.retired_at
                    ])?;
                }
                let mut ins = tx.prepare(
                    "INSERT INTO hold (id, plan, member, part_id, quantity, created_at, who, note) \
                     VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8)",
                )?;
                for h in &data.holds {
                    ins.execute(rusqlite::params![
                        h.id,
                        h.plan,
                        h.member,
                        h.part_id,
                        h.quantity,
                        h.created_at,
                        h.who,
                        h.note
                    ])?;
                }
                let mut ins = tx.prepare(
                    "INSERT INTO ledger (id, part_id, at, who, why, delta, quantity_after, \
                     held_delta, held_after, plan, hold_id, change_id, undoes) \
                     VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, ?10, ?11, ?12, ?13)",
                )?;
                for e in &data.ledger {
                    ins.execute(rusqlite::params![
                        e.id,
                        e.part_id,
                        e.at,
                        e.who,
                        e.why,
                        e.delta,
                        e.quantity_after,
                        e.held_delta,
                        e.held_after,
                        e.plan,
                        e.hold_id,
                        e.change_id,
                        e.undoes
                    ])?;
                }
            }
            tx.commit()?;
        }
        verify(&mem)
            .map_err(|e| StoreError::Invalid(format!("the export is inconsistent: {e}")))?;
        if !apply {
            return contents_of(&mem);
        }
        self.replace_with(&mem)
    }
}

/// Whether the file at `path` starts like a SQLite database.
pub fn looks_like_sqlite(path: &Path) -> bool {
    use std::io::Read as _;
    let mut head = [0u8; 16];
    std::fs::File::open(path)
        .and_then(|mut f| f.read_exact(&mut head))
        .is_ok()
        && &head == SQLITE_MAGIC
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::store::spec::PartText;

    fn seeded(dir: &Path) -> Store {
        let mut s = Store::open(&dir.join("s.db")).expect("open");
        let spec = PartText {
            value: "4.7k".into(),
            bin: Some("A3".into()),
            ..Default::default()
        }
        .resolve()
        .expect("spec");
        let r = s.add(&spec, 10, "ana", "delivery").expect("add").part.id;
        s.take(r, 2, "ben", "board").expect("take");
        s.hold("amp", "unit 1", &[(r, 3)], "ana", "kit")
            .expect("hold");
        s
    }

    #[test]
    fn backup_restores_to_the_same_state() {
        let dir = tempfile::tempdir().expect("tmp");
        let mut s = seeded(dir.path());
        let before = s.full_export().expect("export");
        let file = dir.path().join("b.db");
        let c = s.backup_to(&file).expect("backup");
        assert_eq!((c.pieces, c.held, c.entries), (8, 3, 3));
        assert!(s.backup_to(&file).is_err(), "never over an existing file");
        let r = s.parts(&Default::default()).expect("p")[0].id;
        s.take(r, 5, "ben", "after the backup").expect("take");
        assert_eq!(Store::check_backup(&file).expect("check"), c);
        s.restore_from(&file).expect("restore");
        assert_eq!(s.full_export().expect("export"), before);
        // The live store is still in WAL mode and usable.
        let mode: String = s
            .conn
            .query_row("PRAGMA journal_mode", [], |r| r.get(0))
            .expect("mode");
        assert_eq!(mode, "wal");
        s.take(r, 1, "ben", "still works").expect("take");
    }

    #[test]
    fn full_json_round_trips_and_inconsistent_json_is_refused() {
        let dir = tempfile::tempdir().expect("tmp");
        let mut s = seeded(dir.path());
        let full = s.full_export().expect("export");
        let text = serde_json::to_string(&full).expect("json");
        let r = s.parts(&Default::default()).expect("p")[0].id;
        s.take(r, 5, "ben", "later").expect("take");
        let back: FullExport = serde_json::from_str(&text).expect("parse");
        s.restore_full_export(&back, true).expect("restore");
        assert_eq!(s.full_export().expect("again"), full);
        let mut bad = back.clone();
        bad.parts[0].quantity += 1;
        let err = s
            .restore_full_export(&bad, true)
            .expect_err("does not add up");
        assert!(err.to_string().contains("ledger adds up to"), "{err}");
        assert_eq!(s.full_export().expect("unchanged"), full);
    }

    #[test]
    fn files_that_are_not_good_backups_are_refused() {
        let dir = tempfile::tempdir().expect("tmp");
        let text = dir.path().join("notes.txt");
        std::fs::write(&text, "just some notes, not a database").expect("w");
        let err = Store::check_backup(&text).expect_err("text");
        assert!(err.to_string().contains("not a SQLite database"), "{err}");
        let newer = dir.path().join("newer.db");
        {
            let c = Connection::open(&newer).expect("c");
            c.pragma_update(None, "user_version", migrate::latest() + 1)
                .expect("v");
        }
        let err = Store::check_backup(&newer).expect_err("newer");
        assert!(err.to_string().contains("use a newer onhand"), "{err}");
    }
}
