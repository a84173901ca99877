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
}

impl Context {
    /// Resolve the user from `--user`, else the OS user, else "unknown".
    pub fn new(db: Option<PathBuf>, user: Option<String>, json: bool) -> Self {
        let user = user
            .filter(|u| !u.trim().is_empty())
            .or_else(|| std::env::var("USER").ok().filter(|u| !u.is_empty()))
            .or_else(|| std::env::var("USERNAME").ok().filter(|u| !u.is_empty()))
            .unwrap_or_else(|| "unknown".to_string());
        Self { db, user, json }
    }
}
