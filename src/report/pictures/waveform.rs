//! Picture (a): the timing capacitor's voltage and the output over a few cycles, with both
//! thresholds drawn and the high and low times labelled.

use crate::report::svg::{Anchor, Frame, Svg, Swatch, legend_rows, text_width};
use crate::timing::{Conditions, FormError};
use crate::units::Engineering as _;
use crate::units::{Farads, Ohms, format_sig};

/// One exponential stretch of the capacitor voltage: from `v0` toward `vt` with time constant
/// `tau` (seconds), lasting `duration` seconds, with the output high or low meanwhile.
#[derive(Debug, Clone, Copy, PartialEq)]
struct Segment {
    duration: f64,
    v0: f64,
    vt: f64,
    tau: f64,
    output_high: bool,
}

impl Segment {
    fn at(&self, t: f64) -> f64 {
        if self.tau <= 0.0 {
            return self.vt;
        }
        self.vt + (self.v0 - self.vt) * (-t / self.tau).exp()
    }
}

/// The data of a waveform picture, built from a design by one of the constructors.
#[derive(Debug, Clone, PartialEq)]
pub struct Waveform {
    title: String,
    vcc: f64,
    upper: f64,
    lower: f64,
    cycle: Vec<Segment>,
    cycles: usize,
    /// Spans to annotate on the first cycle: (label, start, end) in seconds from cycle start.
    spans: Vec<(String, f64, f64)>,
    triggered: bool,
}

fn tau(r: Ohms, c: Farads) -> f64 {
    r.si() * c.si()
}

impl Waveform {
    /// A monostable fired twice: capacitor from empty to the upper threshold through R.
    pub fn monostable(r: Ohms, c: Farads, cond: &Conditions) -> Result<Self, FormError> {
        let (vu, vl) = cond.thresholds()?;
        let vcc = cond.vcc.si();
        let width = tau(r, c) * cond.factors()?.one_shot;
        let rest = width * 0.6;
        Ok(Self {
            title: format!(
                "Monostable: R = {}, C = {}, Vcc = {}",
                r.eng(4),
                c.eng(4),
                cond.vcc
            ),
            vcc,
            upper: vu,
            lower: vl,
            cycle: vec![
                Segment {
                    duration: width,
                    v0: 0.0,
                    vt: vcc,
                    tau: tau(r, c),
                    output_high: true,
                },
                Segment {
                    duration: rest,
                    v0: 0.0,
                    vt: 0.0,
                    tau: 0.0,
                    output_high: false,
                },
            ],
            cycles: 2,
            spans: vec![(format!("pulse {}", format_sig(width, 3, "s")), 0.0, width)],
            triggered: true,
        })
    }

    /// A classic astable: charge through R1+R2 toward Vcc, discharge through R2 toward 0.
    pub fn astable(r1: Ohms, r2: Ohms, c: Farads, cond: &Conditions) -> Result<Self, FormError> {
        let (vu, vl) = cond.thresholds()?;
        let k = cond.factors()?;
        let tc = tau(Ohms::from_base(r1.base() + r2.base()), c);
        let td = tau(r2, c);
        Self::two_phase(
            format!(
                "Astable: R1 = {}, R2 = {}, C = {}, Vcc = {}",
                r1.eng(4),
                r2.eng(4),
                c.eng(4),
                cond.vcc
            ),
            cond.vcc.si(),
            (vu, vl),
            (tc * k.charge, cond.vcc.si(), tc),
            (td * k.discharge, 0.0, td),
        )
    }

    /// A diode-steered astable: charge through Ra toward Vcc − Vf, discharge through Rb toward Vf.
    pub fn steered(ra: Ohms, rb: Ohms, c: Farads, cond: &Conditions) -> Result<Self, FormError> {
        let (vu, vl) = cond.thresholds()?;
        let k = cond.factors()?;
        let vf = cond.diode_drop.si();
        Self::two_phase(
            format!(
                "Diode-steered astable: Ra = {}, Rb = {}, C = {}, Vcc = {}",
                ra.eng(4),
                rb.eng(4),
                c.eng(4),
                cond.vcc
            ),
            cond.vcc.si(),
            (vu, vl),
            (
                tau(ra, c) * k.steered_charge,
                cond.vcc.si() - vf,
                tau(ra, c),
            ),
            (tau(rb, c) * k.steered_discharge, vf, tau(rb, c)),
        )
    }

    /// A diode-steered astable wired with one diode across Rb: charge through Ra and the diode
    /// toward Vcc − Vf, discharge through Rb alone toward 0 V.
    pub fn steered_bypass(
        ra: Ohms,
        rb: Ohms,
        c: Farads,
        cond: &Conditions,
    ) -> Result<Self, FormError> {
        let (vu, vl) = cond.thresholds()?;
        let k = cond.factors()?;
        let vf = cond.diode_drop.si();
        Self::two_phase(
            format!(
                "Diode-steered astable (one diode): Ra = {}, Rb = {}, C = {}, Vcc = {}",
                ra.eng(4),
                rb.eng(4),
                c.eng(4),
                cond.vcc
            ),
            cond.vcc.si(),
            (vu, vl),
            (
                tau(ra, c) * k.steered_charge,
                cond.vcc.si() - vf,
                tau(ra, c),
            ),
            (tau(rb, c) * k.discharge, 0.0, tau(rb, c)),
        )
    }

    /// An output-driven square wave: one resistor from the output to the capacitor.
    pub fn square(r: Ohms, c: Farads, cond: &Conditions) -> Result<Self, FormError> {
        let (vu, vl) = cond.thresholds()?;
        let k = cond.factors()?;
        let voh = cond.vcc.si() - cond.output_high_drop.si();
        Self::two_phase(
            format!(
                "Square wave from the output: R = {}, C = {}, Vcc = {}",
                r.eng(4),
                c.eng(4),
                cond.vcc
            ),
            cond.vcc.si(),
            (vu, vl),
            (tau(r, c) * k.square_high, voh, tau(r, c)),
            (tau(r, c) * k.square_low, 0.0, tau(r, c)),
        )
    }

    fn two_phase(
        title: String,
        vcc: f64,
        (vu, vl): (f64, f64),
        (high, high_target, high_tau): (f64, f64, f64),
        (low, low_target, low_tau): (f64, f64, f64),
    ) -> Result<Self, FormError> {
        Ok(Self {
            title,
            vcc,
            upper: vu,
            lower: vl,
            cycle: vec![
                Segment {
                    duration: high,
                    v0: vl,
                    vt: high_target,
                    tau: high_tau,
                    output_high: true,
                },
                Segment {
                    duration: low,
                    v0: vu,
                    vt: low_target,
                    tau: low_tau,
                    output_high: false,
                },
            ],
            cycles: 3,
            spans: vec![
                (format!("high {}", format_sig(high, 3, "s")), 0.0, high),
                (format!("low {}", format_sig(low, 3, "s")), high, high + low),
            ],
            triggered: false,
        })
    }

    /// The picture as an SVG document.
    pub fn to_svg(&self) -> String {
        let (w, h) = (860.0, 470.0);
        let mut svg = Svg::new(w, h);
        svg.text(w / 2.0, 22.0, &self.title, 14.0, Anchor::Middle, "#111");
        let period: f64 = self.cycle.iter().map(|s| s.duration).sum();
        let subtitle = match self.cycle.as_slice() {
            [on, _] if self.triggered => format!(
                "pulse width {}, shown fired twice by the trigger",
                format_sig(on.duration, 4, "s")
            ),
            [on, _] => format!(
                "period {} ({}), duty {:.1} %",
                format_sig(period, 4, "s"),
                format_sig(1.0 / period, 4, "Hz"),
                on.duration / period * 100.0
            ),
            _ => String::new(),
        };
        svg.text(w / 2.0, 40.0, &subtitle, 11.0, Anchor::Middle, "#333");
        let legend_h = legend_rows(
            &mut svg,
            (80.0, 50.0, 740.0),
            &[
                ("#1e8449", "capacitor voltage".to_string(), Swatch::Line),
                (
                    "#c0392b",
                    format!("upper threshold {}", format_sig(self.upper, 3, "V")),
                    Swatch::Dashed,
                ),
                (
                    "#2e86c1",
                    format!("lower threshold {}", format_sig(self.lower, 3, "V")),
                    Swatch::Dashed,
                ),
                ("#6c3483", "output".to_string(), Swatch::Line),
            ],
        );
        let lead = if self.triggered { period * 0.15 } else { 0.0 };
        let total = lead + period * self.cycles as f64;
        let cap = Frame {
            left: 80.0,
            top: 56.0 + legend_h,
            width: 740.0,
            height: 206.0 - legend_h,
            x: (0.0, total),
            y: (0.0, self.vcc * 1.05),
            log_x: false,
        };
        let out = Frame {
            top: 310.0,
            height: 80.0,
            y: (0.0, 1.0),
            ..cap
        };

        // Capacitor voltage.
        let mut pts = Vec::new();
        let mut spans_x = Vec::new();
        if lead > 0.0 {
            pts.push((cap.px(0.0), cap.py(0.0)));
        }
        let mut out_pts = vec![(out.px(0.0), out.py(0.12))];
        let mut t0 = lead;
        for n in 0..self.cycles {
            for seg in &self.cycle {
                let steps = 60;
                for i in 0..=steps {
                    let t = seg.duration * i as f64 / steps as f64;
                    pts.push((cap.px(t0 + t), cap.py(seg.at(t))));
                }
                let level = if seg.output_high { 0.88 } else { 0.12 };
                out_pts.push((out.px(t0), out_pts.last().map_or(out.py(level), |p| p.1)));
                out_pts.push((out.px(t0), out.py(level)));
                out_pts.push((out.px(t0 + seg.duration), out.py(level)));
                t0 += seg.duration;
            }
            if n == 0 {
                for (label, a, b) in &self.spans {
                    spans_x.push((label.clone(), cap.px(lead + a), cap.px(lead + b)));
                }
            }
        }
        cap.draw_x_grid(&mut svg);
        cap.draw_y_axis(&mut svg, "V", "capacitor voltage");
        svg.line(
            (cap.left, cap.py(self.upper)),
            (cap.left + cap.width, cap.py(self.upper)),
            "#c0392b",
            1.5,
            Some("6 4"),
        );
        svg.line(
            (cap.left, cap.py(self.lower)),
            (cap.left + cap.width, cap.py(self.lower)),
            "#2e86c1",
            1.5,
            Some("6 4"),
        );
        svg.polyline(&pts, "#1e8449", 2.0);

        out.draw_x_axis(&mut svg, "s", "time");
        svg.text(
            out.left - 8.0,
            out.py(0.88) + 4.0,
            "high",
            11.0,
            Anchor::End,
            "#222",
        );
        svg.text(
            out.left - 8.0,
            out.py(0.12) + 4.0,
            "low",
            11.0,
            Anchor::End,
            "#222",
        );
        svg.vertical_text(out.left - 52.0, out.top + out.height / 2.0, "output", 12.0);
        svg.polyline(&out_pts, "#6c3483", 2.0);

        // Time spans of the first cycle, as brackets between the two panels. Each label goes on
        // the lowest row where it clears the labels already placed (text widths are estimates,
        // so with a margin), kept inside the plot's width.
        let mut rows: Vec<f64> = Vec::new();
        for (label, xa, xb) in &spans_x {
            let y = out.top - 10.0;
            svg.line((*xa, y), (*xb, y), "#333", 1.0, None);
            svg.line((*xa, y - 4.0), (*xa, y + 4.0), "#333", 1.0, None);
            svg.line((*xb, y - 4.0), (*xb, y + 4.0), "#333", 1.0, None);
            let half = text_width(label, 11.0) / 2.0;
            let mid = ((xa + xb) / 2.0).clamp(cap.left + half, cap.left + cap.width - half);
            let row = match rows.iter().position(|right| mid - half > right + 8.0) {
                Some(r) => r,
                None => {
                    rows.push(f64::NEG_INFINITY);
                    rows.len() - 1
                }
            };
            rows[row] = mid + half;
            svg.text(
                mid,
                y - 5.0 - 13.0 * row as f64,
                label,
                11.0,
                Anchor::Middle,
                "#111",
            );
        }
        svg.finish()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::units::Volts;

    fn cond() -> Conditions {
        Conditions::ideal(Volts::from_si(9.0).unwrap_or_default())
    }

    #[test]
    fn astable_cycle_starts_and_ends_at_the_thresholds() {
        let w = Waveform::astable(
            Ohms::from_base(4_700_000),
            Ohms::from_base(68_000_000),
            Farads::from_base(10_000_000),
            &cond(),
        )
        .expect("astable");
        let (charge, discharge) = (w.cycle[0], w.cycle[1]);
        // The closed-form times must carry the capacitor exactly from one threshold to the other.
        assert!((charge.at(charge.duration) - w.upper).abs() < 1e-9);
        assert!((discharge.at(discharge.duration) - w.lower).abs() < 1e-9);
    }

    #[test]
    fn one_diode_steering_discharges_toward_ground() {
        let mut c = cond();
        c.diode_drop = Volts::from_si(0.7).unwrap_or_default();
        let (ra, rb, cap) = (
            Ohms::from_base(10_000_000),
            Ohms::from_base(4_700_000),
            Farads::from_base(100_000_000),
        );
        let one = Waveform::steered_bypass(ra, rb, cap, &c).expect("one diode");
        let two = Waveform::steered(ra, rb, cap, &c).expect("two diodes");
        // Same charge phase; the discharge has no diode, so it heads to 0 V and is shorter.
        assert_eq!(one.cycle[0], two.cycle[0]);
        assert_eq!(one.cycle[1].vt, 0.0);
        assert!(one.cycle[1].duration < two.cycle[1].duration);
        let d = one.cycle[1];
        assert!((d.at(d.duration) - one.lower).abs() < 1e-9);
    }

    #[test]
    fn monostable_pulse_ends_at_the_upper_threshold() {
        let w = Waveform::monostable(
            Ohms::from_base(1_000_000_000),
            Farads::from_base(1_000_000_000),
            &cond(),
        )
        .expect("mono");
        let seg = w.cycle[0];
        assert!((seg.at(seg.duration) - w.upper).abs() < 1e-9);
        assert!(w.to_svg().contains("pulse 1.1 s"));
    }
}
