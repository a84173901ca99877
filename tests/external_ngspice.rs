//! Cross-check of the closed-form timing against an outside simulator.
//!
//! Source: Debian package ngspice (39.x), transient simulation. Each case writes the netlist
//! that `onhand::report::netlist` exports, runs `ngspice -b` on it, reads the `.meas` results
//! and compares them with `onhand::timing::forms` within 1 %. Skipped when ngspice is missing,
//! failed instead under `.ci/run` (`ONHAND_REQUIRE_EXTERNAL=1`).

use crate::util;
use onhand::report::netlist::{self, Design, Form, MEAS_HIGH, MEAS_LOW, MEAS_PERIOD, MEAS_WIDTH};
use onhand::timing::{self, Conditions};
use onhand::units::{Farads, Ohms, Volts};

/// Agreement asked of the simulation (the brief's 1 %).
const TOLERANCE: f64 = 0.01;

fn ohms(x: f64) -> Ohms {
    Ohms::from_si(x).expect("resistance")
}
fn farads(x: f64) -> Farads {
    Farads::from_si(x).expect("capacitance")
}
fn volts(x: f64) -> Volts {
    Volts::from_si(x).expect("voltage")
}

/// One case: form, R1, R2, C, supply, driven control, diode drop, output high drop.
struct Case(Form, f64, Option<f64>, f64, f64, Option<f64>, f64, f64);

impl Case {
    fn design(&self) -> Design {
        let Case(form, r1, r2, c, vcc, control, vf, drop) = *self;
        Design {
            form,
            r1: ohms(r1),
            r2: r2.map(ohms),
            c: farads(c),
            vcc: volts(vcc),
            control: control.map(volts),
            diode_drop: volts(vf),
            output_high_drop: volts(drop),
        }
    }
}

/// A short description of a design for failure messages and the printed figures.
fn label(d: &Design) -> String {
    format!(
        "{:?} R1 {} R2 {:?} C {} Vcc {} ctrl {:?} Vf {} drop {}",
        d.form,
        d.r1.si(),
        d.r2.map(Ohms::si),
        d.c.si(),
        d.vcc.si(),
        d.control.map(Volts::si),
        d.diode_drop.si(),
        d.output_high_drop.si()
    )
}

fn have_ngspice() -> bool {
    // `ngspice -v` prints its banner and exits 0 in batch use (checked on ngspice 39).
    util::have_tool("ngspice", &["-v"])
}

/// Run ngspice in batch mode on `text`; return stdout and stderr together.
fn simulate(text: &str) -> String {
    let dir = tempfile::tempdir().expect("temp dir");
    let path = dir.path().join("design.cir");
    std::fs::write(&path, text).expect("write netlist");
    let out = std::process::Command::new("ngspice")
        .arg("-b")
        .arg(&path)
        .current_dir(dir.path())
        .output()
        .expect("run ngspice");
    let all = format!(
        "{}\n{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(
        out.status.success(),
        "ngspice failed:\n{all}\n--- netlist\n{text}"
    );
    all
}

fn measured(output: &str, name: &str, text: &str) -> f64 {
    netlist::measurement(output, name)
        .unwrap_or_else(|| panic!("no `{name}` in ngspice output:\n{output}\n--- netlist\n{text}"))
}

fn assert_close(what: &str, simulated: f64, closed: f64) {
    let err = (simulated - closed).abs() / closed;
    assert!(
        err < TOLERANCE,
        "{what}: ngspice {simulated:.6e} s, closed form {closed:.6e} s, off by {:.3} %",
        err * 100.0
    );
    eprintln!(
        "{what}: ngspice {simulated:.6e} s, closed form {closed:.6e} s, off {:.4} %",
        err * 100.0
    );
}

/// Simulate every case and compare with the closed form of its form.
fn check(cases: &[Case]) {
    if !have_ngspice() {
        return;
    }
    for case in cases {
        let d = case.design();
        let cond: Conditions = d.conditions();
        let text = netlist::render(&d).expect("netlist");
        let out = simulate(&text);
        let label = label(&d);
        match d.form {
            Form::Monostable => {
                let width = timing::monostable(d.r1, d.c, &cond).expect("closed form");
                assert_close(&label, measured(&out, MEAS_WIDTH, &text), width.si());
            }
            form => {
                let r2 = d.r2.expect("second resistor");
                let cycle = match form {
                    Form::Astable => timing::astable(d.r1, r2, d.c, &cond),
                    Form::Steered => timing::steered(d.r1, r2, d.c, &cond),
                    _ => unreachable!("one-resistor forms handled above"),
                }
                .expect("closed form");
                compare_cycle(&label, &out, &text, cycle);
            }
        }
    }
}

fn compare_cycle(label: &str, out: &str, text: &str, cycle: timing::Cycle) {
    assert_close(
        &format!("{label} high"),
        measured(out, MEAS_HIGH, text),
        cycle.high.si(),
    );
    assert_close(
        &format!("{label} low"),
        measured(out, MEAS_LOW, text),
        cycle.low.si(),
    );
    assert_close(
        &format!("{label} period"),
        measured(out, MEAS_PERIOD, text),
        cycle.period_s(),
    );
}

#[test]
fn monostable_width_matches_ngspice() {
    // Source: Debian package ngspice (39.x), transient simulation.
    #[rustfmt::skip]
    let cases = [
        //   form             R1     R2    C       Vcc   ctrl       Vf   drop
        Case(Form::Monostable, 47e3,  None, 100e-9, 9.0,  None,      0.0, 0.0),
        Case(Form::Monostable, 10e3,  None, 10e-9,  5.0,  None,      0.0, 0.0),
        Case(Form::Monostable, 100e3, None, 1e-6,   12.0, Some(6.0), 0.0, 0.0),
        Case(Form::Monostable, 2.2e3, None, 4.7e-9, 15.0, Some(12.0), 0.0, 0.0),
    ];
    check(&cases);
}

#[test]
fn classic_astable_matches_ngspice() {
    // Source: Debian package ngspice (39.x), transient simulation.
    #[rustfmt::skip]
    let cases = [
        Case(Form::Astable, 10e3, Some(47e3),  100e-9, 9.0,  None,      0.0, 0.0),
        Case(Form::Astable, 1e3,  Some(10e3),  10e-9,  5.0,  Some(4.0), 0.0, 0.0),
        Case(Form::Astable, 47e3, Some(4.7e3), 1e-6,   15.0, Some(8.0), 0.0, 0.0),
        // Fast (about 480 kHz) and slow, high-resistance (about 3.7 s) extremes.
        Case(Form::Astable, 1e3,  Some(1e3),   1e-9,   9.0,  None,      0.0, 0.0),
        Case(Form::Astable, 1e6,  Some(2.2e6), 1e-6,   12.0, None,      0.0, 0.0),
    ];
    check(&cases);
}

#[test]
fn diode_steered_astable_matches_ngspice() {
    // Source: Debian package ngspice (39.x), transient simulation.
    #[rustfmt::skip]
    let cases = [
        Case(Form::Steered, 10e3, Some(47e3),  100e-9, 9.0,  None,      0.7, 0.0),
        Case(Form::Steered, 22e3, Some(22e3),  10e-9,  12.0, None,      0.6, 0.0),
        Case(Form::Steered, 47e3, Some(4.7e3), 100e-9, 5.0,  Some(3.5), 0.3, 0.0),
        Case(Form::Steered, 33e3, Some(15e3),  47e-9,  9.0,  None,      0.0, 0.0),
        Case(Form::Steered, 1e6,  Some(2.2e6), 1e-6,   9.0,  None,      0.7, 0.0),
    ];
    check(&cases);
}

#[test]
fn square_wave_matches_ngspice() {
    // Source: Debian package ngspice (39.x), transient simulation.
    if !have_ngspice() {
        return;
    }
    #[rustfmt::skip]
    let cases = [
        Case(Form::Square, 47e3, None, 100e-9, 9.0,  None,      0.0, 0.0),
        Case(Form::Square, 10e3, None, 10e-9,  5.0,  Some(3.0), 0.0, 1.2),
        Case(Form::Square, 22e3, None, 220e-9, 12.0, None,      0.0, 1.7),
    ];
    for case in cases {
        let d = case.design();
        let text = netlist::render(&d).expect("netlist");
        let out = simulate(&text);
        let cycle = timing::square(d.r1, d.c, &d.conditions()).expect("closed form");
        compare_cycle(&label(&d), &out, &text, cycle);
    }
}

#[test]
fn diode_drop_and_control_voltage_are_seen_by_ngspice() {
    // Source: Debian package ngspice (39.x), transient simulation. The refinements must move the
    // simulated period away from the ideal one, or the checks above could not tell them apart.
    if !have_ngspice() {
        return;
    }
    #[rustfmt::skip]
    let (ideal, dropped, driven) = (
        Case(Form::Steered, 10e3, Some(47e3), 100e-9, 9.0, None,      0.0, 0.0).design(),
        Case(Form::Steered, 10e3, Some(47e3), 100e-9, 9.0, None,      0.7, 0.0).design(),
        Case(Form::Steered, 10e3, Some(47e3), 100e-9, 9.0, Some(5.0), 0.0, 0.0).design(),
    );
    let period = |d: &Design| {
        let text = netlist::render(d).expect("netlist");
        measured(&simulate(&text), MEAS_PERIOD, &text)
    };
    let (p0, p1, p2) = (period(&ideal), period(&dropped), period(&driven));
    // Ideal: ln 2·(Ra+Rb)·C = 3.95 ms; a 0.7 V drop lengthens both phases by about 20 %;
    // a control pin at 5 V instead of 6 V shortens the charge phase, the period by about 5 %.
    assert!(p1 > p0 * 1.1, "diode drop: {p1} vs ideal {p0}");
    assert!(p2 < p0 * 0.97, "control voltage: {p2} vs ideal {p0}");
}

/// The CLI round trip: `onhand --json check … --netlist F`, then `ngspice -b F`; every `.meas`
/// result the JSON lists must agree with the tool's own nominal prediction (from the same JSON)
/// within 1 %. Source: Debian package ngspice (39.x), transient simulation.
fn round_trip(args: &[&str]) {
    let bench = util::Bench::new();
    let file = bench.path("design.cir");
    let file_text = file.to_str().expect("utf-8 path");
    let mut all = vec!["--json", "check"];
    all.extend_from_slice(args);
    all.extend_from_slice(&["--netlist", file_text, "--samples", "0"]);
    let run = bench.run(&all);
    assert!(
        run.status == 0 || run.status == 1,
        "check failed ({}):\n{}",
        run.status,
        run.stderr
    );
    let json = run.json();
    assert_eq!(json["netlist"]["path"], file_text, "{json}");
    assert!(
        json["files"]
            .as_array()
            .expect("files")
            .iter()
            .any(|f| f["kind"] == "netlist" && f["path"] == file_text),
        "{json}"
    );
    let text = std::fs::read_to_string(&file).expect("netlist written where the JSON says");
    let out = simulate(&text);
    let measures = json["netlist"]["measures"].as_array().expect("measures");
    assert!(!measures.is_empty(), "{json}");
    for m in measures {
        let name = m["name"].as_str().expect("name");
        let analysis = m["analysis"].as_u64().expect("analysis index") as usize;
        let quantity = m["quantity"].as_str().expect("quantity");
        let predicted = json["analyses"][analysis]["nominal"]
            .as_array()
            .expect("nominal list")
            .iter()
            .find(|i| i["quantity"] == quantity)
            .and_then(|i| i["nominal"].as_f64())
            .unwrap_or_else(|| panic!("no {quantity} in analysis {analysis}: {json}"));
        assert_close(
            &format!("check {} — {name}", args.join(" ")),
            measured(&out, name, &text),
            predicted,
        );
    }
}

#[test]
fn check_netlists_round_trip_through_ngspice() {
    // Source: Debian package ngspice (39.x), transient simulation.
    if !have_ngspice() {
        return;
    }
    for args in [
        &["monostable", "R=47k", "C=100n"][..],
        &["astable", "R1=4.7k", "R2=68k", "C=10n"],
        &["steered", "RA=10k", "RB=47k", "C=100n", "--diode", "0.7"],
        &[
            "steered",
            "RA=10k",
            "RB=4.7k",
            "C=100n",
            "--diode",
            "0.6",
            "--one-diode",
        ],
        &["square", "R=47k", "C=100n", "--family", "cmos"],
        &[
            "square",
            "R=22k",
            "C=220n",
            "--family",
            "cmos",
            "--output-drop",
            "0.5",
        ],
        // Networks in positions: series resistors, parallel capacitors, a mixed group.
        &["astable", "R1=33k+2.2k", "R2=68k", "C=10n||2.2n"],
        &["monostable", "R=(10k||10k)+1k", "C=100n+100n"],
        // Driven control voltage.
        &[
            "monostable",
            "R=100k",
            "C=1u",
            "--vcc",
            "12",
            "--control",
            "6",
        ],
        &[
            "astable",
            "R1=1k",
            "R2=10k",
            "C=10n",
            "--vcc",
            "5",
            "--control",
            "4",
        ],
        // Two stages: a pace astable firing a width monostable, and an independent dual.
        &[
            "pair",
            "R1=1k",
            "R2=10k",
            "C1=100n",
            "R3=10k+2.2k",
            "C2=10n",
        ],
        &[
            "dual",
            "--forms",
            "steered,monostable",
            "A.RA=10k",
            "A.RB=22k",
            "A.C=47n",
            "B.R=10k",
            "B.C=10n||2.2n",
            "--diode",
            "0.7",
        ],
    ] {
        round_trip(args);
    }
}

#[test]
fn check_netlist_holds_the_real_pieces() {
    // The exported file must carry every piece of a network, not only its equivalent value.
    let bench = util::Bench::new();
    let file = bench.path("pieces.cir");
    let path = file.to_str().expect("utf-8 path");
    bench
        .run(&[
            "check",
            "astable",
            "R1=33k+2.2k",
            "R2=68k",
            "C=10n||2.2n",
            "--netlist",
            path,
            "--samples",
            "0",
        ])
        .ok()
        .stdout_has(path);
    let text = std::fs::read_to_string(&file).expect("netlist");
    for line in [
        "R1a vcc r1_1 33k",
        "R1b r1_1 dis 2.2k",
        "R2 dis cap 68k",
        "Ca cap 0 10n",
        "Cb cap 0 2.2n",
    ] {
        assert!(text.lines().any(|l| l == line), "{line:?} missing:\n{text}");
    }
}
