//! Members of a shared cabinet and their web sessions (migration 0004), plus the two small
//! writes and reads the web page needs that the rest of the store does not offer yet: putting
//! pieces back onto the row they came from, and the ledger across the whole store with filters.
//!
//! Owns the `member` and `session` tables. Passwords arrive here already hashed (Argon2id PHC
//! strings made in `web::auth`); session tokens arrive as hashes. No hashing, no HTTP here.

use super::{Change, Store, StoreError};
use rusqlite::{OptionalExtension, Row, TransactionBehavior, params};
use serde::Serialize;

/// Longest member name accepted (the table's CHECK says the same).
pub const MAX_MEMBER_NAME: usize = 64;

/// One member account.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct Member {
    /// Row id.
    pub id: i64,
    /// Login name, unique regardless of ASCII case; also the name the ledger records.
    pub name: String,
    /// Organisers also import, recount, manage members and release anyone's hold.
    pub organiser: bool,
    /// Whether a password is set (without one, no login is possible).
    pub has_password: bool,
    /// When the account was made, UTC.
    pub created_at: String,
}

/// A live session: who it belongs to and the anti-forgery token its forms must carry.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Session {
    /// The member logged in.
    pub member: Member,
    /// The token every form of this session carries.
    pub csrf: String,
    /// When it stops working, UTC.
    pub expires_at: String,
}

const MEMBER_COLUMNS: &str = "id, name, organiser, password IS NOT NULL, created_at";

fn member_from_row(r: &Row<'_>) -> rusqlite::Result<Member> {
    Ok(Member {
        id: r.get(0)?,
        name: r.get(1)?,
        organiser: r.get(2)?,
        has_password: r.get(3)?,
        created_at: r.get(4)?,
    })
}

/// A member name, trimmed: 1 to 64 characters, no control characters, no spaces at the ends.
pub fn clean_member_name(name: &str) -> Result<String, StoreError> {
    let t = name.trim();
    if t.is_empty() {
        return Err(StoreError::Invalid(
            "a member name must not be empty".into(),
        ));
    }
    if t.chars().count() > MAX_MEMBER_NAME {
        return Err(StoreError::Invalid(format!(
            "a member name is at most {MAX_MEMBER_NAME} characters"
        )));
    }
    if t.chars().any(char::is_control) {
        return Err(StoreError::Invalid(format!(
            "the member name {t:?} contains control characters"
        )));
    }
    Ok(t.to_string())
}

fn no_member(name: &str) -> StoreError {
    StoreError::Invalid(format!(
        "no member named {name:?}; see `onhand member list`"
    ))
}

impl Store {
    /// How long a write waits for another connection's transaction before giving up (the
    /// web pool waits less than the command line, then answers "busy, retry").
    pub fn set_busy_timeout(&mut self, wait: std::time::Duration) -> Result<(), StoreError> {
        Ok(self.conn.busy_timeout(wait)?)
    }

    /// Create a member account (no password yet). Refused when the name is taken, in any case.
    pub fn add_member(&mut self, name: &str, organiser: bool) -> Result<Member, StoreError> {
        let name = clean_member_name(name)?;
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        if member_in(&tx, &name)?.is_some() {
            return Err(StoreError::Invalid(format!(
                "there is already a member named {name:?}"
            )));
        }
        tx.execute(
            "INSERT INTO member (name, organiser) VALUES (?1, ?2)",
            params![name, organiser],
        )?;
        let m = member_in(&tx, &name)?.ok_or_else(|| no_member(&name))?;
        tx.commit()?;
        Ok(m)
    }

    /// Every member, by name.
    pub fn members(&self) -> Result<Vec<Member>, StoreError> {
        let sql = format!("SELECT {MEMBER_COLUMNS} FROM member ORDER BY name COLLATE NOCASE");
        let mut stmt = self.conn.prepare_cached(&sql)?;
        let rows = stmt.query_map([], member_from_row)?;
        Ok(rows.collect::<Result<_, _>>()?)
    }

    /// The member with this name (any ASCII case), if any.
    pub fn member(&self, name: &str) -> Result<Option<Member>, StoreError> {
        member_in(&self.conn, name.trim())
    }

    /// Remove a member; their sessions end with the account. The ledger keeps their name.
    pub fn remove_member(&mut self, name: &str) -> Result<Member, StoreError> {
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        let m = member_in(&tx, name.trim())?.ok_or_else(|| no_member(name))?;
        tx.execute("DELETE FROM member WHERE id = ?1", [m.id])?;
        tx.commit()?;
        Ok(m)
    }

    /// Store a member's new password hash (a PHC string) and end their other sessions.
    pub fn set_member_password(&mut self, name: &str, phc: &str) -> Result<Member, StoreError> {
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        let m = member_in(&tx, name.trim())?.ok_or_else(|| no_member(name))?;
        tx.execute(
            "UPDATE member SET password = ?2 WHERE id = ?1",
            params![m.id, phc],
        )?;
        tx.execute("DELETE FROM session WHERE member_id = ?1", [m.id])?;
        let m = member_in(&tx, &m.name)?.ok_or_else(|| no_member(name))?;
        tx.commit()?;
        Ok(m)
    }

    /// The member and their password hash, for a login check.
    pub fn member_with_password(
        &self,
        name: &str,
    ) -> Result<Option<(Member, Option<String>)>, StoreError> {
        let Some(m) = member_in(&self.conn, name.trim())? else {
            return Ok(None);
        };
        let phc: Option<String> = self
            .conn
            .prepare_cached("SELECT password FROM member WHERE id = ?1")?
            .query_row([m.id], |r| r.get(0))?;
        Ok(Some((m, phc)))
    }

    /// Open a session for `member_id` that lasts `seconds`; the caller keeps the token and
    /// hands only its hash here. Expired sessions are swept at the same time.
    pub fn open_session(
        &mut self,
        member_id: i64,
        token_hash: &str,
        csrf: &str,
        seconds: i64,
    ) -> Result<(), StoreError> {
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        tx.execute(
            "DELETE FROM session WHERE expires_at <= strftime('%Y-%m-%dT%H:%M:%fZ', 'now')",
            [],
        )?;
        tx.execute(
            "INSERT INTO session (token_hash, member_id, csrf, expires_at) VALUES (?1, ?2, ?3, \
             strftime('%Y-%m-%dT%H:%M:%fZ', 'now', ?4))",
            params![token_hash, member_id, csrf, format!("{seconds:+} seconds")],
        )?;
        tx.commit()?;
        Ok(())
    }

    /// The live (unexpired) session with this token hash, if any.
    pub fn session(&self, token_hash: &str) -> Result<Option<Session>, StoreError> {
        let sql = "SELECT m.id, m.name, m.organiser, m.password IS NOT NULL, m.created_at, \
                   s.csrf, s.expires_at FROM session s JOIN member m ON m.id = s.member_id \
                   WHERE s.token_hash = ?1 \
                   AND s.expires_at > strftime('%Y-%m-%dT%H:%M:%fZ', 'now')";
        let found = self
            .conn
            .prepare_cached(sql)?
            .query_row([token_hash], |r| {
                Ok(Session {
                    member: member_from_row(r)?,
                    csrf: r.get(5)?,
                    expires_at: r.get(6)?,
                })
            })
            .optional()?;
        Ok(found)
    }

    /// End a session (log out). Ending one that is gone already is fine.
    pub fn end_session(&mut self, token_hash: &str) -> Result<(), StoreError> {
        self.conn
            .execute("DELETE FROM session WHERE token_hash = ?1", [token_hash])?;
        Ok(())
    }

    /// Put `qty` pieces (1 or more) back onto row `id`, the row they were taken from: the same
    /// store function as `add '#7'` ([`Store::add_to_row`]), so it is one change of its own in
    /// the ledger (and can be undone as one).
    pub fn put_back(
        &mut self,
        id: i64,
        qty: i64,
        who: &str,
        why: &str,
    ) -> Result<Change, StoreError> {
        if qty <= 0 {
            return Err(StoreError::BadCount {
                what: "the quantity to put back",
                got: qty,
            });
        }
        self.add_to_row(id, qty, who, why)
    }
}

/// What the write guard's trigger raises; [`Store::as_member`] turns it into a typed refusal.
const RIGHTS_GONE: &str = "onhand: the rights of the writer are gone";

impl Store {
    /// Run `write` with the rights of member `name` checked inside every write transaction it
    /// makes: each ledger entry (every stock write appends one in its own transaction) and each
    /// change to the member table aborts unless `name` is, at that moment and in that
    /// transaction, still a member (and an organiser when `organiser`). So a member whose
    /// rights are removed while a request runs cannot still write: the check and the write
    /// commit together or not at all. Errors with [`StoreError::Invalid`] saying so.
    pub fn as_member<T>(
        &mut self,
        name: &str,
        organiser: bool,
        write: impl FnOnce(&mut Store) -> Result<T, StoreError>,
    ) -> Result<T, StoreError> {
        self.conn.execute_batch(&format!(
            "CREATE TEMP TABLE IF NOT EXISTS write_guard (name TEXT NOT NULL, organiser INTEGER NOT NULL);
             CREATE TEMP TRIGGER IF NOT EXISTS write_guard_ledger BEFORE INSERT ON main.ledger
             WHEN EXISTS (SELECT 1 FROM temp.write_guard)
             BEGIN SELECT RAISE(ABORT, '{RIGHTS_GONE}') WHERE NOT EXISTS (
               SELECT 1 FROM main.member m JOIN temp.write_guard g ON m.name = g.name
               WHERE m.name = NEW.who AND (m.organiser OR g.organiser = 0)); END;
             CREATE TEMP TRIGGER IF NOT EXISTS write_guard_member_in BEFORE INSERT ON main.member
             WHEN EXISTS (SELECT 1 FROM temp.write_guard)
             BEGIN SELECT RAISE(ABORT, '{RIGHTS_GONE}') WHERE NOT EXISTS (
               SELECT 1 FROM main.member m JOIN temp.write_guard g ON m.name = g.name
               WHERE m.organiser); END;
             CREATE TEMP TRIGGER IF NOT EXISTS write_guard_member_out BEFORE DELETE ON main.member
             WHEN EXISTS (SELECT 1 FROM temp.write_guard)
             BEGIN SELECT RAISE(ABORT, '{RIGHTS_GONE}') WHERE NOT EXISTS (
               SELECT 1 FROM main.member m JOIN temp.write_guard g ON m.name = g.name
               WHERE m.organiser); END;
             DELETE FROM temp.write_guard;"
        ))?;
        self.conn.execute(
            "INSERT INTO temp.write_guard (name, organiser) VALUES (?1, ?2)",
            params![name, organiser],
        )?;
        let result = write(self);
        let cleared = self.conn.execute("DELETE FROM temp.write_guard", []);
        let result = result.map_err(|e| match &e {
            StoreError::Sql(rusqlite::Error::SqliteFailure(_, Some(m))) if m == RIGHTS_GONE => {
                StoreError::Invalid(format!(
                    "{name} no longer has the rights for this (changed while the request ran); \
                     nothing was written"
                ))
            }
            _ => e,
        });
        cleared?;
        result
    }
}

fn member_in(conn: &rusqlite::Connection, name: &str) -> Result<Option<Member>, StoreError> {
    let sql = format!("SELECT {MEMBER_COLUMNS} FROM member WHERE name = ?1");
    Ok(conn
        .prepare_cached(&sql)?
        .query_row([name], member_from_row)
        .optional()?)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::store::PartText;

    fn store() -> (tempfile::TempDir, Store) {
        let dir = tempfile::tempdir().expect("tmp");
        let s = Store::open(&dir.path().join("s.db")).expect("open");
        (dir, s)
    }

    #[test]
    fn members_are_unique_regardless_of_case_and_removal_ends_sessions() {
        let (_d, mut s) = store();
        let a = s.add_member("Alice", false).expect("add");
        assert!(!a.organiser && !a.has_password);
        let err = s.add_member("alice", true).expect_err("taken");
        assert!(err.to_string().contains("already"), "{err}");
        assert!(s.add_member("  ", false).is_err());
        assert!(s.add_member("a\u{7}b", false).is_err());
        s.set_member_password("alice", "$argon2id$fake")
            .expect("password");
        s.open_session(a.id, "h1", "c1", 60).expect("session");
        assert_eq!(
            s.session("h1").expect("q").expect("live").member.name,
            "Alice"
        );
        s.remove_member("ALICE").expect("remove");
        assert_eq!(s.session("h1").expect("q"), None);
        assert!(s.members().expect("list").is_empty());
    }

    #[test]
    fn writes_under_a_member_guard_fail_once_the_rights_are_gone() {
        let (d, mut s) = store();
        // Another connection to the same file: the command line changing rights meanwhile.
        let other = || Store::open(&d.path().join("s.db")).expect("second connection");
        s.add_member("olga", true).expect("org");
        s.add_member("alice", false).expect("member");
        let spec = PartText {
            value: "4k7".into(),
            kind: Some("resistor".into()),
            bin: Some("A3".into()),
            ..PartText::default()
        }
        .resolve()
        .expect("spec");
        let row = s.add(&spec, 10, "olga", "stock").expect("add").part.id;
        // A member may take; a member is not an organiser.
        s.as_member("alice", false, |s| s.take(row, 1, "alice", "web: take"))
            .expect("take");
        let err = s
            .as_member("alice", true, |s| {
                s.recount(row, 3, "alice", "web: recount")
            })
            .expect_err("not an organiser");
        assert!(
            err.to_string().contains("no longer has the rights"),
            "{err}"
        );
        // The rights go away between the request's start and its write: inside the guarded
        // call, another connection removes the member, then the write is refused in its own
        // transaction and nothing changes.
        let err = s
            .as_member("alice", false, |s| {
                other().remove_member("alice")?;
                s.take(row, 2, "alice", "web: take")
            })
            .expect_err("removed");
        assert!(
            err.to_string().contains("no longer has the rights"),
            "{err}"
        );
        let part = s
            .parts(&crate::store::PartFilter::default())
            .expect("parts")
            .into_iter()
            .find(|p| p.id == row)
            .expect("row");
        assert_eq!(part.quantity, 9, "only the first take happened");
        // Organiser-only member changes are guarded too; unguarded calls are as before.
        let err = s
            .as_member("olga", false, |s| {
                other()
                    .conn
                    .execute("UPDATE member SET organiser = 0 WHERE name = 'olga'", [])?;
                s.add_member("zed", false)
            })
            .expect_err("no longer organiser");
        assert!(
            err.to_string().contains("no longer has the rights"),
            "{err}"
        );
        s.add_member("zed", false)
            .expect("the command line is not guarded");
    }

    #[test]
    fn expired_sessions_do_not_count_and_a_new_password_ends_old_ones() {
        let (_d, mut s) = store();
        let b = s.add_member("bob", true).expect("add");
        s.open_session(b.id, "old", "c", -1).expect("expired");
        assert_eq!(s.session("old").expect("q"), None);
        s.open_session(b.id, "live", "c", 600).expect("live");
        assert!(s.session("live").expect("q").is_some());
        s.set_member_password("bob", "x").expect("pw");
        assert_eq!(s.session("live").expect("q"), None);
    }

    #[test]
    fn put_back_refills_the_same_row_as_its_own_ledger_change() {
        let (_d, mut s) = store();
        let spec = PartText {
            value: "4k7".into(),
            kind: Some("resistor".into()),
            bin: Some("A3".into()),
            ..PartText::default()
        }
        .resolve()
        .expect("spec");
        let row = s.add(&spec, 10, "org", "stock").expect("add").part.id;
        s.take(row, 3, "alice", "web: take").expect("take");
        let back = s.put_back(row, 2, "alice", "web: put back").expect("back");
        assert_eq!((back.part.id, back.part.quantity, back.before), (row, 9, 7));
        assert!(s.put_back(row, 0, "alice", "x").is_err());
        // The page reads these through the one ledger log (`Store::log`).
        let alice = s
            .log(&crate::store::LogFilter {
                who: Some("alice".into()),
                ..Default::default()
            })
            .expect("log");
        assert_eq!(
            alice.iter().map(|e| e.entry.delta).collect::<Vec<_>>(),
            vec![-3, 2]
        );
    }
}
