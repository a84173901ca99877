//! Integer programs for many units against shared stock: how many complete units the stock can
//! build (and with which designs), and what to buy so that a plan becomes buildable.
//!
//! The model is abstract: a *candidate* is one design for one stage, with the pieces it takes
//! from each *resource* (a stock row, or a catalogue item that can be bought in packs). Integer
//! variables say how many units use each candidate; resources bound the sum of their uses.
//! Objectives are lexicographic and solved in phases (each phase fixes the optimum of the one
//! before), so no weighting can trade a unit for fewer pieces:
//! - allocation: most complete units, then fewest pieces, then smallest error;
//! - purchase: every unit buildable at least cost, then fewest pieces.
//!
//! Every solve has a time limit, its status is checked, and the answer is re-checked against
//! every constraint in our own code before it is returned. Pure: no I/O, no store.
//!
//! The solver is good_lp's pure-Rust microlp unless the optional cargo feature `highs` is
//! enabled; then HiGHS (a C++ library built from source, see DEPENDENCIES.md) is the default
//! [`Backend`] and microlp stays available. The model is the same for both.

use super::program::{Op, Program, ProgramError, Row, step_of};
use good_lp::{
    Expression, ProblemVariables, ResolutionError, Solution, SolutionStatus, SolverModel, Variable,
    WithInitialSolution, WithTimeLimit, constraint, microlp,
    variable::{UnsolvedProblem, variable},
};
use std::time::Duration;

/// One design for one stage: which resources it uses and how good it is.
#[derive(Debug, Clone, PartialEq)]
pub struct Candidate {
    /// The stage this design serves (0-based).
    pub stage: usize,
    /// (resource index, pieces per unit).
    pub uses: Vec<(usize, u32)>,
    /// Pieces per unit (the sum of `uses`).
    pub pieces: u32,
    /// Relative error of the design against its target (|nominal − target| / target).
    pub error: f64,
}

/// Something a candidate draws on.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Resource {
    /// Pieces available now.
    pub available: u32,
    /// If it can be bought: (pieces per pack, price per pack in cents).
    pub pack: Option<(u32, u64)>,
}

/// Whether a solve proved its answer optimal.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Proof {
    /// Every phase proved optimal.
    Optimal,
    /// A time limit stopped a phase; the answer is feasible but may not be the best.
    TimeLimited,
}

/// Size of an integer program, for reports and benchmarks.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Serialize)]
pub struct ModelSize {
    /// Integer variables.
    pub variables: usize,
    /// Constraints.
    pub constraints: usize,
}

/// The answer of [`allocate`].
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Allocation {
    /// Complete units the stock can build.
    pub units: u32,
    /// Units per candidate (same order as the input).
    pub counts: Vec<u32>,
    /// Total pieces used.
    pub pieces: u64,
    /// Whether the answer is proven optimal.
    pub proof: Proof,
    /// Size of the largest phase's model.
    pub size: ModelSize,
}

/// The answer of [`purchase`].
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Purchase {
    /// Units per candidate.
    pub counts: Vec<u32>,
    /// Packs to buy per resource (0 for stock rows).
    pub packs: Vec<u32>,
    /// Total price in cents.
    pub cost_cents: u64,
    /// Whether the answer is proven optimal.
    pub proof: Proof,
    /// Whether the tie-break was proven too: the fewest pieces that build every unit with the
    /// packs of this list (other lists of the same cost are not searched for fewer pieces).
    pub pieces_proven: bool,
    /// A proven lower bound on the least cost, cents (the cost itself when proven optimal;
    /// the linear relaxation's optimum otherwise, `None` if even that was not reached).
    pub lower_bound_cents: Option<u64>,
    /// Size of the model.
    pub size: ModelSize,
}

/// Why an integer program gave no answer.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum AllocateError {
    /// A candidate refers to a resource or stage that does not exist.
    #[error("candidate {0} refers to a stage or resource that does not exist")]
    BadCandidate(usize),
    /// No candidate mix can satisfy the constraints (e.g. a stage without candidates).
    #[error("no way to build the plan: {0}")]
    Infeasible(String),
    /// The solver failed or ran out of time before finding any answer.
    #[error("the integer-program solver failed: {0}")]
    Solver(String),
    /// The solver's answer broke a constraint when re-checked (never expected; reported, not hidden).
    #[error("the solver's answer failed our own feasibility re-check: {0}")]
    Recheck(String),
}

/// Which integer-program solver runs the phases.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Backend {
    /// good_lp's pure-Rust microlp (always built; the default without the `highs` feature).
    #[cfg_attr(not(feature = "highs"), default)]
    Microlp,
    /// HiGHS through good_lp (only with the `highs` cargo feature, where it is the default).
    /// Run with zero MIP gap, so "optimal" means proven optimal as with microlp.
    #[cfg(feature = "highs")]
    #[default]
    Highs,
}

/// Options of a solve.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Limits {
    /// Time limit per phase.
    pub per_phase: Duration,
    /// The solver.
    pub backend: Backend,
}

impl Default for Limits {
    fn default() -> Self {
        Self {
            per_phase: Duration::from_secs(10),
            backend: Backend::default(),
        }
    }
}

/// A solved phase as plain numbers: the status and the value of each requested variable.
pub(super) type Solved = (SolutionStatus, Vec<f64>);

/// Add the constraints to a backend's model, solve it and read the variables in `read`.
fn run_model<M>(
    mut model: M,
    constraints: Vec<good_lp::Constraint>,
    read: &[Variable],
) -> Result<Solved, ResolutionError>
where
    M: SolverModel<Error = ResolutionError>,
{
    for c in constraints {
        model = model.with(c);
    }
    let sol = model.solve()?;
    Ok((sol.status(), read.iter().map(|v| sol.value(*v)).collect()))
}

/// Solve `problem` with the chosen backend under the time limit.
pub(super) fn run_backend(
    problem: UnsolvedProblem,
    constraints: Vec<good_lp::Constraint>,
    read: &[Variable],
    warm: Option<&[f64]>,
    limits: Limits,
) -> Result<Solved, ResolutionError> {
    let seconds = limits.per_phase.as_secs_f64();
    match limits.backend {
        Backend::Microlp => {
            let mut model = problem.using(microlp).with_time_limit(seconds);
            if let Some(w) = warm {
                // A known feasible answer gives branch and bound an incumbent from the start, so
                // a time limit still leaves a feasible (if unproven) answer.
                model = model.with_initial_solution(read.iter().copied().zip(w.iter().copied()));
            }
            run_model(model, constraints, read)
        }
        #[cfg(feature = "highs")]
        Backend::Highs => run_model(
            problem
                .using(good_lp::highs)
                .with_time_limit(seconds)
                // Objectives here are integers (units, pieces, ppm, cents): demand a closed
                // gap so a phase's optimum can be fixed exactly in the next phase.
                .set_option("mip_rel_gap", 0.0)
                .set_option("mip_abs_gap", 0.0),
            constraints,
            read,
        ),
    }
}

fn validate(
    stages: usize,
    candidates: &[Candidate],
    resources: &[Resource],
) -> Result<(), AllocateError> {
    for (i, c) in candidates.iter().enumerate() {
        if c.stage >= stages || c.uses.iter().any(|&(r, _)| r >= resources.len()) {
            return Err(AllocateError::BadCandidate(i));
        }
    }
    Ok(())
}

/// How many pieces of each resource a set of counts uses.
pub fn usage(candidates: &[Candidate], counts: &[u32], resources: usize) -> Vec<u64> {
    let mut used = vec![0u64; resources];
    for (c, &n) in candidates.iter().zip(counts) {
        for &(r, per) in &c.uses {
            if let Some(u) = used.get_mut(r) {
                *u += u64::from(per) * u64::from(n);
            }
        }
    }
    used
}

/// Units per stage for a set of counts.
fn per_stage(stages: usize, candidates: &[Candidate], counts: &[u32]) -> Vec<u64> {
    let mut s = vec![0u64; stages];
    for (c, &n) in candidates.iter().zip(counts) {
        s[c.stage] += u64::from(n);
    }
    s
}

/// The objective of a phase, given the candidate variables, the pack variables and the unit count.
type ObjectiveFn<'f> = dyn Fn(&[Variable], &[Variable], Variable) -> Expression + 'f;
/// Extra constraints of a phase (the optima of the phases before).
type FixFn<'f> = dyn Fn(&[Variable], &[Variable], Variable) -> Vec<good_lp::Constraint> + 'f;

struct Phase {
    status: SolutionStatus,
    values: Vec<f64>,
    extra: Vec<f64>,
}

impl Phase {
    /// The answer in the solver's read order, rounded, for the next phase's warm start.
    fn warm(&self) -> Vec<f64> {
        self.values
            .iter()
            .chain(&self.extra)
            .map(|v| v.round())
            .collect()
    }
}

/// Build and solve one phase. `objective` is given the candidate variables and the extra
/// variables; `fix` adds the constraints of earlier phases.
#[allow(clippy::too_many_arguments)]
fn solve_phase(
    stages: usize,
    units_cap: u32,
    candidates: &[Candidate],
    resources: &[Resource],
    buy: bool,
    maximise: bool,
    objective: &ObjectiveFn<'_>,
    fix: &FixFn<'_>,
    warm: Option<&[f64]>,
    limits: Limits,
    size: &mut ModelSize,
) -> Result<Phase, AllocateError> {
    let mut vars = ProblemVariables::new();
    let x: Vec<Variable> = candidates
        .iter()
        .map(|_| vars.add(variable().integer().min(0).max(units_cap)))
        .collect();
    let packs: Vec<Variable> = if buy {
        resources
            .iter()
            .enumerate()
            .map(|(ri, r)| {
                let max = r.pack.map_or(0.0, |(size, _)| {
                    // Never more packs than all units could use of this resource: each unit
                    // takes one candidate per stage, so at most the stage-wise largest use of
                    // this resource, summed over stages, times the units, less what is there.
                    // A tight bound keeps microlp's branch and bound small.
                    let mut per_stage_max = vec![0u64; stages];
                    for c in candidates {
                        let per: u64 = c
                            .uses
                            .iter()
                            .filter(|u| u.0 == ri)
                            .map(|u| u64::from(u.1))
                            .sum();
                        per_stage_max[c.stage] = per_stage_max[c.stage].max(per);
                    }
                    let need = per_stage_max.iter().sum::<u64>() * u64::from(units_cap);
                    let need = need.saturating_sub(u64::from(r.available));
                    (need as f64 / f64::from(size.max(1))).ceil()
                });
                vars.add(variable().integer().min(0).max(max))
            })
            .collect()
    } else {
        Vec::new()
    };
    let u = vars.add(variable().integer().min(0).max(units_cap));
    let obj = objective(&x, &packs, u);
    let problem = if maximise {
        vars.maximise(obj)
    } else {
        vars.minimise(obj)
    };
    let mut rows: Vec<good_lp::Constraint> = Vec::new();
    for s in 0..stages {
        let sum: Expression = candidates
            .iter()
            .zip(&x)
            .filter(|(c, _)| c.stage == s)
            .map(|(_, v)| Expression::from(*v))
            .sum();
        rows.push(constraint!(sum == u));
    }
    for (r, res) in resources.iter().enumerate() {
        let mut used = Expression::from(0.0);
        let mut any = false;
        for (c, v) in candidates.iter().zip(&x) {
            for &(rr, per) in &c.uses {
                if rr == r {
                    used += f64::from(per) * *v;
                    any = true;
                }
            }
        }
        if !any {
            continue;
        }
        let cap = match (buy, res.pack) {
            (true, Some((size, _))) => f64::from(res.available) + f64::from(size) * packs[r],
            _ => Expression::from(f64::from(res.available)),
        };
        rows.push(constraint!(used <= cap));
    }
    rows.extend(fix(&x, &packs, u));
    let n_constraints = rows.len();
    let vars_count = x.len() + packs.len() + 1;
    if vars_count > size.variables {
        *size = ModelSize {
            variables: vars_count,
            constraints: n_constraints,
        };
    }
    // Read order: candidates, then packs, then the unit count.
    let read: Vec<Variable> = x
        .iter()
        .chain(&packs)
        .copied()
        .chain(std::iter::once(u))
        .collect();
    match run_backend(problem, rows, &read, warm, limits) {
        Ok((status, mut values)) => {
            let extra = values.split_off(x.len());
            Ok(Phase {
                status,
                values,
                extra,
            })
        }
        Err(ResolutionError::Infeasible) => Err(AllocateError::Infeasible(
            "the constraints cannot all hold (a stage may have no candidate design)".into(),
        )),
        Err(e) => Err(AllocateError::Solver(e.to_string())),
    }
}

fn to_counts(values: &[f64]) -> Vec<u32> {
    values.iter().map(|v| v.round().max(0.0) as u32).collect()
}

fn proof_of(phases: &[SolutionStatus]) -> Proof {
    if phases.iter().all(|s| matches!(s, SolutionStatus::Optimal)) {
        Proof::Optimal
    } else {
        Proof::TimeLimited
    }
}

/// Most complete units (at most `units`), then fewest pieces, then smallest total error.
pub fn allocate(
    stages: usize,
    units: u32,
    candidates: &[Candidate],
    resources: &[Resource],
    limits: Limits,
) -> Result<Allocation, AllocateError> {
    validate(stages, candidates, resources)?;
    let mut size = ModelSize::default();
    let none = |_: &[Variable], _: &[Variable], _: Variable| Vec::new();
    // Phase 1: most units.
    let p1 = solve_phase(
        stages,
        units,
        candidates,
        resources,
        false,
        true,
        &|_, _, u| u.into(),
        &none,
        None,
        limits,
        &mut size,
    )?;
    let p1_warm = p1.warm();
    let best_units = p1.extra.last().copied().unwrap_or(0.0).round();
    // Phase 2: fewest pieces at that many units.
    let pieces_of = |x: &[Variable]| -> Expression {
        candidates
            .iter()
            .zip(x)
            .map(|(c, v)| f64::from(c.pieces) * *v)
            .sum()
    };
    let fix_units =
        |_: &[Variable], _: &[Variable], u: Variable| vec![constraint!(u == best_units)];
    let p2 = solve_phase(
        stages,
        units,
        candidates,
        resources,
        false,
        false,
        &|x, _, _| pieces_of(x),
        &fix_units,
        Some(&p1_warm),
        limits,
        &mut size,
    )?;
    let p2_warm = p2.warm();
    let best_pieces: f64 = candidates
        .iter()
        .zip(&p2.values)
        .map(|(c, v)| f64::from(c.pieces) * v.round())
        .sum();
    // Phase 3: smallest error at those pieces. Errors are scaled to parts per million and
    // rounded so the coefficients stay in a narrow integer range (see DEPENDENCIES.md).
    let err_of = |x: &[Variable]| -> Expression {
        candidates
            .iter()
            .zip(x)
            .map(|(c, v)| (c.error * 1e6).round().min(1e9) * *v)
            .sum()
    };
    let fix_both = |x: &[Variable], _: &[Variable], u: Variable| {
        vec![
            constraint!(u == best_units),
            constraint!(pieces_of(x) <= best_pieces),
        ]
    };
    let p3 = solve_phase(
        stages,
        units,
        candidates,
        resources,
        false,
        false,
        &|x, _, _| err_of(x),
        &fix_both,
        Some(&p2_warm),
        limits,
        &mut size,
    )?;
    let counts = to_counts(&p3.values);
    let answer = Allocation {
        units: best_units as u32,
        pieces: candidates
            .iter()
            .zip(&counts)
            .map(|(c, &n)| u64::from(c.pieces) * u64::from(n))
            .sum(),
        counts,
        proof: proof_of(&[p1.status, p2.status, p3.status]),
        size,
    };
    recheck_allocation(stages, candidates, resources, &answer)?;
    Ok(answer)
}

/// Our own check of an allocation against every constraint.
pub fn recheck_allocation(
    stages: usize,
    candidates: &[Candidate],
    resources: &[Resource],
    a: &Allocation,
) -> Result<(), AllocateError> {
    recheck(stages, a.units, candidates, resources, &a.counts, None)
}

/// Every stage has exactly `units` units, and no resource is used more than it has (plus the
/// packs bought, when there are any).
fn recheck(
    stages: usize,
    units: u32,
    candidates: &[Candidate],
    resources: &[Resource],
    counts: &[u32],
    packs: Option<&[u32]>,
) -> Result<(), AllocateError> {
    for (s, n) in per_stage(stages, candidates, counts)
        .into_iter()
        .enumerate()
    {
        if n != u64::from(units) {
            return Err(AllocateError::Recheck(format!(
                "stage {} has {n} units, expected {units}",
                s + 1
            )));
        }
    }
    for (r, (used, res)) in usage(candidates, counts, resources.len())
        .into_iter()
        .zip(resources)
        .enumerate()
    {
        let bought = match (packs, res.pack) {
            (Some(p), Some((size, _))) => {
                u64::from(size) * u64::from(p.get(r).copied().unwrap_or(0))
            }
            _ => 0,
        };
        let there = u64::from(res.available) + bought;
        if used > there {
            return Err(AllocateError::Recheck(format!(
                "resource {r} used {used} times, only {there} there"
            )));
        }
    }
    Ok(())
}

/// Every one of `units` buildable at the least purchase cost, then with the fewest pieces.
///
/// The program is reduced before it is solved, without changing its optimum:
/// - a candidate whose uses are, resource by resource, at least those of another candidate of
///   the same stage is dropped (the other never costs more nor takes more pieces);
/// - only resources some remaining candidate uses get a row, and only those that can be bought
///   get a pack variable, bounded by what all units could use of them;
/// - a stock row that holds enough for every unit's largest use gets no row at all.
///
/// Besides the answer, the linear relaxation's optimum is a proven lower bound on the cost, so
/// an answer cut short by the time limit says how far from the best it can at most be.
pub fn purchase(
    stages: usize,
    units: u32,
    candidates: &[Candidate],
    resources: &[Resource],
    limits: Limits,
) -> Result<Purchase, AllocateError> {
    let demand = Demand {
        units: vec![units; stages],
        extra: vec![0; resources.len()],
    };
    purchase_for(&demand, candidates, resources, limits)
}

/// The least time the linear relaxation (the proven bound) is given.
const LP_BOUND_LIMIT: Duration = Duration::from_secs(5);

/// What a purchase must cover: units per stage (stages of several plans may differ) and extra
/// pieces per resource wanted besides the units (a low-stock refill).
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Demand {
    /// Units of each stage.
    pub units: Vec<u32>,
    /// Pieces per resource wanted on top of the units' use (same order as the resources).
    pub extra: Vec<u32>,
}

/// [`purchase`] for a [`Demand`]: every stage's units and every extra piece at least cost.
pub fn purchase_for(
    demand: &Demand,
    candidates: &[Candidate],
    resources: &[Resource],
    limits: Limits,
) -> Result<Purchase, AllocateError> {
    let stages = demand.units.len();
    validate(stages, candidates, resources)?;
    if demand.extra.len() != resources.len() {
        return Err(AllocateError::BadCandidate(candidates.len()));
    }
    let keep = undominated(candidates);
    let kept: Vec<Candidate> = keep.iter().map(|&i| candidates[i].clone()).collect();
    let model = PurchaseModel::new(demand, &kept, resources);
    // A greedy purchase is always feasible when every stage has a buildable candidate; it is
    // the incumbent the solver starts from, and the answer if the solver finds nothing better
    // in time (reported as not proven).
    let greedy = greedy_for(demand, &kept, resources);
    let warm: Option<Vec<f64>> = greedy.as_ref().map(|(c, p)| model.warm(c, p));
    // The linear relaxation is quick; it gets at least a few seconds so that a short limit on
    // the integer program still leaves a bound to measure the answer against.
    let lp_limits = Limits {
        per_phase: limits.per_phase.max(LP_BOUND_LIMIT),
        ..limits
    };
    // The bound is the relaxation with the pack-opening rows (a stronger bound: 152.04
    // against 148.85 on the bench's 250-unit reorder, whose optimum is 156.40). Branch and
    // bound runs without them: measured over nine candidate counts of that reorder, they made
    // microlp's search slower in three of the four where the times differed by more than 30 %
    // (four counts stopped at 10 s either way).
    let bound = model.solve(Relax::WithOpenings, None, lp_limits);
    let lower_bound_cents = match bound {
        Ok((SolutionStatus::Optimal, v)) => {
            // The relaxation's optimum, rounded up to a whole step of the prices (every cost
            // of whole packs is a multiple of it); a tiny slack absorbs floating-point noise.
            let step = model.cost_step() as f64;
            Some((((model.cost(&v) - 1e-6) / step).ceil().max(0.0) * step) as u64)
        }
        _ => None,
    };
    let p1 = match model.solve(Relax::Integer, warm.as_deref(), limits) {
        Ok(s) => s,
        Err(AllocateError::Solver(_)) if warm.is_some() => {
            (SolutionStatus::TimeLimit, warm.clone().unwrap_or_default())
        }
        Err(e) => return Err(e),
    };
    // The tie-break: with the packs of that cheapest list, the fewest pieces. The packs are
    // fixed, so only the units move; that small program is proven in milliseconds, where the
    // fewest pieces over every list of the same cost is a search as large as the cost's own
    // (measured: not proven in 10 s on the bench's 250-unit reorder, and never better than
    // this). When its limit stops it, the cheapest list found stays.
    let cheapest: Vec<f64> = p1.1.iter().map(|v| v.round()).collect();
    let p2 = match model.solve_for_packs(&cheapest, limits) {
        Ok(s) => s,
        Err(AllocateError::Solver(_)) => (SolutionStatus::TimeLimit, cheapest.clone()),
        Err(e) => return Err(e),
    };
    let (kept_counts, packs) = model.read(&p2.1);
    let mut counts = vec![0u32; candidates.len()];
    for (&i, &n) in keep.iter().zip(&kept_counts) {
        counts[i] = n;
    }
    let cost_cents: u64 = resources
        .iter()
        .zip(&packs)
        .map(|(r, &n)| r.pack.map_or(0, |(_, p)| p) * u64::from(n))
        .sum();
    // "Optimal" here is the least cost; the tie-break is reported on its own.
    let proof = proof_of(&[p1.0]);
    let answer = Purchase {
        pieces_proven: proof_of(&[p2.0]) == Proof::Optimal,
        cost_cents,
        counts,
        packs,
        proof,
        // When proven optimal the bound is the cost itself.
        lower_bound_cents: if proof == Proof::Optimal {
            Some(cost_cents)
        } else {
            lower_bound_cents.map(|b| b.min(cost_cents))
        },
        size: model.size(),
    };
    recheck_demand(demand, candidates, resources, &answer)?;
    Ok(answer)
}

/// Our own check of a purchase for a [`Demand`]: every stage has its units, and no resource
/// gives more than it has plus the packs bought, the extra pieces included.
fn recheck_demand(
    demand: &Demand,
    candidates: &[Candidate],
    resources: &[Resource],
    p: &Purchase,
) -> Result<(), AllocateError> {
    for (s, n) in per_stage(demand.units.len(), candidates, &p.counts)
        .into_iter()
        .enumerate()
    {
        if n != u64::from(demand.units[s]) {
            return Err(AllocateError::Recheck(format!(
                "stage {} has {n} units, expected {}",
                s + 1,
                demand.units[s]
            )));
        }
    }
    for (r, used) in usage(candidates, &p.counts, resources.len())
        .into_iter()
        .enumerate()
    {
        let res = resources[r];
        let bought = res
            .pack
            .map_or(0, |(size, _)| u64::from(size) * u64::from(p.packs[r]));
        let used = used + u64::from(demand.extra[r]);
        let there = u64::from(res.available) + bought;
        if used > there {
            return Err(AllocateError::Recheck(format!(
                "resource {r} used {used} times, only {there} there"
            )));
        }
    }
    Ok(())
}

/// The candidates no other candidate of the same stage dominates (uses at most as much of every
/// resource; of two identical ones the first is kept). Indices into `candidates`.
fn undominated(candidates: &[Candidate]) -> Vec<usize> {
    let covers = |a: &Candidate, b: &Candidate| {
        // Whether `a` uses at most what `b` uses, resource by resource.
        a.uses
            .iter()
            .all(|&(r, n)| b.uses.iter().filter(|u| u.0 == r).map(|u| u.1).sum::<u32>() >= n)
    };
    (0..candidates.len())
        .filter(|&i| {
            let c = &candidates[i];
            !candidates.iter().enumerate().any(|(j, d)| {
                j != i && d.stage == c.stage && covers(d, c) && (!covers(c, d) || j < i)
            })
        })
        .collect()
}

/// A pack-opening row: Σ units of `candidates` − `slope` × packs of pack variable `pack` ≤
/// `rhs`.
///
/// The candidates all use a bought resource that nothing in stock supplies (at least one piece
/// per unit, `per` pieces at the fewest, so a pack of `size` pieces serves at most
/// Q = size / per of their units), and all draw on one stock row that cannot be bought, which
/// holds them to M units together. Their units X then obey X ≤ Q·n and X ≤ M for the n packs
/// bought, and, n being whole, also the line through (k, Q·k) and (k + 1, M) for
/// k = ⌊M / Q⌋: X ≤ M − (M − Q·k)(k + 1 − n). The linear relaxation otherwise buys slivers of
/// packs: 8 units of a 100-piece pack cost it 8 % of the price where a stock row of 10 pieces
/// limits them (k = 0: X ≤ 10 n, so 80 %), and 74 units of 10-piece packs 7.4 packs where a
/// stock row of 75 limits them (k = 7: X ≤ 35 + 5 n, so 7.8). Valid for every integer answer
/// (the line lies on or above min(Q·n, M) at every whole n), so the optimum is unchanged and
/// only the bound is stronger.
#[derive(Debug, Clone, PartialEq)]
struct Opening {
    candidates: Vec<usize>,
    pack: usize,
    slope: f64,
    rhs: f64,
}

/// The pack-opening rows of a purchase (see [`Opening`]): for each pack variable whose resource
/// gives nothing without a pack, and each stock row (no pack) its users draw on, one row where
/// the stock row's limit is not a whole number of packs.
fn openings(
    demand: &Demand,
    candidates: &[Candidate],
    resources: &[Resource],
    packs: &[(usize, u32)],
) -> Vec<Opening> {
    let per = |i: usize, res: usize| -> u32 {
        candidates[i]
            .uses
            .iter()
            .filter(|u| u.0 == res)
            .map(|u| u.1)
            .sum()
    };
    let mut out = Vec::new();
    for (k, &(r, _)) in packs.iter().enumerate() {
        let Some((size, _)) = resources[r].pack else {
            continue;
        };
        if resources[r].available > demand.extra[r] {
            // Some of it is there without a pack: designs using it need not wait for one.
            continue;
        }
        let users: Vec<usize> = (0..candidates.len()).filter(|&i| per(i, r) > 0).collect();
        let mut limiting: Vec<usize> = users
            .iter()
            .flat_map(|&i| candidates[i].uses.iter().map(|u| u.0))
            .filter(|&t| resources[t].pack.is_none())
            .collect();
        limiting.sort_unstable();
        limiting.dedup();
        for t in limiting {
            let these: Vec<usize> = users.iter().copied().filter(|&i| per(i, t) > 0).collect();
            let fewest_t = these.iter().map(|&i| per(i, t)).min().unwrap_or(1).max(1);
            let fewest_r = these.iter().map(|&i| per(i, r)).min().unwrap_or(1).max(1);
            let m = f64::from(resources[t].available.saturating_sub(demand.extra[t]) / fewest_t);
            let q = f64::from(size) / f64::from(fewest_r);
            let whole = (m / q).floor();
            let slope = m - q * whole;
            if slope <= 1e-9 {
                // The stock row's limit is a whole number of packs: the line adds nothing.
                continue;
            }
            out.push(Opening {
                candidates: these,
                pack: k,
                slope,
                rhs: m - slope * (whole + 1.0),
            });
        }
    }
    out
}

/// Which program a purchase phase solves.
#[derive(Clone, Copy, PartialEq, Eq)]
enum Relax {
    /// Every variable whole.
    Integer,
    /// The linear relaxation, with the pack-opening rows (the proven bound).
    WithOpenings,
}

#[derive(Clone, Copy)]
enum Goal {
    LeastCost,
    FewestPieces,
}

/// The reduced purchase program: which resources get a row and which a pack variable.
struct PurchaseModel<'a> {
    stages: usize,
    units: Vec<u32>,
    extra: Vec<u32>,
    candidates: &'a [Candidate],
    resources: &'a [Resource],
    /// Resources that get a capacity row.
    rows: Vec<usize>,
    /// (resource, most packs) of each pack variable.
    packs: Vec<(usize, u32)>,
    /// The pack-opening rows (see [`Opening`]).
    opening: Vec<Opening>,
}

impl<'a> PurchaseModel<'a> {
    fn new(demand: &Demand, candidates: &'a [Candidate], resources: &'a [Resource]) -> Self {
        let stages = demand.units.len();
        // Per resource, the stage-wise largest use per unit, summed over stages: no answer
        // takes more than that times the units.
        let mut most = vec![vec![0u64; stages]; resources.len()];
        for c in candidates {
            for &(r, n) in &c.uses {
                let m = &mut most[r][c.stage];
                *m = (*m).max(u64::from(n));
            }
        }
        let mut rows = Vec::new();
        let mut packs = Vec::new();
        for (r, res) in resources.iter().enumerate() {
            let need = most[r]
                .iter()
                .zip(&demand.units)
                .map(|(m, &u)| m * u64::from(u))
                .sum::<u64>()
                + u64::from(demand.extra[r]);
            if need == 0 || need <= u64::from(res.available) {
                continue;
            }
            rows.push(r);
            if let Some((size, _)) = res.pack {
                let max = (need - u64::from(res.available)).div_ceil(u64::from(size.max(1)));
                packs.push((r, u32::try_from(max).unwrap_or(u32::MAX)));
            }
        }
        let opening = openings(demand, candidates, resources, &packs);
        Self {
            stages,
            units: demand.units.clone(),
            extra: demand.extra.clone(),
            candidates,
            resources,
            rows,
            packs,
            opening,
        }
    }

    /// The size of the least-cost program that branch and bound solves.
    fn size(&self) -> ModelSize {
        let p = self.program(Goal::LeastCost, false);
        ModelSize {
            variables: p.upper.len(),
            constraints: p.rows.len(),
        }
    }

    fn price_cents(&self, k: usize) -> u64 {
        self.resources[self.packs[k].0].pack.map_or(0, |(_, p)| p)
    }

    fn price(&self, k: usize) -> f64 {
        self.price_cents(k) as f64
    }

    /// Cost of a solution vector (candidates, then packs), as the solver left it.
    fn cost(&self, v: &[f64]) -> f64 {
        let n = self.candidates.len();
        (0..self.packs.len())
            .map(|k| self.price(k) * v[n + k])
            .sum()
    }

    /// A solution vector from counts per candidate and packs per resource.
    fn warm(&self, counts: &[u32], packs: &[u32]) -> Vec<f64> {
        counts
            .iter()
            .map(|&c| f64::from(c))
            .chain(self.packs.iter().map(|&(r, _)| f64::from(packs[r])))
            .collect()
    }

    /// Counts per candidate and packs per resource from a solution vector.
    fn read(&self, v: &[f64]) -> (Vec<u32>, Vec<u32>) {
        let n = self.candidates.len();
        let counts = to_counts(&v[..n]);
        let mut packs = vec![0u32; self.resources.len()];
        for (k, &(r, _)) in self.packs.iter().enumerate() {
            packs[r] = v[n + k].round().max(0.0) as u32;
        }
        (counts, packs)
    }

    /// The program for `goal`: candidates' units, then packs; one row per stage (its units),
    /// one per resource that can run short (uses within stock plus packs bought), and the
    /// pack-opening rows if `openings`.
    fn program(&self, goal: Goal, openings: bool) -> Program {
        let n = self.candidates.len();
        let upper: Vec<u32> = self
            .candidates
            .iter()
            .map(|c| self.units[c.stage])
            .chain(self.packs.iter().map(|&(_, max)| max))
            .collect();
        let prices: Vec<u64> = (0..self.packs.len()).map(|k| self.price_cents(k)).collect();
        let objective: Vec<u64> = match goal {
            Goal::LeastCost => std::iter::repeat_n(0, n)
                .chain(prices.iter().copied())
                .collect(),
            Goal::FewestPieces => self
                .candidates
                .iter()
                .map(|c| u64::from(c.pieces))
                .chain(std::iter::repeat_n(0, self.packs.len()))
                .collect(),
        };
        let mut rows = Vec::new();
        for s in 0..self.stages {
            rows.push(Row {
                terms: (0..n)
                    .filter(|&i| self.candidates[i].stage == s)
                    .map(|i| (i, 1.0))
                    .collect(),
                op: Op::Eq,
                rhs: f64::from(self.units[s]),
            });
        }
        for &r in &self.rows {
            let mut terms: Vec<(usize, f64)> = Vec::new();
            for (i, c) in self.candidates.iter().enumerate() {
                for &(rr, per) in &c.uses {
                    if rr == r {
                        terms.push((i, f64::from(per)));
                    }
                }
            }
            if let Some(k) = self.packs.iter().position(|q| q.0 == r) {
                let size = self.resources[r].pack.map_or(0, |q| q.0);
                terms.push((n + k, -f64::from(size)));
            }
            rows.push(Row {
                terms,
                op: Op::Le,
                rhs: f64::from(self.resources[r].available) - f64::from(self.extra[r]),
            });
        }
        for o in self.opening.iter().filter(|_| openings) {
            let mut terms: Vec<(usize, f64)> = o.candidates.iter().map(|&i| (i, 1.0)).collect();
            terms.push((n + o.pack, -o.slope));
            rows.push(Row {
                terms,
                op: Op::Le,
                rhs: o.rhs,
            });
        }
        Program {
            upper,
            objective,
            rows,
        }
    }

    /// The least-cost program: whole, or its relaxation with the pack-opening rows.
    fn solve(
        &self,
        relax: Relax,
        warm: Option<&[f64]>,
        limits: Limits,
    ) -> Result<Solved, AllocateError> {
        let program = self.program(Goal::LeastCost, relax == Relax::WithOpenings);
        match program.solve(relax == Relax::Integer, warm, limits) {
            Ok(s) => Ok(s),
            Err(ProgramError::Infeasible) => Err(AllocateError::Infeasible(
                "the constraints cannot all hold (a stage may have no candidate design)".into(),
            )),
            Err(ProgramError::Solver(e)) => Err(AllocateError::Solver(e)),
        }
    }

    /// The fewest pieces with the packs of `answer` (a solution vector): its packs fixed, the
    /// units free. `answer` itself is the warm start.
    fn solve_for_packs(&self, answer: &[f64], limits: Limits) -> Result<Solved, AllocateError> {
        let n = self.candidates.len();
        let mut program = self.program(Goal::FewestPieces, false);
        for k in 0..self.packs.len() {
            program.rows.push(Row {
                terms: vec![(n + k, 1.0)],
                op: Op::Eq,
                rhs: answer[n + k],
            });
        }
        match program.solve(true, Some(answer), limits) {
            Ok(s) => Ok(s),
            Err(ProgramError::Infeasible) => Err(AllocateError::Infeasible(
                "the cheapest list's packs cannot build the units (never expected)".into(),
            )),
            Err(ProgramError::Solver(e)) => Err(AllocateError::Solver(e)),
        }
    }

    /// The step between two costs of whole packs: the greatest common divisor of the prices.
    fn cost_step(&self) -> u64 {
        let prices: Vec<u64> = (0..self.packs.len()).map(|k| self.price_cents(k)).collect();
        step_of(&prices)
    }
}

/// Our own check of a purchase against every constraint.
pub fn recheck_purchase(
    stages: usize,
    units: u32,
    candidates: &[Candidate],
    resources: &[Resource],
    p: &Purchase,
) -> Result<(), AllocateError> {
    recheck(
        stages,
        units,
        candidates,
        resources,
        &p.counts,
        Some(&p.packs),
    )
}

/// A feasible purchase found greedily: unit by unit, stage by stage, the candidate whose extra
/// packs cost least (then fewest pieces). `None` when some stage has no candidate that stock
/// and packs together can supply. (counts per candidate, packs per resource.)
pub fn greedy_purchase(
    stages: usize,
    units: u32,
    candidates: &[Candidate],
    resources: &[Resource],
) -> Option<(Vec<u32>, Vec<u32>)> {
    let demand = Demand {
        units: vec![units; stages],
        extra: vec![0; resources.len()],
    };
    greedy_for(&demand, candidates, resources)
}

/// [`greedy_purchase`] for a [`Demand`]: the extra pieces are bought first (packs of the
/// resource), then the units as there.
fn greedy_for(
    demand: &Demand,
    candidates: &[Candidate],
    resources: &[Resource],
) -> Option<(Vec<u32>, Vec<u32>)> {
    let stages = demand.units.len();
    let mut left: Vec<u64> = resources.iter().map(|r| u64::from(r.available)).collect();
    let mut packs = vec![0u32; resources.len()];
    let mut counts = vec![0u32; candidates.len()];
    for (r, &want) in demand.extra.iter().enumerate() {
        let want = u64::from(want);
        if left[r] < want {
            let (size, _) = resources[r].pack.filter(|q| q.0 > 0)?;
            let n = (want - left[r]).div_ceil(u64::from(size));
            packs[r] += u32::try_from(n).unwrap_or(u32::MAX);
            left[r] += n * u64::from(size);
        }
        left[r] -= want;
    }
    let most = demand.units.iter().copied().max().unwrap_or(0);
    for unit in 0..most {
        for s in (0..stages).filter(|&s| unit < demand.units[s]) {
            let mut best: Option<(u64, u32, usize)> = None;
            for (i, c) in candidates.iter().enumerate().filter(|(_, c)| c.stage == s) {
                let mut cost = 0u64;
                let mut ok = true;
                for &(r, per) in &c.uses {
                    let per = u64::from(per);
                    if left[r] < per {
                        match resources[r].pack {
                            Some((size, price)) if size > 0 => {
                                cost += (per - left[r]).div_ceil(u64::from(size)) * price;
                            }
                            _ => ok = false,
                        }
                    }
                }
                if ok && best.is_none_or(|(bc, bp, _)| (cost, c.pieces) < (bc, bp)) {
                    best = Some((cost, c.pieces, i));
                }
            }
            let (_, _, i) = best?;
            for &(r, per) in &candidates[i].uses {
                let per = u64::from(per);
                if left[r] < per {
                    if let Some((size, _)) = resources[r].pack {
                        let n = (per - left[r]).div_ceil(u64::from(size));
                        packs[r] += u32::try_from(n).unwrap_or(u32::MAX);
                        left[r] += n * u64::from(size);
                    }
                }
                left[r] -= per;
            }
            counts[i] += 1;
        }
    }
    Some((counts, packs))
}

/// The obvious one-unit-at-a-time allocation: each unit takes, stage by stage, the best
/// candidate (fewest pieces, then smallest error) that still fits. Kept as a baseline to show
/// why the integer program is needed.
pub fn greedy(
    stages: usize,
    units: u32,
    candidates: &[Candidate],
    resources: &[Resource],
) -> Allocation {
    let mut left: Vec<u64> = resources.iter().map(|r| u64::from(r.available)).collect();
    let mut counts = vec![0u32; candidates.len()];
    let mut order: Vec<usize> = (0..candidates.len()).collect();
    order.sort_by(|&a, &b| {
        let (ca, cb) = (&candidates[a], &candidates[b]);
        ca.pieces
            .cmp(&cb.pieces)
            .then(ca.error.total_cmp(&cb.error))
    });
    let mut built = 0;
    'units: for _ in 0..units {
        let mut trial = left.clone();
        let mut picks = Vec::new();
        for s in 0..stages {
            let pick = order.iter().copied().find(|&i| {
                candidates[i].stage == s
                    && candidates[i]
                        .uses
                        .iter()
                        .all(|&(r, per)| trial[r] >= u64::from(per))
            });
            let Some(i) = pick else { break 'units };
            for &(r, per) in &candidates[i].uses {
                trial[r] -= u64::from(per);
            }
            picks.push(i);
        }
        left = trial;
        for i in picks {
            counts[i] += 1;
        }
        built += 1;
    }
    Allocation {
        units: built,
        pieces: candidates
            .iter()
            .zip(&counts)
            .map(|(c, &n)| u64::from(c.pieces) * u64::from(n))
            .sum(),
        counts,
        proof: Proof::TimeLimited,
        size: ModelSize::default(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn cand(stage: usize, uses: &[(usize, u32)], error: f64) -> Candidate {
        Candidate {
            stage,
            uses: uses.to_vec(),
            pieces: uses.iter().map(|u| u.1).sum(),
            error,
        }
    }

    /// Candidates from (stage, resource, pieces, second resource) tuples: the second resource
    /// gives one more piece unless it is the first.
    fn two_use_candidates(raw: &[(usize, usize, u32, usize)]) -> Vec<Candidate> {
        raw.iter()
            .map(|&(stage, r1, per, r2)| {
                let mut uses = vec![(r1, per)];
                if r2 != r1 {
                    uses.push((r2, 1));
                }
                cand(stage, &uses, 0.0)
            })
            .collect()
    }

    fn stock(counts: &[u32]) -> Vec<Resource> {
        counts
            .iter()
            .map(|&available| Resource {
                available,
                pack: None,
            })
            .collect()
    }

    /// The best (units, pieces) by trying every count vector (for tiny instances only).
    fn exhaustive(stages: usize, units: u32, cands: &[Candidate], res: &[Resource]) -> (u32, u64) {
        let mut best = (0u32, 0u64);
        let n = cands.len();
        let mut counts = vec![0u32; n];
        loop {
            let ps = per_stage(stages, cands, &counts);
            let u = ps[0];
            if ps.iter().all(|&s| s == u)
                && u <= u64::from(units)
                && usage(cands, &counts, res.len())
                    .iter()
                    .zip(res)
                    .all(|(&used, r)| used <= u64::from(r.available))
            {
                let pieces = cands
                    .iter()
                    .zip(&counts)
                    .map(|(c, &k)| u64::from(c.pieces) * u64::from(k))
                    .sum();
                let u = u as u32;
                if u > best.0 || (u == best.0 && pieces < best.1) {
                    best = (u, pieces);
                }
            }
            // Next count vector in 0..=units per position.
            let mut i = 0;
            loop {
                if i == n {
                    return best;
                }
                counts[i] += 1;
                if counts[i] <= units {
                    break;
                }
                counts[i] = 0;
                i += 1;
            }
        }
    }

    #[test]
    fn greedy_builds_fewer_units_than_the_integer_program() {
        // Two stages share resource 0 (scarce). Stage 0's best design uses it; its second design
        // does not. Stage 1 can only use resource 0. Greedy takes the scarce part for stage 0 and
        // starves stage 1; the integer program routes stage 0 to its second design.
        let cands = vec![
            cand(0, &[(0, 1)], 0.0),           // stage 0, 1 piece, uses the scarce row
            cand(0, &[(1, 1), (2, 1)], 0.001), // stage 0, 2 pieces from plentiful rows
            cand(1, &[(0, 1)], 0.0),           // stage 1 needs the scarce row
        ];
        let res = stock(&[4, 10, 10]);
        let g = greedy(2, 4, &cands, &res);
        let ip = allocate(2, 4, &cands, &res, Limits::default()).expect("solve");
        assert_eq!(g.units, 2);
        assert_eq!(ip.units, 4);
        assert_eq!(ip.proof, Proof::Optimal);
        assert_eq!(ip.counts, vec![0, 4, 4]);
    }

    #[test]
    fn purchase_prefers_a_value_that_serves_two_stages() {
        // Stage 0 and stage 1 can each use catalogue item 0 (serves both) or their own items
        // 1 and 2. Packs of 10 cost the same; buying one pack of item 0 covers both stages.
        let cands = vec![
            cand(0, &[(0, 1)], 0.0),
            cand(0, &[(1, 1)], 0.0),
            cand(1, &[(0, 1)], 0.0),
            cand(1, &[(2, 1)], 0.0),
        ];
        let res = vec![
            Resource {
                available: 0,
                pack: Some((10, 100)),
            },
            Resource {
                available: 0,
                pack: Some((10, 100)),
            },
            Resource {
                available: 0,
                pack: Some((10, 100)),
            },
        ];
        let p = purchase(2, 5, &cands, &res, Limits::default()).expect("purchase");
        assert_eq!(p.cost_cents, 100);
        assert_eq!(p.packs, vec![1, 0, 0]);
    }

    /// Two designs cost the same with one pack of item 0: A takes one piece of it and two
    /// from stock row 1 (3 pieces), B two of it (2 pieces). With the packs of a list that
    /// builds every unit with A, the tie-break must move every unit to B.
    #[test]
    fn the_tie_break_takes_the_fewest_pieces_with_the_cheapest_lists_packs() {
        let cands = vec![cand(0, &[(0, 1), (1, 2)], 0.0), cand(0, &[(0, 2)], 0.0)];
        let res = vec![
            Resource {
                available: 0,
                pack: Some((10, 100)),
            },
            Resource {
                available: 20,
                pack: None,
            },
        ];
        let demand = Demand {
            units: vec![4],
            extra: vec![0; 2],
        };
        let model = PurchaseModel::new(&demand, &cands, &res);
        let all_a = model.warm(&[4, 0], &[1, 0]);
        let (status, v) = model
            .solve_for_packs(&all_a, Limits::default())
            .expect("solves");
        assert!(matches!(status, SolutionStatus::Optimal));
        assert_eq!(model.read(&v), (vec![0, 4], vec![1, 0]));
        let p = purchase(1, 4, &cands, &res, Limits::default()).expect("purchase");
        assert_eq!((p.cost_cents, p.counts.clone()), (100, vec![0, 4]));
        assert!(p.pieces_proven);
    }

    /// The pack-opening rows hold at every integer answer and raise the relaxation: 8 units
    /// need a 100-piece pack that alone costs 300, or 1 unit each of a stock-only design;
    /// a stock row of 10 limits the pack's design.
    #[test]
    fn pack_opening_rows_raise_the_bound_and_keep_the_optimum() {
        // Stage 0, 8 units: design 0 takes item 0 (bought, packs of 100 at 300) and stock row
        // 1 (10 pieces); design 1 takes item 2 (bought, packs of 10 at 200).
        let cands = vec![cand(0, &[(0, 1), (1, 1)], 0.0), cand(0, &[(2, 1)], 0.0)];
        let res = vec![
            Resource {
                available: 0,
                pack: Some((100, 300)),
            },
            Resource {
                available: 10,
                pack: None,
            },
            Resource {
                available: 0,
                pack: Some((10, 200)),
            },
        ];
        let demand = Demand {
            units: vec![8],
            extra: vec![0; 3],
        };
        let model = PurchaseModel::new(&demand, &cands, &res);
        assert_eq!(model.opening.len(), 1);
        let lp = |relax| {
            let (_, v) = model
                .solve(relax, None, Limits::default())
                .expect("relaxation");
            model.cost(&v)
        };
        // Without the rows the relaxation pays 8 % of the big pack (24); with them, 80 %.
        let plain = model.program(Goal::LeastCost, false);
        let (_, v) = plain
            .solve_microlp(false, None, Duration::from_secs(5))
            .expect("plain relaxation");
        assert!((model.cost(&v) - 24.0).abs() < 1e-6, "{}", model.cost(&v));
        assert!((lp(Relax::WithOpenings) - 160.0).abs() < 1e-6);
        // The optimum (one pack of item 2 for 200, by enumeration: item 0 costs 300) is kept.
        let p = purchase(1, 8, &cands, &res, Limits::default()).expect("purchase");
        assert_eq!((p.cost_cents, p.packs.clone()), (200, vec![0, 0, 1]));
        assert_eq!(p.lower_bound_cents, Some(200));
    }

    #[test]
    #[cfg(not(feature = "highs"))]
    fn microlp_is_the_default_backend() {
        assert_eq!(Limits::default().backend, Backend::Microlp);
    }

    // Both backends prove the same optima (the assignments may differ where optima tie).
    #[cfg(feature = "highs")]
    proptest! {
        #![proptest_config(ProptestConfig { cases: 40, ..ProptestConfig::default() })]
        #[test]
        fn highs_and_microlp_prove_the_same_optima(
            stock_counts in proptest::collection::vec(0u32..6, 4),
            raw in proptest::collection::vec((0usize..2, 0usize..4, 1u32..3, 0usize..4), 2..7),
            units in 1u32..6,
            packs in proptest::collection::vec(proptest::option::of((1u32..5, 1u64..500)), 4),
        ) {
            let cands: Vec<Candidate> = raw.iter().enumerate().map(|(i, &(stage, r1, per, r2))| {
                let mut uses = vec![(r1, per)];
                if r2 != r1 { uses.push((r2, 1)); }
                cand(stage, &uses, (i as f64) * 1e-3)
            }).collect();
            let res: Vec<Resource> = stock_counts
                .iter()
                .zip(&packs)
                .map(|(&available, &pack)| Resource { available, pack })
                .collect();
            let with = |backend| Limits { backend, ..Limits::default() };
            let a = allocate(2, units, &cands, &res, with(Backend::Microlp));
            let b = allocate(2, units, &cands, &res, with(Backend::Highs));
            match (a, b) {
                (Ok(a), Ok(b)) => {
                    prop_assert_eq!((a.units, a.pieces), (b.units, b.pieces));
                    let err = |x: &Allocation| -> f64 {
                        cands.iter().zip(&x.counts).map(|(c, &n)| c.error * f64::from(n)).sum()
                    };
                    prop_assert!((err(&a) - err(&b)).abs() < 1e-6);
                }
                (Err(AllocateError::Infeasible(_)), Err(AllocateError::Infeasible(_))) => {}
                (a, b) => prop_assert!(false, "backends differ: {a:?} / {b:?}"),
            }
            let a = purchase(2, units, &cands, &res, with(Backend::Microlp));
            let b = purchase(2, units, &cands, &res, with(Backend::Highs));
            match (a, b) {
                (Ok(a), Ok(b)) => prop_assert_eq!(a.cost_cents, b.cost_cents),
                (Err(AllocateError::Infeasible(_)), Err(AllocateError::Infeasible(_))) => {}
                (a, b) => prop_assert!(false, "backends differ: {a:?} / {b:?}"),
            }
        }
    }

    /// The least cost by trying every count vector (tiny instances only): per stage, every way
    /// to spread its units over its candidates; packs are then the fewest that cover each
    /// resource's use plus its extra pieces.
    fn exhaustive_cost(demand: &Demand, cands: &[Candidate], res: &[Resource]) -> Option<u64> {
        let n = cands.len();
        let top = demand.units.iter().copied().max().unwrap_or(0);
        let mut counts = vec![0u32; n];
        let mut best: Option<u64> = None;
        loop {
            let ps = per_stage(demand.units.len(), cands, &counts);
            if ps
                .iter()
                .zip(&demand.units)
                .all(|(&a, &b)| a == u64::from(b))
            {
                let used = usage(cands, &counts, res.len());
                let mut cost = Some(0u64);
                for (r, u) in used.iter().enumerate() {
                    let want = u + u64::from(demand.extra[r]);
                    let have = u64::from(res[r].available);
                    if want > have {
                        cost = match (cost, res[r].pack) {
                            (Some(c), Some((size, price))) => {
                                Some(c + (want - have).div_ceil(u64::from(size)) * price)
                            }
                            _ => None,
                        };
                    }
                }
                if let Some(c) = cost {
                    best = Some(best.map_or(c, |b| b.min(c)));
                }
            }
            let mut i = 0;
            loop {
                if i == n {
                    return best;
                }
                counts[i] += 1;
                if counts[i] <= top {
                    break;
                }
                counts[i] = 0;
                i += 1;
            }
        }
    }

    #[test]
    fn a_tiny_purchase_matches_the_exhaustive_enumeration() {
        // Invented packs and prices. Stage 0 (3 units) can use resource 0 (2 per unit) or
        // resources 1 and 2; stage 1 (2 units) uses resource 2 or 3; 4 extra pieces of
        // resource 3 are wanted for a refill; 1 piece of resource 1 is in stock.
        let cands = vec![
            cand(0, &[(0, 2)], 0.0),
            cand(0, &[(1, 1), (2, 1)], 0.0),
            cand(1, &[(2, 1)], 0.0),
            cand(1, &[(3, 1)], 0.0),
        ];
        let res = vec![
            Resource {
                available: 0,
                pack: Some((5, 300)),
            },
            Resource {
                available: 1,
                pack: Some((10, 120)),
            },
            Resource {
                available: 0,
                pack: Some((4, 90)),
            },
            Resource {
                available: 0,
                pack: Some((6, 100)),
            },
        ];
        let demand = Demand {
            units: vec![3, 2],
            extra: vec![0, 0, 0, 4],
        };
        let want = exhaustive_cost(&demand, &cands, &res).expect("feasible");
        let p = purchase_for(&demand, &cands, &res, Limits::default()).expect("purchase");
        assert_eq!(p.cost_cents, want);
        assert_eq!(p.proof, Proof::Optimal);
        assert_eq!(p.lower_bound_cents, Some(want));
        recheck_demand(&demand, &cands, &res, &p).expect("recheck");
    }

    proptest! {
        #![proptest_config(ProptestConfig { cases: 60, ..ProptestConfig::default() })]
        /// Stock rows that cannot be bought beside offers with nothing in stock (where the
        /// pack-opening rows arise, and the price step is above one cent): the purchase is
        /// the enumeration's optimum, and the relaxation with the opening rows never rises
        /// above it.
        #[test]
        fn purchase_with_stock_limited_designs_matches_exhaustive_enumeration(
            stock_counts in proptest::collection::vec(0u32..6, 2),
            raw in proptest::collection::vec((0usize..2, 0usize..4, 1u32..3, 0usize..4), 2..5),
            units in proptest::collection::vec(1u32..4, 2),
            packs in proptest::collection::vec((2u32..12, 1u64..6), 2),
        ) {
            let cands = two_use_candidates(&raw);
            // Resources 0 and 1: stock only; 2 and 3: offers (packs, prices in steps of 10).
            let mut res = stock(&stock_counts);
            res.extend(packs.iter().map(|&(size, price)| Resource {
                available: 0,
                pack: Some((size, price * 10)),
            }));
            let demand = Demand { units, extra: vec![0; 4] };
            let want = exhaustive_cost(&demand, &cands, &res);
            let keep = undominated(&cands);
            let kept: Vec<Candidate> = keep.iter().map(|&i| cands[i].clone()).collect();
            let model = PurchaseModel::new(&demand, &kept, &res);
            if let (Some(best), Ok((_, v))) = (
                want,
                model.solve(Relax::WithOpenings, None, Limits::default()),
            ) {
                prop_assert!(model.cost(&v) <= best as f64 + 1e-6, "bound {} above {best}", model.cost(&v));
            }
            match purchase_for(&demand, &cands, &res, Limits::default()) {
                Ok(p) => {
                    prop_assert_eq!(Some(p.cost_cents), want);
                    prop_assert_eq!(p.proof, Proof::Optimal);
                    prop_assert!(p.pieces_proven);
                }
                Err(AllocateError::Infeasible(_)) => prop_assert_eq!(want, None),
                Err(e) => prop_assert!(false, "solver error {e}"),
            }
        }
    }

    proptest! {
        #![proptest_config(ProptestConfig { cases: 40, ..ProptestConfig::default() })]
        #[test]
        fn purchase_matches_exhaustive_enumeration(
            stock_counts in proptest::collection::vec(0u32..4, 3),
            raw in proptest::collection::vec((0usize..2, 0usize..3, 1u32..3, 0usize..3), 2..5),
            units in proptest::collection::vec(1u32..4, 2),
            extra in proptest::collection::vec(0u32..4, 3),
            packs in proptest::collection::vec((1u32..5, 1u64..400), 3),
        ) {
            let cands = two_use_candidates(&raw);
            let res: Vec<Resource> = stock_counts.iter().zip(&packs)
                .map(|(&available, &pack)| Resource { available, pack: Some(pack) })
                .collect();
            let demand = Demand { units, extra };
            let want = exhaustive_cost(&demand, &cands, &res);
            match purchase_for(&demand, &cands, &res, Limits::default()) {
                Ok(p) => {
                    prop_assert_eq!(Some(p.cost_cents), want);
                    prop_assert_eq!(p.proof, Proof::Optimal);
                    prop_assert!(p.lower_bound_cents.is_some_and(|b| b <= p.cost_cents));
                }
                Err(AllocateError::Infeasible(_)) => prop_assert_eq!(want, None),
                Err(e) => prop_assert!(false, "solver error {e}"),
            }
        }
    }

    proptest! {
        #![proptest_config(ProptestConfig { cases: 60, ..ProptestConfig::default() })]
        #[test]
        fn allocation_matches_exhaustive_enumeration(
            stock_counts in proptest::collection::vec(0u32..5, 3),
            raw in proptest::collection::vec((0usize..2, 0usize..3, 1u32..3, 0usize..3), 2..5),
            units in 1u32..4,
        ) {
            let cands = two_use_candidates(&raw);
            let res = stock(&stock_counts);
            let (best_units, best_pieces) = exhaustive(2, units, &cands, &res);
            match allocate(2, units, &cands, &res, Limits::default()) {
                Ok(a) => {
                    prop_assert_eq!(a.units, best_units);
                    prop_assert_eq!(a.pieces, best_pieces);
                }
                // A stage with no candidate at all: exhaustive finds zero units too.
                Err(AllocateError::Infeasible(_)) => prop_assert_eq!(best_units, 0),
                Err(e) => prop_assert!(false, "solver error {e}"),
            }
        }
    }
}
