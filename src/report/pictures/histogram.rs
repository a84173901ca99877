//! Picture (b): the Monte Carlo histogram of a period or pulse width, with the nominal value,
//! the target window and the worst-case interval marked.

use crate::report::svg::{Anchor, Frame, Svg, Swatch, legend_rows, nice_ticks};
use crate::units::{Engineering, format_sig};

/// The data of a histogram picture.
#[derive(Debug, Clone, PartialEq)]
pub struct Histogram {
    title: String,
    what: String,
    unit: &'static str,
    samples: Vec<f64>,
    nominal: f64,
    worst: (f64, f64),
    target: Option<(f64, f64)>,
}

impl Histogram {
    /// A histogram of `samples` of `what` ("period", "pulse width"), with the nominal value and
    /// the worst-case interval.
    pub fn new<Q: Engineering>(
        title: &str,
        what: &str,
        samples: &[Q],
        nominal: Q,
        worst: (Q, Q),
    ) -> Self {
        Self {
            title: title.to_string(),
            what: what.to_string(),
            unit: nominal.symbol(),
            samples: samples
                .iter()
                .map(Engineering::si_value)
                .filter(|v| v.is_finite())
                .collect(),
            nominal: nominal.si_value(),
            worst: (worst.0.si_value(), worst.1.si_value()),
            target: None,
        }
    }

    /// A histogram of a fraction (a duty cycle) drawn in percent: `samples`, `nominal` and
    /// `worst` are fractions (0.5 is 50 %).
    pub fn percent(
        title: &str,
        what: &str,
        samples: &[f64],
        nominal: f64,
        worst: (f64, f64),
    ) -> Self {
        Self {
            title: title.to_string(),
            what: what.to_string(),
            unit: "%",
            samples: samples
                .iter()
                .map(|v| v * 100.0)
                .filter(|v| v.is_finite())
                .collect(),
            nominal: nominal * 100.0,
            worst: (worst.0 * 100.0, worst.1 * 100.0),
            target: None,
        }
    }

    /// Mark the target window of a [`Histogram::percent`], given as fractions.
    pub fn with_target_percent(mut self, lo: f64, hi: f64) -> Self {
        self.target = Some((lo * 100.0, hi * 100.0));
        self
    }

    /// Mark the target window.
    pub fn with_target<Q: Engineering>(mut self, lo: Q, hi: Q) -> Self {
        self.target = Some((lo.si_value(), hi.si_value()));
        self
    }

    /// A value in the histogram's unit: SI prefixes for times, plain decimals for percent.
    fn show(&self, v: f64, sig: usize) -> String {
        if self.unit == "%" {
            let decimals = (sig as i32 - 1 - v.abs().log10().floor() as i32).max(0) as usize;
            let text = format!("{v:.decimals$}");
            let text = if text.contains('.') {
                text.trim_end_matches('0').trim_end_matches('.')
            } else {
                &text
            };
            format!("{text} %")
        } else {
            format_sig(v, sig, self.unit)
        }
    }

    /// Counts per bin over `[lo, hi]`.
    fn bins(&self, lo: f64, hi: f64, n: usize) -> Vec<usize> {
        let mut counts = vec![0usize; n];
        let width = (hi - lo) / n as f64;
        for &v in &self.samples {
            let i = ((v - lo) / width).floor();
            if i >= 0.0 {
                let i = (i as usize).min(n - 1);
                counts[i] += 1;
            }
        }
        counts
    }

    /// The picture as an SVG document.
    pub fn to_svg(&self) -> String {
        let (w, h) = (860.0, 470.0);
        let mut svg = Svg::new(w, h);
        svg.text(w / 2.0, 24.0, &self.title, 14.0, Anchor::Middle, "#111");
        let mut lo = self.worst.0.min(self.nominal);
        let mut hi = self.worst.1.max(self.nominal);
        for &v in &self.samples {
            lo = lo.min(v);
            hi = hi.max(v);
        }
        // Bins span the samples and the worst case only, so that a far target window widens
        // the axis without making the bars coarse.
        let bin_pad = (hi - lo).max(self.nominal.abs() * 1e-6) * 0.02;
        let (blo, bhi) = (lo - bin_pad, hi + bin_pad);
        if let Some((a, b)) = self.target {
            lo = lo.min(a);
            hi = hi.max(b);
        }
        let pad = (hi - lo).max(self.nominal.abs() * 1e-6) * 0.06;
        let (lo, hi) = (lo - pad, hi + pad);
        let n = 40;
        let counts = self.bins(blo, bhi, n);
        let peak = counts.iter().copied().max().unwrap_or(1).max(1) as f64;
        let frame = Frame {
            left: 80.0,
            top: 50.0,
            width: 740.0,
            height: 300.0,
            x: (lo, hi),
            y: (0.0, peak * 1.12),
            log_x: false,
        };
        if let Some((a, b)) = self.target {
            svg.rect(
                frame.px(a),
                frame.top,
                frame.px(b) - frame.px(a),
                frame.height,
                "#d5f5e3",
                None,
            );
        }
        frame.draw_x_axis(&mut svg, self.unit, &self.what);
        // Counts are plain whole numbers (no SI prefix: "4000", not "4 k").
        for t in nice_ticks(0.0, peak * 1.12, 5) {
            let y = frame.py(t);
            svg.line(
                (frame.left, y),
                (frame.left + frame.width, y),
                "#eeeeee",
                1.0,
                None,
            );
            svg.line((frame.left - 5.0, y), (frame.left, y), "#444", 1.0, None);
            svg.text(
                frame.left - 8.0,
                y + 4.0,
                &format!("{}", t.round()),
                11.0,
                Anchor::End,
                "#222",
            );
        }
        svg.vertical_text(
            frame.left - 52.0,
            frame.top + frame.height / 2.0,
            &format!(
                "samples per bin (bin {})",
                self.show((bhi - blo) / n as f64, 3)
            ),
            12.0,
        );
        let bw = (bhi - blo) / n as f64;
        for (i, &c) in counts.iter().enumerate() {
            let x0 = frame.px(blo + i as f64 * bw);
            let x1 = frame.px(blo + (i + 1) as f64 * bw);
            let y = frame.py(c as f64);
            svg.rect(
                x0 + 0.5,
                y,
                (x1 - x0 - 1.0).max(0.5),
                frame.top + frame.height - y,
                "#5dade2",
                Some("#2874a6"),
            );
        }
        for (x, colour) in [(self.worst.0, "#c0392b"), (self.worst.1, "#c0392b")] {
            svg.line(
                (frame.px(x), frame.top),
                (frame.px(x), frame.top + frame.height),
                colour,
                2.0,
                Some("6 4"),
            );
        }
        svg.line(
            (frame.px(self.nominal), frame.top),
            (frame.px(self.nominal), frame.top + frame.height),
            "#111",
            2.0,
            None,
        );
        let mut entries = vec![
            (
                "#5dade2",
                format!("{} Monte Carlo samples", self.samples.len()),
                Swatch::Fill,
            ),
            (
                "#111",
                format!("nominal {}", self.show(self.nominal, 4)),
                Swatch::Line,
            ),
            (
                "#c0392b",
                format!(
                    "worst case {} … {}",
                    self.show(self.worst.0, 4),
                    self.show(self.worst.1, 4)
                ),
                Swatch::Dashed,
            ),
        ];
        if let Some((a, b)) = self.target {
            entries.push((
                "#d5f5e3",
                format!("target window {} … {}", self.show(a, 4), self.show(b, 4)),
                Swatch::Fill,
            ));
        }
        legend_rows(
            &mut svg,
            (frame.left, frame.top + frame.height + 52.0, frame.width),
            &entries,
        );
        svg.finish()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::units::Seconds;

    #[test]
    fn every_sample_lands_in_a_bin() {
        let s: Vec<Seconds> = (0..1000)
            .map(|i| Seconds::from_base(1_000_000 + i))
            .collect();
        let h = Histogram::new(
            "t",
            "period",
            &s,
            Seconds::from_base(1_000_500),
            (Seconds::from_base(999_000), Seconds::from_base(1_002_000)),
        );
        assert_eq!(
            h.bins(999_000e-12, 1_002_000e-12, 40).iter().sum::<usize>(),
            1000
        );
    }
}
