//! Picture (a): the timing capacitor's voltage and the output over a few cycles, with both
//! thresholds drawn and the high and low times labelled.

use crate::report::svg::{Anchor, Frame, Svg, Swatch, legend_rows, text_width};
use crate::timing::evaluate::{DiodeModel, Model, SMALL_SIGNAL_DIODE, evaluate};
use crate::timing::{Conditions, Family, Form, FormError, Stage, Steering};
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

/// The time constant that carries an exponential from `v0` toward `vt` to `vend` in exactly
/// `duration`; `fallback` when no exponential toward `vt` passes `vend`.
fn fitted_tau(duration: f64, v0: f64, vt: f64, vend: f64, fallback: f64) -> f64 {
    let ratio = (vt - v0) / (vt - vend);
    if ratio.is_finite() && ratio > 1.0 && duration > 0.0 {
        duration / ratio.ln()
    } else {
        fallback
    }
}

/// The model the conditions state on their own: the fixed diode drop and output-high drop they
/// carry, nothing else (what the closed forms assume), with the family they imply.
fn stated(cond: &Conditions) -> (Family, Model) {
    let mut family = Family::bipolar();
    let drop = cond.output_high_drop.si();
    let output_drop = drop > 0.0 && family.set("output_high_drop", drop).is_ok();
    let diode = if cond.diode_drop.si() > 0.0 {
        DiodeModel::Fixed(cond.diode_drop)
    } else {
        DiodeModel::Ideal
    };
    (
        family,
        Model {
            diode,
            output_drop,
            ..Model::ideal()
        },
    )
}

impl Waveform {
    /// The picture of `stage` with the times of the one evaluator ([`evaluate`] with `family`
    /// and `model`), so a picture and `check` give the same high and low times. The curves head
    /// for the model's targets (saturation, diode drop at 1 mA for the small-signal diode, the
    /// output-high drop) with a time constant fitted to meet the thresholds at those times.
    pub fn of_stage(stage: &Stage, family: &Family, model: &Model) -> Result<Self, FormError> {
        let e = evaluate(stage, family, model)?;
        let cond = &stage.conditions;
        let (vu, vl) = cond.thresholds()?;
        let vcc = cond.vcc.si();
        let vsat = if model.saturation {
            family.discharge_saturation.value.max(0.0)
        } else {
            0.0
        };
        let voh = if model.output_drop {
            vcc - family.output_high_drop.value
        } else {
            vcc
        };
        let vf = match model.diode {
            DiodeModel::Ideal => 0.0,
            DiodeModel::Fixed(v) => v.si(),
            DiodeModel::SmallSignal => SMALL_SIGNAL_DIODE.drop_at(1e-3),
        };
        let (r1, c) = (stage.r1, stage.c);
        let r2 = stage.r2.unwrap_or(Ohms::ZERO);
        let high = e.high.nominal;
        let low = e.low.map_or(0.0, |b| b.nominal);
        let name = |n: &str, r: Ohms| format!("{n} = {}", r.eng(4));
        let tail = format!("C = {}, Vcc = {}", c.eng(4), cond.vcc);
        if stage.form == Form::Monostable {
            let t0 = tau(r1, c);
            let mut w = Self::monostable_times(vcc, (vu, vl), high, vsat, t0);
            w.title = format!("Monostable: {}, {tail}", name("R", r1));
            return Ok(w);
        }
        let (title, charge, discharge) = match (stage.form, stage.steering) {
            (Form::Astable, _) => (
                format!("Astable: {}, {}, {tail}", name("R1", r1), name("R2", r2)),
                (vcc, tau(Ohms::from_base(r1.base() + r2.base()), c)),
                (vsat, tau(r2, c)),
            ),
            (Form::Steered, Steering::TwoDiode) => (
                format!(
                    "Diode-steered astable: {}, {}, {tail}",
                    name("Ra", r1),
                    name("Rb", r2)
                ),
                (vcc - vf, tau(r1, c)),
                (vsat + vf, tau(r2, c)),
            ),
            (Form::Steered, Steering::OneDiode) => (
                format!(
                    "Diode-steered astable (one diode): {}, {}, {tail}",
                    name("Ra", r1),
                    name("Rb", r2)
                ),
                (vcc - vf, tau(r1, c)),
                (vsat, tau(r2, c)),
            ),
            _ => (
                format!("Square wave from the output: {}, {tail}", name("R", r1)),
                (voh, tau(r1, c)),
                (0.0, tau(r1, c)),
            ),
        };
        let tc = fitted_tau(high, vl, charge.0, vu, charge.1);
        let td = fitted_tau(low, vu, discharge.0, vl, discharge.1);
        Self::two_phase(
            title,
            vcc,
            (vu, vl),
            (high, charge.0, tc),
            (low, discharge.0, td),
        )
    }

    fn monostable_times(vcc: f64, (vu, vl): (f64, f64), width: f64, vsat: f64, t0: f64) -> Self {
        let tc = fitted_tau(width, vsat, vcc, vu, t0);
        Self {
            title: String::new(),
            vcc,
            upper: vu,
            lower: vl,
            cycle: vec![
                Segment {
                    duration: width,
                    v0: vsat,
                    vt: vcc,
                    tau: tc,
                    output_high: true,
                },
                Segment {
                    duration: width * 0.6,
                    v0: vsat,
                    vt: vsat,
                    tau: 0.0,
                    output_high: false,
                },
            ],
            cycles: 2,
            spans: vec![(format!("pulse {}", format_sig(width, 3, "s")), 0.0, width)],
            triggered: true,
        }
    }

    /// A monostable fired twice: capacitor from empty to the upper threshold through R (the
    /// times of [`evaluate`] with the model the conditions state; see [`Waveform::of_stage`]).
    pub fn monostable(r: Ohms, c: Farads, cond: &Conditions) -> Result<Self, FormError> {
        let (family, model) = stated(cond);
        Self::of_stage(&Stage::monostable(r, c, *cond), &family, &model)
    }

    /// A classic astable: charge through R1+R2 toward Vcc, discharge through R2 toward 0.
    pub fn astable(r1: Ohms, r2: Ohms, c: Farads, cond: &Conditions) -> Result<Self, FormError> {
        let (family, model) = stated(cond);
        Self::of_stage(&Stage::astable(r1, r2, c, *cond), &family, &model)
    }

    /// A diode-steered astable: charge through Ra toward Vcc − Vf, discharge through Rb toward Vf.
    pub fn steered(ra: Ohms, rb: Ohms, c: Farads, cond: &Conditions) -> Result<Self, FormError> {
        let (family, model) = stated(cond);
        Self::of_stage(&Stage::steered(ra, rb, c, *cond), &family, &model)
    }

    /// A diode-steered astable wired with one diode across Rb: charge through Ra and the diode
    /// toward Vcc − Vf, discharge through Rb alone toward 0 V.
    pub fn steered_bypass(
        ra: Ohms,
        rb: Ohms,
        c: Farads,
        cond: &Conditions,
    ) -> Result<Self, FormError> {
        let (family, model) = stated(cond);
        let mut stage = Stage::steered(ra, rb, c, *cond);
        stage.steering = Steering::OneDiode;
        Self::of_stage(&stage, &family, &model)
    }

    /// An output-driven square wave: one resistor from the output to the capacitor.
    pub fn square(r: Ohms, c: Farads, cond: &Conditions) -> Result<Self, FormError> {
        let (family, model) = stated(cond);
        Self::of_stage(&Stage::square(r, c, *cond), &family, &model)
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
        // The discharge has no diode, so it heads to 0 V and is shorter; the charge phase is the
        // evaluator's (RB shunting the diode), the same times `check` prints.
        assert_eq!(one.cycle[1].vt, 0.0);
        let mut st = Stage::steered(ra, rb, cap, c);
        st.steering = Steering::OneDiode;
        let (fam, model) = stated(&c);
        let e = evaluate(&st, &fam, &model).expect("evaluate");
        assert!((one.cycle[0].duration - e.high.nominal).abs() < 1e-15);
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

    #[test]
    fn the_real_model_picture_carries_the_evaluator_times() {
        // Default real parts: the bipolar family's saturation and output drop, the small-signal
        // diode. The picture's phases are the evaluator's times, and each curve meets its
        // threshold at the end of its phase.
        let (ra, rb, cap) = (
            Ohms::from_base(10_000_000),
            Ohms::from_base(4_700_000),
            Farads::from_base(100_000_000),
        );
        let fam = Family::bipolar();
        for stage in [
            Stage::steered(ra, rb, cap, cond()),
            Stage::astable(ra, rb, cap, cond()),
            Stage::square(ra, cap, cond()),
            Stage::monostable(ra, cap, cond()),
        ] {
            let w = Waveform::of_stage(&stage, &fam, &Model::real()).expect("picture");
            let e = evaluate(&stage, &fam, &Model::real()).expect("evaluate");
            assert!((w.cycle[0].duration - e.high.nominal).abs() < 1e-15);
            let end = w.cycle[0].at(w.cycle[0].duration);
            assert!((end - w.upper).abs() < 1e-9, "{:?}: {end}", stage.form);
            if let Some(low) = e.low {
                assert!((w.cycle[1].duration - low.nominal).abs() < 1e-15);
                let d = w.cycle[1];
                assert!((d.at(d.duration) - w.lower).abs() < 1e-9);
            }
        }
    }
}
