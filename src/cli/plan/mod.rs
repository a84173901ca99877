//! `onhand plan` and `onhand reorder`: many units of one or more stages against shared stock.
//!
//! The plan file (see [`file`]) or inline `--stage` options become search goals; the pure core
//! (`solve::plan`) finds each stage's candidate designs and the integer program decides how many
//! units use each; this module loads stock, holds parts when asked, and renders. Reorders read a
//! price list (see [`prices`]; a built-in invented one by default).

pub mod file;
pub mod prices;
mod reorder;
mod sheet;

pub(crate) use sheet::write_find_sheet;

pub use reorder::ReorderArgs;
use reorder::{REORDER_EXAMPLES, run_reorder};

use super::find::{stage_of, techs};
use super::{Context, Status};
use crate::report::find::{describe_goal, jdesign, write_design};
use crate::solve::allocate::{Limits, Proof};
use crate::solve::plan::{self, Bound, Buildable, Cover, Mix, PlanStage, StageShare};
use crate::solve::{Duty, Goal, Rank, Settings, StageGoal, family_by_name};
use crate::store::{Part, Value};
use crate::timing::Conditions;
use crate::units::{parse_ratio, parse_voltage};
use anyhow::{Context as _, Result, anyhow, bail};
use file::{PlanSpec, StageSpec, TargetSpec};
use serde::Serialize;
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

/// The search goal and settings of one plan stage.
pub(super) fn stage_plan(spec: &PlanSpec, s: &StageSpec) -> Result<PlanStage> {
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
                .map(Value::Resistance)
                .or(capacitance.map(Value::Capacitance))
                .unwrap_or(Value::None),
        },
        TargetSpec::Pulse { width } => Goal::Stages(vec![StageGoal::Pulse { width: *width }]),
        TargetSpec::Astable { period, duty } => Goal::Stages(vec![StageGoal::Astable {
            period: *period,
            duty: duty.map_or(Duty::Any, Duty::Window),
        }]),
        TargetSpec::Steered { high, low } => Goal::Stages(vec![StageGoal::Steered {
            high: *high,
            low: *low,
        }]),
        TargetSpec::Square { period } => Goal::Stages(vec![StageGoal::Square { period: *period }]),
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
                    period: *period,
                    duty: Duty::Any,
                },
                StageGoal::Pulse { width: *width },
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

/// "units 1–12" or "unit 13".
pub(super) fn unit_span(first: u32, n: u32) -> String {
    if n == 1 {
        format!("unit {first}")
    } else {
        format!("units {first}–{}", first + n - 1)
    }
}

/// What the proof covers: the whole design space, or the candidate lists offered (and which
/// stages had more designs than were offered). `bound` says why the unit count is the most
/// possible even so, when it is; `rest` names what is only proven over the candidates
/// ("fewest pieces", "least cost").
pub(crate) fn claim_text(p: Proof, cover: &[Cover], bound: Option<&Bound>, rest: &str) -> String {
    let base = proof_text(p);
    if p != Proof::Optimal {
        return base.to_string();
    }
    let cut: Vec<&Cover> = cover.iter().filter(|c| !c.complete).collect();
    if cut.is_empty() {
        return format!("{base} over every design that meets the targets");
    }
    let offered: Vec<String> = cover.iter().map(|c| c.offered.to_string()).collect();
    let names: Vec<String> = cut.iter().map(|c| format!("{:?}", c.stage)).collect();
    let most = cover.iter().map(|c| c.offered).max().unwrap_or(0);
    let stopped: Vec<String> = cut
        .iter()
        .filter(|c| c.timed_out)
        .map(|c| format!("{:?}", c.stage))
        .collect();
    let mut left_out = format!(
        "{} {} more designs that were left out — `--candidates {}` offers more",
        names.join(", "),
        if cut.len() == 1 { "has" } else { "have" },
        most.saturating_mul(2).max(1)
    );
    if !stopped.is_empty() {
        left_out += &format!(
            " (the search for {} stopped at its time limit)",
            stopped.join(", ")
        );
    }
    let offered = offered.join(", ");
    match bound {
        Some(Bound::EveryUnit) => format!(
            "every unit is built; {rest} proven only over the {offered} candidate designs offered per stage: {left_out}"
        ),
        Some(Bound::Stage(s)) => format!(
            "no plan can build more: stage {s:?} alone cannot, from the whole stock, over every design it has; {rest} proven only over the {offered} candidate designs offered per stage: {left_out}"
        ),
        None => format!(
            "{base} only over the {offered} candidate designs offered per stage, so a better plan may exist: {left_out}"
        ),
    }
}

/// Positions of the plan that use the same parts wired in different ways (series in one place,
/// parallel in another), as loud warnings: a builder following one unit's list may wire
/// another unit's parts the wrong way.
pub(super) fn wiring_clashes(parts: &[Part], shares: &[StageShare]) -> Vec<String> {
    use std::collections::BTreeMap;
    // parts (by label, sorted) → [(network in words, where)]
    let mut seen: BTreeMap<Vec<String>, Vec<(String, String)>> = BTreeMap::new();
    for share in shares {
        let mut first = 1;
        for (d, n) in &share.uses {
            for p in d.positions.iter().filter(|p| p.rows.len() > 1) {
                let label = |i: usize| {
                    p.rows
                        .get(i)
                        .and_then(|&r| parts.get(r))
                        .map(Part::label)
                        .unwrap_or_default()
                };
                let mut key: Vec<String> = (0..p.rows.len()).map(label).collect();
                key.sort();
                let how = p.net.describe(&label);
                let at = format!("stage {:?} {} {}", share.name, unit_span(first, *n), p.name);
                let list = seen.entry(key).or_default();
                if !list.iter().any(|(h, _)| *h == how) {
                    list.push((how, at));
                }
            }
            first += n;
        }
    }
    seen.into_iter()
        .filter(|(_, ways)| ways.len() > 1)
        .map(|(key, ways)| {
            let ways: Vec<String> = ways
                .iter()
                .map(|(how, at)| format!("{at}: {how}"))
                .collect();
            format!(
                "CAUTION: the same parts ({}) are wired {} different ways in this plan — {}. Check each unit against its own list before soldering.",
                key.join(", "),
                ways.len(),
                ways.join("; ")
            )
        })
        .collect()
}

pub(super) fn proof_text(p: Proof) -> &'static str {
    match p {
        Proof::Optimal => "proven optimal",
        Proof::TimeLimited => {
            "a time limit stopped the integer program: feasible, not proven optimal"
        }
    }
}

/// The plan computation of `onhand plan` on plain values (the web page calls it too): the
/// search goal of each stage, then how many units the stock `parts` builds, with at most
/// `variants` designs per stage when given (the file's own `variants` otherwise applies only
/// where the caller passes it).
pub(crate) fn plan_answer(
    spec: &PlanSpec,
    parts: &[Part],
    candidates: usize,
    variants: Option<u32>,
    limits: Limits,
) -> Result<(Vec<PlanStage>, Buildable)> {
    let stages: Vec<PlanStage> = spec
        .stages
        .iter()
        .map(|s| stage_plan(spec, s))
        .collect::<Result<_>>()?;
    let mix = variants.map_or(Mix::Mixed, |variants| Mix::Kits { variants });
    let answer = plan::plan_units(parts, &stages, spec.units, candidates, mix, limits)
        .context("planning")?;
    Ok((stages, answer))
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
            "schema": crate::report::style::JSON_SCHEMA,
            "plan": spec.name,
            "wanted": answer.wanted,
            "built": answer.built,
            "proof": answer.proof,
            "optimal_over": if answer.cover.iter().all(|c| c.complete) { "every design" } else { "the candidates offered" },
            "cover": answer.cover,
            "units_bound_by": answer.units_bound_by,
            "wiring_warnings": wiring_clashes(&parts, &answer.stages),
            "mix": answer.mix,
            "mixed_built": answer.mixed_built,
            "classes": answer.classes,
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
            "sheets": sheets,
        });
        writeln!(out, "{j}")?;
    } else {
        write_plan(out, &spec, &stages, &parts, &answer)?;
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
    if let Mix::Kits { variants } = a.mix {
        let how = if variants == 1 {
            "identical kits: one design per stage for every unit".to_string()
        } else {
            format!("kits with at most {variants} designs per stage across all units")
        };
        writeln!(out, "Planned as {how}.")?;
    }
    writeln!(
        out,
        "The stock can build {} of {} units ({}; integer program of {} variables and {} constraints).",
        a.built,
        a.wanted,
        claim_text(
            a.proof,
            &a.cover,
            a.units_bound_by.as_ref(),
            "fewest pieces"
        ),
        a.size.variables,
        a.size.constraints
    )?;
    if let Some(mixed) = a.mixed_built {
        let cmp = match mixed.cmp(&a.built) {
            std::cmp::Ordering::Greater => format!(
                "{} more than these kits; drop --identical/--variants to build them",
                mixed - a.built
            ),
            _ => "no more than these kits".to_string(),
        };
        writeln!(
            out,
            "A mixed plan (any design for any unit) from the same candidates builds {mixed} of {} units: {cmp}.",
            a.wanted
        )?;
    }
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
    let clashes = wiring_clashes(parts, &a.stages);
    if !clashes.is_empty() {
        writeln!(out)?;
        for c in &clashes {
            writeln!(out, "{c}")?;
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

pub(super) trait StageCount {
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
