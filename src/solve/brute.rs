//! A plain brute-force reference for the search: list every series/parallel tree over every
//! sequence of stocked pieces (duplicates and all), try every combination of networks in every
//! position, and keep the best. Shares nothing with the search but the request types, the
//! timing factors and the electrical gate; slow on purpose, for small drawers only. The property
//! tests and the benchmark compare the search against it.

use super::admit::{self, Stage};
use super::goal::{Goal, Settings, StageGoal};
use super::judge;
use crate::model::{Kind, Part, Value};
use crate::network::{Combine, Net};
use crate::timing::{Conditions, evaluate_times};
use crate::units::{Farads, Ohms};

/// A network found by the brute force.
#[derive(Debug, Clone)]
struct BNet {
    rows: Vec<usize>,
    value: f64,
    lo: f64,
    hi: f64,
}

/// The best the brute force found: total pieces and error (same definitions as the search).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BruteBest {
    /// Total pieces.
    pub pieces: usize,
    /// Largest relative deviation of a targeted quantity.
    pub error: f64,
}

/// All ordered trees with `n` leaves whose top node is not `not_top` (true = series); leaves are
/// numbered left to right afterwards.
fn trees(n: usize, not_top: Option<bool>) -> Vec<Net> {
    if n == 1 {
        return vec![Net::Piece(0)];
    }
    let mut out = Vec::new();
    for series in [true, false] {
        if not_top == Some(series) {
            continue;
        }
        for comp in compositions(n) {
            let mut acc: Vec<Vec<Net>> = vec![Vec::new()];
            for &k in &comp {
                let subs = trees(k, Some(series));
                acc = acc
                    .iter()
                    .flat_map(|pre| {
                        subs.iter().map(move |s| {
                            let mut v = pre.clone();
                            v.push(s.clone());
                            v
                        })
                    })
                    .collect();
            }
            for ch in acc {
                out.push(if series {
                    Net::Series(ch)
                } else {
                    Net::Parallel(ch)
                });
            }
        }
    }
    out
}

fn compositions(n: usize) -> Vec<Vec<usize>> {
    fn rec(left: usize, max: usize, cur: &mut Vec<usize>, out: &mut Vec<Vec<usize>>) {
        if left == 0 {
            if cur.len() >= 2 {
                out.push(cur.clone());
            }
            return;
        }
        for k in 1..=left.min(max) {
            cur.push(k);
            rec(left - k, max, cur, out);
            cur.pop();
        }
    }
    let mut out = Vec::new();
    rec(n, n - 1, &mut Vec::new(), &mut out);
    out
}

fn number(net: &Net, next: &mut usize) -> Net {
    match net {
        Net::Piece(_) => {
            *next += 1;
            Net::Piece(*next - 1)
        }
        Net::Series(ch) => Net::Series(ch.iter().map(|c| number(c, next)).collect()),
        Net::Parallel(ch) => Net::Parallel(ch.iter().map(|c| number(c, next)).collect()),
    }
}

fn si_value(p: &Part) -> f64 {
    match p.value {
        Value::Resistance(r) => r.si(),
        Value::Capacitance(c) => c.si(),
        Value::None => 0.0,
    }
}

/// Every network of 1..=k pieces over `rows` (indices into `parts`).
fn all_nets(parts: &[Part], rows: &[usize], combine: Combine, k: usize) -> Vec<BNet> {
    let mut out = Vec::new();
    for n in 1..=k {
        let shapes: Vec<Net> = trees(n, None).iter().map(|t| number(t, &mut 0)).collect();
        let mut seq = vec![0usize; n];
        if rows.is_empty() {
            break;
        }
        'seqs: loop {
            let chosen: Vec<usize> = seq.iter().map(|&i| rows[i]).collect();
            let ok = chosen
                .iter()
                .all(|r| chosen.iter().filter(|x| *x == r).count() as i64 <= parts[*r].available());
            if ok {
                let v: Vec<f64> = chosen.iter().map(|&r| si_value(&parts[r])).collect();
                let lo: Vec<f64> = chosen
                    .iter()
                    .map(|&r| si_value(&parts[r]) * parts[r].tolerance.factors().0)
                    .collect();
                let hi: Vec<f64> = chosen
                    .iter()
                    .map(|&r| si_value(&parts[r]) * parts[r].tolerance.factors().1)
                    .collect();
                for s in &shapes {
                    out.push(BNet {
                        rows: chosen.clone(),
                        value: s.value(&v, combine),
                        lo: s.value(&lo, combine),
                        hi: s.value(&hi, combine),
                    });
                }
            }
            let mut i = 0;
            loop {
                if i == n {
                    break 'seqs;
                }
                seq[i] += 1;
                if seq[i] < rows.len() {
                    break;
                }
                seq[i] = 0;
                i += 1;
            }
        }
    }
    out
}

fn within(x: f64, t: f64, tol: f64) -> bool {
    super::goal::inside(x, t * (1.0 - tol), t * (1.0 + tol))
}

/// The best (fewest pieces, then smallest error) design by brute force, or None.
pub fn brute_best(parts: &[Part], goal: &Goal, s: &Settings) -> Option<BruteBest> {
    let rrows: Vec<usize> = (0..parts.len())
        .filter(|&i| parts[i].kind == Kind::Resistor && parts[i].available() > 0)
        .collect();
    let crows: Vec<usize> = (0..parts.len())
        .filter(|&i| {
            let p = &parts[i];
            p.kind == Kind::Capacitor
                && p.available() > 0
                && s.cap_techs
                    .as_ref()
                    .is_none_or(|t| t.contains(&p.technology))
                && match (s.min_cap_rating, p.voltage_rating) {
                    (Some(min), Some(r)) => r.si() >= min,
                    _ => true,
                }
        })
        .collect();
    let rnets = all_nets(parts, &rrows, Combine::Resistive, s.max_pieces);
    let cnets = all_nets(parts, &crows, Combine::Capacitive, s.max_pieces);
    let tol = s.tol;
    let mut best: Option<BruteBest> = None;
    let mut consider = |pieces: usize, err: f64| {
        let better = match best {
            None => true,
            Some(b) => pieces < b.pieces || (pieces == b.pieces && err < b.error),
        };
        if better {
            best = Some(BruteBest { pieces, error: err });
        }
    };
    match goal {
        Goal::Value { kind, target } => {
            let target = &target.si();
            let nets = if *kind == Kind::Capacitor {
                &cnets
            } else {
                &rnets
            };
            for n in nets {
                let ok = if s.guarantee {
                    within(n.lo, *target, tol) && within(n.hi, *target, tol)
                } else {
                    within(n.value, *target, tol)
                };
                if ok {
                    consider(n.rows.len(), ((n.value - target) / target).abs());
                }
            }
        }
        Goal::Stages(stages) => {
            // Positions across all stages: resistor slots then the capacitor, per stage.
            let mut kinds = Vec::new();
            for g in stages {
                for name in g.positions() {
                    kinds.push(name.starts_with('C'));
                }
            }
            let mut chosen: Vec<&BNet> = Vec::new();
            enumerate(&kinds, &rnets, &cnets, &mut chosen, &mut |picks| {
                let mut counts: Vec<(usize, i64)> = Vec::new();
                for n in picks {
                    for &r in &n.rows {
                        match counts.iter_mut().find(|(x, _)| *x == r) {
                            Some((_, c)) => *c += 1,
                            None => counts.push((r, 1)),
                        }
                    }
                }
                if counts.iter().any(|(r, c)| *c > parts[*r].available()) {
                    return;
                }
                let mut err: f64 = 0.0;
                let mut at = 0;
                for g in stages {
                    let m = g.positions().len();
                    match stage_error(parts, g, &picks[at..at + m], s) {
                        Some(e) => err = err.max(e),
                        None => return,
                    }
                    at += m;
                }
                consider(picks.iter().map(|n| n.rows.len()).sum(), err);
            });
        }
    }
    best
}

fn enumerate<'n>(
    kinds: &[bool],
    rnets: &'n [BNet],
    cnets: &'n [BNet],
    chosen: &mut Vec<&'n BNet>,
    f: &mut dyn FnMut(&[&'n BNet]),
) {
    if chosen.len() == kinds.len() {
        f(chosen);
        return;
    }
    let list = if kinds[chosen.len()] { cnets } else { rnets };
    for n in list {
        chosen.push(n);
        enumerate(kinds, rnets, cnets, chosen, f);
        chosen.pop();
    }
}

/// The stage's error if it meets its targets and the electrical checks, else None: the
/// evaluator's numbers, judged by the same rule as the search (`judge`).
fn stage_error(parts: &[Part], g: &StageGoal, nets: &[&BNet], s: &Settings) -> Option<f64> {
    let cond: Conditions = s.conditions;
    let ie = s.timer_error(g);
    let c = nets[nets.len() - 1];
    let cap_rows = &c.rows;
    // The network's dielectric, rating and tolerance by the search's own rule.
    let facts = admit::network_cap_facts(cap_rows.iter().map(|&r| &parts[r]))?;
    // 0 nominal, 1 lowest, 2 highest, per position.
    let pick = |n: &BNet, at: u8| match at {
        1 => n.lo,
        2 => n.hi,
        _ => n.value,
    };
    let stage = |at: [u8; 3]| Stage {
        form: g.form(),
        r1: Ohms::from_si(pick(nets[0], at[0])).unwrap_or(Ohms::ZERO),
        r2: (nets.len() == 3).then(|| Ohms::from_si(pick(nets[1], at[1])).unwrap_or(Ohms::ZERO)),
        c: Farads::from_si(pick(c, at[2])).unwrap_or(Farads::ZERO),
        cap: Some(facts),
        conditions: cond,
        steering: crate::timing::Steering::default(),
    };
    let ev = |at: [u8; 3]| evaluate_times(&stage(at), &s.family, &s.model).ok();
    let nominal = ev([0; 3])?;
    let err = judge::judge(g, &nominal, None, s.tol)?;
    if s.guarantee {
        // Every corner: R1 (or R), R2 when the form has one, and C, each lowest or highest.
        let mut evals = Vec::new();
        for mask in 0..8u8 {
            if nets.len() < 3 && mask & 2 != 0 {
                continue;
            }
            evals.push(ev([
                1 + (mask & 1),
                1 + ((mask >> 1) & 1),
                1 + ((mask >> 2) & 1),
            ])?);
        }
        let w = judge::worst_of(&evals, ie)?;
        judge::judge(g, &nominal, Some(&w), s.tol)?;
    }
    admit::admissible(&stage([0; 3]), &s.family).then_some(err)
}
