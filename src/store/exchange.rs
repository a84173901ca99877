//! The exchange formats: CSV and JSON records with our column names, read header-driven and
//! written exactly, so an export imports back to the same store.
//!
//! Columns (case-insensitive, any order; only `value` and `quantity` are required):
//! `kind, value, tolerance, technology, volts, watts, package, bin, quantity, low, note`.
//! A blank cell takes the default of the part's kind; `none` in `volts`, `watts` or `low` means
//! "explicitly unknown / not set". CSV cells that a spreadsheet would run as a formula
//! (starting with `=`, `+`, `-`, `@`) are written with a leading `'`, which import removes.

use super::part::Part;
use super::query::{PART_COLUMNS, PART_ORDER, query_parts};
use super::spec::{self, PartText};
use super::text;
use super::{RowError, Store, StoreError};
use std::collections::HashMap;

/// The column names, in export order.
pub const COLUMNS: [&str; 11] = [
    "kind",
    "value",
    "tolerance",
    "technology",
    "volts",
    "watts",
    "package",
    "bin",
    "quantity",
    "low",
    "note",
];

/// Export format.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ExportFormat {
    /// CSV with a header row.
    Csv,
    /// A JSON array of objects keyed by column name.
    Json,
}

/// One record read from an import file: its data-row number (1 = first data row) and the text
/// of each cell.
#[derive(Debug, Clone, Default)]
pub struct Record {
    /// Data-row number, from 1.
    pub row: usize,
    /// The part fields.
    pub part: PartText,
    /// The `quantity` cell.
    pub quantity: Option<String>,
}

/// Whether a spreadsheet would treat a cell starting with this character as a formula.
fn is_formula_start(c: char) -> bool {
    matches!(c, '=' | '+' | '-' | '@')
}

/// Make a CSV cell safe to open in a spreadsheet: a leading `'` in front of a formula start
/// (and in front of an already-quoted one, so that [`restore_cell`] is its exact inverse).
pub fn neutralise_cell(cell: &str) -> String {
    let after_quotes = cell.trim_start_matches('\'');
    match after_quotes.chars().next() {
        Some(c) if is_formula_start(c) => format!("'{cell}"),
        _ => cell.to_string(),
    }
}

/// Undo [`neutralise_cell`].
pub fn restore_cell(cell: &str) -> &str {
    match cell.strip_prefix('\'') {
        Some(rest) if rest.trim_start_matches('\'').starts_with(is_formula_start) => rest,
        _ => cell,
    }
}

/// Map header names to column positions; every unknown or repeated name is an error, and the
/// required columns must be present.
fn map_header<'a>(names: impl Iterator<Item = &'a str>) -> Result<Vec<usize>, Vec<RowError>> {
    let mut errors = Vec::new();
    let mut map = Vec::new();
    let mut seen: HashMap<usize, &str> = HashMap::new();
    for name in names {
        let key = name.trim().to_lowercase();
        match COLUMNS.iter().position(|c| *c == key) {
            Some(i) => {
                if seen.insert(i, name).is_some() {
                    errors.push(RowError {
                        row: 0,
                        column: Some(name.to_string()),
                        message: "this column appears twice".into(),
                    });
                }
                map.push(i);
            }
            None => {
                errors.push(RowError {
                    row: 0,
                    column: Some(name.to_string()),
                    message: format!("unknown column; the columns are: {}", COLUMNS.join(", ")),
                });
                map.push(usize::MAX);
            }
        }
    }
    for required in ["value", "quantity"] {
        let i = COLUMNS.iter().position(|c| *c == required).unwrap_or(0);
        if !seen.contains_key(&i) {
            errors.push(RowError {
                row: 0,
                column: Some(required.to_string()),
                message: "this column is required".into(),
            });
        }
    }
    if errors.is_empty() {
        Ok(map)
    } else {
        Err(errors)
    }
}

fn record_from_cells(row: usize, cells: [Option<String>; 11]) -> Record {
    let [
        kind,
        value,
        tolerance,
        technology,
        volts,
        watts,
        package,
        bin,
        quantity,
        low,
        note,
    ] = cells;
    Record {
        row,
        part: PartText {
            kind,
            value: value.unwrap_or_default(),
            tolerance,
            technology,
            volts,
            watts,
            package,
            bin,
            low,
            note,
        },
        quantity,
    }
}

/// Read CSV text into records. Structural problems (header, wrong number of cells) are all
/// reported together; cell values are checked later, by the import.
pub fn read_csv(data: &str) -> Result<Vec<Record>, StoreError> {
    let mut rdr = csv::ReaderBuilder::new()
        .has_headers(true)
        .trim(csv::Trim::All)
        .from_reader(data.as_bytes());
    let header = rdr
        .headers()
        .map_err(|e| {
            StoreError::Import(vec![RowError {
                row: 0,
                column: None,
                message: format!("cannot read the header: {e}"),
            }])
        })?
        .clone();
    let map = map_header(header.iter()).map_err(StoreError::Import)?;
    let mut records = Vec::new();
    let mut errors = Vec::new();
    for (i, rec) in rdr.records().enumerate() {
        let row = i + 1;
        let rec = match rec {
            Ok(r) => r,
            Err(e) => {
                errors.push(RowError {
                    row,
                    column: None,
                    message: match e.kind() {
                        csv::ErrorKind::UnequalLengths {
                            expected_len, len, ..
                        } => format!("has {len} cells, the header has {expected_len}"),
                        _ => e.to_string(),
                    },
                });
                continue;
            }
        };
        let mut cells: [Option<String>; 11] = Default::default();
        for (pos, cell) in rec.iter().enumerate() {
            if let Some(&col) = map.get(pos) {
                let cell = restore_cell(cell).trim();
                if !cell.is_empty() {
                    cells[col] = Some(cell.to_string());
                }
            }
        }
        records.push(record_from_cells(row, cells));
    }
    if errors.is_empty() {
        Ok(records)
    } else {
        Err(StoreError::Import(errors))
    }
}

/// Read a JSON array of objects keyed by column name (what `export --format json` writes).
pub fn read_json(data: &str) -> Result<Vec<Record>, StoreError> {
    let one = |row, column: Option<&str>, message: String| RowError {
        row,
        column: column.map(str::to_string),
        message,
    };
    let value: serde_json::Value = serde_json::from_str(data)
        .map_err(|e| StoreError::Import(vec![one(0, None, format!("not valid JSON: {e}"))]))?;
    let serde_json::Value::Array(items) = value else {
        return Err(StoreError::Import(vec![one(
            0,
            None,
            "expected a JSON array of part objects".into(),
        )]));
    };
    let mut records = Vec::new();
    let mut errors = Vec::new();
    for (i, item) in items.into_iter().enumerate() {
        let row = i + 1;
        let serde_json::Value::Object(obj) = item else {
            errors.push(one(row, None, "expected an object".into()));
            continue;
        };
        let map = match map_header(obj.keys().map(String::as_str)) {
            Ok(m) => m,
            Err(errs) => {
                errors.extend(errs.into_iter().map(|e| RowError { row, ..e }));
                continue;
            }
        };
        let mut cells: [Option<String>; 11] = Default::default();
        for ((key, v), col) in obj.iter().zip(map) {
            let text = match v {
                serde_json::Value::Null => None,
                serde_json::Value::String(s) => Some(s.trim().to_string()),
                serde_json::Value::Number(n) => Some(n.to_string()),
                serde_json::Value::Bool(_)
                | serde_json::Value::Array(_)
                | serde_json::Value::Object(_) => {
                    errors.push(one(row, Some(key), "expected text or a number".into()));
                    None
                }
            };
            cells[col] = text.filter(|t| !t.is_empty());
        }
        records.push(record_from_cells(row, cells));
    }
    if errors.is_empty() {
        Ok(records)
    } else {
        Err(StoreError::Import(errors))
    }
}

/// The export cells of one part, chosen so that importing them rebuilds the same row: blank
/// only where blank imports as the same value.
fn cells(p: &Part) -> [String; 11] {
    let watts = match (p.power_rating, spec::default_power(p.kind)) {
        (Some(w), _) => text::watts_text(w),
        (None, Some(_)) => "none".to_string(),
        (None, None) => String::new(),
    };
    [
        p.kind.as_str().to_string(),
        text::value_text(p.value),
        text::tolerance_text(p.tolerance),
        p.technology.as_str().to_string(),
        p.voltage_rating.map(text::volts_text).unwrap_or_default(),
        watts,
        p.package.clone(),
        p.bin.clone(),
        p.quantity.to_string(),
        p.low_stock.map(|n| n.to_string()).unwrap_or_default(),
        p.note.clone(),
    ]
}

/// Write every part in `format`, in stable content order (so two stores with the same stock
/// export byte for byte the same). Returns the text and the number of parts.
pub fn export(store: &Store, format: ExportFormat) -> Result<(String, usize), StoreError> {
    let sql =
        format!("SELECT {PART_COLUMNS} FROM part WHERE retired_at IS NULL ORDER BY {PART_ORDER}");
    let parts = query_parts(&store.conn, &sql, &[])?;
    let n = parts.len();
    let text = match format {
        ExportFormat::Csv => {
            let mut w = csv::Writer::from_writer(Vec::new());
            let fail = |e: csv::Error| StoreError::Export(e.to_string());
            w.write_record(COLUMNS).map_err(fail)?;
            for p in &parts {
                w.write_record(cells(p).iter().map(|c| neutralise_cell(c)))
                    .map_err(fail)?;
            }
            let bytes = w
                .into_inner()
                .map_err(|e| StoreError::Export(e.to_string()))?;
            String::from_utf8(bytes).map_err(|e| StoreError::Export(e.to_string()))?
        }
        ExportFormat::Json => {
            let items: Vec<serde_json::Value> = parts
                .iter()
                .map(|p| {
                    let c = cells(p);
                    let mut obj = serde_json::Map::new();
                    for (name, cell) in COLUMNS.iter().zip(c) {
                        let v = match *name {
                            "quantity" => serde_json::Value::from(p.quantity),
                            "low" => p.low_stock.map_or(serde_json::Value::Null, Into::into),
                            _ => serde_json::Value::String(cell),
                        };
                        obj.insert((*name).to_string(), v);
                    }
                    serde_json::Value::Object(obj)
                })
                .collect();
            let mut s = serde_json::to_string_pretty(&items)
                .map_err(|e| StoreError::Export(e.to_string()))?;
            s.push('\n');
            s
        }
    };
    Ok((text, n))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn formula_cells_are_neutralised_and_restored() {
        for cell in [
            "=1+1", "+80", "-20/+80%", "@SUM(A1)", "'=x", "''-y", "plain", "'q", "",
        ] {
            let safe = neutralise_cell(cell);
            assert!(
                !safe.starts_with(is_formula_start),
                "{safe:?} still starts a formula"
            );
            assert_eq!(restore_cell(&safe), cell, "round trip of {cell:?}");
        }
        assert_eq!(neutralise_cell("=1+1"), "'=1+1");
        assert_eq!(neutralise_cell("plain"), "plain");
    }

    #[test]
    fn header_is_case_insensitive_and_strict() {
        let r = read_csv("Quantity,VALUE\n5,4.7k\n").expect("reads");
        assert_eq!(r[0].part.value, "4.7k");
        assert_eq!(r[0].quantity.as_deref(), Some("5"));
        let Err(StoreError::Import(errs)) = read_csv("value,quantity,colour\n4.7k,5,red\n") else {
            panic!("unknown column must fail");
        };
        assert_eq!(errs[0].column.as_deref(), Some("colour"));
        let Err(StoreError::Import(errs)) = read_csv("value,bin\n4.7k,A1\n") else {
            panic!("missing quantity must fail");
        };
        assert_eq!(errs[0].column.as_deref(), Some("quantity"));
        let Err(StoreError::Import(errs)) = read_csv("value,quantity\n4.7k,5\n1k\n") else {
            panic!("short row must fail");
        };
        assert_eq!(errs[0].row, 2);
    }

    #[test]
    fn json_records_read_like_csv() {
        let r =
            read_json(r#"[{"value":"100n","quantity":3,"low":null,"bin":"C1"}]"#).expect("json");
        assert_eq!(r[0].part.value, "100n");
        assert_eq!(r[0].quantity.as_deref(), Some("3"));
        assert_eq!(r[0].part.low, None);
        assert!(read_json(r#"{"value":"1k"}"#).is_err());
        assert!(read_json(r#"[{"value":"1k","quantity":1,"shape":"round"}]"#).is_err());
    }
}
