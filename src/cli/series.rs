//! `onhand series`: preferred-number look-ups. (Built in the units work.)

use super::{Context, Status};
use std::io::Write;

/// Arguments of `series`.
#[derive(Debug, clap::Args)]
pub struct SeriesArgs {}

/// Run `series`.
pub fn run(_args: SeriesArgs, _ctx: &Context, _out: &mut dyn Write) -> anyhow::Result<Status> {
    anyhow::bail!("series is not built yet")
}
