//! `onhand backup` and `onhand restore`: a consistent copy of the whole store while others keep
//! writing, and putting one back after checking it.
//!
//! A backup is either a single SQLite file made with SQLite's online backup API (the default)
//! or a full JSON export (parts, holds and ledger with their ids). Both go through the one file
//! writer (`ctx.files()`): never onto the database or its `-wal`/`-shm`, never over an existing
//! file without `--force`, via a temporary file in the same folder that is renamed into place.

use super::stock::{open_store, store_path};
use super::{Context, Status};
use crate::store::backup::looks_like_sqlite;
use crate::store::{Contents, FullExport, Store};
use anyhow::{Context as _, bail};
use std::io::Write;
use std::path::{Path, PathBuf};

pub const BACKUP_EXAMPLES: &str = "\
Examples:
  onhand backup ~/backups/stock-2026-12-01.db     one SQLite file, consistent, while others work
  onhand backup stock.json                         a full JSON export: parts, holds, ledger
  onhand restore ~/backups/stock-2026-12-01.db --dry-run

Copying the .db file alone is not a backup: recent changes may still be in the -wal file
beside it, and a copy put back next to a stale -wal comes out damaged. This command reads
the store the way SQLite's own readers do and writes one self-contained file. The backup
is never written onto the store itself, nor over an existing file without --force.";

pub const RESTORE_EXAMPLES: &str = "\
Examples:
  onhand restore backup.db --dry-run     check it and say what it holds; change nothing
  onhand restore backup.db               replace the store with it
  onhand restore stock.json              from a full JSON export

The file is checked first: a SQLite database (or a full JSON export) that passes SQLite's
integrity check, of a schema version no newer than this onhand, whose counts re-derive from
its ledger. An older schema is upgraded on the way in. The store is replaced in one step
that other onhand processes see whole. Everything changed since the backup is replaced too:
make a fresh backup first if in doubt.";

/// The form of a backup.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum BackupFormat {
    /// One SQLite database file (SQLite's online backup API).
    Sqlite,
    /// A full JSON export: parts, holds and ledger with their ids.
    FullJson,
}

/// Arguments of `backup`.
#[derive(Debug, clap::Args)]
pub struct BackupArgs {
    /// The backup file to write (a new file; --force replaces one).
    pub file: PathBuf,
    /// Backup form (default: full-json for a .json file, else sqlite).
    #[arg(long, value_enum)]
    pub format: Option<BackupFormat>,
}

/// Arguments of `restore`.
#[derive(Debug, clap::Args)]
pub struct RestoreArgs {
    /// The backup to restore: a SQLite backup or a full JSON export.
    pub file: PathBuf,
    /// Check the backup and say what it holds; change nothing.
    #[arg(long)]
    pub dry_run: bool,
}

fn summary(c: &Contents) -> String {
    format!(
        "{} rows, {} pieces on the shelves, {} held, {} ledger entries{} (schema version {})",
        c.rows,
        c.pieces,
        c.held,
        c.entries,
        c.newest
            .as_deref()
            .map(|t| format!(", newest {t} UTC"))
            .unwrap_or_default(),
        c.schema_version
    )
}

/// A fresh temporary path in `dir` for SQLite to write the copy to.
fn temp_in(dir: &Path, name: &str) -> anyhow::Result<PathBuf> {
    for attempt in 0..100u32 {
        let p = dir.join(format!(
            ".{name}.{}.{attempt}.backup-tmp",
            std::process::id()
        ));
        if !p.exists() {
            return Ok(p);
        }
    }
    bail!("cannot find a free temporary name in {}", dir.display())
}

/// Run `backup`.
pub fn run_backup(a: BackupArgs, ctx: &Context, out: &mut dyn Write) -> anyhow::Result<Status> {
    let format = a.format.unwrap_or_else(|| {
        if a.file
            .extension()
            .is_some_and(|e| e.eq_ignore_ascii_case("json"))
        {
            BackupFormat::FullJson
        } else {
            BackupFormat::Sqlite
        }
    });
    let store = open_store(ctx)?;
    let files = ctx.files();
    let contents = match format {
        BackupFormat::FullJson => {
            let full = store.full_export()?;
            let mut bytes = serde_json::to_vec_pretty(&full)?;
            bytes.push(b'\n');
            files.write(&a.file, &bytes)?;
            store.contents()?
        }
        BackupFormat::Sqlite => {
            let dir = match a.file.parent() {
                Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
                _ => PathBuf::from("."),
            };
            let name = a
                .file
                .file_name()
                .map(|n| n.to_string_lossy().into_owned())
                .unwrap_or_else(|| "backup".into());
            let tmp = temp_in(&dir, &name)?;
            let made = store.backup_to(&tmp);
            let result = made.and_then(|c| {
                std::fs::read(&tmp)
                    .map(|bytes| (c, bytes))
                    .map_err(|e| crate::store::StoreError::Invalid(e.to_string()))
            });
            let _ = std::fs::remove_file(&tmp);
            let (c, bytes) =
                result.with_context(|| format!("backing up to {}", a.file.display()))?;
            files.write(&a.file, &bytes)?;
            c
        }
    };
    if ctx.json {
        writeln!(
            out,
            "{}",
            serde_json::json!({ "file": a.file, "format": match format {
                BackupFormat::Sqlite => "sqlite", BackupFormat::FullJson => "full-json" },
                "contents": contents })
        )?;
    } else {
        writeln!(
            out,
            "backed up the store to {}: {}",
            a.file.display(),
            summary(&contents)
        )?;
    }
    Ok(Status::Success)
}

/// Run `restore`.
pub fn run_restore(a: RestoreArgs, ctx: &Context, out: &mut dyn Write) -> anyhow::Result<Status> {
    let db = store_path(ctx)?;
    if super::safe_write::same_file(&a.file, &db) {
        bail!(
            "{} is the stock database itself; restore from a backup file",
            a.file.display()
        );
    }
    if !a.file.exists() {
        bail!("{} does not exist", a.file.display());
    }
    let mut store = open_store(ctx)?;
    let before = store.contents()?;
    let is_sqlite = looks_like_sqlite(&a.file);
    let full: Option<FullExport> = if is_sqlite {
        None
    } else {
        let text = std::fs::read_to_string(&a.file)
            .with_context(|| format!("reading {}", a.file.display()))?;
        Some(serde_json::from_str(&text).with_context(|| {
            format!(
                "{} is neither a SQLite backup nor a full JSON export of onhand",
                a.file.display()
            )
        })?)
    };
    let after = match (&full, a.dry_run) {
        (None, true) => Store::check_backup(&a.file)?,
        (None, false) => store.restore_from(&a.file)?,
        (Some(f), dry) => store.restore_full_export(f, !dry)?,
    };
    if ctx.json {
        writeln!(
            out,
            "{}",
            serde_json::json!({ "file": a.file, "dry_run": a.dry_run, "before": before,
                "after": after })
        )?;
        return Ok(Status::Success);
    }
    if a.dry_run {
        writeln!(
            out,
            "dry run, nothing changed — {} passes its checks and holds {}",
            a.file.display(),
            summary(&after)
        )?;
        writeln!(out, "the store holds now {}", summary(&before))?;
    } else {
        writeln!(
            out,
            "restored the store from {}: {}",
            a.file.display(),
            summary(&after)
        )?;
        writeln!(out, "before the restore it held {}", summary(&before))?;
    }
    Ok(Status::Success)
}
