//! `onhand plan` and `onhand reorder`: many units of one or more stages against shared stock.
//!
//! The plan file (see [`file`]) or inline `--stage` options become search goals; the pure core
//! (`solve::plan`) finds each stage's candidate designs and the integer program decides how many
//! units use each; this module loads stock, holds parts when asked, and renders. Reorders read a
//! price list (see [`prices`]; a built-in invented one by default).

/// The plan file (its reader lives in the model layer; the old path stays for callers).
pub use crate::model::plan as file;
use crate::report::plan as report_plan;
pub(crate) use crate::report::plan::{claim_text, unit_span};
pub(crate) use crate::solve::plan_file::{plan_answer, stage_plan};
pub mod prices;
mod reorder;
mod sheet;

pub(crate) use sheet::write_find_sheet;

pub use reorder::ReorderArgs;
use reorder::{REORDER_EXAMPLES, run_reorder};

use super::find::stage_of;
use super::{Context, Status};
use crate::solve::allocate::Limits;
use crate::solve::plan::PlanStage;
use crate::solve::{Duty, StageGoal};
use crate::units::{parse_ratio, parse_voltage};
use anyhow::{Context as _, Result, anyhow, bail};
use file::{PlanSpec, StageSpec, TargetSpec};
use std::io::Write;
use std::path::PathBuf;
use std::time::Duration;

const PLAN_EXAMPLES: &str = "\
Examples:
  onhand plan sample-stock/blinker-kit.toml              how many kits the stock can build
  onhand plan kit.toml --units 30 --hold                 ...and hold the parts for you
  onhand plan kit.toml --identical                       every kit the same design per stage
  onhand plan kit.toml --variants 2                      at most two designs per stage
  onhand plan kit.toml --identical --sheet sheets/       printable build sheets and a pick list
  onhand plan --stage astable:2Hz:55..70% --stage pulse:20ms --units 12 --name clocks

A plan file is TOML: name, units, family, supply, tolerance, then one [[stage]] per timer
(form = value, pulse, astable, steered, square or pair). See the README for the schema.
Inline stages: pulse:WIDTH, astable:FREQ[:DUTY], square:FREQ, steered:HIGH:LOW.
Exit status: 0 when every unit can be built, 1 when the stock builds fewer, 2 on error.";

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
    /// Hold the parts of the buildable units for this plan, unit by unit (members "unit 1",
    /// "unit 2", …); what the plan already holds counts, so repeating it holds only what is
    /// missing.
    #[arg(long)]
    hold: bool,
    /// Every unit the same: one design per stage for all units (overrides the file).
    #[arg(long, conflicts_with = "variants")]
    identical: bool,
    /// At most N designs per stage across all units (overrides the file).
    #[arg(long, value_name = "N", value_parser = clap::value_parser!(u32).range(1..=100))]
    variants: Option<u32>,
    /// Write a printable build sheet (HTML) per design variant, and a pick list by bin, here.
    #[arg(long, value_name = "DIR")]
    sheet: Option<PathBuf>,
}

/// Run a plan command.
pub fn run(cmd: PlanCommand, ctx: &Context, out: &mut dyn Write) -> Result<Status> {
    match cmd {
        PlanCommand::Plan(a) => run_plan(a, ctx, out),
        PlanCommand::Reorder(a) => run_reorder(a, ctx, out),
    }
}

/// Read the plan from the file or the inline stages.
pub(super) fn load_plan(src: &PlanSource) -> Result<PlanSpec> {
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
                        StageGoal::Pulse { width } => TargetSpec::Pulse { width },
                        StageGoal::Astable { period, duty } => TargetSpec::Astable {
                            period,
                            duty: match duty {
                                Duty::Window(w) => Some(w),
                                Duty::Any => None,
                            },
                        },
                        StageGoal::Steered { high, low } => TargetSpec::Steered { high, low },
                        StageGoal::Square { period } => TargetSpec::Square { period },
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
            crate::store::text::check_field("--name", &src.name, crate::store::text::MAX_NAME)
                .map_err(anyhow::Error::msg)?;
            PlanSpec {
                name: src.name.clone(),
                units: 1,
                family: src.family.clone(),
                supply,
                stages,
                variants: None,
            }
        }
    };
    if let Some(u) = src.units {
        if u == 0 || u > 10_000 {
            bail!("--units must be 1 … 10000 (as in a plan file), not {u}");
        }
        spec.units = u;
    }
    Ok(spec)
}

pub(super) fn limits(src: &PlanSource) -> Result<Limits> {
    let t = crate::units::parse_time(&src.time_limit).map_err(|e| anyhow!(e))?;
    if !t.is_positive() {
        bail!("--time-limit must be above zero");
    }
    Ok(Limits {
        per_phase: Duration::from_secs_f64(t.si()),
        ..Limits::default()
    })
}

fn run_plan(args: PlanArgs, ctx: &Context, out: &mut dyn Write) -> Result<Status> {
    let spec = load_plan(&args.source)?;
    let parts = super::holds::stock_for_plan(ctx, args.source.stock.as_deref(), &spec.name)?;
    let variants = if args.identical {
        Some(1)
    } else {
        args.variants.or(spec.variants)
    };
    let (stages, answer) = plan_answer(
        &spec,
        &parts,
        args.source.candidates,
        variants,
        limits(&args.source)?,
    )?;
    let mut held = None;
    if args.hold && answer.built > 0 {
        if args.source.stock.is_some() {
            bail!("--hold needs the stock database: holds cannot be kept in a --stock CSV");
        }
        held = Some(super::holds::hold_plan(ctx, &spec.name, &parts, &answer)?);
    }
    let sheets = match &args.sheet {
        Some(dir) if answer.built > 0 => sheet::write_sheets(
            ctx,
            dir,
            &spec.name,
            &format!("{} family at {}", spec.family, spec.supply),
            &spec.supply.to_string(),
            &stages,
            &parts,
            &answer,
        )
        .context("writing the build sheets")?,
        _ => Vec::new(),
    };
    if ctx.json {
        let view = report_plan::PlanView {
            spec: &spec,
            stages: &stages,
            parts: &parts,
            answer: &answer,
        };
        let mut j = report_plan::plan_json(&view);
        j["held"] = serde_json::to_value(&held)?;
        j["sheets"] = serde_json::to_value(&sheets)?;
        writeln!(out, "{j}")?;
    } else {
        report_plan::write_plan(
            out,
            &report_plan::PlanView {
                spec: &spec,
                stages: &stages,
                parts: &parts,
                answer: &answer,
            },
        )?;
        if let Some(dir) = &args.sheet {
            if sheets.is_empty() {
                writeln!(out, "\nNo build sheets: no unit can be built.")?;
            } else {
                writeln!(
                    out,
                    "\nBuild sheets and pick list written to {} ({} files):",
                    dir.display(),
                    sheets.len()
                )?;
                for f in &sheets {
                    writeln!(out, "  {}", f.display())?;
                }
            }
        }
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

pub(super) trait StageCount {
    fn goal_stages(&self) -> usize;
}

impl StageCount for PlanStage {
    fn goal_stages(&self) -> usize {
        self.goal.stage_count()
    }
}
