//! The ledger as the store's memory, end to end: plans held unit by unit (and idempotently),
//! the log across the store with its filters and formats, undo by compensating entries, row
//! care (refill by number, remove, merge), backup during concurrent writes and restore, and the
//! class scenario with a hand-computed result.

use crate::util::{Bench, onhand};
use serde_json::Value as Json;
use std::collections::BTreeMap;

/// An invented class cabinet (demo data): the kit's one-shot is 100 kΩ · 1 µF, t = ln 3 · R · C
/// = 109.86 ms (common practice: t ≈ 1.1 · R · C), so each unit takes exactly one of each.
/// The 1 kΩ row is for concurrent takes that have nothing to do with the kit.
const CABINET: &str = "\
kind,value,tolerance,technology,volts,bin,quantity
resistor,100k,1%,metal_film,,A1,30
capacitor,1u,5%,film,63,C1,30
resistor,1k,1%,metal_film,,A2,100
";

const KIT: &str = r#"
name = "class kit"
units = 24
tolerance = "2%"

[[stage]]
name = "debounce"
form = "pulse"
width = "109.86 ms"
"#;

fn cabinet() -> (Bench, String) {
    let b = Bench::new();
    let csv = b.write("cabinet.csv", CABINET);
    b.run(&["import", csv.to_str().expect("utf-8")]).ok();
    let kit = b.write("kit.toml", KIT);
    (b, kit.to_str().expect("utf-8").to_string())
}

/// `onhand --db <bench db> ARGS…` as the user WHO (`ONHAND_USER`).
fn run_as(b: &Bench, who: &str, args: &[&str]) -> crate::util::Run {
    let mut cmd = onhand();
    cmd.arg("--db")
        .arg(b.db())
        .env("ONHAND_USER", who)
        .args(args);
    crate::util::Run::from(cmd)
}

/// Row id of the row in `bin`.
fn row_in(b: &Bench, bin: &str) -> i64 {
    b.run(&["--json", "list", "--bin", bin]).ok().json()[0]["id"]
        .as_i64()
        .expect("row id")
}

/// (on the shelf, held) of the row in `bin`.
fn counts_in(b: &Bench, bin: &str) -> (i64, i64) {
    let j = b.run(&["--json", "list", "--bin", bin]).ok().json();
    (
        j[0]["quantity"].as_i64().expect("quantity"),
        j[0]["held"].as_i64().expect("held"),
    )
}

/// Live holds of a plan as member → pieces.
fn unit_holds(b: &Bench, plan: &str) -> BTreeMap<String, i64> {
    let mut out = BTreeMap::new();
    for h in b
        .run(&["--json", "holds", "--plan", plan])
        .ok()
        .json()
        .as_array()
        .expect("holds")
    {
        *out.entry(h["member"].as_str().expect("member").to_string())
            .or_insert(0) += h["quantity"].as_i64().expect("quantity");
    }
    out
}

/// Counts re-derived from a ledger: part id → (on the shelf, held), hold id → pieces.
#[derive(Debug, PartialEq, Eq)]
pub struct Derived {
    pub parts: BTreeMap<i64, (i64, i64)>,
    pub holds: BTreeMap<i64, i64>,
}

/// Every count re-derives from the ledger, read straight from a database file (removed rows
/// included): each part's shelf and held counts are the running sums of its entries (matching
/// every `*_after`), and each hold is the sum of the held deltas that name it.
pub fn re_derive(db: &std::path::Path) -> Derived {
    let conn = rusqlite::Connection::open(db).expect("open db");
    let mut parts: BTreeMap<i64, (i64, i64)> = BTreeMap::new();
    let mut holds: BTreeMap<i64, i64> = BTreeMap::new();
    let mut stmt = conn
        .prepare(
            "SELECT part_id, delta, quantity_after, held_delta, held_after, hold_id FROM ledger \
             ORDER BY id",
        )
        .expect("prepare");
    let rows = stmt
        .query_map([], |r| {
            Ok((
                r.get::<_, i64>(0)?,
                r.get::<_, i64>(1)?,
                r.get::<_, i64>(2)?,
                r.get::<_, i64>(3)?,
                r.get::<_, i64>(4)?,
                r.get::<_, Option<i64>>(5)?,
            ))
        })
        .expect("query");
    for row in rows {
        let (part, d, after, hd, hafter, hold) = row.expect("row");
        let e = parts.entry(part).or_insert((0, 0));
        e.0 += d;
        e.1 += hd;
        assert_eq!(*e, (after, hafter), "ledger of #{part} does not add up");
        if let Some(h) = hold {
            *holds.entry(h).or_insert(0) += hd;
        }
    }
    let mut stmt = conn
        .prepare(
            "SELECT id, quantity, (SELECT COALESCE(SUM(quantity), 0) FROM hold \
             WHERE part_id = part.id) FROM part",
        )
        .expect("prepare");
    let stored: Vec<(i64, i64, i64)> = stmt
        .query_map([], |r| Ok((r.get(0)?, r.get(1)?, r.get(2)?)))
        .expect("query")
        .collect::<Result<_, _>>()
        .expect("rows");
    for (id, q, h) in &stored {
        assert_eq!(parts.get(id).copied().unwrap_or((0, 0)), (*q, *h), "#{id}");
    }
    let mut stmt = conn
        .prepare("SELECT id, quantity FROM hold")
        .expect("prepare");
    let stored_holds: Vec<(i64, i64)> = stmt
        .query_map([], |r| Ok((r.get(0)?, r.get(1)?)))
        .expect("query")
        .collect::<Result<_, _>>()
        .expect("rows");
    for (id, q) in stored_holds {
        assert_eq!(holds.get(&id).copied().unwrap_or(0), q, "hold #{id}");
    }
    Derived { parts, holds }
}

#[test]
fn plan_hold_twice_holds_one_kit_set_and_use_takes_exactly_it() {
    // Failed before: the second `plan --hold` counted the plan's own holds as taken, said
    // "can build 12 of 18" and held 24 more pieces; `use` then took 60 pieces for 18 kits.
    let (b, kit) = cabinet();
    b.run(&["plan", &kit, "--units", "18", "--hold"]).ok();
    assert_eq!(counts_in(&b, "A1"), (30, 18));
    let again = b
        .run(&["--json", "plan", &kit, "--units", "18", "--hold"])
        .ok()
        .json();
    assert_eq!(again["built"], 18, "the plan sees its own holds: {again}");
    assert_eq!(counts_in(&b, "A1"), (30, 18), "nothing held twice");
    b.run(&["plan", &kit, "--units", "18", "--hold"])
        .ok()
        .stdout_has("already holds exactly this: nothing changed");
    // A second member planning the same plan later holds nothing more either.
    run_as(&b, "ben", &["plan", &kit, "--units", "18", "--hold"]).ok();
    assert_eq!(counts_in(&b, "C1"), (30, 18));
    // Growing the plan holds only the missing units.
    let grown = b
        .run(&["--json", "plan", &kit, "--units", "20", "--hold"])
        .ok()
        .json();
    let moved: i64 = grown["held"]["lines"]
        .as_array()
        .expect("lines")
        .iter()
        .map(|l| l["held_delta"].as_i64().expect("delta"))
        .sum();
    assert_eq!(
        moved, 4,
        "units 19 and 20: one resistor and one capacitor each"
    );
    let used = b.run(&["--json", "use", "--plan", "class kit"]).ok().json();
    let pieces: i64 = used["lines"]
        .as_array()
        .expect("lines")
        .iter()
        .map(|l| -l["quantity_delta"].as_i64().expect("delta"))
        .sum();
    assert_eq!(pieces, 40, "exactly one kit set for 20 units");
    assert_eq!(counts_in(&b, "A1"), (10, 0));
    re_derive(&b.db());
}

#[test]
fn a_held_plan_is_used_and_released_unit_by_unit_and_the_ledger_names_the_units() {
    let (b, kit) = cabinet();
    b.run(&["plan", &kit, "--units", "6", "--hold"]).ok();
    let units = unit_holds(&b, "class kit");
    assert_eq!(units.len(), 6, "{units:?}");
    assert_eq!(
        units.get("unit 1"),
        Some(&2),
        "one resistor and one capacitor"
    );
    b.run(&["use", "--plan", "class kit", "--units", "2"])
        .ok()
        .stdout_has("built units 1–2 of plan \"class kit\"");
    b.run(&["release", "--plan", "class kit", "--units", "1"])
        .ok()
        .stdout_has("released unit 6");
    let left: Vec<String> = unit_holds(&b, "class kit").into_keys().collect();
    assert_eq!(left, vec!["unit 3", "unit 4", "unit 5"]);
    assert_eq!(counts_in(&b, "A1"), (28, 3));
    let log = b
        .run(&["--json", "log", "--plan", "class kit", "--member", "unit 2"])
        .ok()
        .json();
    let entries = log.as_array().expect("entries");
    // Held (2 entries: resistor and capacitor), then used (2 entries).
    assert_eq!(entries.len(), 4, "{log}");
    assert!(entries.iter().all(|e| e["member"] == "unit 2"));
    assert!(
        entries[3]["why"]
            .as_str()
            .is_some_and(|w| w.ends_with(": unit 2")),
        "{log}"
    );
    let err = b
        .run(&["use", "--plan", "class kit", "--units", "4"])
        .code(2);
    assert!(
        err.stderr.contains("holds 3 (units 3–5), cannot use 4"),
        "{}",
        err.stderr
    );
    // Units already built keep their numbers when the plan is held again.
    b.run(&["plan", &kit, "--units", "6", "--hold"]).ok();
    let again: Vec<String> = unit_holds(&b, "class kit").into_keys().collect();
    assert_eq!(again, vec!["unit 3", "unit 4", "unit 5", "unit 6"]);
    re_derive(&b.db());
}

#[test]
fn old_holds_are_listed_as_stale() {
    let (b, _) = cabinet();
    b.run(&["hold", "--plan", "old", "100k=2"]).ok();
    b.run(&["hold", "--plan", "new", "1u=1"]).ok();
    {
        let conn = rusqlite::Connection::open(b.db()).expect("db");
        conn.execute(
            "UPDATE hold SET created_at = strftime('%Y-%m-%dT%H:%M:%fZ', 'now', '-20 days') \
             WHERE plan = 'old'",
            [],
        )
        .expect("age the hold");
    }
    let stale = b.run(&["--json", "holds", "--stale"]).ok().json();
    let plans: Vec<&str> = stale
        .as_array()
        .expect("holds")
        .iter()
        .map(|h| h["plan"].as_str().expect("plan"))
        .collect();
    assert_eq!(plans, vec!["old"], "default age 14 days");
    assert_eq!(stale[0]["stale"], true);
    let none = b.run(&["--json", "holds", "--stale", "30d"]).ok().json();
    assert_eq!(none.as_array().map(Vec::len), Some(0));
    b.run(&["holds"])
        .ok()
        .stdout_has("stale")
        .stdout_has("1 stale (made 14 days ago or earlier)");
    b.run(&["holds", "--stale", "soon"])
        .code(2)
        .stderr_has("cannot read \"soon\" as an age");
}

#[test]
fn log_filters_formats_and_local_time() {
    let (b, _) = cabinet();
    let r = row_in(&b, "A1");
    run_as(
        &b,
        "ana",
        &["take", "100k", "--qty", "2", "--why", "repair: organ"],
    )
    .ok();
    run_as(
        &b,
        "ben",
        &["take", "1u", "--qty", "1", "--why", "=HYPERLINK(\"x\")"],
    )
    .ok();
    let all = b.run(&["--json", "log"]).ok().json();
    assert_eq!(
        all.as_array().map(Vec::len),
        Some(5),
        "3 import rows + 2 takes"
    );
    let ana = b.run(&["--json", "log", "--who", "ana"]).ok().json();
    assert_eq!(ana.as_array().map(Vec::len), Some(1));
    assert_eq!(ana[0]["delta"], -2);
    assert_eq!(ana[0]["part_id"], r);
    let why = b.run(&["--json", "log", "--why", "ORGAN"]).ok().json();
    assert_eq!(why.as_array().map(Vec::len), Some(1));
    let part = b
        .run(&["--json", "log", "--part", &format!("#{r}")])
        .ok()
        .json();
    assert_eq!(part.as_array().map(Vec::len), Some(2), "import and take");
    let by_value = b.run(&["--json", "log", "--part", "1u"]).ok().json();
    assert_eq!(by_value.as_array().map(Vec::len), Some(2));
    let future = b
        .run(&["--json", "log", "--since", "2999-01-01"])
        .ok()
        .json();
    assert_eq!(future.as_array().map(Vec::len), Some(0));
    let past = b
        .run(&["--json", "log", "--until", "2000-01-01"])
        .ok()
        .json();
    assert_eq!(past.as_array().map(Vec::len), Some(0));
    let today = b
        .run(&["--json", "log", "--since", "1h", "--last", "1"])
        .ok()
        .json();
    assert_eq!(today[0]["who"], "ben");
    // Stored in UTC, shown in local time: a zone 9 h east of UTC (POSIX TZ, no tz database
    // needed) shows the same entry 9 hours later.
    let at = |tz: &str| {
        let mut cmd = onhand();
        cmd.env("TZ", tz)
            .arg("--db")
            .arg(b.db())
            .args(["--json", "log", "--last", "1"]);
        let j = crate::util::Run::from(cmd).ok().json();
        (
            j[0]["at"].as_str().expect("utc").to_string(),
            j[0]["local_time"].as_str().expect("local").to_string(),
        )
    };
    let (utc_a, in_utc) = at("UTC0");
    let (utc_b, in_east) = at("XST-9");
    assert_eq!(utc_a, utc_b, "the stored time does not move");
    let hours = |t: &str| -> i64 { t[11..13].parse().expect("hour") };
    assert_eq!(
        (hours(&in_utc) + 9) % 24,
        hours(&in_east),
        "{in_utc} / {in_east}"
    );
    assert_eq!(
        in_utc,
        utc_a[..19].replace('T', " "),
        "in UTC, local time is the stored time"
    );
    // Text and CSV.
    b.run(&["log", "--who", "ana"])
        .ok()
        .stdout_has("repair: organ")
        .stdout_has("-2 → 28")
        .stdout_has("1 entry: 0 pieces in, 2 out");
    let csv = b
        .run(&["log", "--format", "csv", "--who", "ben"])
        .ok()
        .stdout;
    let mut lines = csv.lines();
    assert!(
        lines
            .next()
            .is_some_and(|h| h.starts_with("entry,change,local_time,utc,who"))
    );
    let row = lines.next().expect("one row");
    assert!(row.contains("'=HYPERLINK"), "formula neutralised: {row}");
    let out = b.path("log.csv");
    b.run(&[
        "log",
        "--format",
        "csv",
        "--out",
        out.to_str().expect("utf-8"),
    ])
    .ok()
    .stdout_has("wrote 5 ledger entries");
    assert_eq!(
        std::fs::read_to_string(&out).expect("csv").lines().count(),
        6
    );
    // The shared writer never writes onto the database.
    b.run(&["log", "--out", b.db().to_str().expect("utf-8")])
        .code(2)
        .stderr_has("is the stock database");
    b.run(&["log", "--since", "someday"])
        .code(2)
        .stderr_has("cannot read \"someday\" as a time");
}

#[test]
fn undo_reverts_a_mistaken_take_and_add_by_row_number_refills_that_row() {
    let (b, _) = cabinet();
    let r = row_in(&b, "A1");
    run_as(&b, "ben", &["take", "100k", "--qty", "3", "--why", "oops"]).ok();
    run_as(&b, "ana", &["take", "100k", "--qty", "1"]).ok();
    run_as(&b, "ben", &["undo", "--dry-run"])
        .ok()
        .stdout_has("dry run, nothing written — would undo change")
        .stdout_has("+3 on the shelf");
    assert_eq!(counts_in(&b, "A1"), (26, 0), "dry run writes nothing");
    let u = run_as(&b, "ben", &["--json", "undo"]).ok().json();
    assert_eq!(u["why"], "oops");
    assert_eq!(
        counts_in(&b, "A1"),
        (29, 0),
        "ben's take is back, ana's is not"
    );
    run_as(&b, "ben", &["undo"])
        .code(2)
        .stderr_has("ben has no change left to undo");
    let undo_entry = b.run(&["--json", "log", "--last", "1"]).ok().json();
    assert_eq!(undo_entry[0]["who"], "ben");
    assert_eq!(undo_entry[0]["delta"], 3);
    let undone = undo_entry[0]["undoes"].as_i64().expect("undoes");
    b.run(&["undo", &undone.to_string()])
        .code(2)
        .stderr_has("already undone");
    // The ledger kept all of it: import, two takes, the undo.
    let entries = b
        .run(&["--json", "log", "--part", &format!("#{r}")])
        .ok()
        .json();
    assert_eq!(entries.as_array().map(Vec::len), Some(4));
    // A take from the bin-A1 row, then `add 100k` without the bin would make a new row;
    // `add '#N'` refills the very row.
    b.run(&["take", &format!("#{r}"), "--qty", "2"]).ok();
    b.run(&["add", &format!("#{r}"), "--qty", "2"])
        .ok()
        .stdout_has("added 2 to");
    assert_eq!(counts_in(&b, "A1"), (29, 0));
    assert_eq!(
        b.run(&["--json", "list"])
            .ok()
            .json()
            .as_array()
            .map(Vec::len),
        Some(3),
        "no new row"
    );
    b.run(&["add", &format!("#{r}"), "--qty", "1", "--bin", "B9"])
        .code(2)
        .stderr_has("a row number names the part already");
    b.run(&["add", "#999", "--qty", "1"])
        .code(2)
        .stderr_has("no part #999");
    re_derive(&b.db());
}

#[test]
fn rows_are_removed_only_when_empty_and_merged_with_their_history() {
    let b = Bench::new();
    b.run(&["add", "4.7k", "--qty", "5", "--bin", "A3"]).ok();
    b.run(&["add", "4.7k", "--qty", "2", "--bin", "B1"]).ok();
    let a3 = row_in(&b, "A3");
    let b1 = row_in(&b, "B1");
    b.run(&["hold", "--plan", "amp", &format!("#{b1}=1")]).ok();
    b.run(&["remove", &format!("#{a3}")])
        .code(2)
        .stderr_has("only an empty row with no holds can be removed");
    b.run(&["merge", &format!("#{b1}"), "--into", &format!("#{a3}")])
        .ok()
        .stdout_has("2 pieces moved, now 7 on the shelf, 1 held")
        .stdout_has("hold moved: 1 for plan \"amp\"");
    let rows = b.run(&["--json", "list"]).ok().json();
    assert_eq!(rows.as_array().map(Vec::len), Some(1), "{rows}");
    assert_eq!(counts_in(&b, "A3"), (7, 1));
    // B1's history stays readable.
    let hist = b
        .run(&["--json", "log", "--part", &format!("#{b1}")])
        .ok()
        .json();
    assert!(hist.as_array().map(Vec::len) >= Some(3), "{hist}");
    // Undo of the merge brings the row back with its pieces and its hold.
    b.run(&["undo"]).ok();
    assert_eq!(counts_in(&b, "B1"), (2, 1));
    assert_eq!(counts_in(&b, "A3"), (5, 0));
    b.run(&["release", "--plan", "amp"]).ok();
    b.run(&["take", &format!("#{b1}"), "--qty", "2"]).ok();
    b.run(&["remove", &format!("#{b1}")])
        .ok()
        .stdout_has("removed row");
    assert_eq!(
        b.run(&["--json", "list"])
            .ok()
            .json()
            .as_array()
            .map(Vec::len),
        Some(1)
    );
    b.run(&["add", "10n", "--qty", "1", "--bin", "C1"]).ok();
    let c1 = row_in(&b, "C1");
    b.run(&["merge", &format!("#{c1}"), "--into", &format!("#{a3}")])
        .code(2)
        .stderr_has("are not the same part");
    re_derive(&b.db());
}

/// Start `n` processes, each taking one piece from `row` `times` times (bounded), without
/// waiting for them.
fn concurrent_takes(b: &Bench, row: i64, n: usize, times: usize) -> Vec<std::process::Child> {
    (0..n)
        .map(|i| {
            let script = format!(
                "i=0; while [ $i -lt {times} ]; do \"$0\" --db \"$1\" --user taker{i} take '#{row}' \
                 --why concurrent >/dev/null || exit 1; i=$((i+1)); done"
            );
            std::process::Command::new("sh")
                .arg("-c")
                .arg(script)
                .arg(assert_cmd::cargo::cargo_bin!("onhand"))
                .arg(b.db())
                .env_remove("ONHAND_DB")
                .spawn()
                .expect("spawn a taker")
        })
        .collect()
}

#[test]
fn backup_during_concurrent_takes_is_consistent_and_restores() {
    let (b, _) = cabinet();
    let k = row_in(&b, "A2");
    let takers = concurrent_takes(&b, k, 3, 8);
    let file = b.path("copy.db");
    b.run(&["backup", file.to_str().expect("utf-8")])
        .ok()
        .stdout_has("backed up the store to");
    for mut t in takers {
        assert!(t.wait().expect("taker").success(), "every take succeeds");
    }
    assert_eq!(counts_in(&b, "A2"), (76, 0), "3 × 8 pieces taken");
    // The copy is one snapshot: its counts re-derive from its own ledger, and its 1 kΩ count is
    // 100 less the takes its ledger holds.
    let in_copy = re_derive(&file);
    let conn = rusqlite::Connection::open(&file).expect("copy");
    let takes: i64 = conn
        .query_row(
            "SELECT COUNT(*) FROM ledger WHERE part_id = ?1 AND delta = -1",
            [k],
            |r| r.get(0),
        )
        .expect("count");
    drop(conn);
    assert_eq!(in_copy.parts.get(&k), Some(&(100 - takes, 0)));
    assert!(
        !b.path("copy.db-wal").exists(),
        "a single self-contained file"
    );
    // Never over an existing file, never onto the database.
    b.run(&["backup", file.to_str().expect("utf-8")])
        .code(2)
        .stderr_has("already exists");
    b.run(&["backup", b.db().to_str().expect("utf-8")])
        .code(2)
        .stderr_has("is the stock database");
    b.run(&["restore", file.to_str().expect("utf-8"), "--dry-run"])
        .ok()
        .stdout_has("passes its checks");
    assert_eq!(counts_in(&b, "A2"), (76, 0), "a dry run changes nothing");
    b.run(&["restore", file.to_str().expect("utf-8")])
        .ok()
        .stdout_has("restored the store from");
    assert_eq!(counts_in(&b, "A2"), (100 - takes, 0));
    assert_eq!(re_derive(&b.db()), in_copy);
    // The restored store works as before.
    b.run(&["take", "1k", "--qty", "1"]).ok();
}

#[test]
fn bad_backups_are_refused_and_change_nothing() {
    let (b, _) = cabinet();
    let before = b.run(&[
        "--json",
        "backup",
        b.path("first.json").to_str().expect("utf-8"),
    ]);
    before.ok();
    let junk = b.write("junk.db", "this is not a database at all, just text");
    b.run(&["restore", junk.to_str().expect("utf-8")])
        .code(2)
        .stderr_has("neither a SQLite backup nor a full JSON export");
    let newer = b.path("newer.db");
    {
        let c = rusqlite::Connection::open(&newer).expect("c");
        c.execute_batch("CREATE TABLE x (y); PRAGMA user_version = 99;")
            .expect("v");
    }
    b.run(&["restore", newer.to_str().expect("utf-8")])
        .code(2)
        .stderr_has("schema version 99");
    // A backup whose counts do not re-derive from its ledger is refused.
    let tampered = b.path("tampered.db");
    b.run(&["backup", tampered.to_str().expect("utf-8")]).ok();
    {
        let c = rusqlite::Connection::open(&tampered).expect("c");
        c.execute(
            "UPDATE part SET quantity = quantity + 5 WHERE bin = 'A1'",
            [],
        )
        .expect("tamper");
    }
    b.run(&["restore", tampered.to_str().expect("utf-8")])
        .code(2)
        .stderr_has("but its ledger adds up to");
    b.run(&["restore", b.db().to_str().expect("utf-8")])
        .code(2)
        .stderr_has("is the stock database itself");
    assert_eq!(counts_in(&b, "A1"), (30, 0));
}

#[test]
fn full_json_export_carries_parts_holds_and_ledger_and_imports_to_the_same_state() {
    let (b, kit) = cabinet();
    b.run(&["plan", &kit, "--units", "3", "--hold"]).ok();
    b.run(&["take", "1k", "--qty", "4", "--why", "spares"]).ok();
    let json = b.path("full.json");
    b.run(&["backup", json.to_str().expect("utf-8")]).ok();
    let full: Json =
        serde_json::from_str(&std::fs::read_to_string(&json).expect("read")).expect("json");
    assert_eq!(full["format"], "onhand full export");
    assert_eq!(full["parts"].as_array().map(Vec::len), Some(3));
    assert_eq!(
        full["holds"].as_array().map(Vec::len),
        Some(6),
        "3 units × 2 parts"
    );
    let state = |b: &Bench| {
        (
            b.run(&["--json", "list"]).ok().stdout,
            b.run(&["--json", "holds", "--all"]).ok().json(),
            b.run(&["--json", "log"]).ok().json(),
        )
    };
    let before = state(&b);
    // Change everything, then restore from the JSON.
    b.run(&["use", "--plan", "class kit", "--units", "1"]).ok();
    b.run(&["take", "1k", "--qty", "10"]).ok();
    b.run(&["restore", json.to_str().expect("utf-8")]).ok();
    let after = state(&b);
    assert_eq!(before.0, after.0, "parts");
    assert_eq!(before.2, after.2, "ledger");
    assert_eq!(before.1, after.1, "holds");
    // And into a fresh store: the same state again.
    let other = Bench::new();
    other.run(&["init"]).ok();
    other.run(&["restore", json.to_str().expect("utf-8")]).ok();
    assert_eq!(state(&other).0, before.0);
    assert_eq!(state(&other).2, before.2);
}

#[test]
fn class_scenario_hold_use_release_undo_backup_restore_agree_with_hand_counts() {
    // Hand count (an invented class): 30 × 100 kΩ and 30 × 1 µF; each kit takes one of each.
    //   hold 24 kits          shelf 30, held 24        (each row)
    //   use 5 units           shelf 25, held 19
    //   release 3 units       shelf 25, held 16        (units 22–24 go back)
    //   ben takes 3 × 100 kΩ  shelf 22 (9 were free)   — a mistake
    //   ben undoes it         shelf 25
    //   backup while three others take 1 kΩ pieces, 4 each; restore the backup
    //   → 100 kΩ: 25 on the shelf, 16 held; 1 µF: 25, 16; units 6–21 held; 1 kΩ: 100 − the
    //     takes the backup saw.
    let (b, kit) = cabinet();
    b.run(&["plan", &kit, "--hold"]).ok();
    assert_eq!(counts_in(&b, "A1"), (30, 24));
    b.run(&["use", "--plan", "class kit", "--units", "5"]).ok();
    assert_eq!(counts_in(&b, "A1"), (25, 19));
    b.run(&["release", "--plan", "class kit", "--units", "3"])
        .ok()
        .stdout_has("released units 22–24");
    assert_eq!(counts_in(&b, "C1"), (25, 16));
    run_as(&b, "ben", &["take", "100k", "--qty", "3"]).ok();
    run_as(&b, "ben", &["take", "100k", "--qty", "7"])
        .code(2)
        .stderr_has("only 6 free");
    assert_eq!(counts_in(&b, "A1"), (22, 16));
    run_as(&b, "ben", &["undo"]).ok();
    assert_eq!(counts_in(&b, "A1"), (25, 16));
    let k = row_in(&b, "A2");
    let takers = concurrent_takes(&b, k, 3, 4);
    let file = b.path("class.db");
    b.run(&["backup", file.to_str().expect("utf-8")]).ok();
    for mut t in takers {
        assert!(t.wait().expect("taker").success());
    }
    b.run(&["restore", file.to_str().expect("utf-8")]).ok();
    assert_eq!(counts_in(&b, "A1"), (25, 16));
    assert_eq!(counts_in(&b, "C1"), (25, 16));
    let units: Vec<String> = unit_holds(&b, "class kit").into_keys().collect();
    let want: Vec<String> = (6..=21).map(|u| format!("unit {u}")).collect();
    let mut sorted = want.clone();
    sorted.sort();
    assert_eq!(units, sorted);
    // The log agrees: for the kit rows, uses took 5 and ben's take and its undo cancel.
    let log = b.run(&["--json", "log", "--part", "100k"]).ok().json();
    let entries = log.as_array().expect("entries");
    let sum: i64 = entries
        .iter()
        .map(|e| e["delta"].as_i64().expect("d"))
        .sum();
    assert_eq!(sum, 25);
    let used: i64 = entries
        .iter()
        .filter(|e| {
            e["why"]
                .as_str()
                .is_some_and(|w| w.starts_with("built for"))
        })
        .map(|e| -e["delta"].as_i64().expect("d"))
        .sum();
    assert_eq!(used, 5);
    let ben: Vec<i64> = entries
        .iter()
        .filter(|e| e["who"] == "ben")
        .map(|e| e["delta"].as_i64().expect("d"))
        .collect();
    assert_eq!(ben, vec![-3, 3]);
    let taken_1k: i64 = b
        .run(&["--json", "log", "--part", "1k", "--why", "concurrent"])
        .ok()
        .json()
        .as_array()
        .map_or(0, |a| a.len() as i64);
    assert!(taken_1k <= 12);
    assert_eq!(counts_in(&b, "A2"), (100 - taken_1k, 0));
    re_derive(&b.db());
}

#[test]
fn every_ledger_command_has_help_with_an_example() {
    for cmd in ["log", "undo", "remove", "merge", "backup", "restore"] {
        onhand()
            .args([cmd, "--help"])
            .assert()
            .success()
            .stdout(predicates::str::contains("Examples:"))
            .stdout(predicates::str::contains(format!("onhand {cmd}")));
    }
}

#[test]
fn undo_reverts_a_whole_import_as_one_change() {
    let (b, _) = cabinet();
    b.run(&["undo"])
        .ok()
        .stdout_has("(import cabinet.csv row 2): 3 entries");
    for bin in ["A1", "C1", "A2"] {
        assert_eq!(counts_in(&b, bin), (0, 0), "bin {bin}");
    }
    re_derive(&b.db());
}

#[test]
fn a_backup_from_an_older_schema_is_upgraded_on_the_way_in() {
    // A store file as the first schema wrote it (before holds), used as a backup.
    let (b, _) = cabinet();
    let old = b.path("old.db");
    {
        let conn = rusqlite::Connection::open(&old).expect("old db");
        let v1 = std::fs::read_to_string(crate::util::repo_path(
            "migrations/0001_parts_and_ledger.sql",
        ))
        .expect("0001");
        conn.execute_batch(&v1).expect("apply 0001");
        conn.execute_batch(
            "PRAGMA user_version = 1;
             INSERT INTO part (kind, value, tol_minus_ppb, tol_plus_ppb, technology, bin, quantity)
               VALUES ('resistor', 4700000, 10000000, 10000000, 'metal_film', 'Z9', 7);
             INSERT INTO ledger (part_id, who, why, delta, quantity_after)
               VALUES (1, 'old', 'add', 9, 9), (1, 'old', 'take', -2, 7);",
        )
        .expect("seed v1");
    }
    b.run(&["restore", old.to_str().expect("utf-8")])
        .ok()
        .stdout_has(&format!("({})", crate::util::latest_schema()));
    assert_eq!(counts_in(&b, "Z9"), (7, 0));
    assert_eq!(
        b.run(&["--json", "list"])
            .ok()
            .json()
            .as_array()
            .map(Vec::len),
        Some(1)
    );
    b.run(&["hold", "--plan", "amp", "4.7k=2"]).ok();
    re_derive(&b.db());
}
