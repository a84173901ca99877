//! The store under stress: two processes drawing the same part at once, an import killed
//! part-way, bad input of every kind, and a database from a newer onhand. Each case shows that
//! no update is lost and that a refused or interrupted change leaves the store exactly as it was.

use crate::util::Bench;
use std::process::Stdio;
use std::time::{Duration, Instant};

/// Everything observable about a store: the full export and the ledger length.
fn snapshot(b: &Bench) -> (String, i64) {
    let export = b.run(&["export"]).ok().stdout;
    let conn = rusqlite::Connection::open(b.db()).expect("open db");
    let n: i64 = conn
        .query_row("SELECT COUNT(*) FROM ledger", [], |r| r.get(0))
        .expect("count ledger");
    (export, n)
}

fn integrity(b: &Bench) -> String {
    let conn = rusqlite::Connection::open(b.db()).expect("open db");
    conn.query_row("PRAGMA integrity_check", [], |r| r.get(0))
        .expect("integrity_check")
}

#[test]
fn two_processes_taking_the_same_part_lose_no_update() {
    let b = Bench::new();
    b.run(&["add", "4.7k", "--qty", "450", "--bin", "A3"]).ok();
    let db = b.db();
    let workers: Vec<_> = ["alice", "bob"]
        .into_iter()
        .map(|who| {
            let db = db.clone();
            std::thread::spawn(move || {
                for i in 0..200 {
                    let out = std::process::Command::new(assert_cmd::cargo::cargo_bin!("onhand"))
                        .env_remove("ONHAND_DB")
                        .args(["--db"])
                        .arg(&db)
                        .args(["--user", who, "take", "#1", "--why"])
                        .arg(format!("{who} {i}"))
                        .output()
                        .expect("run onhand");
                    assert!(
                        out.status.success(),
                        "{who} take {i} failed: {}",
                        String::from_utf8_lossy(&out.stderr)
                    );
                }
            })
        })
        .collect();
    for w in workers {
        w.join().expect("worker");
    }
    let show = b.run(&["--json", "show", "#1"]).ok().json();
    assert_eq!(show["part"]["quantity"], 50, "400 takes from 450");
    let ledger = show["ledger"].as_array().expect("ledger");
    assert_eq!(ledger.len(), 401);
    // Every take saw the count the one before it left: the counts after run 449, 448, … 50.
    let afters: Vec<i64> = ledger[1..]
        .iter()
        .map(|e| e["quantity_after"].as_i64().expect("after"))
        .collect();
    assert_eq!(afters, (50..450).rev().collect::<Vec<i64>>());
    for who in ["alice", "bob"] {
        assert_eq!(ledger.iter().filter(|e| e["who"] == who).count(), 200);
    }
    assert_eq!(integrity(&b), "ok");
}

#[test]
fn an_import_killed_part_way_leaves_the_store_as_it_was() {
    let b = Bench::new().with_sample("bench-drawer.csv");
    let before = snapshot(&b);
    // 200 000 distinct resistor rows.
    let mut csv = String::from("value,quantity,bin,note\n");
    for i in 0..200_000 {
        csv.push_str(&format!(
            "{}R,{},bulk-{},generated row {i}\n",
            1_000 + i,
            1 + i % 7,
            i % 50
        ));
    }
    let file = b.write("huge.csv", &csv);
    let wal = b.path("stock.db-wal");
    let wal_before = std::fs::metadata(&wal).map_or(0, |m| m.len());
    let mut child = std::process::Command::new(assert_cmd::cargo::cargo_bin!("onhand"))
        .env_remove("ONHAND_DB")
        .arg("--db")
        .arg(b.db())
        .arg("import")
        .arg(&file)
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .expect("spawn import");
    // Wait until the import is writing (the WAL has grown by over 1 MiB of uncommitted pages),
    // then kill it while it is still running.
    let deadline = Instant::now() + Duration::from_secs(120);
    let grown = loop {
        let size = std::fs::metadata(&wal).map_or(0, |m| m.len());
        if size > wal_before + (1 << 20) {
            break size;
        }
        assert!(
            child.try_wait().expect("poll").is_none(),
            "the import finished before it could be interrupted"
        );
        assert!(
            Instant::now() < deadline,
            "the import never started writing"
        );
        std::thread::sleep(Duration::from_millis(2));
    };
    assert!(
        child.try_wait().expect("poll").is_none(),
        "the import must still be running when killed"
    );
    child.kill().expect("SIGKILL"); // Child::kill sends SIGKILL on Unix
    let status = child.wait().expect("reap");
    assert!(!status.success(), "killed import exited cleanly: {status}");
    eprintln!("killed the import with the WAL at {grown} bytes (was {wal_before})");
    assert_eq!(
        snapshot(&b),
        before,
        "the store changed after a killed import"
    );
    assert_eq!(integrity(&b), "ok");
}

#[test]
fn bad_input_of_every_kind_is_refused_and_changes_nothing() {
    let b = Bench::new().with_sample("bench-drawer.csv");
    b.run(&["add", "4.7k", "--qty", "4", "--bin", "A3"]).ok();
    let before = snapshot(&b);
    let unknown = b.write("unknown.csv", "value,quantity,colour\n1k,5,brown\n");
    let middle = b.write(
        "middle.csv",
        "value,quantity,bin\n1k,5,X1\n2.2k,5,X1\n3.3k,lots,X1\n4.7k,5,X1\n5.6k,5,X1\n",
    );
    let neg = b.write("neg.csv", "value,quantity\n1k,-5\n");
    let bad_value = b.write(
        "bad_value.csv",
        "value,quantity,tolerance\n1k,1,1%\nabc,1,1%\n",
    );
    let bad_json = b.write(
        "bad.json",
        r#"[{"value":"1k","quantity":1},{"value":"1k"}]"#,
    );
    let p = |path: &std::path::Path| path.to_str().expect("utf-8").to_string();
    let cases: Vec<(Vec<String>, &str)> = vec![
        (
            vec!["add".into(), "4x7".into(), "--qty".into(), "1".into()],
            "cannot read \"4x7\"",
        ),
        (
            vec!["add".into(), "4.7k".into(), "--qty".into(), "-5".into()],
            "--qty must be 0 or more",
        ),
        (
            vec![
                "add".into(),
                "4.7k".into(),
                "--qty".into(),
                "1".into(),
                "--tech".into(),
                "x7r".into(),
            ],
            "X7R is not a technology of a resistor",
        ),
        (
            vec![
                "add".into(),
                "1k".into(),
                "--qty".into(),
                "1".into(),
                "--tol".into(),
                "lots".into(),
            ],
            "--tol",
        ),
        (
            vec![
                "take".into(),
                "4.7k".into(),
                "--bin".into(),
                "A3".into(),
                "--qty".into(),
                "5".into(),
            ],
            "bin A3 holds 4 × 4.7 kΩ, cannot take 5",
        ),
        (vec!["take".into(), "#999".into()], "no part #999"),
        (
            vec!["take".into(), "#1".into(), "--qty".into(), "0".into()],
            "take at least one piece",
        ),
        (
            vec!["recount".into(), "#1".into(), "-2".into()],
            "the counted quantity",
        ),
        (
            vec!["import".into(), p(&unknown)],
            "column \"colour\": unknown column",
        ),
        (
            vec!["import".into(), p(&middle)],
            "row 4, column \"quantity\"",
        ),
        (
            vec!["import".into(), p(&neg)],
            "row 2, column \"quantity\": the quantity must be 0 or more",
        ),
        (
            vec!["import".into(), p(&bad_value)],
            "row 3, column \"value\"",
        ),
        (
            vec!["import".into(), p(&bad_json)],
            "row 2, column \"quantity\"",
        ),
        (vec!["import".into(), p(&b.path("missing.csv"))], "reading"),
    ];
    for (args, message) in cases {
        let args: Vec<&str> = args.iter().map(String::as_str).collect();
        b.run(&args).code(2).stderr_has(message);
        assert_eq!(
            snapshot(&b),
            before,
            "`onhand {}` changed the store",
            args.join(" ")
        );
    }
    // The bad middle row refused the whole file, rows before it included.
    b.run(&["list", "--bin", "X1"])
        .ok()
        .stdout_has("no parts match");
}

#[test]
fn a_database_from_a_newer_onhand_is_refused() {
    let b = Bench::new();
    b.run(&["init"]).ok();
    {
        let conn = rusqlite::Connection::open(b.db()).expect("open");
        conn.pragma_update(None, "user_version", 99).expect("bump");
    }
    b.run(&["list"]).code(2).stderr_has("schema version 99");
}

#[test]
fn the_ledger_cannot_be_rewritten() {
    let b = Bench::new();
    b.run(&["add", "1k", "--qty", "3"]).ok();
    let conn = rusqlite::Connection::open(b.db()).expect("open");
    let upd = conn.execute("UPDATE ledger SET delta = 100", []);
    assert!(upd.is_err_and(|e| e.to_string().contains("append-only")));
    let del = conn.execute("DELETE FROM ledger", []);
    assert!(del.is_err_and(|e| e.to_string().contains("append-only")));
    drop(conn);
    b.run(&["show", "#1"]).ok().stdout_has("history (1 entry)");
}
