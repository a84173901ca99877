//! What a technician asks a timer stage to do: the circuit form, the target times and the duty
//! window, typed (`Seconds`, `DutyWindow`), never bare numbers. Every command and file that asks
//! for a stage builds one of these (`find`, `plan` files, the web design page); `solve` searches
//! for it, `report` describes it. Pure data on `units` and the one duty grammar ([`super::duty`]).

use super::duty::DutyWindow;
use super::part::{Kind, Value};
use crate::units::{Ratio, Seconds};
use serde::Serialize;

/// The circuit form of a stage.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Form {
    /// One-shot: a trigger starts one pulse of fixed width.
    Monostable,
    /// Classic astable: charge via R1+R2, discharge via R2.
    Astable,
    /// Diode-steered astable: separate charge (Ra) and discharge (Rb) paths.
    Steered,
    /// Output-driven square wave: one resistor from the output to the capacitor.
    Square,
}

impl Form {
    /// Plain name, as typed on the command line.
    pub fn name(self) -> &'static str {
        match self {
            Form::Monostable => "monostable",
            Form::Astable => "astable",
            Form::Steered => "steered",
            Form::Square => "square",
        }
    }

    /// Whether the stage runs free (has a period) rather than firing once.
    pub fn is_periodic(self) -> bool {
        !matches!(self, Form::Monostable)
    }

    /// Whether the stage has a second resistor (`r2`).
    pub fn has_r2(self) -> bool {
        matches!(self, Form::Astable | Form::Steered)
    }

    /// Whether `r1` sits between the supply and the discharge pin (so `Vcc/R1` flows into the
    /// chip while discharging).
    pub fn r1_feeds_discharge(self) -> bool {
        !matches!(self, Form::Square)
    }
}

/// The duty-cycle requirement of an astable: none, or a window read by the one duty grammar
/// ([`super::parse_duty`]: a range, or a point with its window — a point alone is ±1 point).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Duty {
    /// Any duty.
    Any,
    /// The high time's share of the period must lie in the window; a window only, it adds
    /// nothing to a design's error.
    Window(DutyWindow),
}

impl Duty {
    /// The window as SI fractions (low, high), if there is one.
    pub fn window_si(&self) -> Option<(f64, f64)> {
        match self {
            Duty::Any => None,
            Duty::Window(w) => Some(w.si()),
        }
    }

    /// A window from its two ends as fractions (0.6 for 60 %); `None` unless 0 < low ≤ high < 1.
    pub fn range_si(low: f64, high: f64) -> Option<Duty> {
        Duty::between(Ratio::from_si(low)?, Ratio::from_si(high)?)
    }

    /// A window from its two ends (shares of the period); `None` unless 0 < low ≤ high < 1.
    pub fn between(low: Ratio, high: Ratio) -> Option<Duty> {
        (low.base() > 0 && low <= high && high.base() < Ratio::PER_SI).then(|| {
            Duty::Window(DutyWindow {
                low,
                high,
                aim: Ratio::from_base(low.base() + (high.base() - low.base()) / 2),
            })
        })
    }
}

/// A positive time in seconds, to the picosecond.
fn positive(si: f64) -> Option<Seconds> {
    Seconds::from_si(si).filter(|t| t.is_positive())
}

/// One timer stage to design.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case", tag = "form")]
pub enum StageGoal {
    /// Monostable pulse width.
    Pulse {
        /// Width.
        width: Seconds,
    },
    /// Classic astable: period and duty.
    Astable {
        /// Period.
        period: Seconds,
        /// Duty requirement.
        duty: Duty,
    },
    /// Diode-steered astable: separate high and low times.
    Steered {
        /// High time.
        high: Seconds,
        /// Low time.
        low: Seconds,
    },
    /// Output-driven square wave: period.
    Square {
        /// Period.
        period: Seconds,
    },
}

impl StageGoal {
    /// The circuit form.
    pub fn form(&self) -> Form {
        match self {
            StageGoal::Pulse { .. } => Form::Monostable,
            StageGoal::Astable { .. } => Form::Astable,
            StageGoal::Steered { .. } => Form::Steered,
            StageGoal::Square { .. } => Form::Square,
        }
    }

    /// Position names, in the order designs list them.
    pub fn positions(&self) -> &'static [&'static str] {
        match self {
            StageGoal::Pulse { .. } | StageGoal::Square { .. } => &["R", "C"],
            StageGoal::Astable { .. } => &["R1", "R2", "C"],
            StageGoal::Steered { .. } => &["Ra", "Rb", "C"],
        }
    }

    /// A one-shot goal from a width in seconds (for callers holding a computed time, such as
    /// tests and benchmarks); `None` when the time does not fit or is not positive.
    pub fn pulse_si(width: f64) -> Option<Self> {
        Some(StageGoal::Pulse {
            width: positive(width)?,
        })
    }

    /// An astable goal from a period in seconds; `None` as for [`StageGoal::pulse_si`].
    pub fn astable_si(period: f64, duty: Duty) -> Option<Self> {
        Some(StageGoal::Astable {
            period: positive(period)?,
            duty,
        })
    }

    /// A steered-astable goal from high and low times in seconds.
    pub fn steered_si(high: f64, low: f64) -> Option<Self> {
        Some(StageGoal::Steered {
            high: positive(high)?,
            low: positive(low)?,
        })
    }

    /// A square-wave goal from a period in seconds.
    pub fn square_si(period: f64) -> Option<Self> {
        Some(StageGoal::Square {
            period: positive(period)?,
        })
    }

    /// The period the stage must run at (high + low for a steered astable); `None` for a
    /// one-shot.
    pub fn period(&self) -> Option<Seconds> {
        match *self {
            StageGoal::Astable { period, .. } | StageGoal::Square { period } => Some(period),
            StageGoal::Steered { high, low } => high.checked_add(low),
            StageGoal::Pulse { .. } => None,
        }
    }
}

/// The whole request.
#[derive(Debug, Clone, PartialEq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Goal {
    /// One part's worth of value from a network (the repair substitute).
    Value {
        /// Resistor or capacitor.
        kind: Kind,
        /// Target value, exact (a resistance for a resistor, a capacitance for a capacitor; the
        /// search refuses any other pairing).
        target: Value,
    },
    /// One or more timer stages sharing the stock (a pair or a dual package: two).
    Stages(Vec<StageGoal>),
}

impl Goal {
    /// How many timer stages the goal designs (a value substitute counts as one).
    pub fn stage_count(&self) -> usize {
        match self {
            Goal::Stages(s) => s.len(),
            Goal::Value { .. } => 1,
        }
    }

    /// A substitute goal from a value in SI units (Ω or F), rounded to the store's exact units;
    /// `None` for a kind that has no value or a value that does not fit.
    pub fn value_si(kind: Kind, si: f64) -> Option<Goal> {
        let target = match kind {
            Kind::Resistor | Kind::Trimmer => Value::Resistance(crate::units::Ohms::from_si(si)?),
            Kind::Capacitor => Value::Capacitance(crate::units::Farads::from_si(si)?),
            Kind::Diode => return None,
        };
        Some(Goal::Value { kind, target })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_window_from_its_ends_is_checked_and_aims_at_its_middle() {
        let r = |p: f64| Ratio::from_si(p).expect("ratio");
        match Duty::between(r(0.6), r(0.7)) {
            Some(Duty::Window(w)) => {
                assert_eq!(w.aim, r(0.65));
                assert_eq!(w.si(), (0.6, 0.7));
            }
            other => panic!("{other:?}"),
        }
        assert_eq!(Duty::between(r(0.7), r(0.6)), None);
        assert_eq!(Duty::between(r(0.0), r(0.6)), None);
        assert_eq!(Duty::between(r(0.5), r(1.0)), None);
        assert_eq!(Duty::Any.window_si(), None);
    }

    #[test]
    fn a_steered_period_is_high_plus_low() {
        let s = |x: f64| Seconds::from_si(x).expect("time");
        let g = StageGoal::Steered {
            high: s(1e-3),
            low: s(3e-3),
        };
        assert_eq!(g.period(), Some(s(4e-3)));
        assert_eq!(StageGoal::Pulse { width: s(1.0) }.period(), None);
        assert_eq!(g.positions(), &["Ra", "Rb", "C"]);
    }
}
