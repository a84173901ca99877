//! SPICE netlists of a timer design, for transient simulation in ngspice or another SPICE.
//!
//! Owns the text of the netlist and nothing else: no I/O, no simulator runs, no store. Pure
//! functions return a complete, self-contained netlist as a `String`: one stage ([`stage`], or
//! [`render`] for a one-piece [`Design`]), a pace stage firing a width monostable ([`pair`]),
//! or two independent halves of a dual package ([`dual`]). Every position is written as its
//! real pieces in series and parallel (`R1a`, `R1b`, …), not as one equivalent value. The
//! switch-level timer model (`spice/onhand_switch_timer.lib`, our own) is embedded with
//! `include_str!`, so the exported file needs nothing beside it.
//!
//! # The model
//! The subcircuit `onhand_switch_timer` (nodes GND, TRIG, OUT, CTRL, THR, DIS, VCC and the latch
//! node Q) has no behavioural sources at all:
//! - an internal 5k/5k/5k divider sets CTRL at 2/3·VCC unless CTRL is driven, and the trigger
//!   reference at CTRL/2, so the thresholds are exactly those of [`crate::timing::forms`];
//! - the comparators are voltage-controlled switches (`S`) whose control inputs draw no current;
//!   they set and clear a latch made of switches and a 100 pF node (`Q`, 1 V = output high);
//! - the discharge switch ends on a DC source of `vsat` volts: the discharge transistor's
//!   saturation voltage ([`SpiceParts::saturation`]; the family's figure, from memory);
//! - the output is two switches, the high side sitting `hdrop` below the supply (the family's
//!   output-high drop in the output-driven form, from the stage's conditions).
//!
//! Steering diodes are, by default, the junction diode `onhand_ss` (`D` model, IS 2.52 nA, N 1.752,
//! RS 0.568 Ω, from memory — the figures of
//! [`crate::timing::evaluate::SMALL_SIGNAL_DIODE`]), so their drop follows the charging current
//! as the default model's does. With a fixed drop (`--diode VOLTS`) or the textbook model they
//! are `onhand_diode`: a behavioural element with a fixed forward drop `vf` (a conductance of
//! 1 kS above `vf` and 1 pS leakage), which is what those models assume.
//!
//! [`stage`], [`pair`], [`dual`] and [`render`] write the default real parts
//! ([`SpiceParts::for_conditions`]); [`stage_with`], [`pair_with`], [`dual_with`] and
//! [`render_with`] take the parts explicitly ([`SpiceParts::of`] a model and family,
//! [`SpiceParts::textbook`] for `--ideal`).
//!
//! Each netlist starts with the capacitor empty (`.ic`, `uic`). The start-up cycle from 0 V is
//! longer than the rest, so the `.meas` lines skip it: a monostable is triggered three times and
//! [`MEAS_WIDTH`] is the second pulse; the astable forms start with the output high and
//! [`MEAS_HIGH`], [`MEAS_LOW`], [`MEAS_PERIOD`] come from the third cycle. ngspice prints each
//! result as `name = value`; [`measurement`] reads one back. The largest time step is 1/2000 of
//! the shortest phase: a threshold crossing is only seen at a time step, so that is the order of
//! the timing error of the simulation (about 0.05 % at worst).

use crate::network::{Combine, Net};
use crate::timing::checks::{CONTROL_DECOUPLING, PAIR_COUPLING};
use crate::timing::evaluate::{DiodeModel, Model, SMALL_SIGNAL_DIODE};
use crate::timing::family::Family;
use crate::timing::{Conditions, FormError, cycle_si};
use crate::units::{Farads, Ohms, Volts};

pub use crate::timing::{Form, Steering};

/// Text of the switch-level timer, the junction diode model and the fixed-drop diode, embedded
/// in every netlist.
pub const TIMER_LIBRARY: &str = include_str!("../../spice/onhand_switch_timer.lib");

/// The real parts a netlist carries beyond the stage's own conditions (which already hold the
/// supply, control voltage, fixed diode drop and output-high drop).
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct SpiceParts {
    /// Steering diodes as the junction `onhand_ss` (true) or as the fixed drop of the stage's
    /// conditions (false; a drop of 0 is the ideal diode).
    pub junction_diodes: bool,
    /// Voltage left on the discharge pin while the discharge switch is on, volts.
    pub saturation: f64,
}

impl SpiceParts {
    /// The textbook timer: no saturation, diodes with the conditions' fixed drop (0 in `--ideal`).
    pub fn textbook() -> Self {
        Self {
            junction_diodes: false,
            saturation: 0.0,
        }
    }

    /// The parts matching an evaluator model and family: junction diodes for the small-signal
    /// diode model, the family's discharge saturation when the model includes it.
    pub fn of(model: &Model, family: &Family) -> Self {
        Self {
            junction_diodes: model.diode == DiodeModel::SmallSignal,
            saturation: if model.saturation {
                family.discharge_saturation.value.max(0.0)
            } else {
                0.0
            },
        }
    }

    /// The default real parts, read from the conditions alone (what [`stage`], [`pair`],
    /// [`dual`] and [`render`] use): the bipolar family's discharge saturation (0.1 V, from
    /// memory), and junction diodes when the conditions carry the small-signal diode's drop at
    /// 1 mA (how `check` and `find` pass the default diode on), else the conditions' fixed drop.
    pub fn for_conditions(cond: &Conditions) -> Self {
        let representative = SMALL_SIGNAL_DIODE.drop_at(1e-3);
        Self {
            junction_diodes: (cond.diode_drop.si() - representative).abs() < 1e-6,
            saturation: Family::bipolar().discharge_saturation.value.max(0.0),
        }
    }
}

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

/// A design to simulate: its form, parts and operating conditions (one piece per position).
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

    /// The same design as a [`StageNet`] with one piece per position, named as the `check`
    /// command names them (R, C; R1, R2, C; RA, RB, C).
    pub fn stage_net(&self) -> Result<StageNet, NetlistError> {
        let (n1, n2) = match self.form {
            Form::Monostable | Form::Square => ("R", None),
            Form::Astable => ("R1", Some("R2")),
            Form::Steered => ("RA", Some("RB")),
        };
        let r2 = match (n2, self.r2) {
            (Some(n), Some(r)) => Some(Network::single(n, r.si())),
            (None, None) => None,
            (Some(_), None) => {
                return Err(NetlistError::ResistorCount {
                    form: self.form,
                    wanted: 2,
                });
            }
            (None, Some(_)) => {
                return Err(NetlistError::ResistorCount {
                    form: self.form,
                    wanted: 1,
                });
            }
        };
        Ok(StageNet {
            form: self.form,
            steering: Steering::TwoDiode,
            r1: Network::single(n1, self.r1.si()),
            r2,
            c: Network::single("C", self.c.si()),
            conditions: self.conditions(),
        })
    }
}

/// A position filled by real pieces in series and parallel, written into the netlist piece by
/// piece: one piece keeps the position's name (`R1`), several get a letter each (`R1a`, `R1b`).
#[derive(Debug, Clone, PartialEq)]
pub struct Network {
    /// Position name, e.g. `R1`, `RB`, `C`, `C2`.
    pub name: String,
    /// The tree; leaves index `values`.
    pub net: Net,
    /// Piece values in SI units (ohms or farads).
    pub values: Vec<f64>,
}

impl Network {
    /// A position holding one piece.
    pub fn single(name: &str, value: f64) -> Self {
        Self {
            name: name.to_string(),
            net: Net::Piece(0),
            values: vec![value],
        }
    }

    /// The equivalent value.
    pub fn value(&self, combine: Combine) -> f64 {
        self.net.value(&self.values, combine)
    }

    fn checked(&self, combine: Combine) -> Result<f64, NetlistError> {
        let bad = || NetlistError::NotPositive {
            what: self.name.clone(),
        };
        if self.values.iter().any(|v| !(v.is_finite() && *v > 0.0)) {
            return Err(bad());
        }
        let leaves = self.net.leaves();
        if leaves.len() != self.values.len() || leaves.iter().any(|&i| i >= self.values.len()) {
            return Err(NetlistError::Pieces {
                name: self.name.clone(),
            });
        }
        let v = self.value(combine);
        if v.is_finite() && v > 0.0 {
            Ok(v)
        } else {
            Err(bad())
        }
    }
}

/// One timer stage with its positions as real pieces.
#[derive(Debug, Clone, PartialEq)]
pub struct StageNet {
    /// Circuit form.
    pub form: Form,
    /// Diode wiring (steered form only).
    pub steering: Steering,
    /// Monostable and square R, astable R1, steered RA.
    pub r1: Network,
    /// Astable R2, steered RB; `None` for the one-resistor forms.
    pub r2: Option<Network>,
    /// Timing capacitor.
    pub c: Network,
    /// Operating conditions.
    pub conditions: Conditions,
}

/// Why no netlist can be written for a design.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum NetlistError {
    /// A part value that must be above zero is not.
    #[error("{what} must be above zero")]
    NotPositive {
        /// Which part or setting.
        what: String,
    },
    /// The form needs a second resistor and none was given, or it takes one and got two.
    #[error("the {form:?} form takes {wanted} resistor(s)")]
    ResistorCount {
        /// The form.
        form: Form,
        /// How many resistors it takes.
        wanted: usize,
    },
    /// A network's tree does not use each of its pieces exactly once.
    #[error("the network of {name} does not use each of its pieces once")]
    Pieces {
        /// Position name.
        name: String,
    },
    /// A pair is a free-running pace stage triggering a monostable.
    #[error("a pair is a free-running pace stage and a monostable width stage")]
    PairForms,
    /// The circuit cannot run under the given conditions.
    #[error(transparent)]
    Form(#[from] FormError),
}

/// The name under which the netlist of a two-stage design reports `base` of stage `tag`
/// (`a_period`, `b_width`); a single stage (empty tag) uses `base` itself.
pub fn meas_name(tag: &str, base: &str) -> String {
    if tag.is_empty() {
        base.to_string()
    } else {
        format!("{}_{base}", tag.to_ascii_lowercase())
    }
}

/// Write the netlist of `design`, dispatching on its form.
pub fn render(design: &Design) -> Result<String, NetlistError> {
    stage(&design.stage_net()?)
}

/// [`render`] with the real parts given explicitly.
pub fn render_with(design: &Design, parts: &SpiceParts) -> Result<String, NetlistError> {
    stage_with(&design.stage_net()?, parts)
}

/// Monostable: R from the supply to the capacitor (THR and DIS), TRIG driven by a pulse source
/// that dips to 0 V three times, each dip a tenth of the expected width.
pub fn monostable(r: Ohms, c: Farads, cond: &Conditions) -> Result<String, NetlistError> {
    one_piece(Form::Monostable, r, None, c, cond)
}

/// Classic astable: R1 from the supply to DIS, R2 from DIS to the capacitor (THR and TRIG).
pub fn astable(r1: Ohms, r2: Ohms, c: Farads, cond: &Conditions) -> Result<String, NetlistError> {
    one_piece(Form::Astable, r1, Some(r2), c, cond)
}

/// Diode-steered astable: Ra from the supply to DIS, a charge diode from DIS to the capacitor,
/// and a discharge diode from the capacitor through Rb back to DIS.
pub fn steered(ra: Ohms, rb: Ohms, c: Farads, cond: &Conditions) -> Result<String, NetlistError> {
    one_piece(Form::Steered, ra, Some(rb), c, cond)
}

/// Output-driven square wave: R from OUT to the capacitor (THR and TRIG); DIS is left open.
pub fn square(r: Ohms, c: Farads, cond: &Conditions) -> Result<String, NetlistError> {
    one_piece(Form::Square, r, None, c, cond)
}

fn one_piece(
    form: Form,
    r1: Ohms,
    r2: Option<Ohms>,
    c: Farads,
    cond: &Conditions,
) -> Result<String, NetlistError> {
    render(&Design {
        form,
        r1,
        r2,
        c,
        vcc: cond.vcc,
        control: cond.control,
        diode_drop: cond.diode_drop,
        output_high_drop: cond.output_high_drop,
    })
}

/// One stage on its own. A monostable is fired by a pulse source; the free-running forms start
/// with the output high and an empty capacitor. Results: [`MEAS_WIDTH`] for a monostable,
/// [`MEAS_HIGH`], [`MEAS_LOW`], [`MEAS_PERIOD`] otherwise.
pub fn stage(s: &StageNet) -> Result<String, NetlistError> {
    stage_with(s, &SpiceParts::for_conditions(&s.conditions))
}

/// [`stage`] with the real parts given explicitly.
pub fn stage_with(s: &StageNet, parts: &SpiceParts) -> Result<String, NetlistError> {
    let t = Timed::of(s)?;
    let mut n = Netlist::new(
        &format!("{}, {}", describe(s.form), t.parts),
        s.conditions.vcc,
    );
    let step = t.shortest() / STEPS_PER_PHASE;
    let stop = n.stage(s, &t, "", Trigger::Own, parts)?;
    n.tran(step, stop);
    Ok(n.finish())
}

/// A pace stage (free-running) whose output, falling, fires a width monostable through a
/// coupling capacitor and a 10 kΩ pull-up — the two halves of a dual package. Results:
/// [`MEAS_PERIOD`] (of the pace output), [`MEAS_WIDTH`] and [`MEAS_LOW`] of the width stage's
/// output, which is the pair's output.
pub fn pair(pace: &StageNet, width: &StageNet) -> Result<String, NetlistError> {
    pair_with(pace, width, &SpiceParts::for_conditions(&pace.conditions))
}

/// [`pair`] with the real parts given explicitly.
pub fn pair_with(
    pace: &StageNet,
    width: &StageNet,
    parts: &SpiceParts,
) -> Result<String, NetlistError> {
    if !pace.form.is_periodic() || width.form != Form::Monostable {
        return Err(NetlistError::PairForms);
    }
    let (tp, tw) = (Timed::of(pace)?, Timed::of(width)?);
    let mut n = Netlist::new(
        &format!(
            "pair: pace {} ({}) firing a monostable ({})",
            describe(pace.form),
            tp.parts,
            tw.parts
        ),
        pace.conditions.vcc,
    );
    let step = tp.shortest().min(tw.shortest()) / STEPS_PER_PHASE;
    let stop = n.stage(pace, &tp, "a", Trigger::None, parts)?;
    n.stage(width, &tw, "b", Trigger::From("out_a".into()), parts)?;
    let h = num(half_output(&width.conditions));
    // Pulses of out_b start at each fall of out_a (start-up + k·period); count edges only from
    // the middle of the low stretch after the second pulse, so that start-up edges (and any
    // glitch while the nodes settle) are never counted.
    let td = time(tp.startup + tp.period() + tw.high + 0.5 * (tp.period() - tw.high).max(0.0));
    n.comment("the pair's output is out_b: edges counted from td, in a low stretch after start-up");
    n.line(&format!(
        ".meas tran {MEAS_WIDTH} TRIG v(out_b) val={h} td={td} rise=1 TARG v(out_b) val={h} td={td} fall=1"
    ));
    n.line(&format!(
        ".meas tran {MEAS_LOW} TRIG v(out_b) val={h} td={td} fall=1 TARG v(out_b) val={h} td={td} rise=2"
    ));
    let hp = num(half_output(&pace.conditions));
    n.line(&format!(
        ".meas tran {MEAS_PERIOD} TRIG v(out_a) val={hp} rise=2 TARG v(out_a) val={hp} rise=3"
    ));
    n.tran(step, stop + tp.period());
    Ok(n.finish())
}

/// Two independent stages of a dual package sharing the supply. Results are named with
/// [`meas_name`]: `a_period`, `b_width`, …
pub fn dual(a: &StageNet, b: &StageNet) -> Result<String, NetlistError> {
    dual_with(a, b, &SpiceParts::for_conditions(&a.conditions))
}

/// [`dual`] with the real parts given explicitly.
pub fn dual_with(a: &StageNet, b: &StageNet, parts: &SpiceParts) -> Result<String, NetlistError> {
    let (ta, tb) = (Timed::of(a)?, Timed::of(b)?);
    let mut n = Netlist::new(
        &format!(
            "dual: A {} ({}), B {} ({})",
            describe(a.form),
            ta.parts,
            describe(b.form),
            tb.parts
        ),
        a.conditions.vcc,
    );
    let step = ta.shortest().min(tb.shortest()) / STEPS_PER_PHASE;
    let sa = n.stage(a, &ta, "a", Trigger::Own, parts)?;
    let sb = n.stage(b, &tb, "b", Trigger::Own, parts)?;
    n.tran(step, sa.max(sb));
    Ok(n.finish())
}

fn describe(form: Form) -> &'static str {
    match form {
        Form::Monostable => "monostable",
        Form::Astable => "classic astable",
        Form::Steered => "diode-steered astable",
        Form::Square => "output-driven square wave",
    }
}

/// The closed-form times of a stage, checked values, and a one-line description of its parts.
struct Timed {
    high: f64,
    low: Option<f64>,
    /// From an empty capacitor to the upper threshold (free-running forms; 0 for a one-shot).
    startup: f64,
    parts: String,
}

impl Timed {
    fn of(s: &StageNet) -> Result<Self, NetlistError> {
        let r1 = s.r1.checked(Combine::Resistive)?;
        let r2 = match (&s.r2, s.form.has_r2()) {
            (Some(n), true) => Some(n.checked(Combine::Resistive)?),
            (None, false) => None,
            (_, has) => {
                return Err(NetlistError::ResistorCount {
                    form: s.form,
                    wanted: if has { 2 } else { 1 },
                });
            }
        };
        let c = s.c.checked(Combine::Capacitive)?;
        let cond = &s.conditions;
        let k = cond.factors()?;
        let (high, low) = cycle_si(s.form, s.steering, r1, r2.unwrap_or(0.0), c, &k);
        let (vu, _) = cond.thresholds()?;
        let vcc = cond.vcc.si();
        let startup = match s.form {
            Form::Monostable => 0.0,
            Form::Astable => (r1 + r2.unwrap_or(0.0)) * c * (vcc / (vcc - vu)).ln(),
            Form::Steered => {
                let reach = vcc - cond.diode_drop.si();
                r1 * c * (reach / (reach - vu)).ln()
            }
            Form::Square => {
                let voh = vcc - cond.output_high_drop.si();
                r1 * c * (voh / (voh - vu)).ln()
            }
        };
        let mut parts = vec![format!("{} {}", s.r1.name, num(r1))];
        if let (Some(n), Some(v)) = (&s.r2, r2) {
            parts.push(format!("{} {}", n.name, num(v)));
        }
        parts.push(format!("{} {}", s.c.name, num(c)));
        if s.form == Form::Steered {
            parts.push(format!("diode drop {}", num(cond.diode_drop.si())));
        }
        Ok(Self {
            high,
            low,
            startup,
            parts: parts.join(", "),
        })
    }

    fn shortest(&self) -> f64 {
        self.low.map_or(self.high, |l| l.min(self.high))
    }

    fn period(&self) -> f64 {
        self.high + self.low.unwrap_or(self.high)
    }
}

/// How a stage's trigger is driven.
enum Trigger {
    /// A monostable gets its own pulse source; free-running forms trigger themselves.
    Own,
    /// Free-running only (a pace stage).
    None,
    /// Fired by the falling edge of this output node through a coupling capacitor.
    From(String),
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

/// Letter name of the `i`-th piece of a network: a … z, then aa, ab, …
fn piece_letter(i: usize) -> String {
    let letters = b"abcdefghijklmnopqrstuvwxyz";
    let mut s = String::new();
    let mut i = i;
    loop {
        s.insert(0, char::from(letters[i % 26]));
        if i < 26 {
            break;
        }
        i = i / 26 - 1;
    }
    s
}

/// A node name of stage `tag`: `cap` alone, `cap_a` in a two-stage netlist.
fn node(base: &str, tag: &str) -> String {
    if tag.is_empty() {
        base.to_string()
    } else {
        format!("{base}_{}", tag.to_ascii_lowercase())
    }
}

/// A netlist being written, line by line.
struct Netlist {
    text: String,
}

impl Netlist {
    fn new(what: &str, vcc: Volts) -> Self {
        // SPICE takes the first line as the title.
        let mut n = Self {
            text: format!("onhand timer design: {what}\n"),
        };
        n.comment("Written by onhand. Nodes: vcc supply, cap timing capacitor, out output,");
        n.comment("trig trigger, dis discharge, ctrl control (with _a/_b per stage of a pair).");
        n.comment("Switch-level timer model below; run with: ngspice -b THIS_FILE");
        n.text.push_str(TIMER_LIBRARY);
        if !TIMER_LIBRARY.ends_with('\n') {
            n.text.push('\n');
        }
        n.line("");
        n.line(&format!("Vsupply vcc 0 DC {}", num(vcc.si())));
        n
    }

    fn line(&mut self, s: &str) {
        self.text.push_str(s);
        self.text.push('\n');
    }

    fn comment(&mut self, s: &str) {
        self.line(&format!("* {s}"));
    }

    /// Write a position's pieces between nodes `a` and `b`.
    fn network(&mut self, net: &Network, combine: Combine, tag: &str, a: &str, b: &str) {
        let letter = match combine {
            Combine::Resistive => 'R',
            Combine::Capacitive => 'C',
        };
        let mut base = net.name.replace('.', "");
        if !base.starts_with([letter, letter.to_ascii_lowercase()]) {
            base.insert(0, letter);
        }
        let suffix = if tag.is_empty() {
            String::new()
        } else {
            format!("_{}", tag.to_ascii_uppercase())
        };
        let many = net.values.len() > 1;
        let name = |i: usize| {
            if many {
                format!("{base}{}{suffix}", piece_letter(i))
            } else {
                format!("{base}{suffix}")
            }
        };
        if many {
            let shown = net.net.describe(&|i| name(i));
            self.comment(&format!(
                "{} = {shown}: {} pieces, equivalent {}",
                net.name,
                net.values.len(),
                num(net.value(combine))
            ));
        }
        let mut counter = 0;
        let inner = node(&base.to_ascii_lowercase(), tag);
        self.emit(&net.net, net, &name, &inner, &mut counter, (a, b));
    }

    fn emit(
        &mut self,
        tree: &Net,
        net: &Network,
        name: &dyn Fn(usize) -> String,
        inner: &str,
        counter: &mut usize,
        (a, b): (&str, &str),
    ) {
        match tree {
            Net::Piece(i) => {
                let v = net.values.get(*i).copied().unwrap_or(0.0);
                self.line(&format!("{} {a} {b} {}", name(*i), num(v)));
            }
            Net::Series(ch) => {
                let mut from = a.to_string();
                for (k, c) in ch.iter().enumerate() {
                    let to = if k + 1 == ch.len() {
                        b.to_string()
                    } else {
                        *counter += 1;
                        format!("{inner}_{counter}")
                    };
                    self.emit(c, net, name, inner, counter, (&from, &to));
                    from = to;
                }
            }
            Net::Parallel(ch) => {
                for c in ch {
                    self.emit(c, net, name, inner, counter, (a, b));
                }
            }
        }
    }

    /// Write one stage (parts, trigger, timer, measures when alone); return how long the
    /// transient run must last for its measures.
    fn stage(
        &mut self,
        s: &StageNet,
        t: &Timed,
        tag: &str,
        trigger: Trigger,
        parts: &SpiceParts,
    ) -> Result<f64, NetlistError> {
        let cond = &s.conditions;
        let (cap, dis, out, trig, ctrl) = (
            node("cap", tag),
            node("dis", tag),
            node("out", tag),
            node("trig", tag),
            node("ctrl", tag),
        );
        self.line("");
        if !tag.is_empty() {
            self.comment(&format!(
                "stage {}: {}",
                tag.to_ascii_uppercase(),
                describe(s.form)
            ));
        }
        match cond.control {
            Some(v) => self.line(&format!("V{ctrl} {ctrl} 0 DC {}", num(v.si()))),
            None => {
                self.comment(&format!(
                    "{ctrl} left to the internal divider (2/3 of the supply), decoupled as in the schematic"
                ));
                self.line(&format!("C{ctrl} {ctrl} 0 {}", num(CONTROL_DECOUPLING)));
                self.line(&format!(".ic v({ctrl})={}", num(cond.vcc.si() * 2.0 / 3.0)));
            }
        }
        let vf = num(cond.diode_drop.si());
        let junction = parts.junction_diodes;
        if s.form == Form::Steered {
            self.comment(if junction {
                "steering diodes: junction onhand_ss (IS 2.52n, N 1.752, RS 0.568; from memory)"
            } else {
                "steering diodes: fixed forward drop (onhand_diode)"
            });
        }
        let diode = |name: &str, a: &str, k: &str| {
            if junction {
                format!("D{name} {a} {k} onhand_ss")
            } else {
                format!("Xd{name} {a} {k} onhand_diode vf={vf}")
            }
        };
        let sfx = if tag.is_empty() {
            String::new()
        } else {
            format!("_{}", tag.to_ascii_uppercase())
        };
        let r2 = s.r2.as_ref();
        match (s.form, r2) {
            (Form::Monostable, _) => {
                self.network(&s.r1, Combine::Resistive, tag, "vcc", &cap);
            }
            (Form::Astable, Some(r2)) => {
                self.network(&s.r1, Combine::Resistive, tag, "vcc", &dis);
                self.network(r2, Combine::Resistive, tag, &dis, &cap);
            }
            (Form::Steered, Some(rb)) => {
                self.network(&s.r1, Combine::Resistive, tag, "vcc", &dis);
                match s.steering {
                    Steering::TwoDiode => {
                        let db = node("db", tag);
                        self.line(&diode(&format!("charge{sfx}"), &dis, &cap));
                        self.network(rb, Combine::Resistive, tag, &cap, &db);
                        self.line(&diode(&format!("discharge{sfx}"), &db, &dis));
                    }
                    Steering::OneDiode => {
                        self.comment("one diode bypassing RB while charging");
                        self.network(rb, Combine::Resistive, tag, &dis, &cap);
                        self.line(&diode(&format!("bypass{sfx}"), &dis, &cap));
                    }
                }
            }
            (Form::Square, _) => {
                self.network(&s.r1, Combine::Resistive, tag, &out, &cap);
            }
            (form, None) => return Err(NetlistError::ResistorCount { form, wanted: 2 }),
        }
        self.network(&s.c, Combine::Capacitive, tag, &cap, "0");
        let one_shot = s.form == Form::Monostable;
        let mut stop = t.startup + 4.5 * t.period();
        let thr_trig = if one_shot { trig.clone() } else { cap.clone() };
        let dis_pin = if one_shot { cap.clone() } else { dis.clone() };
        if one_shot {
            let width = t.high;
            match &trigger {
                Trigger::From(src) => {
                    // The same coupling as the text schematic and the checks.
                    let k = PAIR_COUPLING;
                    self.comment(&format!(
                        "trigger: falling edge of {src} through a coupling capacitor, pull-up to the supply, clamp diode to the supply"
                    ));
                    self.line(&format!("Rpull{sfx} {trig} vcc {}", num(k.pull_up)));
                    self.line(&format!("Ccouple{sfx} {src} {trig} {}", num(k.capacitor)));
                    if k.clamp {
                        self.line(&format!("Dclamp{sfx} {trig} vcc onhand_ss"));
                    }
                }
                Trigger::Own | Trigger::None => {
                    let vcc = cond.vcc.si();
                    let (delay, period, edge) = (0.2 * width, 2.0 * width, width / 1000.0);
                    self.comment(
                        "trigger: held at the supply, pulled to 0 V for a tenth of the width",
                    );
                    self.line(&format!(
                        "Vtrig{sfx} {trig} 0 PULSE({} 0 {} {} {} {} {})",
                        num(vcc),
                        time(delay),
                        time(edge),
                        time(edge),
                        time(0.1 * width),
                        time(period)
                    ));
                    stop = delay + 3.0 * period;
                    let h = num(half_output(cond));
                    self.comment("width of the second pulse (the first proves the start-up state)");
                    self.line(&format!(
                        ".meas tran {} TRIG v({out}) val={h} rise=2 TARG v({out}) val={h} fall=2",
                        meas_name(tag, MEAS_WIDTH)
                    ));
                }
            }
        }
        let q = node("q", tag);
        self.comment(&format!(
            "timer: discharge saturation {} V, output-high drop {} V",
            num(parts.saturation),
            num(cond.output_high_drop.si())
        ));
        self.line(&format!(
            "Xtimer{sfx} 0 {thr_trig} {out} {ctrl} {cap} {dis_pin} vcc {q} onhand_switch_timer vsat={} hdrop={}",
            num(parts.saturation),
            num(cond.output_high_drop.si()),
        ));
        self.line(&format!(".ic v({cap})=0 v({q})={}", u8::from(!one_shot)));
        if !one_shot && !matches!(trigger, Trigger::None) {
            self.cycle_measures(cond, tag, &out);
        }
        Ok(stop)
    }

    fn tran(&mut self, step: f64, stop: f64) {
        self.line("");
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
    fn cycle_measures(&mut self, cond: &Conditions, tag: &str, out: &str) {
        let h = num(half_output(cond));
        self.comment("third cycle: the first starts from an empty capacitor and runs long");
        self.line(&format!(
            ".meas tran {} TRIG v({out}) val={h} rise=2 TARG v({out}) val={h} fall=3",
            meas_name(tag, MEAS_HIGH)
        ));
        self.line(&format!(
            ".meas tran {} TRIG v({out}) val={h} fall=3 TARG v({out}) val={h} rise=3",
            meas_name(tag, MEAS_LOW)
        ));
        self.line(&format!(
            ".meas tran {} TRIG v({out}) val={h} rise=2 TARG v({out}) val={h} rise=3",
            meas_name(tag, MEAS_PERIOD)
        ));
    }

    fn finish(mut self) -> String {
        self.line(".end");
        self.text
    }
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
            assert!(text.contains(".subckt onhand_switch_timer gnd trig out ctrl thr dis vcc q"));
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
        assert!(text.contains("C cap 0 100n\n"), "{text}");
        // The control pin is decoupled by 10 nF, as the schematic draws it.
        assert!(text.contains("Cctrl ctrl 0 10n\n"), "{text}");
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
        assert!(text.contains("hdrop=1.5\n"), "{text}");
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
        assert_eq!(
            render(&d),
            Err(NetlistError::NotPositive { what: "R1".into() })
        );
        let mut d = design(Form::Steered, Some(47e3));
        d.diode_drop = v(3.5);
        assert!(matches!(render(&d), Err(NetlistError::Form(_))));
        let mut d = design(Form::Monostable, None);
        d.control = Some(v(12.0));
        assert!(matches!(render(&d), Err(NetlistError::Form(_))));
    }

    fn net(name: &str, text: &str) -> Network {
        let (net, values) =
            crate::network::parse_net(text, &mut |s: &str| s.parse::<f64>()).expect("network");
        Network {
            name: name.into(),
            net,
            values,
        }
    }

    fn stage_of(form: Form, r1: Network, r2: Option<Network>, c: Network) -> StageNet {
        StageNet {
            form,
            steering: Steering::TwoDiode,
            r1,
            r2,
            c,
            conditions: Conditions::ideal(v(9.0)),
        }
    }

    #[test]
    fn networks_are_written_piece_by_piece() {
        let s = stage_of(
            Form::Astable,
            net("R1", "(10000||10000)+1000"),
            Some(net("R2", "47000")),
            net("C", "1e-8||2.2e-9"),
        );
        let text = stage(&s).expect("netlist");
        for line in [
            "R1a vcc r1_1 10k",
            "R1b vcc r1_1 10k",
            "R1c r1_1 dis 1k",
            "R2 dis cap 47k",
            "Ca cap 0 10n",
            "Cb cap 0 2.2n",
        ] {
            assert!(text.lines().any(|l| l == line), "{line:?}:\n{text}");
        }
        // The title and the comment carry the equivalent values (R1 = 6 kΩ, C = 12.2 nF).
        assert!(text.starts_with("onhand timer design: classic astable, R1 6k, R2 47k, C 12.2n"));
        assert!(
            text.contains(
                "* R1 = (R1a in parallel with R1b) in series with R1c: 3 pieces, equivalent 6k"
            ),
            "{text}"
        );
    }

    #[test]
    fn one_diode_steering_bypasses_rb() {
        let mut s = stage_of(
            Form::Steered,
            net("RA", "10000"),
            Some(net("RB", "4700")),
            net("C", "1e-7"),
        );
        s.steering = Steering::OneDiode;
        s.conditions.diode_drop = v(0.6);
        let text = stage(&s).expect("netlist");
        assert!(text.contains("RB dis cap 4.7k\n"), "{text}");
        assert!(
            text.contains("Xdbypass dis cap onhand_diode vf=600m\n"),
            "{text}"
        );
        assert!(!text.contains("Xddischarge"), "{text}");
        // The default diode (the small-signal diode's drop at 1 mA) is the junction model.
        s.conditions.diode_drop = v(SMALL_SIGNAL_DIODE.drop_at(1e-3));
        let text = stage(&s).expect("netlist");
        assert!(text.contains("Dbypass dis cap onhand_ss\n"), "{text}");
        assert!(text.contains("vsat=100m"), "{text}");
        let text = stage_with(&s, &SpiceParts::textbook()).expect("netlist");
        assert!(text.contains("onhand_diode vf="), "{text}");
        assert!(text.contains("vsat=0 "), "{text}");
    }

    #[test]
    fn pair_chains_the_pace_output_into_the_width_trigger() {
        let pace = stage_of(
            Form::Astable,
            net("R1", "1000"),
            Some(net("R2", "10000")),
            net("C1", "1e-7"),
        );
        let width = stage_of(
            Form::Monostable,
            net("R3", "10000"),
            None,
            net("C2", "1e-8"),
        );
        let text = pair(&pace, &width).expect("netlist");
        assert!(text.contains("Rpull_B trig_b vcc 10k\n"), "{text}");
        // The coupling of the checks and the schematic: 1 nF, 10 kΩ and the clamp diode.
        assert!(text.contains("Ccouple_B out_a trig_b 1n\n"), "{text}");
        assert!(text.contains("Dclamp_B trig_b vcc onhand_ss\n"), "{text}");
        assert!(
            text.contains("Xtimer_A 0 cap_a out_a ctrl_a cap_a dis_a vcc q_a onhand_switch_timer"),
            "{text}"
        );
        assert!(
            text.contains("Xtimer_B 0 trig_b out_b ctrl_b cap_b cap_b vcc q_b onhand_switch_timer"),
            "{text}"
        );
        let meas: Vec<&str> = text.lines().filter(|l| l.starts_with(".meas")).collect();
        assert_eq!(meas.len(), 3, "{text}");
        assert!(matches!(pair(&width, &pace), Err(NetlistError::PairForms)));
    }

    #[test]
    fn dual_names_each_stage_apart() {
        let a = stage_of(Form::Square, net("R", "10000"), None, net("C", "1e-8"));
        let b = stage_of(
            Form::Monostable,
            net("R", "22000"),
            None,
            net("C", "1e-8+1e-8"),
        );
        let text = dual(&a, &b).expect("netlist");
        assert!(text.contains("R_A out_a cap_a 10k\n"), "{text}");
        assert!(text.contains("R_B vcc cap_b 22k\n"), "{text}");
        assert!(text.contains("Ca_B cap_b c_b_1 10n\n"), "{text}");
        for name in ["a_high", "a_low", "a_period", "b_width"] {
            assert!(
                text.contains(&format!(".meas tran {name} ")),
                "{name}:\n{text}"
            );
        }
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
