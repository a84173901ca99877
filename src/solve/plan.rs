//! Plans: many units of one or more stages against shared stock, and what to buy when the stock
//! cannot build them all.
//!
//! Each stage's candidates come from the exact search (the best few dozen designs, ranked);
//! the integer programs of [`super::allocate`] then choose how many units use each candidate.
//! For a reorder, the catalogue's offers join the stock as extra rows that cost money, and the
//! candidates come from both the stock alone and stock-plus-catalogue. Pure: no I/O.

use super::allocate::{
    self, AllocateError, Allocation, Candidate, Limits, ModelSize, Proof, Resource,
};
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
    /// How designs were chosen for the units.
    pub mix: Mix,
    /// In kit mode: the units a mixed plan (any design per unit) builds from the same
    /// candidates, for comparison.
    pub mixed_built: Option<u32>,
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
    /// Whether the integer program proved its answer optimal (over the candidates offered).
    pub proof: Proof,
    /// Per stage, what the candidate list covers: the proof holds over the whole design space
    /// only where every list is complete.
    pub cover: Vec<Cover>,
    /// Why the unit count is the most possible over the whole design space, when it is proven
    /// so (even where some candidate lists were cut short).
    pub units_bound_by: Option<Bound>,
    /// Distinct part classes the stock rows were merged into.
    pub classes: usize,
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

/// Stock rows that no design can tell apart (same kind, value, tolerance, technology, ratings
/// and package; only the bin, the count and the notes differ), merged into one class with the
/// rows' free pieces summed. The search and the integer programs work over classes, so a
/// cabinet with the same value in many bins offers distinct designs, not the same design once
/// per bin; pieces are assigned back to rows only for the answer.
#[derive(Debug, Clone)]
struct Classes {
    /// One part per class: its first member with the free pieces of all members, none held.
    parts: Vec<Part>,
    /// Rows of each class, in the order pieces are taken: most free first, then row order.
    members: Vec<Vec<usize>>,
}

impl Classes {
    /// Group `parts`; rows with different `tag`s never share a class (offers to buy and stock).
    fn new(parts: &[Part], tag: &dyn Fn(usize) -> usize) -> Self {
        let mut by_key: std::collections::BTreeMap<(usize, String), usize> =
            std::collections::BTreeMap::new();
        let mut members: Vec<Vec<usize>> = Vec::new();
        for (i, p) in parts.iter().enumerate() {
            let key = (
                tag(i),
                format!(
                    "{:?}|{:?}|{:?}|{:?}|{:?}|{:?}|{}",
                    p.kind,
                    p.value,
                    p.tolerance,
                    p.technology,
                    p.voltage_rating,
                    p.power_rating,
                    p.package
                ),
            );
            let c = *by_key.entry(key).or_insert_with(|| {
                members.push(Vec::new());
                members.len() - 1
            });
            members[c].push(i);
        }
        for m in &mut members {
            m.sort_by_key(|&r| (std::cmp::Reverse(parts[r].available()), r));
        }
        let classes = members
            .iter()
            .map(|m| {
                let mut p = parts[m[0]].clone();
                p.quantity = m
                    .iter()
                    .fold(0i64, |a, &r| a.saturating_add(parts[r].available()));
                p.held = 0;
                p
            })
            .collect();
        Self {
            parts: classes,
            members,
        }
    }

    /// The row a class is shown by (its member with the most free pieces).
    fn row(&self, class: usize) -> usize {
        self.members[class][0]
    }

    /// A class-level design with each leaf shown by its class's first row.
    fn to_rows(&self, d: &Design) -> Design {
        let mut d = d.clone();
        for p in &mut d.positions {
            for r in &mut p.rows {
                *r = self.row(*r);
            }
        }
        d
    }

    /// Pieces per class spread over the member rows (most free row first).
    fn spread(&self, parts: &[Part], per_class: &[u64]) -> Vec<(usize, u64)> {
        let mut out = Vec::new();
        for (c, &n) in per_class.iter().enumerate() {
            let mut left = n;
            for (k, &r) in self.members[c].iter().enumerate() {
                if left == 0 {
                    break;
                }
                let last = k + 1 == self.members[c].len();
                let free = u64::try_from(parts[r].available()).unwrap_or(0);
                // The re-check of the program guarantees the class total fits; the last row
                // takes any remainder only if that guarantee were ever broken (never expected).
                let take = if last { left } else { left.min(free) };
                if take > 0 {
                    out.push((r, take));
                    left -= take;
                }
            }
        }
        out.sort_unstable();
        out
    }
}

/// What a stage's candidate list covers.
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize)]
pub struct Cover {
    /// Stage name.
    pub stage: String,
    /// Distinct candidate designs offered to the integer program.
    pub offered: usize,
    /// Whether the list holds every design that meets the stage's target within its piece limit
    /// (the search ran to the end and found fewer designs than were asked for).
    pub complete: bool,
    /// Whether the search's time limit stopped it (a longer list would not help then).
    pub timed_out: bool,
}

/// A stage's candidates, whether they are every design there is, and whether the search's time
/// limit stopped it.
type Listed = (Vec<Design>, bool, bool);

/// The candidates of one stage: the best `count` designs from each parts list in `pools`
/// (indices are into the full parts slice `parts`; each pool is a subset of it), de-duplicated
/// by the rows they use; and whether the list is every design there is.
fn stage_candidates(
    parts: &[Part],
    pools: &[Vec<usize>],
    stage: &PlanStage,
    count: usize,
) -> Result<Listed, PlanError> {
    let mut settings = stage.settings.clone();
    settings.alternatives = count;
    let mut seen: BTreeSet<Vec<(usize, u32)>> = BTreeSet::new();
    let mut out = Vec::new();
    let mut complete = true;
    let mut timed_out = false;
    for pool in pools {
        let subset: Vec<Part> = pool.iter().map(|&i| parts[i].clone()).collect();
        let outcome =
            solve(&subset, &stage.goal, &settings).map_err(|source| PlanError::Search {
                stage: stage.name.clone(),
                source,
            })?;
        complete &= outcome.complete && outcome.designs.len() < count;
        timed_out |= !outcome.complete;
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
    Ok((out, complete, timed_out))
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
    cls: &Classes,
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
    // Several program candidates may stand for one design (its split over a plan's own
    // holds): their units add up.
    let mut per: std::collections::BTreeMap<(usize, usize), u32> =
        std::collections::BTreeMap::new();
    for (&o, &n) in origin.iter().zip(counts) {
        if n > 0 {
            *per.entry(o).or_insert(0) += n;
        }
    }
    for ((s, i), n) in per {
        out[s].uses.push((cls.to_rows(&per_stage[s][i]), n));
    }
    for s in &mut out {
        s.uses.sort_by_key(|u| std::cmp::Reverse(u.1));
    }
    out
}

/// Why a plan's unit count cannot be beaten by any design left out of the candidate lists.
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Bound {
    /// Every unit asked for is built.
    EveryUnit,
    /// This stage's list holds every design it has, and it alone could build no more units
    /// from the whole stock.
    Stage(String),
}

/// How a plan chooses designs for its units.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case", tag = "mode")]
pub enum Mix {
    /// Any design for any unit (the most units).
    Mixed,
    /// At most `variants` designs per stage across all units (1: identical kits).
    Kits {
        /// Designs allowed per stage.
        variants: u32,
    },
}

/// The most candidates per stage the plan widens to when a list was cut short and the plan
/// does not build every unit: this many times the count asked for.
const WIDEN_UP_TO: usize = 16;

/// How many of `units` the stock can build, with which designs, and what is short.
/// `count` is how many candidate designs to take per stage (a few dozen).
pub fn buildable(
    parts: &[Part],
    stages: &[PlanStage],
    units: u32,
    count: usize,
    limits: Limits,
) -> Result<Buildable, PlanError> {
    plan_units(parts, stages, units, count, Mix::Mixed, limits)
}

/// [`buildable`] with a choice of mix. Rows that no design can tell apart are merged first
/// (see `Classes`); when the plan falls short of `units` while some stage's candidate list was
/// cut short, that list is widened (doubled, up to [`WIDEN_UP_TO`] times `count`) and the
/// program solved again, so more stock never hides designs behind rows. In kit mode the mixed
/// plan is solved too, for comparison.
pub fn plan_units(
    parts: &[Part],
    stages: &[PlanStage],
    units: u32,
    count: usize,
    mix: Mix,
    limits: Limits,
) -> Result<Buildable, PlanError> {
    let cls = Classes::new(parts, &|_| 0);
    let cparts = &cls.parts;
    let all: Vec<usize> = (0..cparts.len()).collect();
    let resources: Vec<Resource> = cparts.iter().map(resource_of).collect();
    let count = count.max(1);
    let mut counts = vec![count; stages.len()];
    let mut lists: Vec<Listed> = stages
        .iter()
        .map(|s| stage_candidates(cparts, std::slice::from_ref(&all), s, count))
        .collect::<Result<_, _>>()?;
    let solve_mix =
        |n_stages: usize, cands: &[Candidate], m: Mix| -> Result<Allocation, PlanError> {
            Ok(match m {
                Mix::Mixed => allocate::allocate(n_stages, units, cands, &resources, limits)?,
                Mix::Kits { variants } => {
                    super::kits::kits(n_stages, units, cands, &resources, variants, limits)?
                }
            })
        };
    // A stage whose list holds every design it has gives an exact bound on its own: no plan,
    // whatever designs the other stages use, builds more units than that stage alone could from
    // the whole stock. Computed once per complete stage (its list never changes after).
    let mut alone: Vec<Option<u32>> = vec![None; stages.len()];
    let (per_stage, cands, origin, alloc, mixed) = loop {
        let per_stage: Vec<Vec<Design>> = lists.iter().map(|l| l.0.clone()).collect();
        let impossible = per_stage.iter().any(Vec::is_empty);
        let (cands, origin) = ip_candidates(&per_stage);
        let (alloc, mixed) = if impossible {
            (
                Allocation {
                    units: 0,
                    counts: vec![0; cands.len()],
                    pieces: 0,
                    proof: Proof::Optimal,
                    size: ModelSize::default(),
                },
                None,
            )
        } else {
            let a = solve_mix(stages.len(), &cands, mix)?;
            let m = match mix {
                Mix::Mixed => None,
                Mix::Kits { .. } => Some(solve_mix(stages.len(), &cands, Mix::Mixed)?),
            };
            (a, m)
        };
        for s in 0..stages.len() {
            if lists[s].1 && alone[s].is_none() && !per_stage[s].is_empty() {
                let own: Vec<Candidate> = cands
                    .iter()
                    .filter(|c| c.stage == s)
                    .map(|c| Candidate {
                        stage: 0,
                        ..c.clone()
                    })
                    .collect();
                let a = solve_mix(1, &own, mix)?;
                alone[s] = (a.proof == Proof::Optimal).then_some(a.units);
            }
        }
        let bound = alone
            .iter()
            .flatten()
            .copied()
            .min()
            .unwrap_or(units)
            .min(units);
        let widen: Vec<usize> = (0..stages.len())
            .filter(|&s| {
                !lists[s].1 && !lists[s].2 && counts[s] < count.saturating_mul(WIDEN_UP_TO)
            })
            .collect();
        if impossible || alloc.units >= bound || widen.is_empty() {
            break (per_stage, cands, origin, alloc, mixed);
        }
        for s in widen {
            counts[s] = counts[s].saturating_mul(2);
            lists[s] = stage_candidates(cparts, std::slice::from_ref(&all), &stages[s], counts[s])?;
        }
    };
    // The unit count is the most possible over the whole design space when every unit is
    // built, or when a complete stage alone could build no more.
    let units_bound_by = if alloc.proof != Proof::Optimal {
        None
    } else if alloc.units >= units {
        Some(Bound::EveryUnit)
    } else {
        (0..stages.len())
            .find(|&s| alone[s] == Some(alloc.units))
            .map(|s| Bound::Stage(stages[s].name.clone()))
    };
    let impossible: Vec<String> = stages
        .iter()
        .zip(&per_stage)
        .filter(|(_, d)| d.is_empty())
        .map(|(s, _)| s.name.clone())
        .collect();
    let cover: Vec<Cover> = stages
        .iter()
        .zip(&lists)
        .map(|(s, l)| Cover {
            stage: s.name.clone(),
            offered: l.0.len(),
            complete: l.1,
            timed_out: l.2,
        })
        .collect();
    let used = allocate::usage(&cands, &alloc.counts, cparts.len());
    let takes = cls.spread(parts, &used);
    // What the missing units lack. Each stage in turn is given the stock left after the built
    // units; a stage that could build every missing unit from it alone is not the bottleneck.
    // For the others, the classes its best design lacks for the units it cannot build are
    // listed (shown by their first row, with the pieces left in the whole class).
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
            for (class, per) in uses_of(best) {
                let need = u64::from(per) * lacking;
                let have = u64::from(left[class].available);
                if need > have {
                    short.push(Short {
                        stage: stages[s].name.clone(),
                        units: lacking as u32,
                        row: cls.row(class),
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
        mix,
        mixed_built: mixed.as_ref().map(|m| m.units),
        stages: shares(stages, &per_stage, &origin, &alloc.counts, &cls),
        takes,
        impossible,
        short,
        pieces: alloc.pieces,
        proof: alloc.proof,
        cover,
        units_bound_by,
        classes: cparts.len(),
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
    /// (row, packs, pieces used, refill included) for each offer bought.
    pub buy: Vec<(usize, u32, u64)>,
    /// Total price, cents.
    pub cost_cents: u64,
    /// A proven lower bound on the least cost over the candidates offered, cents (equal to
    /// `cost_cents` when proven optimal; `None` when not even the bound was reached).
    pub lower_bound_cents: Option<u64>,
    /// Whether the integer program proved its answer optimal (over the candidates offered).
    pub proof: Proof,
    /// Per stage, what the candidate list covers.
    pub cover: Vec<Cover>,
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
    let want = Want {
        stages: stages.to_vec(),
        units: vec![units; stages.len()],
        refill: Vec::new(),
        plan_of: vec![0; stages.len()],
        own: Vec::new(),
    };
    reorder_for(parts, offers, &want, count, limits)
}

/// What one purchase covers: the stages of one or several plans (each with its units) and a
/// refill of rows running low.
#[derive(Debug, Clone, PartialEq)]
pub struct Want {
    /// Every stage of every plan.
    pub stages: Vec<PlanStage>,
    /// Units of each stage.
    pub units: Vec<u32>,
    /// (offer row in the parts slice, pieces) bought besides the plans.
    pub refill: Vec<(usize, u32)>,
    /// The plan each stage belongs to (an index into `own`; stages of a plan named twice
    /// share one plan).
    pub plan_of: Vec<usize>,
    /// Per plan, the pieces its own holds keep for it: (stock row in the parts slice, pieces).
    /// `parts` counts them as held (not free); they are free to that plan's stages only.
    /// Empty: no plan holds anything.
    pub own: Vec<Vec<(usize, u32)>>,
}

/// A plan's own holds as resources of the purchase program: for each class the plan holds
/// pieces of, one extra resource (after the classes) that only that plan's stages draw on.
#[derive(Debug, Clone, Default)]
struct Owned {
    /// Per plan, class → (own resource index, pieces held).
    by_plan: Vec<std::collections::BTreeMap<usize, (usize, u32)>>,
    /// The own resources in index order (pieces held), after the classes.
    pieces: Vec<u32>,
}

impl Owned {
    fn new(
        own: &[Vec<(usize, u32)>],
        class_of_row: &dyn Fn(usize) -> Option<usize>,
        classes: usize,
    ) -> Self {
        let mut by_plan = Vec::new();
        let mut pieces = Vec::new();
        for rows in own {
            let mut per: std::collections::BTreeMap<usize, u32> = std::collections::BTreeMap::new();
            for &(row, n) in rows {
                if let Some(c) = class_of_row(row) {
                    let e = per.entry(c).or_insert(0);
                    *e = e.saturating_add(n);
                }
            }
            let mut m = std::collections::BTreeMap::new();
            for (c, n) in per.into_iter().filter(|&(_, n)| n > 0) {
                m.insert(c, (classes + pieces.len(), n));
                pieces.push(n);
            }
            by_plan.push(m);
        }
        Self { by_plan, pieces }
    }

    /// The classes as plan `g`'s stages see them: its own held pieces free.
    fn view(&self, cparts: &[Part], g: usize) -> Vec<Part> {
        let mut v = cparts.to_vec();
        if let Some(m) = self.by_plan.get(g) {
            for (&c, &(_, n)) in m {
                v[c].quantity = v[c].quantity.saturating_add(i64::from(n));
            }
        }
        v
    }

    /// Every way a unit of plan `g` can split a candidate's pieces between the shared class
    /// and the plan's own held pieces of it (a variant per split; pieces are identical, so
    /// the split is all that matters). Without own pieces: the candidate itself.
    fn variants(&self, g: usize, c: &Candidate) -> Vec<Candidate> {
        let mut out = vec![Vec::<(usize, u32)>::new()];
        for &(class, n) in &c.uses {
            let own = self.by_plan.get(g).and_then(|m| m.get(&class)).copied();
            let mut next = Vec::new();
            for base in &out {
                let most = own.map_or(0, |(_, h)| n.min(h));
                for a in 0..=most {
                    let mut u = base.clone();
                    if n > a {
                        u.push((class, n - a));
                    }
                    if a > 0 {
                        u.push((own.map_or(class, |o| o.0), a));
                    }
                    next.push(u);
                }
            }
            out = next;
        }
        out.into_iter()
            .map(|uses| Candidate { uses, ..c.clone() })
            .collect()
    }
}

/// [`reorder`] for a [`Want`]: one least-cost purchase for several plans and a refill. Each
/// plan's own holds are free to that plan's stages and to no other (and count once, however
/// often the plan is named).
pub fn reorder_for(
    parts: &[Part],
    offers: &[Buyable],
    want: &Want,
    count: usize,
    limits: Limits,
) -> Result<Order, PlanError> {
    let stages = &want.stages;
    let offer_rows: BTreeSet<usize> = offers.iter().map(|o| o.row).collect();
    // Each offer is its own class (it has a price); stock rows merge as in a plan.
    let cls = Classes::new(parts, &|i| if offer_rows.contains(&i) { i + 1 } else { 0 });
    let cparts = &cls.parts;
    let is_offer = |c: usize| offer_rows.contains(&cls.row(c));
    let stock: Vec<usize> = (0..cparts.len()).filter(|&c| !is_offer(c)).collect();
    let all: Vec<usize> = (0..cparts.len()).collect();
    let mut class_by_row = vec![None; parts.len()];
    for (c, m) in cls.members.iter().enumerate() {
        for &r in m {
            class_by_row[r] = Some(c);
        }
    }
    let class_of = |row: usize| class_by_row.get(row).copied().flatten();
    let owned = Owned::new(
        &want.own,
        &|r| class_of(r).filter(|&c| !is_offer(c)),
        cparts.len(),
    );
    let plan_of = |s: usize| want.plan_of.get(s).copied().unwrap_or(0);
    // Stages of plans without holds of their own all see the same stock; a stage whose goal,
    // settings and view of the stock equal an earlier one's reuses its candidates.
    let view_key = |g: usize| {
        if owned.by_plan.get(g).is_some_and(|m| !m.is_empty()) {
            g + 1
        } else {
            0
        }
    };
    let mut seen_lists: Vec<(usize, &PlanStage, usize)> = Vec::new();
    let mut lists: Vec<Listed> = Vec::new();
    for (s, st) in stages.iter().enumerate() {
        let key = view_key(plan_of(s));
        let earlier = seen_lists
            .iter()
            .find(|(k, e, _)| *k == key && e.goal == st.goal && e.settings == st.settings)
            .map(|e| e.2);
        let listed = match earlier {
            Some(i) => lists[i].clone(),
            None => {
                let view = owned.view(cparts, plan_of(s));
                stage_candidates(&view, &[stock.clone(), all.clone()], st, count)?
            }
        };
        seen_lists.push((key, st, s));
        lists.push(listed);
    }
    let per_stage: Vec<Vec<Design>> = lists.iter().map(|l| l.0.clone()).collect();
    if let Some((s, _)) = stages.iter().zip(&per_stage).find(|(_, d)| d.is_empty()) {
        return Err(PlanError::Program(AllocateError::Infeasible(format!(
            "stage {:?}: nothing in stock or in the price list can meet its target",
            s.name
        ))));
    }
    let mut resources: Vec<Resource> = cparts.iter().map(resource_of).collect();
    for o in offers {
        if let Some(c) = class_of(o.row) {
            resources[c] = Resource {
                available: 0,
                pack: Some((o.pack, o.price_cents)),
            };
        }
    }
    resources.extend(owned.pieces.iter().map(|&available| Resource {
        available,
        pack: None,
    }));
    let mut extra = vec![0u32; resources.len()];
    for &(row, n) in &want.refill {
        match class_of(row).filter(|&c| is_offer(c)) {
            Some(c) => extra[c] = extra[c].saturating_add(n),
            None => {
                return Err(PlanError::Program(AllocateError::Infeasible(format!(
                    "refill of row {row}: it is not in the price list"
                ))));
            }
        }
    }
    let (plain, plain_origin) = ip_candidates(&per_stage);
    let mut cands = Vec::new();
    let mut origin = Vec::new();
    for (c, o) in plain.iter().zip(&plain_origin) {
        for v in owned.variants(plan_of(c.stage), c) {
            cands.push(v);
            origin.push(*o);
        }
    }
    let demand = allocate::Demand {
        units: want.units.clone(),
        extra: extra.clone(),
    };
    let p = allocate::purchase_for(&demand, &cands, &resources, limits)?;
    let used = allocate::usage(&cands, &p.counts, resources.len());
    let buy = (0..cparts.len())
        .filter(|&c| is_offer(c) && p.packs[c] > 0)
        .map(|c| (cls.row(c), p.packs[c], used[c] + u64::from(extra[c])))
        .collect();
    Ok(Order {
        units: want.units.iter().copied().max().unwrap_or(0),
        stages: shares(stages, &per_stage, &origin, &p.counts, &cls),
        buy,
        cost_cents: p.cost_cents,
        lower_bound_cents: p.lower_bound_cents,
        proof: p.proof,
        cover: stages
            .iter()
            .zip(&lists)
            .map(|(s, l)| Cover {
                stage: s.name.clone(),
                offered: l.0.len(),
                complete: l.1,
                timed_out: l.2,
            })
            .collect(),
        size: p.size,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::model::{Kind, Technology, Value};
    use crate::solve::{Family, Rank, StageGoal};
    use crate::timing::Conditions;
    use crate::units::{Farads, Ohms, Tolerance, Volts};

    fn part(id: i64, kind: Kind, v: f64, qty: i64, bin: &str) -> Part {
        Part {
            id,
            kind,
            value: match kind {
                Kind::Capacitor => Value::Capacitance(Farads::from_si(v).expect("farads")),
                _ => Value::Resistance(Ohms::from_si(v).expect("ohms")),
            },
            tolerance: Tolerance::symmetric_percent(1.0).expect("tolerance"),
            technology: if kind == Kind::Capacitor {
                Technology::Film
            } else {
                Technology::MetalFilm
            },
            voltage_rating: Volts::from_si(63.0),
            power_rating: None,
            package: String::new(),
            bin: bin.into(),
            quantity: qty,
            held: 0,
            low_stock: None,
            note: String::new(),
        }
    }

    /// A one-shot of ln 3 · 100 kΩ · 1 µF = 109.86 ms (t = ln 3 · R · C, common practice).
    fn shot() -> PlanStage {
        PlanStage {
            name: "shot".into(),
            goal: Goal::Stages(vec![StageGoal::Pulse {
                width: crate::units::Seconds::from_si(0.109_86).expect("time"),
            }]),
            settings: Settings {
                tol: 0.02,
                max_pieces: 1,
                alternatives: 1,
                guarantee: false,
                family: Family::bipolar(),
                conditions: Conditions::ideal(Volts::from_si(9.0).expect("volts")),
                // The textbook model: these tests are about the plan, not the physics.
                model: crate::timing::Model::ideal(),
                cap_techs: None,
                min_cap_rating: None,
                time_limit: None,
                rank: Rank::FewestPieces,
                excursion: crate::solve::Excursion::default(),
            },
        }
    }

    #[test]
    fn rows_of_one_class_are_one_resource_and_the_takes_spread_over_them() {
        // Invented drawer: 100 kΩ in three bins (1, 2 and 3 pieces), 1 µF in one bin (9).
        let parts = vec![
            part(1, Kind::Resistor, 100e3, 1, "A"),
            part(2, Kind::Resistor, 100e3, 3, "B"),
            part(3, Kind::Resistor, 100e3, 2, "C"),
            part(4, Kind::Capacitor, 1e-6, 9, "D"),
        ];
        let b = buildable(&parts, &[shot()], 6, 1, Limits::default()).expect("plan");
        // Six 100 kΩ pieces over three rows: six units, even with one candidate per stage.
        assert_eq!(b.built, 6, "{b:?}");
        assert_eq!(b.classes, 2);
        assert_eq!(b.takes, vec![(0, 1), (1, 3), (2, 2), (3, 6)]);
        assert_eq!(b.units_bound_by, Some(Bound::EveryUnit));
        // Fewer units asked: the fullest row is taken from first.
        let b = buildable(&parts, &[shot()], 2, 1, Limits::default()).expect("plan");
        assert_eq!(b.takes, vec![(1, 2), (3, 2)]);
    }

    #[test]
    fn more_stock_never_builds_fewer_units() {
        let mut parts = vec![
            part(1, Kind::Resistor, 100e3, 2, "A"),
            part(2, Kind::Capacitor, 1e-6, 9, "D"),
        ];
        let mut last = 0;
        for extra in 0..6 {
            let b = buildable(&parts, &[shot()], 9, 1, Limits::default()).expect("plan");
            assert!(b.built >= last, "{extra} extra rows: {} < {last}", b.built);
            assert_eq!(b.built, (2 + extra).min(9) as u32);
            last = b.built;
            parts.push(part(
                10 + extra,
                Kind::Resistor,
                100e3,
                1,
                &format!("X{extra}"),
            ));
        }
    }

    #[test]
    fn a_plans_own_holds_serve_that_plan_only() {
        // Invented drawer: two 100 kΩ and two 1 µF, every piece held by plan 0's units; the
        // same values can be bought (invented packs and prices).
        let mut parts = vec![
            part(1, Kind::Resistor, 100e3, 2, "A"),
            part(2, Kind::Capacitor, 1e-6, 2, "B"),
            part(3, Kind::Resistor, 100e3, 1000, "offer"),
            part(4, Kind::Capacitor, 1e-6, 1000, "offer"),
        ];
        parts[0].held = 2;
        parts[1].held = 2;
        let offers = [
            Buyable {
                row: 2,
                pack: 10,
                price_cents: 70,
            },
            Buyable {
                row: 3,
                pack: 10,
                price_cents: 300,
            },
        ];
        let want = |units: u32, plan_of: Vec<usize>| Want {
            stages: vec![shot(), shot()],
            units: vec![units; 2],
            refill: Vec::new(),
            plan_of,
            own: vec![vec![(0, 2), (1, 2)], Vec::new()],
        };
        // One unit each: plan 0 builds from its holds, plan 1 buys one pack of each.
        let o = reorder_for(&parts, &offers, &want(1, vec![0, 1]), 4, Limits::default())
            .expect("order");
        assert_eq!(o.cost_cents, 370, "{o:?}");
        assert_eq!(o.proof, Proof::Optimal);
        // Both stages belong to plan 0: its two held kits cover one unit of each.
        let o = reorder_for(&parts, &offers, &want(1, vec![0, 0]), 4, Limits::default())
            .expect("order");
        assert_eq!(o.cost_cents, 0, "{o:?}");
        assert!(o.buy.is_empty(), "{o:?}");
        // Two units of plan 0's stage and two of plan 1's: only plan 1 buys.
        let o = reorder_for(&parts, &offers, &want(2, vec![0, 1]), 4, Limits::default())
            .expect("order");
        assert_eq!(o.cost_cents, 370, "{o:?}");
        assert_eq!(o.buy.iter().map(|b| b.2).sum::<u64>(), 4, "{o:?}");
    }

    #[test]
    fn a_search_stopped_by_its_time_limit_is_reported_and_not_widened() {
        let parts = vec![
            part(1, Kind::Resistor, 100e3, 2, "A"),
            part(2, Kind::Capacitor, 1e-6, 9, "D"),
        ];
        let mut st = shot();
        st.settings.time_limit = Some(std::time::Duration::ZERO);
        let b = buildable(&parts, &[st], 9, 1, Limits::default()).expect("plan");
        assert!(b.cover[0].timed_out, "{:?}", b.cover);
        assert!(!b.cover[0].complete);
        assert!(b.cover[0].offered <= 1, "{:?}", b.cover);
        assert_eq!(b.units_bound_by, None);
    }
}
