//! `onhand demo`: a tour on the bundled sample stock.

use super::{Context, Status};
use std::io::Write;

/// Arguments of `demo`.
#[derive(Debug, clap::Args)]
pub struct DemoArgs {}

/// Run `demo`.
pub fn run(_args: DemoArgs, _ctx: &Context, _out: &mut dyn Write) -> anyhow::Result<Status> {
    anyhow::bail!("demo is not built yet")
}
