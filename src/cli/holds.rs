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
use crate::report::table::Table;
use crate::solve::plan::Buildable;
use crate::store::{Hold, HoldAction, HoldChange, HoldFilter, Part, Store, unit_of, units_text};
use anyhow::{Context as _, bail};
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
  onhand release --plan fuzz 68k '#30'              only the plan's holds of these parts
  onhand release --plan 'blinker kit' --units 3     the last 3 units a plan holds go back

`plan --hold` files each unit's kit under its own member (unit 1, unit 2, …), so a plan
can be released unit by unit; the ledger names the unit of every entry.";

const USE_EXAMPLES: &str = "\
Examples:
  onhand use --plan organ-lfo                       everything the plan holds was built in
  onhand use --plan clocks --member 'unit 3'
  onhand use --plan fuzz 68k=1 --why 'first board'  one held 68 kΩ was built in
  onhand use --plan 'blinker kit' --units 5         five kits were built (units 1–5)

Used pieces leave the shelf and the hold together; the ledger records both, and for a
plan held unit by unit (`plan --hold`) it names the unit of every entry.";

const HOLDS_EXAMPLES: &str = "\
Examples:
  onhand holds
  onhand holds --plan clocks --member 'unit 3'
  onhand holds --all --json                         also holds released or used to 0
  onhand holds --stale                              holds made 14 days ago or earlier
  onhand holds --stale 3d                           ... or 3 days ago (30m, 12h, 3d, 2w)

A live hold made STALE_DAYS (14) days ago or earlier is marked stale in the list: our own
default for a shared cabinet, not a trade figure; `--stale AGE` lists only holds at least
that old.";

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
    #[arg(value_name = "PART", conflicts_with = "units")]
    pub parts: Vec<String>,
    /// Release this many whole units of a plan held unit by unit (the highest-numbered first).
    #[arg(long, value_name = "N", conflicts_with = "member")]
    pub units: Option<u32>,
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
    #[arg(value_name = "PART=QTY", conflicts_with = "units")]
    pub items: Vec<String>,
    /// Use this many whole units of a plan held unit by unit (the lowest-numbered first).
    #[arg(long, value_name = "N", conflicts_with = "member")]
    pub units: Option<u32>,
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
    /// Only holds made at least this long ago (default 14d): 30m, 12h, 3d, 2w.
    #[arg(long, value_name = "AGE", num_args = 0..=1, default_missing_value = "14d")]
    pub stale: Option<String>,
}

/// A live hold made this many days ago or earlier is marked stale in `holds` (our own default
/// for a shared cabinet, not a trade figure).
pub const STALE_DAYS: i64 = 14;

/// Whether a live hold is old enough to be marked stale.
fn is_stale(h: &Hold) -> bool {
    h.quantity > 0 && h.age_seconds >= STALE_DAYS * 86_400
}

/// Read an age such as `30m`, `12h`, `3d`, `2w` into seconds.
pub fn parse_age(text: &str) -> anyhow::Result<i64> {
    let t = text.trim();
    let bad = || anyhow::anyhow!("cannot read {t:?} as an age: write 30m, 12h, 3d or 2w");
    let unit = t.chars().last().ok_or_else(bad)?;
    let n: i64 = t[..t.len() - unit.len_utf8()].parse().map_err(|_| bad())?;
    let per = match unit.to_ascii_lowercase() {
        'm' => 60,
        'h' => 3600,
        'd' => 86_400,
        'w' => 7 * 86_400,
        _ => return Err(bad()),
    };
    if n < 0 {
        return Err(bad());
    }
    n.checked_mul(per).ok_or_else(bad)
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
    if let Some(n) = a.units {
        let (change, units) = store.release_units(&a.plan, Some(n), &ctx.user, &why)?;
        print_units(&change, &units, ctx, out)?;
        return Ok(Status::Success);
    }
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
    if let Some(n) = a.units {
        let (change, units) = store.use_units(&a.plan, n, &ctx.user, &why)?;
        print_units(&change, &units, ctx, out)?;
        return Ok(Status::Success);
    }
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
        crate::cli::json::line(out, change)?;
        return Ok(());
    }
    let verb = match change.action {
        HoldAction::Hold => "held for",
        HoldAction::Release => "released from",
        HoldAction::Use => "used for",
    };
    if change.lines.is_empty() {
        writeln!(
            out,
            "plan {:?} already holds exactly this: nothing changed",
            change.plan
        )?;
        return Ok(());
    }
    if change.lines.len() > SHOWN_HOLD_LINES {
        return print_summary(change, verb, out);
    }
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

/// Above this many holds moved, a change is shown part by part instead of hold by hold.
const SHOWN_HOLD_LINES: usize = 12;

/// A change over many holds (a plan held unit by unit), one line per part: pieces moved, the
/// units they belong to, and the part's counts after.
fn print_summary(change: &HoldChange, verb: &str, out: &mut dyn Write) -> anyhow::Result<()> {
    let mut per: BTreeMap<i64, (i64, i64, Vec<u32>, &Part)> = BTreeMap::new();
    for l in &change.lines {
        let e = per.entry(l.part.id).or_insert((0, 0, Vec::new(), &l.part));
        if l.held_delta > 0 {
            e.0 += l.held_delta;
        } else {
            e.1 += -l.held_delta;
        }
        e.2.extend(unit_of(&l.hold.member));
        e.3 = &l.part;
    }
    let mut units: Vec<u32> = change
        .lines
        .iter()
        .filter_map(|l| unit_of(&l.hold.member))
        .collect();
    units.sort_unstable();
    units.dedup();
    let scope = if units.is_empty() {
        String::new()
    } else {
        format!(", {}", units_text(&units))
    };
    writeln!(
        out,
        "{verb} plan {:?}: {} pieces in {} holds{scope}",
        change.plan,
        change.pieces(),
        change.lines.len()
    )?;
    for (up, down, us, p) in per.values() {
        let moved = match (*up, *down) {
            (u, 0) => format!("+{u}"),
            (0, d) => format!("-{d}"),
            (u, d) => format!("+{u} -{d}"),
        };
        let which = if us.is_empty() {
            String::new()
        } else {
            format!(" ({})", units_text(us))
        };
        writeln!(
            out,
            "  {}: {moved}{which}; part: {} on the shelf, {} held, {} free",
            describe(p),
            p.quantity,
            p.held,
            p.available()
        )?;
    }
    Ok(())
}

/// Print a use or release of whole units: which units, then the change.
fn print_units(
    change: &HoldChange,
    units: &[u32],
    ctx: &Context,
    out: &mut dyn Write,
) -> anyhow::Result<()> {
    if ctx.json {
        writeln!(
            out,
            "{}",
            serde_json::json!({ "units": units, "change": change })
        )?;
        return Ok(());
    }
    let verb = if change.action == HoldAction::Use {
        "built"
    } else {
        "released"
    };
    writeln!(
        out,
        "{verb} {} of plan {:?}",
        units_text(units),
        change.plan
    )?;
    print_change(change, ctx, out)
}

/// The stock a plan may draw on: every row as `find` loads it, with the pieces this plan's
/// units already hold counted as free to it, so planning again sees its own holds and
/// `--hold` then holds only what is missing. From a `--stock` CSV there are no holds.
pub fn stock_for_plan(
    ctx: &Context,
    stock: Option<&std::path::Path>,
    plan: &str,
) -> anyhow::Result<Vec<Part>> {
    let parts = super::find::load_stock(ctx, stock)?;
    if stock.is_some() || plan.trim().is_empty() {
        return Ok(parts);
    }
    let store = open_store(ctx)?;
    Ok(own_holds_free(&store, parts, plan)?)
}

/// `parts` (every row, as `find` loads them) with the pieces `plan`'s units already hold
/// counted as free to it: the store half of [`stock_for_plan`], also used by the web page.
pub fn own_holds_free(
    store: &Store,
    mut parts: Vec<Part>,
    plan: &str,
) -> Result<Vec<Part>, crate::store::StoreError> {
    if plan.trim().is_empty() {
        return Ok(parts);
    }
    let holds = store.holds(&HoldFilter {
        plan: Some(plan.to_string()),
        ..Default::default()
    })?;
    for h in holds.iter().filter(|h| unit_of(&h.member).is_some()) {
        if let Some(p) = parts.iter_mut().find(|p| p.id == h.part_id) {
            p.held -= h.quantity;
        }
    }
    Ok(parts)
}

/// Each built unit's kit as (part row id, pieces), unit by unit, from a plan's answer: unit
/// `k` of a stage takes the design whose span of units covers `k`. Checked against the
/// answer's totals.
pub fn unit_kits(parts: &[Part], answer: &Buildable) -> anyhow::Result<Vec<Vec<(i64, i64)>>> {
    let built = usize::try_from(answer.built)?;
    let mut kits: Vec<Vec<(i64, i64)>> = vec![Vec::new(); built];
    for stage in &answer.stages {
        let mut unit = 0usize;
        for (design, n) in &stage.uses {
            for _ in 0..*n {
                if let Some(kit) = kits.get_mut(unit) {
                    for pos in &design.positions {
                        for &row in &pos.rows {
                            let part = parts.get(row).context("a design names a missing row")?;
                            kit.push((part.id, 1));
                        }
                    }
                }
                unit += 1;
            }
        }
    }
    let mut totals: BTreeMap<i64, i64> = BTreeMap::new();
    for kit in &kits {
        for &(id, n) in kit {
            *totals.entry(id).or_insert(0) += n;
        }
    }
    let mut want: BTreeMap<i64, i64> = BTreeMap::new();
    for &(row, n) in &answer.takes {
        let part = parts.get(row).context("the plan names a missing row")?;
        *want.entry(part.id).or_insert(0) += i64::try_from(n)?;
    }
    if totals != want {
        bail!("the plan's units do not add up to its pieces; nothing was held");
    }
    Ok(kits)
}

/// Hold a plan's answer unit by unit (`plan --hold`): each unit's kit under member `unit N`,
/// counting what the plan already holds, so running it again (or another member planning the
/// same plan later) holds only what is missing. Units already built (used) keep their numbers
/// and are not held again; no more units are held than the plan still wants.
pub fn hold_plan(
    ctx: &Context,
    plan: &str,
    parts: &[Part],
    answer: &Buildable,
) -> anyhow::Result<HoldChange> {
    let mut store = open_for_writing(ctx)?;
    hold_plan_in(&mut store, &ctx.user, plan, parts, answer)
}

/// The store half of [`hold_plan`]: hold the answer's units in `store`, recorded as `who`
/// (the web page calls it inside `Store::as_member`).
pub fn hold_plan_in(
    store: &mut Store,
    who: &str,
    plan: &str,
    parts: &[Part],
    answer: &Buildable,
) -> anyhow::Result<HoldChange> {
    let kits = unit_kits(parts, answer)?;
    let built = store.built_units(plan)?;
    let still = usize::try_from(answer.wanted)?.saturating_sub(built.len());
    let numbered: Vec<(u32, Vec<(i64, i64)>)> = (1u32..)
        .filter(|u| !built.contains(u))
        .zip(kits)
        .take(still)
        .collect();
    let why = format!("plan {:?}: {} units", plan.trim(), numbered.len());
    let change = store
        .set_unit_holds(plan, &numbered, who, &why)
        .with_context(|| {
            format!(
                "holding the parts for {plan:?} (the stock may have changed since it was read: \
                 run the plan again)"
            )
        })?;
    Ok(change)
}

/// One hold with its part, for `holds --json`.
#[derive(Serialize)]
struct Listed<'a> {
    #[serde(flatten)]
    hold: &'a Hold,
    part: &'a Part,
    stale: bool,
}

fn run_list(a: ListArgs, ctx: &Context, out: &mut dyn Write) -> anyhow::Result<Status> {
    let store = open_store(ctx)?;
    let holds = store
        .holds(&HoldFilter {
            plan: a.plan,
            member: a.member,
            part: None,
            closed: a.all,
            older_than: a.stale.as_deref().map(parse_age).transpose()?,
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
                    stale: is_stale(h),
                })
            })
            .collect::<anyhow::Result<Vec<_>>>()?;
        crate::cli::json::pretty(out, &listed)?;
        return Ok(Status::Success);
    }
    if holds.is_empty() {
        writeln!(
            out,
            "{}",
            if a.stale.is_some() {
                "no stale holds"
            } else {
                "no holds"
            }
        )?;
        return Ok(Status::Success);
    }
    let mut t = Table::new([
        "plan",
        "member",
        "part",
        "held",
        "since (UTC)",
        "state",
        "who",
        "note",
    ])
    .right_aligned(&[3]);
    for h in &holds {
        t.row([
            h.plan.clone(),
            h.member.clone(),
            describe(part_of(h)?),
            h.quantity.to_string(),
            h.created_at.clone(),
            if is_stale(h) {
                "stale".to_string()
            } else {
                String::new()
            },
            h.who.clone(),
            h.note.clone(),
        ]);
    }
    writeln!(out, "{}", t.render(ctx.style))?;
    let pieces: i64 = holds.iter().map(|h| h.quantity).sum();
    let plans: std::collections::BTreeSet<&str> = holds.iter().map(|h| h.plan.as_str()).collect();
    writeln!(
        out,
        "{} holds, {pieces} pieces, {} plan{}{}",
        holds.len(),
        plans.len(),
        if plans.len() == 1 { "" } else { "s" },
        match holds.iter().filter(|h| is_stale(h)).count() {
            0 => String::new(),
            n => format!(", {n} stale (made {STALE_DAYS} days ago or earlier)"),
        }
    )?;
    Ok(Status::Success)
}
