//! `plan --sheet DIR`: the plan's build sheets (one per design variant of each stage) and its
//! pick list, rendered by `report::sheet` and written through the one safe file writer.

use super::unit_span;
use crate::cli::Context;
use crate::model::{Kind, Part};
use crate::report::find::{part_label, quantity_line};
use crate::report::pictures::Waveform;
use crate::report::schematic::{self, Circuit, StageParts};
use crate::report::sheet::{self, PickLine, SheetPiece, SheetPosition, Variant};
use crate::solve::plan::{Buildable, PlanStage};
use crate::solve::{Design, Goal};
use crate::timing::Form;
use crate::units::{Farads, Ohms, format_sig};
use anyhow::{Context as _, Result};
use std::path::{Path, PathBuf};

fn unit(kind: Kind) -> &'static str {
    if kind == Kind::Capacitor { "F" } else { "Ω" }
}

fn circuit(form: Form) -> Circuit {
    match form {
        Form::Monostable => Circuit::Monostable,
        Form::Astable => Circuit::Astable,
        Form::Steered => Circuit::Steered,
        Form::Square => Circuit::Square,
    }
}

/// Where a part's pieces come from, in words ("bin C7", or "bins C7, Z12 — see the pick list").
type BinsOf<'f> = dyn Fn(&Part) -> String + 'f;

/// The positions of stage `i` of a design as sheet rows.
fn positions(parts: &[Part], d: &Design, i: usize, bins: &BinsOf<'_>) -> Vec<SheetPosition> {
    d.positions
        .iter()
        .filter(|p| p.stage == i)
        .map(|p| {
            let label = |k: usize| {
                p.rows
                    .get(k)
                    .and_then(|&r| parts.get(r))
                    .map(part_label)
                    .unwrap_or_default()
            };
            let u = unit(p.kind);
            SheetPosition {
                name: p.name.to_string(),
                network: p.net.describe(&label),
                wiring: p.net.wiring(),
                value: format!(
                    "{} (worst case {} … {})",
                    format_sig(p.value, 4, u),
                    format_sig(p.lo, 4, u),
                    format_sig(p.hi, 4, u)
                ),
                pieces: p
                    .rows
                    .iter()
                    .filter_map(|&r| parts.get(r))
                    .map(|pt| SheetPiece {
                        part: pt.label(),
                        bin: bins(pt),
                    })
                    .collect(),
            }
        })
        .collect()
}

/// The waveform of stage `i` at its nominal values, when the form has one.
fn waveform(d: &Design, i: usize, st: &PlanStage) -> Option<String> {
    let form = d.stages.get(i)?.form?;
    let vals: Vec<f64> = d
        .positions
        .iter()
        .filter(|p| p.stage == i)
        .map(|p| p.value)
        .collect();
    let cond = &st.settings.conditions;
    let w = match (form, vals.as_slice()) {
        (Form::Monostable, [r, c]) => {
            Waveform::monostable(Ohms::from_si(*r)?, Farads::from_si(*c)?, cond)
        }
        (Form::Square, [r, c]) => Waveform::square(Ohms::from_si(*r)?, Farads::from_si(*c)?, cond),
        (Form::Astable, [r1, r2, c]) => Waveform::astable(
            Ohms::from_si(*r1)?,
            Ohms::from_si(*r2)?,
            Farads::from_si(*c)?,
            cond,
        ),
        (Form::Steered, [r1, r2, c]) => Waveform::steered(
            Ohms::from_si(*r1)?,
            Ohms::from_si(*r2)?,
            Farads::from_si(*c)?,
            cond,
        ),
        _ => return None,
    };
    w.ok().map(|w| w.to_svg())
}

/// The text schematic of a design (one timer, or two in the dual package, A triggering B).
fn schematic_of(parts: &[Part], d: &Design, supply: &str) -> Option<String> {
    let stage_parts = |i: usize| -> Option<StageParts> {
        Some(StageParts {
            circuit: circuit(d.stages.get(i)?.form?),
            parts: positions(parts, d, i, &Part::place)
                .into_iter()
                .map(|p| (p.name, p.network))
                .collect(),
            control: None,
        })
    };
    match d.stages.len() {
        1 => Some(schematic::single(&stage_parts(0)?, supply)),
        2 => Some(schematic::dual(
            &stage_parts(0)?,
            &stage_parts(1)?,
            supply,
            true,
        )),
        _ => None,
    }
}

/// The build sheet of one design `d` of stage `st`, for `units` ("units 1–25"), variant `k` of
/// `total`.
#[allow(clippy::too_many_arguments)]
fn variant_of(
    plan_name: &str,
    stage_name: &str,
    conditions: &str,
    supply: &str,
    st: &PlanStage,
    parts: &[Part],
    d: &Design,
    units: String,
    variant: (usize, usize),
    bins: &BinsOf<'_>,
) -> Variant {
    let n_stages = d.stages.len();
    let mut expected = Vec::new();
    let mut notes = Vec::new();
    let mut all_positions = Vec::new();
    let mut waveforms = Vec::new();
    for (i, rep) in d.stages.iter().enumerate() {
        let tag = if n_stages > 1 {
            format!("timer {}: ", ["A", "B"].get(i).copied().unwrap_or("?"))
        } else {
            String::new()
        };
        expected.extend(
            rep.quantities
                .iter()
                .map(|q| format!("{tag}{}", quantity_line(q))),
        );
        notes.extend(rep.findings.iter().map(|f| format!("{tag}{}", f.message)));
        all_positions.extend(positions(parts, d, i, bins).into_iter().map(|mut p| {
            if n_stages > 1 {
                p.name = format!("{tag}{}", p.name);
            }
            p
        }));
        if matches!(st.goal, Goal::Stages(_)) {
            waveforms.extend(waveform(d, i, st));
        }
    }
    Variant {
        plan: plan_name.to_string(),
        stage: stage_name.to_string(),
        goal: crate::report::find::describe_goal(&st.goal, &st.settings),
        units,
        variant,
        conditions: conditions.to_string(),
        positions: all_positions,
        expected,
        schematic: matches!(st.goal, Goal::Stages(_))
            .then(|| schematic_of(parts, d, supply))
            .flatten(),
        waveforms,
        notes,
    }
}

/// Render and write every sheet and the pick list; returns the files written.
#[allow(clippy::too_many_arguments)]
pub(super) fn write_sheets(
    ctx: &Context,
    dir: &Path,
    plan_name: &str,
    conditions: &str,
    supply: &str,
    stages: &[PlanStage],
    parts: &[Part],
    a: &Buildable,
) -> Result<Vec<PathBuf>> {
    std::fs::create_dir_all(dir).with_context(|| format!("creating folder {}", dir.display()))?;
    let files = ctx.files();
    let base = sheet::slug(plan_name);
    let mut written = Vec::new();
    // The plan takes a part's pieces from every row of its class (fullest bin first): a sheet
    // names all of those bins, not only the one the design is shown by.
    let mut bins_by_part: std::collections::BTreeMap<String, Vec<String>> = Default::default();
    for &(row, _) in &a.takes {
        let p = &parts[row];
        bins_by_part.entry(p.label()).or_default().push(p.place());
    }
    let bins = |p: &Part| -> String {
        match bins_by_part.get(&p.label()) {
            Some(list) if list.len() > 4 => format!(
                "{} and {} more bins (see the pick list)",
                list[..4].join(", "),
                list.len() - 4
            ),
            Some(list) if list.len() > 1 => format!("{} (see the pick list)", list.join(", ")),
            _ => p.place(),
        }
    };
    for (share, st) in a.stages.iter().zip(stages) {
        let mut first = 1;
        let total = share.uses.len();
        for (k, (d, n)) in share.uses.iter().enumerate() {
            let v = variant_of(
                plan_name,
                &share.name,
                conditions,
                supply,
                st,
                parts,
                d,
                unit_span(first, *n),
                (k + 1, total),
                &bins,
            );
            let path = dir.join(format!(
                "{base}-{}-design-{}.html",
                sheet::slug(&share.name),
                k + 1
            ));
            files.write(&path, sheet::variant_html(&v).as_bytes())?;
            written.push(path);
            first += n;
        }
    }
    let lines: Vec<PickLine> = a
        .takes
        .iter()
        .map(|&(row, pieces)| {
            let p = &parts[row];
            let label = p.label();
            let used_by: Vec<String> = a
                .stages
                .iter()
                .filter(|s| {
                    s.uses.iter().any(|(d, _)| {
                        d.positions
                            .iter()
                            .flat_map(|q| q.rows.iter())
                            .any(|&r| parts.get(r).is_some_and(|x| x.label() == label))
                    })
                })
                .map(|s| s.name.clone())
                .collect();
            PickLine {
                bin: if p.bin.is_empty() {
                    format!("(no bin) part #{}", p.id)
                } else {
                    p.bin.clone()
                },
                part: label,
                pieces,
                free: p.available(),
                used_by: used_by.join(", "),
            }
        })
        .collect();
    let path = dir.join(format!("{base}-pick-list.html"));
    files.write(
        &path,
        sheet::pick_list_html(plan_name, a.built, &lines).as_bytes(),
    )?;
    written.push(path);
    Ok(written)
}

/// `find --sheet DIR`: the build sheet of the best design found, and its pick list (one unit).
pub(crate) fn write_find_sheet(
    ctx: &Context,
    dir: &Path,
    goal: &Goal,
    settings: &crate::solve::Settings,
    parts: &[Part],
    d: &Design,
) -> Result<Vec<PathBuf>> {
    std::fs::create_dir_all(dir).with_context(|| format!("creating folder {}", dir.display()))?;
    let st = PlanStage {
        name: "design".into(),
        goal: goal.clone(),
        settings: settings.clone(),
    };
    let supply = settings.conditions.vcc.to_string();
    let conditions = format!("{} family at {supply}", settings.family.name);
    let v = variant_of(
        "found design",
        "design",
        &conditions,
        &supply,
        &st,
        parts,
        d,
        "one unit".into(),
        (1, 1),
        &Part::place,
    );
    let files = ctx.files();
    let sheet_path = dir.join("found-design.html");
    files.write(&sheet_path, sheet::variant_html(&v).as_bytes())?;
    let mut rows: Vec<usize> = d
        .positions
        .iter()
        .flat_map(|p| p.rows.iter().copied())
        .collect();
    rows.sort_unstable();
    let mut lines: Vec<PickLine> = Vec::new();
    for r in rows {
        let Some(p) = parts.get(r) else { continue };
        match lines.last_mut() {
            Some(l) if l.bin == p.place() && l.part == p.label() => l.pieces += 1,
            _ => lines.push(PickLine {
                bin: p.place(),
                part: p.label(),
                pieces: 1,
                free: p.available(),
                used_by: "design".into(),
            }),
        }
    }
    let pick_path = dir.join("found-design-pick-list.html");
    files.write(
        &pick_path,
        sheet::pick_list_html("found design", 1, &lines).as_bytes(),
    )?;
    Ok(vec![sheet_path, pick_path])
}
