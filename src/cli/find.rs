//! `onhand find`: designs from the drawer. (Built in the search work.)

use super::{Context, Status};
use std::io::Write;

/// Arguments of `find`.
#[derive(Debug, clap::Args)]
pub struct FindArgs {}

/// Run `find`.
pub fn run(_args: FindArgs, _ctx: &Context, _out: &mut dyn Write) -> anyhow::Result<Status> {
    anyhow::bail!("find is not built yet")
}
