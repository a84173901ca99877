//! The exact fewest-pieces search for one design (a value, one stage, or two stages sharing
//! stock). Pure: takes a snapshot of parts, returns ranked designs; no I/O.
//!
//! Method: total piece counts are tried in increasing order; for each count, every way of
//! sharing the pieces among the positions. Within one sharing, the capacitor network is walked
//! first; the target and the current error bound give the window of resistance each resistor
//! position must lie in, and the pool walk (`network::pool`) finds exactly the resistor networks
//! in that window (binary search over sorted single and pair lists, meet in the middle). The
//! best `alternatives` designs so far bound the error, so windows narrow as the search goes
//! (branch and bound). Stock counts are shared across all positions through usage vectors.
//! Every candidate that would enter the ranking passes the electrical checks
//! ([`admissible`](super::admit::admissible)) first.

use super::admit::{self, CapFacts, Family, Stage};
use super::goal::{
    Design, Duty, Goal, Outcome, Position, Quantity, Rank, Settings, SolveError, StageGoal,
    StageReport, inside, no_worse,
};
use super::judge::{self, Worst};
use crate::model::{Kind, Part, Technology, Value};
use crate::network::{Cand, Combine, Item, Pool, Step};
use crate::timing::{Conditions, Evaluation, Factors, Form, evaluate, evaluate_times};
use crate::units::{Farads, Ohms, Volts};
use std::cmp::Ordering;
use std::collections::BTreeMap;
use std::time::Instant;

/// Values in the reasons the search gives at once, three significant figures.
fn ohms(x: f64) -> String {
    crate::units::format_sig(x, 3, "Ω")
}
fn farads(x: f64) -> String {
    crate::units::format_sig(x, 3, "F")
}
/// A window's half-width as a percentage, `±1 %`, in plain decimals however narrow
/// (`±0.00001 %`, never scientific notation).
fn window(tol: f64) -> String {
    format!("±{} %", crate::units::decimal_text(tol * 100.0, 3))
}
/// A time in the units people use (`1 h`, not `3.6 ks`).
fn secs(x: f64) -> String {
    crate::units::Seconds::from_si(x).map_or_else(
        || crate::units::format_sig(x, 3, "s"),
        |t| crate::units::time_text(t, 3),
    )
}

/// Why a goal lies beyond what the circuit form or the timer family can do at all, if it does:
/// no part could meet it, so the search answers at once instead of refusing every candidate.
pub fn out_of_reach(goal: &Goal, family: &Family, tol: f64) -> Option<String> {
    let Goal::Stages(stages) = goal else {
        return None;
    };
    // The classic astable charges through R1+R2 and discharges through R2 alone, so its high
    // time is always the longer (DESIGN physics table; common practice).
    let low_duty = stages.iter().any(|s| match *s {
        StageGoal::Astable {
            duty: Duty::Window(w),
            ..
        } => w.si().1 <= 0.5,
        _ => false,
    });
    if low_duty {
        return Some(
            "a classic astable's duty is always above 50 % (it charges through R1 + R2 and \
             discharges through R2 alone); for a lower duty use `onhand find steered --high … --low …`"
                .to_string(),
        );
    }
    let limit = family.max_freq.value;
    stages.iter().find_map(|s| {
        let period = s.period()?.si();
        // Even the slow edge of the window is faster than the family allows.
        let fastest_needed = 1.0 / (period * (1.0 + tol));
        (fastest_needed > limit).then(|| {
            format!(
                "{} is above the {} family's practical limit of {} ({}); try --family cmos, or \
                 override the figure in `onhand check` with --set max_freq=…",
                crate::units::format_sig(1.0 / period, 4, "Hz"),
                family.name,
                crate::units::format_sig(limit, 3, "Hz"),
                family.max_freq.provenance.label()
            )
        })
    })
}

/// With `guarantee`, why no design can have its worst case inside the window, if none can: a
/// network of parts each at least ±t is itself at least ±t (series and parallel both keep the
/// smallest relative spread), and a time multiplies a resistance, a capacitance and the chip's
/// own error. When even the tightest stocked parts spread wider than the window, the answer
/// comes at once.
pub fn guarantee_out_of_reach(parts: &[Part], goal: &Goal, s: &Settings) -> Option<String> {
    if !s.guarantee {
        return None;
    }
    let tightest = |kind: Kind| -> Option<f64> {
        parts
            .iter()
            .filter(|p| p.kind == kind && p.available() > 0)
            .filter(|p| {
                kind != Kind::Capacitor
                    || s.cap_techs
                        .as_ref()
                        .is_none_or(|t| t.contains(&p.technology))
            })
            .map(|p| {
                let (lo, hi) = p.tolerance.factors();
                hi / lo
            })
            .fold(None, |a: Option<f64>, x| Some(a.map_or(x, |a| a.min(x))))
    };
    let allowed = (1.0 + s.tol) / (1.0 - s.tol);
    let pct = |x: f64| format!("±{:.2} %", (x - 1.0) / (x + 1.0) * 100.0);
    let (spread, what) = match goal {
        Goal::Value { kind, .. } => (tightest(*kind)?, "the tightest stocked part"),
        Goal::Stages(stages) => {
            let chip = stages
                .iter()
                .map(|g| stage_factors(g, s).map_or(0.0, |(_, ie)| ie))
                .fold(0.0, f64::max);
            // The chip's own error alone: no part, however tight, narrows it.
            if (1.0 + chip) / (1.0 - chip) > allowed * (1.0 + super::goal::ROUNDING) {
                let (figure, form) = if stages
                    .iter()
                    .any(|g| matches!(g, StageGoal::Pulse { .. }) && s.timer_error(g) >= chip)
                {
                    (&s.family.error_one_shot, "a one-shot")
                } else {
                    (&s.family.error_astable, "an astable")
                };
                let drift = chip - figure.value;
                let drift = if drift > 1e-12 {
                    format!(" plus {}", s.excursion.drift_text(drift))
                } else {
                    String::new()
                };
                return Some(format!(
                    "--guarantee needs the worst case within {}, but the {} family's own error for {form} is ±{}: its initial error ±{} ({} figure, {}){drift}, before any part's tolerance. No stock can guarantee this window; widen --within, or drop --guarantee to design for the model band alone",
                    pct(allowed),
                    s.family.name,
                    crate::units::percent_text(chip, 3),
                    crate::units::percent_text(figure.value, 3),
                    figure.kind.label(),
                    figure.provenance.label()
                ));
            }
            let r = tightest(Kind::Resistor).unwrap_or(1.0);
            let c = tightest(Kind::Capacitor).unwrap_or(1.0);
            (
                r * c * (1.0 + chip) / (1.0 - chip),
                "the tightest stocked resistor and capacitor with the chip's own error",
            )
        }
    };
    (spread > allowed * (1.0 + super::goal::ROUNDING)).then(|| {
        format!(
            "--guarantee needs the worst case within {}, but {what} already spread {}",
            pct(allowed),
            pct(spread)
        )
    })
}

/// How far beyond the stock's bounds a time must lie before [`stock_out_of_reach`] calls it out
/// of reach: the bounds use the closed-form factors, and the real-part effects (output drop,
/// saturation, bias currents, DC-bias loss) move a time by far less than this factor of 2.
const REACH_MARGIN: f64 = 2.0;

/// Why the stock cannot make a stage's time at all, if it cannot: every network of at most
/// `max_pieces` resistors lies between the smallest pieces in parallel and the largest in series
/// (capacitors the other way round), so every time lies between the form's factor times the
/// smallest and the largest R×C. A target more than [`REACH_MARGIN`] beyond either end is out of
/// reach, and the answer comes at once with the reason instead of a "closest design" far off.
pub fn stock_out_of_reach(parts: &[Part], goal: &Goal, s: &Settings) -> Option<String> {
    let Goal::Stages(stages) = goal else {
        return None;
    };
    let k = s.max_pieces.max(1);
    // The free pieces of a kind, smallest first, one entry per piece (at most k of each end are
    // needed, so the counts are capped at k).
    let pieces = |resistive: bool, any_tech: bool| -> Vec<f64> {
        let mut v: Vec<f64> = Vec::new();
        for p in parts.iter().filter(|p| p.available() > 0) {
            let x = match p.value {
                Value::Resistance(r) if resistive => r.si(),
                Value::Capacitance(c) if !resistive => {
                    let tech_ok = any_tech
                        || s.cap_techs
                            .as_ref()
                            .is_none_or(|t| t.contains(&p.technology));
                    let rating_ok = match (s.min_cap_rating, p.voltage_rating) {
                        (Some(min), Some(v)) => v.si() >= min,
                        _ => true,
                    };
                    if !(tech_ok && rating_ok) {
                        continue;
                    }
                    c.si()
                }
                _ => continue,
            };
            if x > 0.0 && x.is_finite() {
                let n = usize::try_from(p.available()).unwrap_or(k).min(k);
                v.extend(std::iter::repeat_n(x, n));
            }
        }
        v.sort_by(f64::total_cmp);
        v
    };
    let rs = pieces(true, false);
    let cs = pieces(false, false);
    // Every technology: whether the ones left out (electrolytics for timing) would reach.
    let cs_any = pieces(false, true);
    if rs.is_empty() || cs.is_empty() {
        return None;
    }
    let sum = |v: &[f64]| v.iter().sum::<f64>();
    let inv_sum = |v: &[f64]| 1.0 / v.iter().map(|x| 1.0 / x).sum::<f64>();
    let top = |v: &[f64]| v[v.len().saturating_sub(k)..].to_vec();
    let bottom = |v: &[f64]| v[..k.min(v.len())].to_vec();
    let (r_max, c_max) = (sum(&top(&rs)), sum(&top(&cs)));
    let c_max_any = sum(&top(&cs_any));
    let (r_min, c_min) = (inv_sum(&bottom(&rs)), inv_sum(&bottom(&cs)));
    stages.iter().find_map(|g| {
        let (f, _) = stage_factors(g, s).ok()?;
        // The time targeted and its factor per R×C; the astable's two resistors each lie in
        // [r_min, r_max], so its period lies in (2·charge + discharge)·R·C of those bounds.
        let (what, target, per_rc) = match *g {
            StageGoal::Pulse { width } => ("a pulse", width.si(), f.one_shot),
            StageGoal::Astable { period, .. } => {
                ("a period", period.si(), 2.0 * f.charge + f.discharge)
            }
            StageGoal::Steered { high, low } => (
                "a period",
                high.si() + low.si(),
                f.steered_charge + f.steered_discharge,
            ),
            StageGoal::Square { period } => ("a period", period.si(), f.square_high + f.square_low),
        };
        let longest = per_rc * r_max * c_max;
        let shortest = per_rc * r_min * c_min;
        if target * (1.0 - s.tol) > longest * REACH_MARGIN {
            Some(format!(
                "{what} {} is out of this stock's reach: the largest R×C it reaches with at \
                 most {k} pieces per position is {} × {} (largest pieces in series and in \
                 parallel), about {} at most; a larger capacitor or resistor, or a counter after \
                 the timer, is needed{}",
                secs(target),
                ohms(r_max),
                farads(c_max),
                secs(longest),
                if target * (1.0 - s.tol) > per_rc * r_max * c_max_any * REACH_MARGIN {
                    ""
                } else {
                    ". The stock's electrolytic capacitors were left out (leaky, wide \
                     tolerance); allow them with --tech film,c0g,x7r,electrolytic if the timing \
                     can live with it"
                }
            ))
        } else if target * (1.0 + s.tol) * REACH_MARGIN < shortest {
            Some(format!(
                "{what} {} is out of this stock's reach: the smallest R×C it reaches with at \
                 most {k} pieces per position is {} × {} (smallest pieces in parallel and in \
                 series), about {} at least; a smaller capacitor or resistor is needed",
                secs(target),
                ohms(r_min),
                farads(c_min),
                secs(shortest)
            ))
        } else {
            None
        }
    })
}

/// Why the model band alone rules out every design the stock can build, if it does: the
/// pin-bias band of a large charging resistance and the DC-bias loss of a class-2 ceramic each
/// widen a time's band by themselves, whatever the parts' tolerances. Above the charge limit of
/// [`plan_stage`] (and, for an astable, the discharge limit) no resistance can be accepted, and
/// a capacitor whose own DC-bias loss outgrows the window can time nothing; when what remains
/// cannot reach the target time, no design can be accepted and the answer comes at once with
/// the reason. Only said when the unlimited stock would reach the time (else it is the stock's
/// reach, not the model band, that falls short).
pub fn model_band_out_of_reach(parts: &[Part], goal: &Goal, s: &Settings) -> Option<String> {
    let Goal::Stages(stages) = goal else {
        return None;
    };
    if !(s.model.bias_currents || s.model.dc_bias) || validate(goal, s).is_err() {
        return None;
    }
    let k = s.max_pieces.max(1);
    let free = |p: &&Part| p.available() > 0;
    // Resistor pieces, one entry per piece (at most k of a row matter).
    let mut rs: Vec<f64> = Vec::new();
    for p in parts.iter().filter(free) {
        if let (Kind::Resistor, Value::Resistance(r)) = (p.kind, p.value) {
            let n = usize::try_from(p.available()).unwrap_or(k).min(k);
            rs.extend(std::iter::repeat_n(r.si(), n));
        }
    }
    // The capacitors the search may use (the same filters as the search's own).
    let caps: Vec<(&Part, f64)> = parts
        .iter()
        .filter(free)
        .filter_map(|p| match (p.kind, p.value) {
            (Kind::Capacitor, Value::Capacitance(c)) => Some((p, c.si())),
            _ => None,
        })
        .filter(|(p, _)| {
            s.cap_techs
                .as_ref()
                .is_none_or(|t| t.contains(&p.technology))
        })
        .filter(|(p, _)| match (s.min_cap_rating, p.voltage_rating) {
            (Some(min), Some(v)) => v.si() >= min,
            _ => true,
        })
        .collect();
    rs.retain(|x| *x > 0.0 && x.is_finite());
    if rs.is_empty() || caps.is_empty() {
        return None;
    }
    rs.sort_by(f64::total_cmp);
    let top_sum = |v: &[f64]| v[v.len().saturating_sub(k)..].iter().sum::<f64>();
    let r_ser = top_sum(&rs);
    let r_reach = rs[rs.len() - 1] * k as f64;
    let vcc = s.conditions.vcc.si();
    // A network's DC-bias loss follows its least suitable dielectric and its lowest rating (the
    // supply where one is unknown), so a network holding a class-2 piece loses at least the
    // X7R figure at the larger of that piece's rating and (if any rating is unknown) the supply;
    // a dielectric ranked below class 2 (another technology, a tantalum or an electrolytic)
    // would name the network, and then nothing is ruled out by the loss.
    let masking = caps.iter().any(|(p, _)| {
        !matches!(
            p.technology,
            Technology::C0g | Technology::Film | Technology::X7r | Technology::Y5v
        )
    });
    let unknown = caps.iter().any(|(p, _)| p.voltage_rating.is_none());
    let least_loss = |p: &Part, vu: f64| -> f64 {
        if masking || !s.model.dc_bias || !matches!(p.technology, Technology::X7r | Technology::Y5v)
        {
            return 0.0;
        }
        let rating = match p.voltage_rating {
            None => vcc,
            Some(v) if unknown => v.si().max(vcc),
            Some(v) => v.si(),
        };
        if rating <= 0.0 {
            return crate::timing::evaluate::DC_BIAS_LOSS_X7R;
        }
        crate::timing::evaluate::DC_BIAS_LOSS_X7R * (vu / rating).clamp(0.0, 1.0)
    };
    stages.iter().find_map(|g| {
        let plan = plan_stage(g, s, r_reach).ok()?;
        let mut cs: Vec<f64> = Vec::new();
        let mut lost: Vec<&'static str> = Vec::new();
        for &(p, c) in &caps {
            if least_loss(p, plan.vu) <= plan.max_loss {
                let n = usize::try_from(p.available()).unwrap_or(k).min(k);
                cs.extend(std::iter::repeat_n(c, n));
            } else if !lost.contains(&p.technology.label()) {
                lost.push(p.technology.label());
            }
        }
        cs.sort_by(f64::total_cmp);
        let c_all: Vec<f64> = {
            let mut v: Vec<f64> = caps
                .iter()
                .flat_map(|&(p, c)| {
                    std::iter::repeat_n(c, usize::try_from(p.available()).unwrap_or(k).min(k))
                })
                .collect();
            v.sort_by(f64::total_cmp);
            v
        };
        let c_par = top_sum(&cs);
        let c_par_all = top_sum(&c_all);
        let f = plan.f;
        let spread = plan.g;
        let up = move |x: f64| x * spread;
        // The longest nominal time with resistances up to (r, r2) and capacitance c; only the
        // one-shot and the classic astable have charge limits, other forms only the loss.
        type Longest = Box<dyn Fn(f64, f64, f64) -> f64>;
        let (what, target, longest): (&str, f64, Longest) = match *g {
            StageGoal::Pulse { width } => (
                "width",
                width.si(),
                Box::new(move |r, _, c| up(f.one_shot) * r * c),
            ),
            StageGoal::Astable { period, .. } => (
                "period",
                period.si(),
                Box::new(move |r, r2, c| (up(f.charge) * r + up(f.discharge) * r2.min(r)) * c),
            ),
            StageGoal::Steered { high, low } => (
                "high time",
                high.min(low).si(),
                Box::new(|_, _, _| f64::INFINITY),
            ),
            StageGoal::Square { period } => {
                ("period", period.si(), Box::new(|_, _, _| f64::INFINITY))
            }
        };
        let (charge_all, r2_all) = match *g {
            StageGoal::Astable { .. } => (2.0 * r_ser, r_ser),
            _ => (r_ser, r_ser),
        };
        let need = target * (1.0 - s.tol) * (1.0 - 1e-6);
        // The stock reaches the time without the model's limits...
        if longest(charge_all, r2_all, c_par_all) < need {
            return None;
        }
        let (r_lim, r2_lim) = (charge_all.min(plan.r_cap), r2_all.min(plan.r2_cap));
        let reach = longest(r_lim, r2_lim, c_par);
        if !cs.is_empty() && reach >= need {
            return None;
        }
        // ...but not within them: say which limits bite.
        let mut why: Vec<String> = Vec::new();
        if plan.r_cap < charge_all {
            why.push(format!(
                "a charging resistance above about {} lets the pin bias current (threshold {}{}; \
                 {}, {}: the {} family's figures) widen the {what}'s band past the window by \
                 itself",
                ohms(plan.r_cap),
                crate::units::format_sig(s.family.threshold_current.value, 3, "A"),
                if matches!(g, StageGoal::Pulse { .. }) {
                    String::new()
                } else {
                    format!(
                        ", trigger {}",
                        crate::units::format_sig(s.family.trigger_current.value, 3, "A")
                    )
                },
                s.family.threshold_current.kind.label(),
                s.family.threshold_current.provenance.label(),
                s.family.name
            ));
        }
        if plan.r2_cap < r2_all {
            why.push(format!(
                "an R2 above about {} never lets the capacitor discharge to the lower threshold \
                 against the trigger pin's current",
                ohms(plan.r2_cap)
            ));
        }
        if !lost.is_empty() {
            why.push(format!(
                "the {} capacitors lose more than {:.1} % of their capacitance under DC bias at \
                 {:.2} V (from memory), which alone widens the band past the window",
                lost.join(" and "),
                plan.max_loss * 100.0,
                plan.vu
            ));
        }
        let rest = if cs.is_empty() {
            "no capacitor is left".to_string()
        } else {
            format!(
                "what is left reaches at most {} × {}, a {what} of about {}, short of {}",
                ohms(r_lim),
                farads(c_par),
                secs(reach),
                secs(target)
            )
        };
        Some(format!(
            "the model band alone is wider than {} for every design this stock can build with at \
             most {k} pieces per position ({}; {rest}); a wider --within, a larger film or C0G \
             capacitor, a CMOS timer (--family cmos), or --ideal for the textbook circuit",
            window(s.tol),
            why.join("; ")
        ))
    })
}

/// Search the stock for the best designs meeting `goal`.
pub fn solve(parts: &[Part], goal: &Goal, settings: &Settings) -> Result<Outcome, SolveError> {
    solve_counted(parts, goal, settings).map(|(out, _)| out)
}

/// What one search walked, for profiling (the benches print it): the networks at each level of
/// the walk, how many candidates passed the screen and went to the evaluator, and how many it
/// accepted.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct Counters {
    /// Capacitor networks walked (those whose DC-bias loss can fit the window).
    pub caps: u64,
    /// Second-resistor networks walked (R2 of an astable, RB of a steered one).
    pub middle: u64,
    /// Last-resistor networks walked (the `networks_seen` of a stage search).
    pub last: u64,
    /// Candidates the screen passed: each is judged by the evaluator.
    pub judged: u64,
    /// Candidates the evaluator accepted.
    pub accepted: u64,
}

impl std::fmt::Display for Counters {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "caps {} middle {} last {} judged {} accepted {}",
            self.caps, self.middle, self.last, self.judged, self.accepted
        )
    }
}

/// [`solve`], with the walk's [`Counters`].
pub fn solve_counted(
    parts: &[Part],
    goal: &Goal,
    settings: &Settings,
) -> Result<(Outcome, Counters), SolveError> {
    let started = Instant::now();
    validate(goal, settings)?;
    if let Some(reason) = out_of_reach(goal, &settings.family, settings.tol) {
        return Ok((
            Outcome {
                designs: Vec::new(),
                complete: true,
                // Proven for every piece count: the target itself is out of reach.
                no_design_below: usize::MAX,
                networks_seen: 0,
                refused: vec![(reason, 1)],
                seconds: started.elapsed().as_secs_f64(),
            },
            Counters::default(),
        ));
    }
    let ctx = Ctx::new(parts, goal, settings)?;
    let mut st = State {
        top: Vec::new(),
        n: settings.alternatives,
        tol: settings.tol,
        rank: settings.rank,
        stop: false,
        picks: Vec::new(),
        seen: 0,
        refused: BTreeMap::new(),
        seq: 0,
        cur_p: 0,
        deadline: settings.time_limit.map(|d| started + d),
        ticks: 0,
        counts: Counters::default(),
    };
    let m = ctx.positions();
    let k = settings.max_pieces;
    // Every piece count below this was searched to the end with nothing found (a proof: while
    // the ranking is empty the error bound is the full tolerance).
    let mut no_design_below = m;
    for p in m..=m * k {
        if st.timed_out() {
            break;
        }
        if settings.rank == Rank::FewestPieces
            && st.top.len() >= st.n
            && st.top.last().is_some_and(|w| w.pieces < p)
        {
            // The ranking is full of designs with fewer pieces: nothing larger can enter.
            break;
        }
        st.cur_p = p;
        for split in compositions(p, m, k) {
            let mut used_r = ctx.rpool.fresh_usage();
            let mut used_c = ctx.cpool.fresh_usage();
            match &ctx.value {
                Some(_) => ctx.walk_value(split[0], &mut used_r, &mut used_c, &mut st),
                None => ctx.walk_stage(0, &split, &mut used_r, &mut used_c, &mut st, 0.0),
            }
            if st.stop {
                break;
            }
        }
        if st.stop {
            break;
        }
        if st.top.is_empty() {
            no_design_below = p + 1;
        }
    }
    let designs = st.top.iter().map(|f| ctx.build(f)).collect::<Vec<_>>();
    let counts = Counters {
        last: st.seen,
        ..st.counts
    };
    Ok((
        Outcome {
            designs,
            complete: !st.stop,
            no_design_below,
            networks_seen: st.seen,
            refused: st
                .refused
                .into_iter()
                .map(|(c, n)| (c.to_string(), n))
                .collect(),
            seconds: started.elapsed().as_secs_f64(),
        },
        counts,
    ))
}

fn validate(goal: &Goal, s: &Settings) -> Result<(), SolveError> {
    let bad = |m: String| Err(SolveError::Invalid(m));
    if !(s.tol > 0.0 && s.tol < 1.0) {
        return bad(format!(
            "tolerance must lie between 0 and 100 %, not {} %",
            s.tol * 100.0
        ));
    }
    if !(1..=4).contains(&s.max_pieces) {
        return bad(format!(
            "pieces per position must be 1 to 4, not {}",
            s.max_pieces
        ));
    }
    if s.alternatives == 0 {
        return bad("ask for at least one design".into());
    }
    let pos = |v: f64, what: &str| -> Result<(), SolveError> {
        if v.is_finite() && v > 0.0 {
            Ok(())
        } else {
            Err(SolveError::Invalid(format!("{what} must be above zero")))
        }
    };
    match goal {
        Goal::Value { kind, target } => {
            if !target.fits(*kind) || *kind == Kind::Diode {
                return bad(format!(
                    "a {kind:?} goal needs a value of its own kind, not {target}"
                ));
            }
            pos(target.si(), "the value")?
        }
        Goal::Stages(stages) => {
            if stages.is_empty() || stages.len() > 2 {
                return bad("a design has one or two stages".into());
            }
            for g in stages {
                match *g {
                    StageGoal::Pulse { width } => pos(width.si(), "the pulse width")?,
                    StageGoal::Square { period } => pos(period.si(), "the period")?,
                    StageGoal::Steered { high, low } => {
                        pos(high.si(), "the high time")?;
                        pos(low.si(), "the low time")?;
                    }
                    StageGoal::Astable { period, duty } => {
                        pos(period.si(), "the period")?;
                        match duty.window_si() {
                            None => {}
                            Some((a, b)) if a > 0.0 && a <= b && b < 1.0 => {}
                            _ => return bad("duty must lie between 0 and 100 %".into()),
                        }
                    }
                }
            }
        }
    }
    Ok(())
}

/// Every way of giving `m` positions 1..=k pieces each, `p` in all.
fn compositions(p: usize, m: usize, k: usize) -> Vec<Vec<usize>> {
    fn rec(left: usize, slots: usize, k: usize, cur: &mut Vec<usize>, out: &mut Vec<Vec<usize>>) {
        if slots == 0 {
            if left == 0 {
                out.push(cur.clone());
            }
            return;
        }
        for n in 1..=k.min(left) {
            if left - n < slots - 1 || left - n > (slots - 1) * k {
                continue;
            }
            cur.push(n);
            rec(left - n, slots - 1, k, cur, out);
            cur.pop();
        }
    }
    let mut out = Vec::new();
    rec(p, m, k, &mut Vec::new(), &mut out);
    out
}

/// The largest ratio of an upper to a lower screening factor (at least 1).
/// The screen's spread for `form`: the largest ratio of upper to lower factor among the paths
/// the form uses. An unbounded upper factor makes the spread unbounded (the screen then keeps
/// every smaller value): dropping it would cut designs the evaluator accepts.
fn spread(lo: &Factors, hi: &Factors, form: Form) -> f64 {
    let pairs: &[(f64, f64)] = match form {
        Form::Monostable => &[(lo.one_shot, hi.one_shot)],
        Form::Astable => &[(lo.charge, hi.charge), (lo.discharge, hi.discharge)],
        Form::Steered => &[
            (lo.steered_charge, hi.steered_charge),
            (lo.steered_discharge, hi.steered_discharge),
        ],
        Form::Square => &[
            (lo.square_high, hi.square_high),
            (lo.square_low, hi.square_low),
        ],
    };
    pairs
        .iter()
        .map(|&(a, b)| if a > 0.0 { b / a } else { f64::INFINITY })
        .fold(1.0, f64::max)
}

/// The largest charging resistance (R for a one-shot, R1 + R2 for an astable) at which a design
/// can still be accepted, capped at `r_max`; other forms get `r_max`.
///
/// The pin bias band runs from no current to the constant pin currents, which draw from (or
/// push into) the capacitor and move the charge more the larger the resistance. The band of the
/// one-shot's width is, by the evaluator itself, `band_hi / band_lo` at R (the capacitance
/// scales every time alike, so it does not matter). For an astable the period's band is at least
/// `h(S) / (S·C·(kc0 + kd0))` wide, with `h(S)` the slowest charge through S = R1 + R2 (the top of
/// the high time's band) and `kc0`, `kd0` the drain-free charge and discharge factors (R2 ≤ S, so
/// the drain-free period is at most `S·C·(kc0 + kd0)`). An accepted band is at most
/// `(1 + tol)/(1 − tol)` wide (with the rounding allowance of `goal::inside`); both widths rise
/// with the resistance, so bisection finds the limit. The evaluator's own numbers are used, so
/// the limit is exact up to the bisection step, which is taken on the generous side.
fn acceptable_charge_limit(template: &Stage, s: &Settings, r_max: f64) -> Result<f64, SolveError> {
    let form = template.form;
    if !s.model.bias_currents || !matches!(form, Form::Monostable | Form::Astable) || s.tol >= 1.0 {
        return Ok(r_max);
    }
    let r = super::goal::ROUNDING;
    let allowed = (1.0 + s.tol) * (1.0 + r) / ((1.0 - s.tol) * (1.0 - r)) * (1.0 + 1e-7);
    let c = 1e-9;
    // The least width the band of the targeted time can have at charging resistance x; None
    // when the evaluator refuses the stage (the capacitor never reaches the threshold).
    let width = |x: f64| -> Option<f64> {
        let mut st = template.clone();
        st.c = Farads::from_si(c).unwrap_or(Farads::ZERO);
        st.cap = None;
        let ohms = |v: f64| Ohms::from_si(v).unwrap_or(Ohms::ZERO);
        match form {
            Form::Monostable => {
                st.r1 = ohms(x);
                let ev = crate::timing::evaluate::evaluate_times(&st, &s.family, &s.model).ok()?;
                Some(ev.high.band_hi / ev.high.band_lo)
            }
            _ => {
                st.r1 = ohms(x / 2.0);
                st.r2 = Some(ohms(x / 2.0));
                let ev = crate::timing::evaluate::evaluate_times(&st, &s.family, &s.model).ok()?;
                let low = ev.low?;
                let (r1, r2) = (st.r1.si(), st.r2.map_or(0.0, |v| v.si()));
                let kc0 = ev.high.nominal / ((r1 + r2) * c);
                let kd0 = low.nominal / (r2 * c);
                Some(ev.high.band_hi / ((r1 + r2) * c * (kc0 + kd0)))
            }
        }
    };
    // A NaN width fails too.
    let fails = |x: f64| {
        width(x).is_none_or(|w| w.partial_cmp(&allowed) != Some(Ordering::Less) && w != allowed)
    };
    if !fails(r_max) {
        return Ok(r_max);
    }
    let r0 = crate::timing::evaluate::SCREEN_R_MIN;
    let (mut ok, mut bad) = (r0, r_max);
    if fails(ok) {
        return Ok(r_max);
    }
    for _ in 0..80 {
        let mid = (ok * bad).sqrt();
        if fails(mid) {
            bad = mid;
        } else {
            ok = mid;
        }
        if bad / ok < 1.0001 {
            break;
        }
    }
    // Ohms are exact to the milliohm: the stage above was built from rounded values, so allow
    // a hair beyond the first failing point.
    Ok(bad * (1.0 + 1e-6))
}

/// The screen of one stage: its nominal factors and spread, and the resistance and capacitor
/// limits beyond which the model band alone rules a design out. `r_max` is the largest
/// resistance a position can reach.
fn plan_stage(g: &StageGoal, s: &Settings, r_max: f64) -> Result<Plan, SolveError> {
    // The evaluator takes the diode and output-drop figures from the model and
    // the family; the conditions carry only the supply and the control pin.
    let cond = s.conditions;
    let (_, ie) = stage_factors(g, s)?;
    let form = g.form();
    let ohms = |v: f64| Ohms::from_si(v.min(1e12)).unwrap_or(Ohms::ZERO);
    let template = Stage {
        form,
        r1: ohms(r_max),
        r2: form.has_r2().then(|| ohms(r_max)),
        c: Farads::from_si(1e-9).unwrap_or(Farads::ZERO),
        cap: None,
        conditions: cond,
        steering: crate::timing::Steering::default(),
    };
    // The astable charges through R1 + R2: the bounds must cover both. Above
    // `acceptable_charge_limit` no design can be accepted, so the screen need
    // not cover it (and must not drop the factors it does cover).
    let reach = if form.has_r2() { 2.0 * r_max } else { r_max };
    let charging = acceptable_charge_limit(&template, s, reach)?;
    // The screen brackets the NOMINAL times only: every accepted design has
    // its nominal inside the window (the band holds the nominal) and is ranked
    // by the nominal's error, so a bracket of the nominal is a superset of the
    // acceptance. The nominal is the evaluation with no pin drain and no DC-bias
    // loss; for the linear paths its factor does not depend on R at all, so the
    // spread stays ~1 however far the bias band reaches. (Bracketing the whole
    // band, as before, made the spread the band's width: a ±1 % target was
    // screened over a window several times as wide, and each extra candidate
    // went to the evaluator.)
    let nominal = nominal_model(&s.model);
    let (f, fh) = crate::timing::factor_bounds_between(
        &template,
        &s.family,
        &nominal,
        crate::timing::evaluate::SCREEN_R_MIN,
        charging,
    )?;
    let (vu, _) = cond.thresholds()?;
    Ok(Plan {
        goal: *g,
        f,
        g: spread(&f, &fh, form),
        cond,
        ie,
        r_cap: if charging < reach {
            charging
        } else {
            f64::INFINITY
        },
        r2_cap: discharge_limit(&template, s, r_max)?,
        max_loss: max_band_loss(s.tol),
        vu,
        band: BandScreen::new(&template, s),
        bias_rules: astable_bias_rules(form, &cond, &s.family),
        c_span: std::cell::OnceCell::new(),
    })
}

/// The model whose evaluation is the nominal of `m`'s: no pin drain and no DC-bias loss (those
/// two effects make only the band; the nominal is the evaluation's first drain, none, unscaled).
fn nominal_model(m: &crate::timing::Model) -> crate::timing::Model {
    crate::timing::Model {
        bias_currents: false,
        dc_bias: false,
        ..*m
    }
}

/// The largest share of capacitance a capacitor network may lose to DC bias in a design that can
/// still be accepted at tolerance `tol`. Every targeted time's band holds both the nominal and
/// the nominal times `1 − loss` (the evaluator scales every drain corner by what is kept), so it
/// is at least `1/(1 − loss)` wide, and an accepted band is at most
/// `(1 + tol)/(1 − tol)` wide (with the rounding allowance of `goal::inside`). A hair generous.
fn max_band_loss(tol: f64) -> f64 {
    let r = super::goal::ROUNDING;
    let keep_min = (1.0 - tol) * (1.0 - r) / ((1.0 + tol) * (1.0 + r));
    ((1.0 - keep_min) * (1.0 + 1e-6) + 1e-12).min(1.0)
}

/// The discharge resistance (R2 of a classic astable) from which the discharge no longer reaches
/// the lower threshold under some pin current the band spans (the trigger current pushed into the
/// capacitor holds it up toward `Vsat + R2·Itr`): the evaluator refuses such a design, so the walk
/// need not offer it. Found by bisection on the evaluator's own discharge path (its upper factor
/// turns infinite there); infinite for other forms or without bias currents.
fn discharge_limit(template: &Stage, s: &Settings, r_max: f64) -> Result<f64, SolveError> {
    if !s.model.bias_currents || template.form != Form::Astable {
        return Ok(f64::INFINITY);
    }
    let fails = |r: f64| -> Result<bool, SolveError> {
        let (_, h) = crate::timing::factor_bounds_between(template, &s.family, &s.model, r, r)?;
        Ok(!h.discharge.is_finite())
    };
    let r0 = crate::timing::evaluate::SCREEN_R_MIN;
    if !fails(r_max)? || fails(r0)? {
        return Ok(f64::INFINITY);
    }
    let (mut ok, mut bad) = (r0, r_max);
    for _ in 0..80 {
        let mid = (ok * bad).sqrt();
        if fails(mid)? {
            bad = mid;
        } else {
            ok = mid;
        }
        if bad / ok < 1.0001 {
            break;
        }
    }
    Ok(bad)
}

/// The window a screened time (closed form with the lower factors) must lie in for the
/// evaluated time to reach `[t(1 − e), t(1 + e)]`: the lower end divided by the spread `g`.
#[inline]
fn swin(t: f64, e: f64, g: f64) -> (f64, f64) {
    (t * (1.0 - e) / g, t * (1.0 + e))
}

/// Distance of the bracket `[x, g·x]` from `t`, relative (0 when it holds `t`).
#[inline]
fn srel(x: f64, g: f64, t: f64) -> f64 {
    if x > t {
        rel(x, t)
    } else if x * g < t {
        rel(x * g, t)
    } else {
        0.0
    }
}

/// A duty bound moved by the spread: odds `d/(1 − d)` multiplied by `m` (`g` or `1/g`).
#[inline]
fn odds_scaled(d: f64, m: f64) -> f64 {
    if d >= 1.0 {
        return d;
    }
    let o = d / (1.0 - d) * m;
    if o.is_infinite() {
        // An unbounded spread: any duty up to 100 % (∞/∞ would be NaN and empty the window).
        return 1.0;
    }
    o / (1.0 + o)
}

/// `|x − t| / t`.
#[inline]
fn rel(x: f64, t: f64) -> f64 {
    ((x - t) / t).abs()
}

/// `[t(1 − e), t(1 + e)]`; empty (lo > hi) for a negative bound.
#[inline]
fn win(t: f64, e: f64) -> (f64, f64) {
    (t * (1.0 - e), t * (1.0 + e))
}

/// Where a network's value is taken: nominal, or at its parts' lowest or highest values.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Corner {
    Nominal,
    Low,
    High,
}

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Which {
    R,
    C,
}

#[derive(Debug, Clone, Copy)]
struct Pick {
    stage: usize,
    slot: usize,
    which: Which,
    cand: Cand,
}

#[derive(Debug, Clone)]
struct Found {
    pieces: usize,
    err: f64,
    tol_sum: f64,
    scarcity: f64,
    seq: u64,
    picks: Vec<Pick>,
}

struct State {
    top: Vec<Found>,
    n: usize,
    tol: f64,
    rank: Rank,
    stop: bool,
    picks: Vec<Pick>,
    seen: u64,
    refused: BTreeMap<&'static str, u64>,
    seq: u64,
    cur_p: usize,
    deadline: Option<Instant>,
    ticks: u32,
    counts: Counters,
}

impl State {
    /// The largest error a new candidate may have and still enter the ranking (ties enter and
    /// are settled by the later keys); negative when nothing can enter.
    fn bound(&self) -> f64 {
        if self.stop {
            return -1.0;
        }
        match self.top.get(self.n.wrapping_sub(1)) {
            Some(w) if self.rank == Rank::FewestPieces && w.pieces < self.cur_p => -1.0,
            Some(w) => w.err.min(self.tol),
            None => self.tol,
        }
    }

    fn order(&self, a: &Found, b: &Found) -> Ordering {
        let rest = || {
            a.tol_sum
                .total_cmp(&b.tol_sum)
                .then(a.scarcity.total_cmp(&b.scarcity))
                .then(a.seq.cmp(&b.seq))
        };
        match self.rank {
            Rank::FewestPieces => a
                .pieces
                .cmp(&b.pieces)
                .then(a.err.total_cmp(&b.err))
                .then_with(rest),
            Rank::SmallestError => a
                .err
                .total_cmp(&b.err)
                .then(a.pieces.cmp(&b.pieces))
                .then_with(rest),
        }
    }

    fn timed_out(&mut self) -> bool {
        // The clock is read on the first call and every 64th after: this runs once per network
        // visited, and reading the clock each time cost about a tenth of the search.
        self.ticks = self.ticks.wrapping_add(1);
        if !self.stop && self.ticks % 64 == 1 && self.deadline.is_some_and(|d| Instant::now() >= d)
        {
            self.stop = true;
        }
        self.stop
    }
}

struct Plan {
    goal: StageGoal,
    /// The screen's lower factors (`timing::factor_bounds`): every time the evaluator reports
    /// lies within `[1, g]` times the closed form with these.
    f: Factors,
    /// The screen's spread: the largest ratio of upper to lower factor (1 when exact).
    g: f64,
    cond: Conditions,
    /// The timer's own initial error for this form.
    ie: f64,
    /// The largest charging resistance (R of a one-shot, R1 + R2 of an astable) at which the
    /// pin-bias band alone still fits the window ([`acceptable_charge_limit`]); beyond it no
    /// design is accepted, so the walk skips it (infinite when there is no such limit).
    r_cap: f64,
    /// The largest discharge resistance (R2 of an astable) at which the discharge still reaches
    /// the lower threshold under every pin current ([`discharge_limit`]; infinite otherwise).
    r2_cap: f64,
    /// The largest share of its capacitance a capacitor network may lose to DC bias and still
    /// have its band fit the window ([`max_band_loss`]).
    max_loss: f64,
    /// The upper threshold (V): the DC bias a timing capacitor sees at most.
    vu: f64,
    /// The classic astable's band corners as a screen on R2 ([`BandScreen`]); None for other
    /// forms, without bias currents, or where the thresholds are not regular.
    band: Option<BandScreen>,
    /// The largest R1 + R2 and the largest R2 the checks' pin-bias rules admit in a classic
    /// astable ([`astable_bias_rules`]; infinite otherwise).
    bias_rules: (f64, f64),
    /// The span of capacitance the band leaves to the walk ([`Ctx::cap_span`]), found on the
    /// first walk of the stage; None inside when it leaves none.
    c_span: std::cell::OnceCell<Option<(f64, f64)>>,
}

/// The largest R1 + R2 and R2 a classic astable may have under the electrical checks' pin-bias
/// Error rules (`timing::checks`, `decide_bias`): the charging current at the upper threshold,
/// `(Vcc − Vu)/(R1 + R2)`, at least `BIAS_RATIO_ERROR` times the threshold-pin current, and the
/// discharge-path current at the lower threshold, `Vl/R2`, at least that many times the
/// trigger-pin current. A hair generous (the checks see values rounded to the milliohm).
/// Infinite for other forms and for a zero figure (no rule).
fn astable_bias_rules(form: Form, cond: &Conditions, family: &Family) -> (f64, f64) {
    let none = (f64::INFINITY, f64::INFINITY);
    if form != Form::Astable {
        return none;
    }
    let Ok((vu, vl)) = cond.thresholds() else {
        return none;
    };
    let ratio = crate::timing::checks::BIAS_RATIO_ERROR;
    let limit = |v: f64, i: f64| {
        if i > 0.0 && v > 0.0 && (v / (ratio * i)).is_finite() {
            v / (ratio * i) * (1.0 + 1e-6) + 1e-3
        } else {
            f64::INFINITY
        }
    };
    (
        limit(cond.vcc.si() - vu, family.threshold_current.value),
        limit(vl, family.trigger_current.value),
    )
}

/// The model band of a classic astable's period as a screen on R2, for one capacitance.
///
/// The evaluator spans the band with a few net pin drains `d` (none first): at each, the high
/// time `H_d(S)` (charging resistance S = R1 + R2) and the low time `L_d(R2)` are `C` times
/// functions of one resistance each, and an accepted design has every corner period
/// `Q_d = H_d + L_d` (per farad) inside the window `Y = T(1 ± tol)/C`, its nominal `Q_0` inside
/// `T(1 ± e)/C` besides (e the ranking's current bound). Facts used (each from the formulas
/// `τ·ln((a − v0)/(a − v1))`, checked by the tests):
/// - every `H_d` rises with S and every `L_d` with R2 (also with the pin currents pushing
///   against or with the capacitor);
/// - on a line of constant nominal `q = k_c·S + k_d·R2`, a drain drawn from the capacitor
///   (`d > 0`: slower charge, faster discharge) makes the deviation `Δ_d = Q_d − Q_0` fall as R2
///   rises, a drain pushed into it (`d < 0`) makes it rise; and at a fixed R2, `Δ_d` rises with
///   q for `d > 0` and falls for `d < 0`.
///
/// So with `P` the drains `≥ 0` and `N` those `≤ 0` (both holding none, `Δ = 0`), and q
/// anywhere in `[q_lo, q_hi]`, an accepted design needs, at its own q:
/// `max_P Δ − min_N Δ ≤ |Y|`, `Q_0 + max_P Δ ≤ Y_hi`, `Q_0 + min_N Δ ≥ Y_lo` (each true for
/// every R2 above a threshold, and taken at the q that makes it easiest: `q_lo`, `q_lo`,
/// `q_hi`), and `max_N Δ − min_P Δ ≤ |Y|`, `Q_0 + min_P Δ ≥ Y_lo`, `Q_0 + max_N Δ ≤ Y_hi`
/// (each true below a threshold; at `q_hi`, `q_hi`, `q_lo`). Bisection on these monotone
/// conditions gives an R2 window outside which no design is accepted; the margins cover the
/// rounding of the values the evaluator is given. The DC-bias loss of a class-2 ceramic only
/// widens the band further, so it is left out (a superset).
struct BandScreen {
    phys: crate::timing::evaluate::Physics,
    /// The band's drains other than none.
    drains: Vec<f64>,
    /// The drain-free factors: `Q_0 = k_c·S + k_d·R2`.
    kc0: f64,
    kd0: f64,
}

/// The spread of the corner deviations at one point: `(min_P, max_P, min_N, max_N)` of
/// `Δ_d` (the drain-free point counts in both as 0), and the drain-free period per farad.
#[derive(Debug, Clone, Copy)]
struct Devs {
    q0: f64,
    p_min: f64,
    p_max: f64,
    n_min: f64,
    n_max: f64,
}

/// The windows [`BandScreen::r2_window`] tests against, per farad: every corner inside
/// `[y_lo, y_hi]`, the nominal inside `[q_lo, q_hi]`.
#[derive(Debug, Clone, Copy)]
struct BandWindow {
    y_lo: f64,
    y_hi: f64,
    q_lo: f64,
    q_hi: f64,
}

impl BandScreen {
    fn new(template: &Stage, s: &Settings) -> Option<Self> {
        if template.form != Form::Astable || !s.model.bias_currents {
            return None;
        }
        let phys = crate::timing::evaluate::Physics::new(template, &s.family, &s.model).ok()?;
        let (kc0, kd0) = phys.astable_factors()?;
        let drains: Vec<f64> = phys
            .band_drains()
            .into_iter()
            .filter(|d| *d != 0.0 && d.is_finite())
            .collect();
        (!drains.is_empty() && kc0 > 0.0 && kd0 > 0.0).then_some(Self {
            phys,
            drains,
            kc0,
            kd0,
        })
    }

    /// The deviations at charging resistance `s` and discharge `r2` (per farad).
    fn devs(&self, s: f64, r2: f64) -> Devs {
        let q0 = self.phys.astable_period_per_farad(s, r2, 0.0);
        let mut v = Devs {
            q0,
            p_min: 0.0,
            p_max: 0.0,
            n_min: 0.0,
            n_max: 0.0,
        };
        for &d in &self.drains {
            let dev = self.phys.astable_period_per_farad(s, r2, d) - q0;
            // A corner that never ends is an infinite deviation (and a NaN one is refused the
            // same way: the evaluator refuses such a design).
            let dev = if dev.is_nan() { f64::INFINITY } else { dev };
            if d > 0.0 {
                v.p_min = v.p_min.min(dev);
                v.p_max = v.p_max.max(dev);
            } else {
                v.n_min = v.n_min.min(dev);
                v.n_max = v.n_max.max(dev);
            }
        }
        v
    }

    /// The point of the line of nominal `q` at discharge resistance `r2`.
    fn on_line(&self, q: f64, r2: f64) -> Devs {
        self.devs((q - self.kd0 * r2) / self.kc0, r2)
    }

    /// Whether R2 passes the conditions that hold for every R2 above a threshold.
    fn above(&self, w: &BandWindow, r2: f64) -> bool {
        let width = w.y_hi - w.y_lo;
        let lo = self.on_line(w.q_lo, r2);
        let hi = self.on_line(w.q_hi, r2);
        lo.p_max - lo.n_min <= width && lo.q0 + lo.p_max <= w.y_hi && hi.q0 + hi.n_min >= w.y_lo
    }

    /// Whether R2 passes the conditions that hold for every R2 below a threshold.
    fn below(&self, w: &BandWindow, r2: f64) -> bool {
        let width = w.y_hi - w.y_lo;
        let lo = self.on_line(w.q_lo, r2);
        let hi = self.on_line(w.q_hi, r2);
        hi.n_max - hi.p_min <= width && hi.q0 + hi.p_min >= w.y_lo && lo.q0 + lo.n_max <= w.y_hi
    }

    /// The windows for capacitances from `c_small` to `c_large` together (the widest of each):
    /// a period `t` within `tol`, ranked within `e`. The evaluator is given the values rounded
    /// to 1 mΩ and 1 fF, and `judge` allows `ROUNDING`: a relative margin for the capacitance
    /// and the allowance, and an absolute one (per farad, ohms) for the resistances.
    fn window(t: f64, tol: f64, e: f64, c_small: f64, c_large: f64) -> BandWindow {
        let rel = 1e-6 + 2e-15 / c_small + 4.0 * super::goal::ROUNDING;
        let abs = 0.05;
        let y_lo = t * (1.0 - tol) / c_large * (1.0 - rel) - abs;
        let y_hi = t * (1.0 + tol) / c_small * (1.0 + rel) + abs;
        BandWindow {
            y_lo,
            y_hi,
            q_lo: (t * (1.0 - e) / c_large * (1.0 - rel) - abs).max(y_lo),
            q_hi: (t * (1.0 + e) / c_small * (1.0 + rel) + abs).min(y_hi),
        }
    }

    /// The part of the R2 window `[lo, hi]` (ohms) where a design with capacitance `c` can be
    /// accepted for a period `t` within `tol` and ranked within `e`; None when no R2 there can.
    /// `[lo, hi]` itself when the screen cannot be applied.
    fn r2_window(&self, t: f64, tol: f64, e: f64, c: f64, lo: f64, hi: f64) -> Option<(f64, f64)> {
        if !(c > 0.0 && e >= 0.0) {
            return Some((lo, hi));
        }
        self.r2_range(&Self::window(t, tol, e, c, c), lo, hi)
    }

    /// [`r2_window`](Self::r2_window) for the windows `w`.
    fn r2_range(&self, w: &BandWindow, lo: f64, hi: f64) -> Option<(f64, f64)> {
        // Every point searched must lie on the lines with a positive S (the facts hold there).
        let usable = lo > 0.0
            && lo <= hi
            && hi.is_finite()
            && w.q_lo > 0.0
            && w.q_lo <= w.q_hi
            && hi * self.kd0 < w.q_lo * (1.0 - 1e-9);
        if !usable {
            return Some((lo, hi));
        }
        let a = if self.above(w, lo) {
            lo
        } else if !self.above(w, hi) {
            return None;
        } else {
            bisect(lo, hi, |r| !self.above(w, r)).0
        };
        let b = if self.below(w, hi) {
            hi
        } else if !self.below(w, a) {
            return None;
        } else {
            bisect(a, hi, |r| self.below(w, r)).1
        };
        // The generous ends, a hair wider still.
        Some((a * (1.0 - 1e-9), b * (1.0 + 1e-9)))
    }

    /// Whether some R2 in `[r2_lo, r2_hi]` may be accepted with a capacitance in `[a, b]` (the
    /// widest windows of the cell, which hold those of every capacitance in it) and R1/R2 in
    /// `[x_lo, x_hi]` (so R2 = q/(k_c·(1 + x) + k_d) on the line of nominal q).
    #[allow(clippy::too_many_arguments)]
    fn cell_open(
        &self,
        t: f64,
        tol: f64,
        e: f64,
        (r2_lo, r2_hi): (f64, f64),
        (x_lo, x_hi): (f64, f64),
        a: f64,
        b: f64,
    ) -> bool {
        let w = Self::window(t, tol, e, a, b);
        let (kc, kd) = (self.kc0, self.kd0);
        let lo = r2_lo.max(w.q_lo / (kc * (1.0 + x_hi) + kd) * (1.0 - 1e-6));
        let hi = r2_hi.min(w.q_hi / (kc * (1.0 + x_lo) + kd) * (1.0 + 1e-6));
        // No R2 in the duty's wedge, or none the band admits: closed.
        lo <= hi && self.r2_range(&w, lo, hi).is_some()
    }

    /// The span of capacitance within `[c_lo, c_hi]` outside which no R2 in `[r2_lo, r2_hi]`
    /// with R1/R2 in `[x_lo, x_hi]` can be accepted: cells a ratio of `1.002` wide are tested
    /// whole ([`cell_open`](Self::cell_open)) from the bottom up and from the top down, so every
    /// capacitance below the first open cell and above the last has an empty R2 window. None
    /// when every cell is closed. Where the screen cannot say (bad figures, or too many
    /// cells), the span is left wide.
    #[allow(clippy::too_many_arguments)]
    fn c_span(
        &self,
        t: f64,
        tol: f64,
        e: f64,
        r2: (f64, f64),
        x: (f64, f64),
        c_lo: f64,
        c_hi: f64,
    ) -> Option<(f64, f64)> {
        const CELL: f64 = 1.002;
        const MAX_CELLS: usize = 20_000;
        let sane = c_lo > 0.0 && c_lo < c_hi && c_hi.is_finite() && r2.0 > 0.0;
        if !sane || x.0 < 0.0 || x.1 < x.0 {
            return Some((c_lo.min(c_hi), c_hi.max(c_lo)));
        }
        let mut a = c_lo;
        let mut floor = None;
        for _ in 0..MAX_CELLS {
            let b = (a * CELL).min(c_hi);
            if self.cell_open(t, tol, e, r2, x, a, b) {
                floor = Some(a);
                break;
            }
            if b >= c_hi {
                return None;
            }
            a = b;
        }
        let floor = floor.unwrap_or(a);
        let mut b = c_hi;
        for _ in 0..MAX_CELLS {
            let a = (b / CELL).max(floor);
            if a <= floor || self.cell_open(t, tol, e, r2, x, a, b) {
                return Some((floor, b));
            }
            b = a;
        }
        Some((floor, b))
    }
}

/// Bisection in log space on `[lo, hi]` for a predicate true at `lo`, false at `hi` and
/// monotone between: `(last true, first false)`, within a ratio of `1 + 1e-7`.
fn bisect(lo: f64, hi: f64, holds: impl Fn(f64) -> bool) -> (f64, f64) {
    let (mut ok, mut bad) = (lo, hi);
    for _ in 0..200 {
        if bad <= ok * (1.0 + 1e-7) {
            break;
        }
        let mid = (ok * bad).sqrt();
        if holds(mid) {
            ok = mid;
        } else {
            bad = mid;
        }
    }
    (ok, bad)
}

struct Ctx<'a> {
    parts: &'a [Part],
    rpool: Pool,
    cpool: Pool,
    /// Per pool item (`Item::row` is the class index): the stock rows of that class and their
    /// free pieces, in stock order.
    rclass: Vec<Vec<(usize, u32)>>,
    cclass: Vec<Vec<(usize, u32)>>,
    stages: Vec<Plan>,
    value: Option<(Kind, f64)>,
    s: &'a Settings,
    family: &'a Family,
}

/// The capacitor classes no network of which can time any stage: a class-2 ceramic whose own
/// DC-bias loss already outgrows every stage's window ([`max_band_loss`]). A network's loss
/// follows its least suitable dielectric and its lowest rating (the supply where any rating is
/// unknown; `admit::network_cap_facts`), so a network holding such a piece loses at least the
/// piece's own dielectric figure at the larger of its rating and (when any class's rating is
/// unknown) the supply, unless a dielectric ranked above class 2 with no loss of its own (an
/// unnamed technology, a tantalum or an electrolytic) names the network: then nothing is
/// dropped. `Ctx::cap_fits` would refuse every network holding a dropped class; dropping it
/// first saves walking them. Stages only, with the DC-bias loss modelled.
fn drop_lossy_capacitors(
    parts: &[Part],
    classes: &[Vec<(usize, u32)>],
    items: Vec<Item>,
    stages: &[Plan],
    s: &Settings,
) -> Vec<Item> {
    if stages.is_empty() || !s.model.dc_bias {
        return items;
    }
    let part_of = |it: &Item| {
        classes
            .get(it.row)
            .and_then(|r| r.first())
            .map(|&(row, _)| &parts[row])
    };
    let mut masking = false;
    let mut unknown = false;
    for p in items.iter().filter_map(part_of) {
        masking |= !matches!(
            p.technology,
            Technology::C0g | Technology::Film | Technology::X7r | Technology::Y5v
        );
        unknown |= p.voltage_rating.is_none();
    }
    if masking {
        return items;
    }
    let least_loss = |p: &Part, plan: &Plan| -> f64 {
        let vcc = plan.cond.vcc.si();
        let rating = match p.voltage_rating {
            None => vcc,
            Some(v) if unknown => v.si().max(vcc),
            Some(v) => v.si(),
        };
        let facts = CapFacts {
            technology: p.technology,
            voltage_rating: Volts::from_si(rating),
            tolerance: p.tolerance,
        };
        crate::timing::dc_bias_loss(Some(&facts), plan.vu, vcc)
    };
    items
        .into_iter()
        .filter(|it| {
            part_of(it).is_none_or(|p| {
                stages
                    .iter()
                    .any(|plan| least_loss(p, plan) <= plan.max_loss)
            })
        })
        .collect()
}

/// The operating conditions of a stage: the settings' conditions, plus the family's output drop
/// for the output-driven square wave (its resistor is fed from the output) unless the model
/// leaves the drop out (`--ideal`): then the checks, the screen and the evaluator all see an
/// output that reaches the rail.
pub fn stage_conditions(g: &StageGoal, s: &Settings) -> Conditions {
    let mut cond = s.conditions;
    if let StageGoal::Square { .. } = g
        && s.model.output_drop
    {
        cond.output_high_drop =
            Volts::from_si(s.family.output_high_drop.value).unwrap_or(Volts::ZERO);
    }
    cond
}

/// The timing factors of a stage and the timer's own initial error for its form.
pub fn stage_factors(g: &StageGoal, s: &Settings) -> Result<(Factors, f64), SolveError> {
    Ok((stage_conditions(g, s).factors()?, s.timer_error(g)))
}

/// Most distinct classes of one kind a search over networks of two or more pieces takes: the
/// pair lists grow with the square of the class count (2 000 classes: about 2 × 2 M pairs of
/// 16 bytes, 64 MB), so this bounds memory whatever the stock holds.
const MAX_CLASSES: usize = 2000;

/// What the checks and the ranking can tell apart about a part: rows that agree on all of it
/// are one class, searched once with their free counts summed (a 50 000-row stock of a few
/// hundred values searches like a few hundred rows); pieces go back to rows only for answers.
type ClassKey = (
    Kind,
    Value,
    crate::units::Tolerance,
    Technology,
    Option<Volts>,
    Option<crate::units::Watts>,
);

/// Stock rows grouped into classes, in the order each class was first met.
#[derive(Default)]
struct Classes {
    index: std::collections::HashMap<ClassKey, usize>,
    rows: Vec<Vec<(usize, u32)>>,
}

impl Classes {
    fn add(&mut self, row: usize, p: &Part) {
        let key = (
            p.kind,
            p.value,
            p.tolerance,
            p.technology,
            p.voltage_rating,
            p.power_rating,
        );
        let free = u32::try_from(p.available()).unwrap_or(u32::MAX);
        let next = self.rows.len();
        let at = *self.index.entry(key).or_insert(next);
        if at == next {
            self.rows.push(Vec::new());
        }
        self.rows[at].push((row, free));
    }

    /// One pool item per class: the first row's facts, the summed free count.
    fn items(&self, parts: &[Part]) -> Vec<Item> {
        self.rows
            .iter()
            .enumerate()
            .filter_map(|(class, rows)| {
                let &(first, _) = rows.first()?;
                let p = &parts[first];
                let value = match p.value {
                    Value::Resistance(r) => r.si(),
                    Value::Capacitance(c) => c.si(),
                    Value::None => return None,
                };
                let (fl, fh) = p.tolerance.factors();
                Some(Item {
                    row: class,
                    value,
                    lo: value * fl,
                    hi: value * fh,
                    avail: rows.iter().fold(0u32, |a, r| a.saturating_add(r.1)),
                    tol: p.tolerance.widest().si(),
                })
            })
            .collect()
    }
}

impl<'a> Ctx<'a> {
    fn new(parts: &'a [Part], goal: &Goal, s: &'a Settings) -> Result<Self, SolveError> {
        let mut rclass = Classes::default();
        let mut cclass = Classes::default();
        for (row, p) in parts.iter().enumerate() {
            if p.available() <= 0 {
                continue;
            }
            match (p.kind, p.value) {
                (Kind::Resistor, Value::Resistance(_)) => rclass.add(row, p),
                (Kind::Capacitor, Value::Capacitance(_)) => {
                    if s.cap_techs
                        .as_ref()
                        .is_some_and(|t| !t.contains(&p.technology))
                    {
                        continue;
                    }
                    if let (Some(min), Some(rated)) = (s.min_cap_rating, p.voltage_rating) {
                        if rated.si() < min {
                            continue;
                        }
                    }
                    cclass.add(row, p);
                }
                _ => {}
            }
        }
        if s.max_pieces >= 2 {
            for (what, c) in [("resistor", &rclass), ("capacitor", &cclass)] {
                if c.rows.len() > MAX_CLASSES {
                    return Err(SolveError::Invalid(format!(
                        "the stock holds {} distinct {what}s (value, tolerance, technology and \
                         ratings); networks of two or more pieces are searched over at most \
                         {MAX_CLASSES} to bound memory: narrow the stock (e.g. --tech) or use \
                         --pieces 1",
                        c.rows.len()
                    )));
                }
            }
        }
        let rs = rclass.items(parts);
        let cs = cclass.items(parts);
        let mut stages = Vec::new();
        let value = match goal {
            Goal::Value { kind, target } => Some((*kind, target.si())),
            Goal::Stages(gs) => {
                let (_, r_max) = Pool::with_pairs(rs.clone(), false).range(s.max_pieces);
                for g in gs {
                    stages.push(plan_stage(g, s, r_max)?);
                }
                None
            }
        };
        let cs = drop_lossy_capacitors(parts, &cclass.rows, cs, &stages, s);
        Ok(Self {
            parts,
            rpool: Pool::with_pairs(rs, s.max_pieces >= 2),
            cpool: Pool::with_pairs(cs, s.max_pieces >= 2),
            rclass: rclass.rows,
            cclass: cclass.rows,
            stages,
            value,
            s,
            family: &s.family,
        })
    }

    /// The span of capacitance where a classic astable stage `si` may accept a design
    /// ([`BandScreen::c_span`]), over the resistances of every split (each position's
    /// networks of 1 to k pieces, cut by the stage's limits) with R1/R2 in `x`; the whole
    /// capacitor range without a band screen, None when the band leaves no capacitance.
    fn cap_span(&self, si: usize, x: (f64, f64)) -> Option<(f64, f64)> {
        let plan = &self.stages[si];
        let k = self.s.max_pieces.max(1);
        let hull = |p: &Pool| {
            (1..=k).fold((f64::INFINITY, 0.0f64), |(lo, hi), n| {
                let (a, b) = p.range(n);
                (lo.min(a), hi.max(b))
            })
        };
        let (rmin, rmax) = hull(&self.rpool);
        let (cmin, cmax) = hull(&self.cpool);
        let Some(bs) = &plan.band else {
            return Some((0.0, f64::INFINITY));
        };
        let StageGoal::Astable { period, .. } = plan.goal else {
            return Some((0.0, f64::INFINITY));
        };
        let (s_rule, r2_rule) = plan.bias_rules;
        let r_cap = plan.r_cap.min(s_rule);
        let r2max = rmax.min(plan.r2_cap).min(r2_rule).min(r_cap);
        let (kc, kd) = (plan.f.charge, plan.f.discharge);
        let amax = (kc * rmax + (kc + kd) * r2max).min(kc * r_cap + kd * r2max);
        let period = period.si();
        let tol = self.s.tol;
        let c_lo = (swin(period, tol, plan.g).0 / amax * (1.0 - 1e-6)).max(cmin);
        let c_hi = cmax * (1.0 + 1e-9);
        if c_lo.partial_cmp(&c_hi) != Some(Ordering::Less) {
            return Some((0.0, f64::INFINITY));
        }
        bs.c_span(period, tol, tol, (rmin, r2max), x, c_lo, c_hi)
    }

    fn positions(&self) -> usize {
        if self.value.is_some() {
            1
        } else {
            self.stages.iter().map(|p| p.goal.positions().len()).sum()
        }
    }

    fn pool(&self, w: Which) -> &Pool {
        match w {
            Which::R => &self.rpool,
            Which::C => &self.cpool,
        }
    }

    fn offset(&self, si: usize) -> usize {
        self.stages[..si]
            .iter()
            .map(|p| p.goal.positions().len())
            .sum()
    }

    // ---- the value search -------------------------------------------------------------

    fn walk_value(&self, n: usize, used_r: &mut [u32], used_c: &mut [u32], st: &mut State) {
        let Some((kind, t)) = self.value else { return };
        let which = if kind == Kind::Capacitor {
            Which::C
        } else {
            Which::R
        };
        let pool = self.pool(which);
        let (lo, hi) = win(t, st.bound());
        let tol = self.s.tol;
        let guarantee = self.s.guarantee;
        let (used, other): (&mut [u32], &[u32]) = match which {
            Which::R => (used_r, &*used_c),
            Which::C => (used_c, &*used_r),
        };
        let deadline = st.deadline;
        let ok = pool.walk(n, lo, hi, used, deadline, &mut |c, used| {
            st.seen += 1;
            let err = rel(c.value, t);
            if no_worse(err, st.bound()) {
                let fits = !guarantee || {
                    let (_, l, h) = pool.span(c);
                    inside(l, t * (1.0 - tol), t * (1.0 + tol))
                        && inside(h, t * (1.0 - tol), t * (1.0 + tol))
                };
                if fits {
                    Pool::take(c, used, 1);
                    st.picks.push(Pick {
                        stage: 0,
                        slot: 0,
                        which,
                        cand: *c,
                    });
                    let (ur, uc) = match which {
                        Which::R => (&*used, other),
                        Which::C => (other, &*used),
                    };
                    self.offer(st, ur, uc, err, None);
                    st.picks.pop();
                    Pool::take(c, used, -1);
                }
            }
            if st.timed_out() {
                return Step::Stop;
            }
            let (a, b) = win(t, st.bound());
            Step::Go(a, b)
        });
        if !ok {
            st.stop = true;
        }
    }

    // ---- timer stages -----------------------------------------------------------------

    fn walk_stage(
        &self,
        si: usize,
        split: &[usize],
        used_r: &mut [u32],
        used_c: &mut [u32],
        st: &mut State,
        floor: f64,
    ) {
        if floor > st.bound() {
            return;
        }
        let plan = &self.stages[si];
        let o = self.offset(si);
        let ns = &split[o..o + plan.goal.positions().len()];
        match plan.goal {
            StageGoal::Pulse { width } => self.walk_product(
                si,
                plan.f.one_shot,
                width.si(),
                (ns[0], ns[1]),
                split,
                used_r,
                used_c,
                st,
                floor,
            ),
            StageGoal::Square { period } => self.walk_product(
                si,
                plan.f.square_high + plan.f.square_low,
                period.si(),
                (ns[0], ns[1]),
                split,
                used_r,
                used_c,
                st,
                floor,
            ),
            StageGoal::Astable { period, duty } => self.walk_astable(
                si,
                period.si(),
                duty,
                (ns[0], ns[1], ns[2]),
                split,
                used_r,
                used_c,
                st,
                floor,
            ),
            StageGoal::Steered { high, low } => self.walk_steered(
                si,
                (high.si(), low.si()),
                (ns[0], ns[1], ns[2]),
                split,
                used_r,
                used_c,
                st,
                floor,
            ),
        }
    }

    /// A stage is complete with error `err` (already combined with earlier stages): rank it, or
    /// check it and go on to the next stage.
    fn stage_done(
        &self,
        si: usize,
        split: &[usize],
        used_r: &mut [u32],
        used_c: &mut [u32],
        st: &mut State,
        floor: f64,
    ) {
        // The screen let it through; the evaluator decides (band inside the window, and with
        // --guarantee the worst case with the band), and gives the error that ranks it.
        st.counts.judged += 1;
        let Some(own) = self.confirm(&st.picks, si) else {
            return;
        };
        st.counts.accepted += 1;
        let err = floor.max(own);
        if !no_worse(err, st.bound()) {
            return;
        }
        if si + 1 == self.stages.len() {
            self.offer(st, used_r, used_c, err, Some(si));
        } else if self.refuse(st, si) {
            // refused; counted
        } else {
            self.walk_stage(si + 1, split, used_r, used_c, st, err);
        }
    }

    /// Whether stage `si` of the current picks fails the electrical checks (and count it).
    fn refuse(&self, st: &mut State, si: usize) -> bool {
        let stage = self.stage_of(&st.picks, si);
        match admit::blocking(&stage, self.family) {
            Some(b) => {
                *st.refused.entry(b.code()).or_insert(0) += 1;
                true
            }
            None => false,
        }
    }

    /// Offer the current picks to the ranking; `check` names the last stage, whose electrical
    /// checks run only if the design would enter.
    fn offer(
        &self,
        st: &mut State,
        used_r: &[u32],
        used_c: &[u32],
        err: f64,
        check: Option<usize>,
    ) {
        let mut pieces = 0;
        let mut tol_sum = 0.0;
        let mut scarcity: f64 = 0.0;
        for p in &st.picks {
            let pool = self.pool(p.which);
            let used = match p.which {
                Which::R => used_r,
                Which::C => used_c,
            };
            for &i in p.cand.pieces() {
                let it = &pool.items()[i as usize];
                pieces += 1;
                tol_sum += it.tol;
                let u = used.get(i as usize).copied().unwrap_or(0);
                scarcity = scarcity.max(f64::from(u) / f64::from(it.avail.max(1)));
            }
        }
        let found = Found {
            pieces,
            err,
            tol_sum,
            scarcity,
            seq: st.seq,
            picks: st.picks.clone(),
        };
        if st.top.len() >= st.n
            && st
                .top
                .last()
                .is_some_and(|w| st.order(&found, w) != Ordering::Less)
        {
            return;
        }
        if let Some(si) = check {
            if self.refuse(st, si) {
                return;
            }
        }
        st.seq += 1;
        let pos = st
            .top
            .partition_point(|x| st.order(x, &found) == Ordering::Less);
        st.top.insert(pos, found);
        st.top.truncate(st.n);
    }

    #[allow(clippy::too_many_arguments)]
    fn walk_product(
        &self,
        si: usize,
        k: f64,
        t: f64,
        (nr, nc): (usize, usize),
        split: &[usize],
        used_r: &mut [u32],
        used_c: &mut [u32],
        st: &mut State,
        floor: f64,
    ) {
        let (rmin, rmax) = self.rpool.range(nr);
        let g = self.stages[si].g;
        // Beyond the charge limit the band alone outgrows the window: no R there is offered,
        // and no capacitor too small to reach the time with an R below it.
        let r_cap = self.stages[si].r_cap;
        let rmax = rmax.min(r_cap);
        let cw = |e: f64| {
            let (lo, hi) = swin(t, e, g);
            (lo / (k * rmax), hi / (k * rmin))
        };
        let (clo, chi) = cw(st.bound());
        let dl = st.deadline;
        let ok = self
            .cpool
            .walk(nc, clo, chi, used_c, dl, &mut |cc, used_c| {
                if !self.cap_fits(si, cc) {
                    let (a, b) = cw(st.bound());
                    return Step::Go(a, b);
                }
                st.counts.caps += 1;
                let c = cc.value;
                Pool::take(cc, used_c, 1);
                st.picks.push(Pick {
                    stage: si,
                    slot: 1,
                    which: Which::C,
                    cand: *cc,
                });
                let rw = |e: f64| {
                    let (lo, hi) = swin(t, e, g);
                    (lo / (k * c), (hi / (k * c)).min(r_cap))
                };
                let (rlo, rhi) = rw(st.bound());
                let ok = self
                    .rpool
                    .walk(nr, rlo, rhi, used_r, dl, &mut |rc, used_r| {
                        st.seen += 1;
                        let err = srel(k * rc.value * c, g, t);
                        if no_worse(err, st.bound()) {
                            Pool::take(rc, used_r, 1);
                            st.picks.push(Pick {
                                stage: si,
                                slot: 0,
                                which: Which::R,
                                cand: *rc,
                            });
                            self.stage_done(si, split, used_r, used_c, st, floor);
                            st.picks.pop();
                            Pool::take(rc, used_r, -1);
                        }
                        if st.timed_out() {
                            return Step::Stop;
                        }
                        let (a, b) = rw(st.bound());
                        Step::Go(a, b)
                    });
                st.picks.pop();
                Pool::take(cc, used_c, -1);
                if !ok {
                    st.stop = true;
                }
                if st.timed_out() {
                    return Step::Stop;
                }
                let (a, b) = cw(st.bound());
                Step::Go(a, b)
            });
        if !ok {
            st.stop = true;
        }
    }

    #[allow(clippy::too_many_arguments)]
    fn walk_astable(
        &self,
        si: usize,
        period: f64,
        duty: Duty,
        (n1, n2, nc): (usize, usize, usize),
        split: &[usize],
        used_r: &mut [u32],
        used_c: &mut [u32],
        st: &mut State,
        floor: f64,
    ) {
        let f = self.stages[si].f;
        let g = self.stages[si].g;
        let kc = f.charge;
        let ks = f.charge + f.discharge;
        // Duty D = kc(R1+R2)/(kc·R1 + ks·R2) rises with x = R1/R2; x(D) inverts it.
        let xof = |d: f64| {
            if d >= 1.0 {
                f64::INFINITY
            } else {
                (d * ks - kc) / (kc * (1.0 - d))
            }
        };
        // The screened duty (lower factors) may sit off the evaluated one by the spread, in
        // odds: widen the duty bounds accordingly before mapping them to R1/R2.
        let xw = |a: f64, b: f64| {
            (
                xof(odds_scaled(a, 1.0 / g)).max(0.0),
                xof(odds_scaled(b, g)),
            )
        };
        let duty = duty.window_si();
        let xwin = |_e: f64| match duty {
            None => (0.0, f64::INFINITY),
            Some((a, b)) => xw(a, b),
        };
        let (r1min, r1max) = self.rpool.range(n1);
        let (r2min, r2max) = self.rpool.range(n2);
        // R1 + R2 beyond the charge limit, or R2 beyond the discharge limit, is never accepted
        // (the band alone outgrows the window, or the discharge never ends): the walk skips
        // both, and the capacitors too small to reach the period below them.
        let (r_cap, r2_cap) = (self.stages[si].r_cap, self.stages[si].r2_cap);
        // The pin-bias rules of the electrical checks bound R1 + R2 and R2 outright (an Error
        // refuses every design beyond them): the walk does not offer those either, and counts
        // the rule once for each walk it cuts (its candidates are never listed one by one).
        let (s_rule, r2_rule) = self.stages[si].bias_rules;
        let cut = s_rule < r_cap.min(r1max + r2max) || r2_rule < r2max.min(r2_cap);
        if cut {
            *st.refused.entry("bias-current").or_insert(0) += 1;
        }
        let (r_cap, r2_cap) = (r_cap.min(s_rule), r2_cap.min(r2_rule));
        let r2max = r2max.min(r2_cap).min(r_cap);
        // The nominal factor A = kc·S + (ks − kc)·R2 is at most kc·r_cap + (ks − kc)·r2max
        // too (S ≤ r_cap, R2 ≤ r2max).
        let (amin, amax) = (
            kc * r1min + ks * r2min,
            (kc * r1max + ks * r2max).min(kc * r_cap + (ks - kc) * r2max),
        );
        let cw = |e: f64| {
            let (lo, hi) = swin(period, e, g);
            (lo / amax, hi / amin)
        };
        // Outside this span of capacitance the band admits no R2 (found once per stage over
        // every split's resistances, at the full tolerance: the walk's bound only narrows it).
        let span = self.stages[si]
            .c_span
            .get_or_init(|| self.cap_span(si, xwin(self.s.tol)));
        let Some((c_floor, c_ceiling)) = *span else {
            return;
        };
        let cw = |e: f64| {
            let (lo, hi) = cw(e);
            (lo.max(c_floor), hi.min(c_ceiling))
        };
        let dl = st.deadline;
        let (clo, chi) = cw(st.bound());
        let ok = self
            .cpool
            .walk(nc, clo, chi, used_c, dl, &mut |cc, used_c| {
                if !self.cap_fits(si, cc) {
                    let (a, b) = cw(st.bound());
                    return Step::Go(a, b);
                }
                st.counts.caps += 1;
                let c = cc.value;
                Pool::take(cc, used_c, 1);
                st.picks.push(Pick {
                    stage: si,
                    slot: 2,
                    which: Which::C,
                    cand: *cc,
                });
                // R2's window: every R2 for which the R1 window below (period, duty, charge
                // limit and R1's own range) is not empty. Each bound follows from one pair of
                // the R1 window's ends: R1 ≥ (plo/C − ks·R2)/kc against R1 ≤ r_cap − R2 and
                // R1 ≤ r1max; R1 ≥ x_lo·R2 and R1 ≥ r1min against R1 ≤ r_cap − R2; R1 ≥ r1min
                // against R1 ≤ (phi/C − ks·R2)/kc and R1 ≤ x_hi·R2. An R2 outside them has no
                // R1 at all, so skipping it drops no candidate (the R1 walk would be empty);
                // the bounds are taken a hair generous (the walks widen their windows too).
                let r2w = |e: f64| {
                    let (plo, phi) = swin(period, e, g);
                    let (xlo, xhi) = xwin(e);
                    let kd = ks - kc;
                    let lo = (plo / c / (kc * xhi + ks))
                        .max((plo / c - kc * r_cap) / kd)
                        .max((plo / c - kc * r1max) / ks)
                        .max(if xhi > 0.0 { r1min / xhi } else { 0.0 });
                    let hi = (phi / c / (kc * xlo + ks))
                        .min(r2max)
                        .min(r_cap / (1.0 + xlo))
                        .min(r_cap - r1min)
                        .min((phi / c - kc * r1min) / ks);
                    (lo * (1.0 - 1e-5), hi * (1.0 + 1e-5))
                };
                let (a, b) = r2w(st.bound());
                // The band's own window on R2 for this capacitor (the bound only narrows as
                // the walk goes, so this stays a superset of what can be accepted).
                let band = match &self.stages[si].band {
                    Some(bs) if a <= b => {
                        bs.r2_window(period, self.s.tol, st.bound(), c, a.max(r2min), b)
                    }
                    _ => Some((0.0, f64::INFINITY)),
                };
                let Some((ba, bb)) = band else {
                    st.picks.pop();
                    Pool::take(cc, used_c, -1);
                    let (a, b) = cw(st.bound());
                    return Step::Go(a, b);
                };
                let r2w = |e: f64| {
                    let (a, b) = r2w(e);
                    (a.max(ba), b.min(bb))
                };
                let (a, b) = r2w(st.bound());
                let ok = self.rpool.walk(n2, a, b, used_r, dl, &mut |r2c, used_r| {
                    st.counts.middle += 1;
                    let r2 = r2c.value;
                    Pool::take(r2c, used_r, 1);
                    st.picks.push(Pick {
                        stage: si,
                        slot: 1,
                        which: Which::R,
                        cand: *r2c,
                    });
                    let r1w = |e: f64| {
                        let (plo, phi) = swin(period, e, g);
                        let (xlo, xhi) = xwin(e);
                        (
                            ((plo / c - ks * r2) / kc).max(xlo * r2),
                            ((phi / c - ks * r2) / kc).min(xhi * r2).min(r_cap - r2),
                        )
                    };
                    let (a, b) = r1w(st.bound());
                    let ok = self.rpool.walk(n1, a, b, used_r, dl, &mut |r1c, used_r| {
                        st.seen += 1;
                        let r1 = r1c.value;
                        let aa = kc * r1 + ks * r2;
                        let d = kc * (r1 + r2) / aa;
                        let err = srel(c * aa, g, period);
                        // The screened duty's bracket in odds: [odds/g, odds·g].
                        let (dlo, dhi) = (odds_scaled(d, 1.0 / g), odds_scaled(d, g));
                        let duty_ok = match duty {
                            None => true,
                            Some((lo, hi)) => inside(dhi, lo, 1.0) && inside(dlo, 0.0, hi),
                        };
                        if duty_ok && no_worse(err, st.bound()) {
                            Pool::take(r1c, used_r, 1);
                            st.picks.push(Pick {
                                stage: si,
                                slot: 0,
                                which: Which::R,
                                cand: *r1c,
                            });
                            self.stage_done(si, split, used_r, used_c, st, floor);
                            st.picks.pop();
                            Pool::take(r1c, used_r, -1);
                        }
                        if st.timed_out() {
                            return Step::Stop;
                        }
                        let (a, b) = r1w(st.bound());
                        Step::Go(a, b)
                    });
                    st.picks.pop();
                    Pool::take(r2c, used_r, -1);
                    if !ok {
                        st.stop = true;
                    }
                    if st.timed_out() {
                        return Step::Stop;
                    }
                    let (a, b) = r2w(st.bound());
                    Step::Go(a, b)
                });
                st.picks.pop();
                Pool::take(cc, used_c, -1);
                if !ok {
                    st.stop = true;
                }
                if st.timed_out() {
                    return Step::Stop;
                }
                let (a, b) = cw(st.bound());
                Step::Go(a, b)
            });
        if !ok {
            st.stop = true;
        }
    }

    #[allow(clippy::too_many_arguments)]
    fn walk_steered(
        &self,
        si: usize,
        (high, low): (f64, f64),
        (na, nb, nc): (usize, usize, usize),
        split: &[usize],
        used_r: &mut [u32],
        used_c: &mut [u32],
        st: &mut State,
        floor: f64,
    ) {
        let f = self.stages[si].f;
        let g = self.stages[si].g;
        let (kh, kl) = (f.steered_charge, f.steered_discharge);
        let (ramin, ramax) = self.rpool.range(na);
        let (rbmin, rbmax) = self.rpool.range(nb);
        let cw = |e: f64| {
            let (hlo, hhi) = swin(high, e, g);
            let (llo, lhi) = swin(low, e, g);
            (
                (hlo / (kh * ramax)).max(llo / (kl * rbmax)),
                (hhi / (kh * ramin)).min(lhi / (kl * rbmin)),
            )
        };
        let dl = st.deadline;
        let (clo, chi) = cw(st.bound());
        let ok = self
            .cpool
            .walk(nc, clo, chi, used_c, dl, &mut |cc, used_c| {
                if !self.cap_fits(si, cc) {
                    let (a, b) = cw(st.bound());
                    return Step::Go(a, b);
                }
                st.counts.caps += 1;
                let c = cc.value;
                Pool::take(cc, used_c, 1);
                st.picks.push(Pick {
                    stage: si,
                    slot: 2,
                    which: Which::C,
                    cand: *cc,
                });
                let rbw = |e: f64| {
                    let (lo, hi) = swin(low, e, g);
                    (lo / (kl * c), hi / (kl * c))
                };
                let raw = |e: f64| {
                    let (lo, hi) = swin(high, e, g);
                    (lo / (kh * c), hi / (kh * c))
                };
                let (a, b) = rbw(st.bound());
                let ok = self.rpool.walk(nb, a, b, used_r, dl, &mut |rbc, used_r| {
                    st.counts.middle += 1;
                    let el = srel(kl * rbc.value * c, g, low);
                    Pool::take(rbc, used_r, 1);
                    st.picks.push(Pick {
                        stage: si,
                        slot: 1,
                        which: Which::R,
                        cand: *rbc,
                    });
                    let (a, b) = raw(st.bound());
                    let ok = self.rpool.walk(na, a, b, used_r, dl, &mut |rac, used_r| {
                        st.seen += 1;
                        let err = el.max(srel(kh * rac.value * c, g, high));
                        if no_worse(err, st.bound()) {
                            Pool::take(rac, used_r, 1);
                            st.picks.push(Pick {
                                stage: si,
                                slot: 0,
                                which: Which::R,
                                cand: *rac,
                            });
                            self.stage_done(si, split, used_r, used_c, st, floor);
                            st.picks.pop();
                            Pool::take(rac, used_r, -1);
                        }
                        if st.timed_out() {
                            return Step::Stop;
                        }
                        let (a, b) = raw(st.bound());
                        Step::Go(a, b)
                    });
                    st.picks.pop();
                    Pool::take(rbc, used_r, -1);
                    if !ok {
                        st.stop = true;
                    }
                    if st.timed_out() {
                        return Step::Stop;
                    }
                    let (a, b) = rbw(st.bound());
                    Step::Go(a, b)
                });
                st.picks.pop();
                Pool::take(cc, used_c, -1);
                if !ok {
                    st.stop = true;
                }
                if st.timed_out() {
                    return Step::Stop;
                }
                let (a, b) = cw(st.bound());
                Step::Go(a, b)
            });
        if !ok {
            st.stop = true;
        }
    }

    // ---- building the answer ----------------------------------------------------------

    /// The stage as the electrical checks see it, from the picks of stage `si`.
    fn stage_of(&self, picks: &[Pick], si: usize) -> Stage {
        self.stage_at(picks, si, [Corner::Nominal; 3])
    }

    /// The stage with each slot's network at its nominal, lowest or highest value.
    fn stage_at(&self, picks: &[Pick], si: usize, at: [Corner; 3]) -> Stage {
        let plan = &self.stages[si];
        let mut vals = [0.0f64; 3];
        let mut cap = None;
        for p in picks.iter().filter(|p| p.stage == si) {
            let slot = p.slot.min(2);
            let (v, lo, hi) = self.pool(p.which).span(&p.cand);
            vals[slot] = match at[slot] {
                Corner::Nominal => v,
                Corner::Low => lo,
                Corner::High => hi,
            };
            if p.which == Which::C {
                cap = Some(self.cap_facts(&p.cand));
            }
        }
        let c_slot = plan.goal.positions().len() - 1;
        let ohms = |v: f64| Ohms::from_si(v).unwrap_or(Ohms::ZERO);
        Stage {
            form: plan.goal.form(),
            r1: ohms(vals[0]),
            r2: (c_slot == 2).then(|| ohms(vals[1])),
            c: Farads::from_si(vals[c_slot]).unwrap_or(Farads::ZERO),
            cap,
            conditions: plan.cond,
            steering: crate::timing::Steering::default(),
        }
    }

    /// The evaluator's numbers for stage `si` of `picks`, without the effects in words (None
    /// when the form cannot run): what every candidate is judged on.
    fn times(&self, picks: &[Pick], si: usize, at: [Corner; 3]) -> Option<Evaluation> {
        evaluate_times(&self.stage_at(picks, si, at), self.family, &self.s.model).ok()
    }

    /// Whether capacitor network `c` can time stage `si` at all: a class-2 ceramic's DC-bias
    /// loss widens every targeted time's band by itself (see [`max_band_loss`]); a network whose
    /// loss alone outgrows the window is skipped with every resistor under it.
    fn cap_fits(&self, si: usize, c: &Cand) -> bool {
        if !self.s.model.dc_bias {
            return true;
        }
        let plan = &self.stages[si];
        let facts = self.cap_facts(c);
        crate::timing::dc_bias_loss(Some(&facts), plan.vu, plan.cond.vcc.si()) <= plan.max_loss
    }

    /// The worst case of stage `si` over every corner of its positions' tolerances (the same
    /// rule as `check`'s tolerance analysis: see [`judge::worst_of`]).
    fn worst(&self, picks: &[Pick], si: usize) -> Option<Worst> {
        use Corner::{High, Low, Nominal};
        let m = self.stages[si].goal.positions().len().min(3);
        let mut evals = Vec::with_capacity(1 << m);
        for mask in 0..(1u32 << m) {
            let at: [Corner; 3] = std::array::from_fn(|i| {
                if i >= m {
                    Nominal
                } else if mask >> i & 1 == 1 {
                    High
                } else {
                    Low
                }
            });
            evals.push(self.times(picks, si, at)?);
        }
        judge::worst_of(&evals, self.stages[si].ie)
    }

    /// The evaluator confirms what the screen let through: the stage's error if its band (and
    /// with --guarantee its worst case) lies inside every window, else None.
    fn confirm(&self, picks: &[Pick], si: usize) -> Option<f64> {
        let ev = self.times(picks, si, [Corner::Nominal; 3])?;
        let goal = &self.stages[si].goal;
        let tol = self.s.tol;
        // Cheap first: nominal and band; the corners only for a design that passes them.
        let err = judge::judge(goal, &ev, None, tol)?;
        if self.s.guarantee {
            judge::judge(goal, &ev, Some(&self.worst(picks, si)?), tol)?;
        }
        Some(err)
    }

    /// Facts of a capacitor network: least suitable technology, lowest rating, widest tolerance.
    fn cap_facts(&self, c: &Cand) -> CapFacts {
        let pieces = c
            .pieces()
            .iter()
            .map(|&i| &self.parts[self.cclass[self.cpool.items()[i as usize].row][0].0]);
        admit::network_cap_facts(pieces).unwrap_or(CapFacts {
            technology: Technology::Other,
            voltage_rating: None,
            tolerance: crate::units::Tolerance {
                minus: crate::units::Ratio::ZERO,
                plus: crate::units::Ratio::ZERO,
            },
        })
    }

    /// Stock rows for the pieces of every pick: within a class, each piece comes from the row
    /// with the most free pieces left (sparing small rows), the first such row on a tie. The
    /// class counts the search checked are the sums of these rows', so this always succeeds.
    fn assign(&self, picks: &[Pick]) -> Vec<Vec<usize>> {
        let mut left: std::collections::HashMap<(bool, usize), Vec<u32>> =
            std::collections::HashMap::new();
        picks
            .iter()
            .map(|p| {
                let (pool, classes) = match p.which {
                    Which::R => (&self.rpool, &self.rclass),
                    Which::C => (&self.cpool, &self.cclass),
                };
                p.cand
                    .pieces()
                    .iter()
                    .map(|&i| {
                        let class = pool.items()[i as usize].row;
                        let rows = &classes[class];
                        let free = left
                            .entry((p.which == Which::C, class))
                            .or_insert_with(|| rows.iter().map(|r| r.1).collect());
                        let mut best = 0;
                        for (k, &f) in free.iter().enumerate() {
                            if f > free[best] {
                                best = k;
                            }
                        }
                        free[best] = free[best].saturating_sub(1);
                        rows[best].0
                    })
                    .collect()
            })
            .collect()
    }

    fn build(&self, found: &Found) -> Design {
        let mut picks = found.picks.clone();
        picks.sort_by_key(|p| (p.stage, p.slot));
        let rows = self.assign(&picks);
        let positions: Vec<Position> = picks
            .iter()
            .zip(rows)
            .map(|(p, rows)| {
                let pool = self.pool(p.which);
                let (value, lo, hi) = pool.span(&p.cand);
                let (kind, combine) = match p.which {
                    Which::R => (Kind::Resistor, Combine::Resistive),
                    Which::C => (Kind::Capacitor, Combine::Capacitive),
                };
                let name = match self.value {
                    Some(_) => "value",
                    None => self.stages[p.stage].goal.positions()[p.slot],
                };
                Position {
                    stage: p.stage,
                    name,
                    kind,
                    net: p.cand.shape.to_net(combine),
                    rows,
                    value,
                    lo,
                    hi,
                }
            })
            .collect();
        let tol = self.s.tol;
        let stages: Vec<StageReport> = match self.value {
            Some((kind, t)) => {
                let p = &positions[0];
                let unit = if kind == Kind::Capacitor { "F" } else { "Ω" };
                vec![StageReport {
                    form: None,
                    quantities: vec![quantity("value", unit, Some(t), tol, p.value, p.lo, p.hi)],
                    effects: Vec::new(),
                    findings: Vec::new(),
                }]
            }
            None => (0..self.stages.len())
                .map(|si| {
                    let goal = &self.stages[si].goal;
                    let ev = evaluate(&self.stage_of(&picks, si), self.family, &self.s.model).ok();
                    let wc = self.worst(&picks, si);
                    StageReport {
                        form: Some(goal.form()),
                        quantities: match (ev.as_ref(), wc.as_ref()) {
                            (Some(ev), Some(wc)) => judge::quantities(goal, ev, wc, tol),
                            _ => Vec::new(),
                        },
                        effects: ev.map(|e| e.effects).unwrap_or_default(),
                        findings: admit::review(&self.stage_of(&picks, si), self.family)
                            .into_iter()
                            .filter(|f| f.severity != admit::Severity::Error)
                            .collect(),
                    }
                })
                .collect(),
        };
        let guaranteed = stages
            .iter()
            .flat_map(|s| &s.quantities)
            .all(quantity_guaranteed);
        Design {
            pieces: found.pieces,
            error: found.err,
            tolerance_sum: found.tol_sum,
            scarcity: found.scarcity,
            guaranteed,
            positions,
            stages,
        }
    }
}

/// Whether a quantity's worst case lies within its window (quantities without one pass).
pub fn quantity_guaranteed(q: &Quantity) -> bool {
    q.window
        .is_none_or(|(lo, hi)| q.worst_lo >= lo && q.worst_hi <= hi)
}

fn quantity(
    name: &'static str,
    unit: &'static str,
    target: Option<f64>,
    tol: f64,
    nominal: f64,
    worst_lo: f64,
    worst_hi: f64,
) -> Quantity {
    Quantity {
        name,
        unit,
        target,
        window: target.map(|t| win(t, tol)),
        nominal,
        band_lo: nominal,
        band_hi: nominal,
        error: target.map(|t| rel(nominal, t)),
        worst_lo,
        worst_hi,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_narrow_window_is_written_in_plain_decimals() {
        assert_eq!(window(0.01), "±1 %");
        assert_eq!(window(0.0005), "±0.05 %");
        assert_eq!(window(1e-7), "±0.00001 %");
        assert_eq!(window(1.23456e-9), "±0.000000123 %");
    }

    /// The band screens of a classic astable at 5, 9 and 15 V for both families.
    fn band_screens() -> Vec<BandScreen> {
        let mut out = Vec::new();
        for vcc in [5.0, 9.0, 15.0] {
            for family in [Family::bipolar(), Family::cmos()] {
                let s = Settings {
                    tol: 0.01,
                    max_pieces: 2,
                    alternatives: 1,
                    guarantee: false,
                    family,
                    model: crate::timing::Model::real(),
                    conditions: Conditions::ideal(Volts::from_si(vcc).unwrap_or(Volts::ZERO)),
                    cap_techs: None,
                    min_cap_rating: None,
                    time_limit: None,
                    rank: Rank::FewestPieces,
                    excursion: crate::solve::Excursion::default(),
                };
                let template = Stage {
                    form: Form::Astable,
                    r1: Ohms::from_si(1e3).unwrap_or(Ohms::ZERO),
                    r2: Ohms::from_si(1e3),
                    c: Farads::from_si(1e-9).unwrap_or(Farads::ZERO),
                    cap: None,
                    conditions: s.conditions,
                    steering: crate::timing::Steering::default(),
                };
                out.extend(BandScreen::new(&template, &s));
            }
        }
        out
    }

    /// The facts [`BandScreen`] rests on, over resistances from 1 kΩ to 20 MΩ (where the pin
    /// currents are small and where the corners run away alike): on a line of constant nominal
    /// a drain drawn from the capacitor makes the corner's deviation fall as R2 rises and one
    /// pushed into it makes it rise; at a fixed R2 the first rises with the nominal and the
    /// second falls; every corner period rises with S and with R2.
    #[test]
    fn band_screen_facts_hold_over_the_range() {
        let screens = band_screens();
        assert_eq!(screens.len(), 6, "every supply and family has a band");
        let grid: Vec<f64> = (0..=60)
            .map(|i| 1e3 * 10f64.powf(f64::from(i) / 14.0))
            .collect();
        let step = 1.0 + 1e-3;
        for bs in &screens {
            let dev = |s: f64, r2: f64, d: f64| {
                bs.phys.astable_period_per_farad(s, r2, d)
                    - bs.phys.astable_period_per_farad(s, r2, 0.0)
            };
            for &d in &bs.drains {
                for &r2 in &grid {
                    for &s in grid.iter().filter(|&&s| s >= r2) {
                        let q = bs.kc0 * s + bs.kd0 * r2;
                        let (now, up_s, up_r2) = (
                            bs.phys.astable_period_per_farad(s, r2, d),
                            bs.phys.astable_period_per_farad(s * step, r2, d),
                            bs.phys.astable_period_per_farad(s, r2 * step, d),
                        );
                        if !now.is_finite() {
                            continue;
                        }
                        assert!(
                            up_s > now && up_r2 > now,
                            "rises with S and R2 at {s} {r2} {d}"
                        );
                        // Along the line of nominal q, R2 up by the step and S down to match.
                        let r2b = r2 * step;
                        let sb = (q - bs.kd0 * r2b) / bs.kc0;
                        let (a, b) = (dev(s, r2, d), dev(sb, r2b, d));
                        // At a fixed R2, the nominal up by the step.
                        let sq = (q * step - bs.kd0 * r2) / bs.kc0;
                        let c = dev(sq, r2, d);
                        if !(a.is_finite() && b.is_finite() && c.is_finite()) {
                            continue;
                        }
                        if d > 0.0 {
                            assert!(b < a && c > a, "d {d} at S {s} R2 {r2}: {a} {b} {c}");
                        } else {
                            assert!(b > a && c < a, "d {d} at S {s} R2 {r2}: {a} {b} {c}");
                        }
                    }
                }
            }
        }
    }

    /// Every (R1, R2) whose every corner period lies inside the window (the evaluator's own
    /// acceptance of the period band, on a grid of resistances and capacitances) lies inside
    /// the R2 window the screen gives for its capacitance; and the screen does rule whole
    /// capacitances out (counted, so the test shows it cuts).
    #[test]
    fn band_screen_keeps_every_accepted_point() {
        let mut cut = 0;
        let mut kept = 0;
        for bs in band_screens() {
            for &tol in &[0.001, 0.01, 0.05] {
                for &t in &[0.01, 0.3, 1.0, 10.0] {
                    for i in 0..24 {
                        let c = 1e-9 * 10f64.powf(f64::from(i) / 6.0);
                        let q_target = t / c;
                        let Some((lo, hi)) = bs.r2_window(t, tol, tol, c, 1.0, q_target) else {
                            cut += 1;
                            continue;
                        };
                        for j in 0..400 {
                            let r2 = q_target / (bs.kc0 + bs.kd0) * f64::from(j) / 400.0;
                            for m in 0..40 {
                                let q = q_target * (1.0 - tol + 2.0 * tol * f64::from(m) / 39.0);
                                let s = (q - bs.kd0 * r2) / bs.kc0;
                                if !(r2 >= 1.0 && s >= r2) {
                                    continue;
                                }
                                let qs = std::iter::once(0.0)
                                    .chain(bs.drains.iter().copied())
                                    .map(|d| bs.phys.astable_period_per_farad(s, r2, d) * c);
                                let accepted = qs
                                    .clone()
                                    .all(|x| inside(x, t * (1.0 - tol), t * (1.0 + tol)));
                                if accepted {
                                    kept += 1;
                                    assert!(
                                        r2 >= lo && r2 <= hi,
                                        "R2 {r2} (S {s}, C {c}, T {t}, tol {tol}) accepted outside {lo}..{hi}"
                                    );
                                }
                            }
                        }
                    }
                }
            }
        }
        assert!(kept > 0 && cut > 0, "kept {kept}, cut {cut}");
    }

    #[test]
    fn compositions_cover_every_split() {
        assert_eq!(compositions(3, 2, 3), vec![vec![1, 2], vec![2, 1]]);
        assert_eq!(compositions(3, 3, 3), vec![vec![1, 1, 1]]);
        assert_eq!(compositions(7, 2, 3).len(), 0);
        assert_eq!(compositions(6, 3, 4).len(), 10);
    }

    #[test]
    fn a_search_out_of_time_says_so_and_proves_nothing_more() {
        let parts: Vec<Part> = Vec::new();
        let s = Settings {
            tol: 0.01,
            max_pieces: 2,
            alternatives: 1,
            guarantee: false,
            family: Family::bipolar(),
            model: crate::timing::Model::ideal(),
            conditions: Conditions::ideal(Volts::from_si(9.0).unwrap_or(Volts::ZERO)),
            cap_techs: None,
            min_cap_rating: None,
            time_limit: Some(std::time::Duration::ZERO),
            rank: Rank::FewestPieces,
            excursion: crate::solve::Excursion::default(),
        };
        let goal = Goal::value_si(Kind::Resistor, 1000.0).expect("goal");
        let out = solve(&parts, &goal, &s).expect("runs");
        assert!(!out.complete, "stopped by the clock");
        assert!(out.designs.is_empty());
        assert_eq!(out.no_design_below, 1, "nothing proven beyond the obvious");
        let done = solve(
            &parts,
            &goal,
            &Settings {
                time_limit: None,
                ..s
            },
        )
        .expect("runs");
        assert!(done.complete, "an empty stock is searched to the end");
    }
}
