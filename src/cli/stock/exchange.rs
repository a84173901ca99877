//! `onhand import` and `onhand export`: stock to and from CSV or JSON files.

use super::{Context, Status, describe, open_for_writing, open_store};
use crate::store::{ExportFormat, export, read_csv, read_json};
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
column (row 1 is the first line after the header).";

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

/// The largest import file read (our cap: a 200 000-row stock is about 15 MB). A bigger file is
/// refused before it is read, so a runaway cell cannot fill the memory.
const MAX_IMPORT_BYTES: u64 = 64 * 1024 * 1024;

/// Read an import file of at most [`MAX_IMPORT_BYTES`], never more than that into memory.
/// Standard input, with the same size cap as a file.
fn read_capped_stdin() -> anyhow::Result<String> {
    use std::io::Read as _;
    let mut bytes = Vec::new();
    std::io::stdin()
        .take(MAX_IMPORT_BYTES + 1)
        .read_to_end(&mut bytes)
        .context("reading standard input")?;
    if bytes.len() as u64 > MAX_IMPORT_BYTES {
        anyhow::bail!(
            "standard input is larger than {} MB, more than onhand imports at once; split it into \
             smaller files",
            MAX_IMPORT_BYTES / (1024 * 1024)
        );
    }
    String::from_utf8(bytes).map_err(|e| {
        anyhow::anyhow!(
            "standard input is not UTF-8 text (byte {} is not valid); save it as UTF-8 CSV or JSON",
            e.utf8_error().valid_up_to() + 1
        )
    })
}

fn read_capped(path: &std::path::Path) -> anyhow::Result<String> {
    use std::io::Read as _;
    let too_big = || {
        anyhow::anyhow!(
            "{} is larger than {} MB, more than onhand imports at once; split it into smaller \
             files",
            path.display(),
            MAX_IMPORT_BYTES / (1024 * 1024)
        )
    };
    let file = std::fs::File::open(path).with_context(|| format!("reading {}", path.display()))?;
    if file.metadata().is_ok_and(|m| m.len() > MAX_IMPORT_BYTES) {
        return Err(too_big());
    }
    let mut bytes = Vec::new();
    file.take(MAX_IMPORT_BYTES + 1)
        .read_to_end(&mut bytes)
        .with_context(|| format!("reading {}", path.display()))?;
    if bytes.len() as u64 > MAX_IMPORT_BYTES {
        return Err(too_big());
    }
    String::from_utf8(bytes).map_err(|e| {
        anyhow::anyhow!(
            "{} is not UTF-8 text (byte {} is not valid); save it as UTF-8 CSV or JSON",
            path.display(),
            e.utf8_error().valid_up_to() + 1
        )
    })
}

/// A CSV file imported as a stream: checked line by line first (UTF-8, no quote left open),
/// then read and written row by row in one transaction, so neither the file nor its records
/// are held in memory whatever its size. A progress line goes to standard error when it is a
/// terminal and the import has run for more than a second (never when piped).
fn import_csv_file(
    a: &ImportArgs,
    ctx: &Context,
    name: &str,
) -> anyhow::Result<crate::store::ImportReport> {
    use std::io::IsTerminal as _;
    let open =
        || std::fs::File::open(&a.file).with_context(|| format!("reading {}", a.file.display()));
    // The same size cap as the in-memory path: one line (a runaway cell) is read whole, so the
    // cap still bounds what a single line can take.
    if open()?.metadata().is_ok_and(|m| m.len() > MAX_IMPORT_BYTES) {
        bail!(
            "{} is larger than {} MB, more than onhand imports at once; split it into smaller \
             files",
            a.file.display(),
            MAX_IMPORT_BYTES / (1024 * 1024)
        );
    }
    let checked = crate::store::check_csv_file(std::io::BufReader::new(open()?))
        .with_context(|| format!("reading {}", a.file.display()))?;
    if let Err(why) = checked {
        // Worded as the in-memory path words it: "FILE is not UTF-8 text …", "importing
        // FILE: row N: a quoted cell …".
        if why.starts_with("is not") {
            bail!("{} {why}", a.file.display());
        }
        bail!("importing {}: {why}", a.file.display());
    }
    let mut store = if a.dry_run {
        open_store(ctx)?
    } else {
        open_for_writing(ctx)?
    };
    let file = open()?;
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
        |each| crate::store::each_csv_record(file, each),
        name,
        &ctx.user,
        a.dry_run,
        &mut progress,
    );
    if shown {
        eprintln!();
    }
    match result {
        Err(crate::store::StoreError::Import(e))
            if e.len() == 1 && e[0].row == 0 && e[0].message == "the file has no data rows" =>
        {
            bail!("{} has no data rows", a.file.display())
        }
        r => r.with_context(|| format!("importing {}", a.file.display())),
    }
}

/// At most this many per-row lines are printed; the rest are summarised.
const SHOWN_LINES: usize = 40;

/// Run `import`.
pub fn run_import(a: ImportArgs, ctx: &Context, out: &mut dyn Write) -> anyhow::Result<Status> {
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
    let report = if !stdin && format == Format::Csv {
        import_csv_file(&a, ctx, &name)?
    } else {
        let data = if stdin {
            read_capped_stdin()?
        } else {
            read_capped(&a.file)?
        };
        let records = match format {
            Format::Csv => read_csv(&data),
            Format::Json => read_json(&data),
        }
        .with_context(|| format!("importing {}", a.file.display()))?;
        if records.is_empty() {
            bail!("{} has no data rows", a.file.display());
        }
        // A dry run only reads (the store copies itself under a read lock); a real import
        // checks the file's consistency before writing.
        let mut store = if a.dry_run {
            open_store(ctx)?
        } else {
            open_for_writing(ctx)?
        };
        store
            .import(&records, &name, &ctx.user, a.dry_run)
            .with_context(|| format!("importing {}", a.file.display()))?
    };
    if ctx.json {
        crate::cli::json::line(out, &report)?;
        return Ok(Status::Success);
    }
    let (new, add) = if a.dry_run {
        ("would create", "would add")
    } else {
        ("new", "added")
    };
    for line in report.lines.iter().take(SHOWN_LINES) {
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
    if report.lines.len() > SHOWN_LINES {
        writeln!(out, "… and {} more rows", report.lines.len() - SHOWN_LINES)?;
    }
    writeln!(
        out,
        "{}{} from {}: {} new, {} topped up, {}",
        if a.dry_run {
            "dry run, nothing written — "
        } else {
            "imported "
        },
        crate::units::count(report.lines.len(), "row", "rows"),
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
