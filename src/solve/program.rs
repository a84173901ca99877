//! A small integer program as plain numbers, and its solve.
//!
//! The purchase program is built here once and handed to a solver. With microlp it is solved
//! directly (not through good_lp) so that branch and bound can use what we know of the
//! objective: every coefficient is a whole number (cents, pieces), so every answer's objective
//! is a multiple of their greatest common divisor `g`, and a branch whose bound is not at least
//! `g` below the best answer so far cannot hold a better one and is cut. That is exact, and it
//! cuts most of the nodes that only tie the best answer. Through good_lp (HiGHS, or microlp
//! without that cut, kept as the cross-check of the direct solve) the same program is solved
//! as it stands. Pure.

use super::allocate::{Backend, Limits, Solved};
use good_lp::SolutionStatus;
use std::time::Duration;

/// How a row compares its left side with its right side.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum Op {
    /// At most.
    Le,
    /// Exactly.
    Eq,
}

/// One row: Σ coefficient × variable (op) right side.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct Row {
    /// (variable index, coefficient).
    pub terms: Vec<(usize, f64)>,
    /// The comparison.
    pub op: Op,
    /// The right side.
    pub rhs: f64,
}

/// Minimise Σ objective × variable over variables in `0..=upper`, subject to the rows.
#[derive(Debug, Clone, PartialEq, Default)]
pub(super) struct Program {
    /// Upper bound of each variable (every lower bound is 0).
    pub upper: Vec<u32>,
    /// Objective coefficient of each variable: whole numbers.
    pub objective: Vec<u64>,
    /// The constraints.
    pub rows: Vec<Row>,
}

/// Why a program gave no answer.
#[derive(Debug, Clone, PartialEq)]
pub(super) enum ProgramError {
    /// No point satisfies every row.
    Infeasible,
    /// The solver failed, or its time ran out before any answer.
    Solver(String),
}

fn gcd(a: u64, b: u64) -> u64 {
    if b == 0 { a } else { gcd(b, a % b) }
}

/// The greatest common divisor of the nonzero coefficients (1 when all are zero): the step
/// between two values of Σ coefficient × whole number.
pub(super) fn step_of(coefficients: &[u64]) -> u64 {
    coefficients.iter().fold(0, |g, &c| gcd(g, c)).max(1)
}

impl Program {
    /// The step between two objective values of integer points: the greatest common divisor
    /// of the objective's nonzero coefficients (1 when all are zero).
    pub fn step(&self) -> u64 {
        step_of(&self.objective)
    }

    /// Solve with the chosen backend: microlp directly (the step cut) or through good_lp.
    /// `integer`: every variable integer (else the linear relaxation). `warm`: a feasible
    /// point to start from, one value per variable.
    pub fn solve(
        &self,
        integer: bool,
        warm: Option<&[f64]>,
        limits: Limits,
    ) -> Result<Solved, ProgramError> {
        match limits.backend {
            Backend::Microlp => self.solve_microlp(integer, warm, limits.per_phase),
            #[cfg(feature = "highs")]
            Backend::Highs => self.solve_good_lp(integer, warm, limits),
        }
    }

    /// Solve with microlp directly. The objective is scaled so that every value of it lies
    /// in [0, 1), where microlp's pruning slack is absolute; the slack is nine tenths of one
    /// objective step, so a node is cut exactly when it cannot improve on the best answer by a
    /// whole step (the tenth left over is far above the simplex's rounding noise).
    pub fn solve_microlp(
        &self,
        integer: bool,
        warm: Option<&[f64]>,
        limit: Duration,
    ) -> Result<Solved, ProgramError> {
        use microlp::{ComparisonOp, Error, OptimizationDirection, Problem, SolveOptions};
        let step = self.step() as f64;
        let most: f64 = self
            .objective
            .iter()
            .zip(&self.upper)
            .map(|(&c, &u)| c as f64 * f64::from(u))
            .sum();
        // A power of two times the step, above the largest objective value.
        let scale = step * ((most / step) + 2.0).log2().ceil().exp2();
        let mut p = Problem::new(OptimizationDirection::Minimize);
        let vars: Vec<microlp::Variable> = self
            .objective
            .iter()
            .zip(&self.upper)
            .map(|(&c, &u)| {
                let c = c as f64 / scale;
                if integer {
                    p.add_integer_var(c, (0, i32::try_from(u).unwrap_or(i32::MAX)))
                } else {
                    p.add_var(c, (0.0, f64::from(u)))
                }
            })
            .collect();
        for row in &self.rows {
            let terms: Vec<(microlp::Variable, f64)> =
                row.terms.iter().map(|&(j, a)| (vars[j], a)).collect();
            let op = match row.op {
                Op::Le => ComparisonOp::Le,
                Op::Eq => ComparisonOp::Eq,
            };
            p.add_constraint(terms.as_slice(), op, row.rhs);
        }
        let mut options = SolveOptions::default();
        options.time_limit = Some(limit);
        if integer {
            options.tolerances.prune_epsilon = 0.9 * step / scale;
            if let Some(w) = warm {
                options.warm_start = Some(vars.iter().copied().zip(w.iter().copied()).collect());
            }
        }
        let outcome = match p.solve_with(options) {
            Ok(o) => o,
            Err(Error::Infeasible) => return Err(ProgramError::Infeasible),
            Err(e) => return Err(ProgramError::Solver(e.to_string())),
        };
        let Some(sol) = outcome.solution() else {
            return Err(ProgramError::Solver(
                "the time limit came before any answer".into(),
            ));
        };
        let status = match sol.termination_reason() {
            microlp::TerminationReason::ProvenOptimal => SolutionStatus::Optimal,
            _ => SolutionStatus::TimeLimit,
        };
        Ok((status, vars.iter().map(|&v| sol.var_value(v)).collect()))
    }

    /// Solve through good_lp with the chosen backend, the program as it stands.
    #[cfg(any(test, feature = "highs"))]
    pub fn solve_good_lp(
        &self,
        integer: bool,
        warm: Option<&[f64]>,
        limits: Limits,
    ) -> Result<Solved, ProgramError> {
        use super::allocate::run_backend;
        use good_lp::{
            Expression, ProblemVariables, ResolutionError, Variable, constraint, variable::variable,
        };
        let mut pv = ProblemVariables::new();
        let vars: Vec<Variable> = self
            .upper
            .iter()
            .map(|&u| {
                let v = variable().min(0).max(u);
                pv.add(if integer { v.integer() } else { v })
            })
            .collect();
        let objective: Expression = self
            .objective
            .iter()
            .zip(&vars)
            .map(|(&c, &v)| c as f64 * v)
            .sum();
        let rows: Vec<good_lp::Constraint> = self
            .rows
            .iter()
            .map(|row| {
                let lhs: Expression = row.terms.iter().map(|&(j, a)| a * vars[j]).sum();
                match row.op {
                    Op::Le => constraint!(lhs <= row.rhs),
                    Op::Eq => constraint!(lhs == row.rhs),
                }
            })
            .collect();
        match run_backend(pv.minimise(objective), rows, &vars, warm, limits) {
            Ok(s) => Ok(s),
            Err(ResolutionError::Infeasible) => Err(ProgramError::Infeasible),
            Err(e) => Err(ProgramError::Solver(e.to_string())),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    /// Every integer point of a small program, by enumeration: the least objective.
    fn enumerate(p: &Program) -> Option<u64> {
        let n = p.upper.len();
        let mut point = vec![0u32; n];
        let mut best: Option<u64> = None;
        loop {
            let ok = p.rows.iter().all(|r| {
                let lhs: f64 = r.terms.iter().map(|&(j, a)| a * f64::from(point[j])).sum();
                match r.op {
                    Op::Le => lhs <= r.rhs + 1e-9,
                    Op::Eq => (lhs - r.rhs).abs() <= 1e-9,
                }
            });
            if ok {
                let v: u64 = p
                    .objective
                    .iter()
                    .zip(&point)
                    .map(|(&c, &x)| c * u64::from(x))
                    .sum();
                best = Some(best.map_or(v, |b| b.min(v)));
            }
            let mut i = 0;
            loop {
                if i == n {
                    return best;
                }
                if point[i] < p.upper[i] {
                    point[i] += 1;
                    break;
                }
                point[i] = 0;
                i += 1;
            }
        }
    }

    /// Whether every row holds at `v` rounded to whole numbers, within the bounds.
    fn holds(p: &Program, v: &[f64]) -> bool {
        let x: Vec<f64> = v.iter().map(|a| a.round()).collect();
        x.iter()
            .zip(&p.upper)
            .all(|(&a, &u)| a >= 0.0 && a <= f64::from(u))
            && p.rows.iter().all(|r| {
                let lhs: f64 = r.terms.iter().map(|&(j, a)| a * x[j]).sum();
                match r.op {
                    Op::Le => lhs <= r.rhs + 1e-9,
                    Op::Eq => (lhs - r.rhs).abs() <= 1e-9,
                }
            })
    }

    fn objective_of(p: &Program, v: &[f64]) -> u64 {
        p.objective
            .iter()
            .zip(v)
            .map(|(&c, &x)| c * x.round() as u64)
            .sum()
    }

    #[test]
    fn the_step_is_the_greatest_common_divisor_of_the_objective() {
        let p = Program {
            upper: vec![3, 3, 3, 3],
            objective: vec![180, 0, 450, 200],
            rows: vec![],
        };
        assert_eq!(p.step(), 10);
        assert_eq!(Program::default().step(), 1);
    }

    /// Started from an answer one step above the optimum, the search must still reach the
    /// optimum that the bound touches exactly: a slack of a whole step (or more) would cut
    /// the root and keep the start.
    #[test]
    fn the_step_cut_keeps_an_optimum_one_step_below_the_start() {
        // Cover 7 pieces with packs of 2 and 3 at 20 and 30: minimise 20a + 30b with
        // 2a + 3b >= 7. Every price is 10 per piece, so the relaxation's bound is 70, and
        // (2, 1) reaches it; the start (4, 0) costs 80.
        let p = Program {
            upper: vec![4, 3],
            objective: vec![20, 30],
            rows: vec![Row {
                terms: vec![(0, -2.0), (1, -3.0)],
                op: Op::Le,
                rhs: -7.0,
            }],
        };
        let (status, v) = p
            .solve_microlp(true, Some(&[4.0, 0.0]), Duration::from_secs(5))
            .expect("solves");
        assert!(matches!(status, SolutionStatus::Optimal));
        assert!(holds(&p, &v));
        assert_eq!(objective_of(&p, &v), 70);
        assert_eq!(enumerate(&p), Some(70));
    }

    fn program() -> impl Strategy<Value = Program> {
        // Three to five variables with small bounds, prices that share a factor (so the
        // step is above 1), and two or three covering or packing rows.
        (3usize..=5).prop_flat_map(|n| {
            (
                prop::collection::vec(1u32..=4, n),
                prop::collection::vec(0u64..=6, n),
                1u64..=4,
                prop::collection::vec(
                    (
                        prop::collection::vec(-3i32..=3, n),
                        prop::bool::ANY,
                        -6i32..=8,
                    ),
                    1..=3,
                ),
            )
                .prop_map(|(upper, obj, factor, rows)| Program {
                    upper,
                    objective: obj.into_iter().map(|c| c * factor * 10).collect(),
                    rows: rows
                        .into_iter()
                        .map(|(coef, eq, rhs)| Row {
                            terms: coef
                                .iter()
                                .enumerate()
                                .filter(|(_, a)| **a != 0)
                                .map(|(j, &a)| (j, f64::from(a)))
                                .collect(),
                            op: if eq { Op::Eq } else { Op::Le },
                            rhs: f64::from(rhs),
                        })
                        .collect(),
                })
        })
    }

    proptest! {
        #![proptest_config(ProptestConfig { cases: 300, ..ProptestConfig::default() })]

        /// The direct solve with the step cut proves the same optimum as enumerating every
        /// integer point, and as good_lp's microlp without the cut.
        #[test]
        fn the_direct_solve_matches_enumeration_and_good_lp(p in program()) {
            let direct = p.solve_microlp(true, None, Duration::from_secs(5));
            let through = p.solve_good_lp(
                true,
                None,
                Limits { backend: Backend::Microlp, per_phase: Duration::from_secs(5) },
            );
            match enumerate(&p) {
                None => {
                    prop_assert!(matches!(direct, Err(ProgramError::Infeasible)));
                    prop_assert!(matches!(through, Err(ProgramError::Infeasible)));
                }
                Some(best) => {
                    let (s, v) = direct.expect("feasible");
                    prop_assert!(matches!(s, SolutionStatus::Optimal));
                    prop_assert!(holds(&p, &v));
                    prop_assert_eq!(objective_of(&p, &v), best);
                    let (s, v) = through.expect("feasible");
                    prop_assert!(matches!(s, SolutionStatus::Optimal));
                    prop_assert_eq!(objective_of(&p, &v), best);
                }
            }
        }
    }
}
