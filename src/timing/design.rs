//! One timer stage as a design: which circuit form, its part values, what is known of its
//! timing capacitor, and the operating conditions; and the times it produces.
//!
//! Forms modelled (see `forms.rs` for the equations):
//! - **Monostable**: R from Vcc to the discharge/threshold node, C to ground; width `ln 3·R·C`.
//! - **Astable** (classic): R1 from Vcc to the discharge pin, R2 from there to the capacitor;
//!   charge through R1+R2, discharge through R2 into the discharge pin. Duty always above 50 %.
//! - **Steered** (diode-steered astable): Ra (`r1`) from Vcc to the discharge pin; the charge
//!   path runs from the discharge pin through a diode into the capacitor, the discharge path from
//!   the capacitor through Rb (`r2`) back into the discharge pin. [`Steering::TwoDiode`] has a
//!   diode in each path (drop Vf in both equations). The common single-diode bypass (a diode
//!   across R2 of the classic astable) maps onto it with Ra = R1, Rb = R2: charge flows through
//!   R1 and the diode (R2 bypassed), discharge flows through R2 with no diode in the path —
//!   [`Steering::OneDiode`], whose low time is `ln(Vu/Vl)·Rb·C`. In the ideal model (Vf = 0) the
//!   two are the same. [`Stage::times`] keeps these closed forms (R2's current beside the
//!   conducting diode neglected) for the screen; `timing::evaluate` models RB shunting the diode.
//! - **Square** (output-driven): one R from the output to the capacitor; needs an output that
//!   swings to the rails (CMOS); the discharge pin is unused.
//!
//! Two-stage designs (pace astable triggering a width monostable) and the dual package are two
//! [`Stage`]s; their joint checks live in `checks.rs`. Pure; no I/O.

use super::forms::{Conditions, Factors, FormError};
use crate::model::Technology;
use crate::units::{Farads, Hertz, Ohms, Ratio, Seconds, Tolerance, Volts};
use serde::Serialize;

pub use crate::model::Form;

/// How the diode-steered astable is wired (see the module header).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize, Default)]
#[serde(rename_all = "snake_case")]
pub enum Steering {
    /// A diode in the charge path and one in the discharge path.
    #[default]
    TwoDiode,
    /// One diode bypassing R2 of the classic astable: diode only in the charge path.
    OneDiode,
}

/// What is known of the timing capacitor.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct CapFacts {
    /// Dielectric.
    pub technology: Technology,
    /// Voltage rating, if known.
    pub voltage_rating: Option<Volts>,
    /// Tolerance.
    pub tolerance: Tolerance,
}

/// One timer stage.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Stage {
    /// Circuit form.
    pub form: Form,
    /// Monostable R, astable R1, steered Ra (charge path), square R.
    pub r1: Ohms,
    /// Astable R2, steered Rb (discharge path); `None` otherwise.
    pub r2: Option<Ohms>,
    /// Timing capacitance.
    pub c: Farads,
    /// What is known of the capacitor; `None` when unknown.
    pub cap: Option<CapFacts>,
    /// Operating conditions.
    pub conditions: Conditions,
    /// Diode wiring; only read for [`Form::Steered`].
    pub steering: Steering,
}

/// The times one stage produces. A monostable has only `high` (its pulse width).
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct StageTimes {
    /// Output high time (the pulse width of a monostable).
    pub high: Seconds,
    /// Output low time (periodic forms).
    pub low: Option<Seconds>,
    /// High plus low.
    pub period: Option<Seconds>,
    /// 1 / period.
    pub frequency: Option<Hertz>,
    /// High over period.
    pub duty: Option<Ratio>,
}

impl StageTimes {
    /// The pulse width of a monostable (its high time).
    pub fn width(&self) -> Seconds {
        self.high
    }
}

/// High and low time in seconds of `form` with these values (SI units) and factors; `low` is
/// `None` for a monostable. The fast path for tolerance analysis and the search.
pub fn cycle_si(
    form: Form,
    steering: Steering,
    r1: f64,
    r2: f64,
    c: f64,
    k: &Factors,
) -> (f64, Option<f64>) {
    match form {
        Form::Monostable => (r1 * c * k.one_shot, None),
        Form::Astable => ((r1 + r2) * c * k.charge, Some(r2 * c * k.discharge)),
        Form::Steered => {
            let kd = match steering {
                Steering::TwoDiode => k.steered_discharge,
                Steering::OneDiode => k.discharge,
            };
            (r1 * c * k.steered_charge, Some(r2 * c * kd))
        }
        Form::Square => (r1 * c * k.square_high, Some(r1 * c * k.square_low)),
    }
}

fn bad(what: &str) -> FormError {
    FormError::Unreachable(what.to_string())
}

impl Stage {
    /// A monostable of R and C under `conditions`.
    pub fn monostable(r: Ohms, c: Farads, conditions: Conditions) -> Self {
        Self::new(Form::Monostable, r, None, c, conditions)
    }

    /// A classic astable.
    pub fn astable(r1: Ohms, r2: Ohms, c: Farads, conditions: Conditions) -> Self {
        Self::new(Form::Astable, r1, Some(r2), c, conditions)
    }

    /// A diode-steered astable (two-diode wiring; change `steering` for the one-diode bypass).
    pub fn steered(ra: Ohms, rb: Ohms, c: Farads, conditions: Conditions) -> Self {
        Self::new(Form::Steered, ra, Some(rb), c, conditions)
    }

    /// An output-driven square wave.
    pub fn square(r: Ohms, c: Farads, conditions: Conditions) -> Self {
        Self::new(Form::Square, r, None, c, conditions)
    }

    fn new(form: Form, r1: Ohms, r2: Option<Ohms>, c: Farads, conditions: Conditions) -> Self {
        Self {
            form,
            r1,
            r2,
            c,
            cap: None,
            conditions,
            steering: Steering::default(),
        }
    }

    /// The refinements beyond the ideal model that these conditions use, in words.
    pub fn refinements(&self) -> Vec<String> {
        let c = &self.conditions;
        let mut out = Vec::new();
        if let Some(v) = c.control {
            out.push(format!("control pin driven at {v}"));
        }
        if self.form == Form::Steered && c.diode_drop != Volts::ZERO {
            out.push(format!("diode drop {}", c.diode_drop));
        }
        if self.form == Form::Square && c.output_high_drop != Volts::ZERO {
            out.push(format!(
                "output high {} below the supply",
                c.output_high_drop
            ));
        }
        out
    }

    /// High time, low time, period, frequency and duty.
    pub fn times(&self) -> Result<StageTimes, FormError> {
        if !self.c.is_positive() {
            return Err(bad("the timing capacitance must be above zero"));
        }
        let r2 = match (self.form.has_r2(), self.r2) {
            (true, Some(r)) => r.si(),
            (true, None) => return Err(bad("this form needs a second resistor")),
            (false, _) => 0.0,
        };
        let k = self.conditions.factors()?;
        let (high, low) = cycle_si(self.form, self.steering, self.r1.si(), r2, self.c.si(), &k);
        let secs = |v: f64| {
            Seconds::from_si(v).ok_or_else(|| bad("a time is out of the representable range"))
        };
        let high_s = secs(high)?;
        let Some(low) = low else {
            if high <= 0.0 {
                return Err(bad("the resistance must be above zero"));
            }
            return Ok(StageTimes {
                high: high_s,
                low: None,
                period: None,
                frequency: None,
                duty: None,
            });
        };
        let period = high + low;
        if high <= 0.0 || low <= 0.0 {
            return Err(bad(
                "both the high and the low time must be above zero (a resistance is zero)",
            ));
        }
        Ok(StageTimes {
            high: high_s,
            low: Some(secs(low)?),
            period: Some(secs(period)?),
            frequency: Some(
                Hertz::from_si(1.0 / period).ok_or_else(|| bad("frequency out of range"))?,
            ),
            duty: Ratio::from_si(high / period),
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn v(x: f64) -> Volts {
        Volts::from_si(x).expect("volts")
    }
    fn r(x: f64) -> Ohms {
        Ohms::from_si(x).expect("ohms")
    }
    fn c(x: f64) -> Farads {
        Farads::from_si(x).expect("farads")
    }

    #[test]
    fn monostable_is_about_1_1_rc() {
        // common practice: t ≈ 1.1·R·C. 1 MΩ, 10 µF → about 11 s (ln 3 = 1.0986 → 10.986 s).
        let t = Stage::monostable(r(1e6), c(10e-6), Conditions::ideal(v(9.0)))
            .times()
            .expect("times");
        assert!((t.width().si() - 11.0).abs() / 11.0 < 0.002, "{}", t.high);
        assert!(t.period.is_none());
    }

    #[test]
    fn astable_follows_1_44_rule() {
        // common practice: f ≈ 1.44/((R1+2R2)·C); 4.7 kΩ, 68 kΩ, 10 nF → about 1.02 kHz.
        let t = Stage::astable(r(4700.0), r(68e3), c(10e-9), Conditions::ideal(v(9.0)))
            .times()
            .expect("times");
        let rule = 1.44 / ((4700.0 + 2.0 * 68e3) * 10e-9);
        let f = t.frequency.expect("f").si();
        assert!((f - rule).abs() / rule < 0.002, "{f} vs {rule}");
        // DESIGN physics table: duty of the classic astable is (R1+R2)/(R1+2R2).
        let duty = t.duty.expect("duty").si();
        assert!((duty - 72.7e3 / 140.7e3).abs() < 1e-6);
    }

    #[test]
    fn astable_with_r2_much_larger_than_r1_nears_square() {
        // common practice: when R2 ≫ R1 the classic astable approaches a 50 % duty cycle.
        let cond = Conditions::ideal(v(9.0));
        let mut last = 1.0;
        for r2 in [1e3, 10e3, 100e3, 1e6, 10e6] {
            let d = Stage::astable(r(1e3), r(r2), c(1e-9), cond)
                .times()
                .expect("times")
                .duty
                .expect("duty")
                .si();
            assert!(d > 0.5 && d < last, "duty {d} at R2 = {r2}");
            last = d;
        }
        assert!(last < 0.5001);
    }

    #[test]
    fn steered_gives_duty_below_half() {
        let cond = Conditions::ideal(v(9.0));
        let t = Stage::steered(r(10e3), r(30e3), c(100e-9), cond)
            .times()
            .expect("times");
        // DESIGN physics table (ideal, Vf = 0): high ln2·Ra·C, low ln2·Rb·C → duty Ra/(Ra+Rb).
        assert!((t.duty.expect("duty").si() - 0.25).abs() < 1e-6);
    }

    #[test]
    fn one_diode_steering_differs_only_with_a_diode_drop() {
        let mut cond = Conditions::ideal(v(9.0));
        let mut s = Stage::steered(r(10e3), r(10e3), c(100e-9), cond);
        let two = s.times().expect("t").low;
        s.steering = Steering::OneDiode;
        assert_eq!(two, s.times().expect("t").low);
        cond.diode_drop = v(0.6);
        s.conditions = cond;
        let one_low = s.times().expect("t").low.expect("low").si();
        s.steering = Steering::TwoDiode;
        let two_low = s.times().expect("t").low.expect("low").si();
        // DESIGN physics table: two-diode low = Rb·C·ln((Vu−Vf)/(Vl−Vf)); one-diode = Rb·C·ln 2.
        let want_two = 10e3 * 100e-9 * ((6.0 - 0.6) / (3.0 - 0.6f64)).ln();
        assert!((two_low - want_two).abs() < 1e-9);
        assert!((one_low - 10e3 * 100e-9 * 2f64.ln()).abs() < 1e-9);
    }

    #[test]
    fn zero_parts_are_refused() {
        let cond = Conditions::ideal(v(9.0));
        assert!(Stage::monostable(r(1e3), c(0.0), cond).times().is_err());
        assert!(Stage::square(r(0.0), c(1e-9), cond).times().is_err());
        assert!(
            Stage::astable(r(1e3), r(0.0), c(1e-9), cond)
                .times()
                .is_err()
        );
    }
}
