//! The everyday stock commands: init, add, take, recount, list, show, import, export.
//!
//! Each command turns its options into plain store values ([`PartText`], [`PartFilter`]),
//! opens the store once, makes one change (one transaction) and prints what changed. Only this
//! folder of the CLI knows these options; the store never sees clap.

mod add;
mod exchange;
mod list;
mod take;

use super::{Context, Status};
use crate::store::{Kind, Part, PartFilter, Store, Technology, text};
use anyhow::{Context as _, bail};
use std::io::Write;

/// Stock commands.
#[derive(Debug, clap::Subcommand)]
pub enum StockCommand {
    /// Create the stock database (if it is not there yet) and print where it is.
    #[command(after_help = "Example:\n  onhand init\n  onhand --db ./bench.db init")]
    Init,
    /// Put parts into stock: tops up the matching row or creates it.
    #[command(after_help = add::EXAMPLES)]
    Add(Box<add::AddArgs>),
    /// Take parts out of stock (refused if fewer are free: on the shelf and not held).
    #[command(after_help = take::TAKE_EXAMPLES)]
    Take(take::TakeArgs),
    /// Stock-take: set a row to the count you have just made.
    #[command(after_help = take::RECOUNT_EXAMPLES)]
    Recount(take::RecountArgs),
    /// List stock as a table (or JSON with --json).
    #[command(after_help = list::LIST_EXAMPLES)]
    List(list::ListArgs),
    /// One stock row in detail, with its ledger history.
    #[command(after_help = list::SHOW_EXAMPLES)]
    Show(list::ShowArgs),
    /// Add the parts in a CSV or JSON file, all or nothing.
    #[command(after_help = exchange::IMPORT_EXAMPLES)]
    Import(exchange::ImportArgs),
    /// Write all stock as CSV or JSON (imports back to the same stock).
    #[command(after_help = exchange::EXPORT_EXAMPLES)]
    Export(exchange::ExportArgs),
}

/// Run a stock command.
pub fn run(cmd: StockCommand, ctx: &Context, out: &mut dyn Write) -> anyhow::Result<Status> {
    match cmd {
        StockCommand::Init => init(ctx, out),
        StockCommand::Add(a) => add::run(*a, ctx, out),
        StockCommand::Take(a) => take::run_take(a, ctx, out),
        StockCommand::Recount(a) => take::run_recount(a, ctx, out),
        StockCommand::List(a) => list::run_list(a, ctx, out),
        StockCommand::Show(a) => list::run_show(a, ctx, out),
        StockCommand::Import(a) => exchange::run_import(a, ctx, out),
        StockCommand::Export(a) => exchange::run_export(a, ctx, out),
    }
}

/// The database path from `--db` / `ONHAND_DB`, else the platform default.
pub fn store_path(ctx: &Context) -> anyhow::Result<std::path::PathBuf> {
    match &ctx.db {
        Some(p) => Ok(p.clone()),
        None => Ok(Store::default_path()?),
    }
}

/// Open the store named by the context (creating it on first use). Other commands that read
/// stock call this too.
pub fn open_store(ctx: &Context) -> anyhow::Result<Store> {
    let path = store_path(ctx)?;
    Store::open(&path).with_context(|| format!("opening the stock database {}", path.display()))
}

/// Open the store for a command that changes it: the same as [`open_store`], then SQLite's quick
/// consistency check, so a damaged file is refused before anything is written to it.
pub fn open_for_writing(ctx: &Context) -> anyhow::Result<Store> {
    let path = store_path(ctx)?;
    Store::open_for_writing(&path)
        .with_context(|| format!("opening the stock database {}", path.display()))
}

fn init(ctx: &Context, out: &mut dyn Write) -> anyhow::Result<Status> {
    let path = store_path(ctx)?;
    let existed = path.exists();
    let store = open_store(ctx)?;
    let parts = store.parts(&PartFilter::default())?.len();
    let version = store.schema_version()?;
    if ctx.json {
        let v = serde_json::json!({
            "path": path, "created": !existed, "schema_version": version, "parts": parts,
        });
        writeln!(out, "{v}")?;
    } else if existed {
        writeln!(
            out,
            "stock database at {} is ready (schema version {version}, {parts} rows)",
            path.display()
        )?;
    } else {
        writeln!(
            out,
            "created stock database at {} (schema version {version})",
            path.display()
        )?;
    }
    Ok(Status::Success)
}

/// Options that narrow down which row a PART argument means.
#[derive(Debug, Clone, Default, clap::Args)]
pub struct Narrow {
    /// Only rows of this kind (resistor, capacitor, trimmer, diode).
    #[arg(long)]
    pub kind: Option<String>,
    /// Only rows in this bin.
    #[arg(long)]
    pub bin: Option<String>,
    /// Only rows of this technology.
    #[arg(long = "tech")]
    pub technology: Option<String>,
}

fn parse_kind(text: Option<&str>) -> anyhow::Result<Option<Kind>> {
    text.map(|k| k.parse::<Kind>().context("--kind"))
        .transpose()
}

fn parse_tech(text: Option<&str>) -> anyhow::Result<Option<Technology>> {
    text.map(|t| t.parse::<Technology>().context("--tech"))
        .transpose()
}

/// One line about a row: `#3 4.7 kΩ 1% metal film, axial, bin A3`.
pub fn describe(p: &Part) -> String {
    let mut s = format!("#{} {}", p.id, text::for_terminal(&p.label()));
    if p.kind != Kind::Diode && !p.package.is_empty() {
        s.push_str(&format!(", {}", text::for_terminal(&p.package)));
    }
    if let Some(v) = p.voltage_rating {
        s.push_str(&format!(", {}", text::volts_text(v)));
    }
    if !p.bin.is_empty() {
        s.push_str(&format!(", bin {}", text::for_terminal(&p.bin)));
    }
    s
}

/// Every stock row a value means (`4.7k`, `100n`, a diode type), narrowed by `--kind`, `--bin`,
/// `--tech`; removed rows are left out. Used by [`resolve_part`] and by `log --part`.
pub fn rows_of_value(store: &Store, t: &str, narrow: &Narrow) -> anyhow::Result<Vec<Part>> {
    let kind = parse_kind(narrow.kind.as_deref())?.unwrap_or_else(|| text::infer_kind(t));
    let technology = parse_tech(narrow.technology.as_deref())?;
    let mut filter = PartFilter {
        kind: Some(kind),
        technology,
        bin: narrow.bin.clone(),
        ..PartFilter::default()
    };
    let candidates: Vec<Part> = if kind == Kind::Diode {
        let want = t.to_lowercase();
        store
            .parts(&filter)?
            .into_iter()
            .filter(|p| p.package.to_lowercase().starts_with(&want))
            .collect()
    } else {
        let spec = crate::store::PartText {
            kind: Some(kind.as_str().to_string()),
            value: t.to_string(),
            ..Default::default()
        }
        .resolve()
        .map_err(|errs| {
            anyhow::anyhow!(
                "{}",
                errs.iter()
                    .map(|e| e.message.clone())
                    .collect::<Vec<_>>()
                    .join("; ")
            )
        })?;
        filter.value = Some(spec.value);
        store.parts(&filter)?
    };
    Ok(candidates)
}

/// Find the one row a PART argument means: `#12` or `12` is a row id; anything else is a value
/// (with `--kind`, `--bin`, `--tech` to narrow it down). Ambiguity is an error listing the
/// candidates.
pub fn resolve_part(store: &Store, text: &str, narrow: &Narrow) -> anyhow::Result<Part> {
    let t = text.trim();
    text::check_field("the part", t, text::MAX_VALUE).map_err(anyhow::Error::msg)?;
    let id_text = t.strip_prefix('#').unwrap_or(t);
    if !id_text.is_empty() && id_text.chars().all(|c| c.is_ascii_digit()) {
        let id: i64 = id_text
            .parse()
            .with_context(|| format!("row id {} is too large", text::excerpt(t)))?;
        return Ok(store.part(id)?);
    }
    if t.starts_with('#') {
        bail!("{} is not a row id (write #12 or 12)", text::excerpt(t));
    }
    let candidates = rows_of_value(store, t, narrow)?;
    let kind = parse_kind(narrow.kind.as_deref())?.unwrap_or_else(|| text::infer_kind(t));
    let technology = parse_tech(narrow.technology.as_deref())?;
    match candidates.as_slice() {
        [] => {
            let mut msg = format!("no {kind} {t} in stock");
            if let Some(b) = &narrow.bin {
                msg.push_str(&format!(" in bin {b}"));
            }
            if let Some(tech) = technology {
                msg.push_str(&format!(" of technology {tech}"));
            }
            bail!("{}; see `onhand list`", text::for_terminal(&msg))
        }
        [one] => Ok(one.clone()),
        many => {
            let mut msg = format!(
                "{t} matches {} rows; give the row id (e.g. #{}) or narrow with --bin/--tech:",
                many.len(),
                many[0].id
            );
            for p in many {
                msg.push_str(&format!("\n  {} — {} on hand", describe(p), p.quantity));
            }
            bail!("{msg}")
        }
    }
}

/// The ledger reason from `--why` (or `default`), refused when it holds control characters (a
/// newline would forge a row in `show`) or is longer than `text::MAX_REASON`.
pub fn reason(why: Option<String>, default: &str) -> anyhow::Result<String> {
    let why = why.unwrap_or_else(|| default.to_string());
    text::check_field("--why", &why, text::MAX_REASON).map_err(anyhow::Error::msg)?;
    Ok(why)
}

/// A count of pieces from an option, within `min ..= store::MAX_PIECES`.
pub fn pieces(option: &str, n: i64, min: i64, advice: &str) -> anyhow::Result<i64> {
    if n < min {
        bail!(
            "{option} must be {min} or more (got {n}){}",
            if advice.is_empty() {
                String::new()
            } else {
                format!("; {advice}")
            }
        );
    }
    if n > crate::store::MAX_PIECES {
        bail!(
            "{option} {n} is more than onhand counts in one row (at most {})",
            crate::store::MAX_PIECES
        );
    }
    Ok(n)
}

/// A warning line when a row is at or below its low-stock level.
pub fn low_warning(p: &Part) -> Option<String> {
    let level = p.low_stock?;
    (p.quantity <= level).then(|| {
        format!(
            "note: #{} is at or below its low-stock level ({} left, level {level})",
            p.id, p.quantity
        )
    })
}
