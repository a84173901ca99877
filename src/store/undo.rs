//! Undo: revert one change (every ledger entry one command wrote) by writing compensating
//! entries, never by editing or removing history. The compensating entries form a change of
//! their own whose `undoes` names the change they revert, so the log shows both and a change is
//! undone at most once. A dry run does the same work in the transaction and rolls it back.

use super::change::{ENTRY_COLUMNS, LedgerEntry, begin_change, entry_from_row, set_count};
use super::holds::{hold_by_id, move_hold};
use super::part::Part;
use super::query::part_by_id;
use super::{Store, StoreError};
use rusqlite::{Connection, OptionalExtension, TransactionBehavior};
use serde::Serialize;

/// Which change to undo.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum UndoTarget {
    /// The newest change made by this person that is not itself an undo and is not undone yet.
    LastOf,
    /// The change that contains this ledger entry.
    Entry(i64),
}

/// One compensating step.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct UndoLine {
    /// The entry being reverted.
    pub entry: LedgerEntry,
    /// The part after the step.
    pub part: Part,
    /// Change to the shelf count written now.
    pub delta: i64,
    /// Change to the held count written now.
    pub held_delta: i64,
}

/// What an undo did (or, for a dry run, would do).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Undo {
    /// Whether nothing was written.
    pub dry_run: bool,
    /// The change reverted (id of its first entry).
    pub change_id: i64,
    /// Who made the change, when (UTC) and why.
    pub who: String,
    /// When the change was made, UTC.
    pub at: String,
    /// Its reason.
    pub why: String,
    /// The reason written on the compensating entries.
    pub undo_why: String,
    /// One line per reverted entry, newest first.
    pub lines: Vec<UndoLine>,
}

fn entries_of(conn: &Connection, change: i64) -> Result<Vec<LedgerEntry>, StoreError> {
    let sql = format!(
        "SELECT {ENTRY_COLUMNS} FROM ledger WHERE COALESCE(change_id, id) = ?1 ORDER BY id DESC"
    );
    let mut stmt = conn.prepare_cached(&sql)?;
    let rows = stmt.query_map([change], entry_from_row)?;
    Ok(rows.collect::<Result<_, _>>()?)
}

fn undone_by(conn: &Connection, change: i64) -> Result<Option<i64>, StoreError> {
    Ok(conn
        .prepare_cached(
            "SELECT COALESCE(change_id, id) FROM ledger WHERE undoes = ?1 ORDER BY id LIMIT 1",
        )?
        .query_row([change], |r| r.get(0))
        .optional()?)
}

fn find_target(conn: &Connection, target: UndoTarget, who: &str) -> Result<i64, StoreError> {
    match target {
        UndoTarget::Entry(id) => conn
            .prepare_cached("SELECT COALESCE(change_id, id) FROM ledger WHERE id = ?1")?
            .query_row([id], |r| r.get(0))
            .optional()?
            .ok_or_else(|| StoreError::Invalid(format!("no ledger entry #{id}; see `onhand log`"))),
        UndoTarget::LastOf => conn
            .prepare_cached(
                "SELECT COALESCE(change_id, id) AS c FROM ledger WHERE who = ?1 \
                 AND undoes IS NULL \
                 AND COALESCE(change_id, id) NOT IN \
                     (SELECT undoes FROM ledger WHERE undoes IS NOT NULL) \
                 ORDER BY id DESC LIMIT 1",
            )?
            .query_row([who], |r| r.get(0))
            .optional()?
            .ok_or_else(|| {
                StoreError::Invalid(format!(
                    "{who} has no change left to undo; name another with `onhand undo ENTRY` \
                     (see `onhand log`)"
                ))
            }),
    }
}

impl Store {
    /// Revert a change with compensating entries by `who`. `target` picks the newest change
    /// of `who` that is neither an undo nor undone, or the change holding a named entry.
    /// Refused, with nothing written, when the change was undone already or when the stock
    /// has moved on so that it cannot be reverted (the pieces an add brought were taken since,
    /// the pieces a release freed are held by another plan …); the message says which.
    pub fn undo(
        &mut self,
        target: UndoTarget,
        who: &str,
        dry_run: bool,
    ) -> Result<Undo, StoreError> {
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        let change = find_target(&tx, target, who)?;
        if let Some(by) = undone_by(&tx, change)? {
            return Err(StoreError::Invalid(format!(
                "change #{change} was already undone by change #{by}"
            )));
        }
        let entries = entries_of(&tx, change)?;
        let Some(first) = entries.last().cloned() else {
            return Err(StoreError::Invalid(format!("no ledger entry #{change}")));
        };
        begin_change(&tx, Some(change))?;
        let undo_why = format!("undo of change #{change} ({})", first.why);
        let mut lines = Vec::with_capacity(entries.len());
        for e in &entries {
            let part = part_by_id(&tx, e.part_id)?;
            let (delta, held_delta) = (-e.delta, -e.held_delta);
            let refuse = |why: String| {
                StoreError::Invalid(format!(
                    "cannot undo change #{change}, nothing was changed: #{} {}: {why}",
                    part.id,
                    part.label()
                ))
            };
            if delta > 0 || held_delta > 0 {
                super::care::revive(&tx, part.id)?;
            }
            match e.hold_id {
                Some(hold_id) => {
                    let hold = hold_by_id(&tx, hold_id)?;
                    if held_delta < 0 && hold.quantity < -held_delta {
                        return Err(refuse(format!(
                            "plan {:?} holds {} of it now, the change held {}",
                            hold.plan, hold.quantity, -held_delta
                        )));
                    }
                    // Pieces that go back into a hold without coming back to the shelf must
                    // be free now.
                    let extra = held_delta - delta.max(0);
                    if extra > 0 && extra > part.available() {
                        return Err(refuse(format!(
                            "{} would be held again, only {} free",
                            extra,
                            part.available()
                        )));
                    }
                    move_hold(&tx, &hold, held_delta, delta, who, &undo_why)?;
                }
                None => {
                    if delta < 0 && -delta > part.available() {
                        return Err(refuse(format!(
                            "the change added {}, only {} are free now",
                            -delta,
                            part.available()
                        )));
                    }
                    let after =
                        part.quantity
                            .checked_add(delta)
                            .ok_or_else(|| StoreError::Overflow {
                                label: part.label(),
                            })?;
                    set_count(&tx, part.id, delta, after, who, &undo_why)?;
                }
            }
            lines.push(UndoLine {
                entry: e.clone(),
                part: part_by_id(&tx, e.part_id)?,
                delta,
                held_delta,
            });
        }
        if dry_run {
            tx.rollback()?;
        } else {
            tx.commit()?;
        }
        Ok(Undo {
            dry_run,
            change_id: change,
            who: first.who,
            at: first.at,
            why: first.why,
            undo_why,
            lines,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::store::spec::PartText;

    fn add(s: &mut Store, value: &str, bin: &str, qty: i64) -> i64 {
        let spec = PartText {
            value: value.into(),
            bin: Some(bin.into()),
            ..Default::default()
        }
        .resolve()
        .expect("spec");
        s.add(&spec, qty, "ana", "seed").expect("add").part.id
    }

    #[test]
    fn undo_reverts_the_last_change_of_this_person_once() {
        let dir = tempfile::tempdir().expect("tmp");
        let mut s = Store::open(&dir.path().join("s.db")).expect("open");
        let r = add(&mut s, "4.7k", "A3", 10);
        s.take(r, 3, "ben", "mistake").expect("take");
        s.take(r, 1, "ana", "board").expect("take");
        let dry = s.undo(UndoTarget::LastOf, "ben", true).expect("dry");
        assert!(dry.dry_run);
        assert_eq!(dry.lines[0].delta, 3);
        assert_eq!(s.part(r).expect("r").quantity, 6, "dry run writes nothing");
        let u = s.undo(UndoTarget::LastOf, "ben", false).expect("undo");
        assert_eq!(u.why, "mistake");
        assert_eq!(s.part(r).expect("r").quantity, 9);
        let ledger = s.ledger(Some(r)).expect("l");
        assert_eq!(ledger.len(), 4, "history is kept, one entry added");
        let last = ledger.last().expect("last");
        assert_eq!(last.undoes, Some(u.change_id));
        assert_eq!(last.who, "ben");
        // Ben has nothing left to undo; undoing his change again by entry is refused.
        assert!(s.undo(UndoTarget::LastOf, "ben", false).is_err());
        let again = s
            .undo(UndoTarget::Entry(u.change_id), "ben", false)
            .expect_err("twice");
        assert!(again.to_string().contains("already undone"), "{again}");
    }

    #[test]
    fn undo_of_a_multi_part_hold_reverts_it_whole_or_not_at_all() {
        let dir = tempfile::tempdir().expect("tmp");
        let mut s = Store::open(&dir.path().join("s.db")).expect("open");
        let r = add(&mut s, "4.7k", "A3", 4);
        let c = add(&mut s, "10n", "C1", 4);
        s.hold("amp", "", &[(r, 2), (c, 3)], "ana", "x")
            .expect("hold");
        let u = s.undo(UndoTarget::LastOf, "ana", false).expect("undo");
        assert_eq!(u.lines.len(), 2);
        assert_eq!(s.part(r).expect("r").held, 0);
        assert_eq!(s.part(c).expect("c").held, 0);
        // An add whose pieces were taken since cannot be undone; nothing changes.
        let k = add(&mut s, "1k", "A1", 2);
        s.take(k, 2, "ben", "used").expect("take");
        let before = s.ledger(None).expect("l").len();
        let err = s
            .undo(UndoTarget::LastOf, "ana", false)
            .expect_err("taken since");
        assert!(err.to_string().contains("only 0 are free"), "{err}");
        assert_eq!(s.ledger(None).expect("l").len(), before);
    }
}
