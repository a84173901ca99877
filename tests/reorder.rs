//! `onhand reorder` as a buyer uses it: one priced list for plans and the low-stock refill, the
//! price list named on every report, purchase series per kind, the spreadsheet CSV, and the
//! proof of least cost (or the gap when a time limit stops it). Prices and parts are invented.

use crate::util::{Bench, repo_path};

fn text(p: &std::path::Path) -> &str {
    p.to_str().expect("utf-8 path")
}

/// An invented price list in an invented shop's currency (EUR as a plain ISO 4217 code).
const PRICES: &str = "kind,series,technology,tolerance,from,to,pack,price,currency,part_number\n\
resistor,E24,metal_film,1%,1R,10M,100,1.60,EUR,MF-{value}\n\
capacitor,E6,film,5%,1n,10u,10,3.80,EUR,FM-{value}\n";

/// A one-shot plan file of `units` units.
fn plan(b: &Bench, name: &str, units: u32, width: &str) -> std::path::PathBuf {
    b.write(
        &format!("{name}.toml"),
        &format!(
            "name = \"{name}\"\nunits = {units}\n[[stage]]\nname = \"tick\"\nform = \"pulse\"\nwidth = \"{width}\"\ntolerance = \"5%\"\n"
        ),
    )
}

/// A bench with a 100 kΩ row and a low 1 µF film row (1 piece, low at 5).
fn stocked() -> Bench {
    let b = Bench::new();
    b.run(&[
        "add",
        "100k",
        "--qty",
        "4",
        "--tol",
        "1%",
        "--tech",
        "metal_film",
    ])
    .ok();
    b.run(&[
        "add",
        "1u",
        "--kind",
        "capacitor",
        "--tech",
        "film",
        "--tol",
        "5%",
        "--qty",
        "1",
        "--low",
        "5",
        "--volts",
        "63",
    ])
    .ok();
    b
}

#[test]
fn the_price_list_used_is_named_on_every_report() {
    let b = stocked();
    let p = plan(&b, "kit", 6, "110ms");
    let out = b.path("order.csv");
    // Without --prices: the invented sample, announced on stderr, in the text, JSON and CSV.
    let r = b.run(&["reorder", text(&p), "--csv", text(&out)]).ok();
    assert!(r.stdout.contains("INVENTED SAMPLE PRICES"), "{}", r.stdout);
    assert!(r.stdout.contains("Currency XTS"), "{}", r.stdout);
    assert!(
        r.stderr.contains("INVENTED sample price list"),
        "{}",
        r.stderr
    );
    let csv = std::fs::read_to_string(&out).expect("csv");
    assert!(
        csv.contains("built-in sample price list (invented sample prices)"),
        "{csv}"
    );
    let j = b.run(&["--json", "reorder", text(&p)]).ok().json();
    assert_eq!(j["price_list"]["sample"], true, "{j}");
    // XTS: the ISO 4217 code reserved for testing.
    assert_eq!(j["currency"], "XTS", "{j}");
    // With --prices: the file's name and its currency, and no warning.
    let prices = b.write("shop-prices.csv", PRICES);
    let r = b
        .run(&["reorder", text(&p), "--prices", text(&prices)])
        .ok();
    assert!(
        r.stdout.contains("Prices: shop-prices.csv (currency EUR)"),
        "{}",
        r.stdout
    );
    assert!(!r.stderr.contains("INVENTED"), "{}", r.stderr);
}

#[test]
fn plans_and_the_low_stock_refill_make_one_priced_list() {
    let b = stocked();
    let prices = b.write("prices.csv", PRICES);
    let p1 = plan(&b, "kit", 3, "110ms");
    let p2 = plan(&b, "clock", 2, "1.1s");
    let j = b
        .run(&[
            "--json",
            "reorder",
            text(&p1),
            text(&p2),
            "--low",
            "--prices",
            text(&prices),
        ])
        .ok()
        .json();
    assert_eq!(j["plans"].as_array().expect("plans").len(), 2, "{j}");
    let lines = j["buy"].as_array().expect("buy");
    // The low row (1 piece, low at 5) is brought back to twice its level: 9 pieces.
    let refill: u64 = lines
        .iter()
        .map(|l| l["refill_pieces"].as_u64().expect("n"))
        .sum();
    assert_eq!(refill, 9, "{j}");
    assert!(
        lines
            .iter()
            .any(|l| l["serves"].as_str().expect("s").contains("refill #2")),
        "{j}"
    );
    let mut total = 0;
    for l in lines {
        let packs = l["packs"].as_u64().expect("packs");
        let size = l["pack_size"].as_u64().expect("size");
        assert!(
            packs * size >= l["pieces_needed"].as_u64().expect("n"),
            "{l}"
        );
        total += packs * l["price_per_pack_cents"].as_u64().expect("p");
    }
    assert_eq!(j["total_cents"].as_u64(), Some(total), "{j}");
    // The refill alone is priced in packs too: 9 pieces of 1 µF film, packs of 10 at 3.80.
    let j = b
        .run(&["--json", "reorder", "--low", "--prices", text(&prices)])
        .ok()
        .json();
    assert_eq!(j["total_cents"], 380, "{j}");
    assert_eq!(j["buy"][0]["value"], "1 µF", "{j}");
    assert_eq!(j["buy"][0]["packs"], 1, "{j}");
}

#[test]
fn capacitors_are_bought_only_from_the_series_they_are_sold_in() {
    let b = Bench::new();
    // A low 2 µF film row: 2.0 is an E24 number, not E12 (IEC 60063); film capacitors are
    // sold in E12 at most (common practice), so by default the list does not buy "2 µF".
    b.run(&[
        "add",
        "2u",
        "--kind",
        "capacitor",
        "--tech",
        "film",
        "--tol",
        "5%",
        "--qty",
        "0",
        "--low",
        "3",
        "--volts",
        "63",
    ])
    .ok();
    let prices = b.write(
        "p.csv",
        "kind,series,technology,tolerance,from,to,pack,price\ncapacitor,E24,film,5%,1u,10u,10,4.00\n",
    );
    let j = b
        .run(&["--json", "reorder", "--low", "--prices", text(&prices)])
        .ok()
        .json();
    let bought: Vec<&str> = j["buy"]
        .as_array()
        .expect("buy")
        .iter()
        .map(|l| l["value"].as_str().expect("v"))
        .collect();
    assert!(bought.is_empty(), "{j}");
    assert_eq!(j["unpriced"][0]["pieces"], 6, "{j}");
    // Per kind (or technology) the series can be widened; the old --buy spelling still works.
    for opt in [
        ["--buy-series", "capacitor=E24"],
        ["--buy-series", "film=E24"],
        ["--buy", "E24"],
    ] {
        let j = b
            .run(&[
                "--json",
                "reorder",
                "--low",
                "--prices",
                text(&prices),
                opt[0],
                opt[1],
            ])
            .ok()
            .json();
        assert_eq!(j["buy"][0]["value"], "2 µF", "{opt:?}: {j}");
        assert_eq!(j["total_cents"], 400, "{opt:?}: {j}");
    }
    b.run(&["reorder", "--low", "--buy-series", "colour=E6"])
        .code(2)
        .stderr_has("name a kind");
}

#[test]
fn the_csv_is_ready_for_a_spreadsheet() {
    let b = stocked();
    let prices = b.write("prices.csv", &PRICES.replace("FM-{value}", "=FM-{value}"));
    let out = b.path("order.csv");
    b.run(&[
        "reorder",
        "--low",
        "--prices",
        text(&prices),
        "--csv",
        text(&out),
    ])
    .ok();
    let bytes = std::fs::read(&out).expect("csv");
    // A UTF-8 byte-order mark first (EF BB BF, the Unicode standard's encoding of U+FEFF).
    assert_eq!(&bytes[..3], b"\xEF\xBB\xBF");
    let csv = String::from_utf8(bytes[3..].to_vec()).expect("utf-8");
    let mut rows = csv::Reader::from_reader(csv.as_bytes());
    let header: Vec<String> = rows
        .headers()
        .expect("h")
        .iter()
        .map(String::from)
        .collect();
    let col = |n: &str| header.iter().position(|h| h == n).expect(n);
    let first = rows.records().next().expect("a row").expect("row");
    assert_eq!(&first[col("value")], "1 µF");
    assert_eq!(&first[col("value_base")], "0.000001");
    assert_eq!(&first[col("base_unit")], "F");
    assert_eq!(&first[col("technology")], "plastic film");
    assert_eq!(&first[col("pack_size")], "10");
    assert_eq!(&first[col("currency")], "EUR");
    assert_eq!(&first[col("price_list")], "prices.csv");
    // The supplier's number went through the formula neutraliser.
    assert_eq!(&first[col("part_number")], "'=FM-1µF");
    // --no-bom leaves the mark out.
    let out2 = b.path("plain.csv");
    b.run(&[
        "reorder",
        "--low",
        "--prices",
        text(&prices),
        "--csv",
        text(&out2),
        "--no-bom",
    ])
    .ok();
    let bytes = std::fs::read(&out2).expect("csv");
    assert!(bytes.starts_with(b"kind,"), "{:?}", &bytes[..8]);
}

#[test]
fn the_list_is_proven_cheapest_or_says_how_far_it_may_be() {
    let b = Bench::new();
    let kit = repo_path("sample-stock/blinker-kit.toml");
    let cabinet = repo_path("sample-stock/makerspace-cabinet.csv");
    // Proven: exit 0, gap 0.
    let j = b
        .run(&[
            "--json",
            "reorder",
            text(&kit),
            "--units",
            "40",
            "--stock",
            text(&cabinet),
        ])
        .ok()
        .json();
    assert_eq!(j["proof"], "optimal", "{j}");
    assert_eq!(j["gap_cents"], 0, "{j}");
    // A limit far too short for the integer program: exit 1, and the gap to the bound.
    let r = b
        .run(&[
            "reorder",
            text(&kit),
            "--units",
            "40",
            "--stock",
            text(&cabinet),
            "--time-limit",
            "1us",
        ])
        .code(1);
    assert!(r.stdout.contains("NOT proven least cost"), "{}", r.stdout);
    assert!(r.stdout.contains("proven bound"), "{}", r.stdout);
    let j = b
        .run(&[
            "--json",
            "reorder",
            text(&kit),
            "--units",
            "40",
            "--stock",
            text(&cabinet),
            "--time-limit",
            "1us",
        ])
        .code(1)
        .json();
    assert_eq!(j["proof"], "time_limited", "{j}");
    let total = j["total_cents"].as_u64().expect("total");
    let bound = j["lower_bound_cents"].as_u64().expect("bound");
    assert!(bound <= total, "{j}");
    assert_eq!(j["gap_cents"].as_u64(), Some(total - bound), "{j}");
}

/// A drawer with exactly two 100 kΩ and two 1 µF: two kits of the one-shot below.
fn two_kits() -> Bench {
    let b = Bench::new();
    b.run(&[
        "add",
        "100k",
        "--qty",
        "2",
        "--tol",
        "1%",
        "--tech",
        "metal_film",
    ])
    .ok();
    b.run(&[
        "add",
        "1u",
        "--kind",
        "capacitor",
        "--tech",
        "film",
        "--tol",
        "5%",
        "--qty",
        "2",
        "--volts",
        "63",
    ])
    .ok();
    b
}

/// The kinds bought for a stage whose name contains `who`, a line each.
fn serving(j: &serde_json::Value, who: &str) -> Vec<String> {
    j["buy"]
        .as_array()
        .expect("buy")
        .iter()
        .filter(|l| l["serves"].as_str().is_some_and(|s| s.contains(who)))
        .map(|l| l["kind"].as_str().expect("kind").to_string())
        .collect()
}

#[test]
fn a_plans_own_holds_count_for_that_plan_only() {
    let b = two_kits();
    let prices = b.write("prices.csv", PRICES);
    // The one-shot t = ln 3 · 100 kΩ · 1 µF = 109.9 ms (t = ln 3 · R · C, common practice).
    let a = plan(&b, "a", 2, "110ms");
    let other = plan(&b, "b", 1, "110ms");
    // Plan a holds both kits the drawer has: nothing is free any more.
    b.run(&["plan", text(&a), "--hold"]).ok();
    let j = b.run(&["--json", "holds"]).ok().json();
    let held: i64 = j
        .as_array()
        .expect("holds")
        .iter()
        .map(|h| h["quantity"].as_i64().expect("n"))
        .sum();
    assert_eq!(held, 4, "{j}");
    // One unit of each plan: a builds its unit from its own holds; its second held kit is
    // still a's, so b's unit is bought (one pack of resistors at 1.60, one of capacitors at
    // 3.80; any pair of values that makes 110 ms ± 5 % costs the same).
    let j = b
        .run(&[
            "--json",
            "reorder",
            text(&a),
            text(&other),
            "--units",
            "1",
            "--prices",
            text(&prices),
        ])
        .ok()
        .json();
    assert_eq!(j["total_cents"], 540, "{j}");
    let mut bought = serving(&j, "b: tick");
    bought.sort();
    assert_eq!(bought, vec!["capacitor", "resistor"], "{j}");
    assert!(serving(&j, "a: tick").is_empty(), "{j}");
    // Each plan's own line counts its own holds only: a alone builds its unit, b none.
    let plans = j["plans"].as_array().expect("plans");
    assert_eq!(plans[0]["stock_alone_builds"], 1, "{j}");
    assert_eq!(plans[1]["stock_alone_builds"], 0, "{j}");
}

#[test]
fn a_plan_named_twice_counts_its_holds_once() {
    let b = two_kits();
    let prices = b.write("prices.csv", PRICES);
    let a = plan(&b, "a", 2, "110ms");
    b.run(&["plan", text(&a), "--hold"]).ok();
    // The same plan twice: four units against the two kits a holds, so two are bought
    // (2 pieces each: one pack of 100 kΩ at 1.60, one pack of 1 µF at 3.80). Its holds are
    // not counted once per naming: that would be four kits from a drawer of two.
    let again = b.write(
        "again.toml",
        &std::fs::read_to_string(&a).expect("plan file"),
    );
    let j = b
        .run(&[
            "--json",
            "reorder",
            text(&a),
            text(&again),
            "--prices",
            text(&prices),
        ])
        .ok()
        .json();
    assert_eq!(j["total_cents"], 540, "{j}");
    let needed: u64 = j["buy"]
        .as_array()
        .expect("buy")
        .iter()
        .map(|l| l["pieces_needed"].as_u64().expect("n"))
        .sum();
    assert_eq!(needed, 4, "{j}");
}
