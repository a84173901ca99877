//! The report of `onhand reach` (text and JSON): the range, the resistor networks and their
//! limits, what each capacitor network reaches, the holes and the purchase that closes most of
//! each. Pure: takes the map of `solve::reach`, returns strings.

use super::style::JSON_SCHEMA;
use crate::model::part::Kind;
use crate::solve::reach::{Bound, Hole, NARROW_SHARE, ReachForm, ReachMap, bridge};
use crate::units::{Farads, Seconds, capacitance_text, format_sig, percent_text, time_text};
use serde::Serialize;
use std::fmt::Write as _;

fn pct(x: f64) -> String {
    percent_text(x, 3)
}

/// A value on the report's axis: times in the units people use (`1 h`, not `3.6 ks`),
/// everything else in engineering form, three significant digits.
fn axis(x: f64, unit: &str) -> String {
    match (unit, Seconds::from_si(x)) {
        ("s", Some(t)) => time_text(t, 3),
        _ => format_sig(x, 3, unit),
    }
}

fn spans_text(spans: &[(f64, f64)], unit: &str, most: usize) -> String {
    if spans.is_empty() {
        return "nothing in range".into();
    }
    let mut parts: Vec<String> = spans
        .iter()
        .take(most)
        .map(|(a, b)| format!("{} … {}", axis(*a, unit), axis(*b, unit)))
        .collect();
    if spans.len() > most {
        parts.push(format!("and {} more", spans.len() - most));
    }
    parts.join(", ")
}

fn kind_name(k: Kind) -> &'static str {
    if k == Kind::Capacitor {
        "capacitor"
    } else {
        "resistor"
    }
}

/// A part's value for the report: capacitors as technicians write them (`4700 µF`, never
/// `4.7 mF`), resistors in engineering form; three significant digits.
fn part_value(v: f64, k: Kind) -> String {
    match (k, Farads::from_si(v)) {
        (Kind::Capacitor, Some(c)) => capacitance_text(c, 3),
        _ => format_sig(v, 3, "Ω"),
    }
}

/// The report of `reach` as text: the range, the resistor limits, one row per capacitor
/// network, the holes with the purchase that closes most of each, the files written.
pub fn text(map: &ReachMap, holes: &[Hole], title: &str, files: &[(String, String)]) -> String {
    let mut out = String::new();
    // Writing into a String cannot fail.
    let _ = write_text(&mut out, map, holes, title, files);
    out
}

fn write_text(
    out: &mut String,
    map: &ReachMap,
    holes: &[Hole],
    title: &str,
    files: &[(String, String)],
) -> std::fmt::Result {
    let u = map.form.unit();
    writeln!(out, "{title}")?;
    writeln!(
        out,
        "range {} … {}; reached means a design from stock whose predicted {}, model band and all, lies within ±{} of the value{} (as find accepts it)",
        axis(map.range.0, u),
        axis(map.range.1, u),
        if map.form == ReachForm::Pulse {
            "width"
        } else {
            "period"
        },
        pct(map.tol),
        if map.form == ReachForm::Pulse {
            ""
        } else {
            "'s period"
        }
    )?;
    writeln!(
        out,
        "model: {}",
        crate::report::find::describe_model(&map.model)
    )?;
    writeln!(
        out,
        "\nresistor networks: {} in stock, {} within the electrical limits{}:",
        map.resistor_networks,
        map.usable_resistor_networks,
        if map.form == ReachForm::Astable {
            " (R2 networks that found an R1)"
        } else {
            ""
        }
    )?;
    for l in &map.limits {
        writeln!(
            out,
            "  {:<6} {} {:<9} {}",
            l.position,
            match l.bound {
                Bound::AtLeast => "≥",
                Bound::AtMost => "≤",
            },
            format_sig(l.ohms, 3, "Ω"),
            l.reason
        )?;
    }
    if map.form == ReachForm::Astable {
        writeln!(
            out,
            "  R1 is the smallest network of one or two pieces the discharge pin allows with each R2 (duty close to 50 %)"
        )?;
    }
    writeln!(
        out,
        "\ncapacitor networks: {} in stock; listed: single capacitors and the two-piece networks that add reach",
        map.capacitor_networks
    )?;
    let width = map
        .rows
        .iter()
        .map(|r| r.label.chars().count())
        .max()
        .unwrap_or(10)
        .clamp(14, 40);
    let narrow = NARROW_SHARE * map.tol;
    // A row is written as its extent and the number of gaps in it; the holes below list the
    // gaps of the union.
    let bridged = |spans: &[(f64, f64)], most: usize| {
        let (b, n) = bridge(spans, narrow);
        let (Some(first), Some(last)) = (b.first(), b.last()) else {
            return "nothing in range".to_string();
        };
        if b.len() > most {
            let gaps = b.len() - 1;
            return format!(
                "{} … {} with {gaps} gap{} (and {n} narrow)",
                axis(first.0, u),
                axis(last.1, u),
                if gaps == 1 { "" } else { "s" }
            );
        }
        let mut s = spans_text(&b, u, most);
        if n > 0 {
            s += &format!(" (with {n} narrow gap{})", if n == 1 { "" } else { "s" });
        }
        s
    };
    for r in &map.rows {
        writeln!(out, "  {:<width$}  {}", r.label, bridged(&r.spans, 4))?;
    }
    if map.others > 0 {
        writeln!(
            out,
            "  {:<width$}  {}",
            format!("+{} more", map.others),
            if map.others_add.is_empty() {
                "add nothing beyond the rows above".to_string()
            } else {
                format!("add {}", bridged(&map.others_add, 4))
            }
        )?;
    }
    writeln!(
        out,
        "  {:<width$}  {}",
        "any capacitor",
        bridged(&map.covered, 8)
    )?;
    if holes.is_empty() {
        writeln!(
            out,
            "\nno holes: the stock reaches every value in the range"
        )?;
    } else {
        writeln!(out, "\nholes (nothing in stock reaches these):")?;
        for h in holes {
            let fix = match (&h.fix, h.searched) {
                (Some(f), _) => {
                    let left = if f.left.is_empty() {
                        String::new()
                    } else {
                        format!("; still out of reach: {}", spans_text(&f.left, u, 3))
                    };
                    format!(
                        "buy one {} {} ({:?}): closes {}{left}",
                        part_value(f.value, f.kind),
                        kind_name(f.kind),
                        f.series,
                        pct(f.closes)
                    )
                }
                (None, true) => "no single purchase closes any of it".to_string(),
                (None, false) => "no purchase looked for (only the widest holes are)".to_string(),
            };
            let span = format!("{} … {}", axis(h.lo, u), axis(h.hi, u));
            writeln!(out, "  {span:<22} {fix}")?;
        }
        writeln!(
            out,
            "  (each purchase checked by recomputing the reach with it: resistors 1 % metal film, capacitors 5 % film)"
        )?;
    }
    if !map.narrow_gaps.is_empty() {
        writeln!(
            out,
            "  plus {} narrow gap{} under {} wide, not listed: every value in them is within ±{} of a design",
            map.narrow_gaps.len(),
            if map.narrow_gaps.len() == 1 { "" } else { "s" },
            pct(narrow),
            pct(map.tol * (1.0 + NARROW_SHARE / 2.0))
        )?;
    }
    if !files.is_empty() {
        writeln!(out, "\nfiles written:")?;
        for (kind, path) in files {
            writeln!(out, "  {kind:<10} {path}")?;
        }
    }
    Ok(())
}

/// A file written, as listed in the JSON report.
#[derive(Debug, Serialize)]
struct FileEntry<'a> {
    kind: &'a str,
    path: &'a str,
}

/// What the JSON report carries beside the map: the title, the family and supply, the files.
#[derive(Debug, Clone, Copy)]
pub struct View<'a> {
    /// The report's title.
    pub title: &'a str,
    /// Timer family name.
    pub family: &'a str,
    /// Supply, volts.
    pub vcc: f64,
    /// Files written, as (kind, path).
    pub files: &'a [(String, String)],
}

/// The report of `reach` as pretty JSON (no final newline).
pub fn json(map: &ReachMap, holes: &[Hole], view: &View<'_>) -> serde_json::Result<String> {
    #[derive(Serialize)]
    struct J<'a> {
        schema: u32,
        title: &'a str,
        form: ReachForm,
        range: (f64, f64),
        unit: &'static str,
        tolerance: f64,
        family: &'a str,
        vcc: f64,
        max_pieces: usize,
        model: crate::timing::Model,
        limits: &'a [crate::solve::reach::Limit],
        resistor_networks: usize,
        usable_resistor_networks: usize,
        capacitor_networks: usize,
        rows: &'a [crate::solve::reach::CapRow],
        others: usize,
        others_add: &'a [(f64, f64)],
        covered: &'a [(f64, f64)],
        holes: &'a [Hole],
        narrow_gaps: &'a [(f64, f64)],
        files: Vec<FileEntry<'a>>,
    }
    let j = J {
        schema: JSON_SCHEMA,
        title: view.title,
        form: map.form,
        range: map.range,
        unit: map.form.unit(),
        tolerance: map.tol,
        family: view.family,
        vcc: view.vcc,
        max_pieces: map.max_pieces,
        model: map.model,
        limits: &map.limits,
        resistor_networks: map.resistor_networks,
        usable_resistor_networks: map.usable_resistor_networks,
        capacitor_networks: map.capacitor_networks,
        rows: &map.rows,
        others: map.others,
        others_add: &map.others_add,
        covered: &map.covered,
        holes,
        narrow_gaps: &map.narrow_gaps,
        files: view
            .files
            .iter()
            .map(|(k, p)| FileEntry { kind: k, path: p })
            .collect(),
    };
    serde_json::to_string_pretty(&j)
}

/// A plain title for the picture and the report.
pub fn title(map: &ReachMap, family: &str, vcc: f64) -> String {
    let what = match map.form {
        ReachForm::Pulse => "one-shot pulse width",
        ReachForm::Astable => "astable frequency",
        ReachForm::Square => "square-wave frequency",
    };
    format!(
        "Reach of the stock: {what} within ±{}, {family} timer at {}, up to {} per position",
        pct(map.tol),
        format_sig(vcc, 3, "V"),
        if map.max_pieces == 1 {
            "one piece".to_string()
        } else {
            format!("{} pieces", map.max_pieces)
        }
    )
}
