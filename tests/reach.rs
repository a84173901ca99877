//! `onhand reach` and the files `find --svg DIR` / `find --netlist FILE` write, end to end on
//! small invented drawers (demo data) given with `--stock FILE`.

use crate::util::{self, Bench};
use onhand::units::format_sig;
use serde_json::Value;
use std::path::Path;

const HEADER: &str = "kind,value,tolerance,technology,volts,bin,quantity\n";

/// Two resistors and one capacitor: a one-shot from it has a known hole between its two widths.
const DRAWER: &str = "\
resistor,10k,1%,metal_film,,A1,2
resistor,12k,1%,metal_film,,A2,2
capacitor,1u,5%,film,63,C1,2
";

fn drawer(b: &Bench, extra: &str) -> String {
    let p = b.write("drawer.csv", &format!("{HEADER}{DRAWER}{extra}"));
    p.to_str().expect("utf-8 path").to_string()
}

/// The file must be well-formed XML with an `<svg>` root (roxmltree, an independent parser),
/// and render to a PNG when rsvg-convert (Debian librsvg2-bin) is installed.
fn valid_svg(path: &Path) -> roxmltree::Document<'static> {
    let text = std::fs::read_to_string(path).expect("svg written");
    let text: &'static str = Box::leak(text.into_boxed_str());
    let doc = roxmltree::Document::parse(text).expect("well-formed XML");
    assert_eq!(doc.root_element().tag_name().name(), "svg");
    if let Ok(out) = std::process::Command::new("rsvg-convert")
        .arg(path)
        .arg("-o")
        .arg(path.with_extension("png"))
        .output()
    {
        assert!(
            out.status.success(),
            "rsvg-convert failed on {}",
            path.display()
        );
    }
    doc
}

fn files(j: &Value) -> Vec<(String, String)> {
    j["files"]
        .as_array()
        .expect("files")
        .iter()
        .map(|f| {
            (
                f["kind"].as_str().expect("kind").to_string(),
                f["path"].as_str().expect("path").to_string(),
            )
        })
        .collect()
}

fn num(v: &Value) -> f64 {
    v.as_f64().unwrap_or_else(|| panic!("not a number: {v}"))
}

#[test]
fn a_known_hole_is_shown_and_the_purchase_closes_it() {
    let b = Bench::new();
    let stock = drawer(&b, "");
    let svg = b.path("pics/reach.svg");
    let args = [
        "--json",
        "reach",
        "pulse",
        "--from",
        "10.5ms",
        "--to",
        "13.5ms",
        "--pieces",
        "1",
        "--tol",
        "5%",
        "--ideal",
        "--stock",
        &stock,
        "--svg",
        svg.to_str().expect("utf-8"),
    ];
    let j = b.run(&args).code(1).json();
    // common practice: t = ln 3 · R · C (the textbook model, --ideal). 10 kΩ and 12 kΩ with
    // 1 µF give 10.99 ms and 13.18 ms; find accepts a target T when t lies within T·(1 ± 5 %),
    // so they reach up to ln3·10k·1µ/0.95 and down to ln3·12k·1µ/1.05.
    let ln3 = 3f64.ln();
    let holes = j["holes"].as_array().expect("holes");
    assert_eq!(holes.len(), 1, "{j}");
    let (lo, hi) = (num(&holes[0]["lo"]), num(&holes[0]["hi"]));
    assert!((lo / (ln3 * 10e3 * 1e-6 / 0.95) - 1.0).abs() < 1e-9, "{lo}");
    assert!((hi / (ln3 * 12e3 * 1e-6 / 1.05) - 1.0).abs() < 1e-9, "{hi}");
    let fix = &holes[0]["fix"];
    assert!(num(&fix["closes"]) > 0.999, "{fix}");
    // The picture is where the command says, and parses.
    let listed = files(&j);
    assert_eq!(
        listed,
        vec![("reach".to_string(), svg.display().to_string())]
    );
    let doc = valid_svg(&svg);
    assert!(
        doc.descendants().any(|n| n
            .text()
            .is_some_and(|t| t.starts_with("not reachable (red)"))),
        "the picture names the hole"
    );
    // Recompute with the suggested part in the drawer: the hole is gone.
    let (kind, value) = (fix["kind"].as_str().expect("kind"), num(&fix["value"]));
    let written = format_sig(value, 4, "").replace(' ', "");
    let row = match kind {
        "resistor" => format!("resistor,{written},1%,metal_film,,to-buy,4\n"),
        _ => format!("capacitor,{written},5%,film,63,to-buy,4\n"),
    };
    let stock = drawer(&b, &row);
    let mut again = args.to_vec();
    again.truncate(args.len() - 2);
    again[13] = &stock;
    let j = b.run(&again).ok().json();
    assert_eq!(j["holes"].as_array().map(Vec::len), Some(0), "{j}");
}

#[test]
fn text_report_lists_rows_limits_and_holes() {
    let b = Bench::new();
    let stock = drawer(&b, "");
    let r = b
        .run(&[
            "reach", "pulse", "--from", "10.5ms", "--to", "13.5ms", "--pieces", "1", "--tol", "5%",
            "--stock", &stock,
        ])
        .code(1)
        .stdout_has("Reach of the stock: one-shot pulse width within ±5 %, bipolar timer at 9 V, up to one piece")
        .stdout_has("R      ≥ 324 Ω")
        .stdout_has("1 µF")
        .stdout_has("holes (nothing in stock reaches these):");
    // The hole's purchase is named with its series.
    assert!(r.stdout.contains("(E24): closes 100 %"), "{}", r.stdout);
}

#[test]
fn astable_reach_follows_the_period_formula() {
    let b = Bench::new();
    let stock = drawer(&b, "");
    let j = b
        .run(&[
            "--json", "reach", "astable", "--from", "10Hz", "--to", "100Hz", "--pieces", "1",
            "--ideal", "--stock", &stock,
        ])
        .code(1)
        .json();
    // DESIGN: f = 1/(ln 2 · (R1 + 2·R2) · C) in the textbook model (--ideal). R1 is the smallest resistor the discharge pin
    // allows beside R2: with R2 = 12 kΩ that is 10 kΩ (42.4 Hz); with R2 = 10 kΩ it is the
    // second 10 kΩ (48.1 Hz; two pieces in stock).
    let f = |r1: f64, r2: f64| 1.0 / (2f64.ln() * (r1 + 2.0 * r2) * 1e-6);
    let covered = j["covered"].as_array().expect("covered");
    for want in [f(10e3, 12e3), f(10e3, 10e3)] {
        assert!(
            covered
                .iter()
                .any(|s| num(&s[0]) < want && want < num(&s[1])),
            "{want} Hz not covered: {covered:?}"
        );
    }
    assert_eq!(j["unit"], "Hz");
}

#[test]
fn help_has_examples_and_bad_ranges_are_refused() {
    let b = Bench::new();
    b.run(&["reach", "--help"])
        .ok()
        .stdout_has("Examples:")
        .stdout_has("onhand reach pulse");
    let stock = drawer(&b, "");
    b.run(&["reach", "pulse", "--from", "fast", "--stock", &stock])
        .code(2);
    b.run(&[
        "reach", "pulse", "--to", "2000000s", "--from", "1s", "--stock", &stock,
    ])
    .code(2)
    .stderr_has("10⁶ s");
}

#[test]
fn find_writes_pictures_and_a_netlist_that_ngspice_agrees_with() {
    let b = Bench::new();
    let stock = drawer(&b, "");
    let dir = b.path("out");
    let cir = dir.join("oneshot.cir");
    let j = b
        .run(&[
            "--json",
            "find",
            "pulse",
            "11ms",
            // The drawer's closest under the default model is about 1.1 % off 11 ms.
            "--tol",
            "2%",
            "--stock",
            &stock,
            "--svg",
            dir.to_str().expect("utf-8"),
            "--netlist",
            cir.to_str().expect("utf-8"),
        ])
        .ok()
        .json();
    let listed = files(&j);
    let kinds: Vec<&str> = listed.iter().map(|(k, _)| k.as_str()).collect();
    assert!(kinds.contains(&"netlist"), "{listed:?}");
    assert!(kinds.contains(&"waveform"), "{listed:?}");
    assert!(kinds.contains(&"histogram"), "{listed:?}");
    for (kind, path) in &listed {
        assert!(Path::new(path).exists(), "{kind} {path}");
        if kind != "netlist" {
            valid_svg(Path::new(path));
        }
    }
    assert_eq!(j["netlist"]["path"], cir.display().to_string());
    let text = std::fs::read_to_string(&cir).expect("netlist");
    assert!(text.contains(".tran") && text.contains(".meas"), "{text}");
    let width = j["designs"][0]["stages"][0]["quantities"]
        .as_array()
        .expect("quantities")
        .iter()
        .find(|q| q["name"] == "width")
        .map(|q| num(&q["nominal"]))
        .expect("width");
    if util::have_tool("ngspice", &["-v"]) {
        // Source: Debian package ngspice, transient simulation of the exported (default, real
        // parts) netlist; the measured width must match the default prediction within 1 %.
        let out = std::process::Command::new("ngspice")
            .arg("-b")
            .arg(&cir)
            .current_dir(&dir)
            .output()
            .expect("run ngspice");
        let all = format!(
            "{}\n{}",
            String::from_utf8_lossy(&out.stdout),
            String::from_utf8_lossy(&out.stderr)
        );
        assert!(out.status.success(), "{all}");
        let sim = onhand::report::netlist::measurement(&all, "width").expect("width measured");
        assert!((sim / width - 1.0).abs() < 0.01, "ngspice {sim} vs {width}");
    }
}

#[test]
fn find_with_nothing_fitting_draws_the_reach_around_the_target() {
    let b = Bench::new();
    let stock = drawer(&b, "");
    let dir = b.path("miss");
    let j = b
        .run(&[
            "--json",
            "find",
            "pulse",
            "1s",
            "--stock",
            &stock,
            "--svg",
            dir.to_str().expect("utf-8"),
            "--netlist",
            dir.join("x.cir").to_str().expect("utf-8"),
        ])
        .code(1)
        .json();
    let listed = files(&j);
    assert_eq!(listed.len(), 1, "{listed:?}");
    assert_eq!(listed[0].0, "reach");
    assert_eq!(listed[0].1, dir.join("reach.svg").display().to_string());
    valid_svg(&dir.join("reach.svg"));
    assert!(!dir.join("x.cir").exists());
    let notes = j["notes"].as_array().expect("notes");
    assert!(
        notes
            .iter()
            .any(|n| n.as_str().is_some_and(|s| s.contains("no netlist"))),
        "{notes:?}"
    );
}
