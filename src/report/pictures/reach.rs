//! Picture (c): the reach of a stock. One row per capacitor network; along a logarithmic axis,
//! the spans of time (or frequency) that the stocked resistor networks can give with it. Below
//! the rows, what the networks not listed add, then the union of everything, with the holes —
//! ranges nothing in the drawer can serve — in red, and under the frame the purchase suggested
//! for each hole. Pure: builds a `String`.

use crate::model::Kind;
use crate::report::svg::{Anchor, Frame, Svg, text_width};
use crate::solve::reach::{Hole, NARROW_SHARE, ReachMap, bridge, gaps, merge};
use crate::units::{Engineering, format_sig};

/// The data of a reach picture.
#[derive(Debug, Clone, PartialEq)]
pub struct Reach {
    title: String,
    what: String,
    unit: &'static str,
    rows: Vec<(String, Vec<(f64, f64)>)>,
    /// A row of what the unlisted networks add: label and spans.
    extra: Option<(String, Vec<(f64, f64)>)>,
    /// Everything reached, when known beyond the rows (else the union of the rows).
    union: Option<Vec<(f64, f64)>>,
    /// The holes, when known (else every gap of the union), and how many narrow gaps are left
    /// out of them.
    wide: Option<(Vec<(f64, f64)>, usize)>,
    /// Lines under the frame: one per hole with its purchase.
    notes: Vec<String>,
    range: (f64, f64),
}

/// Most lines of purchases under the frame.
const MAX_NOTES: usize = 6;

impl Reach {
    /// An empty picture over `range` of `what` ("pulse width", "frequency").
    pub fn new<Q: Engineering>(title: &str, what: &str, range: (Q, Q)) -> Self {
        Self {
            title: title.to_string(),
            what: what.to_string(),
            unit: range.0.symbol(),
            rows: Vec::new(),
            extra: None,
            union: None,
            wide: None,
            notes: Vec::new(),
            range: (range.0.si_value(), range.1.si_value()),
        }
    }

    /// The picture of a computed reach, with the purchase found for each hole.
    pub fn of_map(map: &ReachMap, fixes: &[Hole], title: &str) -> Self {
        let u = map.form.unit();
        // Narrow gaps (under a tenth of the tolerance) are drawn closed, as the report counts
        // them apart from the holes.
        let solid = |s: &[(f64, f64)]| bridge(s, NARROW_SHARE * map.tol).0;
        let mut r = Self {
            title: title.to_string(),
            what: map.form.axis().to_string(),
            unit: u,
            rows: map
                .rows
                .iter()
                .map(|row| (row.label.clone(), solid(&row.spans)))
                .collect(),
            extra: (map.others > 0).then(|| {
                (
                    format!(
                        "+{} more networks{}",
                        map.others,
                        if map.others_add.is_empty() {
                            " (add nothing)"
                        } else {
                            ""
                        }
                    ),
                    solid(&map.others_add),
                )
            }),
            union: Some(solid(&map.covered)),
            wide: Some((map.holes.clone(), map.narrow_gaps.len())),
            notes: Vec::new(),
            range: map.range,
        };
        let mut order: Vec<&Hole> = fixes.iter().collect();
        order.sort_by(|a, b| (b.hi / b.lo).total_cmp(&(a.hi / a.lo)));
        for h in order.into_iter().take(MAX_NOTES) {
            let span = format!("{} … {}", format_sig(h.lo, 3, u), format_sig(h.hi, 3, u));
            r.notes.push(match &h.fix {
                Some(f) => format!(
                    "{span}: buy one {} {} — closes {:.0} % of it",
                    format_sig(
                        f.value,
                        3,
                        if f.kind == Kind::Capacitor { "F" } else { "Ω" }
                    ),
                    if f.kind == Kind::Capacitor {
                        "capacitor"
                    } else {
                        "resistor"
                    },
                    f.closes * 100.0
                ),
                None if h.searched => format!("{span}: no single purchase found"),
                None => format!("{span}: no purchase looked for (a narrower hole)"),
            });
        }
        if fixes.len() > MAX_NOTES {
            r.notes.push(format!(
                "… and {} narrower holes (see the text report)",
                fixes.len() - MAX_NOTES
            ));
        }
        r
    }

    /// Add a row: a capacitor network's label and the spans it reaches.
    pub fn row<Q: Engineering>(&mut self, label: &str, spans: &[(Q, Q)]) {
        let spans = spans
            .iter()
            .map(|(a, b)| (a.si_value(), b.si_value()))
            .collect();
        self.rows.push((label.to_string(), merge(spans)));
    }

    /// The union of all rows, merged.
    pub fn covered(&self) -> Vec<(f64, f64)> {
        if let Some(u) = &self.union {
            return u.clone();
        }
        merge(
            self.rows
                .iter()
                .chain(self.extra.iter())
                .flat_map(|(_, s)| s.iter().copied())
                .collect(),
        )
    }

    /// The ranges nothing reaches.
    pub fn holes(&self) -> Vec<(f64, f64)> {
        match &self.wide {
            Some((h, _)) => h.clone(),
            None => gaps(&self.covered(), self.range),
        }
    }

    /// The picture as an SVG document.
    pub fn to_svg(&self) -> String {
        let row_h = 20.0;
        let labels: Vec<&str> = self
            .rows
            .iter()
            .chain(self.extra.iter())
            .map(|(l, _)| l.as_str())
            .chain(std::iter::once("any capacitor"))
            .collect();
        let n = labels.len() as f64;
        let plot_h = n * row_h;
        let label_w = labels
            .iter()
            .map(|l| text_width(l, 11.0))
            .fold(60.0, f64::max)
            + 18.0;
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
        let summary = match &self.wide {
            Some((_, n)) if *n > 0 => format!(
                "{summary}; {n} narrow gap{} (under a tenth of the tolerance) not marked",
                if *n == 1 { "" } else { "s" }
            ),
            _ => summary,
        };
        let text_lines = 1 + self.notes.len();
        let w = 960.0f64.max(
            std::iter::once(&summary)
                .chain(&self.notes)
                .map(|s| label_w + text_width(s, 12.0) + 40.0)
                .chain(std::iter::once(text_width(&self.title, 14.0) + 40.0))
                .fold(0.0, f64::max),
        );
        let top = 48.0;
        let h = top + plot_h + 62.0 + text_lines as f64 * 17.0 + 12.0;
        let mut svg = Svg::new(w, h);
        svg.rect(0.0, 0.0, w, h, "#ffffff", None);
        svg.text(w / 2.0, 26.0, &self.title, 14.0, Anchor::Middle, "#111");
        let frame = Frame {
            left: label_w,
            top,
            width: w - label_w - 40.0,
            height: plot_h,
            x: self.range,
            y: (0.0, n),
            log_x: true,
        };
        // Zebra rows first, so the grid and bands sit on top of them.
        for i in 0..labels.len() {
            if i % 2 == 1 {
                svg.rect(
                    frame.left,
                    frame.top + i as f64 * row_h,
                    frame.width,
                    row_h,
                    "#f6f8fa",
                    None,
                );
            }
        }
        frame.draw_x_axis(&mut svg, self.unit, &self.what);
        let band = |svg: &mut Svg, i: usize, spans: &[(f64, f64)], colour: &str| {
            let y = frame.top + i as f64 * row_h + 4.0;
            for &(a, b) in spans {
                let (a, b) = (a.max(self.range.0), b.min(self.range.1));
                if b <= a {
                    continue;
                }
                let (xa, xb) = (frame.px(a), frame.px(b));
                svg.rect(xa, y, (xb - xa).max(1.5), row_h - 8.0, colour, None);
            }
        };
        let label = |svg: &mut Svg, i: usize, text: &str, colour: &str| {
            svg.text(
                frame.left - 8.0,
                frame.top + (i as f64 + 0.5) * row_h + 4.0,
                text,
                11.0,
                Anchor::End,
                colour,
            );
        };
        for (i, (text, spans)) in self.rows.iter().enumerate() {
            label(&mut svg, i, text, "#222");
            band(&mut svg, i, spans, "#5dade2");
        }
        let mut i = self.rows.len();
        if let Some((text, spans)) = &self.extra {
            label(&mut svg, i, text, "#555");
            band(&mut svg, i, spans, "#a9cce3");
            i += 1;
        }
        // The union row is set apart by a rule above it.
        let rule_y = frame.top + i as f64 * row_h;
        svg.line(
            (frame.left, rule_y),
            (frame.left + frame.width, rule_y),
            "#444",
            1.0,
            None,
        );
        label(&mut svg, i, "any capacitor", "#111");
        band(&mut svg, i, &self.covered(), "#1e8449");
        band(&mut svg, i, &holes, "#e74c3c");
        let mut y = frame.top + plot_h + 62.0;
        let colour = if holes.is_empty() {
            "#1e8449"
        } else {
            "#922b21"
        };
        svg.text(frame.left, y, &summary, 12.0, Anchor::Start, colour);
        for note in &self.notes {
            y += 17.0;
            svg.text(frame.left, y, note, 12.0, Anchor::Start, "#333");
        }
        svg.finish()
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn spans_merge_and_holes_are_the_complement() {
        // The picture uses solve's merge and gaps (one copy of each).
        let merged = merge(vec![(3.0, 4.0), (1.0, 2.0), (1.5, 2.5)]);
        assert_eq!(merged, vec![(1.0, 2.5), (3.0, 4.0)]);
        assert_eq!(
            gaps(&merged, (0.5, 5.0)),
            vec![(0.5, 1.0), (2.5, 3.0), (4.0, 5.0)]
        );
    }
}
