//! The stock table of `onhand list` and its summary line. Pure: takes the rows, returns text.

use super::style::Style;
use super::table::Table;
use crate::model::part::{Kind, Part};
use crate::model::text;
use crate::units::count;

/// A part's ratings as one cell: `50 V`, `250 mW`, both, or nothing.
pub fn rating(p: &Part) -> String {
    match (p.voltage_rating, p.power_rating) {
        (Some(v), Some(w)) => format!("{} {}", text::volts_text(v), text::watts_text(w)),
        (Some(v), None) => text::volts_text(v),
        (None, Some(w)) => text::watts_text(w),
        (None, None) => String::new(),
    }
}

/// Stored text as it may reach a terminal: control characters shown as escapes (rows stored
/// before they were refused on input, or written by other tools, cannot act on the screen).
pub fn safe(s: &str) -> String {
    text::for_terminal(s).into_owned()
}

/// The stock table.
pub fn table(parts: &[Part]) -> Table {
    let mut t = Table::new([
        "#", "kind", "value", "tol", "tech", "rating", "package", "bin", "qty", "held", "free",
        "low", "note",
    ])
    .right_aligned(&[2, 8, 9, 10, 11]);
    for p in parts {
        let low = match p.low_stock {
            Some(l) if p.quantity <= l => format!("{l} LOW"),
            Some(l) => l.to_string(),
            None => String::new(),
        };
        let value = match p.kind {
            Kind::Diode => String::new(),
            _ => p.value.to_string(),
        };
        t.row([
            format!("#{}", p.id),
            p.kind.to_string(),
            value,
            crate::model::read::tolerance_cell(p.kind, p.tolerance),
            p.technology.label().to_string(),
            rating(p),
            safe(&p.package),
            safe(&p.bin),
            p.quantity.to_string(),
            p.held.to_string(),
            p.available().to_string(),
            low,
            safe(&p.note),
        ]);
    }
    t
}

/// The line under the table: `1 row, 1 piece`, `3 rows, 40 pieces (5 held for plans, 35 free)`.
pub fn summary(parts: &[Part]) -> String {
    // Summed wide: two rows near the largest count must never wrap to a negative total.
    let pieces: i128 = parts.iter().map(|p| i128::from(p.quantity)).sum();
    let held: i128 = parts.iter().map(|p| i128::from(p.held)).sum();
    let rows = count(parts.len(), "row", "rows");
    let pieces_text = count(pieces, "piece", "pieces");
    if held == 0 {
        format!("{rows}, {pieces_text}")
    } else {
        format!(
            "{rows}, {pieces_text} ({held} held for plans, {} free)",
            pieces - held
        )
    }
}

/// The whole text report of `list`, with a final newline.
pub fn text(parts: &[Part], style: Style) -> String {
    if parts.is_empty() {
        return "no parts match\n".to_string();
    }
    format!("{}\n{}\n", table(parts).render(style), summary(parts))
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::part::{Technology, Value};
    use crate::units::{Ohms, Tolerance};

    fn row(id: i64, quantity: i64, held: i64) -> Part {
        Part {
            id,
            kind: Kind::Resistor,
            value: Value::Resistance(Ohms::from_si(4700.0).expect("ohms")),
            tolerance: Tolerance::symmetric_percent(5.0).expect("tol"),
            technology: Technology::CarbonFilm,
            voltage_rating: None,
            power_rating: None,
            package: "axial".into(),
            bin: "A1".into(),
            quantity,
            held,
            low_stock: Some(2),
            note: "bell\u{7}".into(),
        }
    }

    #[test]
    fn summary_counts_in_words() {
        assert_eq!(summary(&[row(1, 1, 0)]), "1 row, 1 piece");
        assert_eq!(
            summary(&[row(1, 10, 3), row(2, 5, 0)]),
            "2 rows, 15 pieces (3 held for plans, 12 free)"
        );
        assert_eq!(text(&[], Style::PLAIN), "no parts match\n");
    }

    #[test]
    fn table_is_tab_separated_when_plain_and_escapes_stored_text() {
        let t = text(&[row(7, 2, 0)], Style::PLAIN);
        let mut lines = t.lines();
        assert!(lines.next().expect("header").starts_with("#\tkind\tvalue"));
        let cells: Vec<&str> = lines.next().expect("row").split('\t').collect();
        assert_eq!(cells[0], "#7");
        assert_eq!(cells[11], "2 LOW");
        assert!(!cells[12].contains('\u{7}'), "{:?}", cells[12]);
        assert_eq!(lines.next(), Some("1 row, 2 pieces"));
    }
}
