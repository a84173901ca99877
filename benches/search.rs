//! `cargo bench --bench search`: the exact design search on a full assortment, timed per solve,
//! with peak memory and a comparison against the brute-force reference on a small drawer.
//! Prints figures; asserts only that the two searches agree.

use onhand::solve::brute::brute_best;
use onhand::solve::{Duty, Family, Goal, Rank, Settings, StageGoal, solve};
use onhand::store::{Kind, Part, Technology, Value};
use onhand::timing::Conditions;
use onhand::units::{Farads, Ohms, Tolerance, Volts};
use std::time::Instant;

/// IEC 60063 base values (E24; E12 is every other one), as in the standard's table.
const E24: [f64; 24] = [
    1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6,
    6.2, 6.8, 7.5, 8.2, 9.1,
];

fn part(id: i64, kind: Kind, v: f64, tol: f64, qty: i64) -> Part {
    Part {
        id,
        kind,
        value: match kind {
            Kind::Capacitor => Value::Capacitance(Farads::from_si(v).expect("farads")),
            _ => Value::Resistance(Ohms::from_si(v).expect("ohms")),
        },
        tolerance: Tolerance::symmetric_percent(tol).expect("tol"),
        technology: if kind == Kind::Capacitor {
            Technology::Film
        } else {
            Technology::MetalFilm
        },
        voltage_rating: None,
        power_rating: None,
        package: String::new(),
        bin: format!("B{id}"),
        quantity: qty,
        held: 0,
        low_stock: None,
        note: String::new(),
    }
}

/// Values of a series from `lo` to `hi` inclusive (step 1 = E24, 2 = E12).
fn series(step: usize, lo: f64, hi: f64) -> Vec<f64> {
    let mut out = Vec::new();
    for d in -13..=8 {
        for m in E24.iter().step_by(step) {
            let v = m * 10f64.powi(d);
            if v >= lo * (1.0 - 1e-9) && v <= hi * (1.0 + 1e-9) {
                out.push(v);
            }
        }
    }
    out
}

fn assortment() -> Vec<Part> {
    let mut parts = Vec::new();
    for v in series(1, 1.0, 10e6) {
        parts.push(part(parts.len() as i64, Kind::Resistor, v, 1.0, 10));
    }
    for v in series(2, 10e-12, 1000e-6) {
        parts.push(part(parts.len() as i64, Kind::Capacitor, v, 5.0, 5));
    }
    parts
}

fn settings(k: usize) -> Settings {
    Settings {
        tol: 0.01,
        max_pieces: k,
        alternatives: 3,
        guarantee: false,
        family: Family::bipolar(),
        conditions: Conditions::ideal(Volts::from_si(9.0).expect("volts")),
        cap_techs: None,
        min_cap_rating: None,
        time_limit: Some(std::time::Duration::from_secs(10)),
        rank: Rank::FewestPieces,
    }
}

fn targets() -> Vec<Goal> {
    let mut out = Vec::new();
    // 30 one-shot widths, 10 µs … 10 s, and 30 astable frequencies, 1 Hz … 100 kHz, spaced
    // evenly in log with an odd step so they do not land on preferred values.
    for i in 0..30 {
        let w = 10e-6 * 10f64.powf(6.0 * f64::from(i) / 29.0) * 1.037;
        out.push(Goal::Stages(vec![StageGoal::Pulse { width: w }]));
    }
    for i in 0..30 {
        let f = 10f64.powf(5.0 * f64::from(i) / 29.0) * 1.013;
        let duty = if i % 3 == 0 {
            Duty::Range(0.6, 0.7)
        } else {
            Duty::Any
        };
        out.push(Goal::Stages(vec![StageGoal::Astable {
            period: 1.0 / f,
            duty,
        }]));
    }
    out
}

fn peak_kib() -> Option<u64> {
    let s = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = s.lines().find(|l| l.starts_with("VmHWM:"))?;
    line.split_whitespace().nth(1)?.parse().ok()
}

fn main() {
    let parts = assortment();
    let nr = parts.iter().filter(|p| p.kind == Kind::Resistor).count();
    println!(
        "assortment: {nr} resistor values × 10 (E24 1 Ω … 10 MΩ), {} capacitor values × 5 (E12 10 pF … 1000 µF)",
        parts.len() - nr
    );
    run_set(&parts, &settings(3), "±1 %");
    let tight = Settings {
        tol: 0.001,
        ..settings(3)
    };
    run_set(&parts, &tight, "±0.1 % (deeper search)");
    match peak_kib() {
        Some(k) => println!("peak memory (VmHWM): {:.1} MB", k as f64 / 1024.0),
        None => println!("peak memory: /proc/self/status not readable"),
    }
    brute_comparison();
}

fn run_set(parts: &[Part], s: &Settings, label: &str) {
    let mut times = Vec::new();
    let mut found = 0;
    let mut pieces_hist = std::collections::BTreeMap::new();
    for g in targets() {
        let t0 = Instant::now();
        let out = solve(parts, &g, s).expect("solve");
        times.push(t0.elapsed().as_secs_f64());
        if let Some(d) = out.designs.first() {
            found += 1;
            *pieces_hist.entry(d.pieces).or_insert(0) += 1;
        }
        assert!(out.complete, "a solve hit the time limit");
    }
    times.sort_by(f64::total_cmp);
    let median = times[times.len() / 2];
    let worst = times[times.len() - 1];
    println!(
        "k = 3, {label}, {} targets (one-shot and astable): found {found}; best piece counts {:?}",
        times.len(),
        pieces_hist
    );
    println!(
        "per solve (building networks included): median {:.2} ms, worst {:.2} ms, total {:.2} s",
        median * 1e3,
        worst * 1e3,
        times.iter().sum::<f64>()
    );
}

fn brute_comparison() {
    // Brute force on a small drawer: same answers, how many times faster.
    let small: Vec<Part> = [100.0, 470.0, 1e3, 2.2e3, 4.7e3, 10e3, 22e3, 47e3]
        .iter()
        .enumerate()
        .map(|(i, &v)| part(i as i64, Kind::Resistor, v, 1.0, 2))
        .chain(
            [1e-9, 10e-9, 100e-9]
                .iter()
                .enumerate()
                .map(|(i, &v)| part(100 + i as i64, Kind::Capacitor, v, 5.0, 2)),
        )
        .collect();
    let mut small_goals = Vec::new();
    for i in 0..20 {
        let x = 10f64.powf(f64::from(i) / 19.0 * 3.0);
        small_goals.push(Goal::Stages(vec![StageGoal::Pulse {
            width: 1e-6 * x * 1.1,
        }]));
        small_goals.push(Goal::Stages(vec![StageGoal::Astable {
            period: 1e-5 * x,
            duty: Duty::Any,
        }]));
    }
    let s2 = Settings {
        tol: 0.02,
        alternatives: 1,
        ..settings(2)
    };
    let (mut ts, mut tb, mut agree) = (0.0, 0.0, 0);
    for g in &small_goals {
        let t0 = Instant::now();
        let a = solve(&small, g, &s2).expect("solve");
        ts += t0.elapsed().as_secs_f64();
        let t0 = Instant::now();
        let b = brute_best(&small, g, &s2);
        tb += t0.elapsed().as_secs_f64();
        let same = match (a.designs.first(), b) {
            (None, None) => true,
            (Some(d), Some(b)) => d.pieces == b.pieces && (d.error - b.error).abs() < 1e-9,
            _ => false,
        };
        assert!(same, "search and brute force disagree on {g:?}");
        agree += 1;
    }
    println!(
        "small drawer (8 R, 3 C, k = 2, ±2 %), {} targets: same answers {agree}/{}; search {:.2} ms, brute force {:.1} ms in all: {:.0}× faster",
        small_goals.len(),
        small_goals.len(),
        ts * 1e3,
        tb * 1e3,
        tb / ts
    );
}
