//! `onhand import` and `onhand export`: stock to and from CSV or JSON files.

use super::{Context, Status, describe, open_for_writing, open_store};
use crate::store::{ExportFormat, export};
use anyhow::{Context as _, bail};
use std::io::Write;
use std::path::PathBuf;

pub const IMPORT_EXAMPLES: &str = "\
Examples:
  onhand import delivery.csv --dry-run       what would change; writes nothing
  onhand import delivery.csv
  onhand import backup.json
  onhand export | onhand --db other.db import -    standard input

Columns (any order, any case; value and quantity are required):
  kind,value,tolerance,technology,volts,watts,package,bin,quantity,low,note
Rows matching an existing row (same kind, value, tolerance, technology, package, bin) add
to its count; others become new rows. Any bad cell refuses the whole file, citing row and
column (rows as a spreadsheet numbers them: the header is row 1; JSON items count from 1).
Files and standard input of any size are read row by row.";

pub const EXPORT_EXAMPLES: &str = "\
Examples:
  onhand export > stock.csv
  onhand export --format json --out backup.json";

/// File format of an import or export.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum Format {
    /// Comma-separated values with a header row.
    Csv,
    /// A JSON array of objects keyed by column name.
    Json,
}

/// Arguments of `import`.
#[derive(Debug, clap::Args)]
pub struct ImportArgs {
    /// The file to read; `-` reads standard input.
    pub file: PathBuf,
    /// Report what would change and write nothing.
    #[arg(long)]
    pub dry_run: bool,
    /// File format (default: json for a .json file, else csv).
    #[arg(long, value_enum)]
    pub format: Option<Format>,
}

/// Arguments of `export`.
#[derive(Debug, clap::Args)]
pub struct ExportArgs {
    /// File format (default: csv, or json under --json).
    #[arg(long, value_enum)]
    pub format: Option<Format>,
    /// Write to this file instead of standard output.
    #[arg(long, value_name = "FILE")]
    pub out: Option<PathBuf>,
}

/// Run `import`. The file or standard input is read as a stream, CSV line by line and JSON
/// element by element, into one transaction (all or nothing), so memory stays the same
/// whatever its size: the store keeps counts and the first rows' changes only. A progress line
/// goes to standard error when it is a terminal and the import has run for more than a second
/// (never when piped).
pub fn run_import(a: ImportArgs, ctx: &Context, out: &mut dyn Write) -> anyhow::Result<Status> {
    use std::io::IsTerminal as _;
    // `-` is standard input (CSV unless --format json), as in most tools.
    let stdin = a.file.as_os_str() == "-";
    let format = a.format.unwrap_or_else(|| {
        let is_json = a
            .file
            .extension()
            .is_some_and(|e| e.eq_ignore_ascii_case("json"));
        if is_json { Format::Json } else { Format::Csv }
    });
    let name = if stdin {
        "stdin".to_string()
    } else {
        a.file.file_name().map_or_else(
            || a.file.display().to_string(),
            |n| n.to_string_lossy().into_owned(),
        )
    };
    let source: Box<dyn std::io::Read> = if stdin {
        Box::new(std::io::stdin().lock())
    } else {
        Box::new(
            std::fs::File::open(&a.file)
                .with_context(|| format!("reading {}", a.file.display()))?,
        )
    };
    // A dry run only reads (the store copies itself under a read lock); a real import
    // checks the file's consistency before writing.
    let mut store = if a.dry_run {
        open_store(ctx)?
    } else {
        open_for_writing(ctx)?
    };
    let started = std::time::Instant::now();
    let terminal = std::io::stderr().is_terminal();
    let mut shown = false;
    let mut progress = |rows: usize| {
        if terminal && started.elapsed() > std::time::Duration::from_secs(1) {
            eprint!("\rimporting {}: {rows} rows read", a.file.display());
            shown = true;
        }
    };
    let result = store.import_stream(
        |each| {
            match format {
                Format::Csv => crate::store::each_csv_record(source, each),
                Format::Json => crate::store::each_json_record(source, each),
            }
            Ok(())
        },
        &name,
        &ctx.user,
        a.dry_run,
        &mut progress,
    );
    if shown {
        eprintln!();
    }
    let report = result.with_context(|| format!("importing {}", a.file.display()))?;
    if report.rows == 0 {
        bail!("{} has no data rows", a.file.display());
    }
    if ctx.json {
        crate::cli::json::line(out, &report)?;
        return Ok(Status::Success);
    }
    let (new, add) = if a.dry_run {
        ("would create", "would add")
    } else {
        ("new", "added")
    };
    for line in &report.lines {
        let c = &line.change;
        if c.created {
            writeln!(
                out,
                "row {}: {new} {} × {}",
                line.row,
                c.delta,
                describe(&c.part)
            )?;
        } else {
            writeln!(
                out,
                "row {}: {add} {} to {}: {} → {}",
                line.row,
                c.delta,
                describe(&c.part),
                c.before,
                c.part.quantity
            )?;
        }
    }
    if report.more_lines > 0 {
        let n = report.more_lines;
        writeln!(
            out,
            "… and {n} more {}",
            if n == 1 { "row" } else { "rows" }
        )?;
    }
    writeln!(
        out,
        "{}{} from {}: {} new, {} topped up, {}",
        if a.dry_run {
            "dry run, nothing written — "
        } else {
            "imported "
        },
        crate::units::count(report.rows, "row", "rows"),
        name,
        report.created,
        report.topped_up,
        crate::units::count(report.pieces, "piece", "pieces")
    )?;
    Ok(Status::Success)
}

/// Run `export`.
pub fn run_export(a: ExportArgs, ctx: &Context, out: &mut dyn Write) -> anyhow::Result<Status> {
    let store = open_store(ctx)?;
    // `--json` is honoured: JSON unless a format is named.
    let format = match a.format {
        Some(Format::Csv) => ExportFormat::Csv,
        Some(Format::Json) => ExportFormat::Json,
        None if ctx.json => ExportFormat::Json,
        None => ExportFormat::Csv,
    };
    let (text, n) = export(&store, format)?;
    match &a.out {
        Some(path) => {
            ctx.files().write(path, text.as_bytes())?;
            if ctx.json {
                let v = serde_json::json!({
                    "schema": crate::report::style::JSON_SCHEMA,
                    "exported_rows": n,
                    "file": path.display().to_string(),
                });
                writeln!(out, "{v}")?;
            } else {
                writeln!(
                    out,
                    "exported {} to {}",
                    crate::units::count(n, "row", "rows"),
                    path.display()
                )?;
            }
        }
        None => out.write_all(text.as_bytes())?,
    }
    Ok(Status::Success)
}
