//! `onhand check`: evaluate a design handed in as values. This layer only converts the
//! arguments (clap) into the typed `timing::assess::CheckInput` — positions with their pieces,
//! tolerances and technology, family, model, target, measurement — calls the pure core
//! (`timing::assess::assess`: inference, checks, worst case, Monte Carlo, verdict, trim), writes
//! the files asked for (SVG pictures with `--svg DIR`, the SPICE netlist with `--netlist FILE`,
//! through `cli::output` and `ctx.files()`), and prints the report of `report::check`.

use super::output::{Analysed, Built, CircuitRow, FileReport, Layout, Pictures, write_netlist};
use super::{Context, Status};
use crate::network::{Combine, parse_net};
use crate::report::check::{
    self as report, CheckView, FileLine, MeasureLine, NetlistLine, PositionReport, analysis_form,
    tolerance_text,
};
use crate::store::spec::default_tolerance;
use crate::store::{Kind, Technology};
use crate::timing::assess::{
    Arrangement, AssessError, CheckInput, Measurement, Sampling, StageSpec, assess,
};
use crate::timing::evaluate::SMALL_SIGNAL_DIODE;
use crate::timing::tolerance::Samples;
use crate::timing::{
    CapFacts, Conditions, DiodeModel, Family, Form, Limits, Model, Piece, Position, Quantity,
    Spread, StageModel, Steering, Target, family_by_name,
};
use crate::units::{
    Farads, Hertz, Ohms, Ratio, Seconds, Tolerance, Volts, Watts, parse_capacitance,
    parse_frequency, parse_frequency_strict, parse_power, parse_ratio, parse_resistance,
    parse_si_number, parse_time_strict, parse_tolerance, parse_voltage,
};
use anyhow::{Context as _, anyhow, bail};
use std::io::Write;
use std::path::PathBuf;

const EXAMPLES: &str = "\
Positions (NAME=VALUE; a value may be a network: + series, || or // parallel, parentheses):
  monostable  R, C             astable  R1, R2, C          steered  RA (charge), RB (discharge), C
  square      R, C             pair     R1, R2, C1 (pace astable) and R3, C2 (width monostable)
  dual        A.<name> and B.<name>, forms given by --forms (default astable,monostable)

Examples:
  onhand check astable R1=4.7k R2=68k C=10n
  onhand check astable R1=33k+2.2k R2=68k C=10n||2.2n --part-tol R1=1% --part-tol C=5% --vcc 12
  onhand check monostable 'R=150k[1%]+820k[5%]' 'C=470n[5%]' --cap C=film   each piece its own tolerance
  onhand check monostable R=1M C=10u --cap C=electrolytic --rating C=16V --family cmos
  onhand check steered RA=10k RB=4.7k C=100n --diode 0.6 --one-diode
  onhand check steered RA=10k RB=4.7k C=100n --ideal                  the textbook model
  onhand check astable R1=4.7k R2=68k C=10n --target 1kHz --within 2% --trim R2
  onhand check astable R1=4.7k R2=68k --measured 1.2kHz      infer the unmarked capacitor
  onhand check pair R1=1k R2=10k C1=100n R3=10k C2=10n
  onhand check dual --forms astable,monostable A.R1=1k A.R2=10k A.C=100n B.R=10k B.C=10n
  onhand check square R=10k C=10n --family cmos --set max_freq=2M
  onhand check astable R1=33k+2.2k R2=68k C=10n --svg pictures --netlist board.cir

Defaults: supply 9 V, bipolar timer, real parts: thresholds 1/3 and 2/3 of the supply, small-signal
silicon steering diodes whose drop follows the current, the family's output-high drop in the
square form, discharge saturation, pin bias currents and class-2 ceramic DC-bias loss as a
one-sided band (figures from memory, listed in the report). --ideal gives the textbook model;
--diode 0.7 or --diode ideal chooses the diodes; --guarantee uses the family's data-sheet limits.
Resistors ±5 %, capacitors ±10 % (Y5V −20/+80 %, electrolytics ±20 %) unless --part-tol or a
piece's own bracket (4.7k[1%], as `find --json` writes each position) says otherwise (common practice). Timer error = initial error + temperature drift over --temp-span °C + supply drift over
--supply-swing. Timer figures (from memory) can be overridden with --set KEY=VALUE; keys:
supply_min supply_max threshold_current trigger_current discharge_max max_freq error_one_shot
error_astable drift_temp_one_shot drift_temp_astable drift_supply_one_shot drift_supply_astable
output_high_drop discharge_saturation (e.g. --set threshold_current=250nA).

Exit status: 0 sound, 1 an electrical check failed (an error finding) or the target is not
guaranteed, 2 bad input.";

/// `--diode`: a drop in volts (with its unit) or `ideal`.
fn parse_diode(text: &str) -> Result<DiodeModel, String> {
    let t = text.trim();
    if t.eq_ignore_ascii_case("ideal") {
        return Ok(DiodeModel::Ideal);
    }
    parse_voltage(t)
        .map(DiodeModel::Fixed)
        .map_err(|e| format!("{e}; give a drop in volts (0.6V) or `ideal`"))
}

/// Most Monte Carlo samples one run draws (memory grows with the count).
const MAX_SAMPLES: usize = 5_000_000;

/// Which circuit is checked.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum FormArg {
    /// One-shot: R, C.
    Monostable,
    /// Classic astable: R1, R2, C.
    Astable,
    /// Diode-steered astable: RA, RB, C.
    Steered,
    /// Output-driven square wave: R, C.
    Square,
    /// Pace astable (R1, R2, C1) triggering a width monostable (R3, C2).
    Pair,
    /// Two independent stages in one dual package (A.*, B.*).
    Dual,
}

/// How Monte Carlo draws each piece.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum SpreadArg {
    /// Uniform between the tolerance limits.
    Uniform,
    /// Normal, tolerance = 3σ.
    Normal,
}

/// Which quantity a measured or target time refers to.
#[derive(Debug, Clone, Copy, PartialEq, Eq, clap::ValueEnum)]
pub enum OfArg {
    /// Output high time (pulse width).
    High,
    /// Output low time.
    Low,
    /// Period.
    Period,
}

/// Arguments of `check`.
#[derive(Debug, clap::Args)]
#[command(after_help = EXAMPLES)]
pub struct CheckArgs {
    /// Circuit form.
    #[arg(value_enum)]
    pub form: FormArg,
    /// Part positions as NAME=VALUE, e.g. R1=4.7k C=10n||2.2n. Leave one out with --measured.
    #[arg(value_name = "NAME=VALUE")]
    pub parts: Vec<String>,
    /// Supply voltage.
    #[arg(long, default_value = "9", value_parser = parse_voltage)]
    pub vcc: Volts,
    /// Timer family: bipolar or cmos.
    #[arg(long, default_value = "bipolar")]
    pub family: String,
    /// Override a timer figure, e.g. max_freq=500k (repeatable; keys in the help text).
    #[arg(long, value_name = "KEY=VALUE")]
    pub set: Vec<String>,
    /// Steering diodes (steered form): a fixed forward drop in VOLTS, or `ideal` (no drop).
    /// Default: a small-signal silicon junction whose drop follows the current (from memory).
    #[arg(long, value_name = "VOLTS|ideal", value_parser = parse_diode)]
    pub diode: Option<DiodeModel>,
    /// The textbook model: every effect off (ideal diodes, rail-to-rail output, no saturation,
    /// no pin bias currents, no DC-bias loss).
    #[arg(long)]
    pub ideal: bool,
    /// Design against the family's data-sheet limits (from memory) instead of its typical
    /// figures: bias currents, output drop, saturation and the chip's own error.
    #[arg(long)]
    pub guarantee: bool,
    /// Steered form wired with one diode bypassing R2 (no diode in the discharge path).
    #[arg(long)]
    pub one_diode: bool,
    /// Refinement: control pin driven at this voltage (upper threshold; lower is half of it).
    #[arg(long, value_name = "VOLTS", value_parser = parse_voltage)]
    pub control: Option<Volts>,
    /// Output sits this far below the supply when high (square form); default the family's
    /// light-load figure (same as --set output_high_drop=VOLTS).
    #[arg(long, value_name = "VOLTS", value_parser = parse_voltage)]
    pub output_drop: Option<Volts>,
    /// Tolerance of every piece of a position, e.g. R1=1% (repeatable).
    #[arg(long = "part-tol", alias = "tol", value_name = "NAME=TOL")]
    pub tol: Vec<String>,
    /// Capacitor dielectric of a position: film, c0g, x7r, y5v, electrolytic, tantalum, other.
    #[arg(long, value_name = "NAME=KIND")]
    pub cap: Vec<String>,
    /// Capacitor voltage rating of a position, e.g. C=16V.
    #[arg(long, value_name = "NAME=VOLTS")]
    pub rating: Vec<String>,
    /// Power rating of R1 (the resistor from the supply to the discharge pin).
    #[arg(long, default_value = "0.25", value_parser = parse_power, value_name = "WATTS")]
    pub r_power: Watts,
    /// Length of the trigger pulse driving a monostable (or the width stage of a pair).
    #[arg(long, value_parser = parse_time_strict, value_name = "TIME")]
    pub trigger: Option<Seconds>,
    /// Monte Carlo samples (0 skips Monte Carlo).
    #[arg(long, default_value_t = 10_000)]
    pub samples: usize,
    /// Monte Carlo seed.
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
    /// Monte Carlo distribution of each piece.
    #[arg(long, value_enum, default_value = "uniform")]
    pub spread: SpreadArg,
    /// Target: a frequency (1kHz), a time (10ms: width of a one-shot, else period unless --of),
    /// or a duty (60%).
    #[arg(long, value_name = "VALUE")]
    pub target: Option<String>,
    /// Allowed error either way around the target, e.g. 2%.
    #[arg(long, value_parser = parse_ratio, value_name = "RATIO")]
    pub within: Option<Ratio>,
    /// Which time a target or measured time is: high, low or period.
    #[arg(long, value_enum, value_name = "QUANTITY")]
    pub of: Option<OfArg>,
    /// Measured frequency or time; the position left out is inferred.
    #[arg(long, value_name = "VALUE")]
    pub measured: Option<String>,
    /// Suggest a trimmer + fixed resistor for this position (default: the main timing resistor).
    #[arg(long, value_name = "NAME", num_args = 0..=1, default_missing_value = "auto")]
    pub trim: Option<String>,
    /// Temperature excursion either side of 25 °C for the timer's drift.
    #[arg(long, default_value_t = 25.0, value_name = "DEG_C")]
    pub temp_span: f64,
    /// Supply excursion either way for the timer's supply drift.
    #[arg(long, default_value = "0", value_parser = parse_voltage, value_name = "VOLTS")]
    pub supply_swing: Volts,
    /// Forms of the two halves of a dual package, e.g. astable,monostable.
    #[arg(long, default_value = "astable,monostable", value_name = "A,B")]
    pub forms: String,
    /// Write SVG pictures into this folder (created if missing): the waveform of every stage and
    /// the Monte Carlo histogram of the period or pulse width.
    #[arg(long, value_name = "DIR")]
    pub svg: Option<PathBuf>,
    /// Write the SPICE netlist of the design (every piece of every network) to this file; run
    /// it with `ngspice -b FILE`.
    #[arg(long, value_name = "FILE")]
    pub netlist: Option<PathBuf>,
}

// ---------------------------------------------------------------------------------------------
// Conversion of the arguments.

struct StageInput {
    label: &'static str,
    prefix: &'static str,
    form: Form,
    names: Vec<&'static str>,
}

fn names_of(form: Form) -> Vec<&'static str> {
    match form {
        Form::Monostable | Form::Square => vec!["R", "C"],
        Form::Astable => vec!["R1", "R2", "C"],
        Form::Steered => vec!["RA", "RB", "C"],
    }
}

fn form_from_name(s: &str) -> anyhow::Result<Form> {
    Ok(match s.trim().to_ascii_lowercase().as_str() {
        "monostable" => Form::Monostable,
        "astable" => Form::Astable,
        "steered" => Form::Steered,
        "square" => Form::Square,
        other => bail!("--forms: {other:?} is not monostable, astable, steered or square"),
    })
}

fn split_kv<'a>(text: &'a str, what: &str) -> anyhow::Result<(String, &'a str)> {
    let (k, v) = text
        .split_once('=')
        .ok_or_else(|| anyhow!("{what} {text:?} must look like NAME=VALUE"))?;
    Ok((k.trim().to_ascii_uppercase(), v.trim()))
}

/// `--cap NAME=KIND`: the one technology parser (`model::part`), limited to capacitors.
fn parse_cap_technology(s: &str) -> anyhow::Result<Technology> {
    let tech: Technology = s.parse()?;
    if matches!(
        tech,
        Technology::MetalFilm
            | Technology::CarbonFilm
            | Technology::ThickFilm
            | Technology::Wirewound
    ) {
        bail!(
            "{tech} is not a capacitor technology; use film (mkt, polypropylene, …), c0g, x7r, \
             y5v, electrolytic, tantalum or other"
        );
    }
    Ok(tech)
}

/// A plain number with an optional SI prefix (`250n`, `10p`), through the shared SI-number
/// parser: for figures such as pin currents, far below the resolution of the current type.
fn si_number(text: &str) -> anyhow::Result<f64> {
    let v = parse_si_number(text)?;
    if v < 0.0 {
        bail!("{text:?} must be a non-negative number");
    }
    Ok(v)
}

/// Parse a family figure override in the figure's unit.
fn parse_figure(text: &str, unit: &str) -> anyhow::Result<f64> {
    let t = text.trim();
    let v = match unit {
        "V" => parse_voltage(t)?.si(),
        "A" => si_number(t.trim_end_matches('A'))?,
        "Hz" => parse_frequency(t)?.si(),
        "ratio" => parse_ratio(t)?.si(),
        _ => {
            let t = ["/°C", "/C", "/K", "/V"]
                .iter()
                .fold(t, |s, suf| s.strip_suffix(suf).unwrap_or(s))
                .trim();
            if let Some(p) = t.strip_suffix("ppm") {
                p.trim()
                    .parse::<f64>()
                    .with_context(|| format!("{text:?} is not a number of ppm"))?
                    * 1e-6
            } else {
                parse_ratio(t)?.si()
            }
        }
    };
    Ok(v)
}

struct Prepared {
    family: Family,
    model: Model,
    stages: Vec<StageSpec>,
    positions: Vec<PositionReport>,
    defaults_used: Vec<String>,
    unknown: Option<String>,
}

fn stage_inputs(args: &CheckArgs) -> anyhow::Result<Vec<StageInput>> {
    let one = |form: Form| StageInput {
        label: "",
        prefix: "",
        form,
        names: names_of(form),
    };
    Ok(match args.form {
        FormArg::Monostable => vec![one(Form::Monostable)],
        FormArg::Astable => vec![one(Form::Astable)],
        FormArg::Steered => vec![one(Form::Steered)],
        FormArg::Square => vec![one(Form::Square)],
        FormArg::Pair => vec![
            StageInput {
                label: "pace",
                prefix: "",
                form: Form::Astable,
                names: vec!["R1", "R2", "C1"],
            },
            StageInput {
                label: "width",
                prefix: "",
                form: Form::Monostable,
                names: vec!["R3", "C2"],
            },
        ],
        FormArg::Dual => {
            let (a, b) = args
                .forms
                .split_once(',')
                .ok_or_else(|| anyhow!("--forms wants two forms, e.g. astable,monostable"))?;
            let (fa, fb) = (form_from_name(a)?, form_from_name(b)?);
            vec![
                StageInput {
                    label: "timer A",
                    prefix: "A.",
                    form: fa,
                    names: names_of(fa),
                },
                StageInput {
                    label: "timer B",
                    prefix: "B.",
                    form: fb,
                    names: names_of(fb),
                },
            ]
        }
    })
}

fn prepare(args: &CheckArgs) -> anyhow::Result<Prepared> {
    let mut family = family_by_name(&args.family)
        .ok_or_else(|| anyhow!("--family {:?}: use bipolar or cmos", args.family))?;
    for s in &args.set {
        let (k, v) = s
            .split_once('=')
            .ok_or_else(|| anyhow!("--set {s:?} must look like KEY=VALUE"))?;
        let key = k.trim().to_ascii_lowercase();
        let unit = family
            .unit_of(&key)
            .ok_or_else(|| anyhow!("--set: no timer figure is called {key:?}"))?;
        let value = parse_figure(v, unit).with_context(|| format!("--set {s}"))?;
        family
            .set(&key, value)
            .with_context(|| format!("--set {s}"))?;
    }
    if args.samples > MAX_SAMPLES {
        bail!(
            "--samples {} is more than the {MAX_SAMPLES} this command draws",
            args.samples
        );
    }
    if !(args.temp_span.is_finite() && args.temp_span >= 0.0) {
        bail!("--temp-span must be a non-negative number of °C");
    }
    let inputs = stage_inputs(args)?;
    let all_names: Vec<String> = inputs
        .iter()
        .flat_map(|s| s.names.iter().map(move |n| format!("{}{n}", s.prefix)))
        .collect();
    let check_name = |n: &str, what: &str| -> anyhow::Result<()> {
        if all_names.iter().any(|x| x == n) {
            Ok(())
        } else {
            bail!(
                "{what}: no position {n:?} in this form; positions are {}",
                all_names.join(", ")
            )
        }
    };
    let mut exprs = std::collections::BTreeMap::new();
    for p in &args.parts {
        let (k, v) = split_kv(p, "part")?;
        check_name(&k, "part")?;
        if exprs.insert(k.clone(), v.to_string()).is_some() {
            bail!("position {k} is given twice");
        }
    }
    let mut tols = std::collections::BTreeMap::new();
    for t in &args.tol {
        let (k, v) = split_kv(t, "--tol")?;
        check_name(&k, "--tol")?;
        tols.insert(k, parse_tolerance(v).with_context(|| format!("--tol {t}"))?);
    }
    let is_cap = |k: &str| k.rsplit('.').next().is_some_and(|n| n.starts_with('C'));
    let mut techs = std::collections::BTreeMap::new();
    for t in &args.cap {
        let (k, v) = split_kv(t, "--cap")?;
        check_name(&k, "--cap")?;
        if !is_cap(&k) {
            bail!("--cap {t}: {k} is not a capacitor position");
        }
        techs.insert(
            k,
            parse_cap_technology(v).with_context(|| format!("--cap {t}"))?,
        );
    }
    let mut ratings = std::collections::BTreeMap::new();
    for t in &args.rating {
        let (k, v) = split_kv(t, "--rating")?;
        check_name(&k, "--rating")?;
        if !is_cap(&k) {
            bail!("--rating {t}: {k} is not a capacitor position");
        }
        ratings.insert(
            k,
            parse_voltage(v).with_context(|| format!("--rating {t}"))?,
        );
    }
    let missing: Vec<&String> = all_names
        .iter()
        .filter(|n| !exprs.contains_key(*n))
        .collect();
    let unknown = match (missing.as_slice(), &args.measured) {
        ([], None) => None,
        ([one], Some(_)) => Some((*one).clone()),
        ([], Some(_)) => bail!("--measured: leave out the position to infer (e.g. drop C=…)"),
        (_, None) => bail!(
            "missing position{} {}; give every one of {}",
            if missing.len() > 1 { "s" } else { "" },
            missing
                .iter()
                .map(|s| s.as_str())
                .collect::<Vec<_>>()
                .join(", "),
            all_names.join(", ")
        ),
        (_, Some(_)) => bail!(
            "--measured infers one position; {} are missing",
            missing
                .iter()
                .map(|s| s.as_str())
                .collect::<Vec<_>>()
                .join(", ")
        ),
    };
    if let Some(d) = args.output_drop {
        family
            .set("output_high_drop", d.si())
            .context("--output-drop")?;
    }
    if args.guarantee {
        family = family.at_limits();
    }
    let model = model_of(args);
    if args.diode.is_some() && !inputs.iter().any(|s| s.form == Form::Steered) {
        bail!("--diode applies to the steered form only");
    }
    if args.output_drop.is_some() && !inputs.iter().any(|s| s.form == Form::Square) {
        bail!("--output-drop applies to the square form only");
    }
    let mut defaults_used = Vec::new();
    let mut positions = Vec::new();
    let mut stages = Vec::new();
    for input in &inputs {
        let mut conditions = Conditions::ideal(args.vcc);
        conditions.control = args.control;
        // The checks and the netlist read these; the times come from the evaluator.
        if input.form == Form::Steered {
            conditions.diode_drop = representative_drop(model.diode);
        }
        if input.form == Form::Square && model.output_drop {
            conditions.output_high_drop =
                Volts::from_si(family.output_high_drop.value).unwrap_or_default();
        }
        let mut built: Vec<Position> = Vec::new();
        let mut cap_facts = None;
        for short in &input.names {
            let full = format!("{}{short}", input.prefix);
            let combine = if short.starts_with('C') {
                Combine::Capacitive
            } else {
                Combine::Resistive
            };
            let tech = techs.get(&full).copied();
            let default = match (combine, tech) {
                (Combine::Resistive, _) => Tolerance::symmetric_percent(5.0),
                (Combine::Capacitive, Some(t)) => Some(default_tolerance(Kind::Capacitor, t)),
                (Combine::Capacitive, None) => Tolerance::symmetric_percent(10.0),
            }
            .ok_or_else(|| anyhow!("default tolerance out of range"))?;
            let given_tol = tols.get(&full).copied();
            let tolerance = given_tol.unwrap_or(default);
            let is_unknown = unknown.as_deref() == Some(full.as_str());
            let mut shown_tol = None;
            let (pos, expression) = if is_unknown {
                // Placeholder; the inference replaces it. Taken exact.
                let zero = Tolerance {
                    minus: Ratio::ZERO,
                    plus: Ratio::ZERO,
                };
                let v = if combine == Combine::Capacitive {
                    1e-9
                } else {
                    1e3
                };
                (Position::single(&full, combine, v, zero), "?".to_string())
            } else {
                let expr = exprs.get(&full).cloned().unwrap_or_default();
                // Each leaf: a value, optionally with its own tolerance in brackets
                // (`4k7[1%]`, as `find --json` writes each position's expression).
                let mut leaf = |s: &str| -> Result<(f64, Option<Tolerance>), String> {
                    let (value, tol) = match s.split_once('[') {
                        Some((v, t)) => {
                            let t = t.strip_suffix(']').ok_or("a '[' without its ']'")?;
                            (
                                v.trim(),
                                Some(parse_tolerance(t).map_err(|e| e.to_string())?),
                            )
                        }
                        None => (s, None),
                    };
                    let si = match combine {
                        Combine::Resistive => parse_resistance(value).map(|o: Ohms| o.si()),
                        Combine::Capacitive => parse_capacitance(value).map(|f: Farads| f.si()),
                    }
                    .map_err(|e| e.to_string())?;
                    Ok((si, tol))
                };
                let (net, vals) =
                    parse_net(&expr, &mut leaf).with_context(|| format!("position {full}"))?;
                if given_tol.is_none() && vals.iter().any(|(_, t)| t.is_none()) {
                    defaults_used.push(format!("{full} {}", tolerance_text(default)));
                }
                let pieces: Vec<Piece> = vals
                    .into_iter()
                    .map(|(value, own)| Piece {
                        value,
                        tolerance: own.unwrap_or(tolerance),
                    })
                    .collect();
                shown_tol = pieces_tolerance_text(&pieces);
                (
                    Position {
                        name: full.clone(),
                        combine,
                        net,
                        pieces,
                    },
                    expr,
                )
            };
            if combine == Combine::Capacitive && (tech.is_some() || ratings.contains_key(&full)) {
                cap_facts = Some(CapFacts {
                    technology: tech.unwrap_or(Technology::Other),
                    voltage_rating: ratings.get(&full).copied(),
                    tolerance,
                });
            }
            positions.push(PositionReport {
                name: full.clone(),
                expression,
                nominal: pos.nominal(),
                unit: if combine == Combine::Capacitive {
                    "F"
                } else {
                    "Ω"
                },
                tolerance: shown_tol
                    .take()
                    .unwrap_or_else(|| tolerance_text(tolerance)),
                pieces: pos.pieces.len(),
                inferred: is_unknown,
            });
            built.push(pos);
        }
        let mut it = built.into_iter();
        let r1 = it.next().ok_or_else(|| anyhow!("no resistor position"))?;
        let r2 = if input.form.has_r2() { it.next() } else { None };
        let c = it.next().ok_or_else(|| anyhow!("no capacitor position"))?;
        let one_shot = input.form == Form::Monostable;
        let model = StageModel {
            form: input.form,
            steering: if args.one_diode {
                Steering::OneDiode
            } else {
                Steering::TwoDiode
            },
            r1,
            r2,
            c,
            conditions,
            timer_error: family.timer_error(one_shot, args.temp_span, args.supply_swing),
        };
        stages.push(StageSpec {
            label: input.label,
            model,
            cap: cap_facts,
        });
    }
    Ok(Prepared {
        family,
        model,
        stages,
        positions,
        defaults_used,
        unknown,
    })
}

/// The model the options ask for: real parts by default, `--ideal` the textbook model, and
/// `--diode` choosing the steering diodes.
fn model_of(args: &CheckArgs) -> Model {
    let mut m = if args.ideal {
        Model::ideal()
    } else {
        Model::real()
    };
    if let Some(d) = args.diode {
        m.diode = d;
    }
    if args.output_drop.is_some() {
        m.output_drop = true;
    }
    m
}

/// The drop the electrical checks and the netlist's fixed-drop diode use: the given drop, or the
/// small-signal diode's drop at 1 mA.
fn representative_drop(d: DiodeModel) -> Volts {
    match d {
        DiodeModel::Ideal => Volts::ZERO,
        DiodeModel::Fixed(v) => v,
        DiodeModel::SmallSignal => {
            Volts::from_si(SMALL_SIGNAL_DIODE.drop_at(1e-3)).unwrap_or_default()
        }
    }
}

fn parse_quantity_value(
    text: &str,
    of: Option<OfArg>,
    one_shot: bool,
) -> anyhow::Result<(Quantity, f64)> {
    let t = text.trim();
    if t.ends_with('%') {
        return Ok((Quantity::Duty, parse_ratio(t)?.si()));
    }
    if t.ends_with("Hz") || t.ends_with("hz") {
        let f: Hertz = parse_frequency_strict(&t.replace("hz", "Hz"))?;
        return Ok((Quantity::Frequency, f.si()));
    }
    let s = parse_time_strict(t).map_err(|e| {
        anyhow!(
            "{e}; give a frequency with Hz (1.0254kHz), a time with s (10ms) or a duty with % \
             (60%)"
        )
    })?;
    let q = match of {
        Some(OfArg::High) => Quantity::High,
        Some(OfArg::Low) => Quantity::Low,
        Some(OfArg::Period) => Quantity::Period,
        None if one_shot => Quantity::High,
        None => Quantity::Period,
    };
    Ok((q, s.si()))
}

/// The main timing resistor of each form: the one a trimmer usually goes in.
fn default_trim(form: FormArg) -> &'static str {
    match form {
        FormArg::Monostable | FormArg::Square | FormArg::Dual => "R",
        FormArg::Astable => "R2",
        FormArg::Steered => "RB",
        FormArg::Pair => "R3",
    }
}

/// How the files lay the stages of a form out.
fn layout_of(form: FormArg) -> Layout {
    match form {
        FormArg::Pair => Layout::Pair,
        FormArg::Dual => Layout::Dual,
        _ => Layout::Single,
    }
}

fn arrangement_of(form: FormArg) -> Arrangement {
    match form {
        FormArg::Pair => Arrangement::Pair,
        FormArg::Dual => Arrangement::Dual,
        _ => Arrangement::Single,
    }
}

/// Run `check`: convert the arguments, assess (the pure core), write the files asked for,
/// render.
pub fn run(args: CheckArgs, ctx: &Context, out: &mut dyn Write) -> anyhow::Result<Status> {
    let prep = prepare(&args)?;
    let arrangement = arrangement_of(args.form);
    if arrangement == Arrangement::Dual
        && (args.target.is_some() || args.measured.is_some() || args.trim.is_some())
    {
        bail!("--target, --measured and --trim work on one circuit; check each half on its own");
    }
    let one_shot = arrangement == Arrangement::Single
        && prep
            .stages
            .first()
            .is_some_and(|s| s.model.form == Form::Monostable);
    let measured = match (&prep.unknown, &args.measured) {
        (Some(position), Some(text)) => {
            let (quantity, value) = parse_quantity_value(text, args.of, one_shot)?;
            Some(Measurement {
                position: position.clone(),
                quantity,
                value,
            })
        }
        _ => None,
    };
    let target = match &args.target {
        Some(t) => {
            let (quantity, value) = parse_quantity_value(t, args.of, one_shot)?;
            let within = args
                .within
                .ok_or_else(|| anyhow!("--target needs --within, e.g. --within 2%"))?;
            Some(Target {
                quantity,
                value,
                within,
            })
        }
        None => {
            if args.within.is_some() {
                bail!("--within needs --target");
            }
            None
        }
    };
    let trim = args.trim.as_ref().map(|which| {
        if which == "auto" {
            default_trim(args.form).to_string()
        } else {
            which.to_ascii_uppercase()
        }
    });
    let input = CheckInput {
        arrangement,
        stages: prep.stages,
        family: prep.family,
        model: prep.model,
        limits: Limits {
            resistor_power: args.r_power,
            trigger: args.trigger,
        },
        measured,
        target,
        trim,
        sampling: Sampling {
            samples: args.samples,
            seed: args.seed,
            spread: match args.spread {
                SpreadArg::Uniform => Spread::Uniform,
                SpreadArg::Normal => Spread::Normal,
            },
        },
    };
    let assessment = assess(&input).map_err(|e| match e {
        AssessError::Infer { position, reason } => anyhow!(
            "inferring {position} from {}: {reason}",
            args.measured.as_deref().unwrap_or_default()
        ),
        e => e.into(),
    })?;

    // The files, from the same stages the report shows.
    let built: Vec<Built> = assessment
        .stages
        .iter()
        .map(|s| Built {
            label: s.label,
            stage: s.stage.clone(),
            model: s.model.clone(),
        })
        .collect();
    let mut files = Vec::new();
    let mut notes = Vec::new();
    let netlist = match &args.netlist {
        Some(path) => {
            let report = write_netlist(
                &built,
                layout_of(args.form),
                (&input.model, &input.family),
                path,
                &ctx.files(),
            )?;
            files.push(FileReport {
                kind: "netlist",
                path: report.path.clone(),
            });
            Some(report)
        }
        None => None,
    };
    if let Some(dir) = &args.svg {
        let circuits: Vec<CircuitRow> = assessment
            .analyses
            .iter()
            .enumerate()
            .map(|(i, a)| {
                (
                    a.label.to_string(),
                    analysis_form(&assessment, arrangement, i),
                    a.circuit.clone(),
                    a.stages.iter().filter_map(|&s| built.get(s)).collect(),
                )
            })
            .collect();
        let samples: Vec<Samples> = assessment
            .analyses
            .iter()
            .map(|a| a.samples.clone())
            .collect();
        let pictures = Pictures {
            dir,
            physics: (&input.model, &input.family),
            layout: layout_of(args.form),
            target,
            circuits: &circuits,
            analysed: assessment
                .analyses
                .iter()
                .map(|a| Analysed {
                    worst_case: a.worst_case.as_ref(),
                    monte_carlo: a.monte_carlo.as_ref(),
                })
                .collect(),
            samples: &samples,
        };
        pictures.write(&ctx.files(), &mut files, &mut notes)?;
    }
    let view = CheckView {
        form: format!("{:?}", args.form).to_ascii_lowercase(),
        supply: args.vcc,
        positions: prep.positions,
        default_tolerances: prep.defaults_used,
        measured: args.measured.clone(),
        temp_span: args.temp_span,
        supply_swing: args.supply_swing,
        ideal: args.ideal,
        guarantee: args.guarantee,
        files: files
            .into_iter()
            .map(|f| FileLine {
                kind: f.kind,
                path: f.path,
            })
            .collect(),
        netlist: netlist.map(|n| NetlistLine {
            path: n.path,
            measures: n
                .measures
                .into_iter()
                .map(|m| MeasureLine {
                    name: m.name,
                    analysis: m.analysis,
                    quantity: m.quantity,
                })
                .collect(),
        }),
        notes,
    };
    let report = report::build(&assessment, arrangement, &input.family, view);
    if ctx.json {
        out.write_all(report::json(&report).context("writing JSON")?.as_bytes())?;
    } else {
        out.write_all(report::text(&report, ctx.style).as_bytes())?;
    }
    Ok(if assessment.ok {
        Status::Success
    } else {
        Status::NotMet
    })
}

/// The tolerance shown for a position: the one every piece shares, or each distinct one.
fn pieces_tolerance_text(pieces: &[Piece]) -> Option<String> {
    let mut seen: Vec<Tolerance> = Vec::new();
    for p in pieces {
        if !seen.contains(&p.tolerance) {
            seen.push(p.tolerance);
        }
    }
    match seen.as_slice() {
        [] => None,
        [one] => Some(tolerance_text(*one)),
        many => Some(format!(
            "per piece: {}",
            many.iter()
                .map(|t| tolerance_text(*t))
                .collect::<Vec<_>>()
                .join(", ")
        )),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn figure_values_parse_in_their_units() {
        assert!((parse_figure("500k", "Hz").expect("hz") - 500e3).abs() < 1e-6);
        assert!((parse_figure("250nA", "A").expect("a") - 250e-9).abs() < 1e-15);
        assert!((parse_figure("100ppm/C", "ratio/°C").expect("ppm") - 100e-6).abs() < 1e-12);
        assert!((parse_figure("0.5%/V", "ratio/V").expect("%") - 0.005).abs() < 1e-12);
        assert!((parse_figure("2%", "ratio").expect("%") - 0.02).abs() < 1e-12);
        assert!((parse_figure("10pA", "A").expect("a") - 10e-12).abs() < 1e-20);
        assert!(parse_figure("fast", "Hz").is_err());
        assert!(parse_figure("-1nA", "A").is_err());
    }

    #[test]
    fn quantities_parse_by_unit() {
        let (q, v) = parse_quantity_value("1.2kHz", None, false).expect("q");
        assert_eq!(q, Quantity::Frequency);
        assert!((v - 1200.0).abs() < 1e-9);
        assert_eq!(
            parse_quantity_value("10ms", None, true).expect("q").0,
            Quantity::High
        );
        assert_eq!(
            parse_quantity_value("10ms", None, false).expect("q").0,
            Quantity::Period
        );
        assert_eq!(
            parse_quantity_value("60%", None, false).expect("q").0,
            Quantity::Duty
        );
    }
}
