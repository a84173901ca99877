//! `onhand take` and `onhand recount`: draw parts, and set a row to a fresh count.

use super::{
    Context, Narrow, Status, describe, low_warning, open_for_writing, pieces, reason, resolve_part,
};
use crate::store::Change;
use std::io::Write;

pub const TAKE_EXAMPLES: &str = "\
Examples:
  onhand take '#12' --qty 2 --why 'repair: organ LFO'
  onhand take 4.7k --bin A3                  one piece of the 4.7 kΩ in bin A3

PART is a row id (#12 or 12) or a value; if a value matches several rows, the error lists
them and --bin, --tech or --kind narrow it down. Pieces held for a plan (see `onhand holds`)
are not taken: release the hold, or draw them for the plan with `onhand use --plan NAME`.";

pub const RECOUNT_EXAMPLES: &str = "\
Examples:
  onhand recount '#12' 37                    I counted 37; the ledger records the difference
  onhand recount 100n 18 --bin C2

A count below the pieces held for plans is refused, naming the plans: release those holds
first (`onhand release --plan NAME`), then recount.";

/// Arguments of `take`.
#[derive(Debug, clap::Args)]
pub struct TakeArgs {
    /// Row id (#12) or value (4.7k).
    pub part: String,
    /// How many pieces.
    #[arg(
        long,
        default_value_t = 1,
        allow_negative_numbers = true,
        value_name = "N"
    )]
    pub qty: i64,
    /// Reason for the ledger (default: "take").
    #[arg(long)]
    pub why: Option<String>,
    #[command(flatten)]
    pub narrow: Narrow,
}

/// Arguments of `recount`.
#[derive(Debug, clap::Args)]
pub struct RecountArgs {
    /// Row id (#12) or value (4.7k).
    pub part: String,
    /// The count you made.
    #[arg(allow_negative_numbers = true)]
    pub counted: i64,
    /// Reason for the ledger (default: "recount").
    #[arg(long)]
    pub why: Option<String>,
    #[command(flatten)]
    pub narrow: Narrow,
}

fn print(change: &Change, verb: &str, ctx: &Context, out: &mut dyn Write) -> anyhow::Result<()> {
    if ctx.json {
        crate::cli::json::line(out, change)?;
        return Ok(());
    }
    let p = &change.part;
    writeln!(
        out,
        "{verb} {}: {} → {} ({:+})",
        describe(p),
        change.before,
        p.quantity,
        change.delta
    )?;
    if let Some(w) = low_warning(p) {
        writeln!(out, "{w}")?;
    }
    Ok(())
}

/// Run `take`.
pub fn run_take(a: TakeArgs, ctx: &Context, out: &mut dyn Write) -> anyhow::Result<Status> {
    let qty = pieces("--qty", a.qty, 1, "take at least one piece")?;
    let why = reason(a.why, "take")?;
    let mut store = open_for_writing(ctx)?;
    let part = resolve_part(&store, &a.part, &a.narrow)?;
    let change = store.take(part.id, qty, &ctx.user, &why)?;
    print(&change, &format!("took {} from", a.qty), ctx, out)?;
    Ok(Status::Success)
}

/// Run `recount`.
pub fn run_recount(a: RecountArgs, ctx: &Context, out: &mut dyn Write) -> anyhow::Result<Status> {
    let counted = pieces("the counted quantity", a.counted, 0, "")?;
    let why = reason(a.why, "recount")?;
    let mut store = open_for_writing(ctx)?;
    let part = resolve_part(&store, &a.part, &a.narrow)?;
    let change = store.recount(part.id, counted, &ctx.user, &why)?;
    print(&change, "recounted", ctx, out)?;
    Ok(Status::Success)
}
