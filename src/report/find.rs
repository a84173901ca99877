//! Rendering of `find` results: a plain ranked text listing and JSON with the same content.
//! Pure: takes the outcome and writes to the given writer.

use crate::model::{Kind, Part, Value};
use crate::solve::suggest::Advice;
use crate::solve::{Design, Goal, Outcome, Quantity, Settings, StageGoal};
use crate::units::format_sig;
use serde::Serialize;
use std::io::{self, Write};

/// Everything a `find` report shows.
pub struct View<'a> {
    /// What was asked.
    pub goal: &'a Goal,
    /// With which settings.
    pub settings: &'a Settings,
    /// The stock snapshot the rows index.
    pub parts: &'a [Part],
    /// The answer.
    pub outcome: &'a Outcome,
    /// Closest design and purchase, when nothing was found.
    pub advice: Option<&'a Advice>,
}

fn si(p: &Part) -> f64 {
    match p.value {
        Value::Resistance(v) => v.si(),
        Value::Capacitance(v) => v.si(),
        Value::None => f64::NAN,
    }
}

fn unit(kind: Kind) -> &'static str {
    if kind == Kind::Capacitor { "F" } else { "Ω" }
}

fn pct(x: f64) -> String {
    let p = x * 100.0;
    if p != 0.0 && p.abs() < 0.001 {
        format!("{p:.1e} %")
    } else {
        format!("{p:.3} %")
    }
}

/// A part as written in a network: `33 kΩ`.
pub(crate) fn part_label(p: &Part) -> String {
    format_sig(si(p), 3, unit(p.kind))
}

/// Where a row comes from: its bin, or "row N" when it has none.
fn bin_label(p: &Part) -> String {
    if p.bin.is_empty() {
        format!("row {}", p.id)
    } else {
        p.bin.clone()
    }
}

pub(crate) fn describe_goal(goal: &Goal, s: &Settings) -> String {
    // Long times in the units people use (1 h, 90 min), never 3.6 ks.
    let t = |x: crate::units::Seconds| crate::units::time_text(x, 4);
    let f = |x: crate::units::Seconds| format_sig(1.0 / x.si(), 4, "Hz");
    let stage = |g: &StageGoal| match *g {
        StageGoal::Pulse { width } => format!("one-shot of {}", t(width)),
        StageGoal::Square { period } => format!("square wave of {} ({})", f(period), t(period)),
        StageGoal::Steered { high, low } => {
            format!("steered astable, high {}, low {}", t(high), t(low))
        }
        StageGoal::Astable { period, duty } => {
            let d = match duty.window_si() {
                None => String::new(),
                Some((a, b)) => format!(", duty {:.1}–{:.1} %", a * 100.0, b * 100.0),
            };
            format!("astable of {} ({}){d}", f(period), t(period))
        }
    };
    let what = match goal {
        Goal::Value { kind, target } => {
            format!("substitute for {}", format_sig(target.si(), 4, unit(*kind)))
        }
        Goal::Stages(st) => st.iter().map(stage).collect::<Vec<_>>().join(" + "),
    };
    format!(
        "{what}, within ±{} {}, {} family at {} V, at most {} per position",
        crate::units::Ratio::from_si(s.tol).unwrap_or_default(),
        if s.guarantee {
            "(worst case guaranteed)"
        } else {
            "(nominal)"
        },
        s.family.name,
        s.conditions.vcc.si(),
        s.max_pieces
    )
}

pub(crate) fn quantity_line(q: &Quantity) -> String {
    let v = |x: f64| {
        if q.unit.is_empty() {
            format!("{:.2} %", x * 100.0)
        } else {
            format_sig(x, 4, q.unit)
        }
    };
    let mut s = format!("{:<9} {}", q.name, v(q.nominal));
    if q.band_lo < q.nominal || q.band_hi > q.nominal {
        s += &format!(" (model band {} … {})", v(q.band_lo), v(q.band_hi));
    }
    if let (Some(t), Some(e)) = (q.target, q.error) {
        s += &format!("  (target {}, off {})", v(t), pct(e));
    } else if let Some((lo, hi)) = q.window {
        s += &format!("  (allowed {} … {})", v(lo), v(hi));
    }
    s += &format!("  worst case {} … {}", v(q.worst_lo), v(q.worst_hi));
    s
}

pub(crate) fn write_design(
    out: &mut dyn Write,
    parts: &[Part],
    d: &Design,
    stages: usize,
) -> io::Result<()> {
    for (si, st) in d.stages.iter().enumerate() {
        if stages > 1 {
            let form = st
                .form
                .map(|f| format!("{f:?}").to_lowercase())
                .unwrap_or_default();
            writeln!(out, "  stage {} ({form}):", si + 1)?;
        }
        for p in d.positions.iter().filter(|p| p.stage == si) {
            let label = |i: usize| {
                p.rows
                    .get(i)
                    .and_then(|&r| parts.get(r))
                    .map(part_label)
                    .unwrap_or_default()
            };
            let net = p.net.describe(&label);
            let bins: Vec<String> = p
                .rows
                .iter()
                .filter_map(|&r| parts.get(r))
                .map(|pt| {
                    format!(
                        "{} {} ±{}",
                        bin_label(pt),
                        part_label(pt),
                        pt.tolerance.widest()
                    )
                })
                .collect();
            writeln!(
                out,
                "    {:<5} = {:<28} from {}",
                p.name,
                net,
                bins.join("; ")
            )?;
            if p.rows.len() > 1 {
                writeln!(
                    out,
                    "            network {} (worst case {} … {})",
                    format_sig(p.value, 4, unit(p.kind)),
                    format_sig(p.lo, 4, unit(p.kind)),
                    format_sig(p.hi, 4, unit(p.kind))
                )?;
            }
        }
        for q in &st.quantities {
            writeln!(out, "    {}", quantity_line(q))?;
        }
        for f in &st.findings {
            writeln!(out, "    {:?}: {}", f.severity, f.message)?;
        }
    }
    Ok(())
}

/// Which model the numbers come from, in words (the header of every find report).
pub(crate) fn describe_model(m: &crate::timing::Model) -> String {
    use crate::timing::DiodeModel;
    if *m == crate::timing::Model::ideal() {
        return "ideal (textbook closed forms, no diode drop or other effect)".into();
    }
    let diode = match m.diode {
        DiodeModel::Ideal => "steering diodes ideal (no drop)".to_string(),
        DiodeModel::Fixed(v) => format!("steering diodes a fixed {v} drop"),
        DiodeModel::SmallSignal => {
            "steering diodes small-signal silicon (current-dependent)".into()
        }
    };
    let mut on = vec![diode];
    for (flag, what) in [
        (m.output_drop, "output-high drop"),
        (m.saturation, "discharge saturation"),
        (m.bias_currents, "pin bias currents (band)"),
        (m.dc_bias, "class-2 DC-bias loss (band)"),
    ] {
        if flag {
            on.push(what.to_string());
        }
    }
    format!("real parts: {}", on.join(", "))
}

/// What the worst case adds for the timer itself, in words: its own error per stage form (the
/// initial error, a typical figure or a limit, plus drift over the temperature and supply
/// excursion), the same figures `check` uses for the same parts.
pub(crate) fn describe_timer_error(stages: &[StageGoal], s: &Settings) -> String {
    let mut forms: Vec<(bool, f64)> = Vec::new();
    for g in stages {
        let one_shot = matches!(g, StageGoal::Pulse { .. });
        if !forms.iter().any(|(o, _)| *o == one_shot) {
            forms.push((one_shot, s.timer_error(g)));
        }
    }
    let parts: Vec<String> = forms
        .iter()
        .map(|&(one_shot, total)| {
            let initial = if one_shot {
                &s.family.error_one_shot
            } else {
                &s.family.error_astable
            };
            format!(
                "±{} for {} (initial ±{}, {} figure {}, plus {})",
                crate::units::percent_text(total, 3),
                if one_shot { "a one-shot" } else { "an astable" },
                crate::units::percent_text(initial.value, 3),
                initial.kind.label(),
                initial.provenance.label(),
                s.excursion.drift_text(total - initial.value),
            )
        })
        .collect();
    format!(
        "every piece at its tolerance limits, and the timer's own error {}",
        parts.join("; ")
    )
}

/// A network as `onhand check` reads it for a position, each piece with its stocked tolerance
/// in brackets: `150kΩ[±1%]+820kΩ[±1%]`, `(10nF[±5%]||2.2nF[±5%])+1nF[−20/+80%]`.
pub(crate) fn expression(parts: &[Part], p: &crate::solve::Position) -> String {
    let leaf = |i: usize| {
        let Some(pt) = p.rows.get(i).and_then(|&r| parts.get(r)) else {
            return "?".into();
        };
        let value = match pt.value {
            Value::Resistance(r) => r.to_string(),
            Value::Capacitance(c) => c.to_string(),
            Value::None => return "?".into(),
        };
        format!("{value}[{}]", pt.tolerance).replace(' ', "")
    };
    p.net.expression(&leaf)
}

/// Plain text.
pub fn text(out: &mut dyn Write, v: &View<'_>) -> io::Result<()> {
    let o = v.outcome;
    writeln!(out, "Looking for: {}", describe_goal(v.goal, v.settings))?;
    if let Goal::Stages(stages) = v.goal {
        writeln!(out, "Model: {}", describe_model(&v.settings.model))?;
        writeln!(
            out,
            "Worst case: {}",
            describe_timer_error(stages, v.settings)
        )?;
    }
    let stages = match v.goal {
        Goal::Stages(s) => s.len(),
        Goal::Value { .. } => 1,
    };
    if !o.complete {
        writeln!(
            out,
            "Search stopped at the time limit after {:.1} s. Proven so far: {}; {}",
            o.seconds,
            proven(o),
            if o.designs.is_empty() {
                "no design was found in the time given, which does NOT mean none exists \
                 (raise --time-limit)."
            } else {
                "the designs below are the best found so far, and one with smaller error \
                 (and as few pieces as that bound) may exist."
            }
        )?;
    }
    for (i, d) in o.designs.iter().enumerate() {
        writeln!(
            out,
            "\nDesign {} of {}: {} pieces, error {}{}",
            i + 1,
            o.designs.len(),
            d.pieces,
            pct(d.error),
            if d.guaranteed {
                ", worst case inside the window"
            } else {
                ""
            }
        )?;
        write_design(out, v.parts, d, stages)?;
    }
    if o.designs.is_empty() && o.complete {
        writeln!(out, "\nNothing in stock meets the target.")?;
        if !o.refused.is_empty() {
            let why: Vec<String> = o.refused.iter().map(|(c, n)| format!("{c} ×{n}")).collect();
            writeln!(
                out,
                "Candidates refused by the electrical checks (a rule that cuts a whole range of values counts once per range): {}",
                why.join(", ")
            )?;
        }
        // Electrolytics left out of a timing search by default may be what a long time needs.
        let left_out = v.settings.cap_techs.as_ref().is_some_and(|allowed| {
            v.parts.iter().any(|p| {
                p.kind == Kind::Capacitor
                    && p.available() > 0
                    && p.technology.is_electrolytic()
                    && !allowed.contains(&p.technology)
            })
        });
        if left_out && matches!(v.goal, Goal::Stages(_)) {
            writeln!(
                out,
                "The stock's electrolytic capacitors were left out (leaky, wide tolerance); allow them \
                 with --tech film,c0g,x7r,electrolytic if the timing can live with it."
            )?;
        }
        if let Some(a) = v.advice {
            match &a.closest {
                Some(d) => {
                    writeln!(
                        out,
                        "\nClosest from stock: {} pieces, error {}",
                        d.pieces,
                        pct(d.error)
                    )?;
                    write_design(out, v.parts, d, stages)?;
                }
                None => writeln!(
                    out,
                    "The target is out of this stock's reach: no design from stock that passes \
                     the electrical checks comes within {:.0} % of it{}; a different capacitor \
                     decade or circuit is needed, not a nearby part.",
                    crate::solve::suggest::FAR_OFF * 100.0,
                    a.far_off
                        .map(|e| format!(" (the closest is {} off)", pct(e)))
                        .unwrap_or_default()
                )?,
            }
            match &a.purchase {
                Some(p) => {
                    let what = format_sig(p.value, 3, unit(p.kind));
                    let how_many = if p.pieces == 1 {
                        format!("one {what}")
                    } else {
                        format!("{} × {what} (one value, {} pieces)", p.pieces, p.pieces)
                    };
                    writeln!(out, "\nBuy {how_many} ({:?}) to fix it; then:", p.series)?;
                    let mut with = v.parts.to_vec();
                    with.push(bought_row(p));
                    write_design(out, &with, &p.design, stages)?;
                }
                None => writeln!(out, "No single purchase found that fixes it.")?,
            }
        }
    }
    if o.designs.iter().any(|d| {
        d.stages
            .iter()
            .flat_map(|s| &s.findings)
            .any(|f| f.severity == crate::solve::admit::Severity::Caution)
    }) {
        writeln!(
            out,
            "\nCaution: follow local codes and licensed practice where mains or stored energy is involved."
        )?;
    }
    Ok(())
}

/// What a stopped search proved, in words.
fn proven(o: &Outcome) -> String {
    if o.no_design_below <= 1 {
        "nothing yet".to_string()
    } else {
        format!(
            "no design with fewer than {} pieces exists",
            o.no_design_below
        )
    }
}

/// The result in one word for JSON: `found`, `none` (proven: nothing meets the target) or
/// `time_limit` (stopped before anything was found or ruled out).
fn result_word(o: &Outcome) -> &'static str {
    match (o.designs.is_empty(), o.complete) {
        (false, _) => "found",
        (true, true) => "none",
        (true, false) => "time_limit",
    }
}

/// A stand-in row for a purchased part so its piece can be labelled (the design's rows index
/// the stock with the purchase appended last).
fn bought_row(p: &crate::solve::suggest::Purchase) -> Part {
    Part {
        id: -1,
        kind: p.kind,
        value: match p.kind {
            Kind::Capacitor => Value::Capacitance(
                crate::units::Farads::from_si(p.value).unwrap_or(crate::units::Farads::ZERO),
            ),
            _ => Value::Resistance(
                crate::units::Ohms::from_si(p.value).unwrap_or(crate::units::Ohms::ZERO),
            ),
        },
        tolerance: crate::units::Tolerance::symmetric_percent(if p.kind == Kind::Capacitor {
            5.0
        } else {
            1.0
        })
        .unwrap_or(crate::units::Tolerance {
            minus: crate::units::Ratio::ZERO,
            plus: crate::units::Ratio::ZERO,
        }),
        technology: crate::model::Technology::Other,
        voltage_rating: None,
        power_rating: None,
        package: String::new(),
        bin: "(to buy)".into(),
        quantity: 0,
        held: 0,
        low_stock: None,
        note: String::new(),
    }
}

#[derive(Serialize)]
struct JPiece<'a> {
    part_id: i64,
    bin: &'a str,
    value: f64,
    tolerance: f64,
    /// The dielectric or resistor technology, as `--cap` and `add --tech` read it.
    technology: Option<&'static str>,
    /// The voltage rating in volts, when the stock records one.
    voltage_rating: Option<f64>,
}

#[derive(Serialize)]
struct JPosition<'a> {
    stage: usize,
    name: &'a str,
    kind: Kind,
    network: String,
    /// How the pieces are wired, in words ("2 in parallel").
    wiring: String,
    /// The network as `onhand check` reads it for this position.
    expression: String,
    value: f64,
    worst_lo: f64,
    worst_hi: f64,
    pieces: Vec<JPiece<'a>>,
}

#[derive(Serialize)]
pub(crate) struct JDesign<'a> {
    rank: usize,
    pieces: usize,
    error: f64,
    tolerance_sum: f64,
    scarcity: f64,
    guaranteed: bool,
    positions: Vec<JPosition<'a>>,
    stages: &'a [crate::solve::StageReport],
}

pub(crate) fn jdesign<'a>(parts: &'a [Part], rank: usize, d: &'a Design) -> JDesign<'a> {
    JDesign {
        rank,
        pieces: d.pieces,
        error: d.error,
        tolerance_sum: d.tolerance_sum,
        scarcity: d.scarcity,
        guaranteed: d.guaranteed,
        positions: d
            .positions
            .iter()
            .map(|p| JPosition {
                stage: p.stage,
                name: p.name,
                kind: p.kind,
                network: p.net.describe(&|i| {
                    p.rows
                        .get(i)
                        .and_then(|&r| parts.get(r))
                        .map(part_label)
                        .unwrap_or_else(|| "(to buy)".into())
                }),
                wiring: p.net.wiring(),
                expression: expression(parts, p),
                value: p.value,
                worst_lo: p.lo,
                worst_hi: p.hi,
                pieces: p
                    .rows
                    .iter()
                    .map(|&r| match parts.get(r) {
                        Some(pt) => JPiece {
                            part_id: pt.id,
                            bin: &pt.bin,
                            value: si(pt),
                            tolerance: pt.tolerance.widest().si(),
                            technology: Some(pt.technology.as_str()),
                            voltage_rating: pt.voltage_rating.map(|v| v.si()),
                        },
                        None => JPiece {
                            part_id: -1,
                            bin: "(to buy)",
                            value: f64::NAN,
                            tolerance: f64::NAN,
                            technology: None,
                            voltage_rating: None,
                        },
                    })
                    .collect(),
            })
            .collect(),
        stages: &d.stages,
    }
}

/// JSON with the same content as the text.
pub fn json(out: &mut dyn Write, v: &View<'_>) -> io::Result<()> {
    #[derive(Serialize)]
    struct JPurchase<'a> {
        kind: Kind,
        value: f64,
        series: String,
        pieces: usize,
        design: JDesign<'a>,
    }
    #[derive(Serialize)]
    struct J<'a> {
        schema: u32,
        goal: &'a Goal,
        tolerance: f64,
        family: &'a str,
        model: &'a crate::timing::Model,
        model_text: String,
        /// °C either side of 25 °C the timer's drift is counted over (as `check --temp-span`).
        temp_span: f64,
        /// Volts either way the timer's supply drift is counted over.
        supply_swing: f64,
        vcc: f64,
        max_pieces: usize,
        guarantee: bool,
        found: bool,
        result: &'static str,
        complete: bool,
        stopped_at_time_limit: bool,
        no_design_below: usize,
        networks_seen: u64,
        refused: &'a [(String, u64)],
        designs: Vec<JDesign<'a>>,
        closest: Option<JDesign<'a>>,
        closest_too_far_off: Option<f64>,
        purchase: Option<JPurchase<'a>>,
    }
    let o = v.outcome;
    let j = J {
        schema: crate::report::style::JSON_SCHEMA,
        goal: v.goal,
        tolerance: v.settings.tol,
        family: v.settings.family.name,
        model: &v.settings.model,
        model_text: describe_model(&v.settings.model),
        temp_span: v.settings.excursion.temp_span_c,
        supply_swing: v.settings.excursion.supply_swing.si(),
        vcc: v.settings.conditions.vcc.si(),
        max_pieces: v.settings.max_pieces,
        guarantee: v.settings.guarantee,
        found: !o.designs.is_empty(),
        result: result_word(o),
        complete: o.complete,
        stopped_at_time_limit: !o.complete,
        no_design_below: o.no_design_below,
        networks_seen: o.networks_seen,
        refused: &o.refused,
        designs: o
            .designs
            .iter()
            .enumerate()
            .map(|(i, d)| jdesign(v.parts, i + 1, d))
            .collect(),
        closest: v
            .advice
            .and_then(|a| a.closest.as_ref())
            .map(|d| jdesign(v.parts, 0, d)),
        closest_too_far_off: v.advice.and_then(|a| a.far_off),
        purchase: v
            .advice
            .and_then(|a| a.purchase.as_ref())
            .map(|p| JPurchase {
                kind: p.kind,
                value: p.value,
                series: format!("{:?}", p.series),
                pieces: p.pieces,
                design: jdesign(v.parts, 0, &p.design),
            }),
    };
    // Serialise first, so a closed pipe reaches the caller as the io error it is.
    let text = serde_json::to_string_pretty(&j).map_err(io::Error::other)?;
    writeln!(out, "{text}")
}
