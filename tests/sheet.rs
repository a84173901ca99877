//! Build sheets and the pick list (`plan --sheet DIR`): every part and bin of the plan appears,
//! nothing is fetched from outside, existing files are not replaced without --force, and the
//! sheets print to PDF in a real headless browser (Debian's `chromium`; skipped with a message
//! where it is missing unless ONHAND_REQUIRE_EXTERNAL=1).

use crate::util::{self, Bench};
use std::path::Path;

fn kit_sheets(b: &Bench) -> (serde_json::Value, std::path::PathBuf) {
    let kit = util::repo_path("sample-stock/blinker-kit.toml");
    let dir = b.path("sheets");
    let j = b
        .run(&[
            "--json",
            "plan",
            kit.to_str().expect("utf-8"),
            "--identical",
            "--sheet",
            dir.to_str().expect("utf-8"),
        ])
        .ok()
        .json();
    (j, dir)
}

#[test]
fn every_part_and_bin_of_the_sample_kit_is_on_its_sheets() {
    let b = Bench::new().with_sample("makerspace-cabinet.csv");
    let (j, dir) = kit_sheets(&b);
    let files: Vec<String> = j["sheets"]
        .as_array()
        .expect("sheets")
        .iter()
        .map(|f| f.as_str().expect("path").to_string())
        .collect();
    // One sheet per stage (identical kits: one design each), plus the pick list.
    assert_eq!(files.len(), 4, "{j}");
    let pick = std::fs::read_to_string(dir.join("blinker-kit-pick-list.html")).expect("pick list");
    let mut all = String::new();
    for f in &files {
        all.push_str(&std::fs::read_to_string(f).expect("sheet"));
    }
    for t in j["takes"].as_array().expect("takes") {
        let part = t["part"].as_str().expect("part");
        let bin = t["bin"].as_str().expect("bin");
        assert!(
            pick.contains(part) && pick.contains(&format!(">{bin}<")),
            "{part} {bin}"
        );
        assert!(
            all.contains(&format!("bin {bin}")),
            "{bin} on no build sheet"
        );
        assert!(all.contains(part), "{part} on no build sheet");
    }
    // The pick list is in bin order.
    let bins: Vec<&str> = pick
        .lines()
        .filter_map(|l| l.strip_prefix("<tr><td>"))
        .filter_map(|l| l.split("</td>").next())
        .collect();
    let mut sorted = bins.clone();
    sorted.sort();
    assert_eq!(bins, sorted);
    // Self-contained: nothing from outside (the SVG namespace is a name, not a fetch).
    let rest = all.replace("xmlns=\"http://www.w3.org/2000/svg\"", "");
    for outside in ["http://", "https://", "<link", "<script", "@import", "src="] {
        assert!(!rest.contains(outside), "{outside}");
    }
    assert!(all.contains("@page") && all.contains("@media print"));
    // A second run does not replace the sheets without --force.
    let kit = util::repo_path("sample-stock/blinker-kit.toml");
    b.run(&[
        "plan",
        kit.to_str().expect("utf-8"),
        "--identical",
        "--sheet",
        dir.to_str().expect("utf-8"),
    ])
    .code(2)
    .stderr_has("exists");
}

fn print_to_pdf(html: &Path, pdf: &Path) -> std::process::Output {
    let profile = tempfile::tempdir().expect("profile dir");
    std::process::Command::new("chromium")
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--disable-background-networking",
            "--disable-component-update",
            "--disable-sync",
            "--no-first-run",
        ])
        .arg(format!("--user-data-dir={}", profile.path().display()))
        .arg(format!("--print-to-pdf={}", pdf.display()))
        .arg(html)
        .output()
        .expect("run chromium")
}

#[test]
fn the_sample_kit_sheets_print_to_pdf_in_headless_chromium() {
    if !util::have_tool("chromium", &["--version"]) {
        return;
    }
    let b = Bench::new().with_sample("makerspace-cabinet.csv");
    let (j, _) = kit_sheets(&b);
    for f in j["sheets"].as_array().expect("sheets") {
        let html = Path::new(f.as_str().expect("path"));
        let pdf = html.with_extension("pdf");
        let out = print_to_pdf(html, &pdf);
        assert!(out.status.success(), "{out:?}");
        let bytes = std::fs::read(&pdf).expect("pdf written");
        assert!(bytes.starts_with(b"%PDF-"), "{}", html.display());
        // A page at least: the PDF names its pages.
        let text = String::from_utf8_lossy(&bytes);
        assert!(
            text.contains("/Type /Page") || text.contains("/Type/Page"),
            "{}",
            html.display()
        );
    }
}

#[test]
fn find_writes_the_build_sheet_of_its_best_design() {
    // Invented drawer: 100 kΩ and 1 µF make a one-shot of ln 3 · R · C = 109.86 ms (common
    // practice ≈ 1.1 · R · C).
    let b = Bench::new();
    let csv = b.write(
        "d.csv",
        "kind,value,tolerance,technology,volts,bin,quantity\n\
         resistor,100k,1%,metal_film,,A1,3\n\
         capacitor,1u,5%,film,63,C1,2\n",
    );
    b.run(&["import", csv.to_str().expect("utf-8")]).ok();
    let dir = b.path("one");
    let j = b
        .run(&[
            "--json",
            "find",
            "pulse",
            "108.8ms",
            "--sheet",
            dir.to_str().expect("utf-8"),
        ])
        .ok()
        .json();
    assert_eq!(j["sheets"].as_array().map(Vec::len), Some(2), "{j}");
    let html = std::fs::read_to_string(dir.join("found-design.html")).expect("sheet");
    for needle in [
        "bin A1",
        "bin C1",
        "100 kΩ",
        "1 µF",
        "<svg",
        "Schematic",
        "109.9 ms",
    ] {
        assert!(html.contains(needle), "{needle}");
    }
    let pick = std::fs::read_to_string(dir.join("found-design-pick-list.html")).expect("pick");
    assert!(pick.contains("2 pieces from 2 bin rows"), "{pick}");
}

#[test]
fn a_sheet_names_every_bin_a_part_is_taken_from() {
    // Invented drawer: the same 100 kΩ part in three bins, two pieces each; five one-shots
    // (100 kΩ with 1 µF, t = ln 3 · R · C = 109.86 ms, common practice) take from all three.
    let b = Bench::new();
    let csv = b.write(
        "d.csv",
        "kind,value,tolerance,technology,volts,bin,quantity\n\
         resistor,100k,1%,metal_film,,A1,2\n\
         resistor,100k,1%,metal_film,,A2,2\n\
         resistor,100k,1%,metal_film,,A3,2\n\
         capacitor,1u,5%,film,63,C1,9\n",
    );
    b.run(&["import", csv.to_str().expect("utf-8")]).ok();
    let plan = b.write(
        "p.toml",
        "name = \"shots\"\nunits = 5\ntolerance = \"2%\"\n[[stage]]\nname = \"shot\"\nform = \"pulse\"\nwidth = \"109.86ms\"\n",
    );
    let dir = b.path("s");
    let j = b
        .run(&[
            "--json",
            "plan",
            plan.to_str().expect("utf-8"),
            "--sheet",
            dir.to_str().expect("utf-8"),
        ])
        .ok()
        .json();
    assert_eq!(j["built"], 5, "{j}");
    assert_eq!(j["takes"].as_array().map(Vec::len), Some(4), "{j}");
    let html = std::fs::read_to_string(dir.join("shots-shot-design-1.html")).expect("sheet");
    for bin in ["bin A1", "bin A2", "bin A3", "bin C1"] {
        assert!(html.contains(bin), "{bin} missing from the sheet");
    }
}
