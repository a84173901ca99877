//! `onhand check`: times, worst case, Monte Carlo, targets, findings, trim and the inverse
//! question, driven through the built binary. Values use the plain decimal form (`4.7k`) that
//! every version of the value parser reads.

use crate::util::Bench;
use serde_json::Value;

fn json(args: &[&str], code: i32) -> Value {
    let mut all = vec!["--json", "check"];
    all.extend_from_slice(args);
    Bench::new().run(&all).code(code).json()
}

fn nominal(v: &Value, q: &str) -> f64 {
    v["analyses"][0]["nominal"]
        .as_array()
        .expect("nominal list")
        .iter()
        .find(|i| i["quantity"] == q)
        .and_then(|i| i["nominal"].as_f64())
        .unwrap_or_else(|| panic!("no {q} in {v}"))
}

fn codes(v: &Value, severity: &str) -> Vec<String> {
    v["findings"]
        .as_array()
        .expect("findings")
        .iter()
        .filter(|f| f["severity"] == severity)
        .map(|f| f["code"].as_str().unwrap_or_default().to_string())
        .collect()
}

#[test]
fn astable_matches_the_1_44_rule() {
    // common practice: f ≈ 1.44/((R1+2R2)·C); 1/ln 2 = 1.4427, so within 0.2 %.
    let v = json(
        &[
            "astable",
            "R1=4.7k",
            "R2=68k",
            "C=10n",
            "--samples",
            "0",
            "--ideal",
        ],
        0,
    );
    let f = nominal(&v, "frequency");
    let rule = 1.44 / ((4.7e3 + 2.0 * 68e3) * 10e-9);
    assert!((f - rule).abs() / rule < 0.002, "{f} vs {rule}");
    // common practice: duty of the classic astable is (R1+R2)/(R1+2R2), above 50 %.
    let duty = nominal(&v, "duty");
    assert!((duty - 72.7 / 140.7).abs() < 1e-6);
    assert_eq!(v["ok"], true);
}

#[test]
fn monostable_is_1_1_rc_and_text_shows_the_model() {
    // common practice: t ≈ 1.1·R·C → 1 MΩ · 1 µF ≈ 1.1 s.
    let v = json(
        &["monostable", "R=1M", "C=1u", "--family", "cmos", "--ideal"],
        0,
    );
    let t = nominal(&v, "high");
    assert!((t - 1.1).abs() / 1.1 < 0.002, "{t}");
    Bench::new()
        .run(&[
            "check",
            "monostable",
            "R=1M",
            "C=1u",
            "--family",
            "cmos",
            "--ideal",
        ])
        .ok()
        .stdout_has("model: ideal")
        .stdout_has("worst case (exact")
        .stdout_has("Monte Carlo (10000 samples, seed 1");
}

#[test]
fn networks_in_positions_add_as_they_should() {
    // common practice: series resistors add; parallel capacitors add.
    let a = json(
        &[
            "astable",
            "R1=33k+2.2k",
            "R2=68k",
            "C=10n||2.2n",
            "--samples",
            "0",
        ],
        0,
    );
    let b = json(
        &["astable", "R1=35.2k", "R2=68k", "C=12.2n", "--samples", "0"],
        0,
    );
    let (fa, fb) = (nominal(&a, "frequency"), nominal(&b, "frequency"));
    assert!((fa - fb).abs() / fb < 1e-9, "{fa} vs {fb}");
    assert_eq!(a["positions"][0]["pieces"], 2);
    // Every piece and the chip's error on the charge and on the discharge time is one corner
    // axis: 5 + 2 → 2^7; 3 + 2 → 2^5.
    assert_eq!(a["analyses"][0]["worst_case"]["corners"], 128);
    assert_eq!(b["analyses"][0]["worst_case"]["corners"], 32);
}

#[test]
fn discharge_current_fails_the_check_with_exit_1() {
    // common practice (Ohm's law): 12 V across 10 Ω is 1.2 A.
    let r = Bench::new().run(&[
        "check",
        "monostable",
        "R=10",
        "C=1u",
        "--vcc",
        "12",
        "--samples",
        "0",
    ]);
    let r = r
        .code(1)
        .stdout_has("1.2 A")
        .stdout_has("discharge-current");
    assert!(r.stdout.contains("result: FAILED"));
    let v = json(
        &[
            "monostable",
            "R=10",
            "C=1u",
            "--vcc",
            "12",
            "--samples",
            "0",
        ],
        1,
    );
    assert!(codes(&v, "error").contains(&"discharge-current".to_string()));
    assert_eq!(v["ok"], false);
}

#[test]
fn zero_r1_is_an_error() {
    let v = json(&["astable", "R1=0", "R2=10k", "C=10n", "--samples", "0"], 1);
    assert!(codes(&v, "error").contains(&"r1-zero".to_string()));
}

#[test]
fn target_guaranteed_or_not_sets_the_exit_code() {
    let base = [
        "astable", "R1=4.7k", "R2=68k", "C=10n", "--tol", "R1=1%", "--tol", "R2=1%",
    ];
    let mut wide = base.to_vec();
    wide.extend(["--tol", "C=1%", "--target", "1.025kHz", "--within", "10%"]);
    let v = json(&wide, 0);
    assert_eq!(v["target"]["guaranteed"], true);
    let mut tight = base.to_vec();
    tight.extend(["--target", "1.025kHz", "--within", "2%"]);
    let v = json(&tight, 1);
    assert_eq!(v["target"]["guaranteed"], false);
    assert!(
        v["analyses"][0]["monte_carlo"]["within_target"]
            .as_f64()
            .expect("share")
            < 1.0
    );
    Bench::new()
        .run(&[
            "check", "astable", "R1=4.7k", "R2=68k", "C=10n", "--target", "1kHz", "--within", "2%",
        ])
        .code(1)
        .stdout_has("NOT guaranteed");
}

#[test]
fn monte_carlo_is_reproducible_from_its_seed() {
    let run = |seed: &str| {
        json(
            &[
                "astable",
                "R1=4.7k",
                "R2=68k",
                "C=10n",
                "--samples",
                "2000",
                "--seed",
                seed,
            ],
            0,
        )["analyses"][0]["monte_carlo"]
            .clone()
    };
    assert_eq!(run("5"), run("5"));
    assert_ne!(run("5"), run("6"));
}

#[test]
fn equal_pieces_in_series_say_they_average() {
    Bench::new()
        .run(&[
            "check",
            "monostable",
            "R=4k+4k+4k+4k",
            "C=1u",
            "--samples",
            "1000",
        ])
        .ok()
        .stdout_has("4 equal pieces average their random errors");
}

#[test]
fn inverse_recovers_a_known_capacitor() {
    // Measure the frequency a 22 nF gives, then ask for the capacitor back.
    let v = json(
        &["astable", "R1=4.7k", "R2=68k", "C=22n", "--samples", "0"],
        0,
    );
    let f = nominal(&v, "frequency");
    let measured = format!("{f:.6}Hz");
    let inv = json(
        &[
            "astable",
            "R1=4.7k",
            "R2=68k",
            "--measured",
            &measured,
            "--samples",
            "0",
        ],
        0,
    );
    let c = inv["inference"]["nominal"].as_f64().expect("nominal");
    assert!((c - 22e-9).abs() / 22e-9 < 1e-6, "{c}");
    let nearest = inv["inference"]["nearest"].as_f64().expect("nearest");
    // IEC 60063: 22 is an E12 value.
    assert!((nearest - 22e-9).abs() < 1e-15);
    let (lo, hi) = (
        inv["inference"]["min"].as_f64().expect("min"),
        inv["inference"]["max"].as_f64().expect("max"),
    );
    assert!(lo < c && c < hi);
}

#[test]
fn inverse_refuses_two_unknowns_and_impossible_measurements() {
    Bench::new()
        .run(&["check", "astable", "R1=4.7k", "--measured", "1kHz"])
        .code(2)
        .stderr_has("missing");
    // R1 alone with 10 nF already gives a period longer than 1 µs: no R2 can shorten it.
    Bench::new()
        .run(&["check", "astable", "R1=470k", "C=10n", "--measured", "1MHz"])
        .code(2)
        .stderr_has("no value of R2");
}

#[test]
fn trim_suggests_a_fixed_part_and_a_trimmer() {
    let v = json(
        &["monostable", "R=100k", "C=1u", "--trim", "--samples", "0"],
        0,
    );
    let t = &v["trim"];
    let fixed = t["fixed"].as_f64().expect("fixed");
    let trimmer = t["trimmer"].as_f64().expect("trimmer");
    let (need_lo, need_hi) = (
        t["need_min"].as_f64().expect("lo"),
        t["need_max"].as_f64().expect("hi"),
    );
    // Re-check the plan: fixed +5 % stays below the lowest need; fixed −5 % plus the trimmer's
    // −20 % track reaches the highest.
    assert!(fixed * 1.05 <= need_lo + 1e-6);
    assert!(fixed * 0.95 + trimmer * 0.8 >= need_hi);
}

#[test]
fn family_figures_can_be_overridden_and_are_labelled() {
    // 1.44/((1k+2·1k)·1n) ≈ 480 kHz: above the bipolar 100 kHz figure, below a user's 1 MHz.
    let args = ["astable", "R1=1k", "R2=1k", "C=1n", "--samples", "0"];
    let v = json(&args, 1);
    assert!(codes(&v, "error").contains(&"max-frequency".to_string()));
    let mut set = args.to_vec();
    set.extend(["--set", "max_freq=1M"]);
    let v = json(&set, 0);
    assert!(!codes(&v, "error").contains(&"max-frequency".to_string()));
    let fig = v["figures"]
        .as_array()
        .expect("figures")
        .iter()
        .find(|f| f["key"] == "max_freq")
        .cloned()
        .expect("max_freq");
    assert_eq!(fig["provenance"], "set by user");
    assert_eq!(fig["value"], 1e6);
    Bench::new()
        .run(&[
            "check", "astable", "R1=1k", "R2=1k", "C=1n", "--set", "warp=1",
        ])
        .code(2)
        .stderr_has("warp");
}

#[test]
fn pair_width_must_stay_below_the_period() {
    // Period ≈ ln2·21 kΩ·100 nF ≈ 1.46 ms; width ln3·100 kΩ·100 nF ≈ 11 ms.
    let v = json(
        &[
            "pair",
            "R1=1k",
            "R2=10k",
            "C1=100n",
            "R3=100k",
            "C2=100n",
            "--samples",
            "0",
            "--ideal",
        ],
        1,
    );
    assert!(codes(&v, "error").contains(&"width-exceeds-period".to_string()));
    let v = json(
        &[
            "pair",
            "R1=1k",
            "R2=10k",
            "C1=100n",
            "R3=1k",
            "C2=100n",
            "--samples",
            "0",
            "--ideal",
        ],
        0,
    );
    let duty = nominal(&v, "duty");
    let want = 3f64.ln() * 1e3 * 100e-9 / (2f64.ln() * 21e3 * 100e-9);
    assert!((duty - want).abs() < 1e-6);
}

#[test]
fn dual_checks_both_halves() {
    let v = json(
        &[
            "dual",
            "A.R1=1k",
            "A.R2=10k",
            "A.C=100n",
            "B.R=10",
            "B.C=10n",
            "--samples",
            "0",
        ],
        1,
    );
    assert_eq!(v["analyses"].as_array().expect("analyses").len(), 2);
    let msgs: Vec<String> = v["findings"]
        .as_array()
        .expect("findings")
        .iter()
        .map(|f| f["message"].as_str().unwrap_or_default().to_string())
        .collect();
    assert!(
        msgs.iter().any(|m| m.starts_with("timer B: discharge pin")),
        "{msgs:?}"
    );
}

#[test]
fn square_wave_on_bipolar_warns_and_cmos_is_quiet() {
    let v = json(&["square", "R=10k", "C=10n", "--samples", "0"], 0);
    assert!(codes(&v, "warning").contains(&"square-output".to_string()));
    let v = json(
        &[
            "square",
            "R=10k",
            "C=10n",
            "--family",
            "cmos",
            "--samples",
            "0",
            "--ideal",
        ],
        0,
    );
    assert!(v["findings"].as_array().expect("findings").is_empty());
    // DESIGN physics table: R·C·ln 2 each half → 50 % duty.
    assert!((nominal(&v, "duty") - 0.5).abs() < 1e-9);
}

#[test]
fn refinements_are_printed_when_used() {
    Bench::new()
        .run(&[
            "check",
            "steered",
            "RA=10k",
            "RB=4.7k",
            "C=100n",
            "--diode",
            "0.6",
            "--samples",
            "0",
        ])
        .ok()
        .stdout_has("steering diodes: a fixed 600 mV drop");
    Bench::new()
        .run(&[
            "check", "astable", "R1=1k", "R2=10k", "C=100n", "--diode", "0.6",
        ])
        .code(2)
        .stderr_has("steered form only");
}

#[test]
fn trigger_longer_than_pulse_fails() {
    // ln3·10 kΩ·1 nF ≈ 11 µs pulse.
    let v = json(
        &[
            "monostable",
            "R=10k",
            "C=1n",
            "--trigger",
            "20us",
            "--samples",
            "0",
        ],
        1,
    );
    assert!(codes(&v, "error").contains(&"trigger-width".to_string()));
    json(
        &[
            "monostable",
            "R=10k",
            "C=1n",
            "--trigger",
            "1us",
            "--samples",
            "0",
        ],
        0,
    );
}

#[test]
fn dangerous_designs_print_cautions() {
    let r = Bench::new().run(&[
        "check",
        "monostable",
        "R=1M",
        "C=10m",
        "--vcc",
        "60",
        "--samples",
        "0",
    ]);
    r.code(1)
        .stdout_has("Caution")
        .stdout_has("local codes and licensed practice");
}

#[test]
fn electrolytic_leakage_and_rating() {
    let v = json(
        &[
            "monostable",
            "R=1M",
            "C=100u",
            "--cap",
            "C=electrolytic",
            "--rating",
            "C=6.3V",
            "--samples",
            "0",
        ],
        1,
    );
    let errors = codes(&v, "error");
    assert!(
        errors.contains(&"leakage".to_string()) && errors.contains(&"voltage-rating".to_string())
    );
    assert!(codes(&v, "note").contains(&"polarity".to_string()));
    // Electrolytic default tolerance is ±20 % (common practice).
    assert_eq!(v["positions"][1]["tolerance"], "±20 %");
}

#[test]
fn help_has_examples_and_bad_input_is_exit_2() {
    Bench::new()
        .run(&["check", "--help"])
        .ok()
        .stdout_has("Examples:")
        .stdout_has("--measured");
    Bench::new()
        .run(&["check", "astable", "R1=4.7k", "R2=68k", "C=ten"])
        .code(2)
        .stderr_has("position C");
    Bench::new()
        .run(&["check", "astable", "R1=4.7k", "R2=68k", "C=10n", "R3=1k"])
        .code(2)
        .stderr_has("no position");
}

#[test]
fn text_report_is_stable() {
    // Reviewed snapshot of the whole text report (no Monte Carlo, so no RNG in it).
    let r = Bench::new()
        .run(&[
            "check",
            "astable",
            "R1=4.7k",
            "R2=68k",
            "C=10n",
            "--tol",
            "R1=1%",
            "--samples",
            "0",
            "--target",
            "1kHz",
            "--within",
            "5%",
            "--trim",
        ])
        .code(1);
    insta::assert_snapshot!("check_astable_text", r.stdout);
}

#[test]
fn one_diode_wiring_follows_rb_shunting_the_diode() {
    // Issue 9: RB·(Vcc − V)/(RA + RB) < Vf everywhere, so the diode never conducts and the high
    // time is (RA + RB)·C·ln 2 = 70.0 ms (DESIGN physics table, classic astable charge).
    let v = json(
        &[
            "steered",
            "RA=100k",
            "RB=1k",
            "C=1u",
            "--vcc",
            "5",
            "--diode",
            "0.7",
            "--one-diode",
            "--samples",
            "0",
        ],
        0,
    );
    let high = nominal(&v, "high");
    assert!((high - 101e3 * 1e-6 * 2f64.ln()).abs() < 0.05e-3, "{high}");
    // Not refused where the two-diode limit does not apply.
    let run = Bench::new().run(&[
        "check",
        "steered",
        "RA=10k",
        "RB=10k",
        "C=10n",
        "--vcc",
        "5",
        "--diode",
        "0.8",
        "--control",
        "1.5",
        "--one-diode",
        "--samples",
        "0",
    ]);
    assert!(run.status == 0 || run.status == 1, "{}", run.stderr);
}

#[test]
fn square_on_bipolar_uses_the_output_drop_by_default() {
    // Issue 9: 4.7 kΩ, 100 nF, 9 V, family drop 1.7 V (from memory): about 888 µs and 63 %.
    let v = json(&["square", "R=4k7", "C=100n", "--samples", "0"], 0);
    assert!((nominal(&v, "period") - 888e-6).abs() < 2e-6);
    assert!((nominal(&v, "duty") - 0.633).abs() < 0.001);
    // At 5 V the output never reaches the upper threshold: a clear error, not 7.2 kHz.
    Bench::new()
        .run(&["check", "square", "R=4k7", "C=100n", "--vcc", "5"])
        .code(2)
        .stderr_has("never switches");
}

#[test]
fn json_carries_nominal_band_and_worst_case() {
    let v = json(&["monostable", "R=970k", "C=470n", "--samples", "0"], 0);
    let n = &v["analyses"][0]["nominal"][0];
    let w = &v["analyses"][0]["worst_case"]["intervals"][0];
    for key in ["nominal", "band_lo", "band_hi"] {
        assert!(n[key].as_f64().is_some(), "{key}: {n}");
    }
    for key in [
        "nominal", "band_lo", "band_hi", "worst_lo", "worst_hi", "min", "max",
    ] {
        assert!(w[key].as_f64().is_some(), "{key}: {w}");
    }
    // The bias current band is one-sided: it only lengthens a one-shot.
    let (nom, hi) = (
        n["nominal"].as_f64().unwrap_or(0.0),
        n["band_hi"].as_f64().unwrap_or(0.0),
    );
    assert!(hi > nom * 1.01, "{nom} {hi}");
    assert_eq!(n["band_lo"].as_f64(), Some(nom));
    let effects: Vec<&str> = v["analyses"][0]["effects"]
        .as_array()
        .expect("effects")
        .iter()
        .filter_map(|e| e["code"].as_str())
        .collect();
    assert!(
        effects.contains(&"saturation") && effects.contains(&"bias-current"),
        "{effects:?}"
    );
}

#[test]
fn measured_frequency_infers_r1_with_its_interval() {
    // Issue 9: R2 68 k, C 10 n, 1.0254 kHz → R1 near 4.7 kΩ (ln 2·(R1 + 2·R2)·C, ideal);
    // the tolerances of R2 and C reach down to no R1 at all, so the interval starts at zero.
    let v = json(
        &[
            "astable",
            "R2=68k",
            "C=10n",
            "--measured",
            "1.0254kHz",
            "--ideal",
            "--samples",
            "0",
        ],
        0,
    );
    let inf = &v["inference"];
    let nominal = inf["nominal"].as_f64().expect("nominal");
    assert!((nominal - 4.7e3).abs() < 60.0, "{inf}");
    assert_eq!(inf["min"].as_f64(), Some(0.0));
    assert!(inf["max"].as_f64().expect("max") > nominal);
}

#[test]
fn diode_option_takes_volts_or_ideal_and_part_tol_keeps_its_old_spelling() {
    let base = ["steered", "RA=10k", "RB=4.7k", "C=100n", "--samples", "0"];
    let period = |extra: &[&str]| {
        let mut a = base.to_vec();
        a.extend_from_slice(extra);
        nominal(&json(&a, 0), "period")
    };
    let real = period(&[]);
    let ideal = period(&["--diode", "ideal"]);
    let fixed = period(&["--diode", "0.7V"]);
    assert!(ideal < real && real < fixed, "{ideal} {real} {fixed}");
    Bench::new()
        .run(&[
            "check", "steered", "RA=10k", "RB=4.7k", "C=100n", "--diode", "warm",
        ])
        .code(2)
        .stderr_has("ideal");
    let a = json(
        &[
            "monostable",
            "R=10k",
            "C=1u",
            "--part-tol",
            "R=1%",
            "--samples",
            "0",
        ],
        0,
    );
    let b = json(
        &[
            "monostable",
            "R=10k",
            "C=1u",
            "--tol",
            "R=1%",
            "--samples",
            "0",
        ],
        0,
    );
    assert_eq!(a["analyses"], b["analyses"]);
}

#[test]
fn measured_frequency_infers_r1_under_the_default_model_too() {
    // Issue 9 item 6 / brief bullet 3: without --ideal the real-part model is inverted. The check
    // is self-consistent: the inferred R1 put back into `check` gives the measured frequency
    // (the inverse and the forward evaluator are the same model), and the interval brackets it.
    let v = json(
        &[
            "astable",
            "R2=68k",
            "C=10n",
            "--measured",
            "1.0254kHz",
            "--samples",
            "0",
        ],
        0,
    );
    let inf = &v["inference"];
    assert_eq!(inf["position"], "R1", "{inf}");
    let r1 = inf["nominal"].as_f64().expect("nominal");
    let (lo, hi) = (
        inf["min"].as_f64().expect("min"),
        inf["max"].as_f64().expect("max"),
    );
    assert!(lo <= r1 && r1 < hi && r1 > 0.0, "{inf}");
    let r1_text = format!("R1={r1:.3}");
    let back = json(
        &["astable", &r1_text, "R2=68k", "C=10n", "--samples", "0"],
        0,
    );
    let f = nominal(&back, "frequency");
    assert!((f - 1025.4).abs() < 0.5, "{f}");
}

#[test]
fn bare_numbers_for_measured_and_target_are_refused_with_a_hint() {
    // Issue 12: a bare number where a unit is needed is refused (it used to be read as seconds).
    Bench::new()
        .run(&["check", "astable", "R2=68k", "C=10n", "--measured", "1025"])
        .code(2)
        .stderr_has("1.0254kHz");
    Bench::new()
        .run(&[
            "check", "astable", "R1=4.7k", "R2=68k", "C=10n", "--target", "1000", "--within", "2%",
        ])
        .code(2)
        .stderr_has("what?");
    Bench::new()
        .run(&["check", "monostable", "R=10k", "C=1u", "--trigger", "20"])
        .code(2)
        .stderr_has("what?");
    // With the unit they are taken.
    json(
        &[
            "astable",
            "R1=4.7k",
            "R2=68k",
            "C=10n",
            "--target",
            "1ms",
            "--within",
            "50%",
            "--samples",
            "0",
        ],
        0,
    );
}

#[test]
fn cap_technology_uses_the_one_technology_parser() {
    // Issue 12: `add --tech mkt` worked while `check --cap` refused it (three parsers).
    let v = json(
        &[
            "monostable",
            "R=10k",
            "C=1u",
            "--cap",
            "C=mkt",
            "--samples",
            "0",
        ],
        0,
    );
    assert!(v["findings"].is_array());
    json(
        &[
            "monostable",
            "R=10k",
            "C=1u",
            "--cap",
            "C=NP0",
            "--samples",
            "0",
        ],
        0,
    );
    // A resistor technology is not a dielectric.
    Bench::new()
        .run(&[
            "check",
            "monostable",
            "R=10k",
            "C=1u",
            "--cap",
            "C=metal_film",
        ])
        .code(2)
        .stderr_has("not a capacitor technology");
    // Pin figures go through the shared SI-number parser.
    json(
        &[
            "monostable",
            "R=10k",
            "C=1u",
            "--set",
            "threshold_current=250nA",
            "--samples",
            "0",
        ],
        0,
    );
    Bench::new()
        .run(&[
            "check",
            "monostable",
            "R=10k",
            "C=1u",
            "--set",
            "threshold_current=lots",
        ])
        .code(2);
}

#[test]
fn findings_are_listed_most_serious_first() {
    // Brief bullet 4: this design raises an error, several warnings and a note; before the sort
    // the error came second and the polarity note sat between warnings.
    let rank = |s: &str| match s {
        "error" => 0,
        "caution" => 1,
        "warning" => 2,
        _ => 3,
    };
    let args = [
        "monostable",
        "R=1M",
        "C=1000u",
        "--cap",
        "C=electrolytic",
        "--rating",
        "C=16V",
        "--vcc",
        "15",
        "--samples",
        "0",
    ];
    let v = json(&args, 1);
    let sev: Vec<i32> = v["findings"]
        .as_array()
        .expect("findings")
        .iter()
        .map(|f| rank(f["severity"].as_str().unwrap_or_default()))
        .collect();
    assert!(
        sev.len() >= 4 && sev.contains(&0) && sev.contains(&3),
        "{sev:?}"
    );
    assert!(sev.windows(2).all(|w| w[0] <= w[1]), "{sev:?}");
    let mut all = vec!["check"];
    all.extend_from_slice(&args);
    let text = Bench::new().run(&all).code(1).stdout;
    let block = text.split("findings:").nth(1).expect("findings block");
    // The labels are report::style's, as in every report.
    let (e, n) = (
        block.find("  Error ").expect("error"),
        block.find("  Note ").expect("note"),
    );
    let last_warning = block.rfind("  Warning ").expect("warning");
    assert!(e < last_warning && last_warning < n, "{block}");
}

#[test]
fn monte_carlo_columns_are_percentiles_and_numbers_are_plain() {
    // Issue 12 "Numbers": P1 / median / P99, not "1 %"; no scientific notation anywhere.
    let r = Bench::new()
        .run(&[
            "check",
            "astable",
            "R1=4.7k",
            "R2=68k",
            "C=10n",
            "--samples",
            "2000",
            "--target",
            "1kHz",
            "--within",
            "5%",
        ])
        .code(1);
    let header = r
        .stdout
        .lines()
        .find(|l| l.contains("mean") && l.contains("std dev"))
        .expect("Monte Carlo header");
    for label in ["P1", "median", "P99"] {
        assert!(header.contains(label), "{header}");
    }
    assert!(!header.contains("1 %"), "{header}");
    let sci = regex_free_scientific(&r.stdout);
    assert!(sci.is_none(), "scientific notation: {sci:?}");
}

/// The first token that looks like scientific notation (`9.9e-7`, `1E5`), if any.
fn regex_free_scientific(text: &str) -> Option<String> {
    text.split(|c: char| c.is_whitespace() || c == '(' || c == ')' || c == ',')
        .find(|w| {
            let b = w.as_bytes();
            b.iter().enumerate().any(|(i, &c)| {
                (c == b'e' || c == b'E')
                    && i > 0
                    && b[i - 1].is_ascii_digit()
                    && b.get(i + 1)
                        .is_some_and(|&n| n.is_ascii_digit() || n == b'-' || n == b'+')
            })
        })
        .map(str::to_string)
}

/// The design of `findings_are_listed_most_serious_first`: an error, cautions or warnings and a
/// note.
const MIXED: [&str; 12] = [
    "check",
    "monostable",
    "R=1M",
    "C=1000u",
    "--cap",
    "C=electrolytic",
    "--rating",
    "C=16V",
    "--vcc",
    "15",
    "--samples",
    "0",
];

/// `onhand ARGS…` run inside a pseudo-terminal by util-linux `script`, so stdout is a terminal;
/// `no_color` sets `NO_COLOR=1`, else it is removed. None when `script` is missing (and allowed
/// to be).
fn on_a_terminal(b: &Bench, args: &[&str], no_color: bool) -> Option<String> {
    if !crate::util::have_tool("script", &["--version"]) {
        return None;
    }
    let quote = |a: &str| format!("'{}'", a.replace('\'', "'\\''"));
    let bin = assert_cmd::cargo::cargo_bin!("onhand");
    let mut line = vec![
        quote(bin.to_str().expect("utf-8 path")),
        "--db".to_string(),
        quote(b.db().to_str().expect("utf-8 path")),
    ];
    line.extend(args.iter().map(|a| quote(a)));
    let mut cmd = std::process::Command::new("script");
    cmd.args(["-q", "-e", "-c", &line.join(" "), "/dev/null"])
        .env("ONHAND_USER", "tester")
        .env_remove("ONHAND_DB")
        .stdin(std::process::Stdio::null());
    if no_color {
        cmd.env("NO_COLOR", "1");
    } else {
        cmd.env_remove("NO_COLOR");
    }
    let out = cmd.output().expect("run script");
    assert_eq!(out.status.code(), Some(1), "{out:?}");
    Some(String::from_utf8_lossy(&out.stdout).replace("\r\n", "\n"))
}

#[test]
fn findings_are_coloured_on_a_terminal_only() {
    // Piped (what every other test sees): the style's plain labels, no escape code at all.
    let b = Bench::new();
    let mut piped = crate::util::onhand();
    piped
        .arg("--db")
        .arg(b.db())
        .env("ONHAND_USER", "tester")
        .env_remove("NO_COLOR")
        .args(MIXED);
    let out = piped.output().expect("run onhand");
    let text = String::from_utf8_lossy(&out.stdout).to_string();
    assert!(!text.contains('\u{1b}'), "{text}");
    assert!(
        text.contains("  Error  ") && text.contains("  Note   "),
        "{text}"
    );
    assert!(text.contains("result: FAILED"), "{text}");
    // On a terminal: the same labels in report::style's colours (bold red errors, yellow
    // warnings), the verdict too.
    let Some(tty) = on_a_terminal(&b, &MIXED, false) else {
        return;
    };
    let block = tty.split("findings:").nth(1).expect("findings block");
    assert!(block.contains("\u{1b}[1;31mError\u{1b}[0m"), "{block}");
    assert!(block.contains("\u{1b}[33mWarning\u{1b}[0m"), "{block}");
    assert!(tty.contains("result: \u{1b}[1;31mFAILED\u{1b}[0m"), "{tty}");
    // NO_COLOR on the same terminal: no colour.
    let plain = on_a_terminal(&b, &MIXED, true).expect("script ran before");
    assert!(!plain.contains('\u{1b}'), "{plain}");
    assert!(plain.contains("  Error  "), "{plain}");
}
