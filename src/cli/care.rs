//! The ledger and row-care commands: `log`, `undo`, `remove`, `merge`, `backup`, `restore`.
//!
//! Thin: arguments become row ids, filters and paths; the store does each change in one
//! transaction ([`Store::undo`], [`Store::remove_row`], [`Store::merge_rows`]) and this module
//! prints what happened. `log` lives in `log.rs`, `backup`/`restore` in `backup.rs`.

use super::stock::{Narrow, describe, open_for_writing, reason, resolve_part};
use super::{Context, Status};
use crate::store::{Store, Undo, UndoTarget};
use anyhow::bail;
use std::io::Write;

const UNDO_EXAMPLES: &str = "\
Examples:
  onhand undo --dry-run          what undoing my last change would write
  onhand undo                    undo my last change (a take, an add, a hold, a use …)
  onhand undo 1234               undo the change that ledger entry 1234 belongs to

Undo writes new, compensating ledger entries that name the change they revert; history is
never edited. A change is everything one command wrote (all the holds of `plan --hold`, all
the units of `use --units 5`). Refused, with nothing written, when the change was already
undone or the stock has moved on (the pieces an add brought were taken since …). Entries
are numbered in `onhand log`.";

const REMOVE_EXAMPLES: &str = "\
Examples:
  onhand remove '#7'             put away an empty row (no pieces, no holds)

The row leaves every list and search; its history stays in `onhand log` and `onhand show`.
Adding to it again (`onhand add '#7' --qty 3`, or the same part and bin) brings it back.";

const MERGE_EXAMPLES: &str = "\
Examples:
  onhand merge '#12' --into '#7'   the same part filed in two bins: move #12's pieces to #7

Only rows that are the same part (kind, value, tolerance, technology, package, ratings) and
differ in bin or note can be merged. Pieces and live holds move with ledger entries on both
rows; the emptied row is removed (its history stays).";

/// Ledger and row-care commands.
#[derive(Debug, clap::Subcommand)]
pub enum CareCommand {
    /// The ledger across the store: who took what, when, for which plan (text, JSON, CSV).
    #[command(after_help = super::log::LOG_EXAMPLES)]
    Log(super::log::LogArgs),
    /// Revert your last change (or a named one) with compensating ledger entries.
    #[command(after_help = UNDO_EXAMPLES)]
    Undo(UndoArgs),
    /// Put away an empty stock row (its history stays).
    #[command(after_help = REMOVE_EXAMPLES)]
    Remove(RemoveArgs),
    /// Merge two rows that are the same part into one (the ledger of both is kept).
    #[command(after_help = MERGE_EXAMPLES)]
    Merge(MergeArgs),
    /// A consistent copy of the whole store (parts, holds, ledger) while others keep working.
    #[command(after_help = super::backup::BACKUP_EXAMPLES)]
    Backup(super::backup::BackupArgs),
    /// Check a backup and replace the store with it.
    #[command(after_help = super::backup::RESTORE_EXAMPLES)]
    Restore(super::backup::RestoreArgs),
}

/// Arguments of `undo`.
#[derive(Debug, clap::Args)]
pub struct UndoArgs {
    /// A ledger entry (as numbered by `onhand log`): undo the change it belongs to. Default:
    /// your last change that is not undone.
    #[arg(value_name = "ENTRY")]
    pub entry: Option<String>,
    /// Show what would be written; write nothing.
    #[arg(long)]
    pub dry_run: bool,
}

/// Arguments of `remove`.
#[derive(Debug, clap::Args)]
pub struct RemoveArgs {
    /// The row: #7 (or a value that names exactly one row).
    pub part: String,
    #[command(flatten)]
    pub narrow: Narrow,
}

/// Arguments of `merge`.
#[derive(Debug, clap::Args)]
pub struct MergeArgs {
    /// The row to empty and remove: #12.
    pub from: String,
    /// The row that keeps the pieces: #7.
    #[arg(long, value_name = "ROW")]
    pub into: String,
    /// Reason for the ledger (default: "merge #FROM into #INTO").
    #[arg(long)]
    pub why: Option<String>,
}

/// Run a ledger or row-care command.
pub fn run(cmd: CareCommand, ctx: &Context, out: &mut dyn Write) -> anyhow::Result<Status> {
    match cmd {
        CareCommand::Log(a) => super::log::run(a, ctx, out),
        CareCommand::Undo(a) => run_undo(a, ctx, out),
        CareCommand::Remove(a) => run_remove(a, ctx, out),
        CareCommand::Merge(a) => run_merge(a, ctx, out),
        CareCommand::Backup(a) => super::backup::run_backup(a, ctx, out),
        CareCommand::Restore(a) => super::backup::run_restore(a, ctx, out),
    }
}

/// `#12` or `12` as a number.
fn entry_number(text: &str) -> anyhow::Result<i64> {
    let t = text.trim();
    let digits = t.strip_prefix('#').unwrap_or(t);
    match digits.parse::<i64>() {
        Ok(n) if n > 0 => Ok(n),
        _ => bail!("{t:?} is not a ledger entry number (see `onhand log`)"),
    }
}

/// A row given by number only (`#12` or `12`), removed rows included.
fn row_number(store: &Store, text: &str) -> anyhow::Result<crate::store::Part> {
    let t = text.trim();
    let digits = t.strip_prefix('#').unwrap_or(t);
    match digits.parse::<i64>() {
        Ok(n) if n > 0 => Ok(store.part(n)?),
        _ => bail!("{t:?} is not a row number: write #12"),
    }
}

fn run_undo(a: UndoArgs, ctx: &Context, out: &mut dyn Write) -> anyhow::Result<Status> {
    let target = match &a.entry {
        Some(e) => UndoTarget::Entry(entry_number(e)?),
        None => UndoTarget::LastOf,
    };
    let mut store = open_for_writing(ctx)?;
    let undo = store.undo(target, &ctx.user, a.dry_run)?;
    print_undo(&undo, &store, ctx, out)?;
    Ok(Status::Success)
}

fn print_undo(
    undo: &Undo,
    store: &Store,
    ctx: &Context,
    out: &mut dyn Write,
) -> anyhow::Result<()> {
    if ctx.json {
        crate::cli::json::line(out, undo)?;
        return Ok(());
    }
    let when = store
        .time_local(&undo.at)
        .unwrap_or_else(|_| undo.at.clone());
    writeln!(
        out,
        "{} change #{} by {} at {when} ({}): {} entr{}",
        if undo.dry_run {
            "dry run, nothing written — would undo"
        } else {
            "undid"
        },
        undo.change_id,
        undo.who,
        undo.why,
        undo.lines.len(),
        if undo.lines.len() == 1 { "y" } else { "ies" }
    )?;
    for l in &undo.lines {
        let mut moved = Vec::new();
        if l.delta != 0 {
            moved.push(format!("{:+} on the shelf", l.delta));
        }
        if l.held_delta != 0 {
            let plan = l.entry.plan.as_deref().unwrap_or("?");
            moved.push(format!("{:+} held for plan {plan:?}", l.held_delta));
        }
        if moved.is_empty() {
            moved.push("nothing to move".into());
        }
        writeln!(
            out,
            "  entry #{}: {}: {} → {} on the shelf, {} held",
            l.entry.id,
            describe(&l.part),
            moved.join(", "),
            l.part.quantity,
            l.part.held
        )?;
    }
    Ok(())
}

fn run_remove(a: RemoveArgs, ctx: &Context, out: &mut dyn Write) -> anyhow::Result<Status> {
    let mut store = open_for_writing(ctx)?;
    let part = resolve_part(&store, &a.part, &a.narrow)?;
    let removed = store.remove_row(part.id)?;
    if ctx.json {
        crate::cli::json::line(out, &serde_json::json!({ "removed": removed }))?;
    } else {
        writeln!(
            out,
            "removed row {} (empty, no holds); its history stays in `onhand log --part '#{}'`",
            describe(&removed),
            removed.id
        )?;
    }
    Ok(Status::Success)
}

fn run_merge(a: MergeArgs, ctx: &Context, out: &mut dyn Write) -> anyhow::Result<Status> {
    let mut store = open_for_writing(ctx)?;
    let from = row_number(&store, &a.from)?;
    let into = row_number(&store, &a.into)?;
    let why = reason(a.why, &format!("merge #{} into #{}", from.id, into.id))?;
    let m = store.merge_rows(from.id, into.id, &ctx.user, &why)?;
    if ctx.json {
        crate::cli::json::line(out, &m)?;
        return Ok(Status::Success);
    }
    writeln!(
        out,
        "merged #{} into {}: {} piece{} moved, now {} on the shelf, {} held; #{} is removed",
        m.from.id,
        describe(&m.into),
        m.pieces,
        if m.pieces == 1 { "" } else { "s" },
        m.into.quantity,
        m.into.held,
        m.from.id
    )?;
    for (plan, member, n) in &m.holds {
        let member = if member.is_empty() {
            String::new()
        } else {
            format!(" [{member}]")
        };
        writeln!(out, "  hold moved: {n} for plan {plan:?}{member}")?;
    }
    Ok(Status::Success)
}
