//! Advice when nothing in stock meets the target: the closest design the stock allows (smallest
//! error at any piece count, within the electrical checks), and one part to buy — a preferred
//! value (IEC 60063 series) that, added to the stock, lets the real search meet the target.
//!
//! The purchase is found from the closest design: for each of its positions, the value that
//! would put the target exactly on nominal with the other positions kept, rounded to the two
//! nearest preferred values; each is tried by re-running the full search with that part added.
//! When there is no closest design, the target value itself (value search) or nothing is tried.
//! Pure: no I/O.

use super::goal::{Design, Goal, Rank, Settings, SolveError, StageGoal};
use super::search::{solve, stage_factors};
use crate::model::{Kind, Part, Technology, Value};
use crate::network::Op;
use crate::units::eseries::Series;
use crate::units::{Farads, Ohms, Tolerance, Volts};
use serde::Serialize;
use std::time::{Duration, Instant};

/// One part to buy and the design it makes possible.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Purchase {
    /// Resistor or capacitor.
    pub kind: Kind,
    /// The preferred value, SI.
    pub value: f64,
    /// The series it was taken from.
    pub series: Series,
    /// How many pieces of it to buy: exactly what `design` uses, and the search was re-run
    /// with exactly that many in stock.
    pub pieces: usize,
    /// The design with it (its rows index the parts with the purchase appended last).
    pub design: Design,
}

/// What to tell the user when nothing fits.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Advice {
    /// The closest design from stock, if any passes the electrical checks.
    pub closest: Option<Design>,
    /// One purchase that fixes it, if one was found.
    pub purchase: Option<Purchase>,
    /// The error of the closest design when it was too far off to offer as a design (above
    /// [`FAR_OFF`]): the target is out of this stock's reach.
    pub far_off: Option<f64>,
}

/// A "closest design" further off than this (relative) is no design: it is not offered, and
/// the answer says the target is out of the stock's reach instead (common practice).
pub const FAR_OFF: f64 = 0.5;

/// The preferred values of `series` nearest below and above `x` (one if `x` is one of them).
pub fn neighbours(series: Series, x: f64) -> Vec<f64> {
    if !(x.is_finite() && x > 0.0) {
        return Vec::new();
    }
    let decade = x.log10().floor() as i32;
    let mut vals: Vec<f64> = (decade - 1..=decade + 1)
        .flat_map(|d| {
            series
                .mantissas()
                .into_iter()
                .map(move |m| f64::from(m) * 10f64.powi(d - 2))
        })
        .collect();
    vals.sort_by(f64::total_cmp);
    let below = vals.iter().rev().find(|v| **v <= x * (1.0 + 1e-9)).copied();
    let above = vals.iter().find(|v| **v >= x * (1.0 - 1e-9)).copied();
    let mut out: Vec<f64> = below.into_iter().chain(above).collect();
    out.dedup_by(|a, b| (*a - *b).abs() <= 1e-9 * *b);
    out
}

/// Closest design and a single purchase, for a goal the stock cannot meet.
pub fn advise(
    parts: &[Part],
    goal: &Goal,
    s: &Settings,
    series: Series,
) -> Result<Advice, SolveError> {
    // One budget for all the advice: the search's own time limit, at most five seconds.
    let budget = s
        .time_limit
        .unwrap_or(Duration::from_secs(10))
        .min(Duration::from_secs(5));
    let end = Instant::now() + budget;
    let left = || Some(end.saturating_duration_since(Instant::now()));
    let short = left();
    let closest_settings = Settings {
        tol: 0.999,
        rank: Rank::SmallestError,
        alternatives: 1,
        guarantee: false,
        time_limit: short,
        ..s.clone()
    };
    let closest = solve(parts, goal, &closest_settings)?
        .designs
        .into_iter()
        .next();
    let mut tries: Vec<(Kind, f64)> = Vec::new();
    match (goal, &closest) {
        (Goal::Value { kind, target }, _) => {
            // The value itself, and the complement of each stocked value in either combination.
            let target = &target.si();
            let mut ideals = vec![*target];
            for p in parts
                .iter()
                .filter(|p| p.kind == *kind && p.available() > 0)
            {
                let v = match p.value {
                    Value::Resistance(r) => r.si(),
                    Value::Capacitance(c) => c.si(),
                    Value::None => continue,
                };
                ideals.push(Op::Add.invert(*target, v));
                ideals.push(Op::Recip.invert(*target, v));
            }
            // Several equal pieces of one bought value: n in series or n in parallel.
            for n in 2..=s.max_pieces {
                let n = n as f64;
                ideals.push(*target / n);
                ideals.push(*target * n);
            }
            for x in ideals {
                tries.extend(neighbours(series, x).into_iter().map(|v| (*kind, v)));
            }
        }
        (Goal::Stages(stages), Some(d)) => {
            for (si, g) in stages.iter().enumerate() {
                let vals: Vec<f64> = d
                    .positions
                    .iter()
                    .filter(|p| p.stage == si)
                    .map(|p| p.value)
                    .collect();
                let (f, _) = stage_factors(g, s)?;
                for (slot, ideal) in ideal_values(g, &f, &vals).into_iter().enumerate() {
                    let kind = if slot + 1 == vals.len() {
                        Kind::Capacitor
                    } else {
                        Kind::Resistor
                    };
                    tries.extend(neighbours(series, ideal).into_iter().map(|v| (kind, v)));
                }
            }
        }
        (Goal::Stages(_), None) => {}
    }
    tries.sort_by(|a, b| {
        (a.0, a.1)
            .partial_cmp(&(b.0, b.1))
            .unwrap_or(std::cmp::Ordering::Equal)
    });
    tries.dedup_by(|a, b| a.0 == b.0 && (a.1 - b.1).abs() <= 1e-9 * b.1);
    let mut best: Option<Purchase> = None;
    let quick = Settings {
        alternatives: 1,
        time_limit: short,
        ..s.clone()
    };
    for (kind, v) in tries {
        if Instant::now() >= end {
            break;
        }
        let quick = Settings {
            time_limit: left(),
            ..quick.clone()
        };
        // Enough of it for every position at most pieces each; then exactly as many as the
        // design uses, re-checked with exactly that many in stock.
        let most = s.max_pieces * positions(goal);
        let Some((d, n)) = with_bought(parts, goal, &quick, kind, v, most)? else {
            continue;
        };
        let better = best
            .as_ref()
            .is_none_or(|b| (d.pieces, d.error, n) < (b.design.pieces, b.design.error, b.pieces));
        if better {
            best = Some(Purchase {
                kind,
                value: v,
                series,
                pieces: n,
                design: d,
            });
        }
    }
    let far_off = closest.as_ref().map(|d| d.error).filter(|&e| e > FAR_OFF);
    Ok(Advice {
        closest: closest.filter(|d| d.error <= FAR_OFF),
        purchase: best,
        far_off,
    })
}

/// Positions of a goal (one for a value).
fn positions(goal: &Goal) -> usize {
    match goal {
        Goal::Value { .. } => 1,
        Goal::Stages(st) => st.iter().map(|g| g.positions().len()).sum(),
    }
}

/// The best design with `most` pieces of value `v` bought, cut down to exactly the pieces it
/// uses: the search is re-run with that many until the count stops falling. `None` when even
/// `most` pieces do not help.
fn with_bought(
    parts: &[Part],
    goal: &Goal,
    s: &Settings,
    kind: Kind,
    v: f64,
    most: usize,
) -> Result<Option<(Design, usize)>, SolveError> {
    let row = parts.len();
    let mut qty = most.max(1);
    let mut last: Option<(Design, usize)> = None;
    loop {
        let mut with = parts.to_vec();
        let mut part = bought(kind, v, s);
        part.quantity = i64::try_from(qty).unwrap_or(i64::MAX);
        with.push(part);
        let out = solve(&with, goal, s)?;
        let Some(d) = out.designs.into_iter().next() else {
            // Fewer pieces found nothing (a time limit): keep the last checked answer.
            return Ok(last);
        };
        let used = d
            .positions
            .iter()
            .flat_map(|p| &p.rows)
            .filter(|&&r| r == row)
            .count();
        if used == 0 {
            // The design does not use the purchase at all (cannot happen when the stock alone
            // meets nothing); offer nothing rather than a purchase that is not needed.
            return Ok(None);
        }
        if used == qty {
            return Ok(Some((d, used)));
        }
        last = Some((d, used));
        qty = used;
    }
}

/// A part as bought: resistors 1 % metal film, capacitors 5 % film rated well above the supply.
fn bought(kind: Kind, v: f64, s: &Settings) -> Part {
    let (value, tol, tech) = match kind {
        Kind::Capacitor => (
            Value::Capacitance(Farads::from_si(v).unwrap_or(Farads::ZERO)),
            5.0,
            Technology::Film,
        ),
        _ => (
            Value::Resistance(Ohms::from_si(v).unwrap_or(Ohms::ZERO)),
            1.0,
            Technology::MetalFilm,
        ),
    };
    let rating = s.min_cap_rating.unwrap_or(0.0).max(50.0);
    Part {
        id: -1,
        kind,
        value,
        tolerance: Tolerance::symmetric_percent(tol).unwrap_or(Tolerance {
            minus: crate::units::Ratio::ZERO,
            plus: crate::units::Ratio::ZERO,
        }),
        technology: tech,
        voltage_rating: (kind == Kind::Capacitor)
            .then(|| Volts::from_si(rating))
            .flatten(),
        power_rating: None,
        package: String::new(),
        bin: "(to buy)".into(),
        quantity: 4,
        held: 0,
        low_stock: None,
        note: String::new(),
    }
}

/// For each position (stage order: resistors, then the capacitor), the value that puts the
/// stage's main target on nominal with the other positions kept.
fn ideal_values(g: &StageGoal, f: &crate::timing::Factors, v: &[f64]) -> Vec<f64> {
    let get = |i: usize| v.get(i).copied().unwrap_or(f64::NAN);
    match *g {
        StageGoal::Pulse { width } => {
            let width = width.si();
            let k = f.one_shot;
            vec![width / (k * get(1)), width / (k * get(0))]
        }
        StageGoal::Square { period } => {
            let period = period.si();
            let k = f.square_high + f.square_low;
            vec![period / (k * get(1)), period / (k * get(0))]
        }
        StageGoal::Steered { high, low } => {
            let (high, low) = (high.si(), low.si());
            let (kh, kl) = (f.steered_charge, f.steered_discharge);
            let c = get(2);
            vec![
                high / (kh * c),
                low / (kl * c),
                (high / (kh * get(0)) * low / (kl * get(1))).sqrt(),
            ]
        }
        StageGoal::Astable { period, .. } => {
            let period = period.si();
            let (kc, ks) = (f.charge, f.charge + f.discharge);
            let (r1, r2, c) = (get(0), get(1), get(2));
            vec![
                (period / c - ks * r2) / kc,
                (period / c - kc * r1) / ks,
                period / (kc * r1 + ks * r2),
            ]
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn neighbours_in_e24() {
        // IEC 60063 E24 holds 6.2 and 6.8 around 6.5 kΩ; 4.7 kΩ is itself a member.
        let n = neighbours(Series::E24, 6500.0);
        assert_eq!(n.len(), 2);
        assert!((n[0] - 6200.0).abs() < 1e-6 && (n[1] - 6800.0).abs() < 1e-6);
        let n = neighbours(Series::E24, 4700.0);
        assert_eq!(n.len(), 1);
        assert!((n[0] - 4700.0).abs() < 1e-6);
    }
}
