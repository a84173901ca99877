//! Import: records (from CSV or JSON) read, checked and written one at a time inside one
//! IMMEDIATE transaction, all-or-nothing: after the first problem the rest are still checked
//! (every problem is counted, the first ones kept) but not written, and the transaction is
//! rolled back. Import adds quantities to matching rows and creates new ones; each row's ledger
//! reason is `import <file> row N`. A dry run does the same on a private copy of the store and
//! rolls it back, so it reports exactly what would change and commits nothing. Memory does not
//! grow with the rows: the report keeps counts and the first [`KEPT_LINES`] changes.

use super::change::{Change, add_in};
use super::exchange::Record;
use super::spec::PartSpec;
use super::{RowError, RowErrors, Store, StoreError};
use rusqlite::TransactionBehavior;
use serde::Serialize;

/// What one import row did (or would do).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ImportLine {
    /// Data-row number in the file.
    pub row: usize,
    /// The change to the stock row.
    pub change: Change,
}

/// How many rows' changes an import report keeps; the rest are counted.
pub const KEPT_LINES: usize = 40;

/// What an import did (or, for a dry run, would do).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ImportReport {
    /// Whether nothing was written.
    pub dry_run: bool,
    /// The file name used in ledger reasons.
    pub source: String,
    /// Data rows read (every one imported). 0: the file has no data rows, nothing was written.
    pub rows: usize,
    /// What the first [`KEPT_LINES`] data rows did, in file order.
    pub lines: Vec<ImportLine>,
    /// Rows after those in `lines` (`rows` − `lines.len()`), counted only.
    pub more_lines: usize,
    /// Rows that created a new stock row.
    pub created: usize,
    /// Rows that added to an existing stock row.
    pub topped_up: usize,
    /// Pieces added in all.
    pub pieces: i64,
}

/// Resolve one record: its spec and quantity, or every problem with its row and column.
fn resolve_one(r: &Record) -> Result<(usize, PartSpec, i64), Vec<RowError>> {
    let spec = r.part.resolve().map_err(|errs| {
        errs.into_iter()
            .map(|e| RowError {
                row: r.row,
                column: Some(e.field.column().to_string()),
                message: e.message,
            })
            .collect::<Vec<_>>()
    });
    let qty = match r.quantity.as_deref() {
        None => Err("a quantity is required".to_string()),
        Some(q) => match q.parse::<i64>() {
            Ok(n) if n > super::MAX_PIECES => Err(format!(
                "{n} pieces is more than onhand counts in one row (at most {})",
                super::MAX_PIECES
            )),
            Ok(n) if n >= 0 => Ok(n),
            Ok(n) => Err(format!("the quantity must be 0 or more (got {n})")),
            Err(_) => Err(format!(
                "cannot read {} as a whole number of pieces",
                super::text::excerpt(q)
            )),
        },
    };
    match (spec, qty) {
        (Ok(spec), Ok(qty)) => Ok((r.row, spec, qty)),
        (spec, qty) => {
            let mut errors = Vec::new();
            if let Err(errs) = spec {
                errors.extend(errs);
            }
            if let Err(message) = qty {
                errors.push(RowError {
                    row: r.row,
                    column: Some("quantity".into()),
                    message,
                });
            }
            Err(errors)
        }
    }
}

/// How many rows a streamed import goes between two calls of its progress callback.
pub const PROGRESS_EVERY: usize = 1000;

impl Store {
    /// Import `records` all-or-nothing; `source` names the file in the ledger reasons. With
    /// `dry_run`, report what would change and write nothing. The same as
    /// [`Store::import_stream`] over the slice.
    pub fn import(
        &mut self,
        records: &[Record],
        source: &str,
        who: &str,
        dry_run: bool,
    ) -> Result<ImportReport, StoreError> {
        self.import_stream(
            |each| {
                records.iter().for_each(|r| each(Ok(r.clone())));
                Ok(())
            },
            source,
            who,
            dry_run,
            &mut |_| {},
        )
    }

    /// Import records handed over one at a time by `read` (which calls its argument once per
    /// record, or per problem, in file order), all-or-nothing, without holding the file or its
    /// records: each row is resolved and written inside one IMMEDIATE transaction as it
    /// arrives; after the first problem the rest are still checked (every problem is counted,
    /// the first [`RowErrors::KEPT`] kept) but not written, and the transaction is rolled back.
    /// `progress` is called with the rows read so far every [`PROGRESS_EVERY`] rows. With
    /// `dry_run`, the same on a private copy taken under a read lock only (`VACUUM INTO`), so
    /// it never holds the write lock other processes wait for, and reports exactly what the
    /// real import would do, row ids included. No data rows: `rows` is 0 and nothing is
    /// written.
    pub fn import_stream(
        &mut self,
        read: impl FnOnce(&mut dyn FnMut(Result<Record, RowError>)) -> Result<(), StoreError>,
        source: &str,
        who: &str,
        dry_run: bool,
        progress: &mut dyn FnMut(usize),
    ) -> Result<ImportReport, StoreError> {
        if dry_run {
            let copy = Scratch::new()?;
            self.conn
                .execute("VACUUM INTO ?1", [copy.0.to_string_lossy().as_ref()])?;
            let mut scratch = Store::open(&copy.0)?;
            return scratch.apply_import(read, source, who, true, progress);
        }
        self.apply_import(read, source, who, false, progress)
    }

    /// The one apply path: one IMMEDIATE transaction, rolled back on any problem or when
    /// `dry_run`.
    fn apply_import(
        &mut self,
        read: impl FnOnce(&mut dyn FnMut(Result<Record, RowError>)) -> Result<(), StoreError>,
        source: &str,
        who: &str,
        dry_run: bool,
        progress: &mut dyn FnMut(usize),
    ) -> Result<ImportReport, StoreError> {
        let tx = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)?;
        super::change::begin_change(&tx, None)?;
        let mut report = ImportReport {
            dry_run,
            source: source.to_string(),
            rows: 0,
            lines: Vec::new(),
            more_lines: 0,
            created: 0,
            topped_up: 0,
            pieces: 0,
        };
        let mut errors = RowErrors::new();
        let mut sql_error: Option<StoreError> = None;
        let mut seen = 0usize;
        read(&mut |rec| {
            seen += 1;
            if seen % PROGRESS_EVERY == 0 {
                progress(seen);
            }
            let resolved = match rec {
                Ok(r) => resolve_one(&r),
                Err(e) => Err(vec![e]),
            };
            let (row, spec, qty) = match resolved {
                Ok(x) => x,
                Err(e) => {
                    errors.extend(e);
                    return;
                }
            };
            report.rows += 1;
            if !errors.is_empty() || sql_error.is_some() {
                // Already refused: checked, not written.
                return;
            }
            let why = format!("import {source} row {row}");
            match add_in(&tx, &spec, qty, who, &why) {
                Ok(change) => {
                    if change.created {
                        report.created += 1;
                    } else {
                        report.topped_up += 1;
                    }
                    report.pieces = report.pieces.saturating_add(qty);
                    if report.lines.len() < KEPT_LINES {
                        report.lines.push(ImportLine { row, change });
                    } else {
                        report.more_lines += 1;
                    }
                }
                Err(e @ StoreError::Sql(_)) => sql_error = Some(e),
                Err(other) => errors.push(RowError {
                    row,
                    column: None,
                    message: other.to_string(),
                }),
            }
        })?;
        if let Some(e) = sql_error {
            return Err(e);
        }
        if !errors.is_empty() {
            // Dropping the transaction rolls it back: nothing of the file is kept.
            return Err(StoreError::Import(errors));
        }
        if dry_run || report.rows == 0 {
            tx.rollback()?;
        } else {
            tx.commit()?;
        }
        Ok(report)
    }
}

/// A throw-away database file for a dry run, removed (with its companions) on drop.
struct Scratch(std::path::PathBuf);

impl Scratch {
    fn new() -> Result<Self, StoreError> {
        use std::sync::atomic::{AtomicU32, Ordering};
        static NEXT: AtomicU32 = AtomicU32::new(0);
        let base = std::env::temp_dir();
        for _ in 0..100 {
            let n = NEXT.fetch_add(1, Ordering::Relaxed);
            let p = base.join(format!("onhand-dry-run-{}-{n}.db", std::process::id()));
            if !p.exists() {
                return Ok(Scratch(p));
            }
        }
        Err(StoreError::Invalid(format!(
            "cannot find a free name for a dry-run copy in {}",
            base.display()
        )))
    }
}

impl Drop for Scratch {
    fn drop(&mut self) {
        for suffix in ["", "-wal", "-shm", "-journal"] {
            let mut s = self.0.as_os_str().to_owned();
            s.push(suffix);
            let _ = std::fs::remove_file(std::path::PathBuf::from(s));
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::store::{ExportFormat, export, read_csv};

    fn store() -> (tempfile::TempDir, Store) {
        let dir = tempfile::tempdir().expect("tmp");
        let s = Store::open(&dir.path().join("s.db")).expect("open");
        (dir, s)
    }

    #[test]
    fn import_adds_to_matching_rows_and_dry_run_writes_nothing() {
        let (_d, mut s) = store();
        let csv = "value,quantity,bin\n4.7k,5,A1\n100n,10,C1\n4.7k,2,A1\n";
        let recs = read_csv(csv).expect("csv");
        let dry = s.import(&recs, "x.csv", "t", true).expect("dry");
        assert_eq!((dry.created, dry.topped_up, dry.pieces), (2, 1, 17));
        assert_eq!(export(&s, ExportFormat::Csv).expect("export").1, 0);
        let real = s.import(&recs, "x.csv", "t", false).expect("import");
        assert_eq!(real.lines, dry.lines);
        let parts = s.parts(&Default::default()).expect("parts");
        let qty: Vec<i64> = parts.iter().map(|p| p.quantity).collect();
        assert_eq!(qty, vec![7, 10]);
        let reasons: Vec<String> = s
            .ledger(None)
            .expect("l")
            .into_iter()
            .map(|e| e.why)
            .collect();
        assert_eq!(reasons[2], "import x.csv row 4");
    }

    #[test]
    fn every_bad_cell_is_cited_and_nothing_is_written() {
        let (_d, mut s) = store();
        let csv = "value,quantity,tolerance\n4.7k,5,1%\nbanana,3,1%\n1k,-2,1%\n2k2x,1,7 apples\n";
        let recs = read_csv(csv).expect("csv");
        let Err(StoreError::Import(errs)) = s.import(&recs, "x.csv", "t", false) else {
            panic!("must fail");
        };
        let cited: Vec<(usize, Option<&str>)> =
            errs.iter().map(|e| (e.row, e.column.as_deref())).collect();
        assert_eq!(
            cited,
            vec![
                (3, Some("value")),
                (4, Some("quantity")),
                (5, Some("value")),
                (5, Some("tolerance"))
            ]
        );
        assert!(s.parts(&Default::default()).expect("parts").is_empty());
    }

    #[test]
    fn the_report_keeps_the_first_rows_and_counts_the_rest() {
        let (_d, mut s) = store();
        let mut csv = String::from("value,quantity,bin\n");
        for i in 0..1000 {
            csv.push_str(&format!("1k,2,B{}\n", i % 600));
        }
        let recs = read_csv(&csv).expect("csv");
        let r = s.import(&recs, "x.csv", "t", false).expect("import");
        assert_eq!(
            (r.rows, r.created, r.topped_up, r.pieces),
            (1000, 600, 400, 2000)
        );
        assert_eq!(r.lines.len(), KEPT_LINES);
        assert_eq!(r.more_lines, 1000 - KEPT_LINES);
        let first: Vec<usize> = r.lines.iter().map(|l| l.row).collect();
        assert_eq!(first, (2..2 + KEPT_LINES).collect::<Vec<_>>());
        assert_eq!(s.parts(&Default::default()).expect("parts").len(), 600);
    }

    #[test]
    fn a_file_bad_in_every_row_keeps_the_first_problems_and_counts_them_all() {
        let (_d, mut s) = store();
        let mut csv = String::from("value,quantity\n");
        for _ in 0..5000 {
            csv.push_str("1k,lots\n");
        }
        let recs = read_csv(&csv).expect("csv");
        let Err(StoreError::Import(errs)) = s.import(&recs, "x.csv", "t", false) else {
            panic!("must fail");
        };
        assert_eq!((errs.len(), errs.total()), (RowErrors::KEPT, 5000));
        assert_eq!(errs[0].row, 2);
        let text = StoreError::Import(errs).to_string();
        assert!(text.contains("(5000 problems)"), "{text}");
        assert!(
            text.contains(&format!("… and {} more", 5000 - RowErrors::KEPT)),
            "{text}"
        );
        assert!(s.parts(&Default::default()).expect("parts").is_empty());
    }

    #[test]
    fn no_data_rows_write_nothing_and_say_so() {
        let (_d, mut s) = store();
        let recs = read_csv("value,quantity\n").expect("csv");
        let r = s.import(&recs, "x.csv", "t", false).expect("import");
        assert_eq!((r.rows, r.lines.len()), (0, 0));
        assert!(s.ledger(None).expect("ledger").is_empty());
    }
}
