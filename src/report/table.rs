//! One table renderer for every report: box drawing on a terminal, tab-separated text with a
//! header line when piped (so `cut`, `awk` and spreadsheets read it), chosen by [`Style`].
//! Pure; returns a string.

use super::style::Style;
use comfy_table::{CellAlignment, Table as Boxes, presets};

/// A table of text cells with a header; some columns right-aligned (numbers).
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub struct Table {
    header: Vec<String>,
    rows: Vec<Vec<String>>,
    right: Vec<usize>,
}

impl Table {
    /// A table with these column names.
    pub fn new<S: Into<String>>(header: impl IntoIterator<Item = S>) -> Self {
        Table {
            header: header.into_iter().map(Into::into).collect(),
            ..Table::default()
        }
    }

    /// Right-align these columns (0-based) when drawn with boxes.
    #[must_use]
    pub fn right_aligned(mut self, columns: &[usize]) -> Self {
        self.right = columns.to_vec();
        self
    }

    /// Add a row; missing cells are empty, extra cells are kept.
    pub fn row<S: Into<String>>(&mut self, cells: impl IntoIterator<Item = S>) {
        self.rows.push(cells.into_iter().map(Into::into).collect());
    }

    /// Number of rows (without the header).
    pub fn len(&self) -> usize {
        self.rows.len()
    }

    /// Whether there are no rows.
    pub fn is_empty(&self) -> bool {
        self.rows.is_empty()
    }

    /// The table as text, without a final newline.
    pub fn render(&self, style: Style) -> String {
        if style.boxes {
            return self.boxes();
        }
        std::iter::once(&self.header)
            .chain(&self.rows)
            .map(|r| {
                r.iter()
                    .map(String::as_str)
                    .map(clean)
                    .collect::<Vec<_>>()
                    .join("\t")
            })
            .collect::<Vec<_>>()
            .join("\n")
    }

    fn boxes(&self) -> String {
        let mut t = Boxes::new();
        t.load_style(presets::UTF8_FULL_CONDENSED);
        t.set_header(
            self.header
                .iter()
                .map(String::as_str)
                .map(clean)
                .collect::<Vec<_>>(),
        );
        for r in &self.rows {
            t.add_row(r.iter().map(String::as_str).map(clean).collect::<Vec<_>>());
        }
        for &col in &self.right {
            if let Some(c) = t.column_mut(col) {
                c.set_cell_alignment(CellAlignment::Right);
            }
        }
        t.to_string()
    }
}

/// Tabs and newlines inside a cell would break the columns: show them as spaces.
fn clean(s: &str) -> String {
    s.replace(['\t', '\n', '\r'], " ")
}

#[cfg(test)]
mod tests {
    use super::*;

    fn sample() -> Table {
        let mut t = Table::new(["value", "qty"]).right_aligned(&[1]);
        t.row(["4.7 kΩ", "50"]);
        t.row(["a\tb", "1"]);
        t
    }

    #[test]
    fn piped_tables_are_tab_separated() {
        assert_eq!(
            sample().render(Style::PLAIN),
            "value\tqty\n4.7 kΩ\t50\na b\t1"
        );
    }

    #[test]
    fn terminal_tables_are_boxed() {
        let text = sample().render(Style::choose(true, false, false));
        assert!(text.contains('┌') && text.contains('│'), "{text}");
        assert!(text.contains("4.7 kΩ"));
        assert!(!text.contains('\t'));
    }
}
