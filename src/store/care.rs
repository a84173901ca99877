//! Row care: putting away an empty row and merging two rows that are the same part. A row is
//! never deleted (its ledger entries name it): an empty row with no holds is *retired* (it
//! leaves every list, its history stays), and adding to it again brings it back. A merge moves
//! the count and the live holds of one row onto the other with ledger entries on both, then
//! retires the emptied row, so the history of both rows stays and today's counts still re-derive
//! from the ledger.

use super::change::{begin_change, set_count};
use super::holds::{Hold, hold_row, move_hold};
use super::part::Part;
use super::query::part_by_id;
use super::{Store, StoreError};
use rusqlite::{Connection, TransactionBehavior, params};
use serde::Serialize;

/// What a merge did.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Merge {
    /// The row that was emptied and retired (after the merge).
    pub from: Part,
    /// The row that received the pieces and the holds (after the merge).
    pub into: Part,
    /// Pieces moved.
    pub pieces: i64,
    /// Holds moved: (plan, member, pieces).
    pub holds: Vec<(String, String, i64)>,
}

/// Whether row `id` is retired.
pub(crate) fn is_retired(conn: &Connection, id: i64) -> Result<bool, StoreError> {
    let at: Option<String> = conn
        .prepare_cached("SELECT retired_at FROM part WHERE id = ?1")?
        .query_row([id], |r| r.get(0))
        .map_err(|e| match e {
            rusqlite::Error::QueryReturnedNoRows => StoreError::NoSuchPart(id),
            other => StoreError::Sql(other),
        })?;
    Ok(at.is_some())
}

/// Bring a retired row back (before pieces are added to it); `true` if it was retired.
pub(crate) fn revive(conn: &Connection, id: i64) -> Result<bool, StoreError> {
    if !is_retired(conn, id)? {
        return Ok(false);
    }
    conn.prepare_cached("UPDATE part SET retired_at = NULL WHERE id = ?1")?
        .execute([id])?;
    Ok(true)
}

fn retire(conn: &Connection, id: i64) -> Result<(), StoreError> {
    conn.prepare_cached(
        "UPDATE part SET retired_at = strftime('%Y-%m-%dT%H:%M:%fZ', 'now') WHERE id = ?1",
    )?
    .execute([id])?;
    Ok(())
}

fn live_holds_of_part(conn: &Connection, id: i64) -> Result<Vec<Hold>, StoreError> {
    let holds = Store::holds_on(conn, id)?;
    Ok(holds.into_iter().filter(|h| h.quantity > 0).collect())
}

impl Store {
    /// Put away the empty row `id`: it leaves every list and search; its ledger history stays
    /// (see `show` and `log`). Refused while the row has pieces or live holds. Adding to the
    /// row again (by its number or by its description) brings it back.
    pub fn remove_row(&mut self, id: i64) -> Result<Part, StoreError> {
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        let part = part_by_id(&tx, id)?;
        if is_retired(&tx, id)? {
            return Err(StoreError::Invalid(format!(
                "row #{id} was already removed"
            )));
        }
        if part.quantity > 0 || part.held > 0 {
            return Err(StoreError::Invalid(format!(
                "row #{id} ({}) still has {} on the shelf and {} held; only an empty row with \
                 no holds can be removed (take or recount it to 0, release its holds, or merge \
                 it into another row with `onhand merge`)",
                part.label(),
                part.quantity,
                part.held
            )));
        }
        retire(&tx, id)?;
        tx.commit()?;
        part_by_id(&self.conn, id)
    }

    /// Merge row `from` into row `into`: both must be the same part (kind, value, tolerance,
    /// technology, package and ratings; bins and notes may differ). Every piece and every live
    /// hold of `from` moves to `into` with ledger entries on both rows, and `from` is retired.
    /// One transaction.
    pub fn merge_rows(
        &mut self,
        from: i64,
        into: i64,
        who: &str,
        why: &str,
    ) -> Result<Merge, StoreError> {
        if from == into {
            return Err(StoreError::Invalid(
                "a row cannot be merged into itself".into(),
            ));
        }
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        begin_change(&tx, None)?;
        let a = part_by_id(&tx, from)?;
        let b = part_by_id(&tx, into)?;
        if is_retired(&tx, from)? || is_retired(&tx, into)? {
            return Err(StoreError::Invalid(format!(
                "row #{} was removed; add to it first to bring it back",
                if is_retired(&tx, from)? { from } else { into }
            )));
        }
        let same = a.kind == b.kind
            && a.value == b.value
            && a.tolerance == b.tolerance
            && a.technology == b.technology
            && a.package == b.package
            && a.voltage_rating == b.voltage_rating
            && a.power_rating == b.power_rating;
        if !same {
            return Err(StoreError::Invalid(format!(
                "#{from} ({}{}) and #{into} ({}{}) are not the same part; only rows that differ \
                 in bin or note can be merged",
                a.label(),
                pack(&a),
                b.label(),
                pack(&b)
            )));
        }
        let holds = live_holds_of_part(&tx, from)?;
        let mut moved = Vec::new();
        // Release on the old row first (so its count may drop), then move the count, then hold
        // the same pieces for the same plan and member on the new row.
        for h in &holds {
            move_hold(&tx, h, -h.quantity, 0, who, why)?;
        }
        let pieces = a.quantity;
        if pieces > 0 {
            set_count(&tx, from, -pieces, 0, who, why)?;
            let after = b
                .quantity
                .checked_add(pieces)
                .ok_or_else(|| StoreError::Overflow { label: b.label() })?;
            set_count(&tx, into, pieces, after, who, why)?;
        }
        for h in &holds {
            let target = hold_row(&tx, &h.plan, &h.member, into, who, &h.note)?;
            move_hold(&tx, &target, h.quantity, 0, who, why)?;
            moved.push((h.plan.clone(), h.member.clone(), h.quantity));
        }
        retire(&tx, from)?;
        let merged = Merge {
            from: part_by_id(&tx, from)?,
            into: part_by_id(&tx, into)?,
            pieces,
            holds: moved,
        };
        tx.commit()?;
        Ok(merged)
    }

    /// Every hold (live or closed) of part `id`, on any connection.
    pub(crate) fn holds_on(conn: &Connection, id: i64) -> Result<Vec<Hold>, StoreError> {
        let mut stmt = conn.prepare_cached("SELECT id FROM hold WHERE part_id = ?1 ORDER BY id")?;
        let ids: Vec<i64> = stmt
            .query_map(params![id], |r| r.get(0))?
            .collect::<Result<_, _>>()?;
        ids.into_iter()
            .map(|h| super::holds::hold_by_id(conn, h))
            .collect()
    }

    /// Whether row `id` has been removed (retired).
    pub fn is_removed(&self, id: i64) -> Result<bool, StoreError> {
        is_retired(&self.conn, id)
    }
}

fn pack(p: &Part) -> String {
    if p.package.is_empty() {
        String::new()
    } else {
        format!(", {}", p.package)
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
        s.add(&spec, qty, "t", "seed").expect("add").part.id
    }

    #[test]
    fn merge_moves_count_and_holds_and_keeps_both_histories() {
        let dir = tempfile::tempdir().expect("tmp");
        let mut s = Store::open(&dir.path().join("s.db")).expect("open");
        let a = add(&mut s, "4.7k", "A3", 5);
        let b = add(&mut s, "4.7k", "B1", 2);
        s.hold("amp", "u1", &[(a, 3)], "t", "x").expect("hold");
        let m = s.merge_rows(a, b, "t", "same part").expect("merge");
        assert_eq!(m.pieces, 5);
        assert_eq!((m.into.quantity, m.into.held), (7, 3));
        assert_eq!((m.from.quantity, m.from.held), (0, 0));
        assert!(s.is_removed(a).expect("retired"));
        let ids: Vec<i64> = s
            .parts(&Default::default())
            .expect("parts")
            .iter()
            .map(|p| p.id)
            .collect();
        assert_eq!(ids, vec![b], "the merged-away row leaves the list");
        // History of both rows stays and re-derives the counts.
        for (id, q) in [(a, 0), (b, 7)] {
            let sum: i64 = s.ledger(Some(id)).expect("l").iter().map(|e| e.delta).sum();
            assert_eq!(sum, q);
        }
        let c = add(&mut s, "10n", "C1", 1);
        let err = s.merge_rows(c, b, "t", "x").expect_err("different parts");
        assert!(err.to_string().contains("are not the same part"), "{err}");
    }

    #[test]
    fn only_an_empty_row_without_holds_is_removed_and_adding_brings_it_back() {
        let dir = tempfile::tempdir().expect("tmp");
        let mut s = Store::open(&dir.path().join("s.db")).expect("open");
        let a = add(&mut s, "4.7k", "A3", 2);
        let err = s.remove_row(a).expect_err("has pieces");
        assert!(err.to_string().contains("only an empty row"), "{err}");
        s.take(a, 2, "t", "x").expect("take");
        s.remove_row(a).expect("remove");
        assert!(s.parts(&Default::default()).expect("p").is_empty());
        assert!(s.remove_row(a).is_err(), "already removed");
        let again = add(&mut s, "4.7k", "A3", 1);
        assert_eq!(again, a, "the same row comes back");
        assert!(!s.is_removed(a).expect("r"));
    }
}
