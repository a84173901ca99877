//! Closed-form timing of every circuit form (ideal model plus explicit refinements).
//!
//! A capacitor charging through R from V0 toward Vf reaches V1 after
//! `t = R·C·ln((Vf − V0)/(Vf − V1))`. A 555-type timer switches at the upper threshold `Vu`
//! (the control-pin voltage, 2/3·Vcc unless driven) and the lower threshold `Vl = Vu/2`.
//! Every time below is `R·C·k` with a factor `k` that depends only on the operating conditions;
//! [`Factors`] exposes those factors so the search can evaluate millions of networks cheaply.

use crate::units::{Farads, Ohms, Seconds, Volts};

/// Operating conditions of a timer stage.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Conditions {
    /// Supply voltage.
    pub vcc: Volts,
    /// Control-pin voltage when driven; `None` leaves the internal divider at 2/3·Vcc.
    pub control: Option<Volts>,
    /// Forward drop of a steering diode (diode-steered astable only); zero in the ideal model.
    pub diode_drop: Volts,
    /// How far below Vcc the output sits when high (output-driven square wave only).
    pub output_high_drop: Volts,
}

/// Why a form cannot run under the given conditions.
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum FormError {
    /// The supply is zero or negative.
    #[error("supply {0} must be above zero")]
    NoSupply(Volts),
    /// A driven control voltage outside (0, Vcc).
    #[error("control voltage {control} must lie between 0 V and the supply {vcc}")]
    ControlOutOfRange {
        /// The control voltage given.
        control: Volts,
        /// The supply.
        vcc: Volts,
    },
    /// The capacitor can never reach a threshold (e.g. diode drop too large).
    #[error("{0}")]
    Unreachable(String),
}

impl Conditions {
    /// The ideal model at supply `vcc`: thresholds 1/3 and 2/3, no diode drop, rail-to-rail output.
    pub fn ideal(vcc: Volts) -> Self {
        Self {
            vcc,
            control: None,
            diode_drop: Volts::ZERO,
            output_high_drop: Volts::ZERO,
        }
    }

    /// Whether any refinement beyond the ideal model is in use.
    pub fn is_ideal(&self) -> bool {
        self.control.is_none()
            && self.diode_drop == Volts::ZERO
            && self.output_high_drop == Volts::ZERO
    }

    /// Upper and lower thresholds in volts.
    pub fn thresholds(&self) -> Result<(f64, f64), FormError> {
        let vcc = self.vcc.si();
        if vcc <= 0.0 {
            return Err(FormError::NoSupply(self.vcc));
        }
        let vu = match self.control {
            None => vcc * 2.0 / 3.0,
            Some(c) if c.si() > 0.0 && c.si() < vcc => c.si(),
            Some(c) => {
                return Err(FormError::ControlOutOfRange {
                    control: c,
                    vcc: self.vcc,
                });
            }
        };
        Ok((vu, vu / 2.0))
    }

    /// The factors `k` of every form under these conditions.
    pub fn factors(&self) -> Result<Factors, FormError> {
        let vcc = self.vcc.si();
        let (vu, vl) = self.thresholds()?;
        let vf = self.diode_drop.si();
        let voh = vcc - self.output_high_drop.si();
        let ln = |num: f64, den: f64, what: &str| -> Result<f64, FormError> {
            if num > 0.0 && den > 0.0 && num > den {
                Ok((num / den).ln())
            } else {
                Err(FormError::Unreachable(format!(
                    "{what}: the capacitor never reaches the threshold under these conditions"
                )))
            }
        };
        if self.output_high_drop.si() > 0.0 && voh <= vu {
            return Err(output_never_switches(voh, vu));
        }
        Ok(Factors {
            one_shot: ln(vcc, vcc - vu, "one-shot")?,
            charge: ln(vcc - vl, vcc - vu, "astable charge")?,
            discharge: ln(vu, vl, "astable discharge")?,
            steered_charge: ln(vcc - vf - vl, vcc - vf - vu, "steered charge")?,
            steered_discharge: ln(vu - vf, vl - vf, "steered discharge")?,
            square_high: ln(voh - vl, voh - vu, "square-wave high")?,
            square_low: ln(vu, vl, "square-wave low")?,
        })
    }
}

/// The output-driven square wave whose output, high, stays at or under the upper threshold:
/// it never switches (the one wording for every command).
pub(crate) fn output_never_switches(voh: f64, vu: f64) -> FormError {
    FormError::Unreachable(format!(
        "the output rises only to {voh:.3} V when high (supply less the family's output drop), \
         not above the upper threshold {vu:.3} V: this square wave never switches — use a CMOS \
         timer or a classic astable"
    ))
}

/// Time per unit R·C for every form: a time is `R·C·k`.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Factors {
    /// Monostable: capacitor starts empty, charges through R to Vu. Ideal: ln 3.
    pub one_shot: f64,
    /// Classic astable high time per (R1+R2)·C. Ideal: ln 2.
    pub charge: f64,
    /// Classic astable low time per R2·C. Ideal: ln 2.
    pub discharge: f64,
    /// Diode-steered astable high time per Ra·C.
    pub steered_charge: f64,
    /// Diode-steered astable low time per Rb·C.
    pub steered_discharge: f64,
    /// Output-driven square wave high time per R·C.
    pub square_high: f64,
    /// Output-driven square wave low time per R·C.
    pub square_low: f64,
}

/// High and low time of one cycle.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize)]
pub struct Cycle {
    /// Output high.
    pub high: Seconds,
    /// Output low.
    pub low: Seconds,
}

impl Cycle {
    /// High plus low.
    pub fn period_s(&self) -> f64 {
        self.high.si() + self.low.si()
    }
    /// 1 / period, in hertz.
    pub fn frequency_hz(&self) -> f64 {
        1.0 / self.period_s()
    }
    /// High time over period.
    pub fn duty(&self) -> f64 {
        self.high.si() / self.period_s()
    }
}

fn secs(v: f64) -> Result<Seconds, FormError> {
    Seconds::from_si(v).ok_or_else(|| FormError::Unreachable(format!("time {v} s is out of range")))
}

/// Monostable pulse width `R·C·ln(Vcc/(Vcc − Vu))`.
pub fn monostable(r: Ohms, c: Farads, cond: &Conditions) -> Result<Seconds, FormError> {
    secs(r.si() * c.si() * cond.factors()?.one_shot)
}

/// Classic astable: charge through R1+R2, discharge through R2.
pub fn astable(r1: Ohms, r2: Ohms, c: Farads, cond: &Conditions) -> Result<Cycle, FormError> {
    let k = cond.factors()?;
    Ok(Cycle {
        high: secs((r1.si() + r2.si()) * c.si() * k.charge)?,
        low: secs(r2.si() * c.si() * k.discharge)?,
    })
}

/// Diode-steered astable, two-diode wiring: charge through Ra (and a diode), discharge through
/// Rb (and a diode). For the one-diode bypass (no diode in the discharge path) see
/// [`crate::timing::design::Steering::OneDiode`]: its low time uses `Factors::discharge`.
pub fn steered(ra: Ohms, rb: Ohms, c: Farads, cond: &Conditions) -> Result<Cycle, FormError> {
    let k = cond.factors()?;
    Ok(Cycle {
        high: secs(ra.si() * c.si() * k.steered_charge)?,
        low: secs(rb.si() * c.si() * k.steered_discharge)?,
    })
}

/// Output-driven square wave: one resistor from the output to the capacitor.
pub fn square(r: Ohms, c: Farads, cond: &Conditions) -> Result<Cycle, FormError> {
    let k = cond.factors()?;
    Ok(Cycle {
        high: secs(r.si() * c.si() * k.square_high)?,
        low: secs(r.si() * c.si() * k.square_low)?,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn v(x: f64) -> Volts {
        Volts::from_si(x).unwrap_or_default()
    }

    #[test]
    fn ideal_factors_are_ln3_and_ln2() {
        // DESIGN physics table: ideal one-shot ln 3, astable ln 2 (common practice: 1.1·R·C, 0.693·R·C).
        let k = Conditions::ideal(v(9.0)).factors().expect("ideal factors");
        assert!((k.one_shot - 3f64.ln()).abs() < 1e-12);
        assert!((k.charge - 2f64.ln()).abs() < 1e-12);
        assert!((k.discharge - 2f64.ln()).abs() < 1e-12);
        assert!((k.steered_charge - 2f64.ln()).abs() < 1e-12);
    }

    #[test]
    fn diode_drop_too_large_is_refused() {
        let mut c = Conditions::ideal(v(5.0));
        c.diode_drop = v(2.0);
        assert!(c.factors().is_err());
    }
}
