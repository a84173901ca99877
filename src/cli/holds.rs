//! `onhand hold`, `release`, `use` and `holds`: reserving parts for a plan by hand, giving them
//! back, building them into units, and listing what is held.
//!
//! Thin: arguments become part row ids and counts, the store does the work in one transaction
//! ([`Store::hold`], [`Store::release`], [`Store::use_held`]), and [`print_change`] shows the
//! result; other commands (plans) call the same store functions and may reuse the printer.

use super::stock::{
    Narrow, describe, low_warning, open_for_writing, open_store, reason, resolve_part,
};
use super::{Context, Status};
use crate::store::{Hold, HoldAction, HoldChange, HoldFilter, Part, Store};
use anyhow::{Context as _, bail};
use comfy_table::{CellAlignment, Table, presets};
use serde::Serialize;
use std::collections::BTreeMap;
use std::io::Write;

const HOLD_EXAMPLES: &str = "\
Examples:
  onhand hold --plan organ-lfo 4.7k=2 100n=1        two 4.7 kΩ and one 100 nF for a plan
  onhand hold --plan clocks --member 'unit 3' '#12=4' '#30=1'
  onhand hold --plan fuzz 68k=2 --bin A3 --why 'fuzz box rebuild'

PART is a row id (#12 or 12) or a value, as for `onhand take`; --bin, --tech and --kind
narrow a value down. All or nothing: if any part has too few free pieces, nothing is held
and the message lists every shortfall. Held pieces are left out of new designs, cannot be
taken with `take`, and leave the shelf only through `onhand use`.";

const RELEASE_EXAMPLES: &str = "\
Examples:
  onhand release --plan organ-lfo                   every hold of the plan back to free stock
  onhand release --plan clocks --member 'unit 3'    only that member's holds
  onhand release --plan fuzz 68k '#30'              only the plan's holds of these parts";

const USE_EXAMPLES: &str = "\
Examples:
  onhand use --plan organ-lfo                       everything the plan holds was built in
  onhand use --plan clocks --member 'unit 3'
  onhand use --plan fuzz 68k=1 --why 'first board'  one held 68 kΩ was built in

Used pieces leave the shelf and the hold together; the ledger records both.";

const HOLDS_EXAMPLES: &str = "\
Examples:
  onhand holds
  onhand holds --plan clocks --member 'unit 3'
  onhand holds --all --json                         also holds released or used to 0";

/// Holding parts for plans.
#[derive(Debug, clap::Subcommand)]
pub enum HoldsCommand {
    /// Hold (reserve) parts for a plan so no other design or take counts on them.
    #[command(after_help = HOLD_EXAMPLES)]
    Hold(HoldArgs),
    /// Give a plan's held parts back to free stock.
    #[command(after_help = RELEASE_EXAMPLES)]
    Release(ReleaseArgs),
    /// Held parts were built into units: take them off the shelf and out of the hold.
    #[command(after_help = USE_EXAMPLES)]
    Use(UseArgs),
    /// List holds as a table (or JSON with --json).
    #[command(after_help = HOLDS_EXAMPLES)]
    Holds(ListArgs),
}

/// Arguments of `hold`.
#[derive(Debug, clap::Args)]
pub struct HoldArgs {
    /// The plan the parts are held for.
    #[arg(long, value_name = "NAME")]
    pub plan: String,
    /// The member of the plan (a unit, a stage); default: the plan as a whole.
    #[arg(long, value_name = "NAME", default_value = "")]
    pub member: String,
    /// What to hold: PART=QTY, e.g. 4.7k=2 or '#12=4'.
    #[arg(required = true, value_name = "PART=QTY")]
    pub items: Vec<String>,
    /// Reason for the ledger (default: "hold for PLAN").
    #[arg(long)]
    pub why: Option<String>,
    #[command(flatten)]
    pub narrow: Narrow,
}

/// Arguments of `release`.
#[derive(Debug, clap::Args)]
pub struct ReleaseArgs {
    /// The plan whose holds go back.
    #[arg(long, value_name = "NAME")]
    pub plan: String,
    /// Only this member's holds.
    #[arg(long, value_name = "NAME")]
    pub member: Option<String>,
    /// Only the holds of these parts (row id or value); default: every hold of the plan.
    #[arg(value_name = "PART")]
    pub parts: Vec<String>,
    /// Reason for the ledger (default: "release from PLAN").
    #[arg(long)]
    pub why: Option<String>,
    #[command(flatten)]
    pub narrow: Narrow,
}

/// Arguments of `use`.
#[derive(Debug, clap::Args)]
pub struct UseArgs {
    /// The plan whose held parts were built in.
    #[arg(long, value_name = "NAME")]
    pub plan: String,
    /// Only this member's holds.
    #[arg(long, value_name = "NAME")]
    pub member: Option<String>,
    /// How many of which: PART=QTY; default: everything the plan (or member) holds.
    #[arg(value_name = "PART=QTY")]
    pub items: Vec<String>,
    /// Reason for the ledger (default: "built for PLAN").
    #[arg(long)]
    pub why: Option<String>,
    #[command(flatten)]
    pub narrow: Narrow,
}

/// Arguments of `holds`.
#[derive(Debug, clap::Args)]
pub struct ListArgs {
    /// Only this plan.
    #[arg(long, value_name = "NAME")]
    pub plan: Option<String>,
    /// Only this member.
    #[arg(long, value_name = "NAME")]
    pub member: Option<String>,
    /// Also holds that were released or used down to 0.
    #[arg(long)]
    pub all: bool,
}

/// Run a holds command.
pub fn run(cmd: HoldsCommand, ctx: &Context, out: &mut dyn Write) -> anyhow::Result<Status> {
    match cmd {
        HoldsCommand::Hold(a) => run_hold(a, ctx, out),
        HoldsCommand::Release(a) => run_release(a, ctx, out),
        HoldsCommand::Use(a) => run_use(a, ctx, out),
        HoldsCommand::Holds(a) => run_list(a, ctx, out),
    }
}

/// Read `PART=QTY` arguments into (part row id, pieces), resolving each PART as `take` does.
pub fn parse_items(
    store: &Store,
    items: &[String],
    narrow: &Narrow,
) -> anyhow::Result<Vec<(i64, i64)>> {
    items
        .iter()
        .map(|item| {
            let Some((part, qty)) = item.rsplit_once('=') else {
                bail!("{item:?}: write PART=QTY, e.g. 4.7k=2 or '#12=4'");
            };
            let qty: i64 = qty
                .trim()
                .parse()
                .with_context(|| format!("{item:?}: {qty:?} is not a whole number of pieces"))?;
            if qty <= 0 {
                bail!("{item:?}: the count must be 1 or more");
            }
            let part = resolve_part(store, part, narrow).with_context(|| format!("{item:?}"))?;
            Ok((part.id, qty))
        })
        .collect()
}

fn run_hold(a: HoldArgs, ctx: &Context, out: &mut dyn Write) -> anyhow::Result<Status> {
    for (what, name) in [("--plan", &a.plan), ("--member", &a.member)] {
        crate::store::text::check_field(what, name, crate::store::text::MAX_NAME)
            .map_err(anyhow::Error::msg)?;
    }
    let why = reason(a.why, &format!("hold for {}", a.plan.trim()))?;
    let mut store = open_for_writing(ctx)?;
    let items = parse_items(&store, &a.items, &a.narrow)?;
    let change = store.hold(&a.plan, &a.member, &items, &ctx.user, &why)?;
    print_change(&change, ctx, out)?;
    Ok(Status::Success)
}

fn run_release(a: ReleaseArgs, ctx: &Context, out: &mut dyn Write) -> anyhow::Result<Status> {
    let why = reason(a.why, &format!("release from {}", a.plan.trim()))?;
    let mut store = open_for_writing(ctx)?;
    let parts = a
        .parts
        .iter()
        .map(|p| Ok(resolve_part(&store, p, &a.narrow)?.id))
        .collect::<anyhow::Result<Vec<i64>>>()?;
    let change = store.release(&a.plan, a.member.as_deref(), &parts, &ctx.user, &why)?;
    print_change(&change, ctx, out)?;
    Ok(Status::Success)
}

fn run_use(a: UseArgs, ctx: &Context, out: &mut dyn Write) -> anyhow::Result<Status> {
    let why = reason(a.why, &format!("built for {}", a.plan.trim()))?;
    let mut store = open_for_writing(ctx)?;
    let items = if a.items.is_empty() {
        None
    } else {
        Some(parse_items(&store, &a.items, &a.narrow)?)
    };
    let change = store.use_held(
        &a.plan,
        a.member.as_deref(),
        items.as_deref(),
        &ctx.user,
        &why,
    )?;
    print_change(&change, ctx, out)?;
    Ok(Status::Success)
}

/// Print what a hold, release or use did: JSON with `--json`, else one line per hold moved,
/// with the part's counts after the change.
pub fn print_change(change: &HoldChange, ctx: &Context, out: &mut dyn Write) -> anyhow::Result<()> {
    if ctx.json {
        writeln!(out, "{}", serde_json::to_string(change)?)?;
        return Ok(());
    }
    let verb = match change.action {
        HoldAction::Hold => "held for",
        HoldAction::Release => "released from",
        HoldAction::Use => "used for",
    };
    writeln!(
        out,
        "{verb} plan {:?}: {} piece{} in {} hold{}",
        change.plan,
        change.pieces(),
        if change.pieces() == 1 { "" } else { "s" },
        change.lines.len(),
        if change.lines.len() == 1 { "" } else { "s" }
    )?;
    for l in &change.lines {
        let member = if l.hold.member.is_empty() {
            String::new()
        } else {
            format!(" [{}]", l.hold.member)
        };
        let p = &l.part;
        writeln!(
            out,
            "  {}{member}: {:+} → {} held for the plan; part: {} on the shelf, {} held, {} free",
            describe(p),
            l.held_delta,
            l.hold.quantity,
            p.quantity,
            p.held,
            p.available()
        )?;
    }
    if change.action == HoldAction::Use {
        let mut warned = Vec::new();
        for l in &change.lines {
            if let Some(w) = low_warning(&l.part).filter(|_| !warned.contains(&l.part.id)) {
                warned.push(l.part.id);
                writeln!(out, "{w}")?;
            }
        }
    }
    Ok(())
}

/// One hold with its part, for `holds --json`.
#[derive(Serialize)]
struct Listed<'a> {
    #[serde(flatten)]
    hold: &'a Hold,
    part: &'a Part,
}

fn run_list(a: ListArgs, ctx: &Context, out: &mut dyn Write) -> anyhow::Result<Status> {
    let store = open_store(ctx)?;
    let holds = store
        .holds(&HoldFilter {
            plan: a.plan,
            member: a.member,
            part: None,
            closed: a.all,
        })
        .context("reading holds")?;
    let mut parts: BTreeMap<i64, Part> = BTreeMap::new();
    for h in &holds {
        if let std::collections::btree_map::Entry::Vacant(slot) = parts.entry(h.part_id) {
            slot.insert(store.part(h.part_id)?);
        }
    }
    let part_of = |h: &Hold| {
        parts
            .get(&h.part_id)
            .with_context(|| format!("part #{} of hold #{} is missing", h.part_id, h.id))
    };
    if ctx.json {
        let listed = holds
            .iter()
            .map(|h| {
                Ok(Listed {
                    hold: h,
                    part: part_of(h)?,
                })
            })
            .collect::<anyhow::Result<Vec<_>>>()?;
        writeln!(out, "{}", serde_json::to_string_pretty(&listed)?)?;
        return Ok(Status::Success);
    }
    if holds.is_empty() {
        writeln!(out, "no holds")?;
        return Ok(Status::Success);
    }
    let mut t = Table::new();
    t.load_style(presets::UTF8_FULL_CONDENSED);
    t.set_header(vec![
        "plan",
        "member",
        "part",
        "held",
        "since (UTC)",
        "who",
        "note",
    ]);
    for h in &holds {
        t.add_row(vec![
            h.plan.clone(),
            h.member.clone(),
            describe(part_of(h)?),
            h.quantity.to_string(),
            h.created_at.clone(),
            h.who.clone(),
            h.note.clone(),
        ]);
    }
    if let Some(c) = t.column_mut(3) {
        c.set_cell_alignment(CellAlignment::Right);
    }
    writeln!(out, "{t}")?;
    let pieces: i64 = holds.iter().map(|h| h.quantity).sum();
    let plans: std::collections::BTreeSet<&str> = holds.iter().map(|h| h.plan.as_str()).collect();
    writeln!(
        out,
        "{} holds, {pieces} pieces, {} plan{}",
        holds.len(),
        plans.len(),
        if plans.len() == 1 { "" } else { "s" }
    )?;
    Ok(Status::Success)
}
