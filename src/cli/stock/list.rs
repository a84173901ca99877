//! `onhand list` and `onhand show`: stock as a table (or JSON), one row with its ledger.

use super::{
    Context, Narrow, Status, describe, low_warning, open_store, parse_kind, parse_tech,
    resolve_part,
};
use crate::report::list::{self as report, rating, safe};
use crate::report::table::Table;
use crate::store::{Kind, PartFilter, PartText, Value, text};
use crate::units::count;
use anyhow::{Context as _, bail};
use std::io::Write;

pub const LIST_EXAMPLES: &str = "\
Examples:
  onhand list
  onhand list --kind capacitor --min 1n --max 1u
  onhand list --low                          rows at or below their low-stock level
  onhand list --bin A3 --json";

pub const SHOW_EXAMPLES: &str = "\
Examples:
  onhand show '#12'
  onhand show 4.7k --bin A3";

/// Arguments of `list`.
#[derive(Debug, clap::Args)]
pub struct ListArgs {
    /// Only this kind (resistor, capacitor, trimmer, diode).
    #[arg(long)]
    pub kind: Option<String>,
    /// Only values at or above this (4.7k, 1n).
    #[arg(long)]
    pub min: Option<String>,
    /// Only values at or below this.
    #[arg(long)]
    pub max: Option<String>,
    /// Only this technology.
    #[arg(long = "tech")]
    pub technology: Option<String>,
    /// Only this bin.
    #[arg(long)]
    pub bin: Option<String>,
    /// Only rows at or below their low-stock level.
    #[arg(long)]
    pub low: bool,
    /// Only rows whose note contains this text.
    #[arg(long)]
    pub text: Option<String>,
}

/// Arguments of `show`.
#[derive(Debug, clap::Args)]
pub struct ShowArgs {
    /// Row id (#12) or value (4.7k).
    pub part: String,
    #[command(flatten)]
    pub narrow: Narrow,
}

fn bound(text: &str, kind: Option<Kind>, option: &str) -> anyhow::Result<Value> {
    let spec = PartText {
        kind: kind.map(|k| k.as_str().to_string()),
        value: text.to_string(),
        ..Default::default()
    }
    .resolve();
    match spec {
        Ok(s) if s.value != Value::None => Ok(s.value),
        Ok(_) => bail!("{option}: a {} has no value to compare", Kind::Diode),
        Err(errs) => bail!(
            "{option}: {}",
            errs.iter()
                .map(|e| e.message.clone())
                .collect::<Vec<_>>()
                .join("; ")
        ),
    }
}

/// Run `list`.
pub fn run_list(a: ListArgs, ctx: &Context, out: &mut dyn Write) -> anyhow::Result<Status> {
    let kind = parse_kind(a.kind.as_deref())?;
    let filter = PartFilter {
        kind,
        min: a
            .min
            .as_deref()
            .map(|m| bound(m, kind, "--min"))
            .transpose()?,
        max: a
            .max
            .as_deref()
            .map(|m| bound(m, kind, "--max"))
            .transpose()?,
        technology: parse_tech(a.technology.as_deref())?,
        bin: a.bin,
        low: a.low,
        text: a.text,
        ..PartFilter::default()
    };
    let store = open_store(ctx)?;
    let parts = store.parts(&filter).context("reading stock")?;
    if ctx.json {
        crate::cli::json::pretty(out, &parts)?;
        return Ok(Status::Success);
    }
    out.write_all(report::text(&parts, ctx.style).as_bytes())?;
    Ok(Status::Success)
}

/// Run `show`.
pub fn run_show(a: ShowArgs, ctx: &Context, out: &mut dyn Write) -> anyhow::Result<Status> {
    let store = open_store(ctx)?;
    let part = resolve_part(&store, &a.part, &a.narrow)?;
    let ledger = store.ledger(Some(part.id))?;
    if ctx.json {
        let v = serde_json::json!({ "part": part, "ledger": ledger });
        crate::cli::json::pretty(out, &v)?;
        return Ok(Status::Success);
    }
    writeln!(out, "{}", describe(&part))?;
    writeln!(out, "  kind        {}", part.kind)?;
    if part.kind != Kind::Diode {
        writeln!(out, "  value       {}", part.value)?;
    }
    writeln!(
        out,
        "  tolerance   {}",
        text::tolerance_text(part.tolerance)
    )?;
    writeln!(out, "  technology  {}", part.technology.label())?;
    if !rating(&part).is_empty() {
        writeln!(out, "  rating      {}", rating(&part))?;
    }
    writeln!(out, "  package     {}", safe(&part.package))?;
    if !part.bin.is_empty() {
        writeln!(out, "  bin         {}", safe(&part.bin))?;
    }
    writeln!(out, "  on hand     {}", part.quantity)?;
    if part.held > 0 {
        let holds = store.holds(&crate::store::HoldFilter {
            part: Some(part.id),
            ..Default::default()
        })?;
        let by: Vec<String> = holds
            .iter()
            .map(|h| {
                if h.member.is_empty() {
                    format!("{} for plan \"{}\"", h.quantity, safe(&h.plan))
                } else {
                    format!(
                        "{} for plan \"{}\" [{}]",
                        h.quantity,
                        safe(&h.plan),
                        safe(&h.member)
                    )
                }
            })
            .collect();
        writeln!(out, "  held        {} ({})", part.held, by.join(", "))?;
    } else {
        writeln!(out, "  held        0")?;
    }
    writeln!(out, "  free        {}", part.available())?;
    if let Some(l) = part.low_stock {
        writeln!(out, "  low level   {l}")?;
    }
    if !part.note.is_empty() {
        writeln!(out, "  note        {}", safe(&part.note))?;
    }
    if let Some(w) = low_warning(&part) {
        writeln!(out, "{w}")?;
    }
    let mut t = Table::new([
        "when (UTC)",
        "who",
        "change",
        "after",
        "held",
        "held after",
        "why",
    ]);
    for e in &ledger {
        let held = match (&e.plan, e.held_delta) {
            (Some(plan), d) => format!("{d:+} {}", safe(plan)),
            (None, 0) => String::new(),
            (None, d) => format!("{d:+}"),
        };
        t.row([
            e.at.clone(),
            safe(&e.who),
            if e.delta == 0 && e.plan.is_some() {
                String::new()
            } else {
                format!("{:+}", e.delta)
            },
            e.quantity_after.to_string(),
            held,
            e.held_after.to_string(),
            safe(&e.why),
        ]);
    }
    writeln!(
        out,
        "history ({}):\n{}",
        count(ledger.len(), "entry", "entries"),
        t.render(ctx.style)
    )?;
    Ok(Status::Success)
}
