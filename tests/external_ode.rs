//! Cross-check of the closed-form timing against an independent numerical integration.
//!
//! Source: ode_solvers crate (Dopri5), independent integration. The timer is written here from
//! its circuit, not from our formulas: a capacitor fed through a resistor (and, for the steered
//! form, an ideal diode with a fixed drop that blocks reverse current), thresholds taken from the
//! chip's three equal divider resistors or a driven control pin, and the state machine of the
//! latch (charge until the upper threshold, discharge until the lower one). Each phase is
//! integrated with Dopri5 until the capacitor crosses its threshold; the crossing is then found
//! by bisection on Dopri5's continuous output. Nothing here calls `timing::Factors`; the closed
//! forms of `onhand::timing` are only the thing checked, within 0.1 %.

use ode_solvers::continuous_output_model::ContinuousOutputModel;
use ode_solvers::{Dopri5, System, Vector1};
use onhand::timing::{self, Conditions};
use onhand::units::{Farads, Ohms, Volts};

/// Agreement asked of the closed forms (the brief's 0.1 %).
const TOLERANCE: f64 = 1e-3;

type State = Vector1<f64>;

/// What feeds the capacitor during one phase: a voltage behind a resistor, optionally through
/// an ideal diode with forward drop `vf` that conducts only in its own direction.
#[derive(Clone, Copy)]
struct Path {
    /// Voltage at the far end of the path.
    source: f64,
    /// Resistance of the path, ohms.
    r: f64,
    /// Diode in the path: forward drop and whether it points into the capacitor.
    diode: Option<(f64, Toward)>,
}

#[derive(Clone, Copy, PartialEq)]
enum Toward {
    Capacitor,
    Away,
}

impl Path {
    /// Current into the capacitor at capacitor voltage `v`.
    fn current(&self, v: f64) -> f64 {
        let across = self.source - v;
        match self.diode {
            None => across / self.r,
            Some((vf, Toward::Capacitor)) => (across - vf).max(0.0) / self.r,
            Some((vf, Toward::Away)) => (across + vf).min(0.0) / self.r,
        }
    }
}

/// dV/dt = I(V)/C for one phase; stops the integration once V crosses `threshold`.
struct Phase {
    path: Path,
    c: f64,
    threshold: f64,
    rising: bool,
}

impl Phase {
    fn crossed(&self, v: f64) -> bool {
        if self.rising {
            v >= self.threshold
        } else {
            v <= self.threshold
        }
    }
}

impl System<f64, State> for Phase {
    fn system(&self, _t: f64, y: &State, dy: &mut State) {
        dy[0] = self.path.current(y[0]) / self.c;
    }

    fn solout(&mut self, _t: f64, y: &State, _dy: &State) -> bool {
        self.crossed(y[0])
    }
}

/// Time for the capacitor to go from `v0` to `threshold` along `path`; `None` if it never does
/// within `horizon` seconds.
fn phase_time(path: Path, c: f64, v0: f64, threshold: f64, horizon: f64) -> Option<f64> {
    let rising = threshold > v0;
    let phase = Phase {
        path,
        c,
        threshold,
        rising,
    };
    let mut solver = Dopri5::new(phase, 0.0, horizon, horizon, State::new(v0), 1e-11, 1e-13);
    let mut model = ContinuousOutputModel::default();
    solver
        .integrate_with_continuous_output_model(&mut model)
        .expect("Dopri5 integration");
    let (&t_end, y_end) = (solver.x_out().last()?, solver.y_out().last()?);
    let hit = |v: f64| {
        if rising {
            v >= threshold
        } else {
            v <= threshold
        }
    };
    if !hit(y_end[0]) {
        return None;
    }
    // Bisection on the continuous output over the last step, which holds the crossing.
    let mut lo = solver.x_out().iter().rev().nth(1).copied().unwrap_or(0.0);
    let mut hi = t_end;
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if mid <= lo || mid >= hi {
            break;
        }
        let v = model.evaluate(mid).expect("inside the continuous output")[0];
        if hit(v) {
            hi = mid;
        } else {
            lo = mid;
        }
    }
    Some(0.5 * (lo + hi))
}

/// The chip's thresholds: three equal divider resistors from the supply, the control pin at the
/// top tap unless driven, the trigger reference at the lower tap.
fn thresholds(vcc: f64, control: Option<f64>) -> (f64, f64) {
    let r = 5e3;
    let upper = control.unwrap_or(vcc * (2.0 * r) / (3.0 * r));
    // With the control pin driven, the lower two resistors divide it in half.
    let lower = upper * r / (2.0 * r);
    (upper, lower)
}

/// One case of an oscillating form: how the capacitor charges and discharges.
struct Oscillator {
    charge: Path,
    discharge: Path,
    c: f64,
    upper: f64,
    lower: f64,
}

/// Start-up time and the high and low times of the cycles after it, or `None` if the timer
/// never switches.
fn run_oscillator(osc: &Oscillator, cycles: usize) -> Option<(f64, Vec<(f64, f64)>)> {
    let horizon = 1e3 * osc.charge.r.max(osc.discharge.r) * osc.c;
    // Start-up: the capacitor starts empty, below the lower threshold, so the latch is set.
    let mut v = 0.0;
    let startup = phase_time(osc.charge, osc.c, v, osc.upper, horizon)?;
    assert!(startup > 0.0);
    v = osc.upper;
    let mut out = Vec::new();
    for _ in 0..cycles {
        let low = phase_time(osc.discharge, osc.c, v, osc.lower, horizon)?;
        v = osc.lower;
        let high = phase_time(osc.charge, osc.c, v, osc.upper, horizon)?;
        v = osc.upper;
        out.push((high, low));
    }
    Some((startup, out))
}

/// Largest relative difference seen in one test, printed at its end.
#[derive(Default)]
struct Worst {
    err: f64,
    checks: usize,
}

impl Worst {
    fn within(&mut self, what: &str, integrated: f64, closed: f64) {
        let err = (integrated - closed).abs() / closed;
        assert!(
            err < TOLERANCE,
            "{what}: Dopri5 {integrated:.9e} s, closed form {closed:.9e} s, off by {:.4} %",
            err * 100.0
        );
        self.err = self.err.max(err);
        self.checks += 1;
    }

    fn report(&self, what: &str) {
        eprintln!(
            "{what}: {} times checked, largest relative difference {:.2e}",
            self.checks, self.err
        );
    }
}

fn cond(vcc: f64, control: Option<f64>, vf: f64, drop: f64) -> Conditions {
    Conditions {
        vcc: Volts::from_si(vcc).expect("supply"),
        control: control.map(|c| Volts::from_si(c).expect("control")),
        diode_drop: Volts::from_si(vf).expect("diode drop"),
        output_high_drop: Volts::from_si(drop).expect("output drop"),
    }
}

fn ohms(x: f64) -> Ohms {
    Ohms::from_si(x).expect("resistance")
}
fn farads(x: f64) -> Farads {
    Farads::from_si(x).expect("capacitance")
}

const SUPPLIES: [f64; 4] = [5.0, 9.0, 12.0, 15.0];
/// Control pin: left to the divider, or driven to this fraction of the supply.
const CONTROLS: [Option<f64>; 4] = [None, Some(0.5), Some(0.6), Some(0.8)];

fn control_at(vcc: f64, fraction: Option<f64>) -> Option<f64> {
    fraction.map(|f| f * vcc)
}

fn check_cycles(worst: &mut Worst, what: &str, cycles: &[(f64, f64)], closed: timing::Cycle) {
    // Every cycle after start-up repeats; check each one, not only the first.
    for (i, &(high, low)) in cycles.iter().enumerate() {
        worst.within(
            &format!("{what} cycle {} high", i + 1),
            high,
            closed.high.si(),
        );
        worst.within(&format!("{what} cycle {} low", i + 1), low, closed.low.si());
    }
}

#[test]
fn monostable_width_matches_integration() {
    // Source: ode_solvers crate (Dopri5), independent integration.
    let mut worst = Worst::default();
    for vcc in SUPPLIES {
        for fraction in CONTROLS {
            for (r, c) in [(47e3, 100e-9), (1e6, 1e-6), (1e3, 1e-9)] {
                let control = control_at(vcc, fraction);
                let (upper, _) = thresholds(vcc, control);
                let path = Path {
                    source: vcc,
                    r,
                    diode: None,
                };
                // Until triggered, the discharge switch (taken as ideal) holds the capacitor at
                // 0 V; the trigger sets the latch and the pulse lasts until the upper threshold.
                let width = phase_time(path, c, 0.0, upper, 1e3 * r * c).expect("fires");
                let closed = timing::monostable(ohms(r), farads(c), &cond(vcc, control, 0.0, 0.0))
                    .expect("closed form");
                worst.within(
                    &format!("monostable R {r} C {c} Vcc {vcc} ctrl {control:?}"),
                    width,
                    closed.si(),
                );
            }
        }
    }
    worst.report("monostable");
}

#[test]
fn classic_astable_matches_integration() {
    // Source: ode_solvers crate (Dopri5), independent integration.
    let mut worst = Worst::default();
    for vcc in SUPPLIES {
        for fraction in CONTROLS {
            for (r1, r2, c) in [
                (10e3, 47e3, 100e-9),
                (1e3, 10e3, 10e-9),
                (47e3, 4.7e3, 1e-6),
            ] {
                let control = control_at(vcc, fraction);
                let (upper, lower) = thresholds(vcc, control);
                // Charge from the supply through R1 and R2; discharge through R2 into DIS (0 V).
                let osc = Oscillator {
                    charge: Path {
                        source: vcc,
                        r: r1 + r2,
                        diode: None,
                    },
                    discharge: Path {
                        source: 0.0,
                        r: r2,
                        diode: None,
                    },
                    c,
                    upper,
                    lower,
                };
                let (startup, cycles) = run_oscillator(&osc, 3).expect("oscillates");
                let ideal = cond(vcc, control, 0.0, 0.0);
                let closed =
                    timing::astable(ohms(r1), ohms(r2), farads(c), &ideal).expect("closed form");
                // The first charge starts from 0 V: it is a one-shot through R1 + R2.
                let first = timing::monostable(ohms(r1 + r2), farads(c), &ideal).expect("one-shot");
                worst.within(
                    &format!("astable start-up R1 {r1} R2 {r2} C {c} Vcc {vcc} ctrl {control:?}"),
                    startup,
                    first.si(),
                );
                check_cycles(
                    &mut worst,
                    &format!("astable R1 {r1} R2 {r2} C {c} Vcc {vcc} ctrl {control:?}"),
                    &cycles,
                    closed,
                );
            }
        }
    }
    worst.report("classic astable");
}

fn steered_oscillator(
    vcc: f64,
    control: Option<f64>,
    vf: f64,
    ra: f64,
    rb: f64,
    c: f64,
) -> Oscillator {
    let (upper, lower) = thresholds(vcc, control);
    // Charge: supply → Ra → diode into the capacitor. Discharge: capacitor → diode → Rb → DIS.
    Oscillator {
        charge: Path {
            source: vcc,
            r: ra,
            diode: Some((vf, Toward::Capacitor)),
        },
        discharge: Path {
            source: 0.0,
            r: rb,
            diode: Some((vf, Toward::Away)),
        },
        c,
        upper,
        lower,
    }
}

#[test]
fn diode_steered_astable_matches_integration() {
    // Source: ode_solvers crate (Dopri5), independent integration.
    let mut worst = Worst::default();
    let mut checked = 0;
    for vcc in SUPPLIES {
        for fraction in CONTROLS {
            for vf in [0.0, 0.3, 0.6, 0.7] {
                for (ra, rb, c) in [
                    (10e3, 47e3, 100e-9),
                    (22e3, 22e3, 10e-9),
                    (47e3, 4.7e3, 1e-6),
                ] {
                    let control = control_at(vcc, fraction);
                    let closed = timing::steered(
                        ohms(ra),
                        ohms(rb),
                        farads(c),
                        &cond(vcc, control, vf, 0.0),
                    );
                    let osc = steered_oscillator(vcc, control, vf, ra, rb, c);
                    let what =
                        format!("steered Ra {ra} Rb {rb} C {c} Vcc {vcc} ctrl {control:?} Vf {vf}");
                    // Every case here is reachable (lower threshold 1.25 V or more, above the
                    // largest drop), so both sides must give a cycle.
                    let (_, cycles) =
                        run_oscillator(&osc, 3).unwrap_or_else(|| panic!("{what}: no cycle"));
                    check_cycles(&mut worst, &what, &cycles, closed.expect("closed form"));
                    checked += 1;
                }
            }
        }
    }
    assert_eq!(checked, 4 * 4 * 4 * 3);
    worst.report("diode-steered astable");
}

#[test]
fn steered_astable_that_cannot_discharge_is_refused_by_both() {
    // Source: ode_solvers crate (Dopri5), independent integration. With the lower threshold below
    // the diode drop the capacitor settles at the drop and never reaches it: the integration sees
    // no crossing, and the closed forms must refuse the design rather than give a time.
    for (vcc, control, vf) in [
        (5.0, Some(2.0), 1.2),
        (3.0, None, 1.1),
        (9.0, Some(1.0), 0.7),
    ] {
        let osc = steered_oscillator(vcc, control, vf, 10e3, 10e3, 100e-9);
        assert!(
            run_oscillator(&osc, 1).is_none(),
            "Vcc {vcc} ctrl {control:?} Vf {vf}: integration found a cycle"
        );
        let closed = timing::steered(
            ohms(10e3),
            ohms(10e3),
            farads(100e-9),
            &cond(vcc, control, vf, 0.0),
        );
        assert!(
            closed.is_err(),
            "Vcc {vcc} ctrl {control:?} Vf {vf}: closed form gave {closed:?}"
        );
    }
}

#[test]
fn output_driven_square_wave_matches_integration() {
    // Source: ode_solvers crate (Dopri5), independent integration.
    let mut worst = Worst::default();
    let mut stalled = Vec::new();
    for vcc in SUPPLIES {
        for fraction in [None, Some(0.5), Some(0.6)] {
            for drop in [0.0, 0.5, 1.2, 1.7] {
                let control = control_at(vcc, fraction);
                let (upper, lower) = thresholds(vcc, control);
                let (r, c) = (47e3, 100e-9);
                // One resistor from the output: high sits `drop` below the supply, low at 0 V.
                let osc = Oscillator {
                    charge: Path {
                        source: vcc - drop,
                        r,
                        diode: None,
                    },
                    discharge: Path {
                        source: 0.0,
                        r,
                        diode: None,
                    },
                    c,
                    upper,
                    lower,
                };
                let what = format!("square R {r} C {c} Vcc {vcc} ctrl {control:?} drop {drop}");
                let closed = timing::square(ohms(r), farads(c), &cond(vcc, control, 0.0, drop));
                match run_oscillator(&osc, 3) {
                    Some((_, cycles)) => {
                        check_cycles(&mut worst, &what, &cycles, closed.expect("closed form"))
                    }
                    // An output high level at or below the upper threshold never lets the
                    // capacitor reach it: the closed forms must refuse the design too.
                    None => {
                        assert!(closed.is_err(), "{what}: closed form gave {closed:?}");
                        stalled.push((vcc, fraction, drop));
                    }
                }
            }
        }
    }
    // Only 5 V with the divider (upper threshold 3.33 V) and a 1.7 V drop (output 3.3 V) stalls.
    assert_eq!(stalled, vec![(5.0, None, 1.7)]);
    worst.report("output-driven square wave");
}

// ---------------------------------------------------------------------------------------------
// The real-parts model: junction diodes and pin bias currents.
//
// Source: ode_solvers crate (Dopri5), independent integration. The capacitor current is written
// from the circuit: a junction diode `I = IS·(exp(Vd/(N·Vt)) − 1)` with its series resistance (the
// figures the evaluator uses, so both describe the same part), its current found here by
// bisection on the loop equation; a constant pin current drawn from (or pushed into) the node.
// Nothing here calls the evaluator's integrals; within 0.1 %.

use onhand::timing::evaluate::{SMALL_SIGNAL_DIODE, THERMAL_VOLTAGE};
use onhand::timing::{Family, Model, Stage, Steering, evaluate};

struct Driven {
    f: Box<dyn Fn(f64) -> f64>,
    threshold: f64,
    rising: bool,
}

impl System<f64, State> for Driven {
    fn system(&self, _t: f64, y: &State, dy: &mut State) {
        dy[0] = (self.f)(y[0]);
    }

    fn solout(&mut self, _t: f64, y: &State, _dy: &State) -> bool {
        if self.rising {
            y[0] >= self.threshold
        } else {
            y[0] <= self.threshold
        }
    }
}

/// Time for `dv/dt = f(v)` to take the capacitor from `v0` to `threshold`.
fn driven_time(f: Box<dyn Fn(f64) -> f64>, v0: f64, threshold: f64, horizon: f64) -> f64 {
    let rising = threshold > v0;
    let sys = Driven {
        f,
        threshold,
        rising,
    };
    let mut solver = Dopri5::new(sys, 0.0, horizon, horizon, State::new(v0), 1e-11, 1e-13);
    let mut model = ContinuousOutputModel::default();
    solver
        .integrate_with_continuous_output_model(&mut model)
        .expect("Dopri5 integration");
    let hit = |v: f64| {
        if rising {
            v >= threshold
        } else {
            v <= threshold
        }
    };
    let t_end = *solver.x_out().last().expect("steps");
    assert!(
        hit(solver.y_out().last().expect("steps")[0]),
        "never crossed"
    );
    let mut lo = solver.x_out().iter().rev().nth(1).copied().unwrap_or(0.0);
    let mut hi = t_end;
    for _ in 0..200 {
        let mid = 0.5 * (lo + hi);
        if mid <= lo || mid >= hi {
            break;
        }
        if hit(model.evaluate(mid).expect("inside")[0]) {
            hi = mid;
        } else {
            lo = mid;
        }
    }
    0.5 * (lo + hi)
}

/// Diode current at forward voltage `vd`: Shockley, `IS·(exp(vd/(N·Vt)) − 1)`.
fn shockley(vd: f64) -> f64 {
    let p = SMALL_SIGNAL_DIODE;
    p.is * ((vd / (p.n * THERMAL_VOLTAGE)).exp() - 1.0)
}

/// Current through `r` in series with the diode (and its RS) with `across` volts over both:
/// bisection on the current.
fn series_current(r: f64, across: f64) -> f64 {
    if across <= 0.0 {
        return 0.0;
    }
    let rt = r + SMALL_SIGNAL_DIODE.rs;
    let (mut lo, mut hi) = (0.0, across / rt);
    for _ in 0..200 {
        let i = 0.5 * (lo + hi);
        // The diode takes what the resistors leave; more current than it passes is too much.
        if shockley(across - i * rt) < i {
            hi = i;
        } else {
            lo = i;
        }
    }
    0.5 * (lo + hi)
}

fn stage_times(st: &Stage, model: &Model) -> onhand::timing::Evaluation {
    evaluate(st, &Family::bipolar(), model).expect("evaluate")
}

#[test]
fn small_signal_two_diode_steering_matches_integration() {
    let fam = Family::bipolar();
    let vs = fam.discharge_saturation.value;
    let mut model = Model::real();
    model.bias_currents = false;
    let mut worst: f64 = 0.0;
    for (ra, rb, c, vcc) in [
        (10e3, 4.7e3, 100e-9, 9.0),
        (1e3, 1e3, 10e-9, 5.0),
        (1e6, 47e3, 1e-9, 15.0),
        (33e3, 1e6, 10e-9, 12.0),
    ] {
        let st = Stage::steered(ohms(ra), ohms(rb), farads(c), cond(vcc, None, 0.0, 0.0));
        let e = stage_times(&st, &model);
        let (vu, vl) = thresholds(vcc, None);
        let h = (ra + rb) * c * 50.0;
        let high = driven_time(
            Box::new(move |v| series_current(ra, vcc - v) / c),
            vl,
            vu,
            h,
        );
        let low = driven_time(
            Box::new(move |v| -series_current(rb, v - vs) / c),
            vu,
            vl,
            h,
        );
        let eh = (e.high.nominal - high).abs() / high;
        let el = (e.low.expect("low").nominal - low).abs() / low;
        worst = worst.max(eh).max(el);
        assert!(
            eh < TOLERANCE && el < TOLERANCE,
            "{ra} {rb} {vcc}: {eh} {el}"
        );
    }
    eprintln!(
        "small-signal two-diode steering: worst {:.5} %",
        worst * 100.0
    );
}

#[test]
fn small_signal_one_diode_steering_matches_integration() {
    let mut model = Model::real();
    model.bias_currents = false;
    for (ra, rb, c, vcc) in [
        (10e3, 10e3, 10e-9, 9.0),
        (100e3, 1e3, 1e-6, 5.0),
        (1e3, 100e3, 10e-9, 12.0),
    ] {
        let mut st = Stage::steered(ohms(ra), ohms(rb), farads(c), cond(vcc, None, 0.0, 0.0));
        st.steering = Steering::OneDiode;
        let e = stage_times(&st, &model);
        let (vu, vl) = thresholds(vcc, None);
        // Node u between RA and the RB ‖ diode pair: (Vcc − u)/RA = (u − v)/RB + Id(u − v).
        let feed = move |v: f64| {
            let (mut lo, mut hi) = (v, vcc);
            for _ in 0..100 {
                let u = 0.5 * (lo + hi);
                let id = series_current(0.0, u - v);
                if (vcc - u) / ra > (u - v) / rb + id {
                    lo = u;
                } else {
                    hi = u;
                }
            }
            (vcc - 0.5 * (lo + hi)) / ra / c
        };
        let high = driven_time(Box::new(feed), vl, vu, (ra + rb) * c * 50.0);
        let eh = (e.high.nominal - high).abs() / high;
        assert!(
            eh < TOLERANCE,
            "{ra} {rb} {vcc}: {} vs {high}: {eh}",
            e.high.nominal
        );
    }
}

#[test]
fn bias_current_band_ends_match_integration() {
    // The band's far end is the constant-current case: one-shot with the threshold current
    // drawn from the node; astable high with the threshold current, low with the trigger
    // current pushed in (the ends that lengthen each time).
    let fam = Family::bipolar();
    let (ith, itr) = (fam.threshold_current.value, fam.trigger_current.value);
    let vs = fam.discharge_saturation.value;
    let model = Model::real();
    let (r, c, vcc) = (970e3, 470e-9, 9.0);
    let st = Stage::monostable(ohms(r), farads(c), cond(vcc, None, 0.0, 0.0));
    let e = stage_times(&st, &model);
    let (vu, vl) = thresholds(vcc, None);
    let t = driven_time(
        Box::new(move |v| ((vcc - v) / r - ith) / c),
        vs,
        vu,
        r * c * 50.0,
    );
    assert!(
        (e.high.band_hi - t).abs() / t < TOLERANCE,
        "{} vs {t}",
        e.high.band_hi
    );
    let (r1, r2, c) = (100e3, 1e6, 10e-9);
    let st = Stage::astable(ohms(r1), ohms(r2), farads(c), cond(vcc, None, 0.0, 0.0));
    let e = stage_times(&st, &model);
    let high = driven_time(
        Box::new(move |v| ((vcc - v) / (r1 + r2) - ith) / c),
        vl,
        vu,
        (r1 + r2) * c * 50.0,
    );
    let low = driven_time(
        Box::new(move |v| (-(v - vs) / r2 + itr) / c),
        vu,
        vl,
        r2 * c * 50.0,
    );
    assert!(
        (e.high.band_hi - high).abs() / high < TOLERANCE,
        "{} vs {high}",
        e.high.band_hi
    );
    let l = e.low.expect("low");
    assert!(
        (l.band_hi - low).abs() / low < TOLERANCE,
        "{} vs {low}",
        l.band_hi
    );
}
