//! The plan report: how many units the stock builds, with what proof, each stage's designs
//! unit by unit, what is taken and what is short — as text and as JSON. Pure rendering of
//! `solve::plan_file::plan_answer`'s answer; `onhand plan`, `onhand reorder` and the web plan page
//! use its wording.

use crate::model::Part;
use crate::model::plan::PlanSpec;
use crate::report::find::{describe_goal, jdesign, write_design};
use crate::solve::allocate::Proof;
use crate::solve::plan::{Bound, Buildable, Cover, Mix, PlanStage, StageShare};
use serde::Serialize;
use std::io::{self, Write};

/// What the plan report shows.
pub struct PlanView<'a> {
    /// The plan file.
    pub spec: &'a PlanSpec,
    /// Its stages as searches.
    pub stages: &'a [PlanStage],
    /// The stock the plan was made from.
    pub parts: &'a [Part],
    /// The answer.
    pub answer: &'a Buildable,
}

/// The plan as one JSON object (`schema`, counts, proof, cover, stages with their designs,
/// takes, shortfalls); the caller adds what it did besides (`held`, `sheets`).
pub fn plan_json(v: &PlanView<'_>) -> serde_json::Value {
    let a = v.answer;
    #[derive(Serialize)]
    struct JUse<'a> {
        units: u32,
        first_unit: u32,
        design: crate::report::find::JDesign<'a>,
    }
    #[derive(Serialize)]
    struct JStage<'a> {
        name: &'a str,
        goal: String,
        candidates: usize,
        designs: Vec<JUse<'a>>,
    }
    serde_json::json!({
        "schema": crate::report::style::JSON_SCHEMA,
        "plan": v.spec.name,
        "wanted": a.wanted,
        "built": a.built,
        "proof": a.proof,
        "optimal_over": if a.cover.iter().all(|c| c.complete) { "every design" } else { "the candidates offered" },
        "cover": a.cover,
        "units_bound_by": a.units_bound_by,
        "wiring_warnings": wiring_clashes(v.parts, &a.stages),
        "mix": a.mix,
        "mixed_built": a.mixed_built,
        "classes": a.classes,
        "integer_program": a.size,
        "pieces": a.pieces,
        "stages": a.stages.iter().zip(v.stages).map(|(sh, st)| {
            let mut first = 1;
            JStage {
                name: &sh.name,
                goal: describe_goal(&st.goal, &st.settings),
                candidates: sh.candidates,
                designs: sh.uses.iter().enumerate().map(|(i, (d, n))| {
                    let u = JUse { units: *n, first_unit: first, design: jdesign(v.parts, i + 1, d) };
                    first += n;
                    u
                }).collect(),
            }
        }).collect::<Vec<_>>(),
        "takes": a.takes.iter().map(|&(row, n)| serde_json::json!({
            "part_id": v.parts[row].id, "part": v.parts[row].label(), "bin": v.parts[row].bin,
            "pieces": n, "free": v.parts[row].available(),
        })).collect::<Vec<_>>(),
        "impossible": a.impossible,
        "short": a.short.iter().map(|s| serde_json::json!({
            "stage": s.stage, "units": s.units, "part_id": v.parts[s.row].id, "part": v.parts[s.row].label(),
            "bin": v.parts[s.row].bin, "need": s.need, "left": s.left,
        })).collect::<Vec<_>>(),
    })
}

/// "units 1–12" or "unit 13".
pub fn unit_span(first: u32, n: u32) -> String {
    if n == 1 {
        format!("unit {first}")
    } else {
        format!("units {first}–{}", first + n - 1)
    }
}

/// What the proof covers: the whole design space, or the candidate lists offered (and which
/// stages had more designs than were offered). `bound` says why the unit count is the most
/// possible even so, when it is; `rest` names what is only proven over the candidates
/// ("fewest pieces", "least cost").
pub fn claim_text(p: Proof, cover: &[Cover], bound: Option<&Bound>, rest: &str) -> String {
    let base = proof_text(p);
    if p != Proof::Optimal {
        return base.to_string();
    }
    let cut: Vec<&Cover> = cover.iter().filter(|c| !c.complete).collect();
    if cut.is_empty() {
        return format!("{base} over every design that meets the targets");
    }
    let offered: Vec<String> = cover.iter().map(|c| c.offered.to_string()).collect();
    let names: Vec<String> = cut.iter().map(|c| format!("{:?}", c.stage)).collect();
    let most = cover.iter().map(|c| c.offered).max().unwrap_or(0);
    let stopped: Vec<String> = cut
        .iter()
        .filter(|c| c.timed_out)
        .map(|c| format!("{:?}", c.stage))
        .collect();
    let mut left_out = format!(
        "{} {} more designs that were left out — `--candidates {}` offers more",
        names.join(", "),
        if cut.len() == 1 { "has" } else { "have" },
        most.saturating_mul(2).max(1)
    );
    if !stopped.is_empty() {
        left_out += &format!(
            " (the search for {} stopped at its time limit)",
            stopped.join(", ")
        );
    }
    let offered = offered.join(", ");
    match bound {
        Some(Bound::EveryUnit) => format!(
            "every unit is built; {rest} proven only over the {offered} candidate designs offered per stage: {left_out}"
        ),
        Some(Bound::Stage(s)) => format!(
            "no plan can build more: stage {s:?} alone cannot, from the whole stock, over every design it has; {rest} proven only over the {offered} candidate designs offered per stage: {left_out}"
        ),
        None => format!(
            "{base} only over the {offered} candidate designs offered per stage, so a better plan may exist: {left_out}"
        ),
    }
}

/// Positions of the plan that use the same parts wired in different ways (series in one place,
/// parallel in another), as loud warnings: a builder following one unit's list may wire
/// another unit's parts the wrong way.
pub fn wiring_clashes(parts: &[Part], shares: &[StageShare]) -> Vec<String> {
    use std::collections::BTreeMap;
    // parts (by label, sorted) → [(network in words, where)]
    let mut seen: BTreeMap<Vec<String>, Vec<(String, String)>> = BTreeMap::new();
    for share in shares {
        let mut first = 1;
        for (d, n) in &share.uses {
            for p in d.positions.iter().filter(|p| p.rows.len() > 1) {
                let label = |i: usize| {
                    p.rows
                        .get(i)
                        .and_then(|&r| parts.get(r))
                        .map(Part::label)
                        .unwrap_or_default()
                };
                let mut key: Vec<String> = (0..p.rows.len()).map(label).collect();
                key.sort();
                let how = p.net.describe(&label);
                let at = format!("stage {:?} {} {}", share.name, unit_span(first, *n), p.name);
                let list = seen.entry(key).or_default();
                if !list.iter().any(|(h, _)| *h == how) {
                    list.push((how, at));
                }
            }
            first += n;
        }
    }
    seen.into_iter()
        .filter(|(_, ways)| ways.len() > 1)
        .map(|(key, ways)| {
            let ways: Vec<String> = ways
                .iter()
                .map(|(how, at)| format!("{at}: {how}"))
                .collect();
            format!(
                "CAUTION: the same parts ({}) are wired {} different ways in this plan — {}. Check each unit against its own list before soldering.",
                key.join(", "),
                ways.len(),
                ways.join("; ")
            )
        })
        .collect()
}

pub fn proof_text(p: Proof) -> &'static str {
    match p {
        Proof::Optimal => "proven optimal",
        Proof::TimeLimited => {
            "a time limit stopped the integer program: feasible, not proven optimal"
        }
    }
}

/// The plan as text.
pub fn write_plan(out: &mut dyn Write, v: &PlanView<'_>) -> io::Result<()> {
    let (spec, stages, parts, a) = (v.spec, v.stages, v.parts, v.answer);
    writeln!(
        out,
        "Plan {:?}: {} unit{} of {} stage{}, {} timer at {}",
        spec.name,
        spec.units,
        if spec.units == 1 { "" } else { "s" },
        stages.len(),
        if stages.len() == 1 { "" } else { "s" },
        spec.family,
        spec.supply
    )?;
    writeln!(out)?;
    if let Mix::Kits { variants } = a.mix {
        let how = if variants == 1 {
            "identical kits: one design per stage for every unit".to_string()
        } else {
            format!("kits with at most {variants} designs per stage across all units")
        };
        writeln!(out, "Planned as {how}.")?;
    }
    writeln!(
        out,
        "The stock can build {} of {} units ({}; integer program of {} variables and {} constraints).",
        a.built,
        a.wanted,
        claim_text(
            a.proof,
            &a.cover,
            a.units_bound_by.as_ref(),
            "fewest pieces"
        ),
        a.size.variables,
        a.size.constraints
    )?;
    if let Some(mixed) = a.mixed_built {
        let cmp = match mixed.cmp(&a.built) {
            std::cmp::Ordering::Greater => format!(
                "{} more than these kits; drop --identical/--variants to build them",
                mixed - a.built
            ),
            _ => "no more than these kits".to_string(),
        };
        writeln!(
            out,
            "A mixed plan (any design for any unit) from the same candidates builds {mixed} of {} units: {cmp}.",
            a.wanted
        )?;
    }
    for (share, st) in a.stages.iter().zip(stages) {
        writeln!(out)?;
        writeln!(
            out,
            "Stage {:?} — {} ({} candidate designs)",
            share.name,
            describe_goal(&st.goal, &st.settings),
            share.candidates
        )?;
        if share.uses.is_empty() {
            writeln!(out, "  no unit can be built with this stage")?;
        }
        let mut first = 1;
        for (d, n) in &share.uses {
            writeln!(out, "  {}:", unit_span(first, *n))?;
            write_design(out, parts, d, st.goal.stage_count())?;
            first += n;
        }
    }
    let clashes = wiring_clashes(parts, &a.stages);
    if !clashes.is_empty() {
        writeln!(out)?;
        for c in &clashes {
            writeln!(out, "{c}")?;
        }
    }
    if !a.takes.is_empty() {
        writeln!(out)?;
        writeln!(out, "Takes from stock ({} pieces):", a.pieces)?;
        for &(row, n) in &a.takes {
            let p = &parts[row];
            writeln!(
                out,
                "  {n:>4} × {:<32} {} ({} free)",
                p.label(),
                p.place(),
                p.available()
            )?;
        }
    }
    if !a.impossible.is_empty() {
        writeln!(out)?;
        writeln!(
            out,
            "Nothing in stock can meet these stages: {}. `onhand reorder` says what to buy.",
            a.impossible.join(", ")
        )?;
    }
    if !a.short.is_empty() {
        writeln!(out)?;
        let rest = a.wanted - a.built;
        writeln!(
            out,
            "Short for the other {rest} unit{}:",
            if rest == 1 { "" } else { "s" }
        )?;
        let mut last = "";
        for s in &a.short {
            if s.stage != last {
                let what = if s.units == 1 {
                    "1 unit".to_string()
                } else {
                    format!("{} units", s.units)
                };
                writeln!(
                    out,
                    "  stage {:?}: {what} cannot be built from what is left; its best design lacks",
                    s.stage
                )?;
                last = &s.stage;
            }
            let p = &parts[s.row];
            writeln!(
                out,
                "    {} × {} ({}, {} left)",
                s.need,
                p.label(),
                p.place(),
                s.left
            )?;
        }
        writeln!(
            out,
            "  `onhand reorder` chooses the cheapest purchase that builds them all."
        )?;
    }
    Ok(())
}
