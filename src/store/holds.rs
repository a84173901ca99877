//! Holds: pieces reserved for a plan (and one of its members, e.g. a unit or a stage) so that no
//! other design counts on them. Owns holding, releasing, using held pieces (building them into
//! units), and listing holds. Plain data in and out; no clap, no printing.
//!
//! A hold is one row per (plan, member, part) with the pieces it holds now; released and used
//! holds stay at 0 so the ledger entries that name them stay valid. A part's held count is the
//! sum of its holds. Each call is one IMMEDIATE transaction that checks everything first and
//! writes every change with its ledger entry, so it is all-or-nothing and two processes racing
//! for the last pieces can never both get them. The rules of the other writes: `take` never
//! takes held pieces and `recount` never goes below them (both refuse with a message naming the
//! plans); held pieces leave the shelf only through [`Store::use_held`].

use super::change::{NewEntry, append_entry, begin_change};
use super::part::Part;
use super::query::part_by_id;
use super::{Shortfall, Store, StoreError};
use rusqlite::{Connection, OptionalExtension, Row, TransactionBehavior, params};
use serde::Serialize;

/// Longest plan or member name accepted.
const MAX_NAME: usize = 200;

/// One hold: pieces of one part reserved for a plan (and member).
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct Hold {
    /// Hold row id.
    pub id: i64,
    /// The plan it belongs to.
    pub plan: String,
    /// The member of the plan (a unit, a stage); empty for the plan as a whole.
    pub member: String,
    /// The part row held.
    pub part_id: i64,
    /// Pieces held now (0 once released or used).
    pub quantity: i64,
    /// When the hold was first made, UTC, ISO 8601.
    pub created_at: String,
    /// Who first made it.
    pub who: String,
    /// The reason given when it was first made.
    pub note: String,
    /// Seconds since the hold was first made (0 for a hold made in the future by a skewed
    /// clock). Not serialised, so that listings stay the same from one second to the next;
    /// `holds --json` says `stale` instead.
    #[serde(skip_serializing)]
    pub age_seconds: i64,
}

/// Which holds to list. Empty fields match everything.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct HoldFilter {
    /// Only this plan.
    pub plan: Option<String>,
    /// Only this member.
    pub member: Option<String>,
    /// Only holds of this part row.
    pub part: Option<i64>,
    /// Also holds that are down to 0 (released or used).
    pub closed: bool,
    /// Only holds first made at least this many seconds ago (stale holds).
    pub older_than: Option<i64>,
}

/// The member name that holds unit `n` of a plan: `unit 7`. `plan --hold` files each unit's
/// kit under its own member so that units can be used and released one by one.
pub fn unit_member(n: u32) -> String {
    format!("unit {n}")
}

/// The unit number of a member named like [`unit_member`], if it is one.
pub fn unit_of(member: &str) -> Option<u32> {
    let n = member.strip_prefix("unit ")?;
    if n.is_empty() || !n.chars().all(|c| c.is_ascii_digit()) || n.starts_with('0') {
        return None;
    }
    n.parse().ok()
}

/// "units 1–5, 9" for messages and ledger reasons.
pub fn units_text(units: &[u32]) -> String {
    let mut sorted = units.to_vec();
    sorted.sort_unstable();
    sorted.dedup();
    let mut spans: Vec<String> = Vec::new();
    let mut i = 0;
    while i < sorted.len() {
        let mut j = i;
        while j + 1 < sorted.len() && sorted[j + 1] == sorted[j] + 1 {
            j += 1;
        }
        spans.push(if i == j {
            sorted[i].to_string()
        } else {
            format!("{}–{}", sorted[i], sorted[j])
        });
        i = j + 1;
    }
    let word = if sorted.len() == 1 { "unit" } else { "units" };
    format!("{word} {}", spans.join(", "))
}

/// What a change did to holds.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum HoldAction {
    /// Free pieces were held.
    Hold,
    /// Held pieces went back to free stock.
    Release,
    /// Held pieces were built into units: off the shelf and out of the hold.
    Use,
}

/// What one change did to one hold.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct HoldLine {
    /// The hold after the change.
    pub hold: Hold,
    /// The part after the change (its `held` counts every plan).
    pub part: Part,
    /// Change to the hold (and to the part's held count).
    pub held_delta: i64,
    /// Change to the shelf count (negative for a use, else 0).
    pub quantity_delta: i64,
}

/// What a hold, release or use did, hold by hold.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct HoldChange {
    /// Which change.
    pub action: HoldAction,
    /// The plan.
    pub plan: String,
    /// The member asked for (`None`: every member of the plan).
    pub member: Option<String>,
    /// The reason written to the ledger.
    pub why: String,
    /// One line per hold that moved, in the order they were asked for.
    pub lines: Vec<HoldLine>,
}

impl HoldChange {
    /// Pieces moved in all (positive).
    pub fn pieces(&self) -> i64 {
        self.lines.iter().map(|l| l.held_delta.abs()).sum()
    }
}

const HOLD_COLUMNS: &str = "id, plan, member, part_id, quantity, created_at, who, note, \
     MAX(0, CAST(ROUND((julianday('now') - julianday(created_at)) * 86400) AS INTEGER))";

fn hold_from_row(r: &Row<'_>) -> rusqlite::Result<Hold> {
    Ok(Hold {
        id: r.get(0)?,
        plan: r.get(1)?,
        member: r.get(2)?,
        part_id: r.get(3)?,
        quantity: r.get(4)?,
        created_at: r.get(5)?,
        who: r.get(6)?,
        note: r.get(7)?,
        age_seconds: r.get(8)?,
    })
}

/// A plan or member name, trimmed; `what` names it in the message.
fn clean_name(text: &str, what: &str, may_be_empty: bool) -> Result<String, StoreError> {
    let t = text.trim();
    if t.is_empty() && !may_be_empty {
        return Err(StoreError::Invalid(format!(
            "the {what} name must not be empty"
        )));
    }
    if t.chars().count() > MAX_NAME {
        return Err(StoreError::Invalid(format!(
            "the {what} name is longer than {MAX_NAME} characters"
        )));
    }
    if t.chars().any(char::is_control) {
        return Err(StoreError::Invalid(format!(
            "the {what} name {t:?} contains control characters"
        )));
    }
    Ok(t.to_string())
}

/// Sum repeated parts, keeping the order of first appearance; every count must be 1 or more.
fn merge_items(items: &[(i64, i64)], what: &'static str) -> Result<Vec<(i64, i64)>, StoreError> {
    let mut merged: Vec<(i64, i64)> = Vec::new();
    for &(id, qty) in items {
        if qty <= 0 {
            return Err(StoreError::BadCount { what, got: qty });
        }
        match merged.iter_mut().find(|(i, _)| *i == id) {
            Some((_, q)) => {
                *q = q.checked_add(qty).ok_or_else(|| StoreError::Overflow {
                    label: format!("part #{id}"),
                })?;
            }
            None => merged.push((id, qty)),
        }
    }
    Ok(merged)
}

/// The part and where it is, for messages: "#3 4.7 kΩ 1% metal film in bin A3".
fn words(p: &Part) -> String {
    if p.bin.is_empty() {
        format!("#{} {}", p.id, p.label())
    } else {
        format!("#{} {} in bin {}", p.id, p.label(), p.bin)
    }
}

/// (plan, pieces) for every plan holding some of part `id`, by plan name.
pub(crate) fn holders(conn: &Connection, id: i64) -> Result<Vec<(String, i64)>, StoreError> {
    let mut stmt = conn.prepare_cached(
        "SELECT plan, SUM(quantity) FROM hold WHERE part_id = ?1 AND quantity > 0 \
         GROUP BY plan ORDER BY plan",
    )?;
    let rows = stmt.query_map([id], |r| Ok((r.get(0)?, r.get(1)?)))?;
    Ok(rows.collect::<Result<_, _>>()?)
}

/// Every (part row, pieces) asked for that is more than the part has free, with its counts.
fn free_shortfalls(conn: &Connection, asks: &[(i64, i64)]) -> Result<Vec<Shortfall>, StoreError> {
    let mut short = Vec::new();
    for &(id, qty) in asks {
        let part = part_by_id(conn, id)?;
        if qty > part.available() {
            short.push(Shortfall {
                part_id: id,
                part: words(&part),
                want: qty,
                on_hand: part.quantity,
                held: part.held,
                can: part.available(),
                holders: holders(conn, id)?,
            });
        }
    }
    Ok(short)
}

/// Live holds of `plan` (and `member`, and `part`), oldest first.
fn live_holds(
    conn: &Connection,
    plan: &str,
    member: Option<&str>,
    part: Option<i64>,
) -> Result<Vec<Hold>, StoreError> {
    let sql = format!(
        "SELECT {HOLD_COLUMNS} FROM hold WHERE plan = ?1 AND (?2 IS NULL OR member = ?2) \
         AND (?3 IS NULL OR part_id = ?3) AND quantity > 0 ORDER BY id"
    );
    let mut stmt = conn.prepare_cached(&sql)?;
    let rows = stmt.query_map(params![plan, member, part], hold_from_row)?;
    Ok(rows.collect::<Result<_, _>>()?)
}

/// Move one hold by `held_delta` and the shelf by `quantity_delta`, and append the ledger
/// entry. The caller holds the write transaction and has checked the counts; the triggers of
/// migration 0002 refuse anything that would leave holds above the shelf.
pub(crate) fn move_hold(
    conn: &Connection,
    hold: &Hold,
    held_delta: i64,
    quantity_delta: i64,
    who: &str,
    why: &str,
) -> Result<HoldLine, StoreError> {
    // Pieces coming back to the shelf (an undone use) arrive before the hold grows, pieces
    // leaving it go after the hold shrinks: the triggers see holds within the shelf throughout.
    let shelf = |conn: &Connection| -> Result<(), StoreError> {
        conn.prepare_cached("UPDATE part SET quantity = quantity + ?2 WHERE id = ?1")?
            .execute(params![hold.part_id, quantity_delta])?;
        Ok(())
    };
    if quantity_delta > 0 {
        shelf(conn)?;
    }
    conn.prepare_cached("UPDATE hold SET quantity = quantity + ?2 WHERE id = ?1")?
        .execute(params![hold.id, held_delta])?;
    if quantity_delta < 0 {
        shelf(conn)?;
    }
    let part = part_by_id(conn, hold.part_id)?;
    append_entry(
        conn,
        &NewEntry {
            part_id: part.id,
            who,
            why,
            delta: quantity_delta,
            quantity_after: part.quantity,
            held_delta,
            held_after: part.held,
            plan: Some(&hold.plan),
            hold_id: Some(hold.id),
        },
    )?;
    let hold = hold_by_id(conn, hold.id)?;
    Ok(HoldLine {
        hold,
        part,
        held_delta,
        quantity_delta,
    })
}

pub(crate) fn hold_by_id(conn: &Connection, id: i64) -> Result<Hold, StoreError> {
    let sql = format!("SELECT {HOLD_COLUMNS} FROM hold WHERE id = ?1");
    Ok(conn.prepare_cached(&sql)?.query_row([id], hold_from_row)?)
}

/// The hold row of (plan, member, part), created at 0 if there is none yet.
pub(crate) fn hold_row(
    conn: &Connection,
    plan: &str,
    member: &str,
    part_id: i64,
    who: &str,
    why: &str,
) -> Result<Hold, StoreError> {
    let sql =
        format!("SELECT {HOLD_COLUMNS} FROM hold WHERE plan = ?1 AND member = ?2 AND part_id = ?3");
    let found = conn
        .prepare_cached(&sql)?
        .query_row(params![plan, member, part_id], hold_from_row)
        .optional()?;
    if let Some(h) = found {
        return Ok(h);
    }
    conn.prepare_cached(
        "INSERT INTO hold (plan, member, part_id, quantity, who, note) VALUES (?1, ?2, ?3, 0, ?4, ?5)",
    )?
    .execute(params![plan, member, part_id, who, why])?;
    hold_by_id(conn, conn.last_insert_rowid())
}

/// ` for member "x"` or nothing, for messages.
fn member_words(member: Option<&str>) -> String {
    match member {
        Some(m) if !m.is_empty() => format!(" for member {m:?}"),
        Some(_) => " for the plan as a whole".to_string(),
        None => String::new(),
    }
}

impl Store {
    /// Hold pieces for `plan` (and `member`; `""` for the plan as a whole): each item is
    /// (part row id, pieces ≥ 1); repeated parts add up. Holding again for the same plan,
    /// member and part tops up that hold. All or nothing: if any item asks for more than is
    /// free, [`StoreError::NotFree`] lists every such item with its counts and nothing is held.
    pub fn hold(
        &mut self,
        plan: &str,
        member: &str,
        items: &[(i64, i64)],
        who: &str,
        why: &str,
    ) -> Result<HoldChange, StoreError> {
        let items: Vec<(&str, i64, i64)> = items.iter().map(|&(p, q)| (member, p, q)).collect();
        let mut change = self.hold_for_members(plan, &items, who, why)?;
        change.member = Some(clean_name(member, "member", true)?);
        Ok(change)
    }

    /// Hold pieces for several members of `plan` in one transaction (what a plan's allocation
    /// needs): each item is (member, part row id, pieces ≥ 1). Free stock is checked per part
    /// against the sum over all members, so either every member gets its pieces or nothing is
    /// held ([`StoreError::NotFree`] lists every part short, with its counts).
    pub fn hold_for_members(
        &mut self,
        plan: &str,
        items: &[(&str, i64, i64)],
        who: &str,
        why: &str,
    ) -> Result<HoldChange, StoreError> {
        let plan = clean_name(plan, "plan", false)?;
        // (member, part, pieces), repeated (member, part) pairs summed, first order kept.
        let mut asks: Vec<(String, i64, i64)> = Vec::new();
        for &(member, id, qty) in items {
            let member = clean_name(member, "member", true)?;
            let merged = merge_items(&[(id, qty)], "the quantity to hold")?;
            let Some(&(_, qty)) = merged.first() else {
                continue;
            };
            match asks.iter_mut().find(|(m, i, _)| *m == member && *i == id) {
                Some((_, _, q)) => {
                    *q = q.checked_add(qty).ok_or_else(|| StoreError::Overflow {
                        label: format!("part #{id}"),
                    })?;
                }
                None => asks.push((member, id, qty)),
            }
        }
        if asks.is_empty() {
            return Err(StoreError::Invalid("nothing to hold: name a part".into()));
        }
        let per_part = merge_items(
            &asks.iter().map(|(_, id, q)| (*id, *q)).collect::<Vec<_>>(),
            "the quantity to hold",
        )?;
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        begin_change(&tx, None)?;
        let short = free_shortfalls(&tx, &per_part)?;
        if !short.is_empty() {
            return Err(StoreError::NotFree { plan, short });
        }
        let mut lines = Vec::with_capacity(asks.len());
        for (member, id, qty) in &asks {
            let hold = hold_row(&tx, &plan, member, *id, who, why)?;
            lines.push(move_hold(&tx, &hold, *qty, 0, who, why)?);
        }
        tx.commit()?;
        Ok(HoldChange {
            action: HoldAction::Hold,
            plan,
            member: None,
            why: why.to_string(),
            lines,
        })
    }

    /// Release holds of `plan` back to free stock: every live hold of the plan, or only those
    /// of `member` and/or of the listed part rows. The whole hold is released. Refused with
    /// [`StoreError::NothingHeld`] (nothing changed) when the plan holds none of what was asked.
    pub fn release(
        &mut self,
        plan: &str,
        member: Option<&str>,
        parts: &[i64],
        who: &str,
        why: &str,
    ) -> Result<HoldChange, StoreError> {
        let plan = clean_name(plan, "plan", false)?;
        let member = member.map(|m| clean_name(m, "member", true)).transpose()?;
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        begin_change(&tx, None)?;
        let mut holds = Vec::new();
        if parts.is_empty() {
            holds = live_holds(&tx, &plan, member.as_deref(), None)?;
            if holds.is_empty() {
                return Err(StoreError::NothingHeld {
                    plan,
                    scope: member_words(member.as_deref()),
                });
            }
        } else {
            let mut missing = Vec::new();
            for &id in parts {
                let part = part_by_id(&tx, id)?;
                let found = live_holds(&tx, &plan, member.as_deref(), Some(id))?;
                if found.is_empty() {
                    missing.push(words(&part));
                }
                for h in found {
                    if !holds.iter().any(|k: &Hold| k.id == h.id) {
                        holds.push(h);
                    }
                }
            }
            if !missing.is_empty() {
                return Err(StoreError::NothingHeld {
                    plan,
                    scope: format!(
                        "{} of {}",
                        member_words(member.as_deref()),
                        missing.join(", ")
                    ),
                });
            }
        }
        let mut lines = Vec::with_capacity(holds.len());
        for h in &holds {
            lines.push(move_hold(&tx, h, -h.quantity, 0, who, why)?);
        }
        tx.commit()?;
        Ok(HoldChange {
            action: HoldAction::Release,
            plan,
            member,
            why: why.to_string(),
            lines,
        })
    }

    /// Build held pieces into units: they leave the shelf and the hold together. `items`
    /// (part row id, pieces ≥ 1) says how many of which; `None` uses everything the plan (or
    /// its `member`) holds. A part held under several members is drawn from the oldest hold
    /// first. All or nothing: [`StoreError::NotHeld`] lists every item the plan does not hold
    /// in that number, [`StoreError::NothingHeld`] says the plan holds nothing to use.
    pub fn use_held(
        &mut self,
        plan: &str,
        member: Option<&str>,
        items: Option<&[(i64, i64)]>,
        who: &str,
        why: &str,
    ) -> Result<HoldChange, StoreError> {
        let plan = clean_name(plan, "plan", false)?;
        let member = member.map(|m| clean_name(m, "member", true)).transpose()?;
        let items = items
            .map(|i| merge_items(i, "the quantity to use"))
            .transpose()?;
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        begin_change(&tx, None)?;
        // (hold, pieces to use from it)
        let mut draws: Vec<(Hold, i64)> = Vec::new();
        match &items {
            None => {
                let holds = live_holds(&tx, &plan, member.as_deref(), None)?;
                if holds.is_empty() {
                    return Err(StoreError::NothingHeld {
                        plan,
                        scope: member_words(member.as_deref()),
                    });
                }
                draws = holds.into_iter().map(|h| (h.clone(), h.quantity)).collect();
            }
            Some(items) => {
                let mut short = Vec::new();
                for &(id, qty) in items {
                    let part = part_by_id(&tx, id)?;
                    let holds = live_holds(&tx, &plan, member.as_deref(), Some(id))?;
                    let has: i64 = holds.iter().map(|h| h.quantity).sum();
                    if qty > has {
                        short.push(Shortfall {
                            part_id: id,
                            part: words(&part),
                            want: qty,
                            on_hand: part.quantity,
                            held: part.held,
                            can: has,
                            holders: holders(&tx, id)?,
                        });
                        continue;
                    }
                    let mut left = qty;
                    for h in holds {
                        if left == 0 {
                            break;
                        }
                        let n = left.min(h.quantity);
                        left -= n;
                        draws.push((h, n));
                    }
                }
                if !short.is_empty() {
                    return Err(StoreError::NotHeld { plan, short });
                }
            }
        }
        let mut lines = Vec::with_capacity(draws.len());
        for (h, n) in &draws {
            lines.push(move_hold(&tx, h, -n, -n, who, why)?);
        }
        tx.commit()?;
        Ok(HoldChange {
            action: HoldAction::Use,
            plan,
            member,
            why: why.to_string(),
            lines,
        })
    }

    /// The holds matching `filter`, by plan, member and age. Without `closed`, only live holds
    /// (quantity above 0).
    pub fn holds(&self, filter: &HoldFilter) -> Result<Vec<Hold>, StoreError> {
        let sql = format!(
            "SELECT {HOLD_COLUMNS} FROM hold WHERE (?1 IS NULL OR plan = ?1) \
             AND (?2 IS NULL OR member = ?2) AND (?3 IS NULL OR part_id = ?3) \
             AND (?4 OR quantity > 0) \
             AND (?5 IS NULL OR julianday(created_at) <= julianday('now') - ?5 / 86400.0) \
             ORDER BY plan, member, id"
        );
        let plan = filter.plan.as_deref().map(str::trim);
        let member = filter.member.as_deref().map(str::trim);
        let mut stmt = self.conn.prepare_cached(&sql)?;
        let rows = stmt.query_map(
            params![plan, member, filter.part, filter.closed, filter.older_than],
            hold_from_row,
        )?;
        Ok(rows.collect::<Result<_, _>>()?)
    }
}

/// The live holds of `plan` filed under unit members, as (unit, hold), by unit then part.
fn unit_holds(conn: &Connection, plan: &str) -> Result<Vec<(u32, Hold)>, StoreError> {
    let mut out: Vec<(u32, Hold)> = live_holds(conn, plan, None, None)?
        .into_iter()
        .filter_map(|h| unit_of(&h.member).map(|u| (u, h)))
        .collect();
    out.sort_by_key(|(u, h)| (*u, h.part_id, h.id));
    Ok(out)
}

impl Store {
    /// Make the unit holds of `plan` exactly `kits`: each kit is (unit number, [(part row id,
    /// pieces)]), filed under the member [`unit_member`]. What the plan already holds counts:
    /// only missing pieces are held, surplus pieces (a unit whose design changed, a unit no
    /// longer in the list) are released, and holding the same kits again changes nothing. So
    /// `plan --hold` is idempotent, for the member who held first and for anyone planning the
    /// same plan later. Holds of other members (not `unit N`) are left alone. One transaction,
    /// all or nothing: [`StoreError::NotFree`] lists every part whose free pieces cannot cover
    /// what is missing, and nothing changes.
    pub fn set_unit_holds(
        &mut self,
        plan: &str,
        kits: &[(u32, Vec<(i64, i64)>)],
        who: &str,
        why: &str,
    ) -> Result<HoldChange, StoreError> {
        let plan = clean_name(plan, "plan", false)?;
        // Target pieces per (unit, part).
        let mut target: std::collections::BTreeMap<(u32, i64), i64> = Default::default();
        for (unit, items) in kits {
            if *unit == 0 {
                return Err(StoreError::Invalid("units are numbered from 1".into()));
            }
            for &(id, qty) in &merge_items(items, "the quantity to hold")? {
                let slot = target.entry((*unit, id)).or_insert(0);
                *slot = slot.checked_add(qty).ok_or_else(|| StoreError::Overflow {
                    label: format!("part #{id}"),
                })?;
            }
        }
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        begin_change(&tx, None)?;
        let current = unit_holds(&tx, &plan)?;
        let mut lines = Vec::new();
        // Surplus first, so the pieces it frees can serve what is missing elsewhere.
        for (unit, h) in &current {
            let want = target.get(&(*unit, h.part_id)).copied().unwrap_or(0);
            if h.quantity > want {
                let why = format!("{why}: unit {unit}");
                lines.push(move_hold(&tx, h, want - h.quantity, 0, who, &why)?);
            }
        }
        let mut missing: Vec<(u32, i64, i64)> = Vec::new();
        for (&(unit, id), &want) in &target {
            let has: i64 = current
                .iter()
                .filter(|(u, h)| *u == unit && h.part_id == id)
                .map(|(_, h)| h.quantity)
                .sum();
            if want > has {
                missing.push((unit, id, want - has));
            }
        }
        let per_part = merge_items(
            &missing
                .iter()
                .map(|&(_, id, n)| (id, n))
                .collect::<Vec<_>>(),
            "the quantity to hold",
        )?;
        let short = free_shortfalls(&tx, &per_part)?;
        if !short.is_empty() {
            return Err(StoreError::NotFree { plan, short });
        }
        for &(unit, id, n) in &missing {
            let why = format!("{why}: unit {unit}");
            let hold = hold_row(&tx, &plan, &unit_member(unit), id, who, &why)?;
            lines.push(move_hold(&tx, &hold, n, 0, who, &why)?);
        }
        tx.commit()?;
        Ok(HoldChange {
            action: HoldAction::Hold,
            plan,
            member: None,
            why: why.to_string(),
            lines,
        })
    }

    /// The units of `plan` that hold pieces now, in order.
    pub fn held_units(&self, plan: &str) -> Result<Vec<u32>, StoreError> {
        let plan = clean_name(plan, "plan", false)?;
        let mut units: Vec<u32> = unit_holds(&self.conn, &plan)?
            .into_iter()
            .map(|(u, _)| u)
            .collect();
        units.dedup();
        Ok(units)
    }

    /// The units of `plan` whose held pieces were built in (used), in order.
    pub fn built_units(&self, plan: &str) -> Result<Vec<u32>, StoreError> {
        let plan = clean_name(plan, "plan", false)?;
        let mut stmt = self.conn.prepare_cached(
            "SELECT DISTINCT h.member FROM ledger l JOIN hold h ON h.id = l.hold_id \
             WHERE h.plan = ?1 AND l.delta < 0 AND l.held_delta < 0",
        )?;
        let members: Vec<String> = stmt
            .query_map([&plan], |r| r.get(0))?
            .collect::<Result<_, _>>()?;
        let mut units: Vec<u32> = members.iter().filter_map(|m| unit_of(m)).collect();
        units.sort_unstable();
        Ok(units)
    }

    /// Build `count` units of `plan`: every piece the lowest-numbered `count` units hold leaves
    /// the shelf and the hold together (one ledger entry per hold, naming its unit through the
    /// hold). Refused with nothing changed when the plan holds fewer units.
    pub fn use_units(
        &mut self,
        plan: &str,
        count: u32,
        who: &str,
        why: &str,
    ) -> Result<(HoldChange, Vec<u32>), StoreError> {
        self.move_units(plan, count, true, who, why)
    }

    /// Give back `count` units of `plan` (the highest-numbered first; `None`: every unit):
    /// their held pieces return to free stock.
    pub fn release_units(
        &mut self,
        plan: &str,
        count: Option<u32>,
        who: &str,
        why: &str,
    ) -> Result<(HoldChange, Vec<u32>), StoreError> {
        self.move_units(plan, count.unwrap_or(u32::MAX), false, who, why)
    }

    fn move_units(
        &mut self,
        plan: &str,
        count: u32,
        build: bool,
        who: &str,
        why: &str,
    ) -> Result<(HoldChange, Vec<u32>), StoreError> {
        let plan = clean_name(plan, "plan", false)?;
        if count == 0 {
            return Err(StoreError::BadCount {
                what: "the number of units",
                got: 0,
            });
        }
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        begin_change(&tx, None)?;
        let holds = unit_holds(&tx, &plan)?;
        let mut units: Vec<u32> = holds.iter().map(|(u, _)| *u).collect();
        units.dedup();
        if units.is_empty() {
            return Err(StoreError::NothingHeld {
                plan,
                scope: " for any unit (`plan --hold` holds kits unit by unit)".into(),
            });
        }
        let n = usize::try_from(count).unwrap_or(usize::MAX);
        if build && n > units.len() {
            return Err(StoreError::Invalid(format!(
                "plan {plan:?} holds {} ({}), cannot use {count}",
                units.len(),
                units_text(&units)
            )));
        }
        let chosen: Vec<u32> = if build {
            units[..n].to_vec()
        } else {
            let keep = units.len().saturating_sub(n);
            units[keep..].to_vec()
        };
        let mut lines = Vec::new();
        for (u, h) in &holds {
            if chosen.contains(u) {
                let q = if build { -h.quantity } else { 0 };
                let why = format!("{why}: unit {u}");
                lines.push(move_hold(&tx, h, -h.quantity, q, who, &why)?);
            }
        }
        tx.commit()?;
        Ok((
            HoldChange {
                action: if build {
                    HoldAction::Use
                } else {
                    HoldAction::Release
                },
                plan,
                member: None,
                why: why.to_string(),
                lines,
            },
            chosen,
        ))
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::store::spec::PartText;

    fn store() -> (tempfile::TempDir, Store) {
        let dir = tempfile::tempdir().expect("tmp");
        let s = Store::open(&dir.path().join("s.db")).expect("open");
        (dir, s)
    }

    fn add(s: &mut Store, value: &str, qty: i64) -> i64 {
        let spec = PartText {
            value: value.into(),
            ..Default::default()
        }
        .resolve()
        .expect("spec");
        s.add(&spec, qty, "t", "seed").expect("add").part.id
    }

    /// Every part's quantity is the sum of its ledger deltas, its held count the sum of its
    /// held deltas, and every hold the sum of the held deltas that name it.
    fn assert_ledger_re_derives(s: &Store) {
        let ledger = s.ledger(None).expect("ledger");
        for p in s.parts(&Default::default()).expect("parts") {
            let mine: Vec<_> = ledger.iter().filter(|e| e.part_id == p.id).collect();
            assert_eq!(mine.iter().map(|e| e.delta).sum::<i64>(), p.quantity);
            assert_eq!(mine.iter().map(|e| e.held_delta).sum::<i64>(), p.held);
            assert_eq!(
                mine.last().map(|e| (e.quantity_after, e.held_after)),
                Some((p.quantity, p.held))
            );
        }
        let all = s
            .holds(&HoldFilter {
                closed: true,
                ..Default::default()
            })
            .expect("holds");
        for h in all {
            let sum: i64 = ledger
                .iter()
                .filter(|e| e.hold_id == Some(h.id))
                .map(|e| e.held_delta)
                .sum();
            assert_eq!(sum, h.quantity, "hold #{}", h.id);
        }
    }

    #[test]
    fn unit_members_read_back_and_spans_are_written_plainly() {
        for (n, name) in [(1, "unit 1"), (24, "unit 24")] {
            assert_eq!(unit_member(n), name);
            assert_eq!(unit_of(name), Some(n));
        }
        for not_a_unit in [
            "", "unit", "unit ", "unit 0", "unit 07", "unit 3a", "Unit 3", "ana",
        ] {
            assert_eq!(unit_of(not_a_unit), None, "{not_a_unit:?}");
        }
        assert_eq!(units_text(&[3]), "unit 3");
        assert_eq!(units_text(&[5, 1, 2, 3, 9, 10]), "units 1–3, 5, 9–10");
        assert_eq!(units_text(&[2, 2, 1]), "units 1–2");
    }

    #[test]
    fn hold_release_use_round_trip() {
        let (_d, mut s) = store();
        let r = add(&mut s, "4.7k", 10);
        let c = add(&mut s, "10n", 4);
        let h = s
            .hold("amp", "unit 1", &[(r, 3), (c, 1), (r, 2)], "t", "amp build")
            .expect("hold");
        assert_eq!(h.lines.len(), 2, "repeated parts add up");
        assert_eq!(h.lines[0].hold.quantity, 5);
        assert_eq!(s.part(r).expect("r").held, 5);
        assert_eq!(s.part(r).expect("r").available(), 5);
        s.hold("amp", "unit 2", &[(r, 2)], "t", "amp build")
            .expect("hold 2");
        s.hold("clock", "", &[(r, 1)], "t", "clock")
            .expect("hold 3");
        assert_eq!(s.part(r).expect("r").held, 8);
        // Use 6 of the amp's 7 pieces of r: 5 from unit 1 (oldest), 1 from unit 2.
        let u = s
            .use_held("amp", None, Some(&[(r, 6)]), "t", "built")
            .expect("use");
        let drawn: Vec<(String, i64)> = u
            .lines
            .iter()
            .map(|l| (l.hold.member.clone(), l.quantity_delta))
            .collect();
        assert_eq!(drawn, vec![("unit 1".into(), -5), ("unit 2".into(), -1)]);
        let p = s.part(r).expect("r");
        assert_eq!((p.quantity, p.held), (4, 2));
        // Release the rest of the amp; the clock's hold stays.
        let rel = s
            .release("amp", None, &[], "t", "cancelled")
            .expect("release");
        assert_eq!(rel.pieces(), 2, "1 of r (unit 2) and 1 of c (unit 1)");
        let p = s.part(r).expect("r");
        assert_eq!((p.quantity, p.held), (4, 1));
        assert_eq!(s.part(c).expect("c").held, 0);
        let live = s.holds(&HoldFilter::default()).expect("holds");
        assert_eq!(live.len(), 1);
        assert_eq!(live[0].plan, "clock");
        assert_ledger_re_derives(&s);
    }

    #[test]
    fn holding_more_than_is_free_names_every_item_and_holds_nothing() {
        let (_d, mut s) = store();
        let r = add(&mut s, "4.7k", 4);
        let c = add(&mut s, "10n", 2);
        s.hold("clock", "", &[(r, 3)], "t", "x").expect("hold");
        let before = s.ledger(None).expect("ledger").len();
        let err = s
            .hold("amp", "", &[(c, 1), (r, 2), (c, 2)], "t", "x")
            .expect_err("too many");
        let text = err.to_string();
        assert!(
            text.contains("cannot hold for plan \"amp\", nothing was held"),
            "{text}"
        );
        assert!(
            text.contains("asked for 2, 4 on the shelf, 3 held (3 for plan \"clock\"), 1 free"),
            "{text}"
        );
        assert!(
            text.contains("asked for 3, 2 on the shelf, none held, 2 free"),
            "{text}"
        );
        assert_eq!(s.ledger(None).expect("ledger").len(), before);
        assert_eq!(s.part(c).expect("c").held, 0);
        assert!(
            s.holds(&HoldFilter {
                plan: Some("amp".into()),
                closed: true,
                ..Default::default()
            })
            .expect("h")
            .is_empty()
        );
    }

    #[test]
    fn held_pieces_are_not_available_except_to_their_own_plan() {
        let (_d, mut s) = store();
        let r = add(&mut s, "4.7k", 3);
        let k = add(&mut s, "1k", 2);
        s.hold("amp", "", &[(r, 3), (k, 1)], "t", "x")
            .expect("hold");
        let avail = s.available_parts().expect("snapshot");
        assert_eq!(avail.iter().map(|p| p.id).collect::<Vec<_>>(), vec![k]);
        assert_eq!(avail[0].available(), 1);
        let own = s.available_parts_including(Some("amp")).expect("own");
        let counts: Vec<(i64, i64)> = own.iter().map(|p| (p.id, p.available())).collect();
        assert_eq!(counts, vec![(k, 2), (r, 3)]);
        let other = s.available_parts_including(Some("clock")).expect("other");
        assert_eq!(other, avail);
    }

    #[test]
    fn take_and_recount_leave_held_pieces_alone() {
        let (_d, mut s) = store();
        let r = add(&mut s, "4.7k", 5);
        s.hold("amp", "", &[(r, 3)], "t", "x").expect("hold");
        let err = s.take(r, 3, "t", "x").expect_err("held");
        assert!(
            err.to_string()
                .contains("3 of them are held (3 for plan \"amp\"); only 2 free, cannot take 3"),
            "{err}"
        );
        s.take(r, 2, "t", "x").expect("free ones");
        let err = s.recount(r, 2, "t", "x").expect_err("below held");
        assert!(
            err.to_string()
                .contains("cannot recount part #1 (4.7 kΩ) to 2: 3 are held"),
            "{err}"
        );
        s.recount(r, 3, "t", "x").expect("at held is fine");
        assert_eq!(s.part(r).expect("r").available(), 0);
        assert_ledger_re_derives(&s);
    }

    #[test]
    fn use_and_release_refuse_what_the_plan_does_not_hold() {
        let (_d, mut s) = store();
        let r = add(&mut s, "4.7k", 5);
        let c = add(&mut s, "10n", 5);
        s.hold("amp", "u1", &[(r, 2)], "t", "x").expect("hold");
        let err = s
            .use_held("amp", None, Some(&[(r, 3), (c, 1)]), "t", "x")
            .expect_err("more than held");
        let text = err.to_string();
        assert!(text.contains("asked for 3, the plan holds 2"), "{text}");
        assert!(text.contains("asked for 1, the plan holds 0"), "{text}");
        assert_eq!(s.part(r).expect("r").quantity, 5);
        let err = s
            .release("amp", None, &[c], "t", "x")
            .expect_err("not held");
        assert!(
            err.to_string()
                .starts_with("plan \"amp\" holds nothing of #2"),
            "{err}"
        );
        let err = s
            .use_held("amp", Some("u2"), None, "t", "x")
            .expect_err("no member");
        assert_eq!(
            err.to_string(),
            "plan \"amp\" holds nothing for member \"u2\"; see `onhand holds`"
        );
        assert!(matches!(
            s.release("nope", None, &[], "t", "x"),
            Err(StoreError::NothingHeld { .. })
        ));
        assert!(matches!(
            s.hold(" ", "", &[(r, 1)], "t", "x"),
            Err(StoreError::Invalid(_))
        ));
        assert!(matches!(
            s.hold("amp", "", &[(r, 0)], "t", "x"),
            Err(StoreError::BadCount { .. })
        ));
        assert!(matches!(
            s.hold("amp", "", &[(99, 1)], "t", "x"),
            Err(StoreError::NoSuchPart(99))
        ));
        // Using everything the member holds empties the hold and the shelf by the same amount.
        let u = s
            .use_held("amp", Some("u1"), None, "t", "built")
            .expect("use all");
        assert_eq!(u.pieces(), 2);
        assert_eq!(s.part(r).expect("r").quantity, 3);
        assert_ledger_re_derives(&s);
    }

    #[test]
    fn holding_for_several_members_is_one_all_or_nothing_change() {
        let (_d, mut s) = store();
        let r = add(&mut s, "4.7k", 5);
        let c = add(&mut s, "10n", 2);
        // Each member alone would fit; together they need 6 of the 5 resistors.
        let err = s
            .hold_for_members(
                "clocks",
                &[("unit 1", r, 3), ("unit 1", c, 1), ("unit 2", r, 3)],
                "t",
                "x",
            )
            .expect_err("6 of 5");
        assert!(
            err.to_string().contains("asked for 6, 5 on the shelf"),
            "{err}"
        );
        assert_eq!(s.part(r).expect("r").held, 0);
        assert_eq!(s.ledger(None).expect("ledger").len(), 2);
        let zero = s
            .hold_for_members(
                "clocks",
                &[
                    ("unit 1", r, 2),
                    ("unit 1", c, 1),
                    ("unit 2", r, 3),
                    ("unit 1", r, 0),
                ],
                "t",
                "x",
            )
            .expect_err("a zero count is refused");
        assert!(matches!(zero, StoreError::BadCount { .. }));
        let done = s
            .hold_for_members(
                "clocks",
                &[("unit 1", r, 2), ("unit 1", c, 1), ("unit 2", r, 3)],
                "t",
                "x",
            )
            .expect("fits");
        assert_eq!(done.lines.len(), 3);
        assert_eq!(s.part(r).expect("r").available(), 0);
        assert_eq!(
            s.holds(&HoldFilter {
                member: Some("unit 2".into()),
                ..Default::default()
            })
            .expect("holds")[0]
                .quantity,
            3
        );
        assert_ledger_re_derives(&s);
    }

    #[test]
    fn the_database_refuses_holds_above_the_shelf() {
        // Below the store API: the triggers of migration 0002 hold the line on their own.
        let (_d, mut s) = store();
        let r = add(&mut s, "4.7k", 2);
        s.hold("amp", "", &[(r, 2)], "t", "x").expect("hold");
        let over = s.conn.execute("UPDATE hold SET quantity = 3", []);
        assert!(over.is_err_and(|e| e.to_string().contains("more pieces than the shelf")));
        let under = s.conn.execute("UPDATE part SET quantity = 1", []);
        assert!(under.is_err_and(|e| e.to_string().contains("fewer pieces on the shelf")));
        let del = s.conn.execute("DELETE FROM hold", []);
        assert!(del.is_err_and(|e| e.to_string().contains("kept for the ledger")));
        let ins = s.conn.execute(
            "INSERT INTO hold (plan, part_id, quantity, who) VALUES ('b', ?1, 1, 't')",
            [r],
        );
        assert!(ins.is_err_and(|e| e.to_string().contains("more pieces than the shelf")));
    }
}
