//! `onhand reach`: what the stock can reach for one circuit form — per capacitor network the
//! spans of pulse width (one-shot) or frequency (astable, square wave) the resistor networks
//! give with it, the holes in a range, and the one preferred-value purchase that closes most
//! of each hole. Owns the arguments, their conversion into a [`Request`] and writing the
//! picture (`--svg FILE`); the computation is `solve::reach`, the text and JSON report
//! `report::reach_text`, the picture `report::pictures::reach`. Exit 0 when the whole range is
//! reached, 1 when it has holes, 2 on bad input.

use super::find::{load_stock, techs};
use super::{Context, Status};
use crate::report::pictures::Reach;
use crate::report::reach_text as report;
use crate::solve::family_by_name;
use crate::solve::reach::{Hole, ReachForm, ReachMap, Request, fixes, reach};
use crate::timing::{Conditions, Model};
use crate::units::eseries::Series;
use crate::units::{parse_frequency_strict, parse_time_strict, parse_tolerance, parse_voltage};
use anyhow::{Context as _, Result, anyhow, bail};
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
    /// The textbook model (no output-drop, saturation, bias-current or DC-bias effect), as
    /// `find --ideal`; by default the real-part model `find` uses.
    #[arg(long)]
    ideal: bool,
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
        model: if args.ideal {
            Model::ideal()
        } else {
            Model::real()
        },
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
    report::title(map, req.family.name, req.conditions.vcc.si())
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
        let view = report::View {
            title: &title,
            family: req.family.name,
            vcc: req.conditions.vcc.si(),
            files: &files,
        };
        let s = report::json(&map, &holes, &view).context("writing JSON")?;
        writeln!(out, "{s}")?;
    } else {
        out.write_all(report::text(&map, &holes, &title, &files).as_bytes())?;
    }
    Ok(if holes.is_empty() {
        Status::Success
    } else {
        Status::NotMet
    })
}
