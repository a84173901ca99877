//! `onhand reorder`: one priced buyer's list (least cost) for one or several plans and the
//! low-stock refill. Converts arguments, runs the purchase program, hands the answer to
//! `report::reorder`. The plan half (loading the plan, the stages, the limits) is shared with `onhand plan`
//! through the parent module.

use super::{PlanSource, PlanSpec, StageCount, claim_text, limits, load_plan, prices, stage_plan};
use crate::cli::find::load_stock;
use crate::cli::{Context, Status};
use crate::report::find::describe_goal;
use crate::report::reorder as report;
use crate::solve::allocate::Proof;
use crate::solve::plan::{self, Buyable, PlanStage};
use crate::store::{Part, Value};
use anyhow::{Context as _, Result, anyhow, bail};
use std::io::Write;
use std::path::{Path, PathBuf};

/// The invented sample price list, used when no `--prices` file is given.
const SAMPLE_PRICES: &str = include_str!("../../../sample-stock/prices.csv");

pub(super) const REORDER_EXAMPLES: &str = "\
Examples:
  onhand reorder sample-stock/blinker-kit.toml            what to buy to build the whole plan
  onhand reorder kit.toml clock.toml --low                two plans and the low-stock refill, one list
  onhand reorder --low --prices my-supplier.csv           the low-stock refill, priced in packs
  onhand reorder kit.toml --buy-series resistor=E96,capacitor=E6 --csv order.csv

The price list is CSV: kind,series,technology,tolerance,from,to,pack,price (price per pack),
optionally currency (ISO 4217 code) and part_number (`{value}` is replaced by the value).
Every preferred value of the series in [from, to] can be bought. Without --prices a built-in,
INVENTED sample list is used (currency XTS, the ISO 4217 code for testing) and every report
says so. Values are bought only from the series each kind is sold in (common practice):
resistors E24 at 5 %, E48 at 2 %, E96 at 1 %, E192 below; ceramic and film capacitors E12;
electrolytic and tantalum E6. --buy-series changes that per kind or technology.
The CSV starts with a UTF-8 byte-order mark so spreadsheets show µ and Ω (--no-bom leaves it
out) and neutralises cells a spreadsheet would run as formulas.
Exit 1 when the time limit stopped the purchase program before it proved the least cost (the
report prints the gap to the proven bound).";

/// Arguments of `reorder`.
#[derive(Debug, clap::Args)]
pub struct ReorderArgs {
    #[command(flatten)]
    pub(super) source: PlanSource,
    /// More plan files, covered by the same list.
    #[arg(value_name = "MORE", conflicts_with = "stages")]
    more: Vec<PathBuf>,
    /// Price list (CSV). Default: the built-in invented sample (announced on every report).
    #[arg(long, value_name = "FILE")]
    prices: Option<PathBuf>,
    /// Finest series bought, per kind or technology (resistor=E96,capacitor=E6,film=E12; a
    /// bare series sets every kind). Default: the series each kind is sold in.
    #[arg(
        long = "buy-series",
        alias = "buy",
        value_delimiter = ',',
        value_name = "KIND=SERIES"
    )]
    buy: Vec<String>,
    /// Also write the list as CSV for a spreadsheet.
    #[arg(long, value_name = "FILE")]
    csv: Option<PathBuf>,
    /// Leave the UTF-8 byte-order mark out of the CSV.
    #[arg(long)]
    no_bom: bool,
    /// Add the low-stock refill (rows at or below their low-stock level, back to twice it) to
    /// the list; alone, the refill only.
    #[arg(long)]
    low: bool,
}

/// The invented sample price list's name on reports.
const SAMPLE_NAME: &str = "built-in sample price list";

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
    bom: bool,
    header: &[&str],
    rows: impl Iterator<Item = Vec<String>>,
) -> Result<()> {
    let start: Vec<u8> = if bom {
        "\u{feff}".as_bytes().to_vec()
    } else {
        Vec::new()
    };
    let mut w = csv::Writer::from_writer(start);
    w.write_record(header)?;
    for cells in rows {
        w.write_record(cells.iter().map(|c| crate::store::neutralise_cell(c)))?;
    }
    let bytes = w
        .into_inner()
        .map_err(|e| anyhow::anyhow!("building {}: {e}", path.display()))?;
    ctx.files().write(path, &bytes)
}

fn value_text(v: Value) -> String {
    crate::store::text::value_text(v)
}

/// Pieces that bring a low row back to twice its low-stock level (our default), or none.
fn refill_of(p: &Part) -> Option<u64> {
    let l = p.low_stock.filter(|&l| p.quantity <= l)?;
    u64::try_from((2 * l.max(1) - p.quantity).max(1)).ok()
}

/// The cheapest per piece of the offers that can refill a row: same kind, value and
/// technology, tolerance no wider.
fn offer_for(p: &Part, offers: &[prices::Offer]) -> Option<usize> {
    offers
        .iter()
        .enumerate()
        .filter(|(_, o)| {
            o.kind == p.kind
                && o.value == p.value
                && o.technology == p.technology
                && o.tolerance.widest() <= p.tolerance.widest()
        })
        .min_by(|(_, a), (_, b)| {
            (u128::from(a.price_cents) * u128::from(b.pack))
                .cmp(&(u128::from(b.price_cents) * u128::from(a.pack)))
        })
        .map(|(i, _)| i)
}

/// The price list: read from --prices, or the sample.
fn price_list(args: &ReorderArgs) -> Result<prices::PriceList> {
    match &args.prices {
        Some(p) => {
            let text = std::fs::read_to_string(p)
                .with_context(|| format!("reading price list {}", p.display()))?;
            let name = p.file_name().map_or_else(
                || p.display().to_string(),
                |n| n.to_string_lossy().into_owned(),
            );
            Ok(prices::read_price_list(&text, &name, false)
                .with_context(|| format!("price list {}", p.display()))?)
        }
        None => Ok(prices::read_price_list(SAMPLE_PRICES, SAMPLE_NAME, true)?),
    }
}

/// The plans named: the first from the shared source, then every further file.
fn plans(args: &ReorderArgs) -> Result<Vec<PlanSpec>> {
    if args.low && args.source.file.is_none() && args.source.stages.is_empty() {
        if !args.more.is_empty() {
            bail!("give the first plan file before the others");
        }
        return Ok(Vec::new());
    }
    let mut out = vec![load_plan(&args.source)?];
    for f in &args.more {
        let text = std::fs::read_to_string(f)
            .with_context(|| format!("reading plan file {}", f.display()))?;
        let mut spec =
            super::file::parse_plan(&text).with_context(|| format!("plan file {}", f.display()))?;
        if let Some(u) = args.source.units {
            spec.units = u;
        }
        out.push(spec);
    }
    Ok(out)
}

/// The stock as it is (every hold held), and per plan named (a plan named twice once) the
/// pieces its own units hold: (row, pieces). A plan's holds are free to that plan only.
struct Stock {
    parts: Vec<Part>,
    /// Plan names, each once, in the order first named.
    names: Vec<String>,
    /// Per name, the rows its units hold and how many pieces.
    own: Vec<Vec<(usize, u32)>>,
}

impl Stock {
    /// The index into `names` of a plan.
    fn plan(&self, name: &str) -> usize {
        self.names.iter().position(|n| n == name).unwrap_or(0)
    }

    /// The stock as plan `k` alone sees it: its own holds free, every other hold held.
    fn for_plan(&self, k: usize) -> Vec<Part> {
        let mut parts = self.parts.clone();
        for &(row, n) in self.own.get(k).map_or(&[][..], |v| &v[..]) {
            if let Some(p) = parts.get_mut(row) {
                p.held -= i64::from(n);
            }
        }
        parts
    }
}

fn stock(ctx: &Context, args: &ReorderArgs, specs: &[PlanSpec]) -> Result<Stock> {
    let src = args.source.stock.as_deref();
    let parts = load_stock(ctx, src)?;
    let mut names: Vec<String> = Vec::new();
    let mut own = Vec::new();
    for spec in specs {
        if names.contains(&spec.name) {
            continue;
        }
        let freed = super::super::holds::stock_for_plan(ctx, src, &spec.name)?;
        let mut rows = Vec::new();
        for (row, (p, f)) in parts.iter().zip(&freed).enumerate() {
            if p.id == f.id && p.held > f.held {
                rows.push((row, u32::try_from(p.held - f.held).unwrap_or(u32::MAX)));
            }
        }
        names.push(spec.name.clone());
        own.push(rows);
    }
    Ok(Stock { parts, names, own })
}

pub(super) fn run_reorder(args: ReorderArgs, ctx: &Context, out: &mut dyn Write) -> Result<Status> {
    let specs = plans(&args)?;
    let list = price_list(&args)?;
    let series = prices::BuySeries::parse(&args.buy).map_err(|e| anyhow!(e))?;
    let offers: Vec<prices::Offer> = list
        .offers
        .iter()
        .filter(|o| series.allows(o))
        .cloned()
        .collect();
    if offers.is_empty() {
        bail!("the price list offers nothing in the series bought (check --buy-series)");
    }
    if list.sample {
        eprintln!(
            "warning: no --prices given; the list is priced from the INVENTED sample price list (currency XTS, for testing)"
        );
    }
    // Stages of every plan, named "plan: stage" when several plans share the list.
    let mut stages: Vec<PlanStage> = Vec::new();
    let mut stage_units: Vec<u32> = Vec::new();
    let mut of_plan: Vec<usize> = Vec::new();
    for (k, spec) in specs.iter().enumerate() {
        for st in &spec.stages {
            let mut s = stage_plan(spec, st)?;
            if specs.len() > 1 {
                s.name = format!("{}: {}", spec.name, s.name);
            }
            stages.push(s);
            stage_units.push(spec.units);
            of_plan.push(k);
        }
    }
    let held = stock(ctx, &args, &specs)?;
    let plan_of: Vec<usize> = of_plan.iter().map(|&k| held.plan(&specs[k].name)).collect();
    let mut parts = held.parts.clone();
    let stock_rows = parts.len();
    let most_units = specs.iter().map(|s| s.units).max().unwrap_or(1);
    let (extra, buyable) = offers_as_parts(&offers, stock_rows, most_units);
    parts.extend(extra);
    // The refill: each low row bought from the cheapest matching offer, or listed unpriced.
    let mut refill: Vec<(usize, u32)> = Vec::new();
    let mut refill_of_row: Vec<(usize, i64, u64)> = Vec::new();
    let mut unpriced = Vec::new();
    if args.low {
        for p in &parts[..stock_rows] {
            let Some(n) = refill_of(p) else { continue };
            match offer_for(p, &offers) {
                Some(i) => {
                    refill.push((stock_rows + i, u32::try_from(n).unwrap_or(u32::MAX)));
                    refill_of_row.push((stock_rows + i, p.id, n));
                }
                None => unpriced.push(report::Unpriced {
                    part_id: p.id,
                    part: p.label(),
                    pieces: n,
                }),
            }
        }
    }
    let lim = limits(&args.source)?;
    let want = plan::Want {
        stages: stages.clone(),
        units: stage_units.clone(),
        refill,
        plan_of,
        own: held.own.clone(),
    };
    let order = plan::reorder_for(&parts, &buyable, &want, args.source.candidates, lim)
        .context("choosing the purchase")?;
    let mut plan_lines = Vec::new();
    for (k, spec) in specs.iter().enumerate() {
        let own: Vec<PlanStage> = stages
            .iter()
            .zip(&of_plan)
            .filter(|(_, p)| **p == k)
            .map(|(s, _)| s.clone())
            .collect();
        // Only for the report: a time limit that stops it does not stop the list.
        let stock_only = held.for_plan(held.plan(&spec.name));
        let before =
            plan::buildable(&stock_only, &own, spec.units, args.source.candidates, lim).ok();
        plan_lines.push(report::PlanLine {
            name: spec.name.clone(),
            units: spec.units,
            stock_alone_builds: before.map(|b| b.built),
        });
    }
    let lines: Vec<report::BuyLine> = order
        .buy
        .iter()
        .map(|&(row, packs, used)| {
            let o = &offers[row - stock_rows];
            let mut serves: Vec<String> = order
                .stages
                .iter()
                .filter(|s| {
                    s.uses
                        .iter()
                        .any(|(d, _)| d.positions.iter().any(|p| p.rows.contains(&row)))
                })
                .map(|s| s.name.clone())
                .collect();
            let mut refill_pieces = 0;
            for &(r, id, n) in &refill_of_row {
                if r == row {
                    serves.push(format!("refill #{id}"));
                    refill_pieces += n;
                }
            }
            let (value_base, base_unit) = report::base_value(o.value);
            report::BuyLine {
                kind: o.kind.as_str(),
                value: value_text(o.value),
                value_base,
                base_unit,
                tolerance: crate::store::text::tolerance_text(o.tolerance),
                technology: report::buyer_technology(o.technology),
                series: format!("{:?}", o.series),
                part_number: o.part_number.clone(),
                packs,
                pack_size: o.pack,
                pieces_needed: used,
                refill_pieces,
                price_per_pack_cents: o.price_cents,
                cost_cents: o.price_cents.saturating_mul(u64::from(packs)),
                serves: serves.join("; "),
            }
        })
        .collect();
    let buyers = report::BuyersList {
        prices: report::PriceSource {
            name: list.name.clone(),
            sample: list.sample,
            currency: list.currency.clone(),
        },
        plans: plan_lines,
        refill: args.low,
        lines,
        unpriced,
        total_cents: order.cost_cents,
        quality: report::Quality {
            proven: order.proof == Proof::Optimal,
            lower_bound_cents: order.lower_bound_cents,
        },
    };
    if let Some(path) = &args.csv {
        write_safe_csv(
            ctx,
            path,
            !args.no_bom,
            &report::CSV_HEADER,
            report::csv_rows(&buyers).into_iter(),
        )?;
    }
    if ctx.json {
        let j = serde_json::json!({
            "schema": crate::report::style::JSON_SCHEMA,
            "price_list": buyers.prices,
            "plans": buyers.plans,
            "stock_alone_builds": buyers.plans.first().and_then(|p| p.stock_alone_builds),
            "refill": buyers.refill,
            "buy": buyers.lines,
            "unpriced": buyers.unpriced,
            "total": report::money(buyers.total_cents),
            "total_cents": buyers.total_cents,
            "currency": buyers.prices.currency,
            "proof": order.proof,
            "lower_bound_cents": buyers.quality.lower_bound_cents,
            "gap_cents": buyers.gap_cents(),
            "cover": order.cover,
            "integer_program": order.size,
            "csv": args.csv,
        });
        writeln!(out, "{j}")?;
    } else {
        write!(out, "{}", report::list_text(&buyers, ctx.style))?;
        if !stages.is_empty() {
            writeln!(
                out,
                "{} (integer program of {} variables and {} constraints).",
                claim_text(order.proof, &order.cover, None, "least cost"),
                order.size.variables,
                order.size.constraints
            )?;
        }
        writeln!(out, "{}", report::quality_text(&buyers))?;
        if let Some(p) = &args.csv {
            writeln!(out, "Written as CSV to {}", p.display())?;
        }
        let shown: Vec<(&plan::StageShare, String, usize)> = order
            .stages
            .iter()
            .zip(&stages)
            .map(|(share, st)| {
                (
                    share,
                    describe_goal(&st.goal, &st.settings),
                    st.goal_stages(),
                )
            })
            .collect();
        write!(out, "{}", report::designs_text(&parts, &shown))?;
    }
    Ok(if order.proof == Proof::Optimal {
        Status::Success
    } else {
        Status::NotMet
    })
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
