//! Reading stock: the filter, the row → [`Part`] mapping, and the snapshots the solver takes.
//! Read-only; writes live in `change.rs` and `import.rs`.

use super::part::{Kind, Part, Technology, Value};
use super::{Store, StoreError};
use crate::units::{Ratio, Tolerance, Volts, Watts};
use rusqlite::types::Value as SqlValue;
use rusqlite::{Connection, OptionalExtension, Row};

/// Which parts to read. Empty fields match everything.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct PartFilter {
    /// Only this kind.
    pub kind: Option<Kind>,
    /// Only this exact value (which also fixes resistive versus capacitive kinds).
    pub value: Option<Value>,
    /// Only values at or above (resistances match resistors and trimmers, capacitances
    /// capacitors).
    pub min: Option<Value>,
    /// Only values at or below.
    pub max: Option<Value>,
    /// Only this technology.
    pub technology: Option<Technology>,
    /// Only this bin (exact).
    pub bin: Option<String>,
    /// Only parts at or below their low-stock level.
    pub low: bool,
    /// Only parts whose note contains this text (case-insensitive for ASCII).
    pub text: Option<String>,
    /// Only parts with pieces available to a new design.
    pub available: bool,
}

/// The columns every part query selects, in the order [`part_from_row`] reads them. The last one
/// is the held count: the sum of the part's holds (never stored twice).
pub(crate) const PART_COLUMNS: &str = "id, kind, value, tol_minus_ppb, tol_plus_ppb, technology, \
     volts_uv, watts_uw, package, bin, quantity, low_stock, note, \
     (SELECT COALESCE(SUM(h.quantity), 0) FROM hold h WHERE h.part_id = part.id) AS held";

/// [`PART_COLUMNS`] for reading many rows at once: the held count comes from [`HELD_JOIN`] (one
/// aggregate over the holds, joined once) instead of a subquery per row. On a 50 000-row stock
/// the per-row subquery and SQLite's sort on the computed kind order were most of `find`'s time.
const JOINED_COLUMNS: &str = "part.id, part.kind, part.value, part.tol_minus_ppb, \
     part.tol_plus_ppb, part.technology, part.volts_uv, part.watts_uw, part.package, part.bin, \
     part.quantity, part.low_stock, part.note, COALESCE(h.held, 0) AS held";

/// Every hold summed per part, joined once (with [`JOINED_COLUMNS`]).
const HELD_JOIN: &str = "LEFT JOIN (SELECT part_id, SUM(quantity) AS held FROM hold \
     GROUP BY part_id) h ON h.part_id = part.id";

/// [`HELD_JOIN`] leaving out the holds of the plan in parameter `?1`, so that a plan sees its
/// own held pieces as available to itself.
const HELD_JOIN_FOR_PLAN: &str = "LEFT JOIN (SELECT part_id, SUM(quantity) AS held FROM hold \
     WHERE plan IS NOT ?1 GROUP BY part_id) h ON h.part_id = part.id";

/// Stable content order: by kind, then value, tolerance, technology, package, bin.
pub(crate) const PART_ORDER: &str = "CASE kind WHEN 'resistor' THEN 0 WHEN 'trimmer' THEN 1 \
     WHEN 'capacitor' THEN 2 ELSE 3 END, value, tol_minus_ppb, tol_plus_ppb, technology, package, bin";

/// The order a many-row read asks SQLite for: [`PART_ORDER`] with the kind compared as text.
/// It is the order of the part table's unique index (kind, value, tolerances, technology,
/// package, bin), so SQLite walks that index instead of sorting, and no two rows tie. Only the
/// kinds are then out of place: [`put_kinds_in_order`] moves them, keeping each run's order.
const INDEX_ORDER: &str = "ORDER BY part.kind, part.value, part.tol_minus_ppb, \
     part.tol_plus_ppb, part.technology, part.package, part.bin";

/// The kind's place in [`PART_ORDER`].
fn kind_rank(k: Kind) -> u8 {
    match k {
        Kind::Resistor => 0,
        Kind::Trimmer => 1,
        Kind::Capacitor => 2,
        _ => 3,
    }
}

/// Parts read in [`INDEX_ORDER`] put in [`PART_ORDER`]: a stable sort on the kind alone, which
/// finds the few runs (one per kind) already sorted and only merges them. The unique index
/// makes the text keys distinct, so the row id (the last key of [`sort_in_content_order`]) never
/// decides and the result is the same as that sort's.
fn put_kinds_in_order(parts: &mut [Part]) {
    parts.sort_by_key(|p| kind_rank(p.kind));
}

/// Put parts in [`PART_ORDER`], in Rust: the same keys compared the same way (SQLite compares
/// text byte by byte, as `str` does), with the row id last so that equal keys keep one order.
/// The reference the many-row reads ([`INDEX_ORDER`] and [`put_kinds_in_order`]) are tested
/// against.
#[cfg(test)]
pub(crate) fn sort_in_content_order(parts: &mut [Part]) {
    parts.sort_unstable_by(|a, b| {
        (kind_rank(a.kind), a.value.base())
            .cmp(&(kind_rank(b.kind), b.value.base()))
            .then_with(|| a.tolerance.minus.base().cmp(&b.tolerance.minus.base()))
            .then_with(|| a.tolerance.plus.base().cmp(&b.tolerance.plus.base()))
            .then_with(|| a.technology.as_str().cmp(b.technology.as_str()))
            .then_with(|| a.package.cmp(&b.package))
            .then_with(|| a.bin.cmp(&b.bin))
            .then_with(|| a.id.cmp(&b.id))
    });
}

/// Map one row (selected with [`PART_COLUMNS`]) to a part.
pub(crate) fn part_from_row(row: &Row<'_>) -> rusqlite::Result<Result<Part, StoreError>> {
    let id: i64 = row.get(0)?;
    let corrupt = |reason: String| Err(StoreError::Corrupt { id, reason });
    // The store writes only the `as_str` names, so they are looked up among those few first,
    // without a copy; any other text goes through the full parser (and its error).
    let kind_text = row.get_ref(1)?.as_str()?;
    let Some(kind) = Kind::ALL
        .into_iter()
        .find(|k| k.as_str() == kind_text)
        .or_else(|| kind_text.parse::<Kind>().ok())
    else {
        return Ok(corrupt(format!("unknown kind {kind_text:?}")));
    };
    let tech_text = row.get_ref(5)?.as_str()?;
    let Some(technology) = Technology::ALL
        .into_iter()
        .find(|t| t.as_str() == tech_text)
        .or_else(|| tech_text.parse::<Technology>().ok())
    else {
        return Ok(corrupt(format!("unknown technology {tech_text:?}")));
    };
    Ok(Ok(Part {
        id,
        kind,
        value: Value::from_base(kind, row.get(2)?),
        tolerance: Tolerance {
            minus: Ratio::from_base(row.get(3)?),
            plus: Ratio::from_base(row.get(4)?),
        },
        technology,
        voltage_rating: row.get::<_, Option<i64>>(6)?.map(Volts::from_base),
        power_rating: row.get::<_, Option<i64>>(7)?.map(Watts::from_base),
        package: row.get(8)?,
        bin: row.get(9)?,
        quantity: row.get(10)?,
        held: row.get(13)?,
        low_stock: row.get(11)?,
        note: row.get(12)?,
    }))
}

/// Run a part query and map every row.
pub(crate) fn query_parts(
    conn: &Connection,
    sql: &str,
    params: &[SqlValue],
) -> Result<Vec<Part>, StoreError> {
    let mut stmt = conn.prepare_cached(sql)?;
    let rows = stmt.query_map(rusqlite::params_from_iter(params), part_from_row)?;
    let mut parts = Vec::new();
    for row in rows {
        parts.push(row??);
    }
    Ok(parts)
}

/// One part by id on any connection or transaction.
pub(crate) fn part_by_id(conn: &Connection, id: i64) -> Result<Part, StoreError> {
    let sql = format!("SELECT {PART_COLUMNS} FROM part WHERE id = ?1");
    conn.prepare_cached(&sql)?
        .query_row([id], part_from_row)
        .optional()?
        .ok_or(StoreError::NoSuchPart(id))?
}

fn kinds_of(value: Value) -> &'static str {
    match value {
        Value::Resistance(_) => "kind IN ('resistor', 'trimmer')",
        Value::Capacitance(_) => "kind = 'capacitor'",
        Value::None => "kind = 'diode'",
    }
}

impl PartFilter {
    /// The WHERE clause and its parameters.
    fn sql(&self) -> (String, Vec<SqlValue>) {
        // Retired rows (emptied and put away, see `remove_row`) leave every list.
        let mut clauses: Vec<String> = vec!["retired_at IS NULL".to_string()];
        let mut params: Vec<SqlValue> = Vec::new();
        let mut push = |clause: String, param: Option<SqlValue>| {
            if let Some(p) = param {
                params.push(p);
                clauses.push(clause.replace('?', &format!("?{}", params.len())));
            } else {
                clauses.push(clause);
            }
        };
        if let Some(k) = self.kind {
            push("kind = ?".into(), Some(SqlValue::Text(k.as_str().into())));
        }
        if let Some(v) = self.value {
            push(kinds_of(v).into(), None);
            push("value = ?".into(), Some(SqlValue::Integer(v.base())));
        }
        if let Some(v) = self.min {
            push(kinds_of(v).into(), None);
            push("value >= ?".into(), Some(SqlValue::Integer(v.base())));
        }
        if let Some(v) = self.max {
            push(kinds_of(v).into(), None);
            push("value <= ?".into(), Some(SqlValue::Integer(v.base())));
        }
        if let Some(t) = self.technology {
            push(
                "technology = ?".into(),
                Some(SqlValue::Text(t.as_str().into())),
            );
        }
        if let Some(b) = &self.bin {
            push("bin = ?".into(), Some(SqlValue::Text(b.clone())));
        }
        if self.low {
            push(
                "low_stock IS NOT NULL AND quantity <= low_stock".into(),
                None,
            );
        }
        if let Some(t) = &self.text {
            let escaped = t
                .replace('\\', "\\\\")
                .replace('%', "\\%")
                .replace('_', "\\_");
            push(
                "note LIKE ? ESCAPE '\\'".into(),
                Some(SqlValue::Text(format!("%{escaped}%"))),
            );
        }
        if self.available {
            push(
                // `h` is the summed holds of [`HELD_JOIN`], which every filtered read joins.
                "quantity > COALESCE(h.held, 0)".into(),
                None,
            );
        }
        let clause = if clauses.is_empty() {
            String::new()
        } else {
            format!("WHERE {}", clauses.join(" AND "))
        };
        (clause, params)
    }
}

impl Store {
    /// The parts matching `filter`, in stable content order (kind, value, tolerance, …).
    pub fn parts(&self, filter: &PartFilter) -> Result<Vec<Part>, StoreError> {
        let (clause, params) = filter.sql();
        let sql = format!("SELECT {JOINED_COLUMNS} FROM part {HELD_JOIN} {clause} {INDEX_ORDER}");
        let mut parts = query_parts(&self.conn, &sql, &params)?;
        put_kinds_in_order(&mut parts);
        Ok(parts)
    }

    /// A snapshot of every part with pieces free for a new design: the solver's input. Held
    /// pieces are not free: each part's `held` counts every hold, and parts whose pieces are all
    /// held are left out.
    pub fn available_parts(&self) -> Result<Vec<Part>, StoreError> {
        self.available_parts_including(None)
    }

    /// Like [`Store::available_parts`], but the pieces held for `plan` count as available to
    /// it: each part's `held` counts only the holds of *other* plans, so `available()` is what
    /// this plan may use. `None` is the same as [`Store::available_parts`].
    pub fn available_parts_including(&self, plan: Option<&str>) -> Result<Vec<Part>, StoreError> {
        let sql = format!(
            "SELECT {JOINED_COLUMNS} FROM part {HELD_JOIN_FOR_PLAN} WHERE retired_at IS NULL \
             AND part.quantity > COALESCE(h.held, 0) {INDEX_ORDER}"
        );
        let mut parts = query_parts(
            &self.conn,
            &sql,
            &[plan.map_or(SqlValue::Null, |p| SqlValue::Text(p.to_string()))],
        )?;
        put_kinds_in_order(&mut parts);
        Ok(parts)
    }

    /// One part by row id.
    pub fn part(&self, id: i64) -> Result<Part, StoreError> {
        part_by_id(&self.conn, id)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::store::spec::PartText;

    fn add(s: &mut Store, value: &str, qty: i64, note: &str) {
        let spec = PartText {
            value: value.into(),
            note: Some(note.into()),
            ..Default::default()
        }
        .resolve()
        .expect("spec");
        s.add(&spec, qty, "t", "seed").expect("add");
    }

    /// The many-row reads (SQLite walking the unique index, then the kinds moved) give exactly
    /// the order of the reference sort, on rows added out of order across every kind, several
    /// technologies, packages and bins (text compared byte by byte: "B10" before "B2"), and an
    /// emptied row. Fails if the kinds are left in text order or the SQL order is dropped.
    #[test]
    fn many_row_reads_keep_the_content_order() {
        let dir = tempfile::tempdir().expect("tmp");
        let mut s = Store::open(&dir.path().join("s.db")).expect("open");
        let rows: [(&str, &str, &str, &str, &str, i64); 16] = [
            ("capacitor", "100n", "x7r", "0805", "B2", 4),
            ("resistor", "10k", "metal_film", "", "B10", 3),
            ("diode", "1N4148", "other", "", "D1", 5),
            ("trimmer", "10k", "other", "", "T1", 2),
            ("resistor", "10k", "carbon_film", "", "B2", 3),
            ("resistor", "10k", "metal_film", "", "B2", 3),
            ("capacitor", "100n", "film", "", "B1", 2),
            ("resistor", "1k", "metal_film", "0603", "A1", 1),
            ("resistor", "1k", "metal_film", "", "A1", 0),
            ("capacitor", "100n", "x7r", "0603", "B2", 4),
            ("resistor", "10k", "metal_film", "", "B1", 3),
            ("capacitor", "10n", "c0g", "", "Z9", 6),
            ("trimmer", "1k", "other", "", "T2", 2),
            ("resistor", "10k", "metal_film", "", "b1", 3),
            ("capacitor", "100n", "film", "", "A1", 2),
            ("resistor", "10k", "thick_film", "", "B1", 3),
        ];
        for (kind, value, tech, package, bin, qty) in rows {
            let spec = PartText {
                kind: Some(kind.into()),
                value: value.into(),
                technology: Some(tech.into()),
                package: Some(package.into()),
                bin: Some(bin.into()),
                ..Default::default()
            }
            .resolve()
            .expect("spec");
            s.add(&spec, qty, "t", "seed").expect("add");
        }
        let mut reference = s.parts(&PartFilter::default()).expect("parts");
        assert_eq!(reference.len(), rows.len());
        // Shuffle by id (rows were added out of order), then sort with the reference.
        reference.sort_by_key(|p| std::cmp::Reverse(p.id));
        sort_in_content_order(&mut reference);
        let ids = |ps: &[Part]| ps.iter().map(|p| p.id).collect::<Vec<_>>();
        assert_eq!(
            ids(&s.parts(&PartFilter::default()).expect("parts")),
            ids(&reference)
        );
        // The kinds come resistor, trimmer, capacitor, diode (not in text order).
        let kinds: Vec<Kind> = reference.iter().map(|p| p.kind).collect();
        let first = |k: Kind| kinds.iter().position(|x| *x == k).expect("kind present");
        assert!(first(Kind::Resistor) < first(Kind::Trimmer));
        assert!(first(Kind::Trimmer) < first(Kind::Capacitor));
        assert!(first(Kind::Capacitor) < first(Kind::Diode));
        // The snapshot keeps the same order over the rows it keeps.
        let avail = s.available_parts().expect("snapshot");
        let mut expect: Vec<Part> = reference
            .iter()
            .filter(|p| p.available() > 0)
            .cloned()
            .collect();
        sort_in_content_order(&mut expect);
        assert_eq!(ids(&avail), ids(&expect));
        assert_eq!(avail.len(), rows.len() - 1, "the emptied row is left out");
        // A filtered read too.
        let tens = PartFilter {
            value: Some(Value::from_base(Kind::Resistor, 10_000_000)),
            ..Default::default()
        };
        let mut expect: Vec<Part> = reference
            .iter()
            .filter(|p| p.value == Value::from_base(Kind::Resistor, 10_000_000))
            .cloned()
            .collect();
        sort_in_content_order(&mut expect);
        assert_eq!(ids(&s.parts(&tens).expect("tens")), ids(&expect));
        assert_eq!(expect.len(), 7, "six 10 k resistors and the 10 k trimmer");
    }

    #[test]
    fn snapshot_and_filters() {
        let dir = tempfile::tempdir().expect("tmp");
        let mut s = Store::open(&dir.path().join("s.db")).expect("open");
        add(&mut s, "1k", 5, "50% off");
        add(&mut s, "10k", 0, "empty");
        add(&mut s, "100n", 3, "");
        let avail = s.available_parts().expect("snapshot");
        assert_eq!(avail.len(), 2);
        assert!(avail.iter().all(|p| p.available() > 0 && p.held == 0));
        let r = |f: PartFilter| s.parts(&f).expect("parts").len();
        assert_eq!(
            r(PartFilter {
                min: Some(Value::from_base(Kind::Resistor, 2_000_000)),
                ..Default::default()
            }),
            1
        );
        // The % in the note filter is literal, not a wildcard.
        assert_eq!(
            r(PartFilter {
                text: Some("50%".into()),
                ..Default::default()
            }),
            1
        );
        assert_eq!(
            r(PartFilter {
                text: Some("%".into()),
                ..Default::default()
            }),
            1
        );
        assert_eq!(
            r(PartFilter {
                kind: Some(Kind::Capacitor),
                ..Default::default()
            }),
            1
        );
    }
}
