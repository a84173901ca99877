//! Cross-check of our preferred-number tables and look-ups against an outside reference.
//!
//! Source: PyPI package `eseries` (1.2.x), run through `python3`. It gives the base numbers of
//! E3 … E192 (`series`), the values of a range with both ends included (`erange`) and the next
//! value strictly above or below (`find_greater_than`, `find_less_than`). Its `find_nearest`
//! measures distance linearly while ours measures it by ratio, so nearest values are not
//! compared. Skipped with a message when the package is missing, unless
//! `ONHAND_REQUIRE_EXTERNAL=1` (then it fails).

use crate::util::{self, Bench};
use serde_json::Value;
use std::process::Command;

const SERIES: [&str; 7] = ["E3", "E6", "E12", "E24", "E48", "E96", "E192"];

/// Run a python script with `eseries` imported; `None` (after the skip message) when python3 or
/// the package is missing.
fn eseries(script: &str, args: &[String]) -> Option<Value> {
    let probe = Command::new("python3")
        .args(["-c", "import eseries"])
        .output()
        .is_ok_and(|o| o.status.success());
    if !probe {
        assert!(
            !util::external_required(),
            "python3 with the eseries package is required here (ONHAND_REQUIRE_EXTERNAL=1); \
             pip install eseries"
        );
        eprintln!("SKIPPED: python3 -c 'import eseries' failed; pip install eseries to run this");
        return None;
    }
    let out = Command::new("python3")
        .arg("-c")
        .arg(script)
        .args(args)
        .output()
        .expect("run python3");
    assert!(
        out.status.success(),
        "python3 failed:\n{}",
        String::from_utf8_lossy(&out.stderr)
    );
    Some(serde_json::from_slice(&out.stdout).expect("python printed JSON"))
}

fn as_f64s(v: &Value) -> Vec<f64> {
    v.as_array()
        .expect("array")
        .iter()
        .map(|x| x.as_f64().expect("number"))
        .collect()
}

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= 1e-9 * a.abs().max(b.abs())
}

#[test]
fn base_numbers_match_eseries() {
    // Source: PyPI eseries 1.2.x, eseries.series(E…) for each series.
    let script = "
import json, eseries
print(json.dumps({k: [int(x) for x in eseries.series(getattr(eseries, k))]
                  for k in ['E3','E6','E12','E24','E48','E96','E192']}))";
    let Some(reference) = eseries(script, &[]) else {
        return;
    };
    let bench = Bench::new();
    for s in SERIES {
        let run = bench.run(&["--json", "series", "--table", s]).ok();
        let ours = run.json();
        assert_eq!(
            ours["base_numbers"], reference[s],
            "{s}: ours (left) against eseries (right)"
        );
        assert_eq!(
            ours["per_decade"].as_u64(),
            Some(reference[s].as_array().map_or(0, Vec::len) as u64)
        );
    }
}

#[test]
fn ranges_match_eseries_erange() {
    // Source: PyPI eseries 1.2.x, eseries.erange(series, lo, hi), both ends included.
    let cases: &[(&str, &str, &str, f64, f64, bool)] = &[
        ("E12", "1k", "10k", 1e3, 1e4, false),
        ("E24", "10", "1M", 10.0, 1e6, false),
        ("E96", "1k", "100k", 1e3, 1e5, false),
        ("E192", "100", "1k", 100.0, 1e3, false),
        ("E48", "2k", "3k", 2e3, 3e3, false),
        ("E3", "1", "10M", 1.0, 1e7, false),
        ("E6", "1p", "1u", 1e-12, 1e-6, true),
        ("E24", "100p", "10u", 1e-10, 1e-5, true),
    ];
    let script = "
import json, sys, eseries
out = []
for spec in sys.argv[1:]:
    s, lo, hi = spec.split(':')
    out.append(list(eseries.erange(getattr(eseries, s), float(lo), float(hi))))
print(json.dumps(out))";
    let args: Vec<String> = cases
        .iter()
        .map(|(s, _, _, lo, hi, _)| format!("{s}:{lo:e}:{hi:e}"))
        .collect();
    let Some(reference) = eseries(script, &args) else {
        return;
    };
    let bench = Bench::new();
    for (i, (s, lo, hi, ..)) in cases.iter().enumerate() {
        let mut argv = vec!["--json", "series", "--table", s, "--from", lo, "--to", hi];
        if cases[i].5 {
            argv.push("--capacitor");
        }
        let ours = as_f64s(&bench.run(&argv).ok().json()["values"]);
        let theirs = as_f64s(&reference[i]);
        assert_eq!(ours.len(), theirs.len(), "{s} {lo}…{hi}: count");
        for (a, b) in ours.iter().zip(&theirs) {
            assert!(close(*a, *b), "{s} {lo}…{hi}: ours {a} against eseries {b}");
        }
    }
}

#[test]
fn neighbours_match_eseries() {
    // Source: PyPI eseries 1.2.x, find_less_than / find_greater_than (strictly below / above).
    let values = [
        "1", "4.8", "10", "47", "99.9", "150", "499", "1k", "2k", "3k", "4k7", "5k", "9k19", "9k2",
        "12k3", "33k", "68k1", "100k", "470k", "1M", "3M3",
    ];
    let script = "
import json, sys, eseries
out = {}
for v in sys.argv[1:]:
    x = float(v)
    out[v] = {k: [eseries.find_less_than(getattr(eseries, k), x),
                  eseries.find_greater_than(getattr(eseries, k), x)]
              for k in ['E3','E6','E12','E24','E48','E96','E192']}
print(json.dumps(out))";
    let bench = Bench::new();
    // Our own reading of each value, in SI, so python gets exactly the same number.
    let si: Vec<(String, Value)> = values
        .iter()
        .map(|v| {
            let j = bench.run(&["--json", "series", v]).ok().json();
            (j["value"].to_string(), j)
        })
        .collect();
    let args: Vec<String> = si.iter().map(|(x, _)| x.clone()).collect();
    let Some(reference) = eseries(script, &args) else {
        return;
    };
    let mut compared = 0;
    for (x, ours) in &si {
        for answer in ours["series"].as_array().expect("series list") {
            let s = answer["series"].as_str().expect("series name");
            let pair = &reference[x.as_str()][s];
            for (key, theirs) in [("below", &pair[0]), ("above", &pair[1])] {
                let a = answer[key].as_f64().expect("ours");
                let b = theirs.as_f64().expect("theirs");
                assert!(close(a, b), "{s} {key} {x}: ours {a} against eseries {b}");
                compared += 1;
            }
        }
    }
    assert_eq!(compared, values.len() * SERIES.len() * 2);
}

#[test]
fn eia96_marking_table_matches_e96_and_the_published_letters() {
    // Sources: the E96 values of IEC 60063 through PyPI eseries 1.2.x (eseries.series(E96); the
    // n-th value is code n), and the EIA-96 multiplier letters as published in Digi-Key's "SMD
    // resistor code" conversion page and Wilderness Labs' "Reading resistors" reference page:
    // Z 0.001, Y or R 0.01, X or S 0.1, A 1, B or H 10, C 100, D 1000, E 10^4, F 10^5.
    let letters: [(char, i32); 12] = [
        ('Z', -3),
        ('Y', -2),
        ('R', -2),
        ('X', -1),
        ('S', -1),
        ('A', 0),
        ('B', 1),
        ('H', 1),
        ('C', 2),
        ('D', 3),
        ('E', 4),
        ('F', 5),
    ];
    let script = "
import json, eseries
print(json.dumps([int(x) for x in eseries.series(eseries.E96)]))";
    let Some(reference) = eseries(script, &[]) else {
        return;
    };
    let e96: Vec<i64> = reference
        .as_array()
        .expect("list")
        .iter()
        .map(|v| v.as_i64().expect("int"))
        .collect();
    assert_eq!(e96.len(), 96);
    let mut compared = 0;
    for (i, base) in e96.iter().enumerate() {
        for (letter, exp) in letters {
            let code = format!("{:02}{letter}", i + 1);
            let m = onhand::units::parse_resistor_marking(&code)
                .unwrap_or_else(|e| panic!("{code}: {e}"));
            // base × 10^exp ohms, in milliohms: base × 10^(exp + 3); exp + 3 ≥ 0.
            let want = base * 10i64.pow((exp + 3).unsigned_abs());
            assert_eq!(m.value.base(), want, "{code}");
            compared += 1;
        }
    }
    assert_eq!(compared, 96 * 12);
    // Outside the table: code 97 and a letter that is not a multiplier.
    assert!(onhand::units::parse_resistor_marking("97A").is_err());
    assert!(onhand::units::parse_resistor_marking("01G").is_err());
}
