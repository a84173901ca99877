//! `onhand find`: designs from the drawer with the fewest pieces.
//!
//! Converts the arguments once into a [`Goal`] and [`Settings`], loads the stock snapshot
//! ([`load_stock`]), runs the pure search, and hands the outcome to `report::find`. Exit 0 when
//! a design is found, 1 when nothing in stock meets the target (with the closest design and a
//! single purchase that fixes it), 2 on bad input.

use super::{Context, Status};
use crate::report::find as render;
use crate::solve::suggest::advise;
use crate::solve::{Duty, Goal, Rank, Settings, StageGoal, family_by_name, solve};
use crate::store::{Kind, Part, Technology, Value};
use crate::timing::{Conditions, DiodeModel, Model};
use crate::units::eseries::Series;
use crate::units::{
    Seconds, parse_capacitance, parse_frequency, parse_resistance, parse_time, parse_tolerance,
    parse_voltage, time_text,
};
use anyhow::{Context as _, Result, anyhow, bail};
use std::io::Write;
use std::path::{Path, PathBuf};
use std::time::Duration;

/// Arguments of `find`.
#[derive(Debug, clap::Args)]
#[command(after_help = FIND_EXAMPLES)]
pub struct FindArgs {
    #[command(subcommand)]
    target: Target,
    #[command(flatten)]
    opts: Box<FindOptions>,
}

/// Options shared by every form of `find` (boxed: they are many).
#[derive(Debug, clap::Args)]
struct FindOptions {
    /// Search this CSV (the `onhand import` format) instead of the stock database.
    #[arg(long, global = true, value_name = "FILE")]
    stock: Option<PathBuf>,
    /// Allowed deviation of each targeted quantity from its target (`--tol` is an old
    /// spelling of the same option).
    #[arg(
        long,
        global = true,
        default_value = "1%",
        value_name = "PERCENT",
        alias = "tol"
    )]
    within: String,
    /// Timer family: bipolar or cmos.
    #[arg(long, global = true, default_value = "bipolar")]
    family: String,
    /// Supply voltage.
    #[arg(long, global = true, default_value = "9V", value_name = "VOLTS")]
    vcc: String,
    /// Most pieces in one position (1 to 4).
    #[arg(long, global = true, default_value_t = 3, value_name = "K")]
    pieces: usize,
    /// Capacitor technologies allowed, comma separated (film,c0g,x7r,y5v,electrolytic,tantalum,
    /// other or all). Timing searches leave out electrolytics and tantalum unless named here.
    #[arg(long, global = true, value_delimiter = ',', value_name = "LIST")]
    tech: Vec<String>,
    /// A capacitor's known voltage rating must be at least the supply times this margin
    /// (parts with no recorded rating are allowed, with a warning).
    #[arg(long, global = true, default_value_t = 1.5, value_name = "FACTOR")]
    voltage_margin: f64,
    /// Require the whole worst-case interval (part tolerances and the timer's own initial
    /// error) inside the target window, not just the nominal result.
    #[arg(long, global = true)]
    guarantee: bool,
    /// Temperature excursion either side of 25 °C for the timer's drift, which the worst case
    /// adds to the timer's initial error (the same figure and default as `check`).
    #[arg(long, global = true, default_value_t = crate::solve::Excursion::DEFAULT_TEMP_SPAN_C, value_name = "DEG_C")]
    temp_span: f64,
    /// Supply excursion either way for the timer's supply drift (the same as `check`).
    #[arg(long, global = true, default_value = "0", value_parser = crate::units::parse_voltage, value_name = "VOLTS")]
    supply_swing: crate::units::Volts,
    /// How many ranked designs to show.
    #[arg(long, global = true, default_value_t = 3, value_name = "N")]
    alternatives: usize,
    /// Also use stock that is held by reservations (by default only unreserved stock is used).
    #[arg(long, global = true)]
    include_held: bool,
    /// Stop the search after this long and report the best found with what was proven. When
    /// nothing fits, the closest design and purchase advice share the same budget (at least 1 s).
    #[arg(long, global = true, default_value = "10s", value_name = "TIME")]
    time_limit: String,
    /// Steering diodes (steered form): a fixed forward drop such as 0.7V, or `ideal` for no
    /// drop. Default: a current-dependent small-signal silicon diode (`--diode-drop` is an old
    /// spelling).
    #[arg(long, global = true, value_name = "VOLTS|ideal", alias = "diode-drop")]
    diode: Option<String>,
    /// The textbook model: no diode, output-drop, saturation, bias-current or DC-bias effect.
    /// Default: the real board, every effect on.
    #[arg(long, global = true)]
    ideal: bool,
    /// Preferred-value series for the purchase suggestion (E12 or E24; `--buy` is an old
    /// spelling).
    #[arg(
        long,
        global = true,
        default_value = "E24",
        value_name = "SERIES",
        alias = "buy"
    )]
    buy_series: String,
    /// Write SVG pictures of the best design into this folder (created if missing): the
    /// waveform of every stage and the Monte Carlo histogram; when nothing fits, the reach of
    /// the stock around the target, so the hole shows.
    #[arg(long, global = true, value_name = "DIR")]
    svg: Option<PathBuf>,
    /// Write the SPICE netlist of the best design (its real pieces) to this file; run it with
    /// `ngspice -b FILE`.
    #[arg(long, global = true, value_name = "FILE")]
    netlist: Option<PathBuf>,
    /// Write a printable build sheet (HTML) of the best design, and its pick list, here.
    #[arg(long, global = true, value_name = "DIR")]
    sheet: Option<PathBuf>,
}

const FIND_EXAMPLES: &str = "\
Examples:
  onhand find value 68k --within 1%              a substitute for a 68 kΩ resistor
  onhand find pulse 250ms                        a one-shot of 250 ms
  onhand find astable 1kHz --duty 60..70%        a classic astable
  onhand find steered --high 1ms --low 200us     duty below 50 % with steering diodes
  onhand find square 1kHz --family cmos          one resistor from the output
  onhand find pair --freq 1kHz --width 200us     an astable triggering a one-shot
  onhand find dual pulse:250ms astable:2Hz       two stages in one 556 package
  onhand find pulse 250ms --svg pictures --netlist oneshot.cir

Each targeted quantity must lie within --within of its target (for a frequency, the period
does), its whole model band included: the default model is the real board (small-signal steering
diodes, output drop, discharge saturation, pin bias currents, class-2 DC-bias loss); --ideal gives
the textbook closed forms. Every position's `expression` in --json can be handed to `onhand check`.
Exit codes: 0 found, 1 nothing meets the target, 2 error, 3 stopped at --time-limit first.";

#[derive(Debug, clap::Subcommand)]
enum Target {
    /// A network that substitutes one resistor or capacitor value.
    Value {
        /// The value, e.g. 68k or 100nF.
        value: String,
        /// Resistor or capacitor (default: guessed from the value's unit or prefix).
        #[arg(long)]
        kind: Option<String>,
    },
    /// A monostable (one-shot) with this pulse width.
    Pulse {
        /// Pulse width, e.g. 250ms.
        width: String,
    },
    /// A classic astable with this frequency (or --period).
    Astable {
        /// Frequency, e.g. 1kHz.
        freq: Option<String>,
        /// Period instead of frequency, e.g. 1ms.
        #[arg(long, conflicts_with = "freq")]
        period: Option<String>,
        /// Duty cycle: a window such as 60..70%, a point with its window such as 65%±2, or a
        /// point alone such as 65% (±1 point, as in plan files).
        #[arg(long)]
        duty: Option<String>,
    },
    /// A diode-steered astable with separate high and low times (duty below 50 % allowed).
    Steered {
        /// Output high time.
        #[arg(long)]
        high: String,
        /// Output low time.
        #[arg(long)]
        low: String,
    },
    /// An output-driven square wave (one resistor from the output to the capacitor).
    Square {
        /// Frequency, e.g. 1kHz.
        freq: Option<String>,
        /// Period instead of frequency.
        #[arg(long, conflicts_with = "freq")]
        period: Option<String>,
    },
    /// An astable that triggers a one-shot: steady frequency, set pulse width.
    Pair {
        /// Frequency of the astable.
        #[arg(long, conflicts_with = "period")]
        freq: Option<String>,
        /// Period of the astable instead.
        #[arg(long)]
        period: Option<String>,
        /// Width of the one-shot's pulse (must stay below the period).
        #[arg(long)]
        width: String,
    },
    /// Two independent stages in one dual (556) package, sharing the stock.
    Dual {
        /// First stage: pulse:WIDTH, astable:FREQ[:DUTY], square:FREQ or steered:HIGH:LOW.
        first: String,
        /// Second stage, same forms.
        second: String,
    },
}

/// Run `find`.
pub fn run(args: FindArgs, ctx: &Context, out: &mut dyn Write) -> Result<Status> {
    let target = args.target;
    let args = *args.opts;
    let tol = parse_tolerance(&args.within)
        .map_err(|e| anyhow!(e))?
        .widest()
        .si();
    if !(args.temp_span.is_finite() && args.temp_span >= 0.0) {
        bail!("--temp-span must be a non-negative number of °C");
    }
    let family = family_by_name(&args.family)
        .ok_or_else(|| anyhow!("unknown family {:?}: use bipolar or cmos", args.family))?;
    let vcc = parse_voltage(&args.vcc).map_err(|e| anyhow!(e))?;
    let conditions = Conditions::ideal(vcc);
    let mut model = if args.ideal {
        Model::ideal()
    } else {
        Model::real()
    };
    match args.diode.as_deref().map(str::trim) {
        None => {}
        Some(d) if d.eq_ignore_ascii_case("ideal") => model.diode = DiodeModel::Ideal,
        Some(d) => {
            let v = parse_voltage(d).map_err(|e| anyhow!("--diode {d:?}: {e}"))?;
            model.diode = DiodeModel::Fixed(v);
        }
    }
    let time_limit = parse_time(&args.time_limit).map_err(|e| anyhow!(e))?.si();
    if time_limit.is_nan() || time_limit <= 0.0 {
        bail!("--time-limit must be above zero (e.g. 10s)");
    }
    if !(args.voltage_margin.is_finite() && args.voltage_margin >= 1.0) {
        bail!("--voltage-margin must be 1 or more");
    }
    let series = match args.buy_series.to_ascii_uppercase().as_str() {
        "E12" => Series::E12,
        "E24" => Series::E24,
        other => bail!("--buy-series {other:?}: use E12 or E24"),
    };
    let goal = goal_of(&target, tol)?;
    // A frequency above the family's limit cannot be met by any part: say so at once rather
    // than let the search refuse every candidate until its time limit.
    if let Some(reason) = crate::solve::search::out_of_reach(&goal, &family, tol) {
        if ctx.json {
            writeln!(
                out,
                "{}",
                serde_json::json!({"found": false, "complete": true, "reason": reason, "designs": []})
            )?;
        } else {
            writeln!(out, "Nothing can meet this target: {reason}.")?;
        }
        return Ok(Status::NotMet);
    }
    let timing = !matches!(goal, Goal::Value { .. });
    let cap_techs = techs(&args.tech, timing)?;
    let settings = Settings {
        tol,
        max_pieces: args.pieces,
        alternatives: args.alternatives,
        guarantee: args.guarantee,
        family: family.clone(),
        model,
        conditions,
        cap_techs,
        min_cap_rating: Some(vcc.si() * args.voltage_margin),
        time_limit: Some(Duration::from_secs_f64(time_limit.max(0.001))),
        rank: Rank::FewestPieces,
        excursion: crate::solve::Excursion {
            temp_span_c: args.temp_span,
            supply_swing: args.supply_swing,
        },
    };
    let mut parts = load_stock(ctx, args.stock.as_deref())?;
    if args.include_held {
        for p in &mut parts {
            p.held = 0;
        }
    }
    // Said at once, not after the time limit: no part could meet the window, or no network of
    // the stock comes near the target (unless --svg asks for the picture of the stock's reach
    // around the target, which the full search draws).
    if let Some(reason) = crate::solve::search::guarantee_out_of_reach(&parts, &goal, &settings)
        .or_else(|| {
            args.svg
                .is_none()
                .then(|| {
                    crate::solve::search::stock_out_of_reach(&parts, &goal, &settings).or_else(
                        || crate::solve::search::model_band_out_of_reach(&parts, &goal, &settings),
                    )
                })
                .flatten()
        })
    {
        if ctx.json {
            writeln!(
                out,
                "{}",
                serde_json::json!({"found": false, "result": "none", "complete": true, "reason": reason, "designs": []})
            )?;
        } else {
            writeln!(out, "Nothing can meet this target: {reason}.")?;
        }
        return Ok(Status::NotMet);
    }
    let outcome = solve(&parts, &goal, &settings).context("search")?;
    // A search stopped by the clock proved nothing about "nothing fits": no closest design or
    // purchase is offered for it.
    let advice = if outcome.designs.is_empty() && outcome.complete {
        // The advice shares the command's time budget: what the search left, at least a second.
        let spent = Duration::from_secs_f64(outcome.seconds);
        let rest = settings
            .time_limit
            .map(|t| t.saturating_sub(spent).max(Duration::from_secs(1)));
        let advice_settings = Settings {
            time_limit: rest,
            ..settings.clone()
        };
        Some(advise(&parts, &goal, &advice_settings, series).context("advice")?)
    } else {
        None
    };
    let view = render::View {
        goal: &goal,
        settings: &settings,
        parts: &parts,
        outcome: &outcome,
        advice: advice.as_ref(),
    };
    let written = if args.svg.is_some() || args.netlist.is_some() {
        let wanted = Wanted {
            svg: args.svg.as_deref(),
            netlist: args.netlist.as_deref(),
            pair: matches!(target, Target::Pair { .. }),
            series,
            writer: ctx.files(),
        };
        files::write(&wanted, &goal, &settings, &parts, &outcome)?
    } else {
        files::Written::default()
    };
    let sheets = match (&args.sheet, outcome.designs.first()) {
        (Some(dir), Some(best)) => {
            super::plan::write_find_sheet(ctx, dir, &goal, &settings, &parts, best)?
        }
        _ => Vec::new(),
    };
    if ctx.json {
        let mut buf = Vec::new();
        render::json(&mut buf, &view)?;
        let mut j: serde_json::Value =
            serde_json::from_slice(&buf).context("reading back the JSON report")?;
        if let Some(obj) = j.as_object_mut() {
            obj.insert("files".into(), serde_json::to_value(&written.files)?);
            obj.insert("netlist".into(), serde_json::to_value(&written.netlist)?);
            obj.insert("notes".into(), serde_json::to_value(&written.notes)?);
            obj.insert("sheets".into(), serde_json::to_value(&sheets)?);
        }
        crate::cli::json::pretty(out, &j)?;
    } else {
        render::text(out, &view)?;
        written.text(out)?;
        for f in &sheets {
            writeln!(out, "Build sheet written: {}", f.display())?;
        }
    }
    Ok(match (outcome.designs.is_empty(), outcome.complete) {
        (false, _) => Status::Success,
        (true, true) => Status::NotMet,
        (true, false) => Status::Stopped,
    })
}

/// Which files `find` was asked for.
struct Wanted<'a> {
    svg: Option<&'a Path>,
    netlist: Option<&'a Path>,
    /// The two stages are a pace astable triggering a width one-shot (else independent).
    pair: bool,
    series: Series,
    /// The one safe writer for every file.
    writer: super::FileWriter,
}

/// The files of `find --svg` and `--netlist`, through the helpers `check` uses.
mod files {
    use super::super::output::{
        Analysed, Built, CircuitRow, FileReport, Layout, NetlistReport, Pictures, stage_of,
        write_netlist,
    };
    use super::Wanted;
    use crate::network::Combine;
    use crate::solve::reach::{ReachForm, Request, fixes, reach};
    use crate::solve::search::stage_conditions;
    use crate::solve::{Design, Goal, Outcome, Settings, StageGoal};
    use crate::store::{Kind, Part, Value};
    use crate::timing::tolerance::Samples;
    use crate::timing::{
        Analysis, Circuit, Piece, Position, Quantity, Spread, StageModel, Steering, Target,
    };
    use crate::units::Ratio;
    use anyhow::{Context as _, Result, anyhow};
    use std::io::Write;
    use std::time::Duration;

    /// Monte Carlo draws for the histogram (seeded, so the picture is reproducible).
    const SAMPLES: usize = 10_000;
    const SEED: u64 = 1;

    /// What was written.
    #[derive(Debug, Default)]
    pub(super) struct Written {
        pub(super) files: Vec<FileReport>,
        pub(super) netlist: Option<NetlistReport>,
        pub(super) notes: Vec<String>,
    }

    impl Written {
        /// The plain-text list of files, as `check` prints it.
        pub(super) fn text(&self, out: &mut dyn Write) -> std::io::Result<()> {
            if self.files.is_empty() && self.notes.is_empty() {
                return Ok(());
            }
            writeln!(out, "\nfiles written:")?;
            for f in &self.files {
                writeln!(out, "  {:<10} {}", f.kind, f.path)?;
            }
            if let Some(n) = &self.netlist {
                writeln!(out, "  (run the netlist with: ngspice -b {})", n.path)?;
            }
            for n in &self.notes {
                writeln!(out, "  note: {n}")?;
            }
            Ok(())
        }
    }

    fn si(p: &Part) -> f64 {
        match p.value {
            Value::Resistance(v) => v.si(),
            Value::Capacitance(v) => v.si(),
            Value::None => f64::NAN,
        }
    }

    /// The stages of a design as `check` builds them: every piece with its stocked tolerance.
    fn built(
        d: &Design,
        stages: &[StageGoal],
        s: &Settings,
        parts: &[Part],
        pair: bool,
    ) -> Result<Vec<Built>> {
        let labels: [&'static str; 2] = if stages.len() < 2 {
            ["", ""]
        } else if pair {
            ["pace", "width"]
        } else {
            ["timer A", "timer B"]
        };
        let mut out = Vec::new();
        for (si_, g) in stages.iter().enumerate() {
            let mut ps: Vec<Position> = d
                .positions
                .iter()
                .filter(|p| p.stage == si_)
                .map(|p| {
                    let pieces = p
                        .rows
                        .iter()
                        .map(|&r| {
                            let part = parts
                                .get(r)
                                .ok_or_else(|| anyhow!("design refers to a missing stock row"))?;
                            Ok(Piece {
                                value: si(part),
                                tolerance: part.tolerance,
                            })
                        })
                        .collect::<Result<Vec<_>>>()?;
                    Ok(Position {
                        name: p.name.to_string(),
                        combine: if p.kind == Kind::Capacitor {
                            Combine::Capacitive
                        } else {
                            Combine::Resistive
                        },
                        net: p.net.clone(),
                        pieces,
                    })
                })
                .collect::<Result<Vec<_>>>()?;
            let c = ps.pop().ok_or_else(|| anyhow!("design has no capacitor"))?;
            let mut it = ps.into_iter();
            let r1 = it.next().ok_or_else(|| anyhow!("design has no resistor"))?;
            let r2 = it.next();
            let form = g.form();
            let model = StageModel {
                form,
                steering: Steering::default(),
                r1,
                r2,
                c,
                conditions: stage_conditions(g, s),
                // The search's own timer error: initial error plus drift over the excursion.
                timer_error: crate::units::Ratio::from_si(s.timer_error(g)).unwrap_or_default(),
            };
            let stage = stage_of(&model, None)?;
            out.push(Built {
                label: labels[si_.min(1)],
                stage,
                model,
            });
        }
        Ok(out)
    }

    /// The quantity a stage's goal targets, for the histogram's window.
    fn target_of(g: &StageGoal, tol: f64) -> Option<Target> {
        let within = Ratio::from_si(tol)?;
        let (quantity, value) = match *g {
            StageGoal::Pulse { width } => (Quantity::High, width),
            StageGoal::Astable { period, .. } | StageGoal::Square { period } => {
                (Quantity::Period, period)
            }
            StageGoal::Steered { high, .. } => (Quantity::High, high),
        };
        Some(Target {
            quantity,
            value: value.si(),
            within,
        })
    }

    /// Write the files asked for.
    pub(super) fn write(
        w: &Wanted<'_>,
        goal: &Goal,
        s: &Settings,
        parts: &[Part],
        outcome: &Outcome,
    ) -> Result<Written> {
        let mut written = Written::default();
        let Goal::Stages(stages) = goal else {
            written
                .notes
                .push("a value search has no circuit: no pictures or netlist written".into());
            return Ok(written);
        };
        let Some(best) = outcome.designs.first() else {
            if w.netlist.is_some() {
                written
                    .notes
                    .push("nothing fits the target: no netlist written".into());
            }
            if let Some(dir) = w.svg {
                reach_picture(w, dir, stages, s, parts, &mut written)?;
            }
            return Ok(written);
        };
        let builts = built(best, stages, s, parts, w.pair)?;
        let layout = match builts.len() {
            1 => Layout::Single,
            _ if w.pair => Layout::Pair,
            _ => Layout::Dual,
        };
        if let Some(path) = w.netlist {
            let report = write_netlist(&builts, layout, (&s.model, &s.family), path, &w.writer)?;
            written.files.push(FileReport {
                kind: "netlist",
                path: report.path.clone(),
            });
            written.netlist = Some(report);
        }
        let Some(dir) = w.svg else {
            return Ok(written);
        };
        let describe = |b: &Built| b.model.form.name().to_string();
        let circuits: Vec<CircuitRow<'_>> = match layout {
            Layout::Single | Layout::Pair => {
                let circuit = match builts.as_slice() {
                    [a, b] => Circuit::Pair {
                        pace: Box::new(a.model.clone()),
                        width: Box::new(b.model.clone()),
                    },
                    [a, ..] => Circuit::Single(Box::new(a.model.clone())),
                    [] => return Ok(written),
                };
                let form = builts.first().map(describe).unwrap_or_default();
                vec![(String::new(), form, circuit, builts.iter().collect())]
            }
            Layout::Dual => builts
                .iter()
                .map(|b| {
                    (
                        b.label.to_string(),
                        describe(b),
                        Circuit::Single(Box::new(b.model.clone())),
                        vec![b],
                    )
                })
                .collect(),
        };
        let target = match (layout, stages.first()) {
            (Layout::Single, Some(g)) => target_of(g, s.tol),
            (Layout::Pair, Some(g)) => target_of(g, s.tol),
            _ => None,
        };
        let mut worst = Vec::new();
        let mut mcs = Vec::new();
        let mut samples: Vec<Samples> = Vec::new();
        for (_, _, circuit, _) in &circuits {
            let analysis = Analysis::new(circuit).context("tolerance analysis")?;
            worst.push(analysis.worst_case().ok());
            let (mc, drawn) = analysis
                .monte_carlo_samples(SAMPLES, SEED, Spread::Uniform, target)
                .or_else(|_| analysis.monte_carlo_samples(SAMPLES, SEED, Spread::Uniform, None))
                .context("Monte Carlo")?;
            mcs.push(mc);
            samples.push(drawn);
        }
        let pictures = Pictures {
            dir,
            physics: (&s.model, &s.family),
            layout,
            target,
            circuits: &circuits,
            analysed: worst
                .iter()
                .zip(&mcs)
                .map(|(wc, mc)| Analysed {
                    worst_case: wc.as_ref(),
                    monte_carlo: Some(mc),
                })
                .collect(),
            samples: &samples,
        };
        pictures.write(&w.writer, &mut written.files, &mut written.notes)?;
        Ok(written)
    }

    /// When nothing fits: the reach of the stock around the target, as `onhand reach` draws it.
    fn reach_picture(
        w: &Wanted<'_>,
        dir: &std::path::Path,
        stages: &[StageGoal],
        s: &Settings,
        parts: &[Part],
        written: &mut Written,
    ) -> Result<()> {
        let (form, centre) = match stages {
            [StageGoal::Pulse { width }] => (ReachForm::Pulse, width.si()),
            [StageGoal::Astable { period, .. }] => (ReachForm::Astable, 1.0 / period.si()),
            [StageGoal::Square { period }] => (ReachForm::Square, 1.0 / period.si()),
            _ => {
                written.notes.push(
                    "nothing fits; the reach picture covers one-shot, astable and square-wave                      targets only"
                        .into(),
                );
                return Ok(());
            }
        };
        if matches!(stages, [StageGoal::Astable { duty, .. }] if *duty != crate::solve::Duty::Any) {
            written
                .notes
                .push("the reach picture leaves the duty requirement aside".into());
        }
        let req = Request::around(form, (centre / 4.0, centre * 4.0), s, 25);
        let map = reach(parts, &req).context("reach around the target")?;
        let holes = fixes(parts, &req, &map, w.series, Duration::from_secs(3))
            .context("purchases for the reach picture")?;
        let title = super::super::reach::title_of(&map, &req);
        w.writer.folder(dir)?;
        let path = dir.join("reach.svg");
        let svg = super::super::reach::picture(&map, &holes, &title);
        w.writer.write(&path, svg.as_bytes())?;
        written.files.push(FileReport {
            kind: "reach",
            path: path.display().to_string(),
        });
        Ok(())
    }
}

/// A bare number where a unit is needed is refused rather than read in seconds or hertz.
fn needs_unit(text: &str, example: &str) -> Result<()> {
    let t = text.trim();
    if !t.is_empty() && t.parse::<f64>().is_ok() {
        bail!("{t} what? give a unit, e.g. {t}{example}");
    }
    Ok(())
}

fn parse_seconds(s: &str) -> Result<Seconds> {
    needs_unit(s, "ms")?;
    parse_time(s).map_err(|e| anyhow!(e))
}

/// The period of a frequency as typed (`1kHz`), to the picosecond.
fn period_of_frequency(s: &str) -> Result<Seconds> {
    needs_unit(s, "Hz")?;
    let f = parse_frequency(s).map_err(|e| anyhow!(e))?;
    Seconds::from_si(1.0 / f.si())
        .filter(|p| p.is_positive())
        .ok_or_else(|| anyhow!("{s}: no period of that frequency can be timed"))
}

fn goal_of(t: &Target, tol: f64) -> Result<Goal> {
    let time = |s: &str| parse_seconds(s);
    let period_of = |freq: &Option<String>, period: &Option<String>| -> Result<Seconds> {
        match (freq, period) {
            (Some(f), None) => period_of_frequency(f),
            (None, Some(p)) => time(p),
            _ => bail!("give a frequency or --period"),
        }
    };
    Ok(match t {
        Target::Value { value, kind } => {
            let kind = match kind.as_deref() {
                Some(k) if k.eq_ignore_ascii_case("resistor") || k == "r" => Kind::Resistor,
                Some(k) if k.eq_ignore_ascii_case("capacitor") || k == "c" => Kind::Capacitor,
                Some(k) => bail!("--kind {k:?}: use resistor or capacitor"),
                None => guess_kind(value),
            };
            let target = match kind {
                Kind::Capacitor => {
                    Value::Capacitance(parse_capacitance(value).map_err(|e| anyhow!(e))?)
                }
                _ => Value::Resistance(parse_resistance(value).map_err(|e| anyhow!(e))?),
            };
            Goal::Value { kind, target }
        }
        Target::Pulse { width } => Goal::Stages(vec![StageGoal::Pulse {
            width: time(width)?,
        }]),
        Target::Astable { freq, period, duty } => Goal::Stages(vec![StageGoal::Astable {
            period: period_of(freq, period)?,
            duty: duty_of(duty.as_deref())?,
        }]),
        Target::Steered { high, low } => Goal::Stages(vec![StageGoal::Steered {
            high: time(high)?,
            low: time(low)?,
        }]),
        Target::Square { freq, period } => Goal::Stages(vec![StageGoal::Square {
            period: period_of(freq, period)?,
        }]),
        Target::Pair {
            freq,
            period,
            width,
        } => {
            let period = period_of(freq, period)?;
            let width = time(width)?;
            if width.si() * (1.0 + tol) >= period.si() * (1.0 - tol) {
                bail!(
                    "the pulse width must stay below the period even at the edges of the \
                     tolerance: width {}, period {}",
                    time_text(width, 4),
                    time_text(period, 4)
                );
            }
            Goal::Stages(vec![
                StageGoal::Astable {
                    period,
                    duty: Duty::Any,
                },
                StageGoal::Pulse { width },
            ])
        }
        Target::Dual { first, second } => Goal::Stages(vec![stage_of(first)?, stage_of(second)?]),
    })
}

/// One stage written as `pulse:250ms`, `astable:1kHz[:60..70%]`, `square:1kHz` or
/// `steered:1ms:200us`.
pub(crate) fn stage_of(text: &str) -> Result<StageGoal> {
    let mut it = text.split(':');
    let form = it.next().unwrap_or_default().trim().to_ascii_lowercase();
    let rest: Vec<&str> = it.collect();
    let time = |s: &str| parse_seconds(s);
    // A value ending in "s" is a period; otherwise a frequency.
    let period = |s: &str| -> Result<Seconds> {
        if s.trim().ends_with('s') {
            time(s)
        } else {
            period_of_frequency(s)
        }
    };
    let need = |n: usize| -> Result<()> {
        if rest.len() < n {
            bail!("stage {text:?}: missing values");
        }
        Ok(())
    };
    Ok(match form.as_str() {
        "pulse" => {
            need(1)?;
            StageGoal::Pulse {
                width: time(rest[0])?,
            }
        }
        "astable" => {
            need(1)?;
            StageGoal::Astable {
                period: period(rest[0])?,
                duty: duty_of(rest.get(1).copied())?,
            }
        }
        "square" => {
            need(1)?;
            StageGoal::Square {
                period: period(rest[0])?,
            }
        }
        "steered" => {
            need(2)?;
            StageGoal::Steered {
                high: time(rest[0])?,
                low: time(rest[1])?,
            }
        }
        other => bail!("stage form {other:?}: use pulse, astable, square or steered"),
    })
}

/// A duty target in the one grammar every command shares (`model::parse_duty`): a range
/// `60..75%`, a point with its window `60%±2`, or a point alone (±1 point).
fn duty_of(text: Option<&str>) -> Result<Duty> {
    let Some(t) = text else { return Ok(Duty::Any) };
    let w = crate::model::parse_duty(t).map_err(|e| anyhow!("--duty: {e}"))?;
    Ok(Duty::Window(w))
}

/// Resistor unless the text says farads or uses a prefix only capacitors use (p, n, u, µ).
fn guess_kind(text: &str) -> Kind {
    let t = text.trim();
    if t.ends_with('F') {
        return Kind::Capacitor;
    }
    if t.ends_with('Ω') || t.ends_with('R') || t.to_ascii_lowercase().ends_with("ohm") {
        return Kind::Resistor;
    }
    let last_alpha = t.chars().rev().find(|c| c.is_alphabetic());
    match last_alpha {
        Some('p' | 'n' | 'u' | 'µ' | 'μ') => Kind::Capacitor,
        _ => Kind::Resistor,
    }
}

/// The capacitor technologies a search may use: the named ones, all, or (no list) everything but
/// electrolytics and tantalum for timing.
pub(crate) fn techs(list: &[String], timing: bool) -> Result<Option<Vec<Technology>>> {
    if list.iter().any(|t| t.eq_ignore_ascii_case("all")) {
        return Ok(None);
    }
    if list.is_empty() {
        return Ok(timing.then(crate::solve::plan_file::timing_technologies));
    }
    list.iter()
        .map(|t| t.parse::<Technology>().map_err(|e| anyhow!("--tech: {e}")))
        .collect::<Result<Vec<_>>>()
        .map(Some)
}

/// The stock snapshot for the search: every part with its held count (the search uses only
/// the free pieces unless `--include-held`). From the stock database, or — with `--stock FILE`
/// — from a CSV in the import format, loaded into a throw-away in-memory store so it is read by
/// exactly the same rules as `onhand import`.
pub fn load_stock(ctx: &Context, stock: Option<&Path>) -> Result<Vec<Part>> {
    let store = match stock {
        Some(path) => scratch_store(ctx, path)?,
        None => super::stock::open_store(ctx)?,
    };
    let parts = store.parts(&crate::store::PartFilter::default())?;
    if parts.is_empty() {
        bail!(
            "{} holds no parts yet: add some with `onhand add` or `onhand import FILE`, or search \
             a CSV with --stock FILE",
            store.path().display()
        );
    }
    Ok(parts)
}

/// A throw-away in-memory store holding the parts of a CSV file.
pub fn scratch_store(ctx: &Context, path: &Path) -> Result<crate::store::Store> {
    let text = std::fs::read_to_string(path)
        .with_context(|| format!("reading stock file {}", path.display()))?;
    let records =
        crate::store::read_csv(&text).with_context(|| format!("stock file {}", path.display()))?;
    let mut store =
        crate::store::Store::open(Path::new(":memory:")).context("opening an in-memory store")?;
    store
        .import(&records, &path.display().to_string(), &ctx.user, false)
        .with_context(|| format!("stock file {}", path.display()))?;
    Ok(store)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn kinds_are_guessed_from_the_value() {
        assert_eq!(guess_kind("68k"), Kind::Resistor);
        assert_eq!(guess_kind("100n"), Kind::Capacitor);
        assert_eq!(guess_kind("4.7uF"), Kind::Capacitor);
        assert_eq!(guess_kind("220"), Kind::Resistor);
    }

    #[test]
    fn duty_forms() {
        assert_eq!(duty_of(None).expect("none"), Duty::Any);
        let window = |text: &str| duty_of(Some(text)).expect(text).window_si();
        let near = |w: Option<(f64, f64)>, lo: f64, hi: f64| {
            w.is_some_and(|(a, b)| (a - lo).abs() < 1e-9 && (b - hi).abs() < 1e-9)
        };
        assert!(near(window("60..70%"), 0.6, 0.7));
        // A point alone is the same ±1-point window in find as in plan files.
        assert!(near(window("65%"), 0.64, 0.66));
        assert!(near(window("65%±2"), 0.63, 0.67));
        assert!(duty_of(Some("75..60%")).is_err());
    }

    #[test]
    fn stage_text_forms() {
        assert!(matches!(
            stage_of("pulse:250ms"),
            Ok(StageGoal::Pulse { .. })
        ));
        match stage_of("astable:1kHz:60..70%").expect("astable") {
            StageGoal::Astable { period, duty } => {
                assert_eq!(period, Seconds::from_si(1e-3).expect("1 ms"));
                assert!(matches!(duty, Duty::Window(..)));
            }
            other => panic!("{other:?}"),
        }
        assert!(stage_of("steered:1ms").is_err());
        assert!(stage_of("wobble:1ms").is_err());
    }
}
