//! `onhand log`: the ledger across the whole store, filtered, as a table, JSON or CSV. Times are
//! stored in UTC and shown in local time (`TZ` is honoured); JSON and CSV carry both.

use super::stock::{Narrow, describe, open_store, rows_of_value};
use super::{Context, Status};
use crate::report::style::Style;
use crate::report::table::Table;
use crate::store::{LogEntry, LogFilter, Store};
use anyhow::{Context as _, bail};
use std::io::Write;
use std::path::PathBuf;

pub const LOG_EXAMPLES: &str = "\
Examples:
  onhand log                                     every entry, oldest first
  onhand log --last 20                           the newest twenty
  onhand log --who ana --since 7d                what ana did this week
  onhand log --plan 'blinker kit' --member 'unit 3'
  onhand log --part '#7' --part 4.7k             two rows (a value means every row of it)
  onhand log --why repair --since 2026-11-01 --until 2026-11-30
  onhand log --format csv --out ledger.csv       for a spreadsheet (formula cells neutralised)
  onhand --json log --plan 'blinker kit'

Times are shown in local time and stored in UTC. --since and --until take a local date
(2026-11-30; as --until it means the whole day), a local date and time (2026-11-30 14:30)
or an age (30m, 12h, 7d, 2w). Entry numbers are what `onhand undo ENTRY` takes.";

/// Output format of `log`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum LogFormat {
    /// A table.
    Text,
    /// Comma-separated values with a header row.
    Csv,
}

/// Arguments of `log`.
#[derive(Debug, clap::Args)]
pub struct LogArgs {
    /// Only entries by this person (as given by --user when they were made).
    #[arg(long, value_name = "NAME")]
    pub who: Option<String>,
    /// Only entries of this plan's holds.
    #[arg(long, value_name = "NAME")]
    pub plan: Option<String>,
    /// Only entries of holds of this member of a plan (e.g. 'unit 3').
    #[arg(long, value_name = "NAME")]
    pub member: Option<String>,
    /// Only entries of this row (#7) or of every row of this value (4.7k); repeatable.
    #[arg(long = "part", value_name = "PART")]
    pub parts: Vec<String>,
    /// Only entries whose reason contains this text (any case).
    #[arg(long, value_name = "TEXT")]
    pub why: Option<String>,
    /// Only entries at or after this time.
    #[arg(long, value_name = "TIME")]
    pub since: Option<String>,
    /// Only entries up to this time.
    #[arg(long, value_name = "TIME")]
    pub until: Option<String>,
    /// Only the newest N entries.
    #[arg(long, value_name = "N")]
    pub last: Option<usize>,
    /// Output format (--json gives JSON).
    #[arg(long, value_enum, default_value_t = LogFormat::Text)]
    pub format: LogFormat,
    /// Write to this file instead of standard output.
    #[arg(long, value_name = "FILE")]
    pub out: Option<PathBuf>,
}

/// Row ids a `--part` argument means: `#7` (or `7`) is a row, anything else a value (every row
/// with it, removed rows excluded).
fn part_ids(store: &Store, text: &str) -> anyhow::Result<Vec<i64>> {
    let t = text.trim();
    let digits = t.strip_prefix('#').unwrap_or(t);
    if !digits.is_empty() && digits.chars().all(|c| c.is_ascii_digit()) {
        let id: i64 = digits.parse().with_context(|| format!("row {t:?}"))?;
        store.part(id)?;
        return Ok(vec![id]);
    }
    let ids: Vec<i64> = rows_of_value(store, t, &Narrow::default())
        .with_context(|| format!("--part {t:?}"))?
        .into_iter()
        .map(|p| p.id)
        .collect();
    if ids.is_empty() {
        bail!("--part {t:?}: no such row in stock; see `onhand list`");
    }
    Ok(ids)
}

/// The CSV columns, in order.
const CSV_COLUMNS: [&str; 17] = [
    "entry",
    "change",
    "local_time",
    "utc",
    "who",
    "part_id",
    "part",
    "bin",
    "delta",
    "on_shelf_after",
    "held_delta",
    "held_after",
    "plan",
    "member",
    "why",
    "undoes",
    "hold_id",
];

fn csv_cells(e: &LogEntry) -> Vec<String> {
    let l = &e.entry;
    let opt = |v: Option<i64>| v.map(|n| n.to_string()).unwrap_or_default();
    vec![
        l.id.to_string(),
        l.change_id.to_string(),
        e.local_time.clone(),
        l.at.clone(),
        l.who.clone(),
        l.part_id.to_string(),
        e.part.clone(),
        e.bin.clone(),
        l.delta.to_string(),
        l.quantity_after.to_string(),
        l.held_delta.to_string(),
        l.held_after.to_string(),
        l.plan.clone().unwrap_or_default(),
        e.member.clone().unwrap_or_default(),
        l.why.clone(),
        opt(l.undoes),
        opt(l.hold_id),
    ]
}

/// The log as spreadsheet-safe CSV (every cell a spreadsheet would run as a formula is
/// neutralised, see `store::neutralise_cell`).
fn to_csv(entries: &[LogEntry]) -> anyhow::Result<Vec<u8>> {
    let mut w = csv::Writer::from_writer(Vec::new());
    w.write_record(CSV_COLUMNS)?;
    for e in entries {
        w.write_record(
            csv_cells(e)
                .iter()
                .map(|c| crate::store::neutralise_cell(c)),
        )?;
    }
    w.into_inner().context("writing CSV")
}

/// Escape control characters so that nothing from the ledger can drive the terminal.
fn plain(text: &str) -> String {
    text.chars()
        .flat_map(|c| {
            if c.is_control() {
                c.escape_default().collect::<Vec<_>>()
            } else {
                vec![c]
            }
        })
        .collect()
}

fn to_table(entries: &[LogEntry], store: &Store, style: Style) -> anyhow::Result<String> {
    let mut t = Table::new([
        "entry",
        "when (local)",
        "who",
        "part",
        "shelf",
        "held",
        "plan",
        "why",
    ])
    .right_aligned(&[0, 4, 5]);
    for e in entries {
        let l = &e.entry;
        let part = match store.part(l.part_id) {
            Ok(p) => describe(&p),
            Err(_) => format!("#{} {}", l.part_id, e.part),
        };
        let shelf = if l.delta == 0 {
            l.quantity_after.to_string()
        } else {
            format!("{:+} → {}", l.delta, l.quantity_after)
        };
        let held = if l.held_delta == 0 {
            String::new()
        } else {
            format!("{:+} → {}", l.held_delta, l.held_after)
        };
        let plan = match (&l.plan, &e.member) {
            (Some(p), Some(m)) if !m.is_empty() => format!("{p} [{m}]"),
            (Some(p), _) => p.clone(),
            _ => String::new(),
        };
        let mut why = l.why.clone();
        if let Some(u) = l.undoes.filter(|_| !why.starts_with("undo of change")) {
            why.push_str(&format!(" (undoes change #{u})"));
        }
        let entry = if l.change_id == l.id {
            l.id.to_string()
        } else {
            format!("{} (change {})", l.id, l.change_id)
        };
        t.row([
            entry,
            e.local_time.clone(),
            plain(&l.who),
            part,
            shelf,
            held,
            plain(&plan),
            plain(&why),
        ]);
    }
    Ok(t.render(style))
}

/// Run `log`.
pub fn run(a: LogArgs, ctx: &Context, out: &mut dyn Write) -> anyhow::Result<Status> {
    let store = open_store(ctx)?;
    let mut parts = Vec::new();
    for p in &a.parts {
        parts.extend(part_ids(&store, p)?);
    }
    let filter = LogFilter {
        who: a.who.clone(),
        plan: a.plan.clone(),
        member: a.member.clone(),
        parts,
        why: a.why.clone(),
        since: a
            .since
            .as_deref()
            .map(|t| store.time_bound(t, false))
            .transpose()
            .context("--since")?,
        until: a
            .until
            .as_deref()
            .map(|t| store.time_bound(t, true))
            .transpose()
            .context("--until")?,
        last: a.last,
    };
    let entries = store.log(&filter)?;
    let bytes = if ctx.json {
        let mut v = serde_json::to_vec_pretty(&entries)?;
        v.push(b'\n');
        v
    } else {
        match a.format {
            LogFormat::Csv => to_csv(&entries)?,
            LogFormat::Text if entries.is_empty() => b"no ledger entries match\n".to_vec(),
            LogFormat::Text => {
                // A file gets plain tab-separated text; a terminal gets boxes.
                let style = if a.out.is_some() {
                    Style::PLAIN
                } else {
                    ctx.style
                };
                let mut s = to_table(&entries, &store, style)?;
                let pieces_in: i64 = entries.iter().map(|e| e.entry.delta.max(0)).sum();
                let pieces_out: i64 = entries.iter().map(|e| (-e.entry.delta).max(0)).sum();
                s.push_str(&format!(
                    "\n{} entr{}: {pieces_in} pieces in, {pieces_out} out (times are local)\n",
                    entries.len(),
                    if entries.len() == 1 { "y" } else { "ies" }
                ));
                s.into_bytes()
            }
        }
    };
    match &a.out {
        Some(path) => {
            ctx.files().write(path, &bytes)?;
            writeln!(
                out,
                "wrote {} ledger entr{} to {}",
                entries.len(),
                if entries.len() == 1 { "y" } else { "ies" },
                path.display()
            )?;
        }
        None => out.write_all(&bytes)?,
    }
    Ok(Status::Success)
}
