//! Picture (c): the reach of a stock. One row per capacitor network; along a logarithmic axis,
//! the spans of time (or frequency) that the stocked resistor networks can give with it. The
//! bottom row is the union, with the holes — ranges nothing in the drawer can serve — in red.

use crate::report::svg::{Anchor, Frame, Svg};
use crate::units::{Engineering, format_sig};

/// The data of a reach picture.
#[derive(Debug, Clone, PartialEq)]
pub struct Reach {
    title: String,
    what: String,
    unit: &'static str,
    rows: Vec<(String, Vec<(f64, f64)>)>,
    range: (f64, f64),
}

/// Merge overlapping spans (in place order does not matter).
pub fn merge_spans(mut spans: Vec<(f64, f64)>) -> Vec<(f64, f64)> {
    spans.retain(|(a, b)| a.is_finite() && b.is_finite() && b >= a);
    spans.sort_by(|a, b| a.0.total_cmp(&b.0));
    let mut out: Vec<(f64, f64)> = Vec::new();
    for (a, b) in spans {
        match out.last_mut() {
            Some(last) if a <= last.1 => last.1 = last.1.max(b),
            _ => out.push((a, b)),
        }
    }
    out
}

/// The gaps of `covered` (merged) inside `range`.
pub fn holes(covered: &[(f64, f64)], range: (f64, f64)) -> Vec<(f64, f64)> {
    let mut out = Vec::new();
    let mut at = range.0;
    for &(a, b) in covered {
        if a > at {
            out.push((at, a.min(range.1)));
        }
        at = at.max(b);
        if at >= range.1 {
            break;
        }
    }
    if at < range.1 {
        out.push((at, range.1));
    }
    out.retain(|(a, b)| b > a);
    out
}

impl Reach {
    /// An empty picture over `range` of `what` ("pulse width", "frequency").
    pub fn new<Q: Engineering>(title: &str, what: &str, range: (Q, Q)) -> Self {
        Self {
            title: title.to_string(),
            what: what.to_string(),
            unit: range.0.symbol(),
            rows: Vec::new(),
            range: (range.0.si_value(), range.1.si_value()),
        }
    }

    /// Add a row: a capacitor network's label and the spans it reaches.
    pub fn row<Q: Engineering>(&mut self, label: &str, spans: &[(Q, Q)]) {
        let spans = spans
            .iter()
            .map(|(a, b)| (a.si_value(), b.si_value()))
            .collect();
        self.rows.push((label.to_string(), merge_spans(spans)));
    }

    /// The union of all rows, merged.
    pub fn covered(&self) -> Vec<(f64, f64)> {
        merge_spans(
            self.rows
                .iter()
                .flat_map(|(_, s)| s.iter().copied())
                .collect(),
        )
    }

    /// The ranges nothing reaches.
    pub fn holes(&self) -> Vec<(f64, f64)> {
        holes(&self.covered(), self.range)
    }

    /// The picture as an SVG document.
    pub fn to_svg(&self) -> String {
        let row_h = 18.0;
        let n = self.rows.len() as f64 + 1.0;
        let plot_h = (n * row_h).max(60.0);
        let label_w = self
            .rows
            .iter()
            .map(|(l, _)| l.chars().count())
            .max()
            .unwrap_or(8)
            .max(8) as f64
            * 6.6
            + 16.0;
        let (w, h) = (900.0, plot_h + 130.0);
        let mut svg = Svg::new(w, h);
        svg.text(w / 2.0, 24.0, &self.title, 14.0, Anchor::Middle, "#111");
        let frame = Frame {
            left: label_w,
            top: 44.0,
            width: w - label_w - 30.0,
            height: plot_h,
            x: self.range,
            y: (0.0, n),
            log_x: true,
        };
        frame.draw_x_axis(&mut svg, self.unit, &self.what);
        let band = |svg: &mut Svg, i: f64, spans: &[(f64, f64)], colour: &str| {
            let y = frame.top + i * row_h + 3.0;
            for &(a, b) in spans {
                let (xa, xb) = (frame.px(a.max(self.range.0)), frame.px(b.min(self.range.1)));
                if xb > frame.left && xa < frame.left + frame.width {
                    svg.rect(xa, y, (xb - xa).max(1.0), row_h - 6.0, colour, None);
                }
            }
        };
        for (i, (label, spans)) in self.rows.iter().enumerate() {
            svg.text(
                frame.left - 8.0,
                frame.top + (i as f64 + 0.5) * row_h + 4.0,
                label,
                11.0,
                Anchor::End,
                "#222",
            );
            band(&mut svg, i as f64, spans, "#5dade2");
        }
        let last = self.rows.len() as f64;
        svg.text(
            frame.left - 8.0,
            frame.top + (last + 0.5) * row_h + 4.0,
            "any capacitor",
            11.0,
            Anchor::End,
            "#111",
        );
        band(&mut svg, last, &self.covered(), "#1e8449");
        band(&mut svg, last, &self.holes(), "#e74c3c");
        let holes = self.holes();
        let summary = if holes.is_empty() {
            "the stock reaches every value in this range".to_string()
        } else {
            let list: Vec<String> = holes
                .iter()
                .take(4)
                .map(|(a, b)| {
                    format!(
                        "{} … {}",
                        format_sig(*a, 3, self.unit),
                        format_sig(*b, 3, self.unit)
                    )
                })
                .collect();
            format!(
                "not reachable (red): {}{}",
                list.join(", "),
                if holes.len() > 4 { ", …" } else { "" }
            )
        };
        svg.text(
            frame.left,
            h - 20.0,
            &summary,
            12.0,
            Anchor::Start,
            "#922b21",
        );
        svg.finish()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn spans_merge_and_holes_are_the_complement() {
        let merged = merge_spans(vec![(3.0, 4.0), (1.0, 2.0), (1.5, 2.5)]);
        assert_eq!(merged, vec![(1.0, 2.5), (3.0, 4.0)]);
        assert_eq!(
            holes(&merged, (0.5, 5.0)),
            vec![(0.5, 1.0), (2.5, 3.0), (4.0, 5.0)]
        );
    }
}
