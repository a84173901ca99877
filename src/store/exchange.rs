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
use super::{RowError, RowErrors, Store, StoreError};
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

/// Where a quoted CSV cell opens and never closes, found one character at a time. Follows the
/// CSV reader's rules: a quote opens a cell only at its start, `""` inside is a quote, and blank
/// lines are not rows.
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

/// A header name as a problem cites it: whole when short, else its first 40 characters.
fn column_name(name: &str) -> String {
    const SHOWN: usize = 40;
    if name.chars().count() <= SHOWN {
        name.to_string()
    } else {
        let head: String = name.chars().take(SHOWN).collect();
        format!("{head}…")
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
                        column: Some(column_name(name)),
                        message: "this column appears twice".into(),
                    });
                }
                map.push(i);
            }
            None => {
                errors.push(RowError {
                    row: 0,
                    column: Some(column_name(name)),
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

/// The longest CSV record or JSON element read, in bytes (our cap, far above any part: eleven
/// cells whose text caps are at most a few hundred characters). Reading stops at a longer one,
/// so a runaway cell, an unclosed quote or a file without line breaks never fills the memory.
pub const MAX_RECORD_BYTES: usize = 1 << 20;

/// A problem found while the bytes are read, carried through the CSV or JSON reader's I/O
/// error so that it comes out with its row.
#[derive(Debug)]
struct Refusal(RowError);

impl std::fmt::Display for Refusal {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        self.0.fmt(f)
    }
}

impl std::error::Error for Refusal {}

fn refuse(row: usize, message: String) -> std::io::Error {
    std::io::Error::other(Refusal(RowError {
        row,
        column: None,
        message,
    }))
}

/// The problem inside an I/O error: our own refusal with its row, or the read failure at
/// `row`.
fn io_problem(e: &std::io::Error, row: usize) -> RowError {
    match e.get_ref().and_then(|x| x.downcast_ref::<Refusal>()) {
        Some(Refusal(r)) => r.clone(),
        None => RowError {
            row,
            column: None,
            message: format!("cannot read the file: {e}"),
        },
    }
}

/// A source without its leading UTF-8 byte-order mark (spreadsheets on some systems write
/// one): the first three bytes are looked at, however few a read hands over, and passed on
/// unless they are the mark.
struct NoBom<R> {
    inner: R,
    /// The first bytes, not yet passed on; `None` before they are read.
    head: Option<([u8; 3], usize, usize)>,
}

impl<R: std::io::Read> NoBom<R> {
    fn new(inner: R) -> Self {
        NoBom { inner, head: None }
    }
}

impl<R: std::io::Read> std::io::Read for NoBom<R> {
    fn read(&mut self, out: &mut [u8]) -> std::io::Result<usize> {
        if self.head.is_none() {
            let mut first = [0u8; 3];
            let mut got = 0;
            while got < 3 {
                match self.inner.read(&mut first[got..]) {
                    Ok(0) => break,
                    Ok(n) => got += n,
                    Err(e) if e.kind() == std::io::ErrorKind::Interrupted => {}
                    Err(e) => return Err(e),
                }
            }
            let skip = if first[..got] == *"\u{feff}".as_bytes() {
                3
            } else {
                0
            };
            self.head = Some((first, skip, got));
        }
        if let Some((head, from, to)) = &mut self.head
            && *from < *to
        {
            let n = out.len().min(*to - *from);
            out[..n].copy_from_slice(&head[*from..*from + n]);
            *from += n;
            return Ok(n);
        }
        self.inner.read(out)
    }
}

/// The UTF-8 byte-order mark some spreadsheets write at the start of a file.
const UTF8_BOM: &[u8] = "\u{feff}".as_bytes();

/// The bytes of a CSV source handed on to the CSV reader one checked line at a time: every
/// line UTF-8, no record longer than
/// [`MAX_RECORD_BYTES`], and no quoted cell left open at the end (the CSV reader would
/// silently read every later row into that cell). Only the current line is held. A leading
/// byte-order mark is dropped here, and counted in the byte offsets a problem cites.
struct CsvLines<R> {
    inner: R,
    line: Vec<u8>,
    pos: usize,
    /// Bytes of the source before `line`.
    offset: usize,
    scan: QuoteScan,
    /// Bytes of the record in progress (a quoted cell may span lines).
    record_bytes: usize,
}

impl<R: std::io::BufRead> CsvLines<R> {
    fn new(inner: R) -> Self {
        CsvLines {
            inner,
            line: Vec::new(),
            pos: 0,
            offset: 0,
            scan: QuoteScan::default(),
            record_bytes: 0,
        }
    }

    /// The row of the record the scan is in, as a problem cites it.
    fn row(&self) -> usize {
        cited_row(self.scan.record)
    }

    fn too_long(&self) -> std::io::Error {
        if self.scan.in_quote {
            let (record, line) = self.scan.opened;
            unterminated(
                cited_row(record),
                format!(
                    "a quoted cell opens here (line {line} of the file) and runs on for more \
                     than {} KiB, so every row after it would be read into that one cell; close \
                     the quote (\") or remove it",
                    MAX_RECORD_BYTES / 1024
                ),
            )
        } else {
            refuse(
                self.row(),
                format!(
                    "is longer than {} KiB (line {} of the file); is this a CSV file with one \
                     row per line?",
                    MAX_RECORD_BYTES / 1024,
                    self.scan.line
                ),
            )
        }
    }

    /// Read and check the next line; an empty `line` at the end of the source.
    fn next_line(&mut self) -> std::io::Result<()> {
        self.offset += self.line.len();
        self.line.clear();
        self.pos = 0;
        loop {
            let buf = self.inner.fill_buf()?;
            if buf.is_empty() {
                break;
            }
            let (take, done) = match buf.iter().position(|&b| b == b'\n') {
                Some(i) => (i + 1, true),
                None => (buf.len(), false),
            };
            if self.record_bytes + self.line.len() + take > MAX_RECORD_BYTES {
                return Err(self.too_long());
            }
            self.line.extend_from_slice(&buf[..take]);
            self.inner.consume(take);
            if done {
                break;
            }
        }
        if self.offset == 0 && self.line.starts_with(UTF8_BOM) {
            // A byte-order mark is not part of the first cell, but it is part of the file: the
            // byte offsets cited below count it.
            self.line.drain(..UTF8_BOM.len());
            self.offset = UTF8_BOM.len();
        }
        if self.line.is_empty() {
            return match self.scan.open() {
                Some((record, line)) => {
                    Err(unterminated(cited_row(record), unterminated_text(line)))
                }
                None => Ok(()),
            };
        }
        match std::str::from_utf8(&self.line) {
            Ok(text) => text.chars().for_each(|c| self.scan.step(c)),
            Err(e) => {
                return Err(refuse(
                    self.row(),
                    format!(
                        "is not UTF-8 text (byte {} of the file is not valid); save it as UTF-8 \
                         CSV or JSON",
                        self.offset + e.valid_up_to() + 1
                    ),
                ));
            }
        }
        self.record_bytes = if self.scan.in_quote {
            self.record_bytes + self.line.len()
        } else {
            0
        };
        Ok(())
    }
}

impl<R: std::io::BufRead> std::io::Read for CsvLines<R> {
    fn read(&mut self, out: &mut [u8]) -> std::io::Result<usize> {
        if self.pos == self.line.len() {
            self.next_line()?;
        }
        let n = out.len().min(self.line.len() - self.pos);
        out[..n].copy_from_slice(&self.line[self.pos..self.pos + n]);
        self.pos += n;
        Ok(n)
    }
}

/// A record of the scan (0: the header) as a problem cites it: the header as row 0, data
/// records by the spreadsheet's row (header = row 1, so the first data record is row 2).
fn cited_row(record: usize) -> usize {
    if record == 0 { 0 } else { record + 1 }
}

fn unterminated_text(line: usize) -> String {
    format!(
        "a quoted cell opens here (line {line} of the file) and is never closed, so every row \
         after it would be read into that one cell; close the quote (\") or remove it"
    )
}

fn unterminated(row: usize, message: String) -> std::io::Error {
    refuse(row, message)
}

/// Read CSV text into records. Every problem (header, wrong number of cells, an unclosed
/// quote) is reported together; cell values are checked later, by the import.
pub fn read_csv(data: &str) -> Result<Vec<Record>, StoreError> {
    let mut records = Vec::new();
    let mut errors = RowErrors::new();
    each_csv_record(data.as_bytes(), |r| match r {
        Ok(rec) => records.push(rec),
        Err(e) => errors.push(e),
    });
    if errors.is_empty() {
        Ok(records)
    } else {
        Err(StoreError::Import(errors))
    }
}

/// Read CSV records one at a time from `reader` (a file, standard input or text), handing each
/// to `each` with its spreadsheet row number (header = row 1), or each problem as its error:
/// a bad header (one error per bad name), a row with the wrong number of cells, text that is
/// not UTF-8, a record over [`MAX_RECORD_BYTES`], a quoted cell never closed. Reading stops
/// at a problem of the bytes themselves (after the header's, or those), and goes on after a
/// row's. Holds one record and one line at a time, whatever the size of the source.
pub fn each_csv_record(reader: impl std::io::Read, mut each: impl FnMut(Result<Record, RowError>)) {
    let lines = CsvLines::new(std::io::BufReader::new(reader));
    let mut rdr = csv::ReaderBuilder::new()
        .has_headers(true)
        .trim(csv::Trim::All)
        .from_reader(lines);
    let header_problem = |e: &csv::Error| match e.kind() {
        csv::ErrorKind::Io(io) => io_problem(io, 0),
        _ => RowError {
            row: 0,
            column: None,
            message: format!("cannot read the header: {e}"),
        },
    };
    let map = match rdr.headers() {
        Ok(h) => match map_header(h.iter()) {
            Ok(m) => m,
            Err(errs) => return errs.into_iter().for_each(|e| each(Err(e))),
        },
        Err(e) => return each(Err(header_problem(&e))),
    };
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
                let problem = match e.kind() {
                    csv::ErrorKind::UnequalLengths {
                        expected_len, len, ..
                    } => RowError {
                        row,
                        column: None,
                        message: format!("has {len} cells, the header has {expected_len}"),
                    },
                    csv::ErrorKind::Io(io) => io_problem(io, row),
                    _ => RowError {
                        row,
                        column: None,
                        message: e.to_string(),
                    },
                };
                let fatal = !matches!(e.kind(), csv::ErrorKind::UnequalLengths { .. });
                each(Err(problem));
                if fatal {
                    // A problem of the bytes: the reader cannot go on from here.
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
}

/// Read a JSON array of objects keyed by column name (what `export --format json` writes).
pub fn read_json(data: &str) -> Result<Vec<Record>, StoreError> {
    let mut records = Vec::new();
    let mut errors = RowErrors::new();
    each_json_record(data.as_bytes(), |r| match r {
        Ok(rec) => records.push(rec),
        Err(e) => errors.push(e),
    });
    if errors.is_empty() {
        Ok(records)
    } else {
        Err(StoreError::Import(errors))
    }
}

/// Where a streamed JSON read is, shared between the byte counter and the element visitor.
#[derive(Default)]
struct JsonPlace {
    /// Bytes read from the source so far.
    read: std::cell::Cell<usize>,
    /// Where the element being read began (bytes).
    start: std::cell::Cell<usize>,
    /// The element being read, from 1; 0 outside the array.
    element: std::cell::Cell<usize>,
}

/// The bytes of a JSON source, counted, refusing an element over [`MAX_RECORD_BYTES`].
struct JsonBytes<'a, R> {
    inner: R,
    place: &'a JsonPlace,
}

impl<R: std::io::BufRead> std::io::Read for JsonBytes<'_, R> {
    fn read(&mut self, out: &mut [u8]) -> std::io::Result<usize> {
        let p = self.place;
        let n = self.inner.read(out)?;
        p.read.set(p.read.get() + n);
        if p.element.get() > 0 && p.read.get() - p.start.get() > MAX_RECORD_BYTES {
            return Err(refuse(
                p.element.get(),
                format!(
                    "this element is longer than {} KiB; no part needs that much text",
                    MAX_RECORD_BYTES / 1024
                ),
            ));
        }
        Ok(n)
    }
}

/// The visitor of the top-level array: hands each element on as it is read, never holding
/// more than one.
struct Elements<'a, F> {
    each: &'a mut F,
    place: &'a JsonPlace,
}

impl<'de, F: FnMut(Result<Record, RowError>)> serde::de::Visitor<'de> for Elements<'_, F> {
    type Value = ();

    fn expecting(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str("a JSON array of part objects")
    }

    fn visit_seq<A: serde::de::SeqAccess<'de>>(self, mut seq: A) -> Result<(), A::Error> {
        let mut row = 0usize;
        loop {
            row += 1;
            self.place.element.set(row);
            self.place.start.set(self.place.read.get());
            match seq.next_element::<Strict>()? {
                Some(Strict(v)) => json_record(row, v, &mut *self.each),
                None => break,
            }
        }
        self.place.element.set(0);
        Ok(())
    }
}

/// Read JSON records one at a time from `reader`: the top-level array's elements are read and
/// handed to `each` (with their position from 1) one by one, so the source is never held
/// whole. A key named twice in one object, invalid JSON or an element over
/// [`MAX_RECORD_BYTES`] is handed on as the error of its element (with the line and column
/// where reading stopped) and ends the read; an element that is not a part object (not an
/// object, an unknown column, a value that is not text or a number) is its row's error and the
/// read goes on. A byte-order mark may come first.
pub fn each_json_record(
    reader: impl std::io::Read,
    mut each: impl FnMut(Result<Record, RowError>),
) {
    let reader = std::io::BufReader::new(NoBom::new(reader));
    let place = JsonPlace::default();
    let bytes = JsonBytes {
        inner: reader,
        place: &place,
    };
    let mut de = serde_json::Deserializer::from_reader(bytes);
    let read = serde::Deserializer::deserialize_seq(
        &mut de,
        Elements {
            each: &mut each,
            place: &place,
        },
    )
    .and_then(|()| de.end());
    if let Err(e) = read {
        let row = place.element.get();
        let problem = match e.classify() {
            serde_json::error::Category::Io => {
                let io: std::io::Error = e.into();
                io_problem(&io, row)
            }
            _ => RowError {
                row,
                column: None,
                message: format!("not valid JSON: {e}"),
            },
        };
        each(Err(problem));
    }
}

/// One element of the array as a record, or its problems.
fn json_record(
    row: usize,
    item: serde_json::Value,
    each: &mut impl FnMut(Result<Record, RowError>),
) {
    let one = |column: Option<&str>, message: String| RowError {
        row,
        column: column.map(str::to_string),
        message,
    };
    let serde_json::Value::Object(obj) = item else {
        return each(Err(one(None, "expected an object".into())));
    };
    let map = match map_header(obj.keys().map(String::as_str)) {
        Ok(m) => m,
        Err(errs) => {
            return errs
                .into_iter()
                .for_each(|e| each(Err(RowError { row, ..e })));
        }
    };
    let mut cells: [Option<String>; 11] = Default::default();
    let mut bad = false;
    for ((key, v), col) in obj.iter().zip(map) {
        let text = match v {
            serde_json::Value::Null => None,
            serde_json::Value::String(s) => Some(s.trim().to_string()),
            serde_json::Value::Number(n) => Some(n.to_string()),
            serde_json::Value::Bool(_)
            | serde_json::Value::Array(_)
            | serde_json::Value::Object(_) => {
                each(Err(one(Some(key), "expected text or a number".into())));
                bad = true;
                None
            }
        };
        cells[col] = text.filter(|t| !t.is_empty());
    }
    if !bad {
        each(Ok(record_from_cells(row, cells)));
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
        // The spreadsheet's row (header = row 1), as every other problem is cited.
        assert_eq!(errs[0].row, 3);
        assert!(errs[0].message.contains("line 3"), "{errs:?}");
        // A closed quote with a doubled quote and a comma inside is fine.
        let ok = read_csv("value,quantity,note\n4k7,5,\"say \"\"hi\"\", ok\"\n\n1k,2,x\n")
            .expect("closed");
        assert_eq!(ok.len(), 2);
        assert_eq!(ok[0].part.note.as_deref(), Some("say \"hi\", ok"));
        // A blank line is not a row (the reader skips it), but it is a line of the file.
        let Err(StoreError::Import(errs)) = read_csv("value,quantity\n\n1,\"x\n") else {
            panic!("must be refused");
        };
        assert_eq!((errs[0].row, errs.len()), (2, 1), "{errs:?}");
        assert!(errs[0].message.contains("line 3"), "{errs:?}");
    }

    #[test]
    fn a_bad_byte_is_cited_by_its_offset_in_the_file_counting_the_byte_order_mark() {
        // "value,quantity\n" is 15 bytes, so the bad byte after "4" is byte 17 of the file
        // without a byte-order mark and byte 20 with one (the mark is 3 bytes).
        for (head, byte) in [(&b""[..], 17), (UTF8_BOM, 20)] {
            let mut data = head.to_vec();
            data.extend_from_slice(b"value,quantity\n4\xffk,1\n");
            let mut errors = Vec::new();
            each_csv_record(&data[..], |r| {
                if let Err(e) = r {
                    errors.push(e.message);
                }
            });
            assert_eq!(errors.len(), 1, "{errors:?}");
            assert!(
                errors[0].contains(&format!("byte {byte} of the file")),
                "{:?}",
                errors[0]
            );
        }
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

    /// A source that hands over `data` in `step`-byte pieces and says how far it was read.
    struct Pieces<'a> {
        data: &'a [u8],
        at: std::rc::Rc<std::cell::Cell<usize>>,
        step: usize,
    }

    impl std::io::Read for Pieces<'_> {
        fn read(&mut self, out: &mut [u8]) -> std::io::Result<usize> {
            let from = self.at.get();
            let n = out.len().min(self.step).min(self.data.len() - from);
            out[..n].copy_from_slice(&self.data[from..from + n]);
            self.at.set(from + n);
            Ok(n)
        }
    }

    #[test]
    fn json_elements_are_handed_on_before_the_rest_is_read() {
        let mut json = String::from("\u{feff}[");
        for i in 0..50_000 {
            if i > 0 {
                json.push(',');
            }
            json.push_str(&format!(r#"{{"value":"1k","quantity":{i}}}"#));
        }
        json.push(']');
        let at = std::rc::Rc::new(std::cell::Cell::new(0));
        let source = Pieces {
            data: json.as_bytes(),
            at: at.clone(),
            step: 1,
        };
        // A byte-order mark handed over one byte at a time is still dropped.
        let mut read_when_first = None;
        let mut n = 0;
        each_json_record(source, |r| {
            let r = r.expect("a good element");
            if r.row == 1 {
                read_when_first = Some(at.get());
            }
            assert_eq!(r.quantity, Some((r.row - 1).to_string()));
            n += 1;
        });
        assert_eq!(n, 50_000);
        let first = read_when_first.expect("the first element");
        assert!(
            first < 64 * 1024,
            "{first} of {} bytes read before the first element was handed on",
            json.len()
        );
    }

    #[test]
    fn csv_rows_are_handed_on_before_the_rest_is_read() {
        let mut csv = String::from("value,quantity\n");
        for i in 0..50_000 {
            csv.push_str(&format!("1k,{i}\n"));
        }
        let at = std::rc::Rc::new(std::cell::Cell::new(0));
        let source = Pieces {
            data: csv.as_bytes(),
            at: at.clone(),
            step: 4096,
        };
        let mut read_when_first = None;
        let mut n = 0;
        each_csv_record(source, |r| {
            let r = r.expect("a good row");
            if r.row == 2 {
                read_when_first = Some(at.get());
            }
            n += 1;
        });
        assert_eq!(n, 50_000);
        assert!(read_when_first.expect("the first row") < 64 * 1024);
    }

    #[test]
    fn a_bad_json_element_is_cited_by_its_number_and_ends_the_read() {
        let mut json = String::from("[\n");
        for i in 1..=300 {
            json.push_str(if i == 1 { "" } else { ",\n" });
            json.push_str(if i == 250 {
                r#"{"value":"1k","note":"a","note":"b","quantity":1}"#
            } else {
                r#"{"value":"1k","quantity":1}"#
            });
        }
        json.push_str("\n]");
        let mut good = 0;
        let mut bad = Vec::new();
        each_json_record(json.as_bytes(), |r| match r {
            Ok(_) => good += 1,
            Err(e) => bad.push(e),
        });
        assert_eq!(good, 249);
        assert_eq!(bad.len(), 1, "{bad:?}");
        assert_eq!(bad[0].row, 250);
        assert!(bad[0].message.contains("appears twice"), "{bad:?}");
        assert!(bad[0].message.contains("line 251"), "{bad:?}");
        // Not an array, trailing text, an element over the cap.
        let Err(StoreError::Import(e)) = read_json(r#"{"value":"1k"}"#) else {
            panic!("an object is not an array");
        };
        assert!(
            e[0].message.contains("a JSON array of part objects"),
            "{e:?}"
        );
        assert!(read_json(r#"[{"value":"1k","quantity":1}] x"#).is_err());
        let long = format!(
            r#"[{{"value":"1k","quantity":1}},{{"note":"{}"}}]"#,
            "n".repeat(MAX_RECORD_BYTES + 10)
        );
        let Err(StoreError::Import(e)) = read_json(&long) else {
            panic!("an element over the cap is refused");
        };
        assert_eq!(e[0].row, 2, "{e:?}");
        assert!(e[0].message.contains("longer than 1024 KiB"), "{e:?}");
    }
}
