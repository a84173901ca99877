//! `check --svg DIR`, `check --netlist FILE` and the text schematic, driven through the built
//! binary: the files are written where the command says, the SVGs are well-formed XML with an
//! `<svg>` root (parsed by roxmltree, an independent XML parser), they carry the labelled times
//! and thresholds of the design's real conditions, and their labels do not overlap.

use crate::util::{Bench, Run};
use onhand::units::format_sig;
use serde_json::Value;
use std::path::Path;

fn check(bench: &Bench, args: &[&str]) -> (Run, Value) {
    let mut all = vec!["--json", "check"];
    all.extend_from_slice(args);
    // The waveform still draws the closed forms of the stage's conditions (the textbook model),
    // so its labels are compared with the textbook report.
    all.push("--ideal");
    let run = bench.run(&all);
    assert!(run.status == 0 || run.status == 1, "{}", run.stderr);
    let json = run.json();
    (run, json)
}

/// (kind, path) of every file the JSON report lists.
fn files(json: &Value) -> Vec<(String, String)> {
    json["files"]
        .as_array()
        .expect("files list")
        .iter()
        .map(|f| {
            (
                f["kind"].as_str().expect("kind").to_string(),
                f["path"].as_str().expect("path").to_string(),
            )
        })
        .collect()
}

fn nominal(json: &Value, analysis: usize, q: &str) -> f64 {
    json["analyses"][analysis]["nominal"]
        .as_array()
        .expect("nominal")
        .iter()
        .find(|i| i["quantity"] == q)
        .and_then(|i| i["nominal"].as_f64())
        .unwrap_or_else(|| panic!("no {q}: {json}"))
}

fn worst(json: &Value, analysis: usize, q: &str) -> (f64, f64) {
    let i = json["analyses"][analysis]["worst_case"]["intervals"]
        .as_array()
        .expect("intervals")
        .iter()
        .find(|i| i["quantity"] == q)
        .unwrap_or_else(|| panic!("no {q}: {json}"))
        .clone();
    (
        i["min"].as_f64().expect("min"),
        i["max"].as_f64().expect("max"),
    )
}

/// A text element: its estimated box and content.
struct Label {
    text: String,
    left: f64,
    right: f64,
    top: f64,
    bottom: f64,
}

/// Parse an SVG file: must be well-formed XML with an `<svg>` root; return its horizontal text
/// labels with boxes estimated the way the writer estimates them (0.6 em per glyph).
fn labels(path: &Path) -> Vec<Label> {
    let text = std::fs::read_to_string(path).expect("svg file exists");
    let doc = roxmltree::Document::parse(&text).expect("well-formed XML");
    assert_eq!(
        doc.root_element().tag_name().name(),
        "svg",
        "{}",
        path.display()
    );
    let num = |n: &roxmltree::Node, a: &str| -> f64 {
        n.attribute(a).and_then(|v| v.parse().ok()).unwrap_or(0.0)
    };
    doc.descendants()
        .filter(|n| n.tag_name().name() == "text" && n.attribute("transform").is_none())
        .map(|n| {
            let content = n.text().unwrap_or_default().to_string();
            let size = num(&n, "font-size");
            let w = content.chars().count() as f64 * size * 0.6;
            let x = num(&n, "x");
            let y = num(&n, "y");
            let left = match n.attribute("text-anchor") {
                Some("middle") => x - w / 2.0,
                Some("end") => x - w,
                _ => x,
            };
            Label {
                text: content,
                left,
                right: left + w,
                top: y - size * 0.8,
                bottom: y + size * 0.2,
            }
        })
        .collect()
}

fn assert_no_overlap(path: &Path, labels: &[Label]) {
    for (i, a) in labels.iter().enumerate() {
        for b in &labels[i + 1..] {
            let apart =
                a.right <= b.left || b.right <= a.left || a.bottom <= b.top || b.bottom <= a.top;
            assert!(
                apart,
                "{}: labels {:?} and {:?} overlap",
                path.display(),
                a.text,
                b.text
            );
        }
    }
}

fn has_label(labels: &[Label], wanted: &str) -> bool {
    labels.iter().any(|l| l.text == wanted)
}

/// When rsvg-convert (Debian librsvg2-bin) is installed, it must render the file to a PNG.
fn renders(path: &Path) {
    let png = path.with_extension("png");
    match std::process::Command::new("rsvg-convert")
        .arg(path)
        .arg("-o")
        .arg(&png)
        .output()
    {
        Ok(out) => {
            assert!(
                out.status.success(),
                "rsvg-convert failed on {}",
                path.display()
            );
            let bytes = std::fs::read(&png).expect("png written");
            assert!(bytes.starts_with(b"\x89PNG"), "{}", png.display());
        }
        Err(_) => eprintln!("SKIPPED: rsvg-convert not found; PNG rendering not checked"),
    }
}

#[test]
fn astable_pictures_are_written_where_the_command_says() {
    let bench = Bench::new();
    let dir = bench.path("out/pictures");
    let dir_text = dir.to_str().expect("utf-8");
    let (_, json) = check(
        &bench,
        &[
            "astable",
            "R1=33k+2.2k",
            "R2=68k",
            "C=10n",
            "--target",
            "1.2ms",
            "--within",
            "5%",
            "--svg",
            dir_text,
        ],
    );
    let list = files(&json);
    let kinds: Vec<&str> = list.iter().map(|(k, _)| k.as_str()).collect();
    assert_eq!(kinds, ["waveform", "histogram"], "{json}");
    for (_, p) in &list {
        assert!(Path::new(p).starts_with(&dir), "{p} outside {dir_text}");
    }

    // Waveform: both thresholds of the ideal model at 9 V (2/3 and 1/3 of the supply, common
    // practice) and the high and low times as the report computes them.
    let wave = Path::new(&list[0].1);
    let w = labels(wave);
    assert!(has_label(&w, "upper threshold 6 V"), "thresholds");
    assert!(has_label(&w, "lower threshold 3 V"), "thresholds");
    let high = format!("high {}", format_sig(nominal(&json, 0, "high"), 3, "s"));
    let low = format!("low {}", format_sig(nominal(&json, 0, "low"), 3, "s"));
    assert!(has_label(&w, &high), "{high} missing");
    assert!(has_label(&w, &low), "{low} missing");
    // Axes in SI units: some time tick in ms and a voltage tick in V.
    assert!(w.iter().any(|l| l.text.ends_with(" ms")), "time axis");
    assert!(has_label(&w, "4 V"), "voltage axis");
    assert_no_overlap(wave, &w);
    renders(wave);

    // Histogram of the period: worst case from the report, and the target window 1.2 ms ± 5 %.
    let hist = Path::new(&list[1].1);
    assert!(hist.ends_with("histogram-period.svg"), "{}", hist.display());
    let h = labels(hist);
    let (lo, hi) = worst(&json, 0, "period");
    let wc = format!(
        "worst case {} … {}",
        format_sig(lo, 4, "s"),
        format_sig(hi, 4, "s")
    );
    assert!(has_label(&h, &wc), "{wc} missing");
    assert!(
        has_label(&h, "target window 1.14 ms … 1.26 ms"),
        "target window"
    );
    assert!(has_label(&h, "10000 Monte Carlo samples"));
    assert_no_overlap(hist, &h);
    renders(hist);
}

#[test]
fn pictures_use_the_real_conditions() {
    // A control pin driven at 5 V moves the upper threshold to 5 V and the lower to 2.5 V.
    let bench = Bench::new();
    let dir = bench.path("svg");
    let (_, json) = check(
        &bench,
        &[
            "monostable",
            "R=100k",
            "C=1u",
            "--control",
            "5",
            "--svg",
            dir.to_str().expect("utf-8"),
        ],
    );
    let wave = dir.join("waveform.svg");
    let w = labels(&wave);
    assert!(has_label(&w, "upper threshold 5 V"));
    assert!(has_label(&w, "lower threshold 2.5 V"));
    let pulse = format!("pulse {}", format_sig(nominal(&json, 0, "high"), 3, "s"));
    assert!(has_label(&w, &pulse), "{pulse}");
    assert_no_overlap(&wave, &w);
    // A one-shot's histogram is of the pulse width.
    let hist = dir.join("histogram-pulse-width.svg");
    assert!(files(&json).iter().any(|(_, p)| Path::new(p) == hist));
    assert_no_overlap(&hist, &labels(&hist));
}

#[test]
fn lopsided_duty_keeps_span_labels_apart() {
    // A 2 % duty: the high bracket is a few pixels wide, its label must move off the low one's.
    let bench = Bench::new();
    let dir = bench.path("svg");
    check(
        &bench,
        &[
            "steered",
            "RA=10k",
            "RB=470k",
            "C=10n",
            "--diode",
            "0.7",
            "--target",
            "5%",
            "--within",
            "20%",
            "--svg",
            dir.to_str().expect("utf-8"),
        ],
    );
    for name in ["waveform.svg", "histogram-period.svg", "histogram-duty.svg"] {
        let p = dir.join(name);
        let l = labels(&p);
        assert_no_overlap(&p, &l);
        renders(&p);
    }
    assert!(has_label(
        &labels(&dir.join("histogram-duty.svg")),
        "target window 4 % … 6 %"
    ));
}

#[test]
fn pair_and_dual_draw_every_stage() {
    let bench = Bench::new();
    let dir = bench.path("pair");
    let (_, json) = check(
        &bench,
        &[
            "pair",
            "R1=1k",
            "R2=10k",
            "C1=100n",
            "R3=10k",
            "C2=10n",
            "--svg",
            dir.to_str().expect("utf-8"),
        ],
    );
    let names: Vec<String> = files(&json)
        .iter()
        .map(|(_, p)| {
            Path::new(p)
                .file_name()
                .expect("name")
                .to_string_lossy()
                .into_owned()
        })
        .collect();
    assert_eq!(
        names,
        [
            "waveform-pace.svg",
            "waveform-width.svg",
            "histogram-period.svg",
            "histogram-pulse-width.svg"
        ]
    );
    for n in &names {
        let p = dir.join(n);
        assert_no_overlap(&p, &labels(&p));
    }
    let dir = bench.path("dual");
    let (run, json) = check(
        &bench,
        &[
            "dual",
            "A.R1=1k",
            "A.R2=10k",
            "A.C=100n",
            "B.R=10k",
            "B.C=10n",
            "--svg",
            dir.to_str().expect("utf-8"),
        ],
    );
    let list = files(&json);
    assert_eq!(list.len(), 4, "{}", run.stdout);
    for name in [
        "waveform-a.svg",
        "waveform-b.svg",
        "histogram-a-period.svg",
        "histogram-b-pulse-width.svg",
    ] {
        assert!(dir.join(name).is_file(), "{name}");
    }
}

#[test]
fn text_report_names_the_files_and_skips_a_histogram_without_samples() {
    let bench = Bench::new();
    let dir = bench.path("plain");
    let dir_text = dir.to_str().expect("utf-8");
    let run = bench
        .run(&[
            "check",
            "square",
            "R=10k",
            "C=10n",
            "--family",
            "cmos",
            "--samples",
            "0",
            "--svg",
            dir_text,
        ])
        .ok()
        .stdout_has("files written:")
        .stdout_has("no Monte Carlo samples");
    let wave = dir.join("waveform.svg");
    assert!(
        run.stdout.contains(wave.to_str().expect("utf-8")),
        "{}",
        run.stdout
    );
    assert!(wave.is_file());
    assert!(!dir.join("histogram-period.svg").exists());
}

#[test]
fn schematic_is_in_the_report_with_networks_written_plainly() {
    let bench = Bench::new();
    let (run, json) = check(
        &bench,
        &[
            "astable",
            "R1=33k+2.2k",
            "R2=68k",
            "C=10n||2.2n",
            "--samples",
            "0",
        ],
    );
    assert_eq!(run.status, 0);
    let s = json["schematic"].as_str().expect("schematic string");
    assert!(
        s.contains("R1  = 33 kΩ in series with 2.2 kΩ (35.2 kΩ)"),
        "{s}"
    );
    assert!(
        s.contains("C   = 10 nF in parallel with 2.2 nF (12.2 nF)"),
        "{s}"
    );
    assert!(s.contains("timer"), "{s}");
    bench
        .run(&[
            "check",
            "astable",
            "R1=33k+2.2k",
            "R2=68k",
            "C=10n",
            "--samples",
            "0",
        ])
        .ok()
        .stdout_has("schematic:")
        .stdout_has("between +9 V and dis (DIS)");
    // A pair sits in the dual package, output A firing trigger B.
    let (_, json) = check(
        &bench,
        &[
            "pair",
            "R1=1k",
            "R2=10k",
            "C1=100n",
            "R3=10k",
            "C2=10n",
            "--samples",
            "0",
        ],
    );
    let s = json["schematic"].as_str().expect("schematic string");
    assert!(s.contains("dual timer"), "{s}");
    assert!(s.contains("output A through"), "{s}");
    assert!(s.contains("R3  = 10 kΩ"), "{s}");
}

#[test]
#[should_panic(expected = "overlap")]
fn the_overlap_check_bites() {
    // Two labels on one baseline, the second starting inside the first.
    let l = |text: &str, left: f64| Label {
        text: text.to_string(),
        left,
        right: left + 60.0,
        top: 10.0,
        bottom: 22.0,
    };
    assert_no_overlap(
        Path::new("synthetic.svg"),
        &[l("high 1 ms", 100.0), l("low 1 ms", 140.0)],
    );
}
