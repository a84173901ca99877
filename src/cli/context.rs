//! What every command may need: where the store is, who is acting, whether to print JSON.

use std::path::PathBuf;

/// Settings shared by all commands, resolved once from the global options.
#[derive(Debug, Clone)]
pub struct Context {
    /// The database file given by `--db` / `ONHAND_DB`, if any.
    pub db: Option<PathBuf>,
    /// Who is acting, for the ledger.
    pub user: String,
    /// JSON output instead of tables.
    pub json: bool,
    /// Replace output files that already exist.
    pub force: bool,
    /// How to draw tables and findings on stdout (boxes and colour on a terminal only).
    pub style: crate::report::style::Style,
    /// A writer set up by an enclosing command (the demo: its own folder, the user's database
    /// still protected); [`Context::files`] adds this context's database to it.
    pub writer: Option<super::FileWriter>,
}

impl Context {
    /// The one writer every output file goes through: it never writes onto the stock database
    /// (given by `--db` or the default location), never replaces a file without `--force`.
    pub fn files(&self) -> super::FileWriter {
        let db = self
            .db
            .clone()
            .or_else(|| crate::store::Store::default_path().ok());
        match (&self.writer, db) {
            (Some(w), Some(db)) => w.clone().protecting(&db),
            (Some(w), None) => w.clone(),
            (None, db) => super::FileWriter::new(db.as_deref(), self.force),
        }
    }

    /// Refuse a user name that holds control characters or is too long (it goes into the
    /// ledger and is printed by `show`).
    pub fn check(&self) -> anyhow::Result<()> {
        crate::store::text::check_field(
            "the user name (--user)",
            &self.user,
            crate::store::text::MAX_NAME,
        )
        .map_err(anyhow::Error::msg)
    }

    /// Resolve the user from `--user`, else the OS user, else "unknown".
    pub fn new(db: Option<PathBuf>, user: Option<String>, json: bool) -> Self {
        let user = user
            .filter(|u| !u.trim().is_empty())
            .or_else(|| std::env::var("USER").ok().filter(|u| !u.is_empty()))
            .or_else(|| std::env::var("LOGNAME").ok().filter(|u| !u.is_empty()))
            .or_else(|| std::env::var("USERNAME").ok().filter(|u| !u.is_empty()))
            .or_else(account_name)
            .unwrap_or_else(|| "unknown".to_string());
        Self {
            db,
            user,
            json,
            force: false,
            style: crate::report::style::Style::PLAIN,
            writer: None,
        }
    }
}

/// The login name of the process's user from the system account list, when the environment
/// does not say (services and containers often run without `USER`). Linux-style files; `None`
/// elsewhere.
fn account_name() -> Option<String> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let uid = status
        .lines()
        .find_map(|l| l.strip_prefix("Uid:"))?
        .split_whitespace()
        .next()?
        .to_string();
    let passwd = std::fs::read_to_string("/etc/passwd").ok()?;
    passwd.lines().find_map(|l| {
        let mut f = l.split(':');
        let name = f.next()?;
        let _password = f.next()?;
        (f.next()? == uid && !name.is_empty()).then(|| name.to_string())
    })
}
