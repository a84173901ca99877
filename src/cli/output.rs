//! The files `check` and `find` write beside their report: SVG pictures (the waveform of every
//! stage, the Monte Carlo histogram of the period or pulse width) into a folder, and the SPICE
//! netlist of a design with every piece of every network. Owns the shared stage type the two
//! commands build ([`Built`]), where each file goes, and the list of files written; the pictures
//! and the netlist text themselves are rendered by `report`.

use super::FileWriter;
use crate::report::netlist;
use crate::report::pictures::{Histogram, Waveform};
use crate::timing::tolerance::Samples;
use crate::timing::{
    CapFacts, Circuit, Form, MonteCarlo, Position, Quantity, Spread, Stage, StageModel, Target,
    WorstCase,
};
use crate::timing::{Family, Model};
use crate::units::{Farads, Ohms, Seconds};
use anyhow::{Context as _, anyhow, bail};
use serde::Serialize;
use std::path::Path;

/// How the stages of a design are laid out.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum Layout {
    /// One stage.
    Single,
    /// A pace astable triggering a width monostable.
    Pair,
    /// Two independent halves of a dual package.
    Dual,
}

/// One stage as the checks see it (`stage`, nominal values) and as the tolerance analysis sees
/// it (`model`, every piece with its tolerance); `label` names it in a two-stage design.
pub(super) struct Built {
    pub(super) label: &'static str,
    pub(super) stage: Stage,
    pub(super) model: StageModel,
}

/// The stage of a model at its nominal values.
pub(super) fn stage_of(m: &StageModel, cap: Option<CapFacts>) -> anyhow::Result<Stage> {
    let ohms = |v: f64| Ohms::from_si(v).ok_or_else(|| anyhow!("resistance {v} out of range"));
    Ok(Stage {
        form: m.form,
        r1: ohms(m.r1.nominal())?,
        r2: m.r2.as_ref().map(|p| ohms(p.nominal())).transpose()?,
        c: Farads::from_si(m.c.nominal()).ok_or_else(|| anyhow!("capacitance out of range"))?,
        cap,
        conditions: m.conditions,
        steering: m.steering,
    })
}

/// A file the command wrote.
#[derive(Debug, Clone, Serialize)]
pub(super) struct FileReport {
    pub(super) kind: &'static str,
    pub(super) path: String,
}

/// The netlist written, and which of the tool's predictions each `.meas` result is.
#[derive(Debug, Clone, Serialize)]
pub(super) struct NetlistReport {
    pub(super) path: String,
    pub(super) measures: Vec<MeasureReport>,
}

/// One `.meas` result: its name, which analysis (stage) it belongs to and which quantity it is.
#[derive(Debug, Clone, Serialize)]
pub(super) struct MeasureReport {
    pub(super) name: String,
    pub(super) analysis: usize,
    pub(super) quantity: Quantity,
}

/// The position's name without the `A.`/`B.` prefix of a dual package.
pub(super) fn short_name(name: &str) -> &str {
    name.rsplit('.').next().unwrap_or(name)
}

/// A position as the netlist writes it: its real pieces.
pub(super) fn network_of(p: &Position) -> netlist::Network {
    netlist::Network {
        name: short_name(&p.name).to_string(),
        net: p.net.clone(),
        values: p.pieces.iter().map(|x| x.value).collect(),
    }
}

/// A stage as the netlist writes it.
pub(super) fn stage_net(b: &Built) -> netlist::StageNet {
    let m = &b.model;
    netlist::StageNet {
        form: m.form,
        steering: m.steering,
        r1: network_of(&m.r1),
        r2: m.r2.as_ref().map(network_of),
        c: network_of(&m.c),
        conditions: m.conditions,
    }
}

/// The `.meas` results of a single stage's netlist, as the analysis' quantities.
fn single_measures(form: Form, tag: &str, analysis: usize) -> Vec<MeasureReport> {
    let list: &[(&str, Quantity)] = if form == Form::Monostable {
        &[(netlist::MEAS_WIDTH, Quantity::High)]
    } else {
        &[
            (netlist::MEAS_HIGH, Quantity::High),
            (netlist::MEAS_LOW, Quantity::Low),
            (netlist::MEAS_PERIOD, Quantity::Period),
        ]
    };
    list.iter()
        .map(|&(name, quantity)| MeasureReport {
            name: netlist::meas_name(tag, name),
            analysis,
            quantity,
        })
        .collect()
}

/// Write the SPICE netlist of `stages` laid out as `layout` to `path` (folders created) through
/// the one safe writer.
/// The parts in it are the ones the report's numbers came from: `model` (real or textbook) and
/// the family's figures.
pub(super) fn write_netlist(
    stages: &[Built],
    layout: Layout,
    physics: (&Model, &Family),
    path: &Path,
    writer: &FileWriter,
) -> anyhow::Result<NetlistReport> {
    let parts = netlist::SpiceParts::of(physics.0, physics.1);
    let (text, measures) = match (layout, stages) {
        (Layout::Pair, [a, b]) => (
            netlist::pair_with(&stage_net(a), &stage_net(b), &parts),
            [
                (netlist::MEAS_WIDTH, Quantity::High),
                (netlist::MEAS_LOW, Quantity::Low),
                (netlist::MEAS_PERIOD, Quantity::Period),
            ]
            .iter()
            .map(|&(name, quantity)| MeasureReport {
                name: name.to_string(),
                analysis: 0,
                quantity,
            })
            .collect(),
        ),
        (Layout::Dual, [a, b]) => (netlist::dual_with(&stage_net(a), &stage_net(b), &parts), {
            let mut m = single_measures(a.model.form, "a", 0);
            m.extend(single_measures(b.model.form, "b", 1));
            m
        }),
        (_, [one]) => (
            netlist::stage_with(&stage_net(one), &parts),
            single_measures(one.model.form, "", 0),
        ),
        _ => bail!("unexpected number of stages"),
    };
    let text = text.context("writing the netlist")?;
    if let Some(parent) = path.parent().filter(|p| !p.as_os_str().is_empty()) {
        writer.folder(parent)?;
    }
    writer.write(path, text.as_bytes())?;
    Ok(NetlistReport {
        path: path.display().to_string(),
        measures,
    })
}

/// The waveform of one stage at its nominal values, with the times the evaluator gives under
/// `model` (so a picture never disagrees with the report beside it).
pub(super) fn waveform_of(b: &Built, family: &Family, model: &Model) -> anyhow::Result<Waveform> {
    Ok(Waveform::of_stage(&b.stage, family, model)?)
}

/// One analysed circuit: label, description, the circuit, its stages.
pub(super) type CircuitRow<'a> = (String, String, Circuit, Vec<&'a Built>);

/// What the `--svg` pictures are drawn from.
pub(super) struct Pictures<'a> {
    /// The folder the pictures go to (created if missing).
    pub(super) dir: &'a Path,
    /// How the stages are laid out.
    pub(super) layout: Layout,
    /// The target, drawn as a window on the histogram.
    pub(super) target: Option<Target>,
    /// The circuits analysed.
    pub(super) circuits: &'a [CircuitRow<'a>],
    /// The timing model and family the report's numbers came from.
    pub(super) physics: (&'a Model, &'a Family),
    /// Per circuit: its worst case and Monte Carlo summary.
    pub(super) analysed: Vec<Analysed<'a>>,
    /// Per circuit: the Monte Carlo samples.
    pub(super) samples: &'a [Samples],
}

/// What the analysis of one circuit gave, for its histogram.
#[derive(Debug, Clone, Copy)]
pub(super) struct Analysed<'a> {
    /// The exact worst case, if it was computed.
    pub(super) worst_case: Option<&'a WorstCase>,
    /// The Monte Carlo summary, if samples were drawn.
    pub(super) monte_carlo: Option<&'a MonteCarlo>,
}

/// A file-name piece from a label: `timer A` → `a`, `pace` → `pace`.
fn slug(label: &str) -> String {
    label
        .trim_start_matches("timer ")
        .to_ascii_lowercase()
        .replace(' ', "-")
}

impl Pictures<'_> {
    fn save(
        &self,
        writer: &FileWriter,
        name: &str,
        svg: &str,
        kind: &'static str,
        files: &mut Vec<FileReport>,
    ) -> anyhow::Result<()> {
        let path = self.dir.join(name);
        writer.write(&path, svg.as_bytes())?;
        files.push(FileReport {
            kind,
            path: path.display().to_string(),
        });
        Ok(())
    }

    /// Write every picture through `writer`, listing each file in `files`; `notes` say what was
    /// left out.
    pub(super) fn write(
        &self,
        writer: &FileWriter,
        files: &mut Vec<FileReport>,
        notes: &mut Vec<String>,
    ) -> anyhow::Result<()> {
        writer.folder(self.dir)?;
        for (i, (label, _, _, built)) in self.circuits.iter().enumerate() {
            let prefix = if label.is_empty() {
                String::new()
            } else {
                format!("-{}", slug(label))
            };
            for b in built {
                let name = if built.len() > 1 || !b.label.is_empty() {
                    format!("waveform-{}.svg", slug(b.label))
                } else {
                    "waveform.svg".to_string()
                };
                let w = waveform_of(b, self.physics.1, self.physics.0)
                    .with_context(|| format!("drawing {name}"))?;
                self.save(writer, &name, &w.to_svg(), "waveform", files)?;
            }
            let Some(a) = self.analysed.get(i) else {
                continue;
            };
            let drawn = self.samples.get(i).map_or(&[][..], Vec::as_slice);
            if drawn.is_empty() {
                notes.push("no Monte Carlo samples (--samples 0): no histogram drawn".into());
                continue;
            }
            let Some(wc) = a.worst_case else {
                notes.push("no exact worst case (too many pieces): no histogram drawn".into());
                continue;
            };
            let one_shot = built.len() == 1
                && built
                    .first()
                    .is_some_and(|b| b.stage.form == Form::Monostable);
            let mut wanted = if one_shot {
                vec![Quantity::High]
            } else if self.layout == Layout::Pair {
                vec![Quantity::Period, Quantity::High]
            } else {
                vec![Quantity::Period]
            };
            if let Some(t) = self.target
                && t.quantity != Quantity::Frequency
                && !wanted.contains(&t.quantity)
            {
                wanted.push(t.quantity);
            }
            for q in wanted {
                let (Some(col), Some(iv)) = (
                    drawn.iter().find(|(x, _)| *x == q).map(|(_, c)| c),
                    wc.get(q),
                ) else {
                    continue;
                };
                let what = match q {
                    Quantity::High if one_shot || self.layout == Layout::Pair => "pulse width",
                    other => other.label(),
                };
                let title = format!(
                    "Monte Carlo: {what}{}, {} samples (seed {}, {})",
                    if label.is_empty() {
                        String::new()
                    } else {
                        format!(" of {label}")
                    },
                    col.len(),
                    a.monte_carlo.map_or(0, |m| m.seed),
                    match a.monte_carlo.map(|m| m.spread) {
                        Some(Spread::Normal) => "normal",
                        _ => "uniform",
                    }
                );
                let window = self.target.and_then(|t| {
                    let (lo, hi) = t.band();
                    match (t.quantity, q) {
                        (tq, hq) if tq == hq => Some((lo, hi)),
                        (Quantity::Frequency, Quantity::Period) if lo > 0.0 => {
                            Some((1.0 / hi, 1.0 / lo))
                        }
                        _ => None,
                    }
                });
                let h = if q == Quantity::Duty {
                    let mut h = Histogram::percent(&title, what, col, iv.nominal, (iv.min, iv.max));
                    if let Some((lo, hi)) = window {
                        h = h.with_target_percent(lo, hi);
                    }
                    h
                } else {
                    let secs = |v: f64| Seconds::from_si(v).unwrap_or_default();
                    let pts: Vec<Seconds> =
                        col.iter().filter_map(|&v| Seconds::from_si(v)).collect();
                    let mut h = Histogram::new(
                        &title,
                        what,
                        &pts,
                        secs(iv.nominal),
                        (secs(iv.min), secs(iv.max)),
                    );
                    if let Some((lo, hi)) = window {
                        h = h.with_target(secs(lo), secs(hi));
                    }
                    h
                };
                let name = format!("histogram{prefix}-{}.svg", what.replace(' ', "-"));
                self.save(writer, &name, &h.to_svg(), "histogram", files)?;
            }
        }
        Ok(())
    }
}
