//! SPICE netlists of a timer design, for transient simulation in ngspice or another SPICE.
//!
//! Owns the text of the netlist and nothing else: no I/O, no simulator runs, no store. Each
//! form has a pure function that returns a complete, self-contained netlist as a `String`; the
//! behavioural timer model (`spice/onhand_timer.lib`, our own) is embedded with `include_str!`,
//! so the exported file needs nothing beside it.
//!
//! # The model
//! The subcircuit `onhand_timer` takes its nodes in the order of the 8-pin package
//! (1 GND, 2 TRIG, 3 OUT, 4 RESET, 5 CTRL, 6 THR, 7 DIS, 8 VCC):
//! - an internal 5k/5k/5k divider sets CTRL at 2/3·VCC unless CTRL is driven, and the trigger
//!   reference at CTRL/2, so the thresholds are exactly those of [`crate::timing::forms`];
//! - two comparators and a set-dominant SR latch are B-sources built from `u()` (unit step);
//!   the latch holds its state through an RC of time constant `tl` (set here to 1/100 of the
//!   largest time step, so it never shows in the timing);
//! - a voltage-controlled switch `S` (on-resistance `ron` 0.1 Ω, off 1 TΩ) discharges DIS while
//!   the latch is clear; RESET below 0.7 V (common practice) clears the latch;
//! - the output is a B-source at `q·(VCC − hdrop)` behind `rout` (10 mΩ): rail-to-rail when
//!   `hdrop` is 0, or sitting `hdrop` below the supply when high.
//!
//! Steering diodes (`onhand_diode`) are a behavioural element with a fixed forward drop `vf`: a
//! conductance of 1 kS above `vf` and 1 pS leakage, so the drop does not move with current as a
//! junction's would. That is the diode the closed forms assume.
//!
//! Each netlist starts with the capacitor empty (`.ic`, `uic`). The start-up cycle from 0 V is
//! longer than the rest, so the `.meas` lines skip it: a monostable is triggered three times and
//! [`MEAS_WIDTH`] is the second pulse; the astable forms start with the output high and
//! [`MEAS_HIGH`], [`MEAS_LOW`], [`MEAS_PERIOD`] come from the third cycle. ngspice prints each
//! result as `name = value`; [`measurement`] reads one back. The largest time step is 1/2000 of
//! the shortest phase: a threshold crossing is only seen at a time step, so that is the order of
//! the timing error of the simulation (about 0.05 % at worst).

use crate::timing::{self, Conditions, FormError};
use crate::units::{Farads, Ohms, Volts};

/// Text of the behavioural timer and diode subcircuits, embedded in every netlist.
pub const TIMER_LIBRARY: &str = include_str!("../../spice/onhand_timer.lib");

/// Name of the `.meas` result holding a monostable's pulse width, in seconds.
pub const MEAS_WIDTH: &str = "width";
/// Name of the `.meas` result holding an astable form's high time, in seconds.
pub const MEAS_HIGH: &str = "high";
/// Name of the `.meas` result holding an astable form's low time, in seconds.
pub const MEAS_LOW: &str = "low";
/// Name of the `.meas` result holding an astable form's period, in seconds.
pub const MEAS_PERIOD: &str = "period";

/// How many time steps at least per shortest phase.
const STEPS_PER_PHASE: f64 = 2000.0;

/// Circuit form of a design.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Form {
    /// One-shot: R from the supply to the capacitor, triggered by a pulse source.
    Monostable,
    /// Classic astable: R1 from the supply to DIS, R2 from DIS to the capacitor.
    Astable,
    /// Diode-steered astable: charge through Ra and a diode, discharge through a diode and Rb.
    Steered,
    /// Output-driven square wave: one resistor from OUT to the capacitor.
    Square,
}

/// A design to simulate: its form, parts and operating conditions.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Design {
    /// Circuit form.
    pub form: Form,
    /// Monostable and square wave: the timing resistor. Astable: R1. Steered: Ra (charge path).
    pub r1: Ohms,
    /// Astable: R2. Steered: Rb (discharge path). Must be `None` for the one-resistor forms.
    pub r2: Option<Ohms>,
    /// Timing capacitor.
    pub c: Farads,
    /// Supply voltage.
    pub vcc: Volts,
    /// Driven control-pin voltage; `None` leaves the internal divider at 2/3·Vcc.
    pub control: Option<Volts>,
    /// Forward drop of each steering diode (steered form only).
    pub diode_drop: Volts,
    /// How far below the supply the output sits when high.
    pub output_high_drop: Volts,
}

impl Design {
    /// The timing conditions of this design, as the closed forms take them.
    pub fn conditions(&self) -> Conditions {
        Conditions {
            vcc: self.vcc,
            control: self.control,
            diode_drop: self.diode_drop,
            output_high_drop: self.output_high_drop,
        }
    }
}

/// Why no netlist can be written for a design.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum NetlistError {
    /// A part value that must be above zero is not.
    #[error("{what} must be above zero")]
    NotPositive {
        /// Which part or setting.
        what: &'static str,
    },
    /// The form needs a second resistor and none was given, or it takes one and got two.
    #[error("the {form:?} form takes {wanted} resistor(s)")]
    ResistorCount {
        /// The form.
        form: Form,
        /// How many resistors it takes.
        wanted: usize,
    },
    /// The circuit cannot run under the given conditions.
    #[error(transparent)]
    Form(#[from] FormError),
}

/// Write the netlist of `design`, dispatching on its form.
pub fn render(design: &Design) -> Result<String, NetlistError> {
    let cond = design.conditions();
    match (design.form, design.r2) {
        (Form::Monostable, None) => monostable(design.r1, design.c, &cond),
        (Form::Square, None) => square(design.r1, design.c, &cond),
        (Form::Astable, Some(r2)) => astable(design.r1, r2, design.c, &cond),
        (Form::Steered, Some(rb)) => steered(design.r1, rb, design.c, &cond),
        (form @ (Form::Monostable | Form::Square), Some(_)) => {
            Err(NetlistError::ResistorCount { form, wanted: 1 })
        }
        (form @ (Form::Astable | Form::Steered), None) => {
            Err(NetlistError::ResistorCount { form, wanted: 2 })
        }
    }
}

/// Monostable: R from the supply to the capacitor (THR and DIS), TRIG driven by a pulse source
/// that dips to 0 V three times, each dip a tenth of the expected width.
pub fn monostable(r: Ohms, c: Farads, cond: &Conditions) -> Result<String, NetlistError> {
    positive(r, "R")?;
    positive_c(c)?;
    let width = timing::monostable(r, c, cond)?.si();
    let vcc = cond.vcc.si();
    let step = width / STEPS_PER_PHASE;
    let period = 2.0 * width;
    let delay = 0.2 * width;
    let edge = width / 1000.0;
    let mut n = Netlist::new(
        &format!("monostable, R {}, C {}", num(r.si()), num(c.si())),
        cond,
    );
    n.line(&format!("Rt vcc cap {}", num(r.si())));
    n.line(&format!("Ct cap 0 {}", num(c.si())));
    n.comment("trigger: held at the supply, pulled to 0 V for a tenth of the width");
    n.line(&format!(
        "Vtrig trig 0 PULSE({} 0 {} {} {} {} {})",
        num(vcc),
        time(delay),
        time(edge),
        time(edge),
        time(0.1 * width),
        time(period)
    ));
    n.timer("trig", "cap", "cap", 0, step, cond);
    n.tran(step, delay + 3.0 * period);
    let half = num(half_output(cond));
    n.comment("width of the second pulse (the first proves the start-up state)");
    n.line(&format!(
        ".meas tran {MEAS_WIDTH} TRIG v(out) val={half} rise=2 TARG v(out) val={half} fall=2"
    ));
    Ok(n.finish())
}

/// Classic astable: R1 from the supply to DIS, R2 from DIS to the capacitor (THR and TRIG).
pub fn astable(r1: Ohms, r2: Ohms, c: Farads, cond: &Conditions) -> Result<String, NetlistError> {
    positive(r1, "R1")?;
    positive(r2, "R2")?;
    positive_c(c)?;
    let cycle = timing::astable(r1, r2, c, cond)?;
    let (vu, _) = cond.thresholds()?;
    let vcc = cond.vcc.si();
    let startup = (r1.si() + r2.si()) * c.si() * (vcc / (vcc - vu)).ln();
    let mut n = Netlist::new(
        &format!(
            "classic astable, R1 {}, R2 {}, C {}",
            num(r1.si()),
            num(r2.si()),
            num(c.si())
        ),
        cond,
    );
    n.line(&format!("R1 vcc dis {}", num(r1.si())));
    n.line(&format!("R2 dis cap {}", num(r2.si())));
    n.line(&format!("Ct cap 0 {}", num(c.si())));
    let step = cycle.high.si().min(cycle.low.si()) / STEPS_PER_PHASE;
    n.timer("cap", "cap", "dis", 1, step, cond);
    n.tran(step, startup + 4.5 * cycle.period_s());
    n.cycle_measures(cond);
    Ok(n.finish())
}

/// Diode-steered astable: Ra from the supply to DIS, a charge diode from DIS to the capacitor,
/// and a discharge diode from the capacitor through Rb back to DIS.
pub fn steered(ra: Ohms, rb: Ohms, c: Farads, cond: &Conditions) -> Result<String, NetlistError> {
    positive(ra, "Ra")?;
    positive(rb, "Rb")?;
    positive_c(c)?;
    let cycle = timing::steered(ra, rb, c, cond)?;
    let (vu, _) = cond.thresholds()?;
    let reach = cond.vcc.si() - cond.diode_drop.si();
    let startup = ra.si() * c.si() * (reach / (reach - vu)).ln();
    let vf = num(cond.diode_drop.si());
    let mut n = Netlist::new(
        &format!(
            "diode-steered astable, Ra {}, Rb {}, C {}, diode drop {vf}",
            num(ra.si()),
            num(rb.si()),
            num(c.si())
        ),
        cond,
    );
    n.line(&format!("Ra vcc dis {}", num(ra.si())));
    n.line(&format!("Xdcharge dis cap onhand_diode vf={vf}"));
    n.line(&format!("Xddischarge cap db onhand_diode vf={vf}"));
    n.line(&format!("Rb db dis {}", num(rb.si())));
    n.line(&format!("Ct cap 0 {}", num(c.si())));
    let step = cycle.high.si().min(cycle.low.si()) / STEPS_PER_PHASE;
    n.timer("cap", "cap", "dis", 1, step, cond);
    n.tran(step, startup + 4.5 * cycle.period_s());
    n.cycle_measures(cond);
    Ok(n.finish())
}

/// Output-driven square wave: R from OUT to the capacitor (THR and TRIG); DIS is left open.
pub fn square(r: Ohms, c: Farads, cond: &Conditions) -> Result<String, NetlistError> {
    positive(r, "R")?;
    positive_c(c)?;
    let cycle = timing::square(r, c, cond)?;
    let (vu, _) = cond.thresholds()?;
    let voh = cond.vcc.si() - cond.output_high_drop.si();
    let startup = r.si() * c.si() * (voh / (voh - vu)).ln();
    let mut n = Netlist::new(
        &format!(
            "output-driven square wave, R {}, C {}",
            num(r.si()),
            num(c.si())
        ),
        cond,
    );
    n.line(&format!("Rt out cap {}", num(r.si())));
    n.line(&format!("Ct cap 0 {}", num(c.si())));
    let step = cycle.high.si().min(cycle.low.si()) / STEPS_PER_PHASE;
    n.timer("cap", "cap", "dis", 1, step, cond);
    n.tran(step, startup + 4.5 * cycle.period_s());
    n.cycle_measures(cond);
    Ok(n.finish())
}

/// The value of the `.meas` result `name` in ngspice's output (`name = value ...`), if present.
/// ngspice prints measurement names in lower case; `name` is matched without regard to case.
pub fn measurement(output: &str, name: &str) -> Option<f64> {
    output.lines().find_map(|line| {
        let mut words = line.split_whitespace();
        let first = words.next()?;
        if !first.eq_ignore_ascii_case(name) || words.next()? != "=" {
            return None;
        }
        words.next()?.parse::<f64>().ok().filter(|v| v.is_finite())
    })
}

fn positive(r: Ohms, what: &'static str) -> Result<(), NetlistError> {
    if r.is_positive() {
        Ok(())
    } else {
        Err(NetlistError::NotPositive { what })
    }
}

fn positive_c(c: Farads) -> Result<(), NetlistError> {
    if c.is_positive() {
        Ok(())
    } else {
        Err(NetlistError::NotPositive { what: "C" })
    }
}

/// Half of the output swing: the level at which edges are measured.
fn half_output(cond: &Conditions) -> f64 {
    (cond.vcc.si() - cond.output_high_drop.si()) / 2.0
}

/// A number in a form every SPICE reads, with a scale suffix: `10k`, `4.7k`, `100n`, `0.7`.
/// Up to nine significant digits, so part values (exact in their base units) survive.
/// Mega is `Meg`: a lone `M` means milli to SPICE.
fn num(v: f64) -> String {
    const SUFFIXES: [(i32, &str); 9] = [
        (12, "T"),
        (9, "G"),
        (6, "Meg"),
        (3, "k"),
        (0, ""),
        (-3, "m"),
        (-6, "u"),
        (-9, "n"),
        (-12, "p"),
    ];
    if v == 0.0 || !v.is_finite() {
        return "0".to_string();
    }
    // Round to nine significant digits first, so 999.9999999 becomes 1k, not 1000.
    let v: f64 = format!("{v:.8e}").parse().unwrap_or(v);
    let exp = v.abs().log10().floor() as i32;
    let (e, suffix) = SUFFIXES
        .iter()
        .copied()
        .find(|(e, _)| exp >= *e)
        .unwrap_or((-15, "f"));
    let mantissa = v / 10f64.powi(e);
    let digits = (8 - (exp - e)).max(0) as usize;
    let text = format!("{mantissa:.digits$}");
    let text = if text.contains('.') {
        text.trim_end_matches('0').trim_end_matches('.')
    } else {
        &text
    };
    format!("{text}{suffix}")
}

/// A computed time (step, stop, edge) to six significant digits: no false precision.
fn time(v: f64) -> String {
    num(format!("{v:.5e}").parse().unwrap_or(v))
}

/// A netlist being written, line by line.
struct Netlist {
    text: String,
}

impl Netlist {
    fn new(what: &str, cond: &Conditions) -> Self {
        // SPICE takes the first line as the title.
        let mut n = Self {
            text: format!("onhand timer design: {what}\n"),
        };
        n.comment("Written by onhand. Nodes: vcc supply, cap timing capacitor, out output,");
        n.comment("trig trigger, dis discharge, ctrl control. Behavioural timer model below.");
        n.text.push_str(TIMER_LIBRARY);
        if !TIMER_LIBRARY.ends_with('\n') {
            n.text.push('\n');
        }
        n.line("");
        n.line(&format!("Vsupply vcc 0 DC {}", num(cond.vcc.si())));
        match cond.control {
            Some(v) => n.line(&format!("Vctrl ctrl 0 DC {}", num(v.si()))),
            None => n.comment("ctrl left to the internal divider (2/3 of the supply), no bypass"),
        }
        n
    }

    fn line(&mut self, s: &str) {
        self.text.push_str(s);
        self.text.push('\n');
    }

    fn comment(&mut self, s: &str) {
        self.line(&format!("* {s}"));
    }

    /// The timer instance; `q0` is the latch state at t = 0 (1: output high).
    fn timer(&mut self, trig: &str, thr: &str, dis: &str, q0: u8, step: f64, cond: &Conditions) {
        self.line(&format!(
            "Xtimer 0 {trig} out vcc ctrl {thr} {dis} vcc onhand_timer hdrop={} tl={} q0={q0}",
            num(cond.output_high_drop.si()),
            time(step / 100.0)
        ));
        self.line(".ic v(cap)=0");
    }

    fn tran(&mut self, step: f64, stop: f64) {
        self.line(".options reltol=1e-4 method=gear");
        self.line(&format!(
            ".tran {} {} 0 {} uic",
            num(step),
            num(stop),
            num(step)
        ));
    }

    /// High, low and period of the third cycle; the output starts high, so the first fall ends
    /// the start-up charge from 0 V.
    fn cycle_measures(&mut self, cond: &Conditions) {
        let h = num(half_output(cond));
        self.comment("third cycle: the first starts from an empty capacitor and runs long");
        self.line(&format!(
            ".meas tran {MEAS_HIGH} TRIG v(out) val={h} rise=2 TARG v(out) val={h} fall=3"
        ));
        self.line(&format!(
            ".meas tran {MEAS_LOW} TRIG v(out) val={h} fall=3 TARG v(out) val={h} rise=3"
        ));
        self.line(&format!(
            ".meas tran {MEAS_PERIOD} TRIG v(out) val={h} rise=2 TARG v(out) val={h} rise=3"
        ));
    }

    fn finish(mut self) -> String {
        self.line(".end");
        self.text
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn v(x: f64) -> Volts {
        Volts::from_si(x).unwrap_or_default()
    }
    fn ohms(x: f64) -> Ohms {
        Ohms::from_si(x).unwrap_or_default()
    }
    fn farads(x: f64) -> Farads {
        Farads::from_si(x).unwrap_or_default()
    }

    fn design(form: Form, r2: Option<f64>) -> Design {
        Design {
            form,
            r1: ohms(10e3),
            r2: r2.map(ohms),
            c: farads(100e-9),
            vcc: v(9.0),
            control: None,
            diode_drop: Volts::ZERO,
            output_high_drop: Volts::ZERO,
        }
    }

    #[test]
    fn every_form_embeds_the_model_and_ends() {
        for (form, r2) in [
            (Form::Monostable, None),
            (Form::Astable, Some(47e3)),
            (Form::Steered, Some(47e3)),
            (Form::Square, None),
        ] {
            let text = render(&design(form, r2)).expect("netlist");
            assert!(text.starts_with("onhand timer design: "), "{text}");
            assert!(text.contains(".subckt onhand_timer gnd trig out reset ctrl thr dis vcc"));
            assert!(text.contains("Xtimer 0 "));
            assert!(text.contains(".tran "));
            assert!(text.contains(".ic v(cap)=0"));
            assert!(text.trim_end().ends_with(".end"));
            let meas = text.lines().filter(|l| l.starts_with(".meas")).count();
            assert_eq!(meas, if form == Form::Monostable { 1 } else { 3 });
        }
    }

    #[test]
    fn astable_wiring_and_run_length() {
        let text = render(&design(Form::Astable, Some(47e3))).expect("netlist");
        assert!(text.contains("R1 vcc dis 10k\n"), "{text}");
        assert!(text.contains("R2 dis cap 47k\n"), "{text}");
        assert!(text.contains("Ct cap 0 100n\n"), "{text}");
        // Period ln 2·(R1+2R2)·C = 7.21 ms; start-up ln 3·(R1+R2)·C = 6.26 ms; shortest phase
        // ln 2·R2·C = 3.26 ms, so the largest step is 3.26 ms / 2000 = 1.63 µs.
        let tran = text
            .lines()
            .find(|l| l.starts_with(".tran"))
            .expect("tran line");
        let f: Vec<f64> = tran
            .split_whitespace()
            .skip(1)
            .take(4)
            .map(|w| spice_value(w).expect("number"))
            .collect();
        assert!((f[0] - 1.629e-6).abs() < 1e-9, "{tran}");
        let stop = 6.262e-3 + 4.5 * 7.2087e-3;
        assert!((f[1] - stop).abs() < 1e-5, "{tran}");
    }

    #[test]
    fn control_voltage_and_high_drop_appear() {
        let mut d = design(Form::Square, None);
        d.control = Some(v(5.0));
        d.output_high_drop = v(1.5);
        let text = render(&d).expect("netlist");
        assert!(text.contains("Vctrl ctrl 0 DC 5\n"), "{text}");
        assert!(text.contains("hdrop=1.5 "), "{text}");
        // Edges are measured at half of the 7.5 V swing.
        assert!(text.contains("val=3.75 rise=2"), "{text}");
    }

    /// Read a SPICE number back (test helper): mantissa and an optional scale suffix.
    fn spice_value(w: &str) -> Option<f64> {
        let split = w
            .find(|ch: char| ch.is_ascii_alphabetic() && ch != 'e')
            .unwrap_or(w.len());
        let (m, suffix) = w.split_at(split);
        let scale = match suffix {
            "" => 1.0,
            "T" => 1e12,
            "G" => 1e9,
            "Meg" => 1e6,
            "k" => 1e3,
            "m" => 1e-3,
            "u" => 1e-6,
            "n" => 1e-9,
            "p" => 1e-12,
            "f" => 1e-15,
            _ => return None,
        };
        m.parse::<f64>().ok().map(|m| m * scale)
    }

    #[test]
    fn numbers_are_written_with_spice_suffixes_and_read_back() {
        for (v, text) in [
            (10e3, "10k"),
            (4.7e3, "4.7k"),
            (1.5e6, "1.5Meg"),
            (100e-9, "100n"),
            (2.2e-12, "2.2p"),
            (0.7, "700m"),
            (9.0, "9"),
            (123.456789, "123.456789"),
            (999.9999999, "1k"),
            (-5.0, "-5"),
            (0.0, "0"),
        ] {
            assert_eq!(num(v), text);
            let back = spice_value(text).expect("reads back");
            assert!((back - v).abs() <= 1e-8 * v.abs(), "{text} → {back}");
        }
        assert_eq!(time(4.1739884900000005e-9), "4.17399n");
    }

    #[test]
    fn bad_designs_are_refused() {
        assert!(matches!(
            render(&design(Form::Astable, None)),
            Err(NetlistError::ResistorCount { wanted: 2, .. })
        ));
        assert!(matches!(
            render(&design(Form::Square, Some(1e3))),
            Err(NetlistError::ResistorCount { wanted: 1, .. })
        ));
        let mut d = design(Form::Astable, Some(47e3));
        d.r1 = Ohms::ZERO;
        assert_eq!(render(&d), Err(NetlistError::NotPositive { what: "R1" }));
        let mut d = design(Form::Steered, Some(47e3));
        d.diode_drop = v(3.5);
        assert!(matches!(render(&d), Err(NetlistError::Form(_))));
        let mut d = design(Form::Monostable, None);
        d.control = Some(v(12.0));
        assert!(matches!(render(&d), Err(NetlistError::Form(_))));
    }

    #[test]
    fn measurement_reads_ngspice_lines() {
        let out = "Measurements for Transient Analysis\n\n\
                   high                =  3.946935e-03 targ=  2.065737e-02 trig=  1.671043e-02\n\
                   period              =  7.204814e-03 targ=  2.391525e-02 trig=  1.671043e-02\n\
                   .meas tran low trig v(out) val=4.5 fall=3 failed!\n\
                   Total analysis time (seconds) = 0.07\n";
        assert_eq!(measurement(out, "high"), Some(3.946935e-03));
        assert_eq!(measurement(out, "PERIOD"), Some(7.204814e-03));
        assert_eq!(measurement(out, "low"), None);
        assert_eq!(measurement(out, "width"), None);
    }
}
