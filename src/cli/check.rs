//! `onhand check`: evaluate a design handed in as values — times, frequency, duty, the model
//! used, exact worst case, Monte Carlo, whether a target is guaranteed, electrical findings, the
//! trimmer that covers the spread, and (with `--measured`) the unknown part inferred from a
//! measurement. Owns the argument types, their conversion into the pure `timing` types, the
//! text and JSON rendering of the result (with the text schematic), and the files it is asked
//! for: SVG pictures (`--svg DIR`) and the SPICE netlist (`--netlist FILE`), rendered by
//! `report` and written through `cli::output`, which `find` shares. Needs no store.

use super::output::{
    Analysed, Built, CircuitRow, FileReport, Layout, NetlistReport, Pictures, short_name, stage_of,
    write_netlist,
};
use super::{Context, Status};
use crate::network::{Combine, parse_net};
use crate::report::schematic;
use crate::report::style::{PERCENTILE_LABELS, sort_by_severity};
use crate::store::spec::default_tolerance;
use crate::store::{Kind, Technology};
use crate::timing::evaluate::SMALL_SIGNAL_DIODE;
use crate::timing::tolerance::Samples;
use crate::timing::{
    Analysis, CapFacts, Circuit, Conditions, DiodeModel, Effect, Family, Finding, Form, Inference,
    Interval, Limits, Model, MonteCarlo, Piece, Position, Quantity, Severity, Spread, Stage,
    StageModel, Steering, Target, TrimPlan, Verdict, WorstCase, check_dual, check_pair,
    check_pair_worst_case, check_stage_with, evaluate, family_by_name, has_error,
};
use crate::units::{
    Engineering, Farads, Hertz, Ohms, Ratio, Seconds, Tolerance, Volts, Watts, format_sig,
    parse_capacitance, parse_frequency, parse_frequency_strict, parse_power, parse_ratio,
    parse_resistance, parse_si_number, parse_time_strict, parse_tolerance, parse_voltage,
};
use anyhow::{Context as _, anyhow, bail};
use serde::Serialize;
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
Resistors ±5 %, capacitors ±10 % (Y5V −20/+80 %, electrolytics ±20 %) unless --part-tol says
otherwise (common practice). Timer error = initial error + temperature drift over --temp-span °C + supply drift over
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

/// A position as given: canonical name, expression, parsed network.
#[derive(Debug, Clone, Serialize)]
struct PositionReport {
    name: String,
    expression: String,
    nominal: f64,
    unit: &'static str,
    tolerance: String,
    pieces: usize,
    inferred: bool,
}

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
    caps: Vec<Option<CapFacts>>,
    stages: Vec<Built>,
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
    let mut caps = Vec::new();
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
                let (net, vals) = match combine {
                    Combine::Resistive => parse_net(&expr, &mut |s: &str| {
                        parse_resistance(s).map(|o: Ohms| o.si())
                    }),
                    Combine::Capacitive => parse_net(&expr, &mut |s: &str| {
                        parse_capacitance(s).map(|f: Farads| f.si())
                    }),
                }
                .with_context(|| format!("position {full}"))?;
                if given_tol.is_none() {
                    defaults_used.push(format!("{full} {}", tolerance_text(default)));
                }
                let pieces = vals
                    .into_iter()
                    .map(|value| Piece { value, tolerance })
                    .collect();
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
                tolerance: tolerance_text(tolerance),
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
        let stage = stage_of(&model, cap_facts)?;
        caps.push(cap_facts);
        stages.push(Built {
            label: input.label,
            stage,
            model,
        });
    }
    Ok(Prepared {
        family,
        model,
        caps,
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

fn tolerance_text(t: Tolerance) -> String {
    if t.is_symmetric() {
        format!("±{}", t.plus)
    } else {
        format!("−{} / +{}", t.minus, t.plus)
    }
}

// ---------------------------------------------------------------------------------------------
// The report.

#[derive(Debug, Serialize)]
struct AnalysisReport {
    label: String,
    form: String,
    model: Vec<String>,
    effects: Vec<Effect>,
    timer_error: Vec<f64>,
    nominal: Vec<Interval>,
    worst_case: Option<WorstCase>,
    monte_carlo: Option<MonteCarlo>,
    averaging: Vec<AveragingNote>,
}

#[derive(Debug, Serialize)]
struct AveragingNote {
    position: String,
    pieces: usize,
    spread_factor: f64,
}

#[derive(Debug, Serialize)]
struct FigureReport {
    key: &'static str,
    value: f64,
    unit: &'static str,
    provenance: &'static str,
}

#[derive(Debug, Serialize)]
struct Report {
    form: String,
    family: &'static str,
    supply: Volts,
    positions: Vec<PositionReport>,
    default_tolerances: Vec<String>,
    inference: Option<Inference>,
    analyses: Vec<AnalysisReport>,
    target: Option<Verdict>,
    trim: Option<TrimPlan>,
    findings: Vec<Finding>,
    figures: Vec<FigureReport>,
    schematic: String,
    files: Vec<FileReport>,
    netlist: Option<NetlistReport>,
    notes: Vec<String>,
    ok: bool,
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

/// Run `check`.
pub fn run(args: CheckArgs, ctx: &Context, out: &mut dyn Write) -> anyhow::Result<Status> {
    let mut prep = prepare(&args)?;
    let is_pair = args.form == FormArg::Pair;
    let is_dual = args.form == FormArg::Dual;
    if is_dual && (args.target.is_some() || args.measured.is_some() || args.trim.is_some()) {
        bail!("--target, --measured and --trim work on one circuit; check each half on its own");
    }
    let circuit_of = |stages: &[Built]| -> anyhow::Result<Circuit> {
        Ok(if is_pair {
            match stages {
                [a, b] => Circuit::Pair {
                    pace: Box::new(a.model.clone()),
                    width: Box::new(b.model.clone()),
                },
                _ => bail!("a pair has two stages"),
            }
        } else {
            match stages.first() {
                Some(s) => Circuit::Single(Box::new(s.model.clone())),
                None => bail!("no stage"),
            }
        })
    };
    let one_shot = !is_pair
        && prep
            .stages
            .first()
            .is_some_and(|s| s.model.form == Form::Monostable);

    // Inverse question first: fill in the unknown position.
    let mut inference = None;
    if let (Some(unknown), Some(measured)) = (prep.unknown.clone(), &args.measured) {
        let (q, value) = parse_quantity_value(measured, args.of, one_shot)?;
        let analysis = Analysis::with_physics(
            &circuit_of(&prep.stages)?,
            &prep.family,
            &prep.model,
            &prep.caps,
        )?;
        let pos = analysis.position(&unknown)?;
        let inf = analysis
            .infer(pos, q, value)
            .with_context(|| format!("inferring {unknown} from {measured}"))?;
        substitute(&mut prep, &unknown, inf.nominal)?;
        inference = Some(inf);
    }

    let limits = Limits {
        resistor_power: args.r_power,
        trigger: args.trigger,
    };
    let mut findings = match (is_pair, is_dual, prep.stages.as_slice()) {
        (true, _, [a, b]) => check_pair(&a.stage, &b.stage, &prep.family, &limits),
        (_, true, [a, b]) => check_dual(&a.stage, &b.stage, &prep.family, &limits),
        (_, _, [a]) => check_stage_with(&a.stage, &prep.family, &limits),
        _ => bail!("unexpected number of stages"),
    };

    let spread = match args.spread {
        SpreadArg::Uniform => Spread::Uniform,
        SpreadArg::Normal => Spread::Normal,
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

    let circuits: Vec<CircuitRow> = if is_dual {
        prep.stages
            .iter()
            .map(|s| {
                (
                    s.label.to_string(),
                    s.model.form.name().to_string(),
                    Circuit::Single(Box::new(s.model.clone())),
                    vec![s],
                )
            })
            .collect()
    } else {
        let form = if is_pair {
            "pair (pace astable triggering a width monostable)".to_string()
        } else {
            prep.stages
                .first()
                .map(|s| describe_form(&s.stage))
                .unwrap_or_default()
        };
        vec![(
            String::new(),
            form,
            circuit_of(&prep.stages)?,
            prep.stages.iter().collect(),
        )]
    };

    let mut analyses = Vec::new();
    let mut samples: Vec<Samples> = Vec::new();
    let mut verdict = None;
    let mut trim = None;
    for (label, form, circuit, built) in &circuits {
        let caps: Vec<Option<CapFacts>> = built.iter().map(|b| b.stage.cap).collect();
        let analysis = Analysis::with_physics(circuit, &prep.family, &prep.model, &caps)?;
        let nominal = analysis.nominal();
        let banded = analysis.nominal_banded();
        let mut effects: Vec<Effect> = Vec::new();
        for b in built {
            let ev = evaluate(&b.stage, &prep.family, &prep.model)?;
            for e in ev.effects {
                let text = if b.label.is_empty() {
                    e.text
                } else {
                    format!("{}: {}", b.label, e.text)
                };
                effects.push(Effect { text, ..e });
            }
        }
        let worst = analysis.worst_case().ok();
        if is_pair && let Some(d) = worst.as_ref().and_then(|w| w.get(Quantity::Duty)) {
            findings.extend(check_pair_worst_case(d.max));
        }
        let mc = if args.samples > 0 {
            let (mc, drawn) =
                analysis.monte_carlo_samples(args.samples, args.seed, spread, target)?;
            samples.push(drawn);
            Some(mc)
        } else {
            samples.push(Vec::new());
            None
        };
        if let (Some(t), Some(wc)) = (target, &worst) {
            verdict = Some(analysis.verdict(wc, t)?);
        }
        if let Some(which) = &args.trim {
            let name = if which == "auto" {
                default_trim(args.form).to_string()
            } else {
                which.to_ascii_uppercase()
            };
            let pos = analysis.position(&name)?;
            let (q, goal) = match target {
                Some(t) => (t.quantity, t.value),
                None => {
                    let q = if one_shot || (is_pair && (name == "R3" || name == "C2")) {
                        Quantity::High
                    } else {
                        Quantity::Period
                    };
                    (q, nominal[q as usize])
                }
            };
            trim = Some(
                analysis
                    .trim(pos, q, goal)
                    .with_context(|| format!("trim of {name}"))?,
            );
        }
        let mut model = Vec::new();
        for b in built {
            let prefix = if b.label.is_empty() {
                String::new()
            } else {
                format!("{}: ", b.label)
            };
            let thresholds = match b.stage.conditions.control {
                Some(v) => format!("control pin driven at {v}, lower threshold half of it"),
                None => "thresholds 1/3 and 2/3 of the supply".to_string(),
            };
            model.push(format!(
                "{prefix}{} ({thresholds}){}",
                if args.ideal {
                    "ideal: the textbook model, every effect off"
                } else {
                    "real parts: the effects below"
                },
                if args.guarantee {
                    "; family figures at their data-sheet limits (from memory)"
                } else {
                    ""
                }
            ));
        }
        analyses.push(AnalysisReport {
            label: label.clone(),
            form: form.clone(),
            model,
            effects,
            timer_error: built.iter().map(|b| b.model.timer_error.si()).collect(),
            nominal: analysis
                .quantities()
                .into_iter()
                .map(|q| {
                    let [n, lo, hi] = banded[q as usize];
                    Interval {
                        band_lo: lo,
                        band_hi: hi,
                        ..Interval::point(q, n)
                    }
                })
                .collect(),
            worst_case: worst,
            monte_carlo: mc,
            averaging: analysis
                .averaging()
                .into_iter()
                .map(|(position, pieces)| AveragingNote {
                    position,
                    pieces,
                    spread_factor: 1.0 / (pieces as f64).sqrt(),
                })
                .collect(),
        });
    }

    // Most serious first in every report (text and JSON), in the one order of `report::style`.
    sort_by_severity(&mut findings, |f| f.severity);
    let target_met = verdict.is_none_or(|v| v.guaranteed);
    let ok = !has_error(&findings) && target_met;
    let schematic = schematic_of(&prep.stages, args.form, args.vcc);
    let mut files = Vec::new();
    let mut notes = Vec::new();
    let netlist_report = match &args.netlist {
        Some(path) => {
            let report = write_netlist(&prep.stages, layout_of(args.form), path, &ctx.files())?;
            files.push(FileReport {
                kind: "netlist",
                path: report.path.clone(),
            });
            Some(report)
        }
        None => None,
    };
    if let Some(dir) = &args.svg {
        let pictures = Pictures {
            dir,
            layout: layout_of(args.form),
            target,
            circuits: &circuits,
            analysed: analyses
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
    let report = Report {
        form: format!("{:?}", args.form).to_ascii_lowercase(),
        family: prep.family.name,
        supply: args.vcc,
        positions: prep.positions,
        default_tolerances: prep.defaults_used,
        inference,
        analyses,
        target: verdict,
        trim,
        findings,
        figures: prep
            .family
            .figures()
            .into_iter()
            .map(|(key, f)| FigureReport {
                key,
                value: f.value,
                unit: f.unit,
                provenance: f.provenance.label(),
            })
            .collect(),
        schematic,
        files,
        netlist: netlist_report,
        notes,
        ok,
    };
    if ctx.json {
        serde_json::to_writer_pretty(&mut *out, &report).context("writing JSON")?;
        writeln!(out)?;
    } else {
        render(&report, &prep.family, &args, out)?;
    }
    Ok(if ok { Status::Success } else { Status::NotMet })
}

// ---------------------------------------------------------------------------------------------
// Schematic, netlist and pictures.

/// A position written plainly: `33 kΩ + 2.2 kΩ (35.2 kΩ)`, or `4.7 kΩ` for one piece.
fn position_text(p: &Position) -> String {
    let show = |v: f64| match p.combine {
        Combine::Resistive => Ohms::from_si(v).map_or_else(|| format!("{v} Ω"), |o| o.to_string()),
        Combine::Capacitive => {
            Farads::from_si(v).map_or_else(|| format!("{v} F"), |f| f.to_string())
        }
    };
    let pieces = p
        .net
        .describe(&|i| p.pieces.get(i).map_or_else(String::new, |x| show(x.value)));
    if p.pieces.len() > 1 {
        let total = match p.combine {
            Combine::Resistive => Ohms::from_si(p.nominal()).map(|o| o.eng(4)),
            Combine::Capacitive => Farads::from_si(p.nominal()).map(|f| f.eng(4)),
        };
        format!("{pieces} ({})", total.unwrap_or_default())
    } else {
        pieces
    }
}

fn stage_parts(b: &Built) -> schematic::StageParts {
    let m = &b.model;
    let circuit = match (m.form, m.steering) {
        (Form::Monostable, _) => schematic::Circuit::Monostable,
        (Form::Astable, _) => schematic::Circuit::Astable,
        (Form::Steered, Steering::TwoDiode) => schematic::Circuit::Steered,
        (Form::Steered, Steering::OneDiode) => schematic::Circuit::SteeredBypass,
        (Form::Square, _) => schematic::Circuit::Square,
    };
    let parts = std::iter::once(&m.r1)
        .chain(m.r2.as_ref())
        .chain(std::iter::once(&m.c))
        .map(|p| (short_name(&p.name).to_string(), position_text(p)))
        .collect();
    schematic::StageParts {
        circuit,
        parts,
        control: m.conditions.control.map(|v| v.to_string()),
    }
}

fn schematic_of(stages: &[Built], form: FormArg, vcc: Volts) -> String {
    let supply = format!("+{vcc}");
    match stages {
        [one] => schematic::single(&stage_parts(one), &supply),
        [a, b] => schematic::dual(
            &stage_parts(a),
            &stage_parts(b),
            &supply,
            form == FormArg::Pair,
        ),
        _ => String::new(),
    }
}

fn substitute(prep: &mut Prepared, name: &str, value: f64) -> anyhow::Result<()> {
    for b in &mut prep.stages {
        let m = &mut b.model;
        let slots: Vec<&mut Position> = std::iter::once(&mut m.r1)
            .chain(m.r2.as_mut())
            .chain(std::iter::once(&mut m.c))
            .collect();
        for p in slots {
            if p.name == name {
                let tol = p.pieces.first().map(|x| x.tolerance).unwrap_or(Tolerance {
                    minus: Ratio::ZERO,
                    plus: Ratio::ZERO,
                });
                *p = Position::single(name, p.combine, value, tol);
            }
        }
        let cap = b.stage.cap;
        b.stage = stage_of(&b.model, cap)?;
    }
    for p in &mut prep.positions {
        if p.name == name {
            p.nominal = value;
            p.expression = "inferred".into();
            p.tolerance = "taken exact".into();
        }
    }
    Ok(())
}

/// How the files lay the stages of a form out.
fn layout_of(form: FormArg) -> Layout {
    match form {
        FormArg::Pair => Layout::Pair,
        FormArg::Dual => Layout::Dual,
        _ => Layout::Single,
    }
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

fn describe_form(stage: &Stage) -> String {
    match stage.form {
        Form::Monostable => "monostable (one-shot)".into(),
        Form::Astable => "astable (classic: charge via R1+R2, discharge via R2)".into(),
        Form::Steered => "steered astable (charge via RA, discharge via RB)".into(),
        Form::Square => "square wave (output-driven, one resistor)".into(),
    }
}

fn qv(q: Quantity, v: f64) -> String {
    if !v.is_finite() {
        return "—".into();
    }
    match q {
        Quantity::Duty => format!("{:.2} %", v * 100.0),
        Quantity::Frequency => Hertz::from_si(v).map_or_else(|| format!("{v} Hz"), |h| h.eng(4)),
        _ => Seconds::from_si(v).map_or_else(|| format!("{v} s"), |s| s.eng(4)),
    }
}

fn rel(x: f64, nominal: f64) -> String {
    if nominal == 0.0 || !x.is_finite() {
        return String::new();
    }
    format!("{:+.2} %", (x / nominal - 1.0) * 100.0)
}

fn si_unit(v: f64, unit: &str) -> String {
    match unit {
        "ratio" => format!("{:.2} %", v * 100.0),
        "ratio/°C" => format!("{:.0} ppm/°C", v * 1e6),
        "ratio/V" => format!("{:.2} %/V", v * 100.0),
        u => format_sig(v, 3, u),
    }
}

fn render(
    r: &Report,
    family: &Family,
    args: &CheckArgs,
    out: &mut dyn Write,
) -> anyhow::Result<()> {
    writeln!(
        out,
        "check: {}, {} timer, supply {}",
        r.form,
        r.family,
        r.supply.eng(4)
    )?;
    writeln!(out, "\nparts:")?;
    for p in &r.positions {
        let value = if p.unit == "F" {
            Farads::from_si(p.nominal).map_or_else(String::new, |x| x.eng(4))
        } else {
            Ohms::from_si(p.nominal).map_or_else(String::new, |x| x.eng(4))
        };
        let shown = if p.inferred {
            format!("{value}  (inferred from the measurement, taken exact)")
        } else if p.pieces > 1 {
            format!(
                "{value}  = {}  ({} pieces, each {})",
                p.expression, p.pieces, p.tolerance
            )
        } else {
            format!("{value}  {}", p.tolerance)
        };
        writeln!(out, "  {:<5} {shown}", p.name)?;
    }
    if !r.default_tolerances.is_empty() {
        writeln!(
            out,
            "  (tolerance not given, common-practice default used: {})",
            r.default_tolerances.join(", ")
        )?;
    }
    writeln!(out, "\nschematic:")?;
    write!(out, "{}", r.schematic)?;
    if let Some(inf) = &r.inference {
        let f = |v: f64| {
            if inf.series == crate::units::eseries::Series::E12 {
                Farads::from_si(v).map_or_else(String::new, |x| x.eng(3))
            } else {
                Ohms::from_si(v).map_or_else(String::new, |x| x.eng(3))
            }
        };
        writeln!(
            out,
            "\ninferred {} from {}: {} (known parts nominal); between {} and {} over their tolerances and the timer error (measurement taken exact)",
            inf.position,
            args.measured.as_deref().unwrap_or(""),
            f(inf.nominal),
            f(inf.min),
            f(inf.max)
        )?;
        let cands: Vec<String> = inf.candidates.iter().map(|&v| f(v)).collect();
        writeln!(
            out,
            "  nearest {:?} value: {}; {:?} values inside that range: {}",
            inf.series,
            f(inf.nearest),
            inf.series,
            if cands.is_empty() {
                "none".to_string()
            } else {
                cands.join(", ")
            }
        )?;
    }
    for a in &r.analyses {
        let title = if a.label.is_empty() {
            a.form.clone()
        } else {
            format!("{} — {}", a.label, a.form)
        };
        writeln!(out, "\n{title}")?;
        for m in &a.model {
            writeln!(out, "  model: {m}")?;
        }
        for e in &a.effects {
            writeln!(out, "    - {} ({})", e.text, e.provenance)?;
        }
        writeln!(
            out,
            "  times (nominal, and the model band where the effects leave one):"
        )?;
        for i in &a.nominal {
            let band = if i.band_lo < i.nominal || i.band_hi > i.nominal {
                format!(
                    "   band {} … {}",
                    qv(i.quantity, i.band_lo),
                    qv(i.quantity, i.band_hi)
                )
            } else {
                String::new()
            };
            writeln!(
                out,
                "    {:<10} {}{band}",
                i.quantity.label(),
                qv(i.quantity, i.nominal)
            )?;
        }
        let errs: Vec<String> = a
            .timer_error
            .iter()
            .map(|e| format!("±{:.2} %", e * 100.0))
            .collect();
        match &a.worst_case {
            Some(wc) => {
                writeln!(
                    out,
                    "  worst case (exact: every piece at each limit, {} corners; timer error {} = initial + {} °C drift + {} supply drift):",
                    wc.corners,
                    errs.join(" / "),
                    args.temp_span,
                    args.supply_swing.eng(3)
                )?;
                for i in &wc.intervals {
                    let with_band = if i.worst_lo < i.min || i.worst_hi > i.max {
                        format!(
                            "; with the model band {} … {}",
                            qv(i.quantity, i.worst_lo),
                            qv(i.quantity, i.worst_hi)
                        )
                    } else {
                        String::new()
                    };
                    writeln!(
                        out,
                        "    {:<10} {} … {}   ({} / {}){with_band}",
                        i.quantity.label(),
                        qv(i.quantity, i.min),
                        qv(i.quantity, i.max),
                        rel(i.min, i.nominal),
                        rel(i.max, i.nominal)
                    )?;
                }
            }
            None => writeln!(
                out,
                "  worst case: too many pieces for the exact corner search"
            )?,
        }
        if let Some(mc) = &a.monte_carlo {
            writeln!(
                out,
                "  Monte Carlo ({} samples, seed {}, {}):",
                mc.samples,
                mc.seed,
                match mc.spread {
                    Spread::Uniform => "uniform within each tolerance",
                    Spread::Normal => "normal, tolerance = 3σ",
                }
            )?;
            writeln!(
                out,
                "    {:<10} {:>12} {:>12} {:>12} {:>12} {:>12}",
                "",
                "mean",
                "std dev",
                PERCENTILE_LABELS[0],
                PERCENTILE_LABELS[1],
                PERCENTILE_LABELS[2]
            )?;
            for s in &mc.stats {
                writeln!(
                    out,
                    "    {:<10} {:>12} {:>12} {:>12} {:>12} {:>12}",
                    s.quantity.label(),
                    qv(s.quantity, s.mean),
                    qv(s.quantity, s.std_dev),
                    qv(s.quantity, s.p1),
                    qv(s.quantity, s.p50),
                    qv(s.quantity, s.p99)
                )?;
            }
        }
        for n in &a.averaging {
            writeln!(
                out,
                "  note: {}'s {} equal pieces average their random errors: its random spread is about 1/√{} = {:.2} of one part's (the worst case does not shrink)",
                n.position, n.pieces, n.pieces, n.spread_factor
            )?;
        }
    }
    if let Some(v) = &r.target {
        let (a, b) = v.target.band();
        let q = v.target.quantity;
        writeln!(
            out,
            "\ntarget: {} {} within ±{} ({} … {}): {}",
            q.label(),
            qv(q, v.target.value),
            v.target.within,
            qv(q, a),
            qv(q, b),
            if v.guaranteed {
                "GUARANTEED — every corner, with the model band, lies inside".to_string()
            } else {
                format!(
                    "NOT guaranteed — worst case with the model band {} … {}{}",
                    qv(q, v.interval.worst_lo),
                    qv(q, v.interval.worst_hi),
                    if v.nominal_inside {
                        ""
                    } else {
                        "; even the nominal value misses"
                    }
                )
            }
        )?;
        if let Some(share) = r
            .analyses
            .first()
            .and_then(|a| a.monte_carlo.as_ref())
            .and_then(|m| m.within_target)
        {
            writeln!(
                out,
                "  Monte Carlo: {:.1} % of samples inside",
                share * 100.0
            )?;
        }
    }
    if let Some(t) = &r.trim {
        let ohm = |v: f64| Ohms::from_si(v).map_or_else(String::new, |x| x.eng(3));
        writeln!(
            out,
            "\ntrim: to set {} to {} in every corner the position needs {} … {} (nominal {})",
            t.quantity.label(),
            qv(t.quantity, t.goal),
            ohm(t.need_min),
            ohm(t.need_max),
            ohm(t.need_nominal)
        )?;
        match t.fixed {
            Some(f) => writeln!(
                out,
                "  fit a {} fixed resistor ({}, E24) in series with a {} trimmer (track {}, from memory); nominal setting at {:.0} % of its travel",
                ohm(f),
                tolerance_text(t.fixed_tolerance),
                ohm(t.trimmer),
                tolerance_text(t.trimmer_tolerance),
                t.nominal_setting * 100.0
            )?,
            None => writeln!(
                out,
                "  a {} trimmer alone (track {}); nominal setting at {:.0} % — mind the discharge current at its low end if it is R1",
                ohm(t.trimmer),
                tolerance_text(t.trimmer_tolerance),
                t.nominal_setting * 100.0
            )?,
        }
    }
    let figs: Vec<String> = family
        .figures()
        .into_iter()
        .map(|(k, f)| {
            let mark = if f.provenance == crate::timing::Provenance::FromMemory {
                String::new()
            } else {
                format!(" ({})", f.provenance.label())
            };
            format!("{k} {}{mark}", si_unit(f.value, f.unit))
        })
        .collect();
    writeln!(
        out,
        "\ntimer figures ({}, from memory unless marked; override with --set KEY=VALUE):",
        family.name
    )?;
    for chunk in figs.chunks(4) {
        writeln!(out, "  {}", chunk.join(", "))?;
    }
    writeln!(out, "\nfindings:")?;
    if r.findings.is_empty() {
        writeln!(out, "  none")?;
    }
    for f in &r.findings {
        let sev = match f.severity {
            Severity::Error => "ERROR",
            Severity::Warning => "warning",
            Severity::Caution => "CAUTION",
            Severity::Note => "note",
        };
        writeln!(out, "  {sev:<8} {:<22} {}", f.code, f.message)?;
    }
    let errors = r
        .findings
        .iter()
        .filter(|f| f.severity == Severity::Error)
        .count();
    let verdict = match (errors, r.target.map(|v| v.guaranteed)) {
        (0, None | Some(true)) => "result: sound".to_string(),
        (0, Some(false)) => "result: target not guaranteed".to_string(),
        (n, _) => format!(
            "result: FAILED — {n} error finding{}",
            if n == 1 { "" } else { "s" }
        ),
    };
    if !r.files.is_empty() || !r.notes.is_empty() {
        writeln!(out, "\nfiles written:")?;
        for f in &r.files {
            writeln!(out, "  {:<10} {}", f.kind, f.path)?;
        }
        if let Some(n) = &r.netlist {
            writeln!(out, "  (run the netlist with: ngspice -b {})", n.path)?;
        }
        for n in &r.notes {
            writeln!(out, "  note: {n}")?;
        }
    }
    writeln!(out, "\n{verdict}")?;
    Ok(())
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
