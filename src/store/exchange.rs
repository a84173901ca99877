//! The exchange formats: CSV and JSON records with our column names, read header-driven and
//! written exactly, so an export imports back to the same store.
//!
//! Columns (case-insensitive, any order; only `value` and `quantity` are required):
//! `kind, value, tolerance, technology, volts, watts, package, bin, quantity, low, note`.
//! A blank cell takes the default of the part's kind; `none` in `volts`, `watts` or `low` means
//! "explicitly unknown / not set". CSV cells that a spreadsheet would run as a formula
//! (starting with `=`, `+`, `-`, `@`, or a TAB, CR or LF before one) are written with a leading
//! `'`, which import removes. Both formats may start with a UTF-8 byte-order mark. A JSON
//! object that names a column twice is refused, as a CSV header that does is.

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

/// One record read from an import file: its row number (CSV: the spreadsheet's, header = row 1;
/// JSON: the item's position from 1) and the text
/// of each cell.
#[derive(Debug, Clone, Default)]
pub struct Record {
    /// Row number: CSV as a spreadsheet counts (header = 1), JSON items from 1.
    pub row: usize,
    /// The part fields.
    pub part: PartText,
    /// The `quantity` cell.
    pub quantity: Option<String>,
}

/// Whether a spreadsheet would treat a cell starting with this character as a formula (the
/// usual list, common practice: OWASP "CSV injection"); TAB, CR and LF are included because
/// spreadsheets skip them before a formula sign.
fn is_formula_start(c: char) -> bool {
    matches!(c, '=' | '+' | '-' | '@' | '\t' | '\r' | '\n')
}

/// Text without a leading UTF-8 byte-order mark (spreadsheets on some systems write one).
fn without_bom(data: &str) -> &str {
    data.strip_prefix('\u{feff}').unwrap_or(data)
}

/// Where a quoted CSV cell opens and never closes: (data row from 1, or 0 for the header;
/// line of the file from 1). The CSV reader would silently read every later row into that
/// cell, so the file is refused instead. Follows the reader's rules: a quote opens a cell only
/// at its start, `""` inside is a quote, and blank lines are not rows.
fn unterminated_quote(data: &str) -> Option<(usize, usize)> {
    let mut q = QuoteScan::default();
    data.chars().for_each(|c| q.step(c));
    q.open()
}

/// The state of [`unterminated_quote`]'s scan, fed one character at a time (so a file can be
/// scanned line by line).
struct QuoteScan {
    in_quote: bool,
    /// A `"` inside a quoted cell was just seen: the next character decides (`""` or close).
    quote_seen: bool,
    at_start: bool,
    has_content: bool,
    line: usize,
    record: usize,
    opened: (usize, usize),
}

impl Default for QuoteScan {
    fn default() -> Self {
        QuoteScan {
            in_quote: false,
            quote_seen: false,
            at_start: true,
            has_content: false,
            line: 1,
            record: 0,
            opened: (0, 0),
        }
    }
}

impl QuoteScan {
    fn step(&mut self, c: char) {
        if self.quote_seen {
            self.quote_seen = false;
            if c == '"' {
                // `""`: a quote inside the cell.
                return;
            }
            self.in_quote = false;
        }
        if self.in_quote {
            match c {
                '"' => self.quote_seen = true,
                '\n' => self.line += 1,
                _ => {}
            }
            return;
        }
        match c {
            '"' if self.at_start => {
                self.in_quote = true;
                self.opened = (self.record, self.line);
                self.at_start = false;
                self.has_content = true;
            }
            ',' => {
                self.at_start = true;
                self.has_content = true;
            }
            '\n' => {
                self.line += 1;
                if self.has_content {
                    self.record += 1;
                }
                self.has_content = false;
                self.at_start = true;
            }
            '\r' => {}
            _ => {
                self.at_start = false;
                self.has_content = true;
            }
        }
    }

    /// Where the open quote began, if one is still open at the end.
    fn open(&self) -> Option<(usize, usize)> {
        (self.in_quote && !self.quote_seen).then_some(self.opened)
    }
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
    let data = without_bom(data);
    if let Some((row, line)) = unterminated_quote(data) {
        return Err(unterminated_error(row, line));
    }
    let mut records = Vec::new();
    let mut errors = Vec::new();
    each_csv_record(data.as_bytes(), |r| match r {
        Ok(rec) => records.push(rec),
        Err(e) => errors.push(e),
    })?;
    if errors.is_empty() {
        Ok(records)
    } else {
        Err(StoreError::Import(errors))
    }
}

fn unterminated_error(row: usize, line: usize) -> StoreError {
    StoreError::Import(vec![RowError {
        row,
        column: None,
        message: format!(
            "a quoted cell opens here (line {line} of the file) and is never closed, so every \
             row after it would be read into that one cell; close the quote (\") or remove it"
        ),
    }])
}

/// Check a CSV file without holding it: every line is UTF-8 and no quoted cell is left open
/// (the checks [`read_csv`] makes on text). One line at a time, so memory stays bounded.
/// `Ok(())`, or the import error to show; `Err` of I/O for a read failure.
pub fn check_csv_file(reader: impl std::io::BufRead) -> std::io::Result<Result<(), String>> {
    let mut reader = reader;
    let mut q = QuoteScan::default();
    let mut line = Vec::new();
    let mut offset = 0usize;
    let mut first = true;
    loop {
        line.clear();
        let n = reader.read_until(b'\n', &mut line)?;
        if n == 0 {
            break;
        }
        let mut bytes: &[u8] = &line;
        if first {
            bytes = bytes.strip_prefix("\u{feff}".as_bytes()).unwrap_or(bytes);
            first = false;
        }
        match std::str::from_utf8(bytes) {
            Ok(text) => text.chars().for_each(|c| q.step(c)),
            Err(e) => {
                return Ok(Err(format!(
                    "is not UTF-8 text (byte {} is not valid); save it as UTF-8 CSV or JSON",
                    offset + (n - bytes.len()) + e.valid_up_to() + 1
                )));
            }
        }
        offset += n;
    }
    Ok(match q.open() {
        Some((row, line)) => Err(unterminated_error(row, line).to_string()),
        None => Ok(()),
    })
}

/// Read CSV records one at a time from `reader` (a file already checked by
/// [`check_csv_file`], or text), handing each to `each` with its spreadsheet row number; a
/// structural problem of one row is handed on as its error. Only a bad header stops the read.
pub fn each_csv_record(
    reader: impl std::io::Read,
    mut each: impl FnMut(Result<Record, RowError>),
) -> Result<(), StoreError> {
    let mut reader = std::io::BufReader::new(reader);
    {
        use std::io::BufRead as _;
        let head = reader.fill_buf().map_err(|e| {
            StoreError::Import(vec![RowError {
                row: 0,
                column: None,
                message: format!("cannot read the header: {e}"),
            }])
        })?;
        if head.starts_with("\u{feff}".as_bytes()) {
            reader.consume(3);
        }
    }
    let mut rdr = csv::ReaderBuilder::new()
        .has_headers(true)
        .trim(csv::Trim::All)
        .from_reader(reader);
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
    let mut rec = csv::StringRecord::new();
    let mut i = 0usize;
    loop {
        // The spreadsheet's row number: the header is row 1, the first data row row 2.
        let row = i + 2;
        i += 1;
        match rdr.read_record(&mut rec) {
            Ok(false) => break,
            Ok(true) => {}
            Err(e) => {
                let fatal = !matches!(e.kind(), csv::ErrorKind::UnequalLengths { .. });
                each(Err(RowError {
                    row,
                    column: None,
                    message: match e.kind() {
                        csv::ErrorKind::UnequalLengths {
                            expected_len, len, ..
                        } => format!("has {len} cells, the header has {expected_len}"),
                        _ => e.to_string(),
                    },
                }));
                if fatal {
                    // An I/O or encoding failure: the reader cannot go on from here.
                    break;
                }
                continue;
            }
        }
        let mut cells: [Option<String>; 11] = Default::default();
        for (pos, cell) in rec.iter().enumerate() {
            if let Some(&col) = map.get(pos) {
                let cell = restore_cell(cell).trim();
                if !cell.is_empty() {
                    cells[col] = Some(cell.to_string());
                }
            }
        }
        each(Ok(record_from_cells(row, cells)));
    }
    Ok(())
}

/// Read a JSON array of objects keyed by column name (what `export --format json` writes).
pub fn read_json(data: &str) -> Result<Vec<Record>, StoreError> {
    let one = |row, column: Option<&str>, message: String| RowError {
        row,
        column: column.map(str::to_string),
        message,
    };
    let value = serde_json::from_str::<Strict>(without_bom(data))
        .map_err(|e| StoreError::Import(vec![one(0, None, format!("not valid JSON: {e}"))]))?
        .0;
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

/// A JSON value read strictly: an object that names a key twice is an error (serde_json's own
/// `Value` keeps the last one silently).
struct Strict(serde_json::Value);

impl<'de> serde::Deserialize<'de> for Strict {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        d.deserialize_any(StrictVisitor)
    }
}

struct StrictVisitor;

impl<'de> serde::de::Visitor<'de> for StrictVisitor {
    type Value = Strict;

    fn expecting(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str("a JSON value")
    }
    fn visit_bool<E>(self, v: bool) -> Result<Strict, E> {
        Ok(Strict(v.into()))
    }
    fn visit_i64<E>(self, v: i64) -> Result<Strict, E> {
        Ok(Strict(v.into()))
    }
    fn visit_u64<E>(self, v: u64) -> Result<Strict, E> {
        Ok(Strict(v.into()))
    }
    fn visit_f64<E>(self, v: f64) -> Result<Strict, E> {
        Ok(Strict(v.into()))
    }
    fn visit_str<E>(self, v: &str) -> Result<Strict, E> {
        Ok(Strict(v.into()))
    }
    fn visit_string<E>(self, v: String) -> Result<Strict, E> {
        Ok(Strict(v.into()))
    }
    fn visit_unit<E>(self) -> Result<Strict, E> {
        Ok(Strict(serde_json::Value::Null))
    }
    fn visit_none<E>(self) -> Result<Strict, E> {
        Ok(Strict(serde_json::Value::Null))
    }
    fn visit_seq<A: serde::de::SeqAccess<'de>>(self, mut seq: A) -> Result<Strict, A::Error> {
        let mut items = Vec::new();
        while let Some(Strict(v)) = seq.next_element()? {
            items.push(v);
        }
        Ok(Strict(serde_json::Value::Array(items)))
    }
    fn visit_map<A: serde::de::MapAccess<'de>>(self, mut map: A) -> Result<Strict, A::Error> {
        let mut obj = serde_json::Map::new();
        while let Some(key) = map.next_key::<String>()? {
            if obj.contains_key(&key) {
                return Err(serde::de::Error::custom(format!(
                    "the key {} appears twice in one object",
                    text::excerpt(&key)
                )));
            }
            let Strict(v) = map.next_value()?;
            obj.insert(key, v);
        }
        Ok(Strict(serde_json::Value::Object(obj)))
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
        // Spreadsheets skip TAB, CR and LF before a formula sign.
        for cell in ["\t=1+1", "\r@SUM(1)", "\n+1", "'\t=x"] {
            let safe = neutralise_cell(cell);
            assert!(safe.starts_with('\''), "{cell:?} → {safe:?}");
            assert_eq!(restore_cell(&safe), cell, "round trip of {cell:?}");
        }
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
        // The spreadsheet's numbering: header row 1, so the short row is row 3.
        assert_eq!(errs[0].row, 3);
    }

    #[test]
    fn an_unterminated_quote_is_refused_naming_its_row() {
        let csv = "value,quantity,note\n4k7,5,ok\n1k,2,\"unterminated\n2k2,3,ok\n";
        let Err(StoreError::Import(errs)) = read_csv(csv) else {
            panic!("must be refused");
        };
        assert_eq!(errs[0].row, 2);
        assert!(errs[0].message.contains("line 3"), "{errs:?}");
        // A closed quote with a doubled quote and a comma inside is fine.
        let ok = read_csv("value,quantity,note\n4k7,5,\"say \"\"hi\"\", ok\"\n\n1k,2,x\n")
            .expect("closed");
        assert_eq!(ok.len(), 2);
        assert_eq!(ok[0].part.note.as_deref(), Some("say \"hi\", ok"));
        assert_eq!(unterminated_quote("a,b\n\n1,\"x\n"), Some((1, 3)));
    }

    #[test]
    fn a_byte_order_mark_is_accepted_in_both_formats() {
        let r = read_csv("\u{feff}value,quantity\n4k7,5\n").expect("csv with BOM");
        assert_eq!(r[0].part.value, "4k7");
        let r = read_json("\u{feff}[{\"value\":\"1k\",\"quantity\":1}]").expect("json with BOM");
        assert_eq!(r[0].part.value, "1k");
    }

    #[test]
    fn a_json_key_given_twice_is_refused() {
        let Err(StoreError::Import(errs)) =
            read_json(r#"[{"value":"1k","quantity":1,"quantity":500}]"#)
        else {
            panic!("duplicate key must be refused");
        };
        assert!(errs[0].message.contains("appears twice"), "{errs:?}");
        let Err(StoreError::Import(_)) =
            read_json(r#"[{"value":"1k","quantity":1,"note":{"a":1,"a":2}}]"#)
        else {
            panic!("nested duplicate key must be refused");
        };
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
