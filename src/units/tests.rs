//! Table-driven tests of parsing and display in both directions, the round trip over every
//! preferred value, and property tests that no input panics a parser.

use super::*;
use proptest::prelude::*;

fn ohms(v: f64) -> Ohms {
    Ohms::from_si(v).expect("in range")
}
fn farads(v: f64) -> Farads {
    Farads::from_si(v).expect("in range")
}

#[test]
fn resistances() {
    // Letter-as-decimal-point forms: IEC 60062 letter code. The rest is common practice.
    let cases: &[(&str, i64)] = &[
        ("4.7k", 4_700_000),
        ("4.7 kΩ", 4_700_000),
        ("4.7kΩ", 4_700_000),
        ("4.7 k\u{2126}", 4_700_000),
        ("4700", 4_700_000),
        ("4700R", 4_700_000),
        ("1M", 1_000_000_000),
        ("1meg", 1_000_000_000),
        ("1MEG", 1_000_000_000),
        ("1 Meg ohm", 1_000_000_000),
        ("1m", 1),
        ("10 ohm", 10_000),
        ("10 ohms", 10_000),
        ("10 Ohms", 10_000),
        ("100R", 100_000),
        ("4k7", 4_700_000),
        ("4K7", 4_700_000),
        ("2R2", 2_200),
        ("R47", 470),
        ("1M5", 1_500_000_000),
        ("0R1", 100),
        ("4k7Ω", 4_700_000),
        ("10k", 10_000_000),
        ("  22k  ", 22_000_000),
        (".5k", 500_000),
        ("5.", 5_000),
        ("1e3", 1_000_000),
        ("4.7e3 Ω", 4_700_000),
        ("2.2G", 2_200_000_000_000),
        ("0", 0),
        ("0R", 0),
        ("yellow-violet-red-gold", 4_700_000),
        ("brown black orange", 10_000_000),
    ];
    for (text, base) in cases {
        assert_eq!(
            parse_resistance(text),
            Ok(Ohms::from_base(*base)),
            "{text:?}"
        );
        assert_eq!(text.parse::<Ohms>(), Ok(Ohms::from_base(*base)));
    }
}

#[test]
fn capacitances() {
    // Three-digit codes: two significant digits then the count of zeros, in pF (common
    // practice); letter codes 4n7, p68: IEC 60062.
    let cases: &[(&str, f64)] = &[
        ("100n", 100e-9),
        ("100nF", 100e-9),
        ("100 nF", 100e-9),
        ("100nf", 100e-9),
        ("0.1u", 0.1e-6),
        ("0.1uF", 0.1e-6),
        ("0.1µF", 0.1e-6),
        ("0.1μF", 0.1e-6),
        ("0.1 µ", 0.1e-6),
        ("2.2mF", 2.2e-3),
        ("1F", 1.0),
        ("100F", 100.0),
        ("4n7", 4.7e-9),
        ("4N7", 4.7e-9),
        ("p68", 0.68e-12),
        ("2u2", 2.2e-6),
        ("680f", 680e-15),
        ("680 fF", 680e-15),
        ("1e-6", 1e-6),
        ("104", 100e-9),
        ("472", 4.7e-9),
        ("220", 22e-12),
        ("100", 10e-12),
        ("105", 1e-6),
        ("106", 10e-6),
        ("109", 1e-12),
        ("479", 4.7e-12),
        ("104K", 100e-9),
        ("104 J", 100e-9),
        ("105M", 1e-6),
    ];
    for (text, v) in cases {
        assert_eq!(parse_capacitance(text), Ok(farads(*v)), "{text:?}");
        assert_eq!(text.parse::<Farads>(), Ok(farads(*v)));
    }
}

#[test]
fn capacitor_markings_keep_the_tolerance() {
    // IEC 60062 letters on a three-digit code.
    assert_eq!(
        parse_capacitor_marking("104K"),
        Ok((farads(100e-9), Tolerance::symmetric_percent(10.0)))
    );
    assert_eq!(
        parse_capacitor_marking("103Z"),
        Ok((farads(10e-9), Tolerance::asymmetric_percent(20.0, 80.0)))
    );
    assert_eq!(parse_capacitor_marking("4n7"), Ok((farads(4.7e-9), None)));
    // From memory (IEC 60062): below 10 pF, C means ±0.25 pF; on 4.7 pF that is ±5.319 %.
    let (f, tol) = parse_capacitor_marking("479C").expect("marking");
    assert_eq!(f, farads(4.7e-12));
    let tol = tol.expect("tolerance");
    assert_eq!(tol.plus, Ratio::from_base(53_191_489));
}

#[test]
fn long_times_read_back_as_printed() {
    let s = |x: i64| Seconds::from_base(x * 1_000_000_000_000);
    assert_eq!(parse_time_strict("90 min"), Ok(s(5400)));
    assert_eq!(parse_time_strict("1h"), Ok(s(3600)));
    assert_eq!(parse_time("1.5 h"), Ok(s(5400)));
    assert_eq!(parse_time_strict("2 d"), Ok(s(172_800)));
    // What time_text prints for long times is accepted back unchanged.
    for secs in [90, 5400, 7200, 172_800] {
        let shown = time_text(s(secs), 4);
        assert_eq!(parse_time_strict(&shown), Ok(s(secs)), "{shown}");
    }
    // A prefix and a long unit together is not a time.
    assert!(parse_time_strict("1.5ms h").is_err());
    assert!(parse_time_strict("h").is_err());
    // Beyond what the exact store holds (about 106 days): refused, not wrapped.
    assert!(parse_time_strict("999999 d").is_err());
}

#[test]
fn other_quantities() {
    assert_eq!(
        parse_time("1.5 s"),
        Ok(Seconds::from_base(1_500_000_000_000))
    );
    assert_eq!(parse_time("10ms"), Ok(Seconds::from_base(10_000_000_000)));
    assert_eq!(
        parse_time("250 ms"),
        Ok(Seconds::from_base(250_000_000_000))
    );
    assert_eq!(parse_time("100us"), Ok(Seconds::from_base(100_000_000)));
    assert_eq!(parse_time("3"), Ok(Seconds::from_base(3_000_000_000_000)));
    assert_eq!(
        parse_frequency("38 kHz"),
        Ok(Hertz::from_base(38_000_000_000))
    );
    assert_eq!(parse_frequency("1k"), Ok(Hertz::from_base(1_000_000_000)));
    assert_eq!(parse_frequency("440hz"), Ok(Hertz::from_base(440_000_000)));
    assert_eq!(
        parse_frequency("2 MHz"),
        Ok(Hertz::from_base(2_000_000_000_000))
    );
    assert_eq!(parse_frequency("2 mHz"), Ok(Hertz::from_base(2_000)));
    assert_eq!(parse_voltage("9"), Ok(Volts::from_base(9_000_000)));
    assert_eq!(parse_voltage("12 V"), Ok(Volts::from_base(12_000_000)));
    assert_eq!(parse_voltage("700mV"), Ok(Volts::from_base(700_000)));
    assert_eq!(parse_voltage("5v"), Ok(Volts::from_base(5_000_000)));
    assert_eq!(parse_current("200mA"), Ok(Amps::from_base(200_000_000_000)));
    assert_eq!(parse_power("0.25"), Ok(Watts::from_base(250_000)));
    assert_eq!(parse_power("250 mW"), Ok(Watts::from_base(250_000)));
    assert_eq!(parse_power("1/4 W"), Ok(Watts::from_base(250_000)));
    assert_eq!(parse_power("1/8W"), Ok(Watts::from_base(125_000)));
    assert_eq!(parse_ratio("0.6"), Ok(Ratio::from_base(600_000_000)));
    assert_eq!(parse_ratio("60%"), Ok(Ratio::from_base(600_000_000)));
    assert_eq!(parse_ratio("60 %"), Ok(Ratio::from_base(600_000_000)));
    assert_eq!(parse_ratio("33.3%"), Ok(Ratio::from_base(333_000_000)));
    assert_eq!("60%".parse::<Ratio>(), Ok(Ratio::from_base(600_000_000)));
}

#[test]
fn tolerances() {
    // Letters: IEC 60062 (B C D F G J K M); Z −20/+80 % (IEC 60062).
    let sym = |p: f64| Tolerance::symmetric_percent(p).expect("tolerance");
    let cases: &[(&str, Tolerance)] = &[
        ("1%", sym(1.0)),
        ("±5 %", sym(5.0)),
        ("0.5%", sym(0.5)),
        ("+-2%", sym(2.0)),
        ("+/-10 %", sym(10.0)),
        ("± 0.1%", sym(0.1)),
        ("0%", sym(0.0)),
        ("B", sym(0.1)),
        ("C", sym(0.25)),
        ("D", sym(0.5)),
        ("F", sym(1.0)),
        ("G", sym(2.0)),
        ("J", sym(5.0)),
        ("K", sym(10.0)),
        ("M", sym(20.0)),
        ("j", sym(5.0)),
    ];
    for (text, want) in cases {
        assert_eq!(parse_tolerance(text), Ok(*want), "{text:?}");
    }
    let z = Tolerance::asymmetric_percent(20.0, 80.0).expect("tolerance");
    for text in [
        "Z",
        "-20/+80 %",
        "+80/-20%",
        "−20/+80 %",
        "-20%/+80%",
        "−20 % / +80 %",
    ] {
        assert_eq!(parse_tolerance(text), Ok(z), "{text:?}");
        assert_eq!(text.parse::<Tolerance>(), Ok(z));
    }
    assert_eq!(z.letter(), Some('Z'));
    assert_eq!(sym(5.0).letter(), Some('J'));
    assert_eq!(sym(3.0).letter(), None);
}

#[test]
fn bad_input_is_a_clear_error() {
    let resistances = [
        "",
        "   ",
        "4k7k",
        "10x",
        "-5k",
        "−5k",
        "+5k",
        "1e400",
        "1e-400",
        "NaN",
        "inf",
        "1..2",
        "k",
        "R",
        "Ω",
        "4,7k",
        "4 k7",
        "1meg5",
        "1e",
        "0.0001",
        "4.7k7",
        "4k7.2",
        "1kk",
        "99999999999999999999999999999999999999",
        "10M Ω Ω",
        "yellow-violet",
        "red-red-pink-gold",
    ];
    for text in resistances {
        let e = parse_resistance(text).expect_err(text);
        assert_eq!(e.text, text);
        assert!(e.expected.contains("resistance") || e.expected.contains("colour"));
        let msg = e.to_string();
        assert!(msg.contains("cannot read") && !e.reason.is_empty(), "{msg}");
    }
    let capacitances = [
        "4700", "4.7", "47", "1000", "0", "107", "108", "047", "100x", "1e400", "-1u", "u",
        "104KK", "0.1 fF",
    ];
    for text in capacitances {
        let e = parse_capacitance(text).expect_err(text);
        assert_eq!(e.text, text);
        assert!(!e.reason.is_empty());
    }
    assert!(
        parse_capacitance("4700")
            .expect_err("ambiguous")
            .reason
            .contains("prefix")
    );
    assert!(
        parse_capacitance("107")
            .expect_err("bad multiplier")
            .reason
            .contains("multiplier")
    );
    for text in [
        "",
        "5",
        "0.05",
        "-5%",
        "+5%",
        "5%%",
        "X",
        "-20/-80%",
        "-20/+80",
        "-100/+0%",
        "±1e2%",
        "1/2/3%",
        "+2000/-5%",
        "abc%",
        "±%",
    ] {
        let e = parse_tolerance(text).expect_err(text);
        assert_eq!(e.text, text);
    }
    for text in ["1 kV V", "12 A", "", "-3"] {
        assert!(parse_voltage(text).is_err(), "{text:?}");
    }
    for text in ["1/0 W", "1/x", "a/4", "1.5/4"] {
        assert!(parse_power(text).is_err(), "{text:?}");
    }
    for text in ["60k", "60 %%", "%", "1e400%"] {
        assert!(parse_ratio(text).is_err(), "{text:?}");
    }
    // Minutes are read as printed (never as milli-something); anything else after them is not.
    assert_eq!(
        parse_time("1 min"),
        Ok(Seconds::from_base(60_000_000_000_000))
    );
    assert!(parse_time("1 mins").is_err());
    assert!(parse_time("1 hour").is_err());
    assert!(parse_frequency("1 H").is_err());
}

#[test]
fn display_is_exact_with_fewest_digits() {
    let cases: &[(String, &str)] = &[
        (ohms(4_700.0).to_string(), "4.7 kΩ"),
        (ohms(1e6).to_string(), "1 MΩ"),
        (ohms(0.1).to_string(), "100 mΩ"),
        (ohms(0.0).to_string(), "0 Ω"),
        (ohms(4_701.0).to_string(), "4.701 kΩ"),
        (ohms(10.0).to_string(), "10 Ω"),
        (farads(100e-9).to_string(), "100 nF"),
        (farads(680e-15).to_string(), "680 fF"),
        (farads(4.7e-6).to_string(), "4.7 µF"),
        (Seconds::from_base(10_000_000_000_000).to_string(), "10 s"),
        (Seconds::from_base(1).to_string(), "1 ps"),
        (Hertz::from_base(1_000_000_000).to_string(), "1 kHz"),
        (Volts::from_base(9_000_000).to_string(), "9 V"),
        (Watts::from_base(250_000).to_string(), "250 mW"),
        (Amps::from_base(1).to_string(), "1 pA"),
        (Ohms::from_base(-4_700_000).to_string(), "-4.7 kΩ"),
        (Ohms::MAX.to_string(), "9223.372036854775807 TΩ"),
        (Ratio::from_base(600_000_000).to_string(), "60 %"),
        (Ratio::from_base(2_500_000).to_string(), "0.25 %"),
        (format!("[{:>8}]", ohms(4_700.0)), "[  4.7 kΩ]"),
    ];
    for (got, want) in cases {
        assert_eq!(got, want);
    }
}

#[test]
fn rounded_display_for_reports() {
    assert_eq!(ohms(3_333.333).eng(3), "3.33 kΩ");
    assert_eq!(ohms(999_600.0).eng(3), "1 MΩ");
    assert_eq!(ohms(4_700.0).eng(3), "4.7 kΩ");
    assert_eq!(farads(1.2345e-9).eng(2), "1.2 nF");
    assert_eq!(Seconds::from_base(1_098_612_288_668).eng(4), "1.099 s");
    assert_eq!(format_sig(3333.333, 3, "Ω"), "3.33 kΩ");
    assert_eq!(format_sig(999.96, 4, "Hz"), "1 kHz");
    assert_eq!(format_sig(-0.0125, 2, "V"), "-13 mV");
    assert_eq!(format_sig(0.0, 3, "s"), "0 s");
    assert_eq!(Ratio::from_base(333_333_333).percent_text(3), "33.3");
}

#[test]
fn tolerance_display() {
    let t = |s: &str| parse_tolerance(s).expect("tolerance").to_string();
    assert_eq!(t("1%"), "±1 %");
    assert_eq!(t("J"), "±5 %");
    assert_eq!(t("C"), "±0.25 %");
    assert_eq!(t("Z"), "\u{2212}20/+80 %");
    assert_eq!(t("+50/-10%"), "\u{2212}10/+50 %");
    for s in ["±1 %", "±0.05 %", "−20/+80 %", "−10/+100 %"] {
        assert_eq!(t(s), s, "tolerance display round trip");
    }
}

#[test]
fn every_preferred_value_round_trips() {
    // Every value of every series, E192 and E24 included, in every decade 1 Ω … 10 MΩ and
    // 1 pF … 1 F (IEC 60063 tables): parse(display(x)) == x and display is the short form.
    let mut checked = 0;
    for s in Series::ALL {
        for v in eseries::values_between(s, ohms(1.0), ohms(10e6)) {
            let shown = v.to_string();
            assert_eq!(parse_resistance(&shown), Ok(v), "{s} {shown}");
            assert!(shown.len() <= "9.09 kΩ".len() + 1, "{shown}");
            checked += 1;
        }
        for v in eseries::values_between(s, farads(1e-12), farads(1.0)) {
            let shown = v.to_string();
            assert_eq!(parse_capacitance(&shown), Ok(v), "{s} {shown}");
            checked += 1;
        }
    }
    // 7 decades of resistance plus one end point, 12 of capacitance plus one, over all series.
    let per: usize = Series::ALL.iter().map(|s| s.per_decade()).sum();
    assert_eq!(checked, per * 7 + 7 + per * 12 + 7);
}

#[test]
fn letter_code_display_round_trip() {
    // What a part says, what we show, and back (IEC 60062 letter code).
    for (code, shown) in [
        ("4k7", "4.7 kΩ"),
        ("2R2", "2.2 Ω"),
        ("R47", "470 mΩ"),
        ("1M5", "1.5 MΩ"),
    ] {
        let v = parse_resistance(code).expect("code");
        assert_eq!(v.to_string(), shown);
        assert_eq!(parse_resistance(shown), Ok(v));
    }
    for (code, shown) in [
        ("4n7", "4.7 nF"),
        ("p68", "680 fF"),
        ("104", "100 nF"),
        ("472", "4.7 nF"),
    ] {
        let v = parse_capacitance(code).expect("code");
        assert_eq!(v.to_string(), shown);
        assert_eq!(parse_capacitance(shown), Ok(v));
    }
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 2000, ..ProptestConfig::default() })]

    #[test]
    fn no_parser_panics_on_any_text(s in "\\PC{0,24}") {
        let _ = parse_resistance(&s);
        let _ = parse_capacitance(&s);
        let _ = parse_capacitor_marking(&s);
        let _ = parse_time(&s);
        let _ = parse_frequency(&s);
        let _ = parse_voltage(&s);
        let _ = parse_current(&s);
        let _ = parse_power(&s);
        let _ = parse_ratio(&s);
        let _ = parse_tolerance(&s);
        let _ = parse_colour_bands(&s);
    }

    #[test]
    fn no_parser_panics_on_value_like_text(
        s in "[-+±−0-9.,eE/% ]{0,6}[pnuµmkKMRgGTfFNP]{0,3}[0-9]{0,3}[ ΩFsHzVWA%ohm]{0,4}"
    ) {
        // Whatever is accepted shows in a form that reads back as the same value.
        if let Ok(v) = parse_resistance(&s) {
            prop_assert_eq!(parse_resistance(&v.to_string()), Ok(v));
        }
        if let Ok(v) = parse_capacitance(&s) {
            prop_assert_eq!(parse_capacitance(&v.to_string()), Ok(v));
        }
        if let Ok(v) = parse_time(&s) {
            prop_assert_eq!(parse_time(&v.to_string()), Ok(v));
        }
        if let Ok(v) = parse_tolerance(&s) {
            prop_assert_eq!(parse_tolerance(&v.to_string()), Ok(v));
        }
        let _ = parse_power(&s);
        let _ = parse_ratio(&s);
    }

    #[test]
    fn display_round_trips_any_value(b in 0i64..=i64::MAX) {
        prop_assert_eq!(parse_resistance(&Ohms::from_base(b).to_string()), Ok(Ohms::from_base(b)));
        prop_assert_eq!(parse_capacitance(&Farads::from_base(b).to_string()), Ok(Farads::from_base(b)));
        prop_assert_eq!(parse_time(&Seconds::from_base(b).to_string()), Ok(Seconds::from_base(b)));
        prop_assert_eq!(parse_frequency(&Hertz::from_base(b).to_string()), Ok(Hertz::from_base(b)));
        prop_assert_eq!(parse_voltage(&Volts::from_base(b).to_string()), Ok(Volts::from_base(b)));
        prop_assert_eq!(parse_power(&Watts::from_base(b).to_string()), Ok(Watts::from_base(b)));
        prop_assert_eq!(parse_ratio(&Ratio::from_base(b).to_string()), Ok(Ratio::from_base(b)));
    }

    #[test]
    fn tolerance_display_round_trips(minus in 0i64..999_999_999, plus in 0i64..=10_000_000_000) {
        let t = Tolerance { minus: Ratio::from_base(minus), plus: Ratio::from_base(plus) };
        prop_assert_eq!(parse_tolerance(&t.to_string()), Ok(t));
    }

    #[test]
    fn small_values_round_trip(b in 0i64..100_000_000) {
        prop_assert_eq!(parse_resistance(&Ohms::from_base(b).to_string()), Ok(Ohms::from_base(b)));
        prop_assert_eq!(parse_capacitance(&Farads::from_base(b).to_string()), Ok(Farads::from_base(b)));
    }

    #[test]
    fn nearest_lies_between_the_neighbours(b in 1i64..1_000_000_000_000, idx in 0usize..7) {
        let s = Series::ALL[idx];
        let x = Ohms::from_base(b);
        let n = eseries::nearest(s, x).expect("nearest exists");
        prop_assert!(s.contains(n));
        if s.contains(x) {
            prop_assert_eq!(n, x);
        } else {
            let lo = eseries::next_below(s, x);
            let hi = eseries::next_above(s, x);
            prop_assert!(Some(n) == lo || Some(n) == hi);
            if let Some(lo) = lo {
                prop_assert!(lo < x && !eseries::values_between(s, lo, x).iter().any(|v| *v > lo && *v < x));
            }
        }
    }
}

#[test]
fn strict_times_and_frequencies_need_a_unit() {
    // A unit or prefix is required; the bare number is refused with "250 what?".
    assert_eq!(
        parse_time_strict("250ms").map(|t| t.base()),
        Ok(250_000_000_000)
    );
    assert_eq!(
        parse_time_strict("1.5 s").map(|t| t.base()),
        Ok(1_500_000_000_000)
    );
    assert_eq!(parse_time_strict("100u").map(|t| t.base()), Ok(100_000_000));
    assert_eq!(parse_frequency_strict("1k"), parse_frequency("1000"));
    assert_eq!(parse_frequency_strict("440 Hz"), parse_frequency("440"));
    let e = parse_time_strict("250").expect_err("bare");
    assert!(e.to_string().contains("250 what?"), "{e}");
    assert!(e.to_string().contains("250ms"), "{e}");
    let e = parse_frequency_strict("440").expect_err("bare");
    assert!(e.to_string().contains("440 what?"), "{e}");
    // The lenient forms still read a bare number in the SI unit.
    assert_eq!(parse_time("2.5").map(|t| t.base()), Ok(2_500_000_000_000));
}

#[test]
fn resistor_markings_only_with_the_prefix() {
    // A bare 472 typed as a resistance is 472 Ω; marking:472 is the printed code, 4.7 kΩ.
    assert_eq!(parse_resistance("472").map(|r| r.base()), Ok(472_000));
    assert_eq!(
        parse_resistance("marking:472").map(|r| r.base()),
        Ok(4_700_000)
    );
    assert_eq!(
        parse_resistance("marking:01C").map(|r| r.base()),
        Ok(10_000_000)
    );
    assert!(parse_resistance("marking:4k7").is_err());
    // For a capacitor the code is read either way.
    assert_eq!(parse_capacitance("marking:104"), parse_capacitance("104"));
}

#[test]
fn si_numbers() {
    // SI prefixes: the BIPM SI brochure's decimal multiples.
    let close = |a: f64, b: f64| (a - b).abs() <= 1e-12 * b.abs();
    for (text, want) in [
        ("250n", 250e-9),
        ("1.5m", 1.5e-3),
        ("10k", 10e3),
        ("2e-9", 2e-9),
        ("4µ7", 4.7e-6),
        ("0.5", 0.5),
        ("1 M", 1e6),
    ] {
        let v = parse_si_number(text).expect(text);
        assert!(close(v, want), "{text}: {v}");
    }
    for bad in ["", "n", "5 apples", "-3", "1,5"] {
        assert!(parse_si_number(bad).is_err(), "{bad}");
    }
}
