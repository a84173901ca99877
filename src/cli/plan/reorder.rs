//! `onhand reorder`: what to buy so the stock can build a plan (least cost), or what is running
//! low. The plan half (loading the plan, the stages, the limits) is shared with `onhand plan`
//! through the parent module.

use super::{
    PlanSource, PlanSpec, StageCount, claim_text, limits, load_plan, prices, stage_plan, unit_span,
};
use crate::cli::find::load_stock;
use crate::cli::{Context, Status};
use crate::report::find::{describe_goal, write_design};
use crate::solve::plan::{self, Buyable, Order, PlanStage};
use crate::store::{Part, Value};
use crate::units::eseries::Series;
use anyhow::{Context as _, Result, anyhow, bail};
use serde::Serialize;
use std::io::Write;
use std::path::{Path, PathBuf};

/// The invented sample price list, used when no `--prices` file is given.
const SAMPLE_PRICES: &str = include_str!("../../../sample-stock/prices.csv");

pub(super) const REORDER_EXAMPLES: &str = "\
Examples:
  onhand reorder sample-stock/blinker-kit.toml           what to buy to build the whole plan
  onhand reorder kit.toml --buy E24 --csv order.csv      only E24 offers; a spreadsheet list
  onhand reorder kit.toml --prices my-supplier.csv
  onhand reorder --low                                   rows at or below their low-stock level

The price list is CSV: kind,series,technology,tolerance,from,to,pack,price (price per pack);
every preferred value of the series in [from, to] can be bought. Without --prices a built-in,
invented sample list is used. CSV output neutralises cells a spreadsheet would run as formulas.";

/// Arguments of `reorder`.
#[derive(Debug, clap::Args)]
pub struct ReorderArgs {
    #[command(flatten)]
    pub(super) source: PlanSource,
    /// Price list (CSV). Default: the built-in invented sample.
    #[arg(long, value_name = "FILE")]
    prices: Option<PathBuf>,
    /// Only buy from these series (comma separated, e.g. E24,E96). Default: every row.
    #[arg(long, value_delimiter = ',', value_name = "SERIES")]
    buy: Vec<String>,
    /// Also write the list as CSV for a spreadsheet.
    #[arg(long, value_name = "FILE")]
    csv: Option<PathBuf>,
    /// List the rows at or below their low-stock level instead of planning a purchase.
    #[arg(long)]
    low: bool,
}

/// The price list's offers as extra part rows (ids below zero, bin "new (to buy)") with their packs.
fn offers_as_parts(
    offers: &[prices::Offer],
    first_row: usize,
    units: u32,
) -> (Vec<Part>, Vec<Buyable>) {
    // Enough pieces that the search never runs short of a buyable value: every position of
    // every unit could use up to four of it.
    let plenty = i64::from(units).saturating_mul(12).max(12);
    let mut parts = Vec::new();
    let mut buy = Vec::new();
    for (i, o) in offers.iter().enumerate() {
        parts.push(Part {
            id: -(i as i64) - 1,
            kind: o.kind,
            value: o.value,
            tolerance: o.tolerance,
            technology: o.technology,
            voltage_rating: None,
            power_rating: None,
            package: String::new(),
            bin: "new (to buy)".into(),
            quantity: plenty,
            held: 0,
            low_stock: None,
            note: format!("{:?} price list", o.series),
        });
        buy.push(Buyable {
            row: first_row + i,
            pack: o.pack,
            price_cents: o.price_cents,
        });
    }
    (parts, buy)
}

/// Write a CSV list for a spreadsheet, neutralising every cell a spreadsheet would run as a
/// formula (see `store::neutralise_cell`), through the one safe writer (`ctx.files()`).
fn write_safe_csv(
    ctx: &Context,
    path: &Path,
    header: &[&str],
    rows: impl Iterator<Item = Vec<String>>,
) -> Result<()> {
    let mut w = csv::Writer::from_writer(Vec::new());
    w.write_record(header)?;
    for cells in rows {
        w.write_record(cells.iter().map(|c| crate::store::neutralise_cell(c)))?;
    }
    let bytes = w
        .into_inner()
        .map_err(|e| anyhow::anyhow!("building {}: {e}", path.display()))?;
    ctx.files().write(path, &bytes)
}

fn money(cents: u64) -> String {
    format!("{}.{:02}", cents / 100, cents % 100)
}

fn value_text(v: Value) -> String {
    crate::store::text::value_text(v)
}

pub(super) fn run_reorder(args: ReorderArgs, ctx: &Context, out: &mut dyn Write) -> Result<Status> {
    if args.low {
        return low_list(&args, ctx, out);
    }
    let spec = load_plan(&args.source)?;
    let stages: Vec<PlanStage> = spec
        .stages
        .iter()
        .map(|s| stage_plan(&spec, s))
        .collect::<Result<_>>()?;
    let price_text = match &args.prices {
        Some(p) => std::fs::read_to_string(p)
            .with_context(|| format!("reading price list {}", p.display()))?,
        None => SAMPLE_PRICES.to_string(),
    };
    let only: Vec<Series> = args
        .buy
        .iter()
        .map(|s| s.parse::<Series>().map_err(|e| anyhow!("--buy {s:?}: {e}")))
        .collect::<Result<_>>()?;
    let offers = prices::parse_prices(&price_text, (!only.is_empty()).then_some(only.as_slice()))?;
    if offers.is_empty() {
        bail!("the price list offers nothing (check --buy)");
    }
    let mut parts =
        super::super::holds::stock_for_plan(ctx, args.source.stock.as_deref(), &spec.name)?;
    let stock_rows = parts.len();
    let (extra, buyable) = offers_as_parts(&offers, stock_rows, spec.units);
    parts.extend(extra);
    let lim = limits(&args.source)?;
    let order = plan::reorder(
        &parts,
        &buyable,
        &stages,
        spec.units,
        args.source.candidates,
        lim,
    )
    .context("choosing the purchase")?;
    let stock_only: Vec<Part> = parts[..stock_rows].to_vec();
    let before = plan::buildable(
        &stock_only,
        &stages,
        spec.units,
        args.source.candidates,
        lim,
    )
    .context("planning with the stock alone")?;
    let lines: Vec<OrderLine> = order
        .buy
        .iter()
        .map(|&(row, packs, used)| {
            let o = &offers[row - stock_rows];
            let serves: Vec<String> = order
                .stages
                .iter()
                .filter(|s| {
                    s.uses
                        .iter()
                        .any(|(d, _)| d.positions.iter().any(|p| p.rows.contains(&row)))
                })
                .map(|s| s.name.clone())
                .collect();
            OrderLine {
                kind: o.kind.as_str(),
                value: value_text(o.value),
                tolerance: crate::store::text::tolerance_text(o.tolerance),
                technology: o.technology.as_str(),
                series: format!("{:?}", o.series),
                packs,
                pack_size: o.pack,
                pieces_needed: used,
                price_per_pack: money(o.price_cents),
                cost: money(o.price_cents.saturating_mul(u64::from(packs))),
                serves: serves.join("; "),
            }
        })
        .collect();
    if let Some(path) = &args.csv {
        let rows = lines.iter().map(|l| {
            vec![
                l.kind.to_string(),
                l.value.clone(),
                l.tolerance.clone(),
                l.technology.to_string(),
                l.series.clone(),
                l.packs.to_string(),
                l.pack_size.to_string(),
                l.pieces_needed.to_string(),
                l.price_per_pack.clone(),
                l.cost.clone(),
                l.serves.clone(),
            ]
        });
        write_safe_csv(
            ctx,
            path,
            &[
                "kind",
                "value",
                "tolerance",
                "technology",
                "series",
                "packs",
                "pack_size",
                "pieces_needed",
                "price_per_pack",
                "cost",
                "serves",
            ],
            rows,
        )?;
    }
    if ctx.json {
        let j = serde_json::json!({
            "plan": spec.name,
            "units": spec.units,
            "stock_alone_builds": before.built,
            "buy": lines,
            "total": money(order.cost_cents),
            "total_cents": order.cost_cents,
            "proof": order.proof,
            "integer_program": order.size,
            "csv": args.csv,
        });
        writeln!(out, "{j}")?;
    } else {
        write_order(
            out,
            &spec,
            &stages,
            &parts,
            &order,
            &lines,
            before.built,
            args.csv.as_ref(),
        )?;
    }
    Ok(Status::Success)
}

/// One line of a purchase list.
#[derive(Debug, Serialize)]
struct OrderLine {
    kind: &'static str,
    value: String,
    tolerance: String,
    technology: &'static str,
    series: String,
    packs: u32,
    pack_size: u32,
    pieces_needed: u64,
    price_per_pack: String,
    cost: String,
    serves: String,
}

#[allow(clippy::too_many_arguments)]
fn write_order(
    out: &mut dyn Write,
    spec: &PlanSpec,
    stages: &[PlanStage],
    parts: &[Part],
    order: &Order,
    lines: &[OrderLine],
    stock_builds: u32,
    csv: Option<&PathBuf>,
) -> Result<()> {
    writeln!(
        out,
        "Reorder for plan {:?}: {} units",
        spec.name, spec.units
    )?;
    writeln!(
        out,
        "The stock alone builds {stock_builds} of {} units.",
        spec.units
    )?;
    if lines.is_empty() {
        writeln!(out, "Nothing to buy: the stock builds every unit.")?;
        return Ok(());
    }
    writeln!(out)?;
    let mut t = comfy_table::Table::new();
    t.load_style(comfy_table::presets::UTF8_FULL_CONDENSED);
    t.set_header([
        "value",
        "tolerance",
        "technology",
        "series",
        "packs",
        "needed",
        "per pack",
        "cost",
        "for",
    ]);
    for l in lines {
        t.add_row([
            l.value.clone(),
            l.tolerance.clone(),
            l.technology.replace('_', " "),
            l.series.clone(),
            format!("{} × {}", l.packs, l.pack_size),
            l.pieces_needed.to_string(),
            l.price_per_pack.clone(),
            l.cost.clone(),
            l.serves.clone(),
        ]);
    }
    writeln!(out, "{t}")?;
    writeln!(
        out,
        "Total {} ({}; integer program of {} variables and {} constraints).",
        money(order.cost_cents),
        claim_text(order.proof, &order.cover, None, "least cost"),
        order.size.variables,
        order.size.constraints
    )?;
    if let Some(p) = csv {
        writeln!(out, "Written as CSV to {}", p.display())?;
    }
    writeln!(out)?;
    writeln!(out, "With the purchase, every unit is built like this:")?;
    for (share, st) in order.stages.iter().zip(stages) {
        writeln!(out)?;
        writeln!(
            out,
            "Stage {:?} — {}",
            share.name,
            describe_goal(&st.goal, &st.settings)
        )?;
        let mut first = 1;
        for (d, n) in &share.uses {
            writeln!(out, "  {}:", unit_span(first, *n))?;
            write_design(out, parts, d, st.goal_stages())?;
            first += n;
        }
    }
    Ok(())
}

fn low_list(args: &ReorderArgs, ctx: &Context, out: &mut dyn Write) -> Result<Status> {
    let parts = load_stock(ctx, args.source.stock.as_deref())?;
    let low: Vec<&Part> = parts
        .iter()
        .filter(|p| p.low_stock.is_some_and(|l| p.quantity <= l))
        .collect();
    // Suggested order: enough to bring the row back to twice its low-stock level (our default).
    let suggest = |p: &Part| {
        p.low_stock
            .map_or(0, |l| (2 * l.max(1) - p.quantity).max(1))
    };
    if let Some(path) = &args.csv {
        let rows = low.iter().map(|p| {
            vec![
                p.id.to_string(),
                p.kind.as_str().to_string(),
                value_text(p.value),
                crate::store::text::tolerance_text(p.tolerance),
                p.technology.as_str().to_string(),
                p.bin.clone(),
                p.quantity.to_string(),
                p.held.to_string(),
                p.low_stock.map(|l| l.to_string()).unwrap_or_default(),
                suggest(p).to_string(),
                p.note.clone(),
            ]
        });
        write_safe_csv(
            ctx,
            path,
            &[
                "id",
                "kind",
                "value",
                "tolerance",
                "technology",
                "bin",
                "quantity",
                "held",
                "low",
                "suggest",
                "note",
            ],
            rows,
        )?;
    }
    if ctx.json {
        let j: Vec<serde_json::Value> = low
            .iter()
            .map(|p| serde_json::json!({"part_id": p.id, "part": p.label(), "bin": p.bin, "quantity": p.quantity, "held": p.held, "low": p.low_stock, "suggest": suggest(p)}))
            .collect();
        writeln!(out, "{}", serde_json::Value::Array(j))?;
    } else if low.is_empty() {
        writeln!(out, "No row is at or below its low-stock level.")?;
    } else {
        let mut t = comfy_table::Table::new();
        t.load_style(comfy_table::presets::UTF8_FULL_CONDENSED);
        t.set_header(["#", "part", "bin", "on shelf", "held", "low at", "suggest"]);
        for p in &low {
            t.add_row([
                p.id.to_string(),
                p.label(),
                p.bin.clone(),
                p.quantity.to_string(),
                p.held.to_string(),
                p.low_stock.map(|l| l.to_string()).unwrap_or_default(),
                suggest(p).to_string(),
            ]);
        }
        writeln!(out, "{t}")?;
        writeln!(
            out,
            "{} rows are low; \"suggest\" brings each back to twice its low-stock level.",
            low.len()
        )?;
        if let Some(p) = &args.csv {
            writeln!(out, "Written as CSV to {}", p.display())?;
        }
    }
    Ok(Status::Success)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_built_in_price_list_reads() {
        let offers = prices::parse_prices(SAMPLE_PRICES, None).expect("sample price list");
        assert!(offers.len() > 100);
    }
}
