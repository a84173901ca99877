//! Plans: many units of one or more stages against shared stock, and what to buy when the stock
//! cannot build them all.
//!
//! Each stage's candidates come from the exact search (the best few dozen designs, ranked);
//! the integer programs of [`super::allocate`] then choose how many units use each candidate.
//! For a reorder, the catalogue's offers join the stock as extra rows that cost money, and the
//! candidates come from both the stock alone and stock-plus-catalogue. Pure: no I/O.

use super::allocate::{self, AllocateError, Candidate, Limits, ModelSize, Proof, Resource};
use super::{Design, Goal, Settings, SolveError, solve};
use crate::model::Part;
use std::collections::BTreeSet;

/// One stage of a plan, ready for the search.
#[derive(Debug, Clone, PartialEq)]
pub struct PlanStage {
    /// Name for reports.
    pub name: String,
    /// The target.
    pub goal: Goal,
    /// Search settings (its `alternatives` is overridden by the plan's candidate count).
    pub settings: Settings,
}

/// Why a plan could not be worked out.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum PlanError {
    /// The search refused a stage's target or settings.
    #[error("stage {stage:?}: {source}")]
    Search {
        /// Stage name.
        stage: String,
        /// Why.
        source: SolveError,
    },
    /// The integer program failed.
    #[error(transparent)]
    Program(#[from] AllocateError),
}

/// A stage's share of the answer: which designs, for how many units.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct StageShare {
    /// Stage name.
    pub name: String,
    /// Candidates the search offered.
    pub candidates: usize,
    /// (design, units) for each design in use, most units first.
    pub uses: Vec<(Design, u32)>,
}

/// Pieces of one stock row missing for the units the stock cannot build.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Short {
    /// Stage name.
    pub stage: String,
    /// Units of this stage the leftover stock cannot build even on its own.
    pub units: u32,
    /// Index into the parts slice.
    pub row: usize,
    /// Pieces needed for the missing units.
    pub need: u64,
    /// Pieces left after the units that can be built.
    pub left: u64,
}

/// How many units the stock can build and with what.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Buildable {
    /// Units asked for.
    pub wanted: u32,
    /// Complete units the stock can build.
    pub built: u32,
    /// Per stage, the designs in use.
    pub stages: Vec<StageShare>,
    /// Pieces per row that the built units take (index into parts, pieces).
    pub takes: Vec<(usize, u64)>,
    /// Stages that cannot be built at all from this stock (no candidate design).
    pub impossible: Vec<String>,
    /// What is missing for the rest: for each stage that the leftover stock cannot serve on
    /// its own, the rows its best design lacks.
    pub short: Vec<Short>,
    /// Total pieces of the built units.
    pub pieces: u64,
    /// Whether the integer program proved its answer optimal.
    pub proof: Proof,
    /// Size of the integer program.
    pub size: ModelSize,
}

/// Pieces per row that one unit of `d` takes.
fn uses_of(d: &Design) -> Vec<(usize, u32)> {
    let mut rows: Vec<usize> = d
        .positions
        .iter()
        .flat_map(|p| p.rows.iter().copied())
        .collect();
    rows.sort_unstable();
    let mut out: Vec<(usize, u32)> = Vec::new();
    for r in rows {
        match out.last_mut() {
            Some((last, n)) if *last == r => *n += 1,
            _ => out.push((r, 1)),
        }
    }
    out
}

/// The candidates of one stage: the best `count` designs from each parts list in `pools`
/// (indices are into the full parts slice `parts`; each pool is a subset of it), de-duplicated
/// by the rows they use.
fn stage_candidates(
    parts: &[Part],
    pools: &[Vec<usize>],
    stage: &PlanStage,
    count: usize,
) -> Result<Vec<Design>, PlanError> {
    let mut settings = stage.settings.clone();
    settings.alternatives = count;
    let mut seen: BTreeSet<Vec<(usize, u32)>> = BTreeSet::new();
    let mut out = Vec::new();
    for pool in pools {
        let subset: Vec<Part> = pool.iter().map(|&i| parts[i].clone()).collect();
        let outcome =
            solve(&subset, &stage.goal, &settings).map_err(|source| PlanError::Search {
                stage: stage.name.clone(),
                source,
            })?;
        for mut d in outcome.designs {
            for p in &mut d.positions {
                for r in &mut p.rows {
                    *r = pool[*r];
                }
            }
            if seen.insert(uses_of(&d)) {
                out.push(d);
            }
        }
    }
    out.sort_by(|a, b| a.pieces.cmp(&b.pieces).then(a.error.total_cmp(&b.error)));
    Ok(out)
}

fn resource_of(p: &Part) -> Resource {
    Resource {
        available: u32::try_from(p.available().max(0)).unwrap_or(u32::MAX),
        pack: None,
    }
}

fn ip_candidates(per_stage: &[Vec<Design>]) -> (Vec<Candidate>, Vec<(usize, usize)>) {
    let mut cands = Vec::new();
    let mut origin = Vec::new();
    for (s, designs) in per_stage.iter().enumerate() {
        for (i, d) in designs.iter().enumerate() {
            let uses = uses_of(d);
            cands.push(Candidate {
                stage: s,
                pieces: uses.iter().map(|u| u.1).sum(),
                uses,
                error: d.error,
            });
            origin.push((s, i));
        }
    }
    (cands, origin)
}

fn shares(
    stages: &[PlanStage],
    per_stage: &[Vec<Design>],
    origin: &[(usize, usize)],
    counts: &[u32],
) -> Vec<StageShare> {
    let mut out: Vec<StageShare> = stages
        .iter()
        .zip(per_stage)
        .map(|(s, d)| StageShare {
            name: s.name.clone(),
            candidates: d.len(),
            uses: Vec::new(),
        })
        .collect();
    for (&(s, i), &n) in origin.iter().zip(counts) {
        if n > 0 {
            out[s].uses.push((per_stage[s][i].clone(), n));
        }
    }
    for s in &mut out {
        s.uses.sort_by_key(|u| std::cmp::Reverse(u.1));
    }
    out
}

/// How many of `units` the stock can build, with which designs, and what is short.
/// `count` is how many candidate designs to take per stage (a few dozen).
pub fn buildable(
    parts: &[Part],
    stages: &[PlanStage],
    units: u32,
    count: usize,
    limits: Limits,
) -> Result<Buildable, PlanError> {
    let all: Vec<usize> = (0..parts.len()).collect();
    let per_stage: Vec<Vec<Design>> = stages
        .iter()
        .map(|s| stage_candidates(parts, std::slice::from_ref(&all), s, count))
        .collect::<Result<_, _>>()?;
    let impossible: Vec<String> = stages
        .iter()
        .zip(&per_stage)
        .filter(|(_, d)| d.is_empty())
        .map(|(s, _)| s.name.clone())
        .collect();
    let resources: Vec<Resource> = parts.iter().map(resource_of).collect();
    let (cands, origin) = ip_candidates(&per_stage);
    let alloc = if impossible.is_empty() {
        allocate::allocate(stages.len(), units, &cands, &resources, limits)?
    } else {
        allocate::Allocation {
            units: 0,
            counts: vec![0; cands.len()],
            pieces: 0,
            proof: Proof::Optimal,
            size: ModelSize::default(),
        }
    };
    let used = allocate::usage(&cands, &alloc.counts, parts.len());
    let takes: Vec<(usize, u64)> = used
        .iter()
        .enumerate()
        .filter(|(_, n)| **n > 0)
        .map(|(i, n)| (i, *n))
        .collect();
    // What the missing units lack. Each stage in turn is given the stock left after the built
    // units; a stage that could build every missing unit from it alone is not the bottleneck.
    // For the others, the rows its best design lacks for the units it cannot build are listed.
    let missing = units - alloc.units.min(units);
    let left: Vec<Resource> = resources
        .iter()
        .zip(&used)
        .map(|(r, u)| Resource {
            available: u32::try_from(u64::from(r.available).saturating_sub(*u)).unwrap_or(0),
            pack: None,
        })
        .collect();
    let mut short = Vec::new();
    if missing > 0 {
        for (s, designs) in per_stage.iter().enumerate() {
            let Some(best) = designs.first() else {
                continue;
            };
            let own: Vec<Candidate> = cands
                .iter()
                .filter(|c| c.stage == s)
                .map(|c| Candidate {
                    stage: 0,
                    ..c.clone()
                })
                .collect();
            let extra = allocate::allocate(1, missing, &own, &left, limits).map_or(0, |a| a.units);
            let lacking = u64::from(missing - extra.min(missing));
            if lacking == 0 {
                continue;
            }
            for (row, per) in uses_of(best) {
                let need = u64::from(per) * lacking;
                let have = u64::from(left[row].available);
                if need > have {
                    short.push(Short {
                        stage: stages[s].name.clone(),
                        units: lacking as u32,
                        row,
                        need,
                        left: have,
                    });
                }
            }
        }
    }
    Ok(Buildable {
        wanted: units,
        built: alloc.units,
        stages: shares(stages, &per_stage, &origin, &alloc.counts),
        takes,
        impossible,
        short,
        pieces: alloc.pieces,
        proof: alloc.proof,
        size: alloc.size,
    })
}

/// Something that can be bought: an extra row of `parts` with its pack and price.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Buyable {
    /// Index of the offer's row in the parts slice.
    pub row: usize,
    /// Pieces per pack.
    pub pack: u32,
    /// Price per pack in cents.
    pub price_cents: u64,
}

/// The cheapest purchase that makes every unit buildable.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Order {
    /// Units the order makes buildable (all wanted).
    pub units: u32,
    /// Per stage, the designs in use after the purchase.
    pub stages: Vec<StageShare>,
    /// (row, packs, pieces used) for each offer bought.
    pub buy: Vec<(usize, u32, u64)>,
    /// Total price, cents.
    pub cost_cents: u64,
    /// Whether the integer program proved its answer optimal.
    pub proof: Proof,
    /// Size of the integer program.
    pub size: ModelSize,
}

/// The least-cost purchase from `offers` (rows of `parts` that are not in stock but can be
/// bought) that lets the stock build all `units`. Rows not named in `offers` are stock.
pub fn reorder(
    parts: &[Part],
    offers: &[Buyable],
    stages: &[PlanStage],
    units: u32,
    count: usize,
    limits: Limits,
) -> Result<Order, PlanError> {
    let offer_rows: BTreeSet<usize> = offers.iter().map(|o| o.row).collect();
    let stock: Vec<usize> = (0..parts.len())
        .filter(|i| !offer_rows.contains(i))
        .collect();
    let all: Vec<usize> = (0..parts.len()).collect();
    let per_stage: Vec<Vec<Design>> = stages
        .iter()
        .map(|s| stage_candidates(parts, &[stock.clone(), all.clone()], s, count))
        .collect::<Result<_, _>>()?;
    if let Some((s, _)) = stages.iter().zip(&per_stage).find(|(_, d)| d.is_empty()) {
        return Err(PlanError::Program(AllocateError::Infeasible(format!(
            "stage {:?}: nothing in stock or in the price list can meet its target",
            s.name
        ))));
    }
    let mut resources: Vec<Resource> = parts.iter().map(resource_of).collect();
    for o in offers {
        resources[o.row] = Resource {
            available: 0,
            pack: Some((o.pack, o.price_cents)),
        };
    }
    let (cands, origin) = ip_candidates(&per_stage);
    let p = allocate::purchase(stages.len(), units, &cands, &resources, limits)?;
    let used = allocate::usage(&cands, &p.counts, parts.len());
    let buy = offers
        .iter()
        .filter(|o| p.packs[o.row] > 0)
        .map(|o| (o.row, p.packs[o.row], used[o.row]))
        .collect();
    Ok(Order {
        units,
        stages: shares(stages, &per_stage, &origin, &p.counts),
        buy,
        cost_cents: p.cost_cents,
        proof: p.proof,
        size: p.size,
    })
}
