//! The ledger as a log: entries across the whole store, filtered by who, plan, member (unit),
//! part rows, reason and time range, each with its part in words and its time in local time.
//! Times are stored in UTC; the conversion to and from local time is SQLite's own (the C
//! library's time zone rules, so `TZ` is honoured). Read-only.

use super::change::{ENTRY_COLUMNS, LedgerEntry, entry_from_row};
use super::query::part_by_id;
use super::{Store, StoreError};
use rusqlite::types::Value as SqlValue;
use serde::Serialize;
use std::collections::BTreeMap;

/// Which entries to list. Empty fields match everything.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct LogFilter {
    /// Only entries written by this person (exact).
    pub who: Option<String>,
    /// Only entries of this plan.
    pub plan: Option<String>,
    /// Only entries of holds of this member (e.g. `unit 3`).
    pub member: Option<String>,
    /// Only entries of these part rows (empty: every row).
    pub parts: Vec<i64>,
    /// Only entries whose reason contains this text (case-insensitive for ASCII).
    pub why: Option<String>,
    /// Only entries at or after this UTC time (see [`Store::time_bound`]).
    pub since: Option<String>,
    /// Only entries before this UTC time.
    pub until: Option<String>,
    /// Only the newest this many (still listed oldest first).
    pub last: Option<usize>,
}

/// One log line: the ledger entry, its time in local time, its part and its hold's member.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LogEntry {
    /// The stored entry (its `at` is UTC).
    #[serde(flatten)]
    pub entry: LedgerEntry,
    /// `at` in local time, `YYYY-MM-DD HH:MM:SS`.
    pub local_time: String,
    /// The part in words, e.g. `4.7 kΩ 1% metal film`.
    pub part: String,
    /// The part's bin.
    pub bin: String,
    /// The member of the hold that moved (a unit of a plan), if any.
    pub member: Option<String>,
}

/// A time bound typed by a person: a local date (`2026-12-01`), a local date and time
/// (`2026-12-01 14:30`, `2026-12-01T14:30:05`), or an age (`30m`, `12h`, `7d`, `2w`).
fn bound_sql(text: &str, end: bool) -> Option<(String, Vec<String>)> {
    let t = text.trim();
    if let Some((n, unit)) = t
        .char_indices()
        .last()
        .map(|(i, c)| (&t[..i], c.to_ascii_lowercase()))
        && !n.is_empty()
        && n.chars().all(|c| c.is_ascii_digit())
        && n.len() <= 6
    {
        let (count, word) = match unit {
            'm' => (n.parse::<i64>().ok()?, "minutes"),
            'h' => (n.parse::<i64>().ok()?, "hours"),
            'd' => (n.parse::<i64>().ok()?, "days"),
            'w' => (n.parse::<i64>().ok()?.checked_mul(7)?, "days"),
            _ => return None,
        };
        return Some((
            "SELECT strftime('%Y-%m-%dT%H:%M:%fZ', 'now', ?1)".into(),
            vec![format!("-{count} {word}")],
        ));
    }
    let b = t.as_bytes();
    let date_only = b.len() == 10;
    let shape_ok = b.len() >= 10
        && b[..10].iter().enumerate().all(|(i, c)| {
            if i == 4 || i == 7 {
                *c == b'-'
            } else {
                c.is_ascii_digit()
            }
        })
        && (date_only
            || ((b[10] == b' ' || b[10] == b'T')
                && (b.len() == 16 || b.len() == 19)
                && b[11..].iter().enumerate().all(|(i, c)| {
                    if i == 2 || i == 5 {
                        *c == b':'
                    } else {
                        c.is_ascii_digit()
                    }
                })));
    if !shape_ok {
        return None;
    }
    // A date as an end means "up to and including that day".
    let shift = if date_only && end { "+1 day" } else { "+0 day" };
    Some((
        "SELECT strftime('%Y-%m-%dT%H:%M:%fZ', ?1, ?2, 'utc')".into(),
        vec![t.replace('T', " "), shift.into()],
    ))
}

impl Store {
    /// Turn a time typed by a person (local date, local date and time, or an age such as
    /// `7d`) into the UTC form the ledger stores. `end`: a bare date means the end of that day.
    pub fn time_bound(&self, text: &str, end: bool) -> Result<String, StoreError> {
        let bad = || {
            StoreError::Invalid(format!(
                "cannot read {text:?} as a time: write a local date (2026-12-01), a date and \
                 time (2026-12-01 14:30) or an age (30m, 12h, 7d, 2w)"
            ))
        };
        let (sql, params) = bound_sql(text, end).ok_or_else(bad)?;
        let got: Option<String> =
            self.conn
                .query_row(&sql, rusqlite::params_from_iter(params.iter()), |r| {
                    r.get(0)
                })?;
        got.ok_or_else(bad)
    }

    /// A stored UTC time shown in local time, `YYYY-MM-DD HH:MM:SS`.
    pub fn time_local(&self, utc: &str) -> Result<String, StoreError> {
        let got: Option<String> = self.conn.query_row(
            "SELECT strftime('%Y-%m-%d %H:%M:%S', ?1, 'localtime')",
            [utc],
            |r| r.get(0),
        )?;
        got.ok_or_else(|| StoreError::Invalid(format!("{utc:?} is not a stored time")))
    }

    /// The ledger entries matching `filter`, oldest first, with local times and parts in words.
    pub fn log(&self, filter: &LogFilter) -> Result<Vec<LogEntry>, StoreError> {
        let mut clauses: Vec<String> = Vec::new();
        let mut params: Vec<SqlValue> = Vec::new();
        let mut push = |clause: &str, value: SqlValue| {
            params.push(value);
            clauses.push(clause.replace('?', &format!("?{}", params.len())));
        };
        if let Some(w) = &filter.who {
            push("ledger.who = ?", SqlValue::Text(w.trim().to_string()));
        }
        if let Some(p) = &filter.plan {
            push("ledger.plan = ?", SqlValue::Text(p.trim().to_string()));
        }
        if let Some(m) = &filter.member {
            push("hold.member = ?", SqlValue::Text(m.trim().to_string()));
        }
        if let Some(w) = &filter.why {
            let escaped = w
                .replace('\\', "\\\\")
                .replace('%', "\\%")
                .replace('_', "\\_");
            push(
                "ledger.why LIKE ? ESCAPE '\\'",
                SqlValue::Text(format!("%{escaped}%")),
            );
        }
        if let Some(t) = &filter.since {
            push("ledger.at >= ?", SqlValue::Text(t.clone()));
        }
        if let Some(t) = &filter.until {
            push("ledger.at < ?", SqlValue::Text(t.clone()));
        }
        if !filter.parts.is_empty() {
            let list = filter
                .parts
                .iter()
                .map(i64::to_string)
                .collect::<Vec<_>>()
                .join(", ");
            clauses.push(format!("ledger.part_id IN ({list})"));
        }
        let clause = if clauses.is_empty() {
            String::new()
        } else {
            format!("WHERE {}", clauses.join(" AND "))
        };
        let limit = filter
            .last
            .map_or(-1, |n| i64::try_from(n).unwrap_or(i64::MAX));
        let sql = format!(
            "SELECT * FROM (SELECT {ENTRY_COLUMNS}, \
             strftime('%Y-%m-%d %H:%M:%S', ledger.at, 'localtime'), hold.member \
             FROM ledger LEFT JOIN hold ON hold.id = ledger.hold_id {clause} \
             ORDER BY ledger.id DESC LIMIT {limit}) ORDER BY 1"
        );
        let mut stmt = self.conn.prepare(&sql)?;
        let rows = stmt.query_map(rusqlite::params_from_iter(params.iter()), |r| {
            Ok((
                entry_from_row(r)?,
                r.get::<_, Option<String>>(13)?,
                r.get::<_, Option<String>>(14)?,
            ))
        })?;
        let mut parts: BTreeMap<i64, (String, String)> = BTreeMap::new();
        let mut out = Vec::new();
        for row in rows {
            let (entry, local, member) = row?;
            if let std::collections::btree_map::Entry::Vacant(slot) = parts.entry(entry.part_id) {
                let p = part_by_id(&self.conn, entry.part_id)?;
                slot.insert((p.label(), p.bin.clone()));
            }
            let (part, bin) = parts.get(&entry.part_id).cloned().unwrap_or_default();
            out.push(LogEntry {
                local_time: local.unwrap_or_else(|| entry.at.clone()),
                entry,
                part,
                bin,
                member,
            });
        }
        Ok(out)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::store::spec::PartText;

    #[test]
    fn filters_pick_entries_and_times_convert() {
        let dir = tempfile::tempdir().expect("tmp");
        let mut s = Store::open(&dir.path().join("s.db")).expect("open");
        let spec = PartText {
            value: "4.7k".into(),
            bin: Some("A3".into()),
            ..Default::default()
        }
        .resolve()
        .expect("spec");
        let r = s.add(&spec, 10, "ana", "delivery").expect("add").part.id;
        s.take(r, 2, "ben", "repair: organ").expect("take");
        s.hold("amp", "unit 1", &[(r, 3)], "ana", "amp kit")
            .expect("hold");
        let all = s.log(&LogFilter::default()).expect("log");
        assert_eq!(all.len(), 3);
        assert_eq!(all[2].member.as_deref(), Some("unit 1"));
        assert_eq!(all[0].bin, "A3");
        let ben = s
            .log(&LogFilter {
                who: Some("ben".into()),
                ..Default::default()
            })
            .expect("log");
        assert_eq!(ben.len(), 1);
        assert_eq!(ben[0].entry.delta, -2);
        let why = s
            .log(&LogFilter {
                why: Some("ORGAN".into()),
                ..Default::default()
            })
            .expect("log");
        assert_eq!(why.len(), 1);
        let plan = s
            .log(&LogFilter {
                plan: Some("amp".into()),
                member: Some("unit 1".into()),
                ..Default::default()
            })
            .expect("log");
        assert_eq!(plan.len(), 1);
        let last = s
            .log(&LogFilter {
                last: Some(2),
                ..Default::default()
            })
            .expect("log");
        assert_eq!(
            last.iter()
                .map(|e| e.entry.who.as_str())
                .collect::<Vec<_>>(),
            vec!["ben", "ana"]
        );
        // Nothing is in the future; everything is after an hour ago.
        let future = s.time_bound("2999-01-01", false).expect("bound");
        let none = s
            .log(&LogFilter {
                since: Some(future),
                ..Default::default()
            })
            .expect("log");
        assert!(none.is_empty());
        let hour = s.time_bound("1h", false).expect("bound");
        let recent = s
            .log(&LogFilter {
                since: Some(hour),
                ..Default::default()
            })
            .expect("log");
        assert_eq!(recent.len(), 3);
        assert!(s.time_bound("yesterday", false).is_err());
        assert!(s.time_bound("2026-13-45", false).is_err());
    }

    #[test]
    fn a_date_as_an_end_covers_the_whole_day() {
        let dir = tempfile::tempdir().expect("tmp");
        let s = Store::open(&dir.path().join("s.db")).expect("open");
        let start = s.time_bound("2026-03-01", false).expect("start");
        let end = s.time_bound("2026-03-01", true).expect("end");
        let start_ms: f64 = s
            .conn
            .query_row("SELECT julianday(?1)", [&start], |r| r.get(0))
            .expect("jd");
        let end_ms: f64 = s
            .conn
            .query_row("SELECT julianday(?1)", [&end], |r| r.get(0))
            .expect("jd");
        assert!((end_ms - start_ms - 1.0).abs() < 1e-6, "{start} .. {end}");
        assert!(start.ends_with('Z'));
    }
}
