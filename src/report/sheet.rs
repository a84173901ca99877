//! Build sheets and pick lists as self-contained HTML: one sheet per design variant (the
//! schematic, each position's parts and how they are wired, the bins, the expected times and
//! the waveform picture inline), and one pick list for a whole plan sorted by bin. No external
//! assets (no fonts, scripts, images or style sheets from anywhere else); print CSS keeps the
//! content inside the narrower of A4 (210 mm) and US Letter (215.9 mm) widths and the shorter
//! of their heights, so the same file prints well on either. Pure: returns strings; the
//! caller writes the files.

use super::svg::escape;
use std::fmt::Write as _;

/// One piece of a position: what it is and where it lives.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct SheetPiece {
    /// The part in a few words ("4.7 kΩ 1% metal film").
    pub part: String,
    /// Its bin ("bin C7", or "part #12" without one).
    pub bin: String,
}

/// One filled position of a design.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct SheetPosition {
    /// Position name ("R1", "C").
    pub name: String,
    /// The network in words ("47 nF in parallel with 470 nF").
    pub network: String,
    /// How its pieces are wired, without values ("2 in parallel", "single").
    pub wiring: String,
    /// The network's nominal value and worst case ("517 nF (worst case 491 nF … 543 nF)").
    pub value: String,
    /// Every piece, in the order of the network.
    pub pieces: Vec<SheetPiece>,
}

/// One design variant of one stage: the page a builder works from.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Variant {
    /// Plan name.
    pub plan: String,
    /// Stage name.
    pub stage: String,
    /// The stage's target in words.
    pub goal: String,
    /// Which units use this design ("units 1–25").
    pub units: String,
    /// The variant's number within its stage (1 for the first) and how many the stage has.
    pub variant: (usize, usize),
    /// Timer family and supply in words.
    pub conditions: String,
    /// The positions.
    pub positions: Vec<SheetPosition>,
    /// Expected results, one line each (nominal, target, worst case).
    pub expected: Vec<String>,
    /// The text schematic (pins and placements), shown as preformatted text.
    pub schematic: Option<String>,
    /// The waveform pictures (SVG documents), drawn inline.
    pub waveforms: Vec<String>,
    /// Warnings, notes and cautions.
    pub notes: Vec<String>,
}

/// One line of a pick list.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct PickLine {
    /// Bin.
    pub bin: String,
    /// Part in a few words.
    pub part: String,
    /// Pieces to take for the whole plan.
    pub pieces: u64,
    /// Pieces free in that bin before taking.
    pub free: i64,
    /// Which stages use it.
    pub used_by: String,
}

const STYLE: &str = "\
:root { color-scheme: light; }
* { box-sizing: border-box; }
body { font-family: sans-serif; font-size: 10.5pt; line-height: 1.35; color: #000; background: #fff;
  max-width: 180mm; margin: 8mm auto; padding: 0 4mm; }
h1 { font-size: 15pt; margin: 0 0 2mm; }
h2 { font-size: 12pt; margin: 5mm 0 2mm; border-bottom: 0.4mm solid #000; }
p.meta { margin: 0 0 2mm; }
table { border-collapse: collapse; width: 100%; margin: 1mm 0 3mm; }
th, td { border: 0.3mm solid #555; padding: 1mm 1.5mm; text-align: left; vertical-align: top; }
th { background: #e8e8e8; }
td.n { text-align: right; white-space: nowrap; }
td.check { width: 9mm; }
pre { font-family: monospace; font-size: 7pt; line-height: 1.2; white-space: pre; overflow: hidden;
  border: 0.3mm solid #999; padding: 2mm; margin: 1mm 0 3mm; }
figure { margin: 1mm 0 3mm; }
figure svg { width: 100%; height: auto; max-height: 95mm; }
.wiring { font-weight: bold; }
.caution { border: 0.6mm solid #000; padding: 2mm; margin: 2mm 0; font-weight: bold; }
ul.notes { margin: 1mm 0 3mm; padding-left: 5mm; }
footer { margin-top: 4mm; font-size: 8.5pt; color: #333; }
@page { margin: 14mm 15mm; }
@media print {
  body { margin: 0; padding: 0; max-width: none; }
  h2, table, pre, figure, .caution { break-inside: avoid; }
  th { -webkit-print-color-adjust: exact; print-color-adjust: exact; }
}
";

fn page(title: &str, body: &str) -> String {
    format!(
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n<title>{}</title>\n<style>\n{STYLE}</style>\n</head>\n<body>\n{body}</body>\n</html>\n",
        escape(title)
    )
}

/// An SVG document made fit to sit inside HTML: no XML declaration.
fn inline_svg(svg: &str) -> &str {
    match svg.find("<svg") {
        Some(i) => &svg[i..],
        None => "",
    }
}

/// A file name made of the plain letters and digits of `text` ("blinker kit" → "blinker-kit").
pub fn slug(text: &str) -> String {
    let mut out = String::new();
    for c in text.chars() {
        if c.is_ascii_alphanumeric() {
            out.push(c.to_ascii_lowercase());
        } else if !out.ends_with('-') && !out.is_empty() {
            out.push('-');
        }
    }
    let out = out.trim_end_matches('-').to_string();
    if out.is_empty() { "plan".into() } else { out }
}

/// The build sheet of one design variant.
pub fn variant_html(v: &Variant) -> String {
    let mut b = String::new();
    let _ = writeln!(
        b,
        "<h1>{} — stage “{}”, design {} of {}</h1>",
        escape(&v.plan),
        escape(&v.stage),
        v.variant.0,
        v.variant.1
    );
    let _ = writeln!(
        b,
        "<p class=\"meta\">For {}. Target: {}.</p>",
        escape(&v.units),
        escape(&v.goal)
    );
    if !v.goal.contains(&v.conditions) {
        let _ = writeln!(b, "<p class=\"meta\">{}.</p>", escape(&v.conditions));
    }
    if v.variant.1 > 1 {
        let _ = writeln!(
            b,
            "<p class=\"caution\">This stage is built {} different ways in this plan. Use this sheet only for {}.</p>",
            v.variant.1,
            escape(&v.units)
        );
    }
    let _ = writeln!(b, "<h2>Parts and wiring</h2>");
    let _ = writeln!(
        b,
        "<table>\n<tr><th>Position</th><th>Network</th><th>Wiring</th><th>Value</th><th>Pieces from</th><th>✓</th></tr>"
    );
    for p in &v.positions {
        let pieces: Vec<String> = p
            .pieces
            .iter()
            .map(|x| format!("{} — {}", escape(&x.part), escape(&x.bin)))
            .collect();
        let _ = writeln!(
            b,
            "<tr><td>{}</td><td>{}</td><td class=\"wiring\">{}</td><td>{}</td><td>{}</td><td class=\"check\"></td></tr>",
            escape(&p.name),
            escape(&p.network),
            escape(&p.wiring),
            escape(&p.value),
            pieces.join("<br>")
        );
    }
    let _ = writeln!(b, "</table>");
    if let Some(s) = &v.schematic {
        let _ = writeln!(b, "<h2>Schematic</h2>\n<pre>{}</pre>", escape(s));
    }
    if !v.expected.is_empty() {
        let _ = writeln!(b, "<h2>Expected</h2>\n<table>");
        for line in &v.expected {
            let _ = writeln!(b, "<tr><td>{}</td></tr>", escape(line));
        }
        let _ = writeln!(b, "</table>");
    }
    for w in &v.waveforms {
        let _ = writeln!(b, "<h2>Waveform</h2>\n<figure>{}</figure>", inline_svg(w));
    }
    if !v.notes.is_empty() {
        let _ = writeln!(b, "<h2>Notes</h2>\n<ul class=\"notes\">");
        for n in &v.notes {
            let _ = writeln!(b, "<li>{}</li>", escape(n));
        }
        let _ = writeln!(b, "</ul>");
    }
    let _ = writeln!(
        b,
        "<footer>Pin numbers are the usual industry pinout (from memory): check the data sheet of the part in hand. Where a build uses mains power or large charged capacitors, follow local codes and licensed practice.</footer>"
    );
    page(
        &format!("{} — {} — design {}", v.plan, v.stage, v.variant.0),
        &b,
    )
}

/// The pick list of a whole plan, sorted by bin (then part).
pub fn pick_list_html(plan: &str, units: u32, lines: &[PickLine]) -> String {
    let mut sorted: Vec<&PickLine> = lines.iter().collect();
    sorted.sort_by(|a, b| {
        natural(&a.bin)
            .cmp(&natural(&b.bin))
            .then(a.part.cmp(&b.part))
    });
    let total: u64 = lines.iter().map(|l| l.pieces).sum();
    let mut b = String::new();
    let _ = writeln!(b, "<h1>{} — pick list</h1>", escape(plan));
    let _ = writeln!(
        b,
        "<p class=\"meta\">{units} unit{}, {total} pieces from {} bin rows, in bin order.</p>",
        if units == 1 { "" } else { "s" },
        sorted.len()
    );
    let _ = writeln!(
        b,
        "<table>\n<tr><th>Bin</th><th>Part</th><th>Take</th><th>Free before</th><th>For</th><th>✓</th></tr>"
    );
    for l in sorted {
        let _ = writeln!(
            b,
            "<tr><td>{}</td><td>{}</td><td class=\"n\">{}</td><td class=\"n\">{}</td><td>{}</td><td class=\"check\"></td></tr>",
            escape(&l.bin),
            escape(&l.part),
            l.pieces,
            l.free,
            escape(&l.used_by)
        );
    }
    let _ = writeln!(b, "</table>");
    page(&format!("{plan} — pick list"), &b)
}

/// A sort key that orders "A2" before "A10": runs of digits compare as numbers.
fn natural(text: &str) -> Vec<(String, u64)> {
    let mut out = Vec::new();
    let mut word = String::new();
    let mut num: Option<u64> = None;
    for c in text.chars() {
        if let Some(d) = c.to_digit(10) {
            num = Some(
                num.unwrap_or(0)
                    .saturating_mul(10)
                    .saturating_add(u64::from(d)),
            );
        } else {
            if let Some(n) = num.take() {
                out.push((std::mem::take(&mut word), n));
            }
            word.push(c);
        }
    }
    out.push((word, num.unwrap_or(0)));
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn variant() -> Variant {
        Variant {
            plan: "class <kit>".into(),
            stage: "blink".into(),
            goal: "astable of 1.5 Hz".into(),
            units: "units 1–25".into(),
            variant: (1, 2),
            conditions: "cmos family at 9 V".into(),
            positions: vec![SheetPosition {
                name: "C".into(),
                network: "47 nF in parallel with 470 nF".into(),
                wiring: "2 in parallel".into(),
                value: "517 nF".into(),
                pieces: vec![
                    SheetPiece {
                        part: "47 nF 5% film".into(),
                        bin: "bin K1".into(),
                    },
                    SheetPiece {
                        part: "470 nF 5% film".into(),
                        bin: "bin K2".into(),
                    },
                ],
            }],
            expected: vec!["period 664.6 ms".into()],
            schematic: Some("  R1 = 680 kΩ between supply and dis".into()),
            waveforms: vec![
                "<?xml version=\"1.0\"?>\n<svg xmlns=\"http://www.w3.org/2000/svg\"></svg>".into(),
            ],
            notes: vec!["X7R drifts".into()],
        }
    }

    #[test]
    fn a_sheet_is_self_contained_and_escapes_text() {
        let html = variant_html(&variant());
        assert!(html.starts_with("<!DOCTYPE html>"));
        assert!(html.contains("class &lt;kit&gt;"));
        assert!(html.contains("47 nF in parallel with 470 nF"));
        assert!(html.contains("bin K1") && html.contains("bin K2"));
        assert!(html.contains("built 2 different ways"));
        assert!(html.contains("@page"));
        // The picture is inline, without its XML declaration; nothing is fetched from outside.
        assert!(html.contains("<figure><svg"));
        assert!(!html.contains("<?xml"));
        for outside in ["http://", "https://", "src=", "<link", "@import", "url("] {
            let rest = html.replace("xmlns=\"http://www.w3.org/2000/svg\"", "");
            assert!(!rest.contains(outside), "{outside}");
        }
    }

    #[test]
    fn the_pick_list_is_in_bin_order() {
        let line = |bin: &str| PickLine {
            bin: bin.into(),
            part: "1 kΩ".into(),
            pieces: 2,
            free: 5,
            used_by: "blink".into(),
        };
        let html = pick_list_html("kit", 3, &[line("A10"), line("B1"), line("A2")]);
        let a2 = html.find(">A2<").expect("A2");
        let a10 = html.find(">A10<").expect("A10");
        let b1 = html.find(">B1<").expect("B1");
        assert!(a2 < a10 && a10 < b1, "{html}");
        assert!(html.contains("6 pieces from 3 bin rows"));
    }

    #[test]
    fn slugs_are_plain() {
        assert_eq!(slug("Blinker kit"), "blinker-kit");
        assert_eq!(slug("=HYPERLINK(1)"), "hyperlink-1");
        assert_eq!(slug("../.."), "plan");
    }
}
