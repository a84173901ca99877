//! Holds end to end: hold, release and use by hand with the ledger re-deriving every count;
//! refused holds changing nothing; held pieces missing from what designs see and from what
//! `take` may draw; two processes racing for the last pieces; and a database from before holds
//! upgrading cleanly.

use crate::util::{Bench, onhand};
use serde_json::Value as Json;

/// Everything observable about a store: the export, every hold (closed ones too) and the
/// ledger length.
fn snapshot(b: &Bench) -> (String, String, i64) {
    let export = b.run(&["export"]).ok().stdout;
    let holds = b.run(&["--json", "holds", "--all"]).ok().stdout;
    let conn = rusqlite::Connection::open(b.db()).expect("open db");
    let n: i64 = conn
        .query_row("SELECT COUNT(*) FROM ledger", [], |r| r.get(0))
        .expect("count ledger");
    (export, holds, n)
}

/// `list --json` as (id, quantity, held) per row.
fn counts(b: &Bench) -> Vec<(i64, i64, i64)> {
    b.run(&["--json", "list"])
        .ok()
        .json()
        .as_array()
        .expect("array")
        .iter()
        .map(|p| {
            (
                p["id"].as_i64().expect("id"),
                p["quantity"].as_i64().expect("quantity"),
                p["held"].as_i64().expect("held"),
            )
        })
        .collect()
}

/// Re-derive every count from the ledger, straight from the database: each part's quantity is
/// the sum of its deltas and its held count the sum of its held deltas (with the running sums
/// matching every `*_after`), and each hold is the sum of the held deltas that name it.
fn assert_ledger_re_derives(b: &Bench) {
    let derived = crate::ledger::re_derive(&b.db());
    let (parts, holds) = (derived.parts, derived.holds);
    let listed = counts(b);
    assert_eq!(listed.len(), parts.len(), "every row has ledger history");
    for (id, quantity, held) in listed {
        assert_eq!(
            Some(&(quantity, held)),
            parts.get(&id),
            "counts of #{id} differ from the ledger"
        );
    }
    let all = b.run(&["--json", "holds", "--all"]).ok().json();
    let all = all.as_array().expect("array");
    assert_eq!(all.len(), holds.len(), "every hold has ledger history");
    for h in all {
        let id = h["id"].as_i64().expect("id");
        assert_eq!(
            h["quantity"].as_i64(),
            holds.get(&id).copied(),
            "hold #{id}"
        );
    }
}

fn seed() -> Bench {
    let b = Bench::new();
    b.run(&["add", "4.7k", "--qty", "10", "--bin", "A3"]).ok();
    b.run(&["add", "68k", "--qty", "4", "--bin", "A7", "--low", "3"])
        .ok();
    b.run(&["add", "10n", "--qty", "6", "--tech", "film"]).ok();
    b
}

#[test]
fn hold_release_use_round_trip_keeps_the_ledger_honest() {
    let b = seed();
    b.run(&[
        "hold", "--plan", "organ", "--member", "unit 1", "4.7k=2", "68k=1", "10n=1",
    ])
    .ok()
    .stdout_has("held for plan \"organ\": 4 pieces in 3 holds")
    .stdout_has("[unit 1]: +2 → 2 held for the plan; part: 10 on the shelf, 2 held, 8 free");
    b.run(&[
        "hold", "--plan", "organ", "--member", "unit 2", "4.7k=2", "68k=1", "10n=1",
    ])
    .ok();
    // Holding again for the same plan, member and part tops up that hold.
    let again = b
        .run(&["--json", "hold", "--plan", "clock", "#1=1", "#1=2"])
        .ok()
        .json();
    assert_eq!(again["action"], "hold");
    assert_eq!(again["lines"].as_array().expect("lines").len(), 1);
    assert_eq!(again["lines"][0]["hold"]["quantity"], 3);
    assert_eq!(counts(&b), vec![(1, 10, 7), (2, 4, 2), (3, 6, 2)]);

    // One unit of the organ is built: its pieces leave the shelf and the hold.
    b.run(&[
        "use", "--plan", "organ", "--member", "unit 1", "--why", "board 1",
    ])
    .ok()
    .stdout_has("used for plan \"organ\": 4 pieces in 3 holds")
    .stdout_has("at or below its low-stock level (3 left, level 3)");
    assert_eq!(counts(&b), vec![(1, 8, 5), (2, 3, 1), (3, 5, 1)]);
    // Part of the second unit is built, then the rest goes back.
    b.run(&["use", "--plan", "organ", "4.7k=1"]).ok();
    b.run(&["release", "--plan", "organ"])
        .ok()
        .stdout_has("released from plan \"organ\": 3 pieces in 3 holds");
    assert_eq!(counts(&b), vec![(1, 7, 3), (2, 3, 0), (3, 5, 0)]);
    b.run(&["release", "--plan", "clock", "4.7k"]).ok();
    assert_eq!(counts(&b), vec![(1, 7, 0), (2, 3, 0), (3, 5, 0)]);
    b.run(&["holds"]).ok().stdout_has("no holds");

    // The ledger of the 4.7 kΩ, entry by entry: (shelf delta, held delta, plan).
    let show = b.run(&["--json", "show", "#1"]).ok().json();
    let steps: Vec<(i64, i64, Json)> = show["ledger"]
        .as_array()
        .expect("ledger")
        .iter()
        .map(|e| {
            (
                e["delta"].as_i64().expect("delta"),
                e["held_delta"].as_i64().expect("held_delta"),
                e["plan"].clone(),
            )
        })
        .collect();
    let organ = || Json::from("organ");
    assert_eq!(
        steps,
        vec![
            (10, 0, Json::Null),
            (0, 2, organ()),
            (0, 2, organ()),
            (0, 3, Json::from("clock")),
            (-2, -2, organ()),
            (-1, -1, organ()),
            (0, -1, organ()),
            (0, -3, Json::from("clock")),
        ]
    );
    assert_eq!(show["ledger"][4]["why"], "board 1");
    assert_eq!(show["ledger"][4]["who"], "tester");
    assert_ledger_re_derives(&b);
}

#[test]
fn refused_changes_leave_the_store_exactly_as_it_was() {
    let b = seed();
    b.run(&["hold", "--plan", "clock", "4.7k=8", "68k=1"]).ok();
    let before = snapshot(&b);
    let cases: &[(&[&str], &str)] = &[
        // More than is free, with a good item beside it: nothing at all is held.
        (
            &["hold", "--plan", "organ", "10n=2", "4.7k=3"],
            "#1 4.7 kΩ 1% metal film in bin A3: asked for 3, 10 on the shelf, \
             8 held (8 for plan \"clock\"), 2 free",
        ),
        (
            &["hold", "--plan", "organ", "10n=7"],
            "asked for 7, 6 on the shelf, none held, 6 free",
        ),
        (
            &["hold", "--plan", "organ", "10n=4", "10n=3"],
            "asked for 7",
        ),
        (&["hold", "--plan", "organ", "#99=1"], "no part #99"),
        (
            &["hold", "--plan", "organ", "4.7k=0"],
            "the count must be 1 or more",
        ),
        (
            &["hold", "--plan", "organ", "4.7k=two"],
            "is not a whole number",
        ),
        (&["hold", "--plan", "organ", "4.7k"], "write PART=QTY"),
        (
            &["hold", "--plan", "  ", "4.7k=1"],
            "the plan name must not be empty",
        ),
        // Held pieces cannot be taken or counted away.
        (
            &["take", "4.7k", "--qty", "3"],
            "8 of them are held (8 for plan \"clock\"); only 2 free, cannot take 3",
        ),
        (
            &["recount", "#1", "7"],
            "cannot recount bin A3 (4.7 kΩ) to 7: 8 are held",
        ),
        // Using or releasing what the plan does not hold.
        (
            &["use", "--plan", "clock", "4.7k=9"],
            "asked for 9, the plan holds 8",
        ),
        (
            &["use", "--plan", "clock", "10n=1"],
            "asked for 1, the plan holds 0",
        ),
        (&["use", "--plan", "organ"], "plan \"organ\" holds nothing"),
        (
            &["release", "--plan", "clock", "10n"],
            "plan \"clock\" holds nothing of #3",
        ),
        (
            &["release", "--plan", "clock", "--member", "unit 9"],
            "holds nothing for member \"unit 9\"",
        ),
    ];
    for (args, message) in cases {
        b.run(args).code(2).stderr_has(message);
        assert_eq!(
            snapshot(&b),
            before,
            "`onhand {}` changed the store",
            args.join(" ")
        );
    }
    assert_ledger_re_derives(&b);
}

#[test]
fn held_pieces_are_missing_from_what_designs_and_list_see() {
    let b = seed();
    b.run(&["hold", "--plan", "clock", "4.7k=10", "68k=3"]).ok();
    let store = onhand::store::Store::open(&b.db()).expect("open");
    let free: Vec<(i64, i64)> = store
        .available_parts()
        .expect("snapshot")
        .iter()
        .map(|p| (p.id, p.available()))
        .collect();
    // The 4.7 kΩ is all held, so it is gone; one 68 kΩ is left free.
    assert_eq!(free, vec![(2, 1), (3, 6)]);
    // The plan itself sees its held pieces as its own.
    let own: Vec<(i64, i64)> = store
        .available_parts_including(Some("clock"))
        .expect("own")
        .iter()
        .map(|p| (p.id, p.available()))
        .collect();
    assert_eq!(own, vec![(1, 10), (2, 4), (3, 6)]);
    drop(store);
    let list = b.run(&["list"]).ok();
    let row = list
        .stdout
        .lines()
        .find(|l| l.contains("4.7 kΩ"))
        .expect("4.7k row");
    let cells: Vec<&str> = row.split(['┆', '\t']).map(str::trim).collect();
    // columns: # kind value tol tech rating package bin qty held free …
    assert_eq!(&cells[8..11], &["10", "10", "0"], "{row}");
    list.stdout_has("3 rows, 20 pieces (13 held for plans, 7 free)");
    b.run(&["show", "68k"])
        .ok()
        .stdout_has("held        3 (3 for plan \"clock\")")
        .stdout_has("free        1");
    b.run(&["holds", "--plan", "clock"])
        .ok()
        .stdout_has("2 holds, 13 pieces, 1 plan");
}

#[test]
fn two_processes_racing_for_the_last_pieces_get_one_hold() {
    // Each round puts five pieces of a new part on the shelf and starts two processes that
    // both try to hold all five, released together by a barrier file.
    let b = Bench::new();
    for round in 0..20 {
        let value = format!("{}R", 100 + round);
        b.run(&["add", &value, "--qty", "5"]).ok();
        let id = round + 1;
        let runs: Vec<(&str, Vec<String>)> = ["alice", "bob"]
            .into_iter()
            .map(|who| {
                (
                    who,
                    vec![
                        "hold".into(),
                        "--plan".into(),
                        format!("{who}-{round}"),
                        format!("#{id}=5"),
                    ],
                )
            })
            .collect();
        let outs = b.race(&format!("go-{round}"), &runs);
        let won: Vec<_> = outs.iter().filter(|o| o.status.success()).collect();
        let lost: Vec<_> = outs.iter().filter(|o| !o.status.success()).collect();
        assert_eq!((won.len(), lost.len()), (1, 1), "round {round}: {outs:?}");
        let loser = String::from_utf8_lossy(&lost[0].stderr);
        assert_eq!(lost[0].status.code(), Some(2), "round {round}: {loser}");
        assert!(
            loser.contains("nothing was held")
                && loser.contains("asked for 5, 5 on the shelf, 5 held")
                && loser.contains("0 free"),
            "round {round}: unclear refusal: {loser}"
        );
        let holds = b
            .run(&["--json", "holds", "--all"])
            .ok()
            .json()
            .as_array()
            .expect("array")
            .iter()
            .filter(|h| h["part_id"] == id)
            .cloned()
            .collect::<Vec<_>>();
        assert_eq!(holds.len(), 1, "round {round}: {holds:?}");
        assert_eq!(holds[0]["quantity"], 5);
        let show = b.run(&["--json", "show", &format!("#{id}")]).ok().json();
        assert_eq!(show["part"]["held"], 5);
        let hold_entries = show["ledger"]
            .as_array()
            .expect("ledger")
            .iter()
            .filter(|e| e["held_delta"] != 0)
            .count();
        assert_eq!(hold_entries, 1, "round {round}");
    }
    assert_ledger_re_derives(&b);
}

#[test]
fn a_database_from_before_holds_upgrades_and_keeps_its_counts() {
    let b = Bench::new();
    {
        // A store as the first schema left it, with a part and its ledger.
        let conn = rusqlite::Connection::open(b.db()).expect("create");
        let v1 = std::fs::read_to_string(crate::util::repo_path(
            "migrations/0001_parts_and_ledger.sql",
        ))
        .expect("read 0001");
        conn.execute_batch(&v1).expect("apply 0001");
        conn.execute_batch(
            "PRAGMA user_version = 1;
             INSERT INTO part (kind, value, tol_minus_ppb, tol_plus_ppb, technology, quantity)
               VALUES ('resistor', 4700000, 10000000, 10000000, 'metal_film', 7);
             INSERT INTO ledger (part_id, who, why, delta, quantity_after)
               VALUES (1, 'old', 'add', 9, 9), (1, 'old', 'take', -2, 7);",
        )
        .expect("seed v1");
    }
    b.run(&["init"])
        .ok()
        .stdout_has(&crate::util::latest_schema());
    assert_eq!(counts(&b), vec![(1, 7, 0)]);
    b.run(&["hold", "--plan", "amp", "#1=7"]).ok();
    b.run(&["take", "#1"]).code(2).stderr_has("only 0 free");
    b.run(&["use", "--plan", "amp", "#1=3"]).ok();
    assert_eq!(counts(&b), vec![(1, 4, 4)]);
    // An entry from before changes were grouped is a change of its own: undo reverts just it.
    b.run(&["undo", "2"]).ok().stdout_has("(take): 1 entry");
    assert_eq!(counts(&b), vec![(1, 6, 4)]);
    assert_ledger_re_derives(&b);
}

#[test]
fn every_holds_command_has_help_with_an_example() {
    for cmd in ["hold", "release", "use", "holds"] {
        let mut c = onhand();
        c.args([cmd, "--help"]);
        crate::util::Run::from(c).ok().stdout_has("Example");
    }
}
