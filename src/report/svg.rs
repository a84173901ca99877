//! A small SVG writer: shapes, escaped text, and axes with SI-labelled ticks.
//!
//! Written directly rather than through a plotting crate so that no font library is needed and
//! the layout (margins, label spacing) is under our control. Text widths are estimated, so
//! callers leave generous margins. Pure: builds a `String`.

use crate::units::format_sig;
use std::fmt::Write as _;

/// Estimated width in pixels of `text` at `size` px (average glyph ≈ 0.6 em for sans-serif).
pub fn text_width(text: &str, size: f64) -> f64 {
    text.chars().count() as f64 * size * 0.6
}

/// Escape text for XML.
pub fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&apos;"),
            _ => out.push(c),
        }
    }
    out
}

/// Horizontal anchoring of a text.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Anchor {
    /// Text starts at x.
    Start,
    /// Text is centred on x.
    Middle,
    /// Text ends at x.
    End,
}

impl Anchor {
    fn as_str(self) -> &'static str {
        match self {
            Anchor::Start => "start",
            Anchor::Middle => "middle",
            Anchor::End => "end",
        }
    }
}

/// An SVG document being built.
#[derive(Debug)]
pub struct Svg {
    width: f64,
    height: f64,
    body: String,
}

impl Svg {
    /// A blank white canvas.
    pub fn new(width: f64, height: f64) -> Self {
        let mut s = Self {
            width,
            height,
            body: String::new(),
        };
        s.rect(0.0, 0.0, width, height, "#ffffff", None);
        s
    }

    /// Canvas width.
    pub fn width(&self) -> f64 {
        self.width
    }

    /// Canvas height.
    pub fn height(&self) -> f64 {
        self.height
    }

    /// A filled rectangle, optionally stroked.
    pub fn rect(&mut self, x: f64, y: f64, w: f64, h: f64, fill: &str, stroke: Option<&str>) {
        let stroke = stroke.map_or(String::new(), |s| {
            format!(r#" stroke="{s}" stroke-width="1""#)
        });
        let _ = writeln!(
            self.body,
            r#"<rect x="{x:.2}" y="{y:.2}" width="{:.2}" height="{:.2}" fill="{fill}"{stroke}/>"#,
            w.max(0.0),
            h.max(0.0)
        );
    }

    /// A straight line; `dash` like "6 4" for dashed.
    pub fn line(
        &mut self,
        (x1, y1): (f64, f64),
        (x2, y2): (f64, f64),
        stroke: &str,
        width: f64,
        dash: Option<&str>,
    ) {
        let dash = dash.map_or(String::new(), |d| format!(r#" stroke-dasharray="{d}""#));
        let _ = writeln!(
            self.body,
            r#"<line x1="{x1:.2}" y1="{y1:.2}" x2="{x2:.2}" y2="{y2:.2}" stroke="{stroke}" stroke-width="{width}"{dash}/>"#
        );
    }

    /// A polyline through the points.
    pub fn polyline(&mut self, points: &[(f64, f64)], stroke: &str, width: f64) {
        let mut pts = String::new();
        for (x, y) in points {
            let _ = write!(pts, "{x:.2},{y:.2} ");
        }
        let _ = writeln!(
            self.body,
            r#"<polyline points="{}" fill="none" stroke="{stroke}" stroke-width="{width}" stroke-linejoin="round"/>"#,
            pts.trim_end()
        );
    }

    /// Text at (x, y) (baseline), escaped.
    pub fn text(&mut self, x: f64, y: f64, text: &str, size: f64, anchor: Anchor, fill: &str) {
        let _ = writeln!(
            self.body,
            r#"<text x="{x:.2}" y="{y:.2}" font-family="DejaVu Sans, Arial, sans-serif" font-size="{size}" text-anchor="{}" fill="{fill}">{}</text>"#,
            anchor.as_str(),
            escape(text)
        );
    }

    /// Text rotated by -90° about its anchor (for a y-axis title).
    pub fn vertical_text(&mut self, x: f64, y: f64, text: &str, size: f64) {
        let _ = writeln!(
            self.body,
            r##"<text x="{x:.2}" y="{y:.2}" font-family="DejaVu Sans, Arial, sans-serif" font-size="{size}" text-anchor="middle" fill="#222" transform="rotate(-90 {x:.2} {y:.2})">{}</text>"##,
            escape(text)
        );
    }

    /// The finished document.
    pub fn finish(self) -> String {
        format!(
            "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{w}\" height=\"{h}\" viewBox=\"0 0 {w} {h}\">\n{}</svg>\n",
            self.body,
            w = self.width,
            h = self.height
        )
    }
}

/// A plot area on the canvas with a linear or logarithmic x axis and a linear y axis.
#[derive(Debug, Clone, Copy)]
pub struct Frame {
    /// Left edge of the plot area in pixels.
    pub left: f64,
    /// Top edge.
    pub top: f64,
    /// Width.
    pub width: f64,
    /// Height.
    pub height: f64,
    /// x range in data units.
    pub x: (f64, f64),
    /// y range in data units.
    pub y: (f64, f64),
    /// Whether x is logarithmic.
    pub log_x: bool,
}

impl Frame {
    /// Pixel x of a data x.
    pub fn px(&self, x: f64) -> f64 {
        let t = if self.log_x {
            (x.max(f64::MIN_POSITIVE).log10() - self.x.0.log10())
                / (self.x.1.log10() - self.x.0.log10())
        } else {
            (x - self.x.0) / (self.x.1 - self.x.0)
        };
        self.left + t.clamp(-0.05, 1.05) * self.width
    }

    /// Pixel y of a data y.
    pub fn py(&self, y: f64) -> f64 {
        let t = (y - self.y.0) / (self.y.1 - self.y.0);
        self.top + self.height - t.clamp(-0.05, 1.05) * self.height
    }

    /// Draw the frame, grid and the x-axis ticks labelled in SI with `unit`; return nothing.
    /// Labels that would overlap are dropped.
    pub fn draw_x_axis(&self, svg: &mut Svg, unit: &str, title: &str) {
        let bottom = self.top + self.height;
        svg.rect(
            self.left,
            self.top,
            self.width,
            self.height,
            "none",
            Some("#444"),
        );
        let ticks = if self.log_x {
            log_ticks(self.x.0, self.x.1)
        } else {
            nice_ticks(self.x.0, self.x.1, 8)
        };
        let sig = distinct_sig(&ticks, unit);
        let mut last_right = f64::NEG_INFINITY;
        for t in ticks {
            let x = self.px(t);
            svg.line((x, self.top), (x, bottom), "#e4e4e4", 1.0, None);
            svg.line((x, bottom), (x, bottom + 5.0), "#444", 1.0, None);
            let label = format_sig(t, sig, unit);
            let w = text_width(&label, 11.0);
            if x - w / 2.0 > last_right + 6.0 {
                svg.text(x, bottom + 18.0, &label, 11.0, Anchor::Middle, "#222");
                last_right = x + w / 2.0;
            }
        }
        svg.text(
            self.left + self.width / 2.0,
            bottom + 38.0,
            title,
            12.0,
            Anchor::Middle,
            "#222",
        );
    }

    /// Draw the frame and the vertical grid lines only (a panel sharing its x axis with another).
    pub fn draw_x_grid(&self, svg: &mut Svg) {
        svg.rect(
            self.left,
            self.top,
            self.width,
            self.height,
            "none",
            Some("#444"),
        );
        let ticks = if self.log_x {
            log_ticks(self.x.0, self.x.1)
        } else {
            nice_ticks(self.x.0, self.x.1, 8)
        };
        for t in ticks {
            let x = self.px(t);
            svg.line(
                (x, self.top),
                (x, self.top + self.height),
                "#e4e4e4",
                1.0,
                None,
            );
        }
    }

    /// Draw y-axis ticks labelled in SI with `unit`.
    pub fn draw_y_axis(&self, svg: &mut Svg, unit: &str, title: &str) {
        let ticks = nice_ticks(self.y.0, self.y.1, 5);
        let sig = distinct_sig(&ticks, unit);
        for t in ticks {
            let y = self.py(t);
            svg.line(
                (self.left, y),
                (self.left + self.width, y),
                "#eeeeee",
                1.0,
                None,
            );
            svg.line((self.left - 5.0, y), (self.left, y), "#444", 1.0, None);
            svg.text(
                self.left - 8.0,
                y + 4.0,
                &format_sig(t, sig, unit),
                11.0,
                Anchor::End,
                "#222",
            );
        }
        svg.vertical_text(self.left - 52.0, self.top + self.height / 2.0, title, 12.0);
    }
}

/// The fewest significant digits (3 to 8) at which every tick label differs from its neighbours.
fn distinct_sig(ticks: &[f64], unit: &str) -> usize {
    (3..=8)
        .find(|&sig| {
            let labels: Vec<String> = ticks.iter().map(|t| format_sig(*t, sig, unit)).collect();
            labels.windows(2).all(|w| w[0] != w[1])
        })
        .unwrap_or(8)
}

/// Ticks at 1, 2, 5 × 10^n covering [lo, hi] with about `target` intervals.
pub fn nice_ticks(lo: f64, hi: f64, target: usize) -> Vec<f64> {
    if hi.partial_cmp(&lo) != Some(std::cmp::Ordering::Greater)
        || !lo.is_finite()
        || !hi.is_finite()
    {
        return vec![lo];
    }
    let raw = (hi - lo) / target.max(1) as f64;
    let mag = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 5.0, 10.0]
        .iter()
        .map(|m| m * mag)
        .find(|s| *s >= raw)
        .unwrap_or(10.0 * mag);
    let first = (lo / step).ceil() as i64;
    let last = (hi / step).floor() as i64;
    (first..=last).map(|i| i as f64 * step).collect()
}

/// Decade ticks (with 2 and 5 in between when the range is short) covering [lo, hi].
pub fn log_ticks(lo: f64, hi: f64) -> Vec<f64> {
    if lo <= 0.0 || hi <= lo || lo.is_nan() || hi.is_nan() {
        return vec![];
    }
    let (a, b) = (lo.log10().floor() as i32, hi.log10().ceil() as i32);
    let mults: &[f64] = if b - a <= 4 { &[1.0, 2.0, 5.0] } else { &[1.0] };
    let mut out = Vec::new();
    for e in a..=b {
        for m in mults {
            let v = m * 10f64.powi(e);
            if v >= lo * 0.999_999 && v <= hi * 1.000_001 {
                out.push(v);
            }
        }
    }
    out
}

/// A legend box in the top-right corner of `frame`: (colour, label, dashed).
pub fn legend(svg: &mut Svg, frame: &Frame, entries: &[(&str, String, bool)]) {
    if entries.is_empty() {
        return;
    }
    let w = entries
        .iter()
        .map(|(_, l, _)| text_width(l, 11.0))
        .fold(0.0, f64::max)
        + 40.0;
    let h = entries.len() as f64 * 16.0 + 8.0;
    let x = frame.left + frame.width - w - 8.0;
    let y = frame.top + 8.0;
    svg.rect(x, y, w, h, "#ffffffe6", Some("#999"));
    for (i, (colour, label, dashed)) in entries.iter().enumerate() {
        let ly = y + 14.0 + i as f64 * 16.0;
        svg.line(
            (x + 6.0, ly - 4.0),
            (x + 26.0, ly - 4.0),
            colour,
            2.0,
            dashed.then_some("5 3"),
        );
        svg.text(x + 32.0, ly, label, 11.0, Anchor::Start, "#222");
    }
}

/// How a legend entry's sample is drawn.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Swatch {
    /// A solid line.
    Line,
    /// A dashed line.
    Dashed,
    /// A filled box.
    Fill,
}

/// A legend laid out in rows outside the plot, from (`left`, `top`) across `width` pixels,
/// wrapping when an entry would not fit; returns the height used. Outside the plot it can
/// never hide a curve or a marker.
pub fn legend_rows(
    svg: &mut Svg,
    (left, top, width): (f64, f64, f64),
    entries: &[(&str, String, Swatch)],
) -> f64 {
    let row_h = 18.0;
    let (mut x, mut y) = (left, top);
    for (colour, label, swatch) in entries {
        let w = 28.0 + text_width(label, 11.0) + 22.0;
        if x > left && x + w > left + width {
            x = left;
            y += row_h;
        }
        match swatch {
            Swatch::Fill => svg.rect(x, y + 3.0, 20.0, 10.0, colour, Some("#666")),
            Swatch::Line | Swatch::Dashed => svg.line(
                (x, y + 8.0),
                (x + 20.0, y + 8.0),
                colour,
                2.0,
                (*swatch == Swatch::Dashed).then_some("5 3"),
            ),
        }
        svg.text(x + 26.0, y + 12.0, label, 11.0, Anchor::Start, "#222");
        x += w;
    }
    y - top + row_h
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn nice_ticks_are_round_and_cover_the_range() {
        assert_eq!(
            nice_ticks(0.0, 10.0, 5),
            vec![0.0, 2.0, 4.0, 6.0, 8.0, 10.0]
        );
        assert_eq!(log_ticks(1e-3, 1e1).first().copied(), Some(1e-3));
    }

    #[test]
    fn text_is_escaped() {
        assert_eq!(escape("a<b & \"c\""), "a&lt;b &amp; &quot;c&quot;");
    }
}
