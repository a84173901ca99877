//! `onhand check`: evaluate a design handed in as values. (Built in the timing work.)

use super::{Context, Status};
use std::io::Write;

/// Arguments of `check`.
#[derive(Debug, clap::Args)]
pub struct CheckArgs {}

/// Run `check`.
pub fn run(_args: CheckArgs, _ctx: &Context, _out: &mut dyn Write) -> anyhow::Result<Status> {
    anyhow::bail!("check is not built yet")
}
