//! Changing counts: add (create or top up a row), take, recount, each in one IMMEDIATE
//! transaction together with its ledger entry; and reading the ledger back.

use super::holds::holders;
use super::part::Part;
use super::query::{PART_COLUMNS, part_by_id, part_from_row};
use super::spec::PartSpec;
use super::text;
use super::{Store, StoreError};
use rusqlite::{Connection, OptionalExtension, TransactionBehavior, params};
use serde::Serialize;

/// What one change did to one row.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Change {
    /// The row after the change.
    pub part: Part,
    /// Whether the row was created by this change.
    pub created: bool,
    /// Count before.
    pub before: i64,
    /// Pieces added (negative: taken).
    pub delta: i64,
    /// Attributes changed besides the count, e.g. `low 5 → 10`.
    pub updated: Vec<String>,
    /// The reason written to the ledger.
    pub why: String,
}

/// One ledger entry: an append-only record of a change to a count.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct LedgerEntry {
    /// Entry id (increasing).
    pub id: i64,
    /// The part row.
    pub part_id: i64,
    /// When, UTC, ISO 8601.
    pub at: String,
    /// Who.
    pub who: String,
    /// Why.
    pub why: String,
    /// Pieces added (negative: taken).
    pub delta: i64,
    /// Count after the change.
    pub quantity_after: i64,
    /// Change to the held count (holds, releases and uses; 0 for other changes).
    pub held_delta: i64,
    /// Held count after the change.
    pub held_after: i64,
    /// The plan whose hold moved, for holds, releases and uses.
    pub plan: Option<String>,
    /// The hold row that moved.
    pub hold_id: Option<i64>,
    /// The change this entry belongs to: the id of the change's first entry (one command's
    /// transaction). Entries written before changes were grouped are their own change.
    pub change_id: i64,
    /// The change this entry compensates, for entries written by an undo.
    pub undoes: Option<i64>,
}

/// Start a change: every ledger entry written in the caller's transaction from now on carries
/// the same change id (and `undoes`, for an undo), so the change can be read back and undone as
/// a whole. Call it right after beginning the write transaction. The marker lives in a
/// per-connection temporary table and rolls back with the transaction.
pub(crate) fn begin_change(conn: &Connection, undoes: Option<i64>) -> Result<(), StoreError> {
    ensure_marker(conn)?;
    conn.prepare_cached("DELETE FROM temp.open_change")?
        .execute([])?;
    conn.prepare_cached(
        "INSERT INTO temp.open_change (id, undoes) \
         SELECT COALESCE(MAX(id), 0) + 1, ?1 FROM main.ledger",
    )?
    .execute([undoes])?;
    Ok(())
}

fn ensure_marker(conn: &Connection) -> Result<(), StoreError> {
    conn.execute_batch(
        "CREATE TEMP TABLE IF NOT EXISTS open_change (id INTEGER NOT NULL, undoes INTEGER)",
    )?;
    Ok(())
}

/// One ledger entry to append; the change id and `undoes` come from [`begin_change`].
pub(crate) struct NewEntry<'a> {
    pub part_id: i64,
    pub who: &'a str,
    pub why: &'a str,
    pub delta: i64,
    pub quantity_after: i64,
    pub held_delta: i64,
    pub held_after: i64,
    pub plan: Option<&'a str>,
    pub hold_id: Option<i64>,
}

/// Append one ledger entry inside the caller's write transaction.
pub(crate) fn append_entry(conn: &Connection, e: &NewEntry<'_>) -> Result<(), StoreError> {
    ensure_marker(conn)?;
    conn.prepare_cached(
        "INSERT INTO ledger (part_id, who, why, delta, quantity_after, held_delta, held_after, \
         plan, hold_id, change_id, undoes) VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, \
         (SELECT id FROM temp.open_change), (SELECT undoes FROM temp.open_change))",
    )?
    .execute(params![
        e.part_id,
        e.who,
        e.why,
        e.delta,
        e.quantity_after,
        e.held_delta,
        e.held_after,
        e.plan,
        e.hold_id
    ])?;
    Ok(())
}

/// The columns [`entry_from_row`] reads, in order.
pub(crate) const ENTRY_COLUMNS: &str = "ledger.id, ledger.part_id, ledger.at, ledger.who, \
     ledger.why, ledger.delta, ledger.quantity_after, ledger.held_delta, ledger.held_after, \
     ledger.plan, ledger.hold_id, COALESCE(ledger.change_id, ledger.id), ledger.undoes";

/// Map one row selected with [`ENTRY_COLUMNS`].
pub(crate) fn entry_from_row(r: &rusqlite::Row<'_>) -> rusqlite::Result<LedgerEntry> {
    Ok(LedgerEntry {
        id: r.get(0)?,
        part_id: r.get(1)?,
        at: r.get(2)?,
        who: r.get(3)?,
        why: r.get(4)?,
        delta: r.get(5)?,
        quantity_after: r.get(6)?,
        held_delta: r.get(7)?,
        held_after: r.get(8)?,
        plan: r.get(9)?,
        hold_id: r.get(10)?,
        change_id: r.get(11)?,
        undoes: r.get(12)?,
    })
}

/// The row with exactly this identity, if any.
pub(crate) fn find_same(conn: &Connection, spec: &PartSpec) -> Result<Option<Part>, StoreError> {
    let sql = format!(
        "SELECT {PART_COLUMNS} FROM part WHERE kind = ?1 AND value = ?2 AND tol_minus_ppb = ?3 \
         AND tol_plus_ppb = ?4 AND technology = ?5 AND package = ?6 AND bin = ?7"
    );
    let found = conn
        .prepare_cached(&sql)?
        .query_row(
            params![
                spec.kind.as_str(),
                spec.value.base(),
                spec.tolerance.minus.base(),
                spec.tolerance.plus.base(),
                spec.technology.as_str(),
                spec.package,
                spec.bin
            ],
            part_from_row,
        )
        .optional()?;
    found.transpose()
}

fn insert(conn: &Connection, spec: &PartSpec) -> Result<i64, StoreError> {
    conn.prepare_cached(
        "INSERT INTO part (kind, value, tol_minus_ppb, tol_plus_ppb, technology, volts_uv, \
         watts_uw, package, bin, quantity, low_stock, note) \
         VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8, ?9, 0, ?10, ?11)",
    )?
    .execute(params![
        spec.kind.as_str(),
        spec.value.base(),
        spec.tolerance.minus.base(),
        spec.tolerance.plus.base(),
        spec.technology.as_str(),
        spec.voltage_rating.map(|v| v.base()),
        spec.power_rating.map(|w| w.base()),
        spec.package,
        spec.bin,
        spec.low_stock,
        spec.note,
    ])?;
    Ok(conn.last_insert_rowid())
}

/// Set a row's count and append the ledger entry. The caller holds the write transaction and
/// has checked `after >= 0`.
pub(crate) fn set_count(
    conn: &Connection,
    id: i64,
    delta: i64,
    after: i64,
    who: &str,
    why: &str,
) -> Result<(), StoreError> {
    conn.prepare_cached("UPDATE part SET quantity = ?2 WHERE id = ?1")?
        .execute(params![id, after])?;
    let held: i64 = conn
        .prepare_cached("SELECT COALESCE(SUM(quantity), 0) FROM hold WHERE part_id = ?1")?
        .query_row([id], |r| r.get(0))?;
    append_entry(
        conn,
        &NewEntry {
            part_id: id,
            who,
            why,
            delta,
            quantity_after: after,
            held_delta: 0,
            held_after: held,
            plan: None,
            hold_id: None,
        },
    )
}

fn opt_text<T>(v: Option<T>, f: impl Fn(T) -> String) -> String {
    v.map_or_else(|| "none".to_string(), f)
}

/// Update the attributes the spec states and that differ from the row; describe each change.
fn update_attributes(
    conn: &Connection,
    part: &Part,
    spec: &PartSpec,
) -> Result<Vec<String>, StoreError> {
    let mut changed = Vec::new();
    if spec.given_volts && spec.voltage_rating != part.voltage_rating {
        conn.prepare_cached("UPDATE part SET volts_uv = ?2 WHERE id = ?1")?
            .execute(params![part.id, spec.voltage_rating.map(|v| v.base())])?;
        changed.push(format!(
            "volts {} → {}",
            opt_text(part.voltage_rating, text::volts_text),
            opt_text(spec.voltage_rating, text::volts_text)
        ));
    }
    if spec.given_watts && spec.power_rating != part.power_rating {
        conn.prepare_cached("UPDATE part SET watts_uw = ?2 WHERE id = ?1")?
            .execute(params![part.id, spec.power_rating.map(|w| w.base())])?;
        changed.push(format!(
            "watts {} → {}",
            opt_text(part.power_rating, text::watts_text),
            opt_text(spec.power_rating, text::watts_text)
        ));
    }
    if spec.given_low && spec.low_stock != part.low_stock {
        conn.prepare_cached("UPDATE part SET low_stock = ?2 WHERE id = ?1")?
            .execute(params![part.id, spec.low_stock])?;
        changed.push(format!(
            "low {} → {}",
            opt_text(part.low_stock, |n| n.to_string()),
            opt_text(spec.low_stock, |n| n.to_string())
        ));
    }
    if spec.given_note && spec.note != part.note {
        conn.prepare_cached("UPDATE part SET note = ?2 WHERE id = ?1")?
            .execute(params![part.id, spec.note])?;
        changed.push(format!("note {:?} → {:?}", part.note, spec.note));
    }
    Ok(changed)
}

/// Add `qty` pieces of `spec`: top up the row with the same identity, or create it. Runs inside
/// the caller's write transaction.
pub(crate) fn add_in(
    conn: &Connection,
    spec: &PartSpec,
    qty: i64,
    who: &str,
    why: &str,
) -> Result<Change, StoreError> {
    if qty < 0 {
        return Err(StoreError::BadCount {
            what: "the quantity to add",
            got: qty,
        });
    }
    if !spec.value.fits(spec.kind) {
        return Err(StoreError::Invalid(format!(
            "a {} cannot have the value {}",
            spec.kind, spec.value
        )));
    }
    let (id, created, before, updated) = match find_same(conn, spec)? {
        Some(part) => {
            let mut updated = update_attributes(conn, &part, spec)?;
            if super::care::revive(conn, part.id)? {
                updated.push("row brought back (it had been removed)".to_string());
            }
            (part.id, false, part.quantity, updated)
        }
        None => (insert(conn, spec)?, true, 0, Vec::new()),
    };
    let after = before
        .checked_add(qty)
        .filter(|n| *n <= super::MAX_PIECES)
        .ok_or_else(|| StoreError::Overflow {
            label: text::value_text(spec.value),
        })?;
    set_count(conn, id, qty, after, who, why)?;
    Ok(Change {
        part: part_by_id(conn, id)?,
        created,
        before,
        delta: qty,
        updated,
        why: why.to_string(),
    })
}

impl Store {
    /// Add `qty` pieces (0 or more) of the described part, creating its row if new; attributes
    /// the description states (volts, watts, low level, note) are updated on an existing row.
    pub fn add(
        &mut self,
        spec: &PartSpec,
        qty: i64,
        who: &str,
        why: &str,
    ) -> Result<Change, StoreError> {
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        begin_change(&tx, None)?;
        let change = add_in(&tx, spec, qty, who, why)?;
        tx.commit()?;
        Ok(change)
    }

    /// Add `qty` pieces (1 or more) to the existing row `id` (`add '#7' --qty 3`): refills the
    /// very row a mistaken take came from, whatever its bin or technology. A removed (retired)
    /// row is brought back.
    pub fn add_to_row(
        &mut self,
        id: i64,
        qty: i64,
        who: &str,
        why: &str,
    ) -> Result<Change, StoreError> {
        if qty <= 0 {
            return Err(StoreError::BadCount {
                what: "the quantity to add to a row",
                got: qty,
            });
        }
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        begin_change(&tx, None)?;
        let part = part_by_id(&tx, id)?;
        let mut updated = Vec::new();
        if super::care::revive(&tx, id)? {
            updated.push("row brought back (it had been removed)".to_string());
        }
        let after = part
            .quantity
            .checked_add(qty)
            .ok_or_else(|| StoreError::Overflow {
                label: text::value_text(part.value),
            })?;
        set_count(&tx, id, qty, after, who, why)?;
        let now = part_by_id(&tx, id)?;
        tx.commit()?;
        Ok(Change {
            before: part.quantity,
            part: now,
            created: false,
            delta: qty,
            updated,
            why: why.to_string(),
        })
    }

    /// Take `qty` pieces (1 or more) from row `id`. Refused, with nothing written, when the
    /// shelf holds fewer.
    pub fn take(&mut self, id: i64, qty: i64, who: &str, why: &str) -> Result<Change, StoreError> {
        if qty <= 0 {
            return Err(StoreError::BadCount {
                what: "the quantity to take",
                got: qty,
            });
        }
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        begin_change(&tx, None)?;
        let part = part_by_id(&tx, id)?;
        if qty > part.quantity {
            return Err(StoreError::NotEnough {
                place: part.place(),
                label: part.value.to_string(),
                have: part.quantity,
                want: qty,
            });
        }
        // Held pieces are not for taking: that is what `use_held` is for.
        if qty > part.available() {
            return Err(StoreError::HeldBack {
                place: part.place(),
                label: part.value.to_string(),
                have: part.quantity,
                held: part.held,
                holders: holders(&tx, id)?,
                want: qty,
            });
        }
        let after = part.quantity - qty;
        set_count(&tx, id, -qty, after, who, why)?;
        let now = part_by_id(&tx, id)?;
        tx.commit()?;
        Ok(Change {
            before: part.quantity,
            part: now,
            created: false,
            delta: -qty,
            updated: Vec::new(),
            why: why.to_string(),
        })
    }

    /// Stock-take: set row `id` to the `counted` pieces; the ledger records the difference.
    pub fn recount(
        &mut self,
        id: i64,
        counted: i64,
        who: &str,
        why: &str,
    ) -> Result<Change, StoreError> {
        if counted < 0 {
            return Err(StoreError::BadCount {
                what: "the counted quantity",
                got: counted,
            });
        }
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        begin_change(&tx, None)?;
        let part = part_by_id(&tx, id)?;
        // A count below the held pieces would break the plans' holds: refuse, and say which.
        if counted < part.held {
            return Err(StoreError::RecountBelowHeld {
                place: part.place(),
                label: part.value.to_string(),
                counted,
                held: part.held,
                holders: holders(&tx, id)?,
            });
        }
        let delta = counted - part.quantity;
        set_count(&tx, id, delta, counted, who, why)?;
        let now = part_by_id(&tx, id)?;
        tx.commit()?;
        Ok(Change {
            before: part.quantity,
            part: now,
            created: false,
            delta,
            updated: Vec::new(),
            why: why.to_string(),
        })
    }

    /// The ledger, oldest first: of one part, or of the whole store.
    pub fn ledger(&self, part: Option<i64>) -> Result<Vec<LedgerEntry>, StoreError> {
        let sql = format!(
            "SELECT {ENTRY_COLUMNS} FROM ledger WHERE ?1 IS NULL OR part_id = ?1 ORDER BY id"
        );
        let mut stmt = self.conn.prepare_cached(&sql)?;
        let rows = stmt.query_map([part], entry_from_row)?;
        Ok(rows.collect::<Result<_, _>>()?)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::store::spec::PartText;

    fn spec(value: &str, bin: &str) -> PartSpec {
        PartText {
            value: value.into(),
            bin: Some(bin.into()),
            ..Default::default()
        }
        .resolve()
        .expect("spec")
    }

    fn store() -> (tempfile::TempDir, Store) {
        let dir = tempfile::tempdir().expect("tmp");
        let s = Store::open(&dir.path().join("s.db")).expect("open");
        (dir, s)
    }

    #[test]
    fn add_take_recount_and_ledger_agree() {
        let (_d, mut s) = store();
        let a = s.add(&spec("4.7k", "A3"), 4, "t", "first").expect("add");
        assert!(a.created);
        let b = s.add(&spec("4.7k", "A3"), 6, "t", "more").expect("add");
        assert!(!b.created);
        assert_eq!((b.before, b.part.quantity), (4, 10));
        let t = s.take(a.part.id, 3, "t", "board").expect("take");
        assert_eq!(t.part.quantity, 7);
        let r = s.recount(a.part.id, 5, "t", "stock-take").expect("recount");
        assert_eq!(r.delta, -2);
        let ledger = s.ledger(Some(a.part.id)).expect("ledger");
        let deltas: Vec<i64> = ledger.iter().map(|e| e.delta).collect();
        assert_eq!(deltas, vec![4, 6, -3, -2]);
        assert_eq!(ledger.iter().map(|e| e.delta).sum::<i64>(), 5);
        assert_eq!(ledger.last().map(|e| e.quantity_after), Some(5));
        assert!(ledger[0].at.ends_with('Z'), "UTC time: {}", ledger[0].at);
    }

    #[test]
    fn taking_too_many_is_a_clear_error_and_changes_nothing() {
        let (_d, mut s) = store();
        let a = s.add(&spec("4.7k", "A3"), 4, "t", "first").expect("add");
        let err = s.take(a.part.id, 5, "t", "x").expect_err("too many");
        assert_eq!(err.to_string(), "bin A3 holds 4 × 4.7 kΩ, cannot take 5");
        assert_eq!(s.part(a.part.id).expect("part").quantity, 4);
        assert_eq!(s.ledger(None).expect("ledger").len(), 1);
        assert!(matches!(
            s.take(a.part.id, 0, "t", "x"),
            Err(StoreError::BadCount { .. })
        ));
        assert!(matches!(
            s.recount(a.part.id, -1, "t", "x"),
            Err(StoreError::BadCount { .. })
        ));
        assert!(matches!(
            s.take(999, 1, "t", "x"),
            Err(StoreError::NoSuchPart(999))
        ));
    }

    #[test]
    fn stated_attributes_update_an_existing_row() {
        let (_d, mut s) = store();
        s.add(&spec("10k", ""), 1, "t", "a").expect("add");
        let mut more = spec("10k", "");
        more.low_stock = Some(5);
        more.given_low = true;
        let c = s.add(&more, 1, "t", "b").expect("add");
        assert_eq!(c.updated, vec!["low none → 5".to_string()]);
        assert_eq!(c.part.low_stock, Some(5));
    }
}
