//! The command line as one tool: values read off parts (markings, colour bands, diode type
//! numbers), units that must be said, global options, error style, JSON and tables.

use crate::util::{self, Bench};
use serde_json::Value as Json;

fn rows(b: &Bench) -> Vec<Json> {
    match b.run(&["--json", "list"]).ok().json() {
        Json::Array(a) => a,
        other => panic!("list --json is not an array: {other}"),
    }
}

#[test]
fn a_chip_marking_is_read_only_with_the_prefix() {
    // common practice: a three-digit chip code is two digits and the number of zeros; EIA-96
    // code 01 is the first E96 value, 100, and C multiplies by 100 (published EIA-96 letters).
    let b = Bench::new();
    b.run(&["add", "marking:472", "--qty", "10", "--bin", "S1"])
        .ok()
        .stdout_has("4.7 kΩ 5% thick film");
    b.run(&["add", "472", "--qty", "5", "--bin", "S2"])
        .ok()
        .stdout_has("472 Ω 1% metal film");
    b.run(&["add", "marking:01C", "--qty", "5", "--bin", "S3"])
        .ok()
        .stdout_has("10 kΩ 1% thick film");
    b.run(&["add", "marking:4702", "--qty", "5", "--bin", "S4"])
        .ok()
        .stdout_has("47 kΩ 1% thick film");
    let values: Vec<f64> = rows(&b)
        .iter()
        .map(|p| p["value"].as_f64().expect("value"))
        .collect();
    assert_eq!(values, vec![472.0, 4700.0, 10_000.0, 47_000.0]);
    b.run(&["add", "marking:97A", "--qty", "1"])
        .code(2)
        .stderr_has("01 … 96");
    // The help says how a bare number and a marking differ.
    let mut help = util::onhand();
    help.args(["add", "--help"]);
    util::Run::from(help)
        .ok()
        .stdout_has("A bare 472 is")
        .stdout_has("marking:472");
}

#[test]
fn colour_bands_are_carbon_film_with_the_band_tolerance() {
    // common practice: a gold-banded (±5 %) through-hole part is carbon film; a brown-banded
    // (±1 %) five-band part is metal film.
    let b = Bench::new();
    b.run(&["add", "yellow-violet-red-gold", "--qty", "3"])
        .ok()
        .stdout_has("4.7 kΩ 5% carbon film");
    b.run(&["add", "brown-black-black-red-brown", "--qty", "3"])
        .ok()
        .stdout_has("10 kΩ 1% metal film");
    // What the person states still wins.
    b.run(&[
        "add",
        "yellow-violet-red-gold",
        "--qty",
        "1",
        "--tech",
        "metal_film",
        "--bin",
        "X",
    ])
    .ok()
    .stdout_has("4.7 kΩ 5% metal film");
}

#[test]
fn a_diode_is_named_by_its_type_number_and_has_no_tolerance() {
    let b = Bench::new();
    b.run(&["add", "1N4148", "--qty", "30", "--bin", "D1"])
        .ok()
        .stdout_has("1N4148 diode");
    let r = rows(&b);
    assert_eq!(r[0]["kind"], Json::from("diode"));
    let list = b.run(&["list"]).ok();
    let line = list
        .stdout
        .lines()
        .find(|l| l.contains("1N4148"))
        .expect("diode row");
    assert!(
        !line.contains("0%"),
        "a diode's tolerance is not 0%: {line}"
    );
    let cells: Vec<&str> = line.split('\t').collect();
    assert_eq!(cells[3], "-", "{line}");
}

#[test]
fn a_bare_number_is_refused_where_a_time_is_needed() {
    let b = Bench::new().with_sample("bench-drawer.csv");
    b.run(&["reach", "pulse", "--from", "250", "--to", "1s"])
        .code(2)
        .stderr_has("250 what?");
}

#[test]
fn global_options_are_listed_once_in_the_top_help() {
    let top = Bench::new().run(&["--help"]).ok();
    for opt in ["--db", "--json", "--user", "--plain"] {
        assert!(top.stdout.contains(opt), "top help lacks {opt}");
    }
    let add = Bench::new().run(&["add", "--help"]).ok();
    for opt in ["--db", "--json", "--user", "--plain"] {
        assert!(!add.stdout.contains(opt), "add --help repeats {opt}");
    }
    // They still work after the command's name.
    Bench::new().run(&["list", "--json"]).ok().json();
}

#[test]
fn user_is_refused_on_commands_that_change_nothing() {
    let b = Bench::new().with_sample("bench-drawer.csv");
    for args in [
        &["--user", "ana", "list"][..],
        &["list", "--user", "ana"][..],
        &["--user", "ana", "find", "pulse", "10ms"][..],
        &["--user", "ana", "holds"][..],
    ] {
        b.run(args)
            .code(2)
            .stderr_has("--user names who makes a change");
    }
    // On a command that writes, it is who the ledger records.
    b.run(&["--user", "ana", "take", "#1", "--qty", "1"]).ok();
    let log = b.run(&["--json", "log", "--last", "1"]).ok().json();
    assert_eq!(log[0]["who"], "ana", "{log}");
    // From the environment it is fine everywhere (set once in a shell profile).
    let mut cmd = util::onhand();
    cmd.arg("--db")
        .arg(b.db())
        .env("ONHAND_USER", "ana")
        .arg("list");
    crate::util::Run::from(cmd).ok();
}

#[test]
fn errors_share_one_style_and_are_json_under_json() {
    let b = Bench::new().with_sample("bench-drawer.csv");
    // The argument parser's errors and ours start the same way.
    let usage = b.run(&["frobnicate"]).code(2);
    assert!(usage.stderr.starts_with("error: "), "{}", usage.stderr);
    let ours = b.run(&["reach", "pulse", "--from", "250"]).code(2);
    assert!(ours.stderr.starts_with("error: "), "{}", ours.stderr);
    // Under --json: one JSON object on stderr with a code, nothing on stdout.
    for (args, code) in [
        (vec!["--json", "frobnicate"], "usage"),
        (
            vec!["--json", "reach", "pulse", "--from", "250"],
            "bad_value",
        ),
    ] {
        let r = b.run(&args).code(2);
        assert!(r.stdout.is_empty(), "{}", r.stdout);
        let v: Json = serde_json::from_str(r.stderr.trim())
            .unwrap_or_else(|e| panic!("stderr is not JSON ({e}): {}", r.stderr));
        assert_eq!(v["error"]["code"], Json::from(code), "{v}");
        assert_eq!(v["schema"], Json::from(1));
        assert!(
            v["error"]["message"]
                .as_str()
                .is_some_and(|m| !m.is_empty())
        );
    }
}

#[test]
fn completions_into_a_closed_pipe_end_quietly() {
    // `onhand completions fish | head -3`: the reader goes away before the writer is done.
    let mut child = std::process::Command::new(assert_cmd::cargo::cargo_bin!("onhand"))
        .args(["completions", "fish"])
        .stdout(std::process::Stdio::piped())
        .stderr(std::process::Stdio::piped())
        .spawn()
        .expect("spawn");
    drop(child.stdout.take());
    let out = child.wait_with_output().expect("wait");
    assert_eq!(
        out.status.code(),
        Some(0),
        "{}",
        String::from_utf8_lossy(&out.stderr)
    );
    assert!(!String::from_utf8_lossy(&out.stderr).contains("panicked"));
}

#[test]
fn piped_tables_are_tab_separated_and_counts_agree() {
    let b = Bench::new();
    b.run(&["add", "4k7", "--qty", "1", "--bin", "A1"]).ok();
    let list = b.run(&["list"]).ok();
    assert!(!list.stdout.contains('│'), "{}", list.stdout);
    assert!(!list.stdout.contains('\u{1b}'), "no colour when piped");
    assert!(
        list.stdout.starts_with("#\tkind\tvalue\ttol"),
        "{}",
        list.stdout
    );
    assert!(list.stdout.contains("1 row, 1 piece"), "{}", list.stdout);
}

#[test]
fn import_reads_standard_input_and_cites_spreadsheet_rows() {
    let b = Bench::new();
    let mut cmd = util::onhand();
    cmd.arg("--db")
        .arg(b.db())
        .args(["--user", "tester", "import", "-"])
        .write_stdin("value,quantity,bin\n4k7,5,A1\n10k,3,A2\n");
    util::Run::from(cmd)
        .ok()
        .stdout_has("row 2: new")
        .stdout_has("imported 2 rows from stdin");
    assert_eq!(rows(&b).len(), 2);
    // A bad cell is cited by the row a spreadsheet shows: the header is row 1.
    let bad = b.write("bad.csv", "value,quantity\n1k,5\n2k2,lots\n");
    b.run(&["import", bad.to_str().expect("utf-8")])
        .code(2)
        .stderr_has("row 3, column \"quantity\"");
}

#[test]
fn export_honours_json() {
    let b = Bench::new();
    b.run(&["add", "4k7", "--qty", "5"]).ok();
    let v = b.run(&["--json", "export"]).ok().json();
    assert!(v.is_array() || v.is_object(), "{v}");
    let csv = b.run(&["export"]).ok();
    assert!(csv.stdout.starts_with("kind,"), "{}", csv.stdout);
    let file = b.path("out.csv");
    let r = b
        .run(&[
            "--json",
            "export",
            "--format",
            "csv",
            "--out",
            file.to_str().expect("utf-8"),
        ])
        .ok()
        .json();
    assert_eq!(r["exported_rows"], Json::from(1));
    assert!(
        std::fs::read_to_string(&file)
            .expect("file")
            .starts_with("kind,")
    );
}

#[test]
fn buyer_spellings_of_technologies_are_read_the_same_everywhere() {
    // common practice: MKT is polyester film, NP0 is C0G, elko is an aluminium electrolytic.
    let b = Bench::new();
    b.run(&["add", "100n", "--qty", "5", "--tech", "MKT"]).ok();
    b.run(&["add", "100p", "--qty", "5", "--tech", "NP0"]).ok();
    b.run(&["add", "100u", "--qty", "5", "--tech", "elko"]).ok();
    let techs: Vec<String> = rows(&b)
        .iter()
        .map(|p| p["technology"].as_str().expect("tech").to_string())
        .collect();
    assert_eq!(techs, vec!["c0g", "film", "electrolytic"]);
    for (spelling, n) in [("polyester", 1), ("c0g", 1), ("aluminium electrolytic", 1)] {
        let v = b.run(&["--json", "list", "--tech", spelling]).ok().json();
        assert_eq!(v.as_array().map(Vec::len), Some(n), "{spelling}");
    }
    // A diode in an import file needs no kind column either.
    let f = b.write("d.csv", "value,quantity\nBAT85,10\n");
    b.run(&["import", f.to_str().expect("utf-8")]).ok();
    let kinds: Vec<String> = rows(&b)
        .iter()
        .map(|p| p["kind"].as_str().expect("kind").to_string())
        .collect();
    assert!(kinds.contains(&"diode".to_string()), "{kinds:?}");
}

#[test]
fn counts_are_in_words_in_list_and_series() {
    // Issue 12 "Numbers": "1 row", "1 piece", and a range of one value says "1 value".
    let b = Bench::new();
    b.run(&["init"]).ok();
    b.run(&["add", "4.7k", "--qty", "1", "--bin", "A3"]).ok();
    b.run(&["list"]).ok().stdout_has("1 row, 1 piece");
    b.run(&["add", "100n", "--qty", "10"]).ok();
    b.run(&["list"]).ok().stdout_has("2 rows, 11 pieces");
    b.run(&["series", "--table", "E12", "--from", "4.7k", "--to", "5k"])
        .ok()
        .stdout_has(": 1 value\n");
    b.run(&["series", "--table", "E12", "--from", "1k", "--to", "100k"])
        .ok()
        .stdout_has(": 25 values\n");
}

#[test]
fn series_and_list_print_no_scientific_notation() {
    // Issue 12 "Numbers": no `9.9e-7 %` anywhere; a value next to a series member has a tiny
    // error, which is where an exponent would show.
    let b = Bench::new();
    b.run(&["init"]).ok();
    b.run(&["add", "1u", "--qty", "3"]).ok();
    for args in [
        &["series", "4.7001k"][..],
        &["series", "1.00001u", "--capacitor"],
        &["list"],
    ] {
        let out = b.run(args).ok().stdout;
        let sci = out
            .split(|c: char| c.is_whitespace() || c == '\t')
            .find(|w| {
                let w = w.as_bytes();
                (1..w.len().saturating_sub(1)).any(|i| {
                    matches!(w[i], b'e' | b'E')
                        && w[i - 1].is_ascii_digit()
                        && (w[i + 1].is_ascii_digit() || w[i + 1] == b'-')
                })
            });
        assert!(sci.is_none(), "{args:?}: {sci:?}\n{out}");
    }
}
