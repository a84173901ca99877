//! The report of `onhand check`: the assessment of `timing::assess` with the positions as
//! given, the schematic, the model and its effects, times with their bands, worst case, Monte
//! Carlo, the target verdict, the trimmer, the timer figures, the findings (most serious first)
//! and the files written — as text or JSON. Pure: returns strings.

use super::schematic;
use super::style::{PERCENTILE_LABELS, Style, sort_by_severity};
use crate::network::Combine;
use crate::timing::assess::{Arrangement, AssessedStage, Assessment};
use crate::timing::{
    Effect, Family, Finding, Form, Inference, Interval, MonteCarlo, Position, Quantity, Severity,
    Spread, Stage, Steering, TrimPlan, Verdict, WorstCase,
};
use crate::units::{Engineering, Farads, Hertz, Ohms, Seconds, Tolerance, Volts, format_sig};
use serde::Serialize;
use std::fmt::Write as _;

/// A position as given on the command line: canonical name, expression, nominal value, unit
/// (`Ω` or `F`), tolerance text, number of pieces, and whether it is the one inferred.
#[derive(Debug, Clone, Serialize)]
pub struct PositionReport {
    /// Full name (`R1`, `A.C`).
    pub name: String,
    /// What was typed (`33k+2.2k`), `?` for the unknown, `inferred` once inferred.
    pub expression: String,
    /// Nominal value, SI units.
    pub nominal: f64,
    /// `Ω` or `F`.
    pub unit: &'static str,
    /// Tolerance of each piece, as text.
    pub tolerance: String,
    /// Number of pieces.
    pub pieces: usize,
    /// Whether the value was inferred from a measurement.
    pub inferred: bool,
}

/// A file the command wrote.
#[derive(Debug, Clone, Serialize)]
pub struct FileLine {
    /// `netlist`, `svg`, …
    pub kind: &'static str,
    /// Where it went.
    pub path: String,
}

/// One `.meas` result of the netlist: its name, which analysis it belongs to, which quantity.
#[derive(Debug, Clone, Serialize)]
pub struct MeasureLine {
    /// The `.meas` name.
    pub name: String,
    /// Index of the analysis (stage) it belongs to.
    pub analysis: usize,
    /// The quantity it measures.
    pub quantity: Quantity,
}

/// The netlist written and what each of its `.meas` results is.
#[derive(Debug, Clone, Serialize)]
pub struct NetlistLine {
    /// Where it went.
    pub path: String,
    /// Its measurements.
    pub measures: Vec<MeasureLine>,
}

/// What the command layer knows beside the assessment: the positions as typed, the defaults it
/// filled in, the options that shape the wording, and the files it wrote.
#[derive(Debug, Clone)]
pub struct CheckView {
    /// Name of the form as typed (`astable`, `pair`, `dual`).
    pub form: String,
    /// The supply.
    pub supply: Volts,
    /// Every position as given (the unknown one with `inferred` set).
    pub positions: Vec<PositionReport>,
    /// Positions whose tolerance was a common-practice default, as `NAME ±5 %`.
    pub default_tolerances: Vec<String>,
    /// The measurement as typed.
    pub measured: Option<String>,
    /// Temperature excursion either side of 25 °C.
    pub temp_span: f64,
    /// Supply excursion either way.
    pub supply_swing: Volts,
    /// The textbook model (every effect off).
    pub ideal: bool,
    /// Family figures at their data-sheet limits.
    pub guarantee: bool,
    /// Files written.
    pub files: Vec<FileLine>,
    /// The netlist written.
    pub netlist: Option<NetlistLine>,
    /// Notes about the files.
    pub notes: Vec<String>,
}

/// One analysis as reported.
#[derive(Debug, Clone, Serialize)]
pub struct AnalysisReport {
    /// `timer A`/`timer B` in a dual package, empty otherwise.
    pub label: String,
    /// The form in words.
    pub form: String,
    /// The model of each stage in words.
    pub model: Vec<String>,
    /// The evaluator's effects, labelled by stage in a two-stage design.
    pub effects: Vec<Effect>,
    /// The timer's own error of each stage.
    pub timer_error: Vec<f64>,
    /// Nominal values with their model bands.
    pub nominal: Vec<Interval>,
    /// Exact worst case.
    pub worst_case: Option<WorstCase>,
    /// Monte Carlo statistics.
    pub monte_carlo: Option<MonteCarlo>,
    /// Positions of equal pieces that average.
    pub averaging: Vec<AveragingNote>,
}

/// A position of several equal pieces, whose random errors average.
#[derive(Debug, Clone, Serialize)]
pub struct AveragingNote {
    /// The position.
    pub position: String,
    /// How many pieces.
    pub pieces: usize,
    /// About 1/√pieces.
    pub spread_factor: f64,
}

/// A timer figure with its unit and where it comes from.
#[derive(Debug, Clone, Serialize)]
pub struct FigureReport {
    key: &'static str,
    value: f64,
    unit: &'static str,
    provenance: &'static str,
}

/// The whole report of `check`, as JSON prints it (text renders the same data).
#[derive(Debug, Clone, Serialize)]
pub struct CheckReport {
    schema: u32,
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
    files: Vec<FileLine>,
    netlist: Option<NetlistLine>,
    notes: Vec<String>,
    ok: bool,
    #[serde(skip)]
    measured: Option<String>,
    #[serde(skip)]
    temp_span: f64,
    #[serde(skip)]
    supply_swing: Volts,
    #[serde(skip)]
    figure_lines: Vec<String>,
    #[serde(skip)]
    family_name: &'static str,
}

/// The form of an analysis in words, as the report heads it.
pub fn analysis_form(assessment: &Assessment, arrangement: Arrangement, index: usize) -> String {
    let Some(a) = assessment.analyses.get(index) else {
        return String::new();
    };
    let first = a.stages.first().and_then(|&i| assessment.stages.get(i));
    match (arrangement, first) {
        (Arrangement::Pair, _) => "pair (pace astable triggering a width monostable)".to_string(),
        (Arrangement::Dual, Some(s)) => s.model.form.name().to_string(),
        (Arrangement::Single, Some(s)) => describe_form(&s.stage),
        (_, None) => String::new(),
    }
}

/// Assemble the report of an assessment: positions (the inferred one filled in), analyses in
/// words, findings most serious first, the schematic and the family's figures.
pub fn build(
    assessment: &Assessment,
    arrangement: Arrangement,
    family: &Family,
    view: CheckView,
) -> CheckReport {
    let mut positions = view.positions;
    if let Some(inf) = &assessment.inference {
        for p in positions.iter_mut().filter(|p| p.inferred) {
            p.nominal = inf.nominal;
            p.expression = "inferred".into();
            p.tolerance = "taken exact".into();
        }
    }
    let analyses = assessment
        .analyses
        .iter()
        .enumerate()
        .map(|(index, a)| {
            let members: Vec<&AssessedStage> = a
                .stages
                .iter()
                .filter_map(|&i| assessment.stages.get(i))
                .collect();
            let effects = a
                .effects
                .iter()
                .map(|(label, e)| {
                    let text = if label.is_empty() {
                        e.text.clone()
                    } else {
                        format!("{label}: {}", e.text)
                    };
                    Effect { text, ..e.clone() }
                })
                .collect();
            let model = members
                .iter()
                .map(|b| model_line(b, view.ideal, view.guarantee))
                .collect();
            AnalysisReport {
                label: a.label.to_string(),
                form: analysis_form(assessment, arrangement, index),
                model,
                effects,
                timer_error: a.timer_error.clone(),
                nominal: a.nominal.clone(),
                worst_case: a.worst_case.clone(),
                monte_carlo: a.monte_carlo.clone(),
                averaging: a
                    .averaging
                    .iter()
                    .map(|(position, pieces)| AveragingNote {
                        position: position.clone(),
                        pieces: *pieces,
                        spread_factor: 1.0 / (*pieces as f64).sqrt(),
                    })
                    .collect(),
            }
        })
        .collect();
    // Most serious first, in the one order of `report::style`.
    let mut findings = assessment.findings.clone();
    sort_by_severity(&mut findings, |f| f.severity);
    CheckReport {
        schema: super::style::JSON_SCHEMA,
        form: view.form,
        family: family.name,
        supply: view.supply,
        positions,
        default_tolerances: view.default_tolerances,
        inference: assessment.inference.clone(),
        analyses,
        target: assessment.verdict,
        trim: assessment.trim,
        findings,
        figures: family
            .figures()
            .into_iter()
            .map(|(key, f)| FigureReport {
                key,
                value: f.value,
                unit: f.unit,
                provenance: f.provenance.label(),
            })
            .collect(),
        schematic: schematic_of(&assessment.stages, arrangement, view.supply),
        files: view.files,
        netlist: view.netlist,
        notes: view.notes,
        ok: assessment.ok,
        measured: view.measured,
        temp_span: view.temp_span,
        supply_swing: view.supply_swing,
        figure_lines: figure_lines(family),
        family_name: family.name,
    }
}

/// The model line of one stage.
fn model_line(b: &AssessedStage, ideal: bool, guarantee: bool) -> String {
    let prefix = if b.label.is_empty() {
        String::new()
    } else {
        format!("{}: ", b.label)
    };
    let thresholds = match b.stage.conditions.control {
        Some(v) => format!("control pin driven at {v}, lower threshold half of it"),
        None => "thresholds 1/3 and 2/3 of the supply".to_string(),
    };
    format!(
        "{prefix}{} ({thresholds}){}",
        if ideal {
            "ideal: the textbook model, every effect off"
        } else {
            "real parts: the effects below"
        },
        if guarantee {
            "; family figures at their data-sheet limits (from memory)"
        } else {
            ""
        }
    )
}

/// The report as pretty JSON, with a final newline.
pub fn json(r: &CheckReport) -> Result<String, serde_json::Error> {
    let mut s = serde_json::to_string_pretty(r)?;
    s.push('\n');
    Ok(s)
}

/// The tolerance of a piece as the report writes it: `±5 %`, `−20 % / +80 %`.
pub fn tolerance_text(t: Tolerance) -> String {
    if t.is_symmetric() {
        format!("±{}", t.plus)
    } else {
        format!("−{} / +{}", t.minus, t.plus)
    }
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

fn stage_parts(b: &AssessedStage) -> schematic::StageParts {
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
        .map(|p| {
            let short = p.name.rsplit('.').next().unwrap_or(&p.name);
            (short.to_string(), position_text(p))
        })
        .collect();
    schematic::StageParts {
        circuit,
        parts,
        control: m.conditions.control.map(|v| v.to_string()),
    }
}

fn schematic_of(stages: &[AssessedStage], arrangement: Arrangement, vcc: Volts) -> String {
    let supply = format!("+{vcc}");
    match stages {
        [one] => schematic::single(&stage_parts(one), &supply),
        [a, b] => schematic::dual(
            &stage_parts(a),
            &stage_parts(b),
            &supply,
            arrangement == Arrangement::Pair,
        ),
        _ => String::new(),
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

/// The report as text. Findings carry the one severity label and colour of every report
/// (`report::style`: `Error`, `Caution`, `Warning`, `Note`; colour only when `style` says so —
/// a terminal without `NO_COLOR`), as does a failed verdict.
pub fn text(r: &CheckReport, style: Style) -> String {
    let mut out = String::new();
    // Writing into a String cannot fail.
    let _ = render(r, style, &mut out);
    out
}

/// Width of the severity column: the longest plain label.
const SEVERITY_WIDTH: usize = 7;

fn figure_lines(family: &Family) -> Vec<String> {
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
    figs.chunks(4).map(|c| c.join(", ")).collect()
}

fn render(r: &CheckReport, style: Style, out: &mut String) -> std::fmt::Result {
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
            // "per piece: ±1 %, ±5 %" when the pieces differ; one tolerance otherwise.
            let each = if p.tolerance.starts_with("per piece") {
                ""
            } else {
                "each "
            };
            format!(
                "{value}  = {}  ({} pieces, {each}{})",
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
            r.measured.as_deref().unwrap_or(""),
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
                    r.temp_span,
                    r.supply_swing.eng(3)
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
    writeln!(
        out,
        "\ntimer figures ({}, from memory unless marked; override with --set KEY=VALUE):",
        r.family_name
    )?;
    for line in &r.figure_lines {
        writeln!(out, "  {line}")?;
    }
    writeln!(out, "\nfindings:")?;
    if r.findings.is_empty() {
        writeln!(out, "  none")?;
    }
    for f in &r.findings {
        // Pad on the plain word: colour codes take no room on the screen.
        let pad = SEVERITY_WIDTH.saturating_sub(Style::PLAIN.label(f.severity).chars().count());
        writeln!(
            out,
            "  {}{}  {:<22} {}",
            style.label(f.severity),
            " ".repeat(pad),
            f.code,
            f.message
        )?;
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
            "result: {} — {n} error finding{}",
            style.paint(Severity::Error, "FAILED"),
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
    use crate::model::Technology;
    use crate::timing::assess::{CheckInput, Sampling, StageSpec, assess};
    use crate::timing::{CapFacts, Conditions, Limits, Model, StageModel, family_by_name};
    use crate::units::Ratio;

    fn view(positions: Vec<PositionReport>) -> CheckView {
        CheckView {
            form: "monostable".into(),
            supply: Volts::from_si(15.0).expect("15 V"),
            positions,
            default_tolerances: Vec::new(),
            measured: None,
            temp_span: 25.0,
            supply_swing: Volts::ZERO,
            ideal: false,
            guarantee: false,
            files: Vec::new(),
            netlist: None,
            notes: Vec::new(),
        }
    }

    #[test]
    fn findings_come_most_serious_first_and_monte_carlo_columns_are_percentiles() {
        // A 1 MΩ / 1000 µF electrolytic one-shot at 15 V on a 16 V part: the checks raise an
        // error (leakage), warnings and a note, the note before some warnings.
        let tol = Tolerance::symmetric_percent(20.0).expect("tol");
        let r = Position::single("R", Combine::Resistive, 1e6, tol);
        let c = Position::single("C", Combine::Capacitive, 1e-3, tol);
        let cap = CapFacts {
            technology: Technology::Electrolytic,
            voltage_rating: Volts::from_si(16.0),
            tolerance: tol,
        };
        let input = CheckInput {
            arrangement: Arrangement::Single,
            stages: vec![StageSpec {
                label: "",
                model: StageModel {
                    form: Form::Monostable,
                    steering: Steering::TwoDiode,
                    r1: r,
                    r2: None,
                    c,
                    conditions: Conditions::ideal(Volts::from_si(15.0).expect("15 V")),
                    timer_error: Ratio::ZERO,
                },
                cap: Some(cap),
            }],
            family: family_by_name("bipolar").expect("family"),
            model: Model::real(),
            limits: Limits::default(),
            measured: None,
            target: None,
            trim: None,
            sampling: Sampling {
                samples: 200,
                seed: 1,
                spread: Spread::Uniform,
            },
        };
        let a = assess(&input).expect("assess");
        let report = build(&a, Arrangement::Single, &input.family, view(Vec::new()));
        let ranks: Vec<u8> = report
            .findings
            .iter()
            .map(|f| super::super::style::severity_rank(f.severity))
            .collect();
        assert!(
            ranks.len() >= 3 && ranks.windows(2).all(|w| w[0] <= w[1]),
            "{ranks:?}"
        );
        let text = text(&report, Style::PLAIN);
        // The labels and colours of report::style: plain words when piped, painted on a
        // terminal, with the column where the plain label puts it.
        assert!(!text.contains('\u{1b}'), "{text}");
        let line = |t: &str, word: &str| {
            t.lines()
                .find(|l| l.starts_with(&format!("  {word}")))
                .map(str::to_string)
        };
        let plain_error = line(&text, "Error ").expect("an Error line");
        let on = Style::choose(true, false, false);
        let painted = super::text(&report, on);
        let coloured_error = line(&painted, &on.label(Severity::Error)).expect("a painted Error");
        assert_eq!(
            coloured_error
                .replace("\u{1b}[1;31m", "")
                .replace("\u{1b}[0m", ""),
            plain_error
        );
        assert!(
            line(&painted, &on.label(Severity::Warning)).is_some(),
            "{painted}"
        );
        assert!(
            line(&painted, &on.label(Severity::Note)).is_some(),
            "{painted}"
        );
        let header = text
            .lines()
            .find(|l| l.contains("std dev"))
            .expect("Monte Carlo header");
        assert!(header.contains("P1") && header.contains("median") && header.contains("P99"));
        assert!(
            text.ends_with("result: FAILED — 1 error finding\n"),
            "{text}"
        );
        let json = json(&report).expect("json");
        assert!(json.contains("\"findings\""));
    }
}
