//! `onhand member`: the accounts of the web page (`onhand serve`). Adds, lists and removes
//! members and sets passwords; a password is read from standard input, never from the command
//! line (where other users of the machine could see it), and stored as an Argon2id hash.

use super::stock::open_store;
use super::{Context, Status};
use crate::report::table::Table;
use crate::web::auth::hash_password;
use anyhow::{Context as _, bail};
use std::io::{BufRead, Write};

const MEMBER_EXAMPLES: &str = "\
Examples:
  onhand member add ada --organiser           an organiser (imports, recounts, members)
  onhand member add ben                       a member (looks, takes, holds)
  onhand member password ben                  type the password, then Enter
  printf '%s\\n' \"$PW\" | onhand member password ben
  onhand member list
  onhand member remove ben                    the ledger keeps ben's history";

/// Arguments of `member`.
#[derive(Debug, clap::Args)]
#[command(after_help = MEMBER_EXAMPLES)]
pub struct MemberArgs {
    #[command(subcommand)]
    action: Action,
}

#[derive(Debug, clap::Subcommand)]
enum Action {
    /// Add a member (then set their password with `onhand member password NAME`).
    Add {
        /// Login name, also the name the ledger records.
        name: String,
        /// Also imports, recounts, manages members and releases anyone's hold.
        #[arg(long)]
        organiser: bool,
    },
    /// List the members.
    List,
    /// Remove a member; their sessions end, the ledger keeps their name.
    Remove {
        /// Login name.
        name: String,
    },
    /// Set a member's password, read as one line from standard input (8 characters or more).
    /// Ends the member's open sessions.
    Password {
        /// Login name.
        name: String,
    },
}

/// Run `member`.
pub fn run(args: MemberArgs, ctx: &Context, out: &mut dyn Write) -> anyhow::Result<Status> {
    let mut store = open_store(ctx)?;
    match args.action {
        Action::Add { name, organiser } => {
            let m = store.add_member(&name, organiser)?;
            if ctx.json {
                crate::cli::json::line(out, &m)?;
            } else {
                let right = if m.organiser { "organiser" } else { "member" };
                writeln!(
                    out,
                    "added {} ({right}); set a password with: onhand member password {}",
                    m.name, m.name
                )?;
            }
        }
        Action::List => {
            let list = store.members()?;
            if ctx.json {
                crate::cli::json::pretty(out, &list)?;
            } else if list.is_empty() {
                writeln!(
                    out,
                    "no members yet; add one with: onhand member add NAME --organiser"
                )?;
            } else {
                let mut t = Table::new(["name", "right", "password", "since"]);
                for m in &list {
                    t.row([
                        m.name.clone(),
                        if m.organiser { "organiser" } else { "member" }.to_string(),
                        if m.has_password { "set" } else { "not set" }.to_string(),
                        m.created_at.clone(),
                    ]);
                }
                writeln!(out, "{}", t.render(ctx.style))?;
            }
        }
        Action::Remove { name } => {
            let m = store.remove_member(&name)?;
            if ctx.json {
                crate::cli::json::line(out, &serde_json::json!({"removed": m}))?;
            } else {
                writeln!(out, "removed {}; the ledger keeps their history", m.name)?;
            }
        }
        Action::Password { name } => {
            if store.member(&name)?.is_none() {
                bail!("no member named {name:?}; see `onhand member list`");
            }
            let mut line = String::new();
            std::io::stdin()
                .lock()
                .read_line(&mut line)
                .context("reading the password from standard input")?;
            let password = line.trim_end_matches(['\n', '\r']);
            let phc = hash_password(password)?;
            let m = store.set_member_password(&name, &phc)?;
            if ctx.json {
                crate::cli::json::line(out, &serde_json::json!({"password_set": m.name}))?;
            } else {
                writeln!(
                    out,
                    "password set for {}; their other sessions were ended",
                    m.name
                )?;
            }
        }
    }
    Ok(Status::Success)
}
