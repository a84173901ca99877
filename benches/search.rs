//! `cargo bench --bench search`: the exact design search on a full assortment, three ways.
//!
//! 1. Pure solve: `solve` in this process, timed per target, with this process's peak memory.
//! 2. Whole process: a stock database built with `onhand import` from a generated CSV of the
//!    same assortment, then `onhand --db FILE --json find …` spawned once per target (three runs
//!    each) and timed from spawn to exit; peak memory is the child's maximum resident set as
//!    the kernel reports it to `wait4` (GNU `/usr/bin/time -f %M`, a separate run per target so
//!    the wrapper does not inflate the times).
//! 3. Against the brute-force reference on the sample bench drawer (`sample-stock/`), k = 1, 2
//!    and 3 where brute force can finish: same answers, how many times faster.
//!
//! Prints figures; asserts only that answers agree (search against brute force, the spawned
//! binary against the in-process search). Targets: median whole process < 100 ms, peak < 100 MB (also on a 50 000-row stock of the same
//! values, part 2b, whose answers must equal those on the de-duplicated stock); k = 4 on the
//! makerspace cabinet, median < 500 ms (part 4).

use onhand::solve::brute::brute_best;
use onhand::solve::search::solve_counted;
use onhand::solve::{Duty, Family, Goal, Rank, Settings, StageGoal, solve};
use onhand::store::{Kind, Part, PartFilter, Store, Technology, Value, read_csv};
use onhand::timing::Conditions;
use onhand::units::{Farads, Ohms, Tolerance, Volts};
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
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
        model: onhand::timing::Model::real(),
        conditions: Conditions::ideal(Volts::from_si(9.0).expect("volts")),
        cap_techs: None,
        min_cap_rating: None,
        time_limit: Some(std::time::Duration::from_secs(10)),
        rank: Rank::FewestPieces,
        excursion: onhand::solve::Excursion::default(),
    }
}

fn targets() -> Vec<Goal> {
    let mut out = Vec::new();
    // 30 one-shot widths, 10 µs … 10 s, and 30 astable frequencies, 1 Hz … 100 kHz, spaced
    // evenly in log with an odd step so they do not land on preferred values.
    for i in 0..30 {
        let w = 10e-6 * 10f64.powf(6.0 * f64::from(i) / 29.0) * 1.037;
        out.push(Goal::Stages(vec![StageGoal::pulse_si(w).expect("goal")]));
    }
    for i in 0..30 {
        let f = 10f64.powf(5.0 * f64::from(i) / 29.0) * 1.013;
        let duty = if i % 3 == 0 {
            Duty::range_si(0.6, 0.7).expect("duty")
        } else {
            Duty::Any
        };
        out.push(Goal::Stages(vec![
            StageGoal::astable_si(1.0 / f, duty).expect("goal"),
        ]));
    }
    out
}

fn peak_kib() -> Option<u64> {
    let s = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = s.lines().find(|l| l.starts_with("VmHWM:"))?;
    line.split_whitespace().nth(1)?.parse().ok()
}

fn median(v: &[f64]) -> f64 {
    let mut v = v.to_vec();
    v.sort_by(f64::total_cmp);
    if v.is_empty() {
        return f64::NAN;
    }
    let n = v.len();
    if n % 2 == 1 {
        v[n / 2]
    } else {
        (v[n / 2 - 1] + v[n / 2]) / 2.0
    }
}

/// Whether part `n` of the bench runs: all of them, or only those named in
/// `SEARCH_BENCH_PARTS` (e.g. `SEARCH_BENCH_PARTS=4`, `2b` or `1,4`).
fn part_on(n: &str) -> bool {
    std::env::var("SEARCH_BENCH_PARTS")
        .map(|v| v.split(',').any(|p| p.trim() == n))
        .unwrap_or(true)
}

fn main() {
    let parts = assortment();
    let nr = parts.iter().filter(|p| p.kind == Kind::Resistor).count();
    println!(
        "assortment: {nr} resistor values × 10 (E24 1 Ω … 10 MΩ), {} capacitor values × 5 (E12 10 pF … 1000 µF)",
        parts.len() - nr
    );
    println!();
    if part_on("1") {
        println!("== 1. pure solve (in process) ==");
        run_set(&parts, &settings(3), "±1 %");
        let tight = Settings {
            tol: 0.001,
            ..settings(3)
        };
        run_set(&parts, &tight, "±0.1 % (deeper search)");
        match peak_kib() {
            Some(k) => println!(
                "peak memory of this process (VmHWM): {:.1} MB",
                k as f64 / 1024.0
            ),
            None => println!("peak memory: /proc/self/status not readable"),
        }
        println!();
    }
    if part_on("2") {
        println!("== 2. whole process (onhand --db FILE --json find …) ==");
        whole_process(&parts, &parts);
        println!();
    }
    if part_on("2b") {
        let (rows, dedup) = spread(&parts, 50_000);
        println!(
            "== 2b. whole process on a {}-row stock: the same {} values, each in about {} bins ==",
            rows.len(),
            parts.len(),
            rows.len() / parts.len().max(1)
        );
        whole_process(&rows, &dedup);
        println!();
    }
    if part_on("3") {
        println!("== 3. against brute force, sample-stock/bench-drawer.csv ==");
        brute_comparison();
        println!();
    }
    if part_on("4") {
        println!("== 4. k = 4 on sample-stock/makerspace-cabinet.csv (pure solve, in process) ==");
        cabinet_k4();
    }
}

/// The assortment spread over about `rows` stock rows: every value in many bins of one piece
/// each (a store room where each drawer holds a few), and the same stock with one row per
/// value holding the summed count (the de-duplicated stock the answers must equal).
fn spread(parts: &[Part], rows: usize) -> (Vec<Part>, Vec<Part>) {
    let per = (rows / parts.len().max(1)).max(1);
    let mut out = Vec::with_capacity(per * parts.len());
    let mut dedup = Vec::with_capacity(parts.len());
    for p in parts {
        for k in 0..per {
            let mut r = p.clone();
            r.id = (out.len() + 1) as i64;
            r.bin = format!("{}-{k}", p.bin);
            r.quantity = 1;
            out.push(r);
        }
        let mut d = p.clone();
        d.quantity = per as i64;
        dedup.push(d);
    }
    (out, dedup)
}

/// The makerspace cabinet at k = 4, the same targets as part 1.
fn cabinet_k4() {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("sample-stock/makerspace-cabinet.csv");
    let text = std::fs::read_to_string(&path).expect("sample-stock/makerspace-cabinet.csv");
    let records = read_csv(&text).expect("cabinet csv");
    let mut store = Store::open(Path::new(":memory:")).expect("in-memory store");
    store
        .import(&records, "makerspace-cabinet.csv", "bench", false)
        .expect("import cabinet");
    let parts = store.parts(&PartFilter::default()).expect("parts");
    // Each target gets its own time limit, so the part finishes in bounded time even where the
    // search does not (SEARCH_BENCH_K4_LIMIT seconds, default 10).
    let limit = std::env::var("SEARCH_BENCH_K4_LIMIT")
        .ok()
        .and_then(|v| v.parse::<f64>().ok())
        .filter(|v| *v > 0.0)
        .unwrap_or(10.0);
    let only = k4_only();
    for (what, model) in [
        (
            "real-part model (the default)",
            onhand::timing::Model::real(),
        ),
        ("ideal model (--ideal)", onhand::timing::Model::ideal()),
    ] {
        let s = Settings {
            alternatives: 3,
            model,
            time_limit: Some(std::time::Duration::from_secs_f64(limit)),
            ..drawer_settings(4, true)
        };
        limited_set(&parts, &s, &format!("±1 %, makerspace cabinet, {what}"));
        if only.is_some() {
            // One target alone (SEARCH_BENCH_K4_ONLY) is a profiling run: the real model only.
            break;
        }
    }
    println!("  target: median < 500 ms per solve (real-part model)");
}

/// The targets part 4 runs alone: `SEARCH_BENCH_K4_ONLY` holds pieces of their labels,
/// separated by `;` (e.g. `astable 1.0130 Hz;astable 1.5`), for profiling one target.
fn k4_only() -> Option<Vec<String>> {
    let v = std::env::var("SEARCH_BENCH_K4_ONLY").ok()?;
    Some(v.split(';').map(|w| w.trim().to_string()).collect())
}

/// The `q` quantile (0..1) of `v`, nearest rank.
fn quantile(v: &[f64], q: f64) -> f64 {
    let mut v = v.to_vec();
    v.sort_by(f64::total_cmp);
    if v.is_empty() {
        return f64::NAN;
    }
    let i = ((q * v.len() as f64).ceil() as usize).clamp(1, v.len()) - 1;
    v[i]
}

/// The targets under a per-target time limit: how many completed and how many the clock
/// stopped, the median and P90 over every target (a stopped one counts its time, about the
/// limit, so the figures are lower bounds when any stopped) and over the completed ones.
fn limited_set(parts: &[Part], s: &Settings, what: &str) {
    let only = k4_only();
    let answers = std::env::var("SEARCH_BENCH_K4_ANSWERS").is_ok_and(|v| v == "1");
    let mut all = Vec::new();
    let mut done = Vec::new();
    let mut stopped: Vec<String> = Vec::new();
    let mut found = 0;
    let mut pieces_hist = std::collections::BTreeMap::new();
    let started = Instant::now();
    for g in targets() {
        if only
            .as_ref()
            .is_some_and(|o| !o.iter().any(|w| label(&g).contains(w.as_str())))
        {
            continue;
        }
        let t0 = Instant::now();
        let (out, counts) = solve_counted(parts, &g, s).expect("solve");
        let t = t0.elapsed().as_secs_f64();
        all.push(t);
        if only.is_some() || answers {
            println!(
                "  {:<28} {:>9.1} ms complete {} seen {} | {}",
                label(&g),
                t * 1e3,
                out.complete,
                out.networks_seen,
                counts
            );
        }
        if answers {
            // Every answer in full (pieces, error, rows and networks), to compare two builds.
            for d in &out.designs {
                let nets: Vec<String> = d
                    .positions
                    .iter()
                    .map(|p| format!("{}={:?}@{:?}", p.name, p.net, p.rows))
                    .collect();
                println!(
                    "    answer pieces {} error {:e} tol_sum {:e} scarcity {:e} {}",
                    d.pieces,
                    d.error,
                    d.tolerance_sum,
                    d.scarcity,
                    nets.join(" ")
                );
            }
        }
        if out.complete {
            done.push(t);
        } else {
            stopped.push(label(&g));
        }
        if let Some(d) = out.designs.first() {
            found += 1;
            *pieces_hist.entry(d.pieces).or_insert(0) += 1;
        }
    }
    println!(
        "k = {}, {what}, {} targets, limit {:?} each: completed {}, stopped by the clock {}; found {found}; best piece counts {:?}; part total {:.1} s",
        s.max_pieces,
        all.len(),
        s.time_limit.unwrap_or_default(),
        done.len(),
        stopped.len(),
        pieces_hist,
        started.elapsed().as_secs_f64()
    );
    println!(
        "  every target: median {:.1} ms, P90 {:.1} ms, worst {:.1} ms{}",
        median(&all) * 1e3,
        quantile(&all, 0.9) * 1e3,
        all.iter().copied().fold(0.0, f64::max) * 1e3,
        if stopped.is_empty() {
            ""
        } else {
            " (lower bounds: stopped targets count their limit)"
        }
    );
    if !done.is_empty() && !stopped.is_empty() {
        println!(
            "  completed targets only: median {:.1} ms, P90 {:.1} ms",
            median(&done) * 1e3,
            quantile(&done, 0.9) * 1e3
        );
    }
    if !stopped.is_empty() {
        println!("  STOPPED (search incomplete): {}", stopped.join("; "));
    }
    println!(
        "  median < 500 ms: {}",
        if stopped.is_empty() && median(&all) < 0.5 {
            "met"
        } else {
            "NOT met"
        }
    );
}

fn run_set(parts: &[Part], s: &Settings, what: &str) {
    let mut times = Vec::new();
    let mut stopped: Vec<String> = Vec::new();
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
        if !out.complete {
            stopped.push(label(&g));
        }
    }
    let worst = times.iter().copied().fold(0.0, f64::max);
    println!(
        "k = {}, {what}, {} targets (one-shot and astable): found {found}; best piece counts {:?}",
        s.max_pieces,
        times.len(),
        pieces_hist
    );
    println!(
        "per solve (building networks included): median {:.2} ms, worst {:.2} ms, total {:.2} s",
        median(&times) * 1e3,
        worst * 1e3,
        times.iter().sum::<f64>()
    );
    if !stopped.is_empty() {
        println!(
            "STOPPED BY THE {:?} TIME LIMIT (search incomplete): {}",
            s.time_limit.unwrap_or_default(),
            stopped.join("; ")
        );
    }
}

/// The assortment as a CSV in the `onhand import` format.
fn assortment_csv(parts: &[Part]) -> String {
    let mut out =
        String::from("kind,value,tolerance,technology,volts,watts,package,bin,quantity,low,note\n");
    for p in parts {
        let (kind, value, tech) = match p.value {
            // `{:e}` prints the shortest text that reads back as the same number.
            Value::Capacitance(c) => ("capacitor", format!("{:e}F", c.si()), "film"),
            Value::Resistance(r) => ("resistor", format!("{:e}R", r.si()), "metal_film"),
            Value::None => continue,
        };
        let tol = if p.kind == Kind::Capacitor {
            "5%"
        } else {
            "1%"
        };
        out.push_str(&format!(
            "{kind},{value},{tol},{tech},,,,{},{},,\n",
            p.bin, p.quantity
        ));
    }
    out
}

/// The command-line arguments of `find` for a target.
fn find_args(g: &Goal) -> Vec<String> {
    let Goal::Stages(stages) = g else {
        unreachable!("the bench targets are stages")
    };
    match stages.as_slice() {
        [StageGoal::Pulse { width }] => vec!["pulse".into(), format!("{:e}s", width.si())],
        [StageGoal::Astable { period, duty }] => {
            let mut a = vec![
                "astable".into(),
                "--period".into(),
                format!("{:e}s", period.si()),
            ];
            if let Some((lo, hi)) = duty.window_si() {
                a.push("--duty".into());
                a.push(format!("{:.0}..{:.0}%", lo * 100.0, hi * 100.0));
            }
            a
        }
        other => unreachable!("no bench target {other:?}"),
    }
}

fn label(g: &Goal) -> String {
    let Goal::Stages(stages) = g else {
        return format!("{g:?}");
    };
    match stages.as_slice() {
        [StageGoal::Pulse { width }] => format!("pulse {:.4} ms", width.si() * 1e3),
        [StageGoal::Astable { period, duty }] => format!(
            "astable {:.4} Hz{}",
            1.0 / period.si(),
            if *duty == Duty::Any {
                ""
            } else {
                " duty 60–70 %"
            }
        ),
        _ => format!("{g:?}"),
    }
}

/// The `onhand` binary cargo built beside this bench (cargo builds a package's binaries for
/// its benches and names the path at compile time).
fn binary() -> PathBuf {
    PathBuf::from(env!("CARGO_BIN_EXE_onhand"))
}

/// The child's maximum resident set in KiB, from GNU time (which reads it from `wait4`).
fn child_peak_kib(args: &[String]) -> Option<u64> {
    let time = Path::new("/usr/bin/time");
    if !time.exists() {
        return None;
    }
    let out = tempfile::NamedTempFile::new().ok()?;
    let status = Command::new(time)
        .arg("-f")
        .arg("%M")
        .arg("-o")
        .arg(out.path())
        .arg(binary())
        .args(args)
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .status()
        .ok()?;
    if status.code() == Some(2) {
        return None;
    }
    std::fs::read_to_string(out.path())
        .ok()?
        .lines()
        .last()?
        .trim()
        .parse()
        .ok()
}

/// `parts` goes into the database; answers are compared with the in-process search on `dedup`
/// (the same stock, one row per class).
fn whole_process(parts: &[Part], dedup: &[Part]) {
    let dir = tempfile::tempdir().expect("temp dir");
    let db = dir.path().join("assortment.db");
    let csv = dir.path().join("assortment.csv");
    std::fs::write(&csv, assortment_csv(parts)).expect("write csv");
    let db_arg = db.display().to_string();
    let t0 = Instant::now();
    let st = Command::new(binary())
        .args(["--db", &db_arg, "--user", "bench", "import"])
        .arg(&csv)
        .stdout(Stdio::null())
        .status()
        .expect("spawn onhand import");
    let import_s = t0.elapsed().as_secs_f64();
    assert!(st.success(), "onhand import failed: {st}");
    println!(
        "binary: {}\ndatabase: {} rows imported by `onhand import` in {:.0} ms (one process)",
        binary().display(),
        parts.len(),
        import_s * 1e3
    );

    let s = settings(3);
    let runs = 3;
    let mut all = Vec::new();
    let mut per_target: Vec<(String, f64, f64, f64)> = Vec::new(); // label, median, search s, MB
    let mut peaks = Vec::new();
    let mut found = 0;
    let mut stopped: Vec<String> = Vec::new();
    // One warm-up so the first target does not carry the page cache filling.
    let _ = Command::new(binary())
        .args(["--db", &db_arg, "--json", "find", "pulse", "1ms"])
        .output();
    for g in targets() {
        let mut args = vec![
            "--db".to_string(),
            db_arg.clone(),
            "--json".into(),
            "find".into(),
        ];
        args.extend(find_args(&g));
        let mut times = Vec::new();
        let mut last = None;
        for _ in 0..runs {
            let t0 = Instant::now();
            let out = Command::new(binary())
                .args(&args)
                .stderr(Stdio::null())
                .output()
                .expect("spawn onhand find");
            times.push(t0.elapsed().as_secs_f64());
            assert!(
                matches!(out.status.code(), Some(0 | 1)),
                "onhand find {args:?} failed: {}",
                out.status
            );
            last = Some(out.stdout);
        }
        let json: serde_json::Value =
            serde_json::from_slice(&last.expect("ran")).expect("find --json output");
        let cli_pieces = json["designs"][0]["pieces"].as_u64();
        // The search alone, in process (the JSON carries no wall-clock field: results are
        // reproducible), to show how much of the process time is the search.
        let t0 = Instant::now();
        let pure = solve(dedup, &g, &s).expect("solve");
        let search_s = t0.elapsed().as_secs_f64();
        if json["complete"].as_bool() == Some(true) {
            // The spawned binary must give the same best piece count as the search in process.
            let pure_pieces = pure.designs.first().map(|d| d.pieces as u64);
            assert_eq!(
                cli_pieces, pure_pieces,
                "binary and in-process search disagree on {g:?}"
            );
        } else {
            stopped.push(label(&g));
        }
        if cli_pieces.is_some() {
            found += 1;
        }
        let peak = child_peak_kib(&args).map(|k| k as f64 / 1024.0);
        if let Some(p) = peak {
            peaks.push(p);
        }
        all.extend_from_slice(&times);
        per_target.push((
            label(&g),
            median(&times),
            search_s,
            peak.unwrap_or(f64::NAN),
        ));
    }
    let med_targets: Vec<f64> = per_target.iter().map(|t| t.1).collect();
    let searches: Vec<f64> = per_target.iter().map(|t| t.2).collect();
    let worst = per_target
        .iter()
        .max_by(|a, b| a.1.total_cmp(&b.1))
        .expect("targets");
    let worst_run = all.iter().copied().fold(0.0, f64::max);
    let worst_done = per_target
        .iter()
        .filter(|t| !stopped.contains(&t.0))
        .max_by(|a, b| a.1.total_cmp(&b.1));
    println!(
        "{} targets (30 one-shot 10 µs … 10 s, 30 astable 1 Hz … 100 kHz, every third with duty 60–70 %), k = 3, ±1 %, {runs} runs each; found {found}; every completed answer equal to the in-process search",
        per_target.len()
    );
    println!("  {:<44} {:>10}", "figure", "value");
    println!(
        "  {:<44} {:>7.1} ms",
        "median whole process (all runs)",
        median(&all) * 1e3
    );
    println!(
        "  {:<44} {:>7.1} ms",
        "median of per-target medians",
        median(&med_targets) * 1e3
    );
    println!(
        "  {:<44} {:>7.1} ms",
        format!("worst target ({})", worst.0),
        worst.1 * 1e3
    );
    println!("  {:<44} {:>7.1} ms", "worst single run", worst_run * 1e3);
    if let Some(w) = worst_done.filter(|_| !stopped.is_empty()) {
        println!(
            "  {:<44} {:>7.1} ms",
            format!("worst completed target ({})", w.0),
            w.1 * 1e3
        );
    }
    println!(
        "  {:<44} {:>7.2} ms",
        "median search time (the same search in process)",
        median(&searches) * 1e3
    );
    if peaks.is_empty() {
        println!("  peak memory: not measured (/usr/bin/time missing)");
    } else {
        println!(
            "  {:<44} {:>7.1} MB",
            "median peak resident set (wait4 via time)",
            median(&peaks)
        );
        println!(
            "  {:<44} {:>7.1} MB",
            "largest peak resident set",
            peaks.iter().copied().fold(0.0, f64::max)
        );
    }
    println!(
        "  targets: median < 100 ms: {}; peak < 100 MB: {}",
        if median(&all) < 0.1 { "met" } else { "NOT met" },
        if !peaks.is_empty() && peaks.iter().all(|&p| p < 100.0) {
            "met"
        } else {
            "NOT met or not measured"
        }
    );
    if !stopped.is_empty() {
        println!(
            "  STOPPED BY THE 10 s TIME LIMIT of find (search incomplete): {}",
            stopped.join("; ")
        );
    }
    // The five slowest targets, to show where the time goes.
    let mut slow = per_target.clone();
    slow.sort_by(|a, b| b.1.total_cmp(&a.1));
    println!("  slowest targets: process ms / search ms / peak MB");
    for (l, t, s, m) in slow.iter().take(5) {
        println!("    {l:<36} {:>7.1} {:>7.2} {:>6.1}", t * 1e3, s * 1e3, m);
    }
}

/// The sample bench drawer, read by the same import rules as the tool (an in-memory store).
fn bench_drawer() -> Vec<Part> {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("sample-stock/bench-drawer.csv");
    let text = std::fs::read_to_string(&path).expect("sample-stock/bench-drawer.csv");
    let records = read_csv(&text).expect("drawer csv");
    let mut store = Store::open(Path::new(":memory:")).expect("in-memory store");
    store
        .import(&records, "bench-drawer.csv", "bench", false)
        .expect("import drawer");
    store.parts(&PartFilter::default()).expect("parts")
}

/// Settings as `onhand find` uses them by default for timing (no electrolytics or tantalum,
/// capacitor rating at least 1.5 × 9 V where known), here at ±1 %.
fn drawer_settings(k: usize, timing: bool) -> Settings {
    Settings {
        alternatives: 1,
        cap_techs: timing.then(onhand::solve::plan_file::timing_technologies),
        min_cap_rating: Some(13.5),
        time_limit: Some(std::time::Duration::from_secs(60)),
        ..settings(k)
    }
}

struct Row {
    what: String,
    targets: usize,
    found: usize,
    search_s: f64,
    brute_s: f64,
}

fn compare(parts: &[Part], goals: &[Goal], s: &Settings, what: String) -> Row {
    let (mut ts, mut tb, mut found) = (Vec::new(), Vec::new(), 0);
    for g in goals {
        let t0 = Instant::now();
        let a = solve(parts, g, s).expect("solve");
        ts.push(t0.elapsed().as_secs_f64());
        let t0 = Instant::now();
        let b = brute_best(parts, g, s);
        tb.push(t0.elapsed().as_secs_f64());
        let same = match (a.designs.first(), b) {
            (None, None) => true,
            (Some(d), Some(b)) => d.pieces == b.pieces && (d.error - b.error).abs() < 1e-9,
            _ => false,
        };
        assert!(same, "search and brute force disagree on {g:?} ({what})");
        found += usize::from(b.is_some());
    }
    Row {
        what,
        targets: goals.len(),
        found,
        search_s: median(&ts),
        brute_s: median(&tb),
    }
}

fn brute_comparison() {
    let parts = bench_drawer();
    let nr = parts.iter().filter(|p| p.kind == Kind::Resistor).count();
    let nc = parts.iter().filter(|p| p.kind == Kind::Capacitor).count();
    println!(
        "{nr} resistor rows, {nc} capacitor rows (others ignored); every answer compared: pieces and error equal"
    );
    // Substitutes for values the drawer lacks (it has no 10 kΩ and no 100 kΩ), and odd values.
    let values: Vec<Goal> = [
        (Kind::Resistor, 10e3),
        (Kind::Resistor, 100e3),
        (Kind::Resistor, 6.8e3 * 1.013),
        (Kind::Resistor, 36.5e3),
        (Kind::Resistor, 249.0),
        (Kind::Resistor, 1.37e6),
        (Kind::Capacitor, 68e-9),
        (Kind::Capacitor, 3.3e-6),
        (Kind::Capacitor, 150e-12),
        (Kind::Capacitor, 27e-9),
    ]
    .iter()
    .map(|&(kind, target)| Goal::value_si(kind, target).expect("goal"))
    .collect();
    // One-shot widths 20 µs … 2 s, odd steps.
    let pulses: Vec<Goal> = (0..10)
        .map(|i| {
            let w = 20e-6 * 10f64.powf(5.0 * f64::from(i) / 9.0) * 1.029;
            Goal::Stages(vec![StageGoal::pulse_si(w).expect("goal")])
        })
        .collect();
    let astables: Vec<Goal> = (0..10)
        .map(|i| {
            let f = 10f64.powf(4.0 * f64::from(i) / 9.0) * 1.7;
            Goal::Stages(vec![
                StageGoal::astable_si(1.0 / f, Duty::Any).expect("goal"),
            ])
        })
        .collect();
    let mut rows = Vec::new();
    for k in 1..=3 {
        rows.push(compare(
            &parts,
            &values,
            &drawer_settings(k, false),
            format!("value substitute, k = {k}"),
        ));
    }
    for k in 1..=2 {
        rows.push(compare(
            &parts,
            &pulses,
            &drawer_settings(k, true),
            format!("one-shot, k = {k}"),
        ));
    }
    rows.push(compare(
        &parts,
        &astables,
        &drawer_settings(1, true),
        "astable, k = 1".into(),
    ));
    println!(
        "  {:<26} {:>7} {:>6} {:>13} {:>13} {:>9}",
        "±1 %", "targets", "found", "search median", "brute median", "faster"
    );
    for r in &rows {
        println!(
            "  {:<26} {:>7} {:>6} {:>10.3} ms {:>10.3} ms {:>8.1}×",
            r.what,
            r.targets,
            r.found,
            r.search_s * 1e3,
            r.brute_s * 1e3,
            r.brute_s / r.search_s
        );
    }
    println!(
        "  not run: one-shot k = 3 (brute force ≈ 1.3 M resistor networks × 100 k capacitor networks per target) and astable k ≥ 2 (≈ 7 k² resistor networks × 1.4 k capacitor networks ≈ 7·10¹⁰ per target): brute force cannot finish in a minute"
    );
}
