//! `cargo bench --bench scale`: the tool on a large stock, measured from outside as a user runs it.
//!
//! 1. Reading stock: the query `find` used before (a holds subquery per row and SQLite's sort on
//!    the computed kind order) against [`Store::parts`] now, in process, on the 50 000-row stock.
//! 2. `find` (one-shot and astable, ±1 %, k = 3) spawned on a 50 000-row stock of about 260
//!    distinct values (each value in ~190 bins of one piece) and on the de-duplicated stock (264
//!    rows, one per value, holding the summed count): median wall time, mean CPU time (user + system, from the kernel's count of waited-for
//!    children in /proc/self/stat), peak resident set (GNU time, `wait4`), the ratio of the two
//!    stocks, and that the best piece counts agree.
//! 3. `plan` with 100 units and 5 stages on the 50 000-row stock.
//! 4. `import` of 50 000 and 200 000 rows, CSV and JSON, from a file and from standard input:
//!    median wall time and the child's peak resident set, and the ratio of the peaks (bounded
//!    memory: the 200 000-row peak is the 50 000-row peak up to a small constant).
//!    `SCALE_BENCH_ONLY=import` runs this part alone.
//!
//! Wall times on a shared machine carry the other processes' load; the CPU figure does not.
//! Prints figures; asserts only that runs succeed and answers agree. Targets: find median
//! < 100 ms and peak < 100 MB on 50 000 rows; plan < 2 s; the 200 000-row import bounded in memory.

use onhand::store::{PartFilter, Store};
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};
use std::time::Instant;

/// IEC 60063 E24 base values (E12 is every other one), as in the standard's table.
const E24: [f64; 24] = [
    1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6,
    6.2, 6.8, 7.5, 8.2, 9.1,
];

/// Runs per find target.
const RUNS: usize = 7;

/// The query `find` read its stock with before the joined aggregate (kept here to measure it).
const OLD_QUERY: &str = "SELECT id, kind, value, tol_minus_ppb, tol_plus_ppb, technology, \
     volts_uv, watts_uw, package, bin, quantity, low_stock, note, \
     (SELECT COALESCE(SUM(h.quantity), 0) FROM hold h WHERE h.part_id = part.id) AS held \
     FROM part WHERE retired_at IS NULL ORDER BY CASE kind WHEN 'resistor' THEN 0 \
     WHEN 'trimmer' THEN 1 WHEN 'capacitor' THEN 2 ELSE 3 END, value, tol_minus_ppb, \
     tol_plus_ppb, technology, package, bin";

/// The distinct values: E24 resistors 1 Ω … 9.1 MΩ (1 %, metal film) and E12 film capacitors
/// 10 pF … 820 µF (5 %).
fn values() -> Vec<(&'static str, String, &'static str, &'static str)> {
    let mut v = Vec::new();
    for d in 0..7 {
        for e in E24 {
            v.push((
                "resistor",
                format!("{:e}R", e * 10f64.powi(d)),
                "1%",
                "metal_film",
            ));
        }
    }
    for d in -11..-3 {
        for e in E24.iter().step_by(2) {
            v.push((
                "capacitor",
                format!("{:e}F", e * 10f64.powi(d)),
                "5%",
                "film",
            ));
        }
    }
    v
}

/// A stock CSV of about `rows` rows: every value in `rows / values` bins of one piece each; or,
/// `dedup`, the same stock with one row per value holding the summed count.
fn stock_csv(rows: usize, dedup: bool) -> (String, usize) {
    let vals = values();
    let per = (rows / vals.len()).max(1);
    let mut out =
        String::from("kind,value,tolerance,technology,volts,watts,package,bin,quantity,low,note\n");
    for (i, (kind, value, tol, tech)) in vals.iter().enumerate() {
        if dedup {
            out.push_str(&format!("{kind},{value},{tol},{tech},,,,B{i},{per},,\n"));
            continue;
        }
        for j in 0..per {
            out.push_str(&format!("{kind},{value},{tol},{tech},,,,B{i}-{j},1,,\n"));
        }
    }
    (out, if dedup { vals.len() } else { per * vals.len() })
}

fn binary() -> PathBuf {
    PathBuf::from(env!("CARGO_BIN_EXE_onhand"))
}

/// CPU seconds (user + system) of this process's waited-for children so far, from
/// /proc/self/stat (fields 16 and 17, in clock ticks of 1/100 s on Linux).
fn children_cpu() -> Option<f64> {
    let stat = std::fs::read_to_string("/proc/self/stat").ok()?;
    let rest = stat.rsplit_once(')')?.1;
    let f: Vec<&str> = rest.split_whitespace().collect();
    // After the command name: state is field 3, so field n is f[n - 3].
    let cu: f64 = f.get(13)?.parse().ok()?;
    let cs: f64 = f.get(14)?.parse().ok()?;
    Some((cu + cs) / 100.0)
}

/// The child's maximum resident set in MB, from GNU time (which reads it from `wait4`).
fn peak_mb(args: &[String]) -> Option<f64> {
    let time = Path::new("/usr/bin/time");
    if !time.exists() {
        return None;
    }
    let out = tempfile::NamedTempFile::new().ok()?;
    let status = Command::new(time)
        .args(["-f", "%M", "-o"])
        .arg(out.path())
        .arg(binary())
        .args(args)
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .status()
        .ok()?;
    status.code()?;
    let kib: f64 = std::fs::read_to_string(out.path())
        .ok()?
        .lines()
        .last()?
        .trim()
        .parse()
        .ok()?;
    Some(kib / 1024.0)
}

fn median(v: &[f64]) -> f64 {
    let mut s = v.to_vec();
    s.sort_by(f64::total_cmp);
    if s.is_empty() {
        return f64::NAN;
    }
    let n = s.len();
    if n % 2 == 1 {
        s[n / 2]
    } else {
        (s[n / 2 - 1] + s[n / 2]) / 2.0
    }
}

/// Import `csv` into a new database at `db` with the binary; wall seconds.
fn import(db: &Path, csv: &Path) -> f64 {
    let t0 = Instant::now();
    let st = Command::new(binary())
        .arg("--db")
        .arg(db)
        .args(["--user", "bench", "import"])
        .arg(csv)
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .status()
        .expect("spawn onhand import");
    assert!(st.success(), "onhand import failed: {st}");
    t0.elapsed().as_secs_f64()
}

/// The find targets: one-shots and astables over the range a 555 covers.
fn targets() -> Vec<Vec<&'static str>> {
    vec![
        vec!["pulse", "47us"],
        vec!["pulse", "1ms"],
        vec!["pulse", "33ms"],
        vec!["pulse", "250ms"],
        vec!["pulse", "2.2s"],
        vec!["astable", "1Hz"],
        vec!["astable", "120Hz"],
        vec!["astable", "1kHz", "--duty", "60..70%"],
        vec!["astable", "7.5kHz"],
        vec!["astable", "40kHz"],
    ]
}

struct FindFigures {
    wall: Vec<f64>,
    cpu: Vec<f64>,
    peaks: Vec<f64>,
    pieces: Vec<Option<u64>>,
    stopped: Vec<String>,
}

fn run_finds(db: &Path) -> FindFigures {
    let mut f = FindFigures {
        wall: Vec::new(),
        cpu: Vec::new(),
        peaks: Vec::new(),
        pieces: Vec::new(),
        stopped: Vec::new(),
    };
    let db_arg = db.display().to_string();
    // One warm-up so the first target does not carry the page cache filling.
    let _ = Command::new(binary())
        .args(["--db", &db_arg, "--json", "find", "pulse", "1ms"])
        .output();
    for t in targets() {
        let mut args: Vec<String> = vec!["--db".into(), db_arg.clone(), "--json".into()];
        args.push("find".into());
        args.extend(t.iter().map(|s| s.to_string()));
        let mut last = Vec::new();
        for _ in 0..RUNS {
            let c0 = children_cpu();
            let t0 = Instant::now();
            let out = Command::new(binary())
                .args(&args)
                .stderr(Stdio::null())
                .output()
                .expect("spawn onhand find");
            f.wall.push(t0.elapsed().as_secs_f64());
            if let (Some(a), Some(b)) = (c0, children_cpu()) {
                f.cpu.push(b - a);
            }
            // 3: stopped by find's 10 s time limit (counted below, not compared).
            assert!(
                matches!(out.status.code(), Some(0 | 1 | 3)),
                "onhand find {args:?} failed: {}",
                out.status
            );
            last = out.stdout;
        }
        let json: serde_json::Value = serde_json::from_slice(&last).expect("find --json output");
        if json["complete"].as_bool() == Some(false) {
            f.stopped.push(t.join(" "));
            f.pieces.push(None);
        } else {
            f.pieces.push(json["designs"][0]["pieces"].as_u64());
        }
        if let Some(p) = peak_mb(&args) {
            f.peaks.push(p);
        }
    }
    f
}

fn mean(v: &[f64]) -> f64 {
    v.iter().sum::<f64>() / v.len().max(1) as f64
}

fn main() {
    let dir = tempfile::tempdir().expect("temp dir");
    if std::env::var("SCALE_BENCH_ONLY").is_ok_and(|v| v == "import") {
        import_figures(dir.path());
        return;
    }
    let (big_csv, big_rows) = stock_csv(50_000, false);
    let (small_csv, small_rows) = stock_csv(50_000, true);
    let big = dir.path().join("big.csv");
    let small = dir.path().join("small.csv");
    std::fs::write(&big, big_csv).expect("write csv");
    std::fs::write(&small, small_csv).expect("write csv");
    let big_db = dir.path().join("big.db");
    let small_db = dir.path().join("small.db");
    let big_import = import(&big_db, &big);
    import(&small_db, &small);
    println!("binary: {}", binary().display());
    println!(
        "stocks: {big_rows} rows ({} distinct values, imported in {:.0} ms) and the de-duplicated {small_rows} rows",
        values().len(),
        big_import * 1e3
    );
    println!();

    println!("== 1. reading the 50 000-row stock in process ==");
    let conn = rusqlite::Connection::open(&big_db).expect("open");
    let mut old = Vec::new();
    for _ in 0..RUNS {
        let t0 = Instant::now();
        let mut stmt = conn.prepare_cached(OLD_QUERY).expect("prepare");
        // Every column read, as `Store::parts` reads them into a part.
        let rows: Vec<_> = stmt
            .query_map([], |r| {
                Ok((
                    (
                        r.get::<_, i64>(0)?,
                        r.get::<_, String>(1)?,
                        r.get::<_, i64>(2)?,
                        r.get::<_, i64>(3)?,
                        r.get::<_, i64>(4)?,
                        r.get::<_, String>(5)?,
                        r.get::<_, Option<i64>>(6)?,
                    ),
                    (
                        r.get::<_, Option<i64>>(7)?,
                        r.get::<_, String>(8)?,
                        r.get::<_, String>(9)?,
                        r.get::<_, i64>(10)?,
                        r.get::<_, Option<i64>>(11)?,
                        r.get::<_, String>(12)?,
                        r.get::<_, i64>(13)?,
                    ),
                ))
            })
            .expect("query")
            .collect::<Result<_, _>>()
            .expect("rows");
        let n = rows.len();
        old.push(t0.elapsed().as_secs_f64());
        assert_eq!(n, big_rows);
    }
    let store = Store::open(&big_db).expect("store");
    let mut new = Vec::new();
    for _ in 0..RUNS {
        let t0 = Instant::now();
        let n = store.parts(&PartFilter::default()).expect("parts").len();
        new.push(t0.elapsed().as_secs_f64());
        assert_eq!(n, big_rows);
    }
    println!(
        "  before (subquery per row, SQL sort, every column read): median {:.1} ms",
        median(&old) * 1e3
    );
    println!(
        "  now (Store::parts: joined aggregate, sort in Rust, every column mapped to a part): median {:.1} ms",
        median(&new) * 1e3
    );
    drop(store);
    println!();

    println!(
        "== 2. find, {} targets, ±1 %, k = 3, {RUNS} runs each ==",
        targets().len()
    );
    let b = run_finds(&big_db);
    let s = run_finds(&small_db);
    for (i, (x, y)) in b.pieces.iter().zip(&s.pieces).enumerate() {
        let stopped = |f: &FindFigures| f.stopped.contains(&targets()[i].join(" "));
        if !stopped(&b) && !stopped(&s) {
            assert_eq!(
                x,
                y,
                "the 50 000-row stock and the de-duplicated stock disagree on {:?}",
                targets()[i]
            );
        }
    }
    println!(
        "  best piece counts (equal on both stocks where both completed): {:?}",
        b.pieces
    );
    for (what, f) in [("50 000 rows", &b), ("de-duplicated", &s)] {
        if !f.stopped.is_empty() {
            println!(
                "  STOPPED BY THE 10 s TIME LIMIT on the {what} stock: {}",
                f.stopped.join("; ")
            );
        }
    }
    println!(
        "  {:<28} {:>12} {:>12} {:>8}",
        "figure", "50 000 rows", "264 rows", "ratio"
    );
    let row = |what: &str, a: f64, c: f64, unit: &str| {
        println!(
            "  {what:<28} {:>9.1} {unit} {:>9.1} {unit} {:>8.2}",
            a,
            c,
            a / c
        );
    };
    row(
        "median wall time",
        median(&b.wall) * 1e3,
        median(&s.wall) * 1e3,
        "ms",
    );
    row(
        "mean CPU time (user + sys)",
        mean(&b.cpu) * 1e3,
        mean(&s.cpu) * 1e3,
        "ms",
    );
    if b.peaks.is_empty() || s.peaks.is_empty() {
        println!("  peak memory: not measured (/usr/bin/time missing)");
    } else {
        let max = |v: &[f64]| v.iter().copied().fold(0.0, f64::max);
        row(
            "largest peak resident set",
            max(&b.peaks),
            max(&s.peaks),
            "MB",
        );
    }
    println!(
        "  target median < 100 ms on 50 000 rows: {}; peak < 100 MB: {}",
        if median(&b.wall) < 0.1 {
            "met"
        } else {
            "NOT met (wall)"
        },
        if !b.peaks.is_empty() && b.peaks.iter().all(|&p| p < 100.0) {
            "met"
        } else {
            "NOT met or not measured"
        }
    );
    println!();

    println!("== 3. plan, 100 units, 5 stages, ±5 %, CMOS, on the 50 000-row stock ==");
    let plan_args: Vec<String> = [
        "--db",
        &big_db.display().to_string(),
        "plan",
        "--stage",
        "astable:1.5Hz:55..75%",
        "--stage",
        "astable:2kHz",
        "--stage",
        "pulse:30ms",
        "--stage",
        "pulse:1ms",
        "--stage",
        "astable:100Hz",
        "--units",
        "100",
        "--tol",
        "5%",
        "--family",
        "cmos",
    ]
    .iter()
    .map(|s| s.to_string())
    .collect();
    let mut pw = Vec::new();
    let mut pc = Vec::new();
    for _ in 0..3 {
        let c0 = children_cpu();
        let t0 = Instant::now();
        let st = Command::new(binary())
            .args(&plan_args)
            .stdout(Stdio::null())
            .stderr(Stdio::null())
            .status()
            .expect("spawn onhand plan");
        pw.push(t0.elapsed().as_secs_f64());
        if let (Some(a), Some(b)) = (c0, children_cpu()) {
            pc.push(b - a);
        }
        assert!(matches!(st.code(), Some(0 | 1)), "onhand plan failed: {st}");
    }
    let ppeak = peak_mb(&plan_args);
    println!(
        "  median wall {:.0} ms, mean CPU {:.0} ms, peak {} (target < 2 s: {})",
        median(&pw) * 1e3,
        mean(&pc) * 1e3,
        ppeak.map_or("not measured".to_string(), |p| format!("{p:.1} MB")),
        if median(&pw) < 2.0 { "met" } else { "NOT met" }
    );
    println!();

    import_figures(dir.path());
}

/// The stock of [`stock_csv`] as the JSON array `export --format json` writes (one object per
/// row, keyed by column name), compact.
fn stock_json(csv: &str) -> String {
    let mut lines = csv.lines();
    let header: Vec<&str> = lines.next().unwrap_or_default().split(',').collect();
    let mut out = String::from("[\n");
    for (i, line) in lines.enumerate() {
        let mut obj = serde_json::Map::new();
        for (name, cell) in header.iter().zip(line.split(',')) {
            let v = match *name {
                "quantity" => serde_json::Value::from(cell.parse::<i64>().unwrap_or(0)),
                "low" if cell.is_empty() => serde_json::Value::Null,
                _ => serde_json::Value::String(cell.to_string()),
            };
            obj.insert((*name).to_string(), v);
        }
        if i > 0 {
            out.push_str(",\n");
        }
        out.push_str(&serde_json::Value::Object(obj).to_string());
    }
    out.push_str("\n]\n");
    out
}

/// One import run under GNU time into a new database: wall seconds, the child's peak resident
/// set in MB (None without /usr/bin/time), and the rows the store then holds.
fn timed_import(dir: &Path, file: &Path, stdin: bool, json: bool) -> (f64, Option<f64>, usize) {
    let db = tempfile::Builder::new()
        .suffix(".db")
        .tempfile_in(dir)
        .expect("temp db")
        .into_temp_path();
    let _ = std::fs::remove_file(&db);
    let time = Path::new("/usr/bin/time");
    let report = tempfile::NamedTempFile::new().expect("temp file");
    let mut cmd = if time.exists() {
        let mut c = Command::new(time);
        c.args(["-f", "%M", "-o"]).arg(report.path()).arg(binary());
        c
    } else {
        Command::new(binary())
    };
    cmd.arg("--db").arg(&db).args(["--user", "bench", "import"]);
    if json {
        cmd.args(["--format", "json"]);
    }
    if stdin {
        cmd.arg("-")
            .stdin(std::fs::File::open(file).expect("open the import file"));
    } else {
        cmd.arg(file);
    }
    let t0 = Instant::now();
    let st = cmd
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .status()
        .expect("spawn onhand import");
    let wall = t0.elapsed().as_secs_f64();
    assert!(
        st.success(),
        "onhand import {} failed: {st}",
        file.display()
    );
    let peak = time.exists().then(|| {
        std::fs::read_to_string(report.path())
            .ok()
            .and_then(|t| t.lines().last()?.trim().parse::<f64>().ok())
            .map(|kib| kib / 1024.0)
    });
    let rows = Store::open(&db)
        .expect("store")
        .parts(&PartFilter::default())
        .expect("parts")
        .len();
    let _ = std::fs::remove_file(&db);
    (wall, peak.flatten(), rows)
}

/// Part 4: import figures, CSV and JSON, file and standard input, 50 000 and 200 000 rows.
fn import_figures(dir: &Path) {
    const IMPORT_RUNS: usize = 3;
    println!("== 4. import: median wall of {IMPORT_RUNS} runs, peak resident set of the child ==");
    println!(
        "  {:<16} {:>8} {:>8} {:>9} {:>10}",
        "source", "rows", "MB in", "wall", "peak"
    );
    let mut peaks: Vec<(String, usize, Option<f64>)> = Vec::new();
    for rows in [50_000, 200_000] {
        let (csv, n) = stock_csv(rows, false);
        let json = stock_json(&csv);
        let csv_path = dir.join(format!("import-{rows}.csv"));
        let json_path = dir.join(format!("import-{rows}.json"));
        std::fs::write(&csv_path, &csv).expect("write csv");
        std::fs::write(&json_path, &json).expect("write json");
        for (what, path, size, stdin, is_json) in [
            ("CSV file", &csv_path, csv.len(), false, false),
            ("CSV stdin", &csv_path, csv.len(), true, false),
            ("JSON file", &json_path, json.len(), false, true),
            ("JSON stdin", &json_path, json.len(), true, true),
        ] {
            let mut walls = Vec::new();
            let mut peak: Option<f64> = None;
            for _ in 0..IMPORT_RUNS {
                let (w, p, got) = timed_import(dir, path, stdin, is_json);
                assert_eq!(got, n, "{what}: the import did not import every row");
                walls.push(w);
                peak = match (peak, p) {
                    (Some(a), Some(b)) => Some(a.max(b)),
                    (a, b) => a.or(b),
                };
            }
            println!(
                "  {what:<16} {n:>8} {:>8.1} {:>7.2} s {:>10}",
                size as f64 / 1e6,
                median(&walls),
                peak.map_or("n/a".to_string(), |p| format!("{p:.1} MB"))
            );
            peaks.push((what.to_string(), n, peak));
        }
    }
    for what in ["CSV file", "CSV stdin", "JSON file", "JSON stdin"] {
        let of = |small: bool| {
            peaks
                .iter()
                .filter(|(w, _, _)| w == what)
                .map(|(_, n, p)| (*n, *p))
                .reduce(|a, b| if (a.0 < b.0) == small { a } else { b })
        };
        if let (Some((ns, Some(ps))), Some((nb, Some(pb)))) = (of(true), of(false)) {
            println!(
                "  {what:<16} peak at {nb} rows / at {ns} rows: {:.2} ({:+.1} MB)",
                pb / ps,
                pb - ps
            );
        }
    }
}
