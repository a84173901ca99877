//! The stock commands end to end: init, add (defaults, kind from the value, topping up), take,
//! recount, list filters, show, import/export round trips, spreadsheet-safe CSV, the ledger
//! re-deriving every count, and the bundled sample stock.

use crate::util::{Bench, repo_path};
use serde_json::Value as Json;

/// `list --json` as (value, kind, quantity, bin) for quick checks.
fn rows(b: &Bench) -> Vec<Json> {
    match b.run(&["--json", "list"]).ok().json() {
        Json::Array(a) => a,
        other => panic!("list --json is not an array: {other}"),
    }
}

fn export(b: &Bench, format: &str) -> String {
    b.run(&["export", "--format", format]).ok().stdout
}

#[test]
fn init_creates_the_database_and_says_where() {
    let b = Bench::new();
    let db = b.db();
    let db = db.to_str().expect("utf-8");
    b.run(&["init"]).ok().stdout_has("created").stdout_has(db);
    assert!(b.db().exists());
    b.run(&["init"])
        .ok()
        .stdout_has("is ready")
        .stdout_has(&crate::util::latest_schema());
}

#[test]
fn default_location_follows_the_data_directory() {
    let b = Bench::new();
    let data = b.path("xdg-data");
    let mut cmd = crate::util::onhand();
    cmd.env("XDG_DATA_HOME", &data)
        .env("HOME", b.path("home"))
        .arg("init");
    let run = crate::util::Run::from(cmd).ok();
    let expected = data.join("onhand").join("stock.db");
    assert!(
        expected.exists(),
        "no database at {}: {}",
        expected.display(),
        run.stdout
    );
}

#[test]
fn add_uses_kind_from_value_and_usual_defaults() {
    let b = Bench::new();
    b.run(&["add", "4.7k", "--qty", "5", "--bin", "A3"])
        .ok()
        .stdout_has("new row #1 4.7 kΩ 1% metal film, axial, bin A3: 5 on hand");
    b.run(&["add", "100n", "--qty", "10"]).ok();
    b.run(&["add", "470p", "--qty", "10"]).ok();
    b.run(&["add", "47u", "--qty", "3", "--volts", "25"]).ok();
    b.run(&["add", "1k", "--qty", "3", "--kind", "trimmer"])
        .ok();
    let r = rows(&b);
    // common practice defaults: metal film 1 % 0.25 W axial; C0G < 1 nF, X7R to 1 µF,
    // electrolytic above.
    let summary: Vec<(String, String, Json)> = r
        .iter()
        .map(|p| {
            (
                p["kind"].as_str().expect("kind").to_string(),
                p["technology"].as_str().expect("tech").to_string(),
                p["power_rating"].clone(),
            )
        })
        .collect();
    assert_eq!(
        summary,
        vec![
            ("resistor".into(), "metal_film".into(), Json::from(0.25)),
            ("trimmer".into(), "other".into(), Json::Null),
            ("capacitor".into(), "c0g".into(), Json::Null),
            ("capacitor".into(), "x7r".into(), Json::Null),
            ("capacitor".into(), "electrolytic".into(), Json::Null),
        ]
    );
    assert_eq!(r[0]["tolerance"]["plus"], Json::from(0.01));
    assert_eq!(r[4]["voltage_rating"], Json::from(25.0));
}

#[test]
fn adding_the_same_part_tops_up_its_row() {
    let b = Bench::new();
    b.run(&["add", "4.7k", "--qty", "5", "--bin", "A3"]).ok();
    b.run(&["add", "4.7k", "--qty", "7", "--bin", "A3", "--low", "4"])
        .ok()
        .stdout_has("added 7 to #1")
        .stdout_has("5 → 12")
        .stdout_has("also set low none → 4");
    // A different bin is a different row.
    b.run(&["add", "4.7k", "--qty", "1", "--bin", "B1"])
        .ok()
        .stdout_has("new row #2");
    let r = rows(&b);
    assert_eq!(r.len(), 2);
    assert_eq!(r[0]["quantity"], 12);
    assert_eq!(r[0]["low_stock"], 4);
}

#[test]
fn take_by_id_or_value_and_ambiguity_lists_candidates() {
    let b = Bench::new();
    b.run(&["add", "4.7k", "--qty", "10", "--bin", "A3"]).ok();
    b.run(&[
        "add",
        "4.7k",
        "--qty",
        "4",
        "--bin",
        "B1",
        "--tech",
        "carbon_film",
    ])
    .ok();
    b.run(&["take", "#1", "--qty", "2"])
        .ok()
        .stdout_has("10 → 8");
    b.run(&["take", "1"]).ok().stdout_has("8 → 7");
    b.run(&["take", "4.7k", "--qty", "3"])
        .code(2)
        .stderr_has("matches 2 rows")
        .stderr_has("#1 4.7 kΩ 1% metal film, axial, bin A3 — 7 on hand")
        .stderr_has("#2 4.7 kΩ 5% carbon film, axial, bin B1 — 4 on hand");
    b.run(&["take", "4.7k", "--bin", "B1", "--qty", "3"])
        .ok()
        .stdout_has("4 → 1");
    b.run(&["take", "4.7k", "--tech", "metal_film"])
        .ok()
        .stdout_has("7 → 6");
    b.run(&["take", "22k"])
        .code(2)
        .stderr_has("no resistor 22k in stock");
    b.run(&["take", "#99"]).code(2).stderr_has("no part #99");
}

#[test]
fn taking_more_than_there_is_names_bin_and_count() {
    let b = Bench::new();
    b.run(&["add", "4.7k", "--qty", "4", "--bin", "A3"]).ok();
    b.run(&["take", "#1", "--qty", "5"])
        .code(2)
        .stderr_has("bin A3 holds 4 × 4.7 kΩ, cannot take 5");
    assert_eq!(rows(&b)[0]["quantity"], 4);
}

#[test]
fn take_warns_at_the_low_stock_level() {
    let b = Bench::new();
    b.run(&["add", "10u", "--qty", "6", "--low", "3"]).ok();
    b.run(&["take", "1", "--qty", "2"]).ok();
    b.run(&["take", "1", "--qty", "1"])
        .ok()
        .stdout_has("at or below its low-stock level (3 left, level 3)");
}

#[test]
fn recount_records_the_difference() {
    let b = Bench::new();
    b.run(&["add", "100n", "--qty", "20", "--bin", "C2"]).ok();
    b.run(&["recount", "100n", "17", "--bin", "C2"])
        .ok()
        .stdout_has("20 → 17 (-3)");
    b.run(&["recount", "#1", "25", "--why", "found a bag"])
        .ok()
        .stdout_has("(+8)");
    let show = b.run(&["--json", "show", "#1"]).ok().json();
    let deltas: Vec<i64> = show["ledger"]
        .as_array()
        .expect("ledger")
        .iter()
        .map(|e| e["delta"].as_i64().expect("delta"))
        .collect();
    assert_eq!(deltas, vec![20, -3, 8]);
    assert_eq!(show["ledger"][2]["why"], "found a bag");
    assert_eq!(show["ledger"][2]["who"], "tester");
    assert_eq!(show["part"]["quantity"], 25);
}

#[test]
fn show_prints_details_and_history() {
    let b = Bench::new();
    b.run(&[
        "add",
        "4.7k",
        "--qty",
        "5",
        "--bin",
        "A3",
        "--note",
        "from the old amp",
    ])
    .ok();
    b.run(&["take", "1", "--why", "repair: fuzz box"]).ok();
    b.run(&["show", "4.7k"])
        .ok()
        .stdout_has("on hand     4")
        .stdout_has("from the old amp")
        .stdout_has("history (2 entries)")
        .stdout_has("repair: fuzz box")
        .stdout_has("tester");
}

#[test]
fn list_filters() {
    let b = Bench::new().with_sample("bench-drawer.csv");
    let count = |args: &[&str]| -> usize {
        let mut all = vec!["--json", "list"];
        all.extend_from_slice(args);
        b.run(&all).ok().json().as_array().expect("array").len()
    };
    let total = count(&[]);
    assert_eq!(total, 88);
    let resistors = count(&["--kind", "resistor"]);
    let capacitors = count(&["--kind", "capacitor"]);
    assert_eq!(resistors + capacitors + 2, total); // plus one diode and one trimmer
    // Range filters read the value like `add` does: 1n..1u are capacitors.
    let mid = b
        .run(&["--json", "list", "--min", "1n", "--max", "1u"])
        .ok()
        .json();
    for p in mid.as_array().expect("array") {
        let v = p["value"].as_f64().expect("value");
        assert!((1e-9..=1e-6).contains(&v), "{v} outside 1n..1u");
        assert_eq!(p["kind"], "capacitor");
    }
    assert!(!mid.as_array().expect("array").is_empty());
    let kohm = b
        .run(&["--json", "list", "--min", "1k", "--max", "9.9k"])
        .ok()
        .json();
    for p in kohm.as_array().expect("array") {
        let v = p["value"].as_f64().expect("value");
        assert!((1e3..=9.9e3).contains(&v), "{v}");
    }
    assert!(count(&["--tech", "electrolytic"]) >= 5);
    assert_eq!(
        count(&["--bin", "drawer-6"]),
        count(&["--bin", "drawer-6", "--kind", "capacitor"]) + 2
    );
    assert_eq!(count(&["--text", "steering"]), 1);
    assert_eq!(count(&["--low"]), 0);
    b.run(&["recount", "1N4148", "--kind", "diode", "3"]).ok();
    b.run(&[
        "add",
        "1N4148",
        "--kind",
        "diode",
        "--package",
        "DO-35",
        "--bin",
        "drawer-6",
        "--qty",
        "0",
        "--low",
        "5",
    ])
    .ok();
    assert_eq!(count(&["--low"]), 1);
    b.run(&["list", "--low"])
        .ok()
        .stdout_has("5 LOW")
        .stdout_has("1 row, 3 pieces");
    b.run(&["list", "--bin", "nowhere"])
        .ok()
        .stdout_has("no parts match");
}

#[test]
fn import_dry_run_reports_and_writes_nothing() {
    let b = Bench::new();
    b.run(&["add", "4.7k", "--qty", "5", "--bin", "A1"]).ok();
    let csv = b.write("in.csv", "VALUE,Bin,quantity\n4.7k,A1,3\n100n,C1,10\n");
    let before = export(&b, "csv");
    b.run(&["import", csv.to_str().expect("utf-8"), "--dry-run"])
        .ok()
        .stdout_has("row 2: would add 3 to #1")
        .stdout_has("row 3: would create 10 ×")
        .stdout_has("dry run, nothing written");
    assert_eq!(export(&b, "csv"), before);
    b.run(&["import", csv.to_str().expect("utf-8")])
        .ok()
        .stdout_has("1 new, 1 topped up, 13 pieces");
    let show = b.run(&["--json", "show", "#1"]).ok().json();
    assert_eq!(show["ledger"][1]["why"], "import in.csv row 2");
    assert_eq!(show["part"]["quantity"], 8);
}

#[test]
fn export_then_import_into_an_empty_store_is_identical() {
    for format in ["csv", "json"] {
        let a = Bench::new()
            .with_sample("bench-drawer.csv")
            .with_sample("makerspace-cabinet.csv");
        a.run(&[
            "add",
            "2.2n",
            "--qty",
            "3",
            "--tech",
            "y5v",
            "--note",
            "=cmd|' /C calc'!A0",
        ])
        .ok();
        a.run(&[
            "add",
            "33k",
            "--qty",
            "2",
            "--watts",
            "none",
            "--note",
            "@risky +odd -note",
        ])
        .ok();
        let first = export(&a, format);
        let file = a.write(&format!("stock.{format}"), &first);
        let b = Bench::new();
        b.run(&["import", file.to_str().expect("utf-8")]).ok();
        let second = export(&b, format);
        assert_eq!(first, second, "{format} export did not round-trip");
        // The tricky rows came back exactly.
        let notes: Vec<String> = rows(&b)
            .iter()
            .map(|p| p["note"].as_str().expect("note").to_string())
            .collect();
        assert!(notes.contains(&"=cmd|' /C calc'!A0".to_string()));
        assert!(notes.contains(&"@risky +odd -note".to_string()));
    }
}

#[test]
fn export_to_a_file() {
    let b = Bench::new();
    b.run(&["add", "1k", "--qty", "2"]).ok();
    let out = b.path("backup.json");
    b.run(&[
        "export",
        "--format",
        "json",
        "--out",
        out.to_str().expect("utf-8"),
    ])
    .ok()
    .stdout_has("exported 1 row to");
    let text = std::fs::read_to_string(&out).expect("written");
    let v: Json = serde_json::from_str(&text).expect("json");
    assert_eq!(v[0]["value"], "1 kΩ");
    assert_eq!(v[0]["quantity"], 2);
}

#[test]
fn csv_export_neutralises_formula_cells() {
    // common practice (OWASP "CSV injection"): a cell starting with = + - @ is run as a formula
    // by spreadsheets; prefixing ' makes it text.
    let b = Bench::new();
    b.run(&["add", "1k", "--qty", "1", "--note", "=1+1"]).ok();
    b.run(&["add", "10n", "--qty", "1", "--tech", "y5v"]).ok();
    let csv = export(&b, "csv");
    assert!(csv.contains(",'=1+1\n"), "{csv}");
    assert!(csv.contains(",'-20/+80%,"), "{csv}");
    for line in csv.lines() {
        for cell in line.split(',') {
            assert!(
                !cell.starts_with(['=', '+', '-', '@']),
                "unsafe cell {cell:?} in {line}"
            );
        }
    }
}

#[test]
fn every_count_is_re_derived_from_the_ledger() {
    let b = Bench::new().with_sample("makerspace-cabinet.csv");
    b.run(&["add", "4.7k", "--qty", "9", "--bin", "A1"]).ok();
    b.run(&["take", "1", "--qty", "1"]).ok();
    b.run(&["recount", "2", "0"]).ok();
    b.run(&["take", "3", "--qty", "2"]).ok();
    // Importing the same file again tops up every row.
    let cabinet = repo_path("sample-stock/makerspace-cabinet.csv");
    b.run(&["import", cabinet.to_str().expect("utf-8")])
        .ok()
        .stdout_has("0 new, 224 topped up");
    let conn = rusqlite::Connection::open(b.db()).expect("open db");
    let mut stmt = conn
        .prepare("SELECT part_id, delta, quantity_after FROM ledger ORDER BY id")
        .expect("prepare");
    let mut sums: std::collections::BTreeMap<i64, i64> = Default::default();
    let entries = stmt
        .query_map([], |r| {
            Ok((
                r.get::<_, i64>(0)?,
                r.get::<_, i64>(1)?,
                r.get::<_, i64>(2)?,
            ))
        })
        .expect("query");
    for e in entries {
        let (part, delta, after) = e.expect("row");
        let running = sums.entry(part).or_insert(0);
        *running += delta;
        assert_eq!(*running, after, "ledger of #{part} does not add up");
    }
    let listed = rows(&b);
    assert_eq!(listed.len(), sums.len(), "every row has ledger history");
    for p in listed {
        let id = p["id"].as_i64().expect("id");
        assert_eq!(
            p["quantity"].as_i64(),
            sums.get(&id).copied(),
            "count of #{id} differs from its ledger"
        );
    }
}

#[test]
fn every_command_has_help_with_an_example() {
    let b = Bench::new();
    for cmd in [
        "init", "add", "take", "recount", "list", "show", "import", "export",
    ] {
        b.run(&[cmd, "--help"]).ok().stdout_has("Example");
    }
}

#[test]
fn sample_stock_is_the_promised_size() {
    // Invented demo data (sample-stock/README.md); sizes as promised in the brief.
    let drawer = Bench::new().with_sample("bench-drawer.csv");
    let r = rows(&drawer);
    let kind = |k: &str| r.iter().filter(|p| p["kind"] == k).count();
    assert!(
        (55..=65).contains(&kind("resistor")),
        "{}",
        kind("resistor")
    );
    assert!(
        (20..=30).contains(&kind("capacitor")),
        "{}",
        kind("capacitor")
    );
    // The deliberate holes: no 10 kΩ and no 100 kΩ resistor.
    for hole in [1e4, 1e5] {
        assert!(
            !r.iter()
                .any(|p| p["kind"] == "resistor" && p["value"] == hole)
        );
    }
    let cabinet = Bench::new().with_sample("makerspace-cabinet.csv");
    let r = rows(&cabinet);
    let kind = |k: &str| r.iter().filter(|p| p["kind"] == k).count();
    assert!((140..=160).contains(&kind("resistor")));
    assert!((55..=70).contains(&kind("capacitor")));
    assert!(r.iter().any(|p| p["bin"] == "A1") && r.iter().any(|p| p["bin"] == "F8"));
    assert!(r.iter().filter(|p| !p["low_stock"].is_null()).count() >= 10);
    assert!(repo_path("sample-stock/README.md").exists());
}

#[test]
fn a_marking_read_off_the_part_carries_its_tolerance() {
    let b = Bench::new();
    // IEC 60062 colour code: yellow 4, violet 7, red ×100, gold ±5 % → 4.7 kΩ ±5 %.
    b.run(&["add", "yellow-violet-red-gold", "--qty", "3"])
        .ok()
        .stdout_has("4.7 kΩ 5%");
    // IEC 60062 capacitor code with letter: 104 = 10·10^4 pF = 100 nF, K = ±10 %.
    b.run(&["add", "104K", "--qty", "3", "--kind", "capacitor"])
        .ok()
        .stdout_has("100 nF 10%");
    // An explicit --tol wins over the marking.
    b.run(&["add", "yellow-violet-red-gold", "--qty", "1", "--tol", "1%"])
        .ok()
        .stdout_has("4.7 kΩ 1%");
}

#[test]
fn a_large_import_streams_and_refuses_a_bad_row_near_the_end_whole() {
    let b = Bench::new();
    b.run(&["add", "4.7k", "--qty", "5", "--bin", "A1"]).ok();
    let before = rows(&b);
    // 20 000 invented rows, one piece each in its own bin; spreadsheet row 19 998 (header =
    // row 1) has a quantity that is not a number.
    let mut csv = String::from("value,bin,quantity\n");
    for i in 0..20_000 {
        if i + 2 == 19_998 {
            csv.push_str(&format!("10k,Z{i},lots\n"));
        } else {
            csv.push_str(&format!("10k,Z{i},1\n"));
        }
    }
    let path = b.write("large.csv", &csv);
    let path = path.to_str().expect("utf-8");
    let r = b.run(&["import", path]).code(2).stderr_has("row 19998");
    assert!(r.stderr.contains("quantity"), "{}", r.stderr);
    // Nothing of the file was kept, not even the 19 996 good rows before the bad one.
    assert_eq!(rows(&b), before);
    b.run(&["import", "--dry-run", path])
        .code(2)
        .stderr_has("row 19998");
    // Fixed, the whole file goes in, each row in its own bin.
    let fixed = b.write("fixed.csv", &csv.replace(",lots\n", ",1\n"));
    b.run(&["import", fixed.to_str().expect("utf-8")])
        .ok()
        .stdout_has("20000 new, 0 topped up");
    assert_eq!(rows(&b).len(), 20_001);
}

/// `count` invented JSON elements, one piece each in its own bin; `bad` replaces element `at`
/// (from 1).
fn json_stock(count: usize, at: usize, bad: &str) -> String {
    let mut json = String::from("\u{feff}[\n");
    for i in 1..=count {
        if i > 1 {
            json.push_str(",\n");
        }
        if i == at {
            json.push_str(bad);
        } else {
            json.push_str(&format!(
                r#"{{"value":"10k","bin":"Z{i}","quantity":1,"low":null}}"#
            ));
        }
    }
    json.push_str("\n]\n");
    json
}

#[test]
fn a_large_json_import_refuses_a_bad_element_near_the_end_whole_with_its_number() {
    let b = Bench::new();
    b.run(&["add", "4.7k", "--qty", "5", "--bin", "A1"]).ok();
    let before = rows(&b);
    // Element 19 990 of 20 000 names `quantity` twice: refused with its element number and
    // the line where reading stopped, nothing of the 19 989 good elements before it kept.
    let dup = r#"{"value":"10k","bin":"Q","quantity":1,"quantity":500}"#;
    let path = b.write("dup.json", &json_stock(20_000, 19_990, dup));
    b.run(&["import", path.to_str().expect("utf-8")])
        .code(2)
        .stderr_has("row 19990: not valid JSON")
        .stderr_has("appears twice")
        .stderr_has("line 19991");
    assert_eq!(rows(&b), before);
    b.run(&["import", "--dry-run", path.to_str().expect("utf-8")])
        .code(2)
        .stderr_has("row 19990");
    // Broken JSON (a missing comma) is cited the same way.
    let broken = r#"{"value":"10k","bin":"Q" "quantity":1}"#;
    let path = b.write("broken.json", &json_stock(20_000, 19_995, broken));
    b.run(&["import", path.to_str().expect("utf-8")])
        .code(2)
        .stderr_has("row 19995: not valid JSON");
    assert_eq!(rows(&b), before);
    // An element that is not a part is its row's problem; the rows after it are still checked.
    let path = b.write("odd.json", &json_stock(20_000, 19_996, r#""a string""#));
    let r = b.run(&["import", path.to_str().expect("utf-8")]).code(2);
    assert!(
        r.stderr.contains("row 19996: expected an object"),
        "{}",
        r.stderr
    );
    assert!(r.stderr.contains("(1 problem)"), "{}", r.stderr);
    assert_eq!(rows(&b), before);
    // Fixed, all 20 000 go in (with the byte-order mark), and the report keeps the first rows
    // only, counting the rest.
    let good = r#"{"value":"10k","bin":"Q","quantity":1}"#;
    let path = b.write("good.json", &json_stock(20_000, 19_990, good));
    let r = b
        .run(&["import", path.to_str().expect("utf-8")])
        .ok()
        .stdout_has("imported 20000 rows from good.json: 20000 new, 0 topped up")
        .stdout_has("… and 19960 more rows");
    let start: String = r.stdout.chars().take(400).collect();
    assert_eq!(r.stdout.lines().count(), 42, "{start}");
    assert_eq!(rows(&b).len(), 20_001);
}

/// `onhand import -` fed by this process: `first` is written and then, with standard input still
/// open, `wait` decides when to write `rest` and close it.
fn import_stdin_in_two_parts(
    b: &Bench,
    extra: &[&str],
    first: &str,
    rest: &str,
    mut wait: impl FnMut(&mut std::process::Child),
) -> std::process::Output {
    use std::io::Write as _;
    let mut child = std::process::Command::new(assert_cmd::cargo::cargo_bin!("onhand"))
        .env_remove("ONHAND_DB")
        .env("ONHAND_USER", "tester")
        .env("NO_COLOR", "1")
        .arg("--db")
        .arg(b.db())
        .arg("import")
        .args(extra)
        .arg("-")
        .stdin(std::process::Stdio::piped())
        .stdout(std::process::Stdio::piped())
        .stderr(std::process::Stdio::piped())
        .spawn()
        .expect("spawn import -");
    let mut input = child.stdin.take().expect("stdin");
    input
        .write_all(first.as_bytes())
        .expect("write the first part");
    input.flush().expect("flush");
    wait(&mut child);
    input.write_all(rest.as_bytes()).expect("write the rest");
    drop(input);
    child.wait_with_output().expect("wait")
}

/// Wait (at most 120 s, polling) until the store's WAL has grown by more than 1 MiB: rows of
/// this import written, uncommitted, while its input is still open.
fn until_the_wal_grows(b: &Bench) -> impl FnMut(&mut std::process::Child) + '_ {
    let wal = b.path("stock.db-wal");
    let wal_before = std::fs::metadata(&wal).map_or(0, |m| m.len());
    move |child: &mut std::process::Child| {
        let deadline = std::time::Instant::now() + std::time::Duration::from_secs(120);
        while std::fs::metadata(&wal).map_or(0, |m| m.len()) <= wal_before + (1 << 20) {
            assert!(
                child.try_wait().expect("poll").is_none(),
                "the import ended before its input did"
            );
            assert!(
                std::time::Instant::now() < deadline,
                "nothing was written while standard input was still open: it is read whole"
            );
            std::thread::sleep(std::time::Duration::from_millis(20));
        }
    }
}

#[test]
fn standard_input_is_imported_row_by_row_and_still_all_or_nothing() {
    let b = Bench::new();
    b.run(&["add", "4.7k", "--qty", "5", "--bin", "A1"]).ok();
    let before = rows(&b);
    // 30 000 invented rows go in while standard input stays open; the last row (spreadsheet
    // row 30 002, header = row 1) is bad, so none of them is kept.
    let mut first = String::from("value,bin,quantity\n");
    for i in 0..30_000 {
        first.push_str(&format!("10k,Z{i},1\n"));
    }
    let out = import_stdin_in_two_parts(&b, &[], &first, "10k,Z,lots\n", until_the_wal_grows(&b));
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{stderr}");
    assert!(
        stderr.contains("row 30002, column \"quantity\""),
        "{stderr}"
    );
    assert_eq!(rows(&b), before);
    // JSON on standard input streams the same way (a new store, so the WAL starts small).
    let b = Bench::new();
    let json = json_stock(30_000, 0, "");
    let (head, tail) = json.split_at(json.len() - 3);
    let out = import_stdin_in_two_parts(
        &b,
        &["--format", "json"],
        head,
        tail,
        until_the_wal_grows(&b),
    );
    assert!(
        out.status.success(),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(
        String::from_utf8_lossy(&out.stdout).contains("imported 30000 rows from stdin"),
        "{}",
        String::from_utf8_lossy(&out.stdout)
    );
    assert_eq!(rows(&b).len(), 30_000);
}

#[test]
fn a_csv_without_line_breaks_or_with_a_huge_header_is_refused_briefly() {
    let b = Bench::new();
    // 2 MiB in one line: refused at the record cap, not read whole, and not echoed back.
    let line = b.write("one-line.csv", &"value".repeat(400_000));
    let r = b
        .run(&["import", line.to_str().expect("utf-8")])
        .code(2)
        .stderr_has("longer than 1024 KiB");
    assert!(
        r.stderr.len() < 1_000,
        "{} bytes of message",
        r.stderr.len()
    );
    // A long unknown column name is cited by an excerpt.
    let head = b.write(
        "head.csv",
        &format!("value,quantity,{}\n1k,1,x\n", "c".repeat(100_000)),
    );
    let r = b
        .run(&["import", head.to_str().expect("utf-8")])
        .code(2)
        .stderr_has("unknown column");
    assert!(
        r.stderr.len() < 1_000,
        "{} bytes of message",
        r.stderr.len()
    );
    // The same from standard input.
    let mut cmd = crate::util::onhand();
    cmd.arg("--db")
        .arg(b.db())
        .args(["--user", "tester", "import", "-"])
        .write_stdin("value".repeat(400_000));
    let r = crate::util::Run::from(cmd)
        .code(2)
        .stderr_has("longer than 1024 KiB");
    assert!(
        r.stderr.len() < 1_000,
        "{} bytes of message",
        r.stderr.len()
    );
    assert!(rows(&b).is_empty());
}
