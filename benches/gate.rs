//! `cargo bench --bench gate`: the search's electrical gate, `admit::blocking`, over a fixed
//! set of candidate stages (every form, both families, supplies from 3 V to 60 V, resistances
//! from 10 Ω to 100 MΩ, capacitances from 10 pF to 10 mF, with and without capacitor facts), so
//! that about a third are refused and the rest accepted, as in a real walk. Prints the median
//! time per call over repeated passes, for all candidates, the refused and the accepted ones,
//! and the same for the full worded review (`admit::review`) for comparison. Asserts nothing.

use onhand::model::Technology;
use onhand::solve::admit::{self, CapFacts, Family, Form, Stage};
use onhand::timing::{Conditions, Steering};
use onhand::units::{Farads, Ohms, Tolerance, Volts};
use std::hint::black_box;
use std::time::Instant;

/// Timed passes over the candidate set.
const PASSES: usize = 21;

fn candidates() -> Vec<(Stage, Family)> {
    let forms = [Form::Monostable, Form::Astable, Form::Steered, Form::Square];
    let supplies = [3.0, 5.0, 9.0, 15.0, 60.0];
    let rs: Vec<f64> = (0..=14).map(|i| 10f64.powf(1.0 + i as f64 * 0.5)).collect();
    let cs: Vec<f64> = (0..=9).map(|i| 10f64.powf(-11.0 + i as f64)).collect();
    let techs = [
        None,
        Some((Technology::Electrolytic, Some(16.0))),
        Some((Technology::X7r, Some(50.0))),
        Some((Technology::Film, None)),
    ];
    let mut out = Vec::new();
    for family in [Family::bipolar(), Family::cmos()] {
        for form in forms {
            for &vcc in &supplies {
                for (i, &r1) in rs.iter().enumerate() {
                    for (j, &c) in cs.iter().enumerate() {
                        let tech = techs[(i + j) % techs.len()];
                        let r2 = rs[(i * 7 + j * 3) % rs.len()];
                        let (Some(r1), Some(r2), Some(c), Some(vcc)) = (
                            Ohms::from_si(r1),
                            Ohms::from_si(r2),
                            Farads::from_si(c),
                            Volts::from_si(vcc),
                        ) else {
                            continue;
                        };
                        let cap = tech.and_then(|(technology, rating)| {
                            Some(CapFacts {
                                technology,
                                voltage_rating: match rating {
                                    Some(v) => Some(Volts::from_si(v)?),
                                    None => None,
                                },
                                tolerance: Tolerance::symmetric_percent(10.0)?,
                            })
                        });
                        let stage = Stage {
                            form,
                            r1,
                            r2: form.has_r2().then_some(r2),
                            c,
                            cap,
                            conditions: Conditions::ideal(vcc),
                            steering: if j % 2 == 0 {
                                Steering::TwoDiode
                            } else {
                                Steering::OneDiode
                            },
                        };
                        out.push((stage, family.clone()));
                    }
                }
            }
        }
    }
    out
}

fn median(mut v: Vec<f64>) -> f64 {
    v.sort_by(f64::total_cmp);
    v[v.len() / 2]
}

/// Median nanoseconds per call of `f` over `set`.
fn time<T>(set: &[&(Stage, Family)], f: impl Fn(&Stage, &Family) -> T) -> f64 {
    let mut per = Vec::with_capacity(PASSES);
    for _ in 0..PASSES {
        let t = Instant::now();
        for (s, fam) in set {
            black_box(f(black_box(s), fam));
        }
        per.push(t.elapsed().as_secs_f64() * 1e9 / set.len().max(1) as f64);
    }
    median(per)
}

fn main() {
    let all = candidates();
    let every: Vec<&(Stage, Family)> = all.iter().collect();
    let (refused, accepted): (Vec<_>, Vec<_>) = all
        .iter()
        .partition(|(s, fam)| admit::blocking(s, fam).is_some());
    println!(
        "gate bench: {} candidate stages ({} refused, {} accepted), {PASSES} passes, median ns per call",
        every.len(),
        refused.len(),
        accepted.len()
    );
    for (label, set) in [
        ("all", &every),
        ("refused", &refused),
        ("accepted", &accepted),
    ] {
        let gate = time(set, |s, f| admit::blocking(s, f).is_some());
        let words = time(set, |s, f| admit::review(s, f).len());
        println!(
            "  {label:<9} blocking {gate:>8.0} ns   review (every finding worded) {words:>8.0} ns   ratio {:.2}",
            words / gate
        );
    }
}
