//! The command line: clap types, one module per command, and the dispatcher.
//!
//! Only this folder sees clap. Each command converts its arguments once into plain validated
//! values, opens the store only if it needs it, calls the pure core and hands the result to a
//! renderer in `report`. Exit codes: 0 success or design found, 1 nothing feasible or an electrical
//! check failed, 2 error (bad input, store trouble). A closed output pipe is not an error.

mod backup;
mod care;
mod check;
mod context;
mod demo;
pub(crate) mod find;
pub(crate) mod holds;
mod json;
mod log;
mod member;
mod output;
pub(crate) mod plan;
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
    /// Stopped at a time limit before anything was found or ruled out; exit 3.
    Stopped,
}

/// onhand — design and repair 555/556 timer circuits from the parts you actually have.
#[derive(Debug, Parser)]
#[command(name = "onhand", version, about, long_about = None, after_help = GLOBAL_EXAMPLES)]
pub struct Cli {
    /// Stock database file (created on first use). Default: the platform data directory.
    #[arg(long, global = true, env = "ONHAND_DB", value_name = "PATH")]
    pub db: Option<std::path::PathBuf>,
    /// Who is making the change, for the ledger (commands that change the stock: add, take,
    /// recount, import, hold, release, use, plan --hold). Default: the OS user.
    #[arg(long, global = true, env = "ONHAND_USER", value_name = "NAME")]
    pub user: Option<String>,
    /// Machine-readable JSON on stdout instead of tables (errors as JSON on stderr).
    #[arg(long, global = true)]
    pub json: bool,
    /// Plain tab-separated tables without colour, as when the output is piped.
    #[arg(long, global = true)]
    pub plain: bool,
    /// Replace output files that already exist (exports, lists, pictures, netlists).
    #[arg(long, global = true)]
    pub force: bool,
    #[command(subcommand)]
    pub command: Command,
}

/// The options every command takes; shown once, in the top-level help.
const GLOBAL_OPTIONS: [&str; 5] = ["db", "user", "json", "plain", "force"];

const GLOBAL_EXAMPLES: &str = "\
Examples:
  onhand demo                               a tour on the bundled sample stock
  onhand init                               create the stock database
  onhand add 4k7 --qty 50 --bin A3          put fifty 4.7 kΩ resistors in bin A3
  onhand add marking:472 --qty 20           a chip resistor printed 472 (4.7 kΩ)
  onhand list --kind resistor --low         what is running out
  onhand check astable R1=4k7 R2=68k C=10n  what does this board do?
  onhand find pulse 250ms                   a one-shot from the drawer
  onhand plan kit.toml --hold               how many kits the stock builds; hold the parts

The options above work with every command, before or after its name (onhand list --json).
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
    #[command(flatten)]
    Care(care::CareCommand),
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

/// The command definition as the user sees it: the global options are listed once, in the
/// top-level help, and hidden from every subcommand's help (they still work there).
pub fn command() -> clap::Command {
    let mut cmd = <Cli as clap::CommandFactory>::command();
    cmd.build();
    hide_globals(&mut cmd);
    cmd
}

fn hide_globals(cmd: &mut clap::Command) {
    for sub in cmd.get_subcommands_mut() {
        // `mut_args` keeps the order of the arguments, which the built command's flag index
        // relies on (`mut_arg` would move the argument to the end).
        let mut c = std::mem::take(sub).mut_args(|a| {
            if GLOBAL_OPTIONS.contains(&a.get_id().as_str()) {
                a.hide(true)
            } else {
                a
            }
        });
        hide_globals(&mut c);
        *sub = c;
    }
}

/// Whether the arguments ask for JSON, read before (or without) a successful parse so that
/// even a usage error is reported as JSON.
fn wants_json<T: Into<OsString> + Clone>(args: &[T]) -> bool {
    args.iter()
        .skip(1)
        .map(|a| a.clone().into())
        .take_while(|a| a != "--")
        .any(|a| a == "--json")
}

/// The code of an error under `--json`: `usage` (the command line itself), `bad_value` (a value
/// that cannot be read), `store` (the database), `io` (files, streams), `failed` (the rest).
fn error_code(e: &anyhow::Error) -> &'static str {
    for c in e.chain() {
        if c.downcast_ref::<crate::units::ParseError>().is_some()
            || c.downcast_ref::<crate::model::DutyError>().is_some()
            || c.downcast_ref::<crate::model::UnknownName>().is_some()
        {
            return "bad_value";
        }
        if c.downcast_ref::<crate::store::StoreError>().is_some() {
            return "store";
        }
        if c.downcast_ref::<std::io::Error>().is_some() {
            return "io";
        }
    }
    "failed"
}

/// Print an error in the one style: `error: …` as the argument parser starts its own, or under
/// `--json` one JSON object on stderr.
fn report_error(json: bool, code: &str, message: &str) {
    if json {
        let v = serde_json::json!({
            "schema": crate::report::style::JSON_SCHEMA,
            "error": { "code": code, "message": message },
        });
        eprintln!("{v}");
    } else {
        eprintln!("error: {message}");
    }
}

/// Run onhand with these arguments (the first is the program name) and return the exit code.
/// Safe to call more than once in one process.
pub fn run<I, T>(args: I) -> i32
where
    I: IntoIterator<Item = T>,
    T: Into<OsString> + Clone,
{
    let args: Vec<T> = args.into_iter().collect();
    let json = wants_json(&args);
    let parsed = command().try_get_matches_from(args).and_then(|m| {
        refuse_user_on_reading(&m)?;
        <Cli as clap::FromArgMatches>::from_arg_matches(&m)
    });
    let cli = match parsed {
        Ok(cli) => cli,
        Err(e) if !e.use_stderr() => {
            // --help, --version: printed on stdout; a closed pipe is not an error.
            let _ = e.print();
            return 0;
        }
        Err(e) if json => {
            let text = e.render().to_string();
            let message = text.trim().trim_start_matches("error: ").to_string();
            report_error(true, "usage", &message);
            return 2;
        }
        Err(e) => {
            let _ = e.print();
            return 2;
        }
    };
    let stdout = std::io::stdout();
    let style = {
        use std::io::IsTerminal as _;
        let no_colour = std::env::var_os("NO_COLOR").is_some_and(|v| !v.is_empty());
        crate::report::style::Style::choose(stdout.is_terminal(), cli.plain, no_colour)
    };
    let mut out = stdout.lock();
    let result = dispatch(cli, style, &mut out).and_then(|s| {
        out.flush()?;
        Ok(s)
    });
    match result {
        Ok(Status::Success) => 0,
        Ok(Status::NotMet) => 1,
        Ok(Status::Stopped) => 3,
        Err(e) if is_broken_pipe(&e) => 0,
        Err(e) => {
            report_error(json, error_code(&e), &format!("{e:#}"));
            2
        }
    }
}

/// Commands that never change the stock or the ledger, so `--user` (who makes a change) means
/// nothing to them. `ONHAND_USER` from the environment is still fine everywhere.
const READING_COMMANDS: [&str; 12] = [
    "list",
    "show",
    "export",
    "holds",
    "log",
    "backup",
    "check",
    "find",
    "reorder",
    "reach",
    "series",
    "completions",
];

/// Refuse `--user` typed on a command that writes nothing, in the argument parser's style.
fn refuse_user_on_reading(m: &clap::ArgMatches) -> Result<(), clap::Error> {
    let typed = m.value_source("user") == Some(clap::parser::ValueSource::CommandLine)
        || m.subcommand().is_some_and(|(_, sub)| {
            sub.try_get_raw("user").is_ok_and(|v| v.is_some())
                && sub.value_source("user") == Some(clap::parser::ValueSource::CommandLine)
        });
    match m.subcommand_name() {
        Some(name) if typed && READING_COMMANDS.contains(&name) => Err(command().error(
            clap::error::ErrorKind::ArgumentConflict,
            format!(
                "--user names who makes a change for the ledger; `{name}` changes nothing \
                 (use it with add, take, recount, import, hold, release, use, plan --hold, undo, \
                 remove, merge, restore)"
            ),
        )),
        _ => Ok(()),
    }
}

fn is_broken_pipe(e: &anyhow::Error) -> bool {
    e.chain().any(|c| {
        c.downcast_ref::<std::io::Error>()
            .is_some_and(|io| io.kind() == std::io::ErrorKind::BrokenPipe)
    })
}

pub(crate) fn dispatch(
    cli: Cli,
    style: crate::report::style::Style,
    out: &mut dyn Write,
) -> anyhow::Result<Status> {
    dispatch_with(cli, style, out, None)
}

/// [`dispatch`], with every file written through `writer` (plus the database's protection)
/// when an enclosing command gives one.
pub(crate) fn dispatch_with(
    cli: Cli,
    style: crate::report::style::Style,
    out: &mut dyn Write,
    writer: Option<FileWriter>,
) -> anyhow::Result<Status> {
    let mut ctx = Context::new(cli.db, cli.user, cli.json);
    ctx.force = cli.force;
    ctx.style = if cli.json {
        crate::report::style::Style::PLAIN
    } else {
        style
    };
    ctx.writer = writer;
    ctx.check()?;
    match cli.command {
        Command::Demo(args) => demo::run(args, &ctx, out),
        Command::Stock(cmd) => stock::run(cmd, &ctx, out),
        Command::Holds(cmd) => holds::run(cmd, &ctx, out),
        Command::Care(cmd) => care::run(cmd, &ctx, out),
        Command::Check(args) => check::run(*args, &ctx, out),
        Command::Find(args) => find::run(args, &ctx, out),
        Command::Plan(cmd) => plan::run(cmd, &ctx, out),
        Command::Reach(args) => reach::run(args, &ctx, out),
        Command::Series(args) => series::run(args, &ctx, out),
        Command::Member(args) => member::run(args, &ctx, out),
        Command::Serve(args) => serve::run(args, &ctx, out),
        Command::Completions { shell } => {
            // Generated into memory first: the generator panics on a failed write, and a
            // closed pipe (`| head -3`) must end quietly instead.
            let mut cmd = command();
            let mut text = Vec::new();
            clap_complete::generate(shell, &mut cmd, "onhand", &mut text);
            out.write_all(&text)?;
            Ok(Status::Success)
        }
    }
}

#[cfg(test)]
mod tests {
    #[test]
    fn command_definition_is_consistent() {
        <super::Cli as clap::CommandFactory>::command().debug_assert();
        super::command().debug_assert();
    }
}
