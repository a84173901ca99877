//! The three pictures: waveform, Monte Carlo histogram, reach of a stock. Pure: each builds an
//! SVG `String`; the command layer decides where it goes.

pub mod histogram;
pub mod reach;
pub mod waveform;

pub use histogram::Histogram;
pub use reach::Reach;
pub use waveform::Waveform;

#[cfg(test)]
mod tests {
    use crate::timing::Conditions;
    use crate::units::{Farads, Ohms, Seconds, Volts};

    fn s(v: f64) -> Seconds {
        Seconds::from_si(v).unwrap_or_default()
    }

    /// Every picture must be well-formed XML with an <svg> root (parsed by roxmltree, an
    /// independent XML parser).
    fn assert_valid_svg(doc: &str) {
        let parsed = roxmltree::Document::parse(doc).expect("well-formed SVG");
        assert_eq!(parsed.root_element().tag_name().name(), "svg");
        assert!(parsed.descendants().any(|n| n.tag_name().name() == "text"));
    }

    #[test]
    fn pictures_are_valid_svg() {
        let c = Conditions::ideal(Volts::from_si(9.0).unwrap_or_default());
        let (r1, r2, cap) = (
            Ohms::from_base(4_700_000),
            Ohms::from_base(68_000_000),
            Farads::from_base(10_000_000),
        );
        for w in [
            super::Waveform::astable(r1, r2, cap, &c),
            super::Waveform::steered(r1, r2, cap, &c),
            super::Waveform::square(r2, cap, &c),
            super::Waveform::monostable(r2, cap, &c),
        ] {
            assert_valid_svg(&w.expect("waveform").to_svg());
        }
        let samples: Vec<Seconds> = (0..500).map(|i| s(1e-3 + f64::from(i) * 1e-8)).collect();
        let h = super::Histogram::new(
            "period & <spread>",
            "period",
            &samples,
            s(1e-3),
            (s(0.99e-3), s(1.01e-3)),
        )
        .with_target(s(0.995e-3), s(1.005e-3));
        assert_valid_svg(&h.to_svg());
        let mut r = super::Reach::new("reach", "pulse width", (s(1e-6), s(100.0)));
        r.row("10 nF", &[(s(1e-5), s(1e-2))]);
        assert_valid_svg(&r.to_svg());
        assert_eq!(r.holes().len(), 2);
    }
}
