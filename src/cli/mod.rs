//! The command line: clap types, one module per command, and the dispatcher.
//!
//! Only this folder sees clap. Each command converts its arguments once into plain validated
//! values, opens the store only if it needs it, calls the pure core and hands the result to a
//! renderer in `report`. Exit codes: 0 success or design found, 1 nothing feasible or an electrical
//! check failed, 2 error (bad input, store trouble). A closed output pipe is not an error.

mod check;
mod context;
mod demo;
mod find;
mod holds;
mod member;
mod output;
mod plan;
mod reach;
mod safe_write;
mod series;
mod serve;
mod stock;

use clap::{Parser, Subcommand};
use std::ffi::OsString;
use std::io::Write;

pub use context::Context;
pub use safe_write::FileWriter;

/// How a command ended, when it did not fail outright.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Status {
    /// Done; exit 0.
    Success,
    /// Ran correctly but the answer is "no" (nothing in stock meets the target, a check failed);
    /// exit 1.
    NotMet,
}

/// onhand — design and repair 555/556 timer circuits from the parts you actually have.
#[derive(Debug, Parser)]
#[command(name = "onhand", version, about, long_about = None, after_help = GLOBAL_EXAMPLES)]
pub struct Cli {
    /// Stock database file (created on first use). Default: the platform data directory.
    #[arg(long, global = true, env = "ONHAND_DB", value_name = "PATH")]
    pub db: Option<std::path::PathBuf>,
    /// Who is making this change, for the ledger. Default: the OS user.
    #[arg(long, global = true, env = "ONHAND_USER", value_name = "NAME")]
    pub user: Option<String>,
    /// Machine-readable JSON on stdout instead of tables.
    #[arg(long, global = true)]
    pub json: bool,
    /// Replace output files that already exist (exports, lists, pictures, netlists).
    #[arg(long, global = true)]
    pub force: bool,
    #[command(subcommand)]
    pub command: Command,
}

const GLOBAL_EXAMPLES: &str = "\
Examples:
  onhand demo                               a tour on the bundled sample stock
  onhand init                               create the stock database
  onhand add 4k7 --qty 50 --bin A3          put fifty 4.7 kΩ resistors in bin A3
  onhand list --kind resistor --low         what is running out
  onhand check astable R1=4k7 R2=68k C=10n  what does this board do?
  onhand find pulse 250ms                   a one-shot from the drawer
  onhand plan kit.toml --hold               how many kits the stock builds; hold the parts

Exit status: 0 done/found, 1 nothing in stock meets the target or a check failed, 2 error.";

/// Every command.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// A short tour on the bundled sample stock (needs no database of your own).
    Demo(demo::DemoArgs),
    #[command(flatten)]
    Stock(stock::StockCommand),
    #[command(flatten)]
    Holds(holds::HoldsCommand),
    /// Evaluate a design you hand it: times, frequency, duty, worst case, Monte Carlo, warnings.
    Check(Box<check::CheckArgs>),
    /// Find a design from the parts in stock, with the fewest pieces.
    Find(find::FindArgs),
    #[command(flatten)]
    Plan(plan::PlanCommand),
    /// What the stock can reach: the pulse widths or frequencies its parts give, the holes in a
    /// range, and the one purchase that closes most of each hole.
    Reach(reach::ReachArgs),
    /// Preferred values (IEC 60063 E-series): nearest, next above and below, membership.
    Series(series::SeriesArgs),
    /// Accounts for the web page: add, list, remove members, set a password (from stdin).
    Member(member::MemberArgs),
    /// Serve the web page and JSON API for members at the shared cabinet.
    Serve(serve::ServeArgs),
    /// Print shell completions.
    Completions {
        /// bash, zsh, fish, elvish or powershell.
        shell: clap_complete::Shell,
    },
}

/// Run onhand with these arguments (the first is the program name) and return the exit code.
/// Safe to call more than once in one process.
pub fn run<I, T>(args: I) -> i32
where
    I: IntoIterator<Item = T>,
    T: Into<OsString> + Clone,
{
    let cli = match Cli::try_parse_from(args) {
        Ok(cli) => cli,
        Err(e) => {
            let code = if e.use_stderr() { 2 } else { 0 };
            let _ = e.print();
            return code;
        }
    };
    let stdout = std::io::stdout();
    let mut out = stdout.lock();
    let result = dispatch(cli, &mut out).and_then(|s| {
        out.flush()?;
        Ok(s)
    });
    match result {
        Ok(Status::Success) => 0,
        Ok(Status::NotMet) => 1,
        Err(e) if is_broken_pipe(&e) => 0,
        Err(e) => {
            eprintln!("onhand: error: {e:#}");
            2
        }
    }
}

fn is_broken_pipe(e: &anyhow::Error) -> bool {
    e.chain().any(|c| {
        c.downcast_ref::<std::io::Error>()
            .is_some_and(|io| io.kind() == std::io::ErrorKind::BrokenPipe)
    })
}

pub(crate) fn dispatch(cli: Cli, out: &mut dyn Write) -> anyhow::Result<Status> {
    let mut ctx = Context::new(cli.db, cli.user, cli.json);
    ctx.force = cli.force;
    match cli.command {
        Command::Demo(args) => demo::run(args, &ctx, out),
        Command::Stock(cmd) => stock::run(cmd, &ctx, out),
        Command::Holds(cmd) => holds::run(cmd, &ctx, out),
        Command::Check(args) => check::run(*args, &ctx, out),
        Command::Find(args) => find::run(args, &ctx, out),
        Command::Plan(cmd) => plan::run(cmd, &ctx, out),
        Command::Reach(args) => reach::run(args, &ctx, out),
        Command::Series(args) => series::run(args, &ctx, out),
        Command::Member(args) => member::run(args, &ctx, out),
        Command::Serve(args) => serve::run(args, &ctx, out),
        Command::Completions { shell } => {
            let mut cmd = <Cli as clap::CommandFactory>::command();
            clap_complete::generate(shell, &mut cmd, "onhand", out);
            Ok(Status::Success)
        }
    }
}

#[cfg(test)]
mod tests {
    #[test]
    fn command_definition_is_consistent() {
        <super::Cli as clap::CommandFactory>::command().debug_assert();
    }
}
