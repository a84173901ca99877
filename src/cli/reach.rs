//! `onhand reach`: what the stock can reach for one circuit form — per capacitor network the
//! spans of pulse width (one-shot) or frequency (astable, square wave) the resistor networks
//! give with it, the holes in a range, and the one preferred-value purchase that closes most
//! of each hole. Owns the arguments, their conversion into a [`Request`], the text and JSON
//! report, and writing the picture (`--svg FILE`); the computation is `solve::reach`, the
//! picture `report::pictures::reach`. Exit 0 when the whole range is reached, 1 when it has
//! holes, 2 on bad input.

use super::find::{load_stock, techs};
use super::{Context, Status};
use crate::report::pictures::Reach;
use crate::solve::family_by_name;
use crate::solve::reach::{
    Bound, Hole, NARROW_SHARE, ReachForm, ReachMap, Request, bridge, fixes, reach,
};
use crate::store::Kind;
use crate::timing::Conditions;
use crate::units::eseries::Series;
use crate::units::{
    Farads, Seconds, capacitance_text, format_sig, parse_frequency_strict, parse_time_strict,
    parse_tolerance, parse_voltage, percent_text, time_text,
};
use anyhow::{Context as _, Result, anyhow, bail};
use serde::Serialize;
use std::io::Write;
use std::path::PathBuf;
use std::time::Duration;

const EXAMPLES: &str = "\
Examples:
  onhand reach pulse                                  one-shot widths from 1 µs to 100 s
  onhand reach pulse --from 1ms --to 10s --tol 2%     a narrower range, a looser tolerance
  onhand reach astable --from 1Hz --to 20kHz --svg reach.svg
  onhand reach square --family cmos --pieces 3        output-driven square wave, CMOS timer
  onhand reach pulse --stock drawer.csv --buy-series E12

A value is reachable when some design from stock lands within --tol of it (for a frequency, its
period does), within the timer family's electrical limits. The astable keeps R1 the smallest
network the discharge pin allows (duty close to 50 %), so its reach is a safe under-estimate.
Exit status: 0 the whole range is reached, 1 it has holes, 2 bad input.";

/// Which circuit.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum FormArg {
    /// One-shot: the pulse width.
    Pulse,
    /// Classic astable: the frequency.
    Astable,
    /// Output-driven square wave: the frequency.
    Square,
}

/// Arguments of `reach`.
#[derive(Debug, clap::Args)]
#[command(after_help = EXAMPLES)]
pub struct ReachArgs {
    /// Circuit form.
    #[arg(value_enum)]
    form: FormArg,
    /// Low end of the range: a time for a pulse, a frequency otherwise (a time is then read as
    /// a period). Default 1 µs, or 10 mHz.
    #[arg(long, value_name = "VALUE")]
    from: Option<String>,
    /// High end of the range. Default 100 s, or the timer family's highest frequency.
    #[arg(long, value_name = "VALUE")]
    to: Option<String>,
    /// Most pieces in one position (1 to 3).
    #[arg(long, default_value_t = 2, value_name = "K")]
    pieces: usize,
    /// How close to a value a design must come for it to count as reached.
    #[arg(long, default_value = "1%", value_name = "PERCENT")]
    tol: String,
    /// Timer family: bipolar or cmos.
    #[arg(long, default_value = "bipolar")]
    family: String,
    /// Supply voltage.
    #[arg(long, default_value = "9V", value_name = "VOLTS")]
    vcc: String,
    /// Capacitor technologies allowed, comma separated (as for `find`; electrolytics and
    /// tantalum are left out unless named).
    #[arg(long, value_delimiter = ',', value_name = "LIST")]
    tech: Vec<String>,
    /// A capacitor's known voltage rating must be at least the supply times this margin.
    #[arg(long, default_value_t = 1.5, value_name = "FACTOR")]
    voltage_margin: f64,
    /// Preferred-value series for the purchases (E12 or E24).
    #[arg(long, default_value = "E24", value_name = "SERIES")]
    buy_series: String,
    /// Most capacitor rows to list; the rest are summarised.
    #[arg(long, default_value_t = 25, value_name = "N")]
    rows: usize,
    /// Also count stock held by reservations.
    #[arg(long)]
    include_held: bool,
    /// Write the reach picture (SVG) to this file.
    #[arg(long, value_name = "FILE")]
    svg: Option<PathBuf>,
    /// Use this CSV (the `onhand import` format) instead of the stock database.
    #[arg(long, value_name = "FILE")]
    stock: Option<PathBuf>,
}

/// A value on the axis of `form`: seconds for a pulse, hertz otherwise (a time given for a
/// frequency is a period).
fn axis_value(form: ReachForm, text: &str) -> Result<f64> {
    let t = text.trim();
    if form == ReachForm::Pulse {
        return Ok(parse_time_strict(t)?.si());
    }
    let is_time = t.ends_with('s') && !t.to_ascii_lowercase().ends_with("hz");
    let v = if is_time {
        let s = parse_time_strict(t)?.si();
        if s <= 0.0 {
            bail!("{t:?}: a period must be above zero");
        }
        1.0 / s
    } else {
        parse_frequency_strict(t)
            .with_context(|| {
                format!("{t:?}: give a frequency such as 1kHz (or a period such as 1ms)")
            })?
            .si()
    };
    Ok(v)
}

/// The request, from the arguments.
pub(super) fn request_of(args: &ReachArgs) -> Result<Request> {
    let form = match args.form {
        FormArg::Pulse => ReachForm::Pulse,
        FormArg::Astable => ReachForm::Astable,
        FormArg::Square => ReachForm::Square,
    };
    let family = family_by_name(&args.family)
        .ok_or_else(|| anyhow!("unknown family {:?}: use bipolar or cmos", args.family))?;
    let vcc = parse_voltage(&args.vcc).map_err(|e| anyhow!(e))?;
    if !(args.voltage_margin.is_finite() && args.voltage_margin >= 1.0) {
        bail!("--voltage-margin must be 1 or more");
    }
    let default = match form {
        ReachForm::Pulse => (1e-6, 100.0),
        _ => (0.01, family.max_freq.value),
    };
    let lo = match &args.from {
        Some(t) => axis_value(form, t).context("--from")?,
        None => default.0,
    };
    let hi = match &args.to {
        Some(t) => axis_value(form, t).context("--to")?,
        None => default.1,
    };
    Ok(Request {
        form,
        range: (lo.min(hi), lo.max(hi)),
        tol: parse_tolerance(&args.tol)
            .map_err(|e| anyhow!(e))?
            .widest()
            .si(),
        max_pieces: args.pieces,
        family,
        conditions: Conditions::ideal(vcc),
        cap_techs: techs(&args.tech, true)?,
        min_cap_rating: Some(vcc.si() * args.voltage_margin),
        max_rows: args.rows.max(1),
    })
}

/// The preferred-value series named by `--buy-series` (the one series parser,
/// `units::Series::from_str`; the purchase advice is built for E12 and E24).
pub(super) fn buy_series(text: &str) -> Result<Series> {
    let s: Series = text.parse().context("--buy-series")?;
    if !matches!(s, Series::E12 | Series::E24) {
        bail!("--buy-series {s}: use E12 or E24");
    }
    Ok(s)
}

/// The reach picture of `map`, with the purchases for its holes.
pub(super) fn picture(map: &ReachMap, holes: &[Hole], title: &str) -> String {
    Reach::of_map(map, holes, title).to_svg()
}

/// A plain title for the picture and the report.
pub(super) fn title_of(map: &ReachMap, req: &Request) -> String {
    let what = match map.form {
        ReachForm::Pulse => "one-shot pulse width",
        ReachForm::Astable => "astable frequency",
        ReachForm::Square => "square-wave frequency",
    };
    format!(
        "Reach of the stock: {what} within ±{}, {} timer at {}, up to {} per position",
        pct(map.tol),
        req.family.name,
        format_sig(req.conditions.vcc.si(), 3, "V"),
        if map.max_pieces == 1 {
            "one piece".to_string()
        } else {
            format!("{} pieces", map.max_pieces)
        }
    )
}

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

fn text(
    out: &mut dyn Write,
    map: &ReachMap,
    holes: &[Hole],
    title: &str,
    files: &[(String, String)],
) -> Result<()> {
    let u = map.form.unit();
    writeln!(out, "{title}")?;
    writeln!(
        out,
        "range {} … {}; reached means a design from stock within ±{} of the value{}",
        axis(map.range.0, u),
        axis(map.range.1, u),
        pct(map.tol),
        if map.form == ReachForm::Pulse {
            ""
        } else {
            " (of its period)"
        }
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

/// Run `reach`.
pub fn run(args: ReachArgs, ctx: &Context, out: &mut dyn Write) -> Result<Status> {
    let req = request_of(&args)?;
    let series = buy_series(&args.buy_series)?;
    let mut parts = load_stock(ctx, args.stock.as_deref())?;
    if args.include_held {
        for p in &mut parts {
            p.held = 0;
        }
    }
    let map = reach(&parts, &req).context("reach")?;
    let holes = fixes(&parts, &req, &map, series, Duration::from_secs(5)).context("purchases")?;
    let title = title_of(&map, &req);
    let mut files = Vec::new();
    if let Some(path) = &args.svg {
        let writer = ctx.files();
        if let Some(parent) = path.parent().filter(|p| !p.as_os_str().is_empty()) {
            writer.folder(parent)?;
        }
        writer.write(path, picture(&map, &holes, &title).as_bytes())?;
        files.push(("reach".to_string(), path.display().to_string()));
    }
    if ctx.json {
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
            schema: crate::report::style::JSON_SCHEMA,
            title: &title,
            form: map.form,
            range: map.range,
            unit: map.form.unit(),
            tolerance: map.tol,
            family: req.family.name,
            vcc: req.conditions.vcc.si(),
            max_pieces: map.max_pieces,
            limits: &map.limits,
            resistor_networks: map.resistor_networks,
            usable_resistor_networks: map.usable_resistor_networks,
            capacitor_networks: map.capacitor_networks,
            rows: &map.rows,
            others: map.others,
            others_add: &map.others_add,
            covered: &map.covered,
            holes: &holes,
            narrow_gaps: &map.narrow_gaps,
            files: files
                .iter()
                .map(|(k, p)| FileEntry { kind: k, path: p })
                .collect(),
        };
        let s = serde_json::to_string_pretty(&j).context("writing JSON")?;
        writeln!(out, "{s}")?;
    } else {
        text(out, &map, &holes, &title, &files)?;
    }
    Ok(if holes.is_empty() {
        Status::Success
    } else {
        Status::NotMet
    })
}
