//! The everyday stock commands: init, add, take, recount, list, show, import, export.
//! (Built in the store work.)

use super::{Context, Status};
use std::io::Write;

/// Stock commands.
#[derive(Debug, clap::Subcommand)]
pub enum StockCommand {
    /// Create the stock database.
    Init,
}

/// Run a stock command.
pub fn run(_cmd: StockCommand, _ctx: &Context, _out: &mut dyn Write) -> anyhow::Result<Status> {
    anyhow::bail!("stock commands are not built yet")
}
