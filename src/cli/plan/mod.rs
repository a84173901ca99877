//! `onhand plan` and `onhand reorder`: many units of one or more stages against shared stock.
//!
//! The plan file (see [`file`]) or inline `--stage` options become search goals; the pure core
//! (`solve::plan`) finds each stage's candidate designs and the integer program decides how many
//! units use each; this module loads stock, holds parts when asked, and renders. Reorders read a
//! price list (see [`prices`]; a built-in invented one by default).

pub mod file;
pub mod prices;

use super::find::{load_stock, stage_of, techs};
use super::{Context, Status};
use crate::report::find::{describe_goal, jdesign, write_design};
use crate::solve::allocate::{Limits, Proof};
use crate::solve::plan::{self, Buildable, Buyable, Order, PlanStage};
use crate::solve::{Duty, Goal, Rank, Settings, StageGoal, family_by_name};
use crate::store::{Part, Value};
use crate::timing::Conditions;
use crate::units::eseries::Series;
use crate::units::{Ratio, parse_ratio, parse_voltage};
use anyhow::{Context as _, Result, anyhow, bail};
use file::{PlanSpec, StageSpec, TargetSpec};
use serde::Serialize;
use std::io::Write;
use std::path::{Path, PathBuf};
use std::time::Duration;

/// The invented sample price list, used when no `--prices` file is given.
const SAMPLE_PRICES: &str = include_str!("../../../sample-stock/prices.csv");

const PLAN_EXAMPLES: &str = "\
Examples:
  onhand plan sample-stock/blinker-kit.toml              how many kits the stock can build
  onhand plan kit.toml --units 30 --hold                 ...and hold the parts for you
  onhand plan --stage astable:2Hz:55..70% --stage pulse:20ms --units 12 --name clocks

A plan file is TOML: name, units, family, supply, tolerance, then one [[stage]] per timer
(form = value, pulse, astable, steered, square or pair). See the README for the schema.
Inline stages: pulse:WIDTH, astable:FREQ[:DUTY], square:FREQ, steered:HIGH:LOW.
Exit status: 0 when every unit can be built, 1 when the stock builds fewer, 2 on error.";

const REORDER_EXAMPLES: &str = "\
Examples:
  onhand reorder sample-stock/blinker-kit.toml           what to buy to build the whole plan
  onhand reorder kit.toml --buy E24 --csv order.csv      only E24 offers; a spreadsheet list
  onhand reorder kit.toml --prices my-supplier.csv
  onhand reorder --low                                   rows at or below their low-stock level

The price list is CSV: kind,series,technology,tolerance,from,to,pack,price (price per pack);
every preferred value of the series in [from, to] can be bought. Without --prices a built-in,
invented sample list is used. CSV output neutralises cells a spreadsheet would run as formulas.";

/// Plan commands.
#[derive(Debug, clap::Subcommand)]
pub enum PlanCommand {
    /// Plan many units against shared stock: how many the stock can build, with which designs,
    /// what is short; optionally hold the parts.
    #[command(after_help = PLAN_EXAMPLES)]
    Plan(PlanArgs),
    /// What to buy so the stock can build a plan (least cost), or what is running low.
    #[command(after_help = REORDER_EXAMPLES)]
    Reorder(ReorderArgs),
}

/// Where the plan comes from, shared by `plan` and `reorder`.
#[derive(Debug, clap::Args)]
pub struct PlanSource {
    /// Plan file (TOML).
    #[arg(value_name = "FILE")]
    pub file: Option<PathBuf>,
    /// An inline stage instead of a file (repeatable): pulse:20ms, astable:2Hz:55..70%, …
    #[arg(long = "stage", value_name = "STAGE", conflicts_with = "file")]
    pub stages: Vec<String>,
    /// Units to build (overrides the file's).
    #[arg(long)]
    pub units: Option<u32>,
    /// Plan name for inline stages (the name holds are kept under).
    #[arg(long, default_value = "inline plan")]
    pub name: String,
    /// Tolerance of inline stages.
    #[arg(long, default_value = "2%", value_name = "PERCENT")]
    pub tol: String,
    /// Timer family of inline stages: bipolar or cmos.
    #[arg(long, default_value = "bipolar")]
    pub family: String,
    /// Supply of inline stages.
    #[arg(long, default_value = "9V", value_name = "VOLTS")]
    pub vcc: String,
    /// Candidate designs the search offers per stage.
    #[arg(long, default_value_t = 24, value_name = "N")]
    pub candidates: usize,
    /// Plan against this CSV (import format) instead of the stock database.
    #[arg(long, value_name = "FILE")]
    pub stock: Option<PathBuf>,
    /// Time limit of each integer-program phase.
    #[arg(long, default_value = "20s", value_name = "TIME")]
    pub time_limit: String,
}

/// Arguments of `plan`.
#[derive(Debug, clap::Args)]
pub struct PlanArgs {
    #[command(flatten)]
    source: PlanSource,
    /// Hold the parts of the buildable units for this plan, under your name (--user).
    #[arg(long)]
    hold: bool,
}

/// Arguments of `reorder`.
#[derive(Debug, clap::Args)]
pub struct ReorderArgs {
    #[command(flatten)]
    source: PlanSource,
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

/// Run a plan command.
pub fn run(cmd: PlanCommand, ctx: &Context, out: &mut dyn Write) -> Result<Status> {
    match cmd {
        PlanCommand::Plan(a) => run_plan(a, ctx, out),
        PlanCommand::Reorder(a) => run_reorder(a, ctx, out),
    }
}

/// Read the plan from the file or the inline stages.
fn load_plan(src: &PlanSource) -> Result<PlanSpec> {
    let mut spec = match &src.file {
        Some(path) => {
            let text = std::fs::read_to_string(path)
                .with_context(|| format!("reading plan file {}", path.display()))?;
            file::parse_plan(&text).with_context(|| format!("plan file {}", path.display()))?
        }
        None if src.stages.is_empty() => bail!("give a plan file, or one or more --stage"),
        None => {
            let tolerance = parse_ratio(&src.tol).map_err(|e| anyhow!(e))?;
            let supply = parse_voltage(&src.vcc).map_err(|e| anyhow!(e))?;
            let stages = src
                .stages
                .iter()
                .map(|t| {
                    let g = stage_of(t)?;
                    let target = match g {
                        StageGoal::Pulse { width } => TargetSpec::Pulse {
                            width: secs(width)?,
                        },
                        StageGoal::Astable { period, duty } => TargetSpec::Astable {
                            period: secs(period)?,
                            duty: match duty {
                                Duty::Range(a, b) => Some((ratio(a)?, ratio(b)?)),
                                Duty::Point(d) => Some((ratio(d - 0.01)?, ratio(d + 0.01)?)),
                                Duty::Any => None,
                            },
                        },
                        StageGoal::Steered { high, low } => TargetSpec::Steered {
                            high: secs(high)?,
                            low: secs(low)?,
                        },
                        StageGoal::Square { period } => TargetSpec::Square {
                            period: secs(period)?,
                        },
                    };
                    Ok(StageSpec {
                        name: t.clone(),
                        target,
                        tolerance,
                        pieces: 3,
                        guarantee: false,
                    })
                })
                .collect::<Result<Vec<_>>>()?;
            PlanSpec {
                name: src.name.clone(),
                units: 1,
                family: src.family.clone(),
                supply,
                stages,
            }
        }
    };
    if let Some(u) = src.units {
        if u == 0 {
            bail!("--units must be at least 1");
        }
        spec.units = u;
    }
    Ok(spec)
}

fn secs(v: f64) -> Result<crate::units::Seconds> {
    crate::units::Seconds::from_si(v).ok_or_else(|| anyhow!("time {v} s out of range"))
}

fn ratio(v: f64) -> Result<Ratio> {
    Ratio::from_si(v).ok_or_else(|| anyhow!("ratio {v} out of range"))
}

/// The search goal and settings of one plan stage.
fn stage_plan(spec: &PlanSpec, s: &StageSpec) -> Result<PlanStage> {
    let family = family_by_name(&spec.family)
        .ok_or_else(|| anyhow!("unknown family {:?}: use bipolar or cmos", spec.family))?;
    let goal = match &s.target {
        TargetSpec::Value {
            kind,
            resistance,
            capacitance,
        } => Goal::Value {
            kind: *kind,
            target: resistance
                .map(|r| r.si())
                .or(capacitance.map(|c| c.si()))
                .unwrap_or(0.0),
        },
        TargetSpec::Pulse { width } => Goal::Stages(vec![StageGoal::Pulse { width: width.si() }]),
        TargetSpec::Astable { period, duty } => Goal::Stages(vec![StageGoal::Astable {
            period: period.si(),
            duty: duty.map_or(Duty::Any, |(a, b)| Duty::Range(a.si(), b.si())),
        }]),
        TargetSpec::Steered { high, low } => Goal::Stages(vec![StageGoal::Steered {
            high: high.si(),
            low: low.si(),
        }]),
        TargetSpec::Square { period } => Goal::Stages(vec![StageGoal::Square {
            period: period.si(),
        }]),
        TargetSpec::Pair { period, width } => {
            let tol = s.tolerance.si();
            if width.si() * (1.0 + tol) >= period.si() * (1.0 - tol) {
                bail!(
                    "stage {:?}: the pulse width must stay below the period even at the edges of the tolerance",
                    s.name
                );
            }
            Goal::Stages(vec![
                StageGoal::Astable {
                    period: period.si(),
                    duty: Duty::Any,
                },
                StageGoal::Pulse { width: width.si() },
            ])
        }
    };
    let timing = !matches!(goal, Goal::Value { .. });
    Ok(PlanStage {
        name: s.name.clone(),
        goal,
        settings: Settings {
            tol: s.tolerance.si(),
            max_pieces: s.pieces,
            alternatives: 1,
            guarantee: s.guarantee,
            family,
            model: crate::timing::Model::real(),
            conditions: Conditions::ideal(spec.supply),
            cap_techs: techs(&[], timing)?,
            min_cap_rating: Some(spec.supply.si() * 1.5),
            time_limit: Some(Duration::from_secs(10)),
            rank: Rank::FewestPieces,
        },
    })
}

fn limits(src: &PlanSource) -> Result<Limits> {
    let t = crate::units::parse_time(&src.time_limit).map_err(|e| anyhow!(e))?;
    if !t.is_positive() {
        bail!("--time-limit must be above zero");
    }
    Ok(Limits {
        per_phase: Duration::from_secs_f64(t.si()),
        ..Limits::default()
    })
}

/// "units 1–12" or "unit 13".
fn unit_span(first: u32, n: u32) -> String {
    if n == 1 {
        format!("unit {first}")
    } else {
        format!("units {first}–{}", first + n - 1)
    }
}

fn proof_text(p: Proof) -> &'static str {
    match p {
        Proof::Optimal => "proven optimal",
        Proof::TimeLimited => {
            "a time limit stopped the integer program: feasible, not proven optimal"
        }
    }
}

fn run_plan(args: PlanArgs, ctx: &Context, out: &mut dyn Write) -> Result<Status> {
    let spec = load_plan(&args.source)?;
    let stages: Vec<PlanStage> = spec
        .stages
        .iter()
        .map(|s| stage_plan(&spec, s))
        .collect::<Result<_>>()?;
    let parts = load_stock(ctx, args.source.stock.as_deref())?;
    let answer = plan::buildable(
        &parts,
        &stages,
        spec.units,
        args.source.candidates,
        limits(&args.source)?,
    )
    .context("planning")?;
    let mut held = None;
    if args.hold && answer.built > 0 {
        if args.source.stock.is_some() {
            bail!("--hold needs the stock database: holds cannot be kept in a --stock CSV");
        }
        let mut store = super::stock::open_store(ctx)?;
        let items: Vec<(i64, i64)> = answer
            .takes
            .iter()
            .map(|&(row, n)| (parts[row].id, i64::try_from(n).unwrap_or(i64::MAX)))
            .collect();
        let why = format!("plan {:?}: {} units", spec.name, answer.built);
        let change = store.hold(&spec.name, &ctx.user, &items, &ctx.user, &why).with_context(|| {
            format!("holding the parts for {:?} (the stock may have changed since it was read: run the plan again)", spec.name)
        })?;
        held = Some(change);
    }
    if ctx.json {
        #[derive(Serialize)]
        struct JUse<'a> {
            units: u32,
            first_unit: u32,
            design: crate::report::find::JDesign<'a>,
        }
        #[derive(Serialize)]
        struct JStage<'a> {
            name: &'a str,
            goal: String,
            candidates: usize,
            designs: Vec<JUse<'a>>,
        }
        let j = serde_json::json!({
            "plan": spec.name,
            "wanted": answer.wanted,
            "built": answer.built,
            "proof": answer.proof,
            "integer_program": answer.size,
            "pieces": answer.pieces,
            "stages": answer.stages.iter().zip(&stages).map(|(sh, st)| {
                let mut first = 1;
                JStage {
                    name: &sh.name,
                    goal: describe_goal(&st.goal, &st.settings),
                    candidates: sh.candidates,
                    designs: sh.uses.iter().enumerate().map(|(i, (d, n))| {
                        let u = JUse { units: *n, first_unit: first, design: jdesign(&parts, i + 1, d) };
                        first += n;
                        u
                    }).collect(),
                }
            }).collect::<Vec<_>>(),
            "takes": answer.takes.iter().map(|&(row, n)| serde_json::json!({
                "part_id": parts[row].id, "part": parts[row].label(), "bin": parts[row].bin,
                "pieces": n, "free": parts[row].available(),
            })).collect::<Vec<_>>(),
            "impossible": answer.impossible,
            "short": answer.short.iter().map(|s| serde_json::json!({
                "stage": s.stage, "units": s.units, "part_id": parts[s.row].id, "part": parts[s.row].label(),
                "bin": parts[s.row].bin, "need": s.need, "left": s.left,
            })).collect::<Vec<_>>(),
            "held": held,
        });
        writeln!(out, "{j}")?;
    } else {
        write_plan(out, &spec, &stages, &parts, &answer)?;
        if let Some(change) = &held {
            writeln!(out)?;
            super::holds::print_change(change, ctx, out)?;
        } else if answer.built > 0 && args.source.stock.is_none() {
            writeln!(
                out,
                "\nNext: add --hold to hold these parts for {:?} under your name.",
                spec.name
            )?;
        }
    }
    Ok(if answer.built >= spec.units {
        Status::Success
    } else {
        Status::NotMet
    })
}

fn write_plan(
    out: &mut dyn Write,
    spec: &PlanSpec,
    stages: &[PlanStage],
    parts: &[Part],
    a: &Buildable,
) -> Result<()> {
    writeln!(
        out,
        "Plan {:?}: {} unit{} of {} stage{}, {} timer at {}",
        spec.name,
        spec.units,
        if spec.units == 1 { "" } else { "s" },
        stages.len(),
        if stages.len() == 1 { "" } else { "s" },
        spec.family,
        spec.supply
    )?;
    writeln!(out)?;
    writeln!(
        out,
        "The stock can build {} of {} units ({}; integer program of {} variables and {} constraints).",
        a.built,
        a.wanted,
        proof_text(a.proof),
        a.size.variables,
        a.size.constraints
    )?;
    for (share, st) in a.stages.iter().zip(stages) {
        writeln!(out)?;
        writeln!(
            out,
            "Stage {:?} — {} ({} candidate designs)",
            share.name,
            describe_goal(&st.goal, &st.settings),
            share.candidates
        )?;
        if share.uses.is_empty() {
            writeln!(out, "  no unit can be built with this stage")?;
        }
        let mut first = 1;
        for (d, n) in &share.uses {
            writeln!(out, "  {}:", unit_span(first, *n))?;
            write_design(out, parts, d, st.goal_stages())?;
            first += n;
        }
    }
    if !a.takes.is_empty() {
        writeln!(out)?;
        writeln!(out, "Takes from stock ({} pieces):", a.pieces)?;
        for &(row, n) in &a.takes {
            let p = &parts[row];
            writeln!(
                out,
                "  {n:>4} × {:<32} {} ({} free)",
                p.label(),
                p.place(),
                p.available()
            )?;
        }
    }
    if !a.impossible.is_empty() {
        writeln!(out)?;
        writeln!(
            out,
            "Nothing in stock can meet these stages: {}. `onhand reorder` says what to buy.",
            a.impossible.join(", ")
        )?;
    }
    if !a.short.is_empty() {
        writeln!(out)?;
        let rest = a.wanted - a.built;
        writeln!(
            out,
            "Short for the other {rest} unit{}:",
            if rest == 1 { "" } else { "s" }
        )?;
        let mut last = "";
        for s in &a.short {
            if s.stage != last {
                let what = if s.units == 1 {
                    "1 unit".to_string()
                } else {
                    format!("{} units", s.units)
                };
                writeln!(
                    out,
                    "  stage {:?}: {what} cannot be built from what is left; its best design lacks",
                    s.stage
                )?;
                last = &s.stage;
            }
            let p = &parts[s.row];
            writeln!(
                out,
                "    {} × {} ({}, {} left)",
                s.need,
                p.label(),
                p.place(),
                s.left
            )?;
        }
        writeln!(
            out,
            "  `onhand reorder` chooses the cheapest purchase that builds them all."
        )?;
    }
    Ok(())
}

trait StageCount {
    fn goal_stages(&self) -> usize;
}

impl StageCount for PlanStage {
    fn goal_stages(&self) -> usize {
        match &self.goal {
            Goal::Stages(s) => s.len(),
            Goal::Value { .. } => 1,
        }
    }
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
/// formula (see `store::neutralise_cell`).
fn write_safe_csv(
    path: &Path,
    header: &[&str],
    rows: impl Iterator<Item = Vec<String>>,
) -> Result<()> {
    let mut w =
        csv::Writer::from_path(path).with_context(|| format!("writing {}", path.display()))?;
    w.write_record(header)?;
    for cells in rows {
        w.write_record(cells.iter().map(|c| crate::store::neutralise_cell(c)))?;
    }
    w.flush()?;
    Ok(())
}

fn money(cents: u64) -> String {
    format!("{}.{:02}", cents / 100, cents % 100)
}

fn value_text(v: Value) -> String {
    crate::store::text::value_text(v)
}

fn run_reorder(args: ReorderArgs, ctx: &Context, out: &mut dyn Write) -> Result<Status> {
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
    let mut parts = load_stock(ctx, args.source.stock.as_deref())?;
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
                cost: money(o.price_cents * u64::from(packs)),
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
        proof_text(order.proof),
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
