//! Electrical checks of a stage (and of a two-stage pair or dual package) against a timer
//! family: each problem is a [`Finding`] that carries the numbers that triggered it.
//!
//! Rules (the thresholds are rules of the trade, marked `common practice`, or recalled figures,
//! marked `from memory`; the family figures come from `family.rs`):
//! - R1 (between supply and discharge pin) must not be zero; `Vcc/R1` plus the capacitor's
//!   discharge current (`Vu/R2`) must stay under the family's discharge limit (Error above it,
//!   Warning above half of it — common practice).
//! - Charging current at the upper threshold must dwarf the threshold-pin bias current: Warning
//!   below 100×, Error below 10× (common practice: the bias steals roughly 1/ratio of the
//!   charging current, so 100× keeps the timing shift near 1 %; at 10× the shift is ~10 % and
//!   with datasheet-maximum bias the capacitor may never reach the threshold). Likewise the
//!   discharge-path current at the lower threshold against the trigger-pin bias, which acts only
//!   near the lower threshold and is larger on bipolar parts: Warning below 50× (a shift of about
//!   2 %, comparable with the chip's own initial error), Error below 10×.
//! - Electrolytic leakage, estimated by the `0.01·C·V µA (at least 3 µA)` rule for aluminium
//!   and `0.01·C·V µA` for tantalum (from memory, the usual datasheet maximum), against the
//!   charging current at the threshold: Warning above 1 %, Error above 50 % (may stall).
//! - Output-driven form: the output's current into the timing resistor at each edge against
//!   the light load its output-high drop holds for and the output rating (Warning).
//! - One-shot: a capacitor holding more than 10 µC at the threshold dumps straight into the
//!   discharge pin: Warning, with the usual series resistor.
//! - Capacitor voltage rating: Error below the supply, Warning below 1.5× the supply (common
//!   practice margin). Polarised parts: a Note on orientation.
//! - Timing capacitance under 100 pF: Warning, because pin and board strays of a few pF (about
//!   5 pF, from memory) then shift the timing by 5 % or more.
//! - Frequency above the family's maximum: Error (Warning above half of it). A one-shot pulse
//!   shorter than one period of the maximum frequency: Warning.
//! - Resistor dissipation while discharging `Vcc²/R1` against its rating (0.25 W unless given,
//!   common practice): Error above the rating, Warning above half (common practice derating).
//! - Supply outside the family range: Error. Output-driven square wave on a family whose output
//!   does not reach the rail: Warning. One-shot trigger pulse not shorter than the output pulse:
//!   Error.
//! - Minimum trigger pulse: a trigger dip shorter than [`MIN_TRIGGER_PULSE`] (1 µs, from
//!   memory — a conservative figure for both families) may not set the latch: Warning. The
//!   pair's coupling network ([`PAIR_COUPLING`]: 1 nF series capacitor, 10 kΩ pull-up to the
//!   supply, clamp diode from the trigger to the supply — the same parts in the schematic and
//!   the netlist) makes a dip of `R·C·ln(Voh/(Vcc − Vtrig))`; Error when the pace output's step
//!   cannot pull the trigger below its threshold, or the dip outlasts the pulse; a Note that the
//!   clamp diode is needed (without it the trigger rises to `Vcc + Voh` on each rising edge).
//! - Electrolytic leakage (above) is the datasheet maximum at the capacitor's **rating**
//!   (`0.01·C·V_rated`, from memory), not at the supply; the supply stands in when the rating is
//!   unknown.
//! - Cautions (people can get hurt): supply above 50 V, capacitor energy ½·C·V² above 1 J, a
//!   polarised capacitor of 100 µF or more at 35 V or more, a resistor dissipating over 1 W.
//!
//! Error findings make a design infeasible; the search treats them as hard constraints.
//!
//! **Deciding and wording are apart.** Every rule above is a predicate on numbers that returns a
//! typed [`Breach`] carrying the figures that triggered it; its [`code`](Breach::code) and
//! [`severity`](Breach::severity) follow from the value alone. No deciding function formats text:
//! the sentences live in `wording.rs`, and a [`Finding`] is built from a breach only where a report
//! needs one ([`check_stage_with`], [`check_pair`], [`check_dual`]). The search's gate,
//! [`first_error`], runs the predicates only and stops at the first refusal.

use super::design::{Form, Stage, Steering};
use super::family::{Family, Provenance};
use super::forms::FormError;
use crate::model::Technology;
use crate::units::{Farads, Hertz, Ohms, Seconds, Volts};
use serde::Serialize;
use std::ops::ControlFlow;

/// How serious a finding is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Severity {
    /// The design must not be built as it is.
    Error,
    /// It will work, but worse than the numbers say.
    Warning,
    /// Someone can get hurt; follow local codes and licensed practice.
    Caution,
    /// Worth knowing (orientation, wiring).
    Note,
}

impl Severity {
    /// Plain label.
    pub fn label(self) -> &'static str {
        match self {
            Severity::Error => "error",
            Severity::Warning => "warning",
            Severity::Caution => "caution",
            Severity::Note => "note",
        }
    }
}

/// One result of a check, worded for a report (built from a [`Breach`] by `wording.rs`).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Finding {
    /// How serious.
    pub severity: Severity,
    /// A stable short code, e.g. `discharge-current`.
    pub code: &'static str,
    /// What was found, with the numbers.
    pub message: String,
}

/// Limits that belong to the build rather than to the timer family.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Limits {
    /// Power rating of the resistor between supply and discharge pin.
    pub resistor_power: crate::units::Watts,
    /// Length of the trigger pulse driving a monostable, if known.
    pub trigger: Option<Seconds>,
}

impl Default for Limits {
    fn default() -> Self {
        Self {
            // common practice: the usual small through-hole resistor is rated 0.25 W.
            resistor_power: crate::units::Watts::from_base(250_000),
            trigger: None,
        }
    }
}

/// Ratio of charging current to pin bias current below which timing is visibly off.
pub const BIAS_RATIO_WARN: f64 = 100.0;
/// The same for the trigger pin against the discharge-path current.
pub const TRIGGER_RATIO_WARN: f64 = 50.0;
/// Ratio below which the design is refused.
pub const BIAS_RATIO_ERROR: f64 = 10.0;
/// Smallest timing capacitance not swamped by strays (common practice).
pub const STRAY_LIMIT_F: f64 = 100e-12;
/// Typical stray capacitance at the timing node (from memory).
pub const STRAY_TYPICAL_F: f64 = 5e-12;
/// Voltage-rating margin over the supply (common practice).
pub const RATING_MARGIN: f64 = 1.5;

/// How far a figure went: past the limit (the design is refused) or into the margin below it
/// that common practice keeps free (a warning).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Degree {
    /// Past the limit: an Error.
    Over,
    /// Inside the margin: a Warning.
    Near,
}

impl Degree {
    fn severity(self) -> Severity {
        match self {
            Degree::Over => Severity::Error,
            Degree::Near => Severity::Warning,
        }
    }
}

/// The timer input whose bias current a breach concerns.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Pin {
    /// The threshold pin, against the charging current at the upper threshold.
    Threshold,
    /// The trigger pin, against the discharge-path current at the lower threshold.
    Trigger,
}

/// One rule a design breaks, with the figures that decided it (SI units unless typed). The
/// code and severity follow from the value alone; the sentence is `wording.rs`'s.
#[derive(Debug, Clone, PartialEq)]
pub enum Breach {
    /// The supply lies outside the family's range.
    SupplyRange {
        /// Supply, V.
        vcc: f64,
        /// The family's range, V.
        min: f64,
        /// The family's range, V.
        max: f64,
        /// The family.
        family: &'static str,
        /// Where the upper figure comes from.
        provenance: Provenance,
    },
    /// The supply is above 50 V.
    HighVoltage {
        /// Supply, V.
        vcc: f64,
    },
    /// The form cannot run under these conditions.
    Form(FormError),
    /// The output-driven form with no resistance between output and capacitor.
    NoOutputResistor,
    /// R1 is zero: the discharge pin would short the supply.
    R1Zero,
    /// The discharge pin's current against the family's limit.
    DischargeCurrent {
        /// Over the limit or over half of it.
        degree: Degree,
        /// Vcc/R1, A.
        from_supply: f64,
        /// The capacitor's own discharge current, A.
        from_cap: f64,
        /// Supply, V.
        vcc: f64,
        /// R1.
        r1: Ohms,
        /// The family's limit, A.
        limit: f64,
        /// The family.
        family: &'static str,
        /// Where the limit comes from.
        provenance: Provenance,
    },
    /// R1's dissipation while discharging against its rating.
    ResistorPower {
        /// Over the rating or over half of it.
        degree: Degree,
        /// Vcc²/R1, W.
        power: f64,
        /// Supply, V.
        vcc: f64,
        /// R1.
        r1: Ohms,
        /// The rating, W.
        rating: f64,
    },
    /// R1 dissipates over 1 W.
    HotResistor {
        /// Vcc²/R1, W.
        power: f64,
    },
    /// The frequency is above the family's maximum.
    MaxFrequency {
        /// The stage's frequency.
        frequency: Hertz,
        /// The family's maximum, Hz.
        max: f64,
        /// The family.
        family: &'static str,
        /// Where the maximum comes from.
        provenance: Provenance,
    },
    /// The frequency is above half the family's maximum.
    NearMaxFrequency {
        /// The stage's frequency.
        frequency: Hertz,
        /// The family's maximum, Hz.
        max: f64,
        /// The family.
        family: &'static str,
    },
    /// A one-shot pulse shorter than one period of the family's maximum frequency.
    ShortPulse {
        /// The pulse.
        pulse: Seconds,
        /// The family's maximum frequency, Hz.
        max: f64,
        /// The family.
        family: &'static str,
    },
    /// The trigger pulse is not shorter than the output pulse.
    TriggerNotShorter {
        /// The trigger pulse.
        trigger: Seconds,
        /// The output pulse.
        pulse: Seconds,
    },
    /// The trigger pulse is shorter than [`MIN_TRIGGER_PULSE`].
    TriggerTooBrief {
        /// The trigger pulse.
        trigger: Seconds,
    },
    /// The output-driven square wave on a family whose output does not reach the rail.
    SquareOutput {
        /// The family.
        family: &'static str,
        /// Its output-high drop, V.
        drop: f64,
        /// Where the drop comes from.
        provenance: Provenance,
    },
    /// The output-driven form's current into its timing resistor.
    OutputCurrent {
        /// Largest current at an edge, A.
        peak: f64,
        /// The light load the output-drop figure holds for, A.
        light: f64,
        /// The family's output rating, A.
        rating: f64,
        /// Whether the peak is above the rating (not just above the light load).
        over_rating: bool,
        /// The family.
        family: &'static str,
    },
    /// A one-shot's capacitor dumps a large charge into the discharge pin.
    DischargeDump {
        /// The capacitor.
        c: Farads,
        /// Its charge at the upper threshold, C.
        charge: f64,
        /// The upper threshold, V.
        vu: f64,
    },
    /// A pin's bias current against the current that sets the timing there.
    BiasCurrent {
        /// Below 10× or below the wanted ratio.
        degree: Degree,
        /// Which pin.
        pin: Pin,
        /// The timing current at that pin's threshold, A.
        current: f64,
        /// The resistance it flows through, Ω.
        through: f64,
        /// current / bias.
        ratio: f64,
        /// The family's pin current, A.
        bias: f64,
        /// The ratio common practice wants.
        want: f64,
        /// The family.
        family: &'static str,
        /// Where the pin current comes from.
        provenance: Provenance,
    },
    /// An electrolytic's leakage against the charging current at the threshold.
    Leakage {
        /// Over half the charging current, or over 1 % of it.
        degree: Degree,
        /// Estimated leakage, A ([`leakage_estimate`]).
        leak: f64,
        /// The capacitor's rating, if known.
        rating: Option<Volts>,
        /// Supply, V (stands in for an unknown rating).
        vcc: f64,
        /// Aluminium (the 3 µA floor applies) rather than tantalum.
        aluminium: bool,
        /// Charging current at the threshold, A.
        charging: f64,
        /// leak / charging.
        share: f64,
    },
    /// Timing capacitance under [`STRAY_LIMIT_F`].
    StrayCapacitance {
        /// The capacitance.
        c: Farads,
    },
    /// The timing capacitor stores over 1 J.
    StoredEnergy {
        /// ½·C·V², J.
        energy: f64,
        /// Supply, V.
        vcc: f64,
    },
    /// An electrolytic or tantalum timing capacitor.
    ElectrolyticTiming,
    /// A Y5V/Z5U ceramic timing capacitor.
    LossyCeramic,
    /// An X7R ceramic timing capacitor.
    DriftingCeramic,
    /// A polarised capacitor: mind its orientation.
    Polarity,
    /// A large polarised capacitor at a high supply.
    BigElectrolytic {
        /// Capacitance, F.
        c: f64,
        /// Supply, V.
        vcc: f64,
    },
    /// The capacitor's rating is below the supply.
    RatingBelowSupply {
        /// The rating.
        rating: Volts,
        /// Supply, V.
        vcc: f64,
    },
    /// The capacitor's rating is under [`RATING_MARGIN`] × the supply.
    RatingMargin {
        /// The rating.
        rating: Volts,
        /// Supply, V.
        vcc: f64,
    },
    /// A polarised capacitor of unknown rating.
    RatingUnknown {
        /// Supply, V.
        vcc: f64,
    },
    /// The pair's pace output cannot pull the width stage's trigger below its threshold.
    TriggerNotReached {
        /// The lowest the trigger goes, V.
        lowest: f64,
        /// The trigger threshold, V.
        threshold: f64,
    },
    /// The pair's coupling holds the trigger low for at least the pulse.
    CouplingStretches {
        /// The coupling.
        coupling: Coupling,
        /// How long the trigger stays low, s.
        held: f64,
        /// The pulse, s.
        width: f64,
    },
    /// The pair's coupling dip is shorter than [`MIN_TRIGGER_PULSE`].
    CouplingDipBrief {
        /// The dip, s.
        dip: f64,
    },
    /// The pair's clamp diode is fitted: keep it.
    ClampKept {
        /// How high the trigger would rise without it, V.
        peak: f64,
        /// Supply, V.
        vcc: f64,
    },
    /// The pair's trigger has no clamp diode.
    ClampMissing {
        /// How high the trigger rises, V.
        peak: f64,
        /// Supply, V.
        vcc: f64,
    },
    /// The pair's pace stage fires once instead of running free.
    PaceNotPeriodic,
    /// The pair's width stage is not a monostable.
    WidthNotMonostable,
    /// The pair's width is not below its period.
    WidthOverPeriod {
        /// The width.
        width: Seconds,
        /// The period.
        period: Seconds,
    },
    /// The pair's width is over 90 % of its period.
    WidthNearPeriod {
        /// The width.
        width: Seconds,
        /// The period.
        period: Seconds,
    },
    /// Driven directly, the pace output's low time would stretch the pulse.
    DirectTriggerStretches {
        /// The pace stage's low time.
        low: Seconds,
        /// The pulse.
        width: Seconds,
    },
    /// Within the tolerances the width can reach the period.
    WidthMayReachPeriod {
        /// Worst-case largest width/period.
        max_duty: f64,
    },
    /// The two halves of a dual package on different supplies.
    DualSupply,
}

impl Breach {
    /// The stable short code of the rule.
    pub fn code(&self) -> &'static str {
        match self {
            Breach::SupplyRange { .. } => "supply-range",
            Breach::HighVoltage { .. } => "high-voltage",
            Breach::Form(_) => "form",
            Breach::NoOutputResistor => "zero-resistance",
            Breach::R1Zero => "r1-zero",
            Breach::DischargeCurrent { .. } => "discharge-current",
            Breach::ResistorPower { .. } => "resistor-power",
            Breach::HotResistor { .. } => "hot-resistor",
            Breach::MaxFrequency { .. } => "max-frequency",
            Breach::NearMaxFrequency { .. } => "near-max-frequency",
            Breach::ShortPulse { .. } => "short-pulse",
            Breach::TriggerNotShorter { .. } | Breach::DirectTriggerStretches { .. } => {
                "trigger-width"
            }
            Breach::TriggerTooBrief { .. } | Breach::CouplingDipBrief { .. } => {
                "trigger-pulse-width"
            }
            Breach::SquareOutput { .. } => "square-output",
            Breach::OutputCurrent { .. } => "output-current",
            Breach::DischargeDump { .. } => "discharge-dump",
            Breach::BiasCurrent { .. } => "bias-current",
            Breach::Leakage { .. } => "leakage",
            Breach::StrayCapacitance { .. } => "stray-capacitance",
            Breach::StoredEnergy { .. } => "stored-energy",
            Breach::ElectrolyticTiming => "electrolytic-timing",
            Breach::LossyCeramic | Breach::DriftingCeramic => "dielectric",
            Breach::Polarity => "polarity",
            Breach::BigElectrolytic { .. } => "big-electrolytic",
            Breach::RatingBelowSupply { .. }
            | Breach::RatingMargin { .. }
            | Breach::RatingUnknown { .. } => "voltage-rating",
            Breach::TriggerNotReached { .. } | Breach::CouplingStretches { .. } => {
                "trigger-coupling"
            }
            Breach::ClampKept { .. } | Breach::ClampMissing { .. } => "trigger-clamp",
            Breach::PaceNotPeriodic | Breach::WidthNotMonostable => "pair-form",
            Breach::WidthOverPeriod { .. } => "width-exceeds-period",
            Breach::WidthNearPeriod { .. } => "width-near-period",
            Breach::WidthMayReachPeriod { .. } => "width-may-exceed-period",
            Breach::DualSupply => "dual-supply",
        }
    }

    /// How serious the breach is.
    pub fn severity(&self) -> Severity {
        match self {
            Breach::DischargeCurrent { degree, .. }
            | Breach::ResistorPower { degree, .. }
            | Breach::BiasCurrent { degree, .. }
            | Breach::Leakage { degree, .. } => degree.severity(),
            Breach::SupplyRange { .. }
            | Breach::Form(_)
            | Breach::NoOutputResistor
            | Breach::R1Zero
            | Breach::MaxFrequency { .. }
            | Breach::TriggerNotShorter { .. }
            | Breach::RatingBelowSupply { .. }
            | Breach::CouplingStretches { .. }
            | Breach::PaceNotPeriodic
            | Breach::WidthNotMonostable
            | Breach::WidthOverPeriod { .. }
            | Breach::DualSupply => Severity::Error,
            Breach::NearMaxFrequency { .. }
            | Breach::ShortPulse { .. }
            | Breach::TriggerTooBrief { .. }
            | Breach::SquareOutput { .. }
            | Breach::OutputCurrent { .. }
            | Breach::DischargeDump { .. }
            | Breach::StrayCapacitance { .. }
            | Breach::ElectrolyticTiming
            | Breach::LossyCeramic
            | Breach::RatingMargin { .. }
            | Breach::TriggerNotReached { .. }
            | Breach::CouplingDipBrief { .. }
            | Breach::ClampMissing { .. }
            | Breach::WidthNearPeriod { .. }
            | Breach::DirectTriggerStretches { .. }
            | Breach::WidthMayReachPeriod { .. } => Severity::Warning,
            Breach::HighVoltage { .. }
            | Breach::HotResistor { .. }
            | Breach::StoredEnergy { .. }
            | Breach::BigElectrolytic { .. } => Severity::Caution,
            Breach::DriftingCeramic
            | Breach::Polarity
            | Breach::RatingUnknown { .. }
            | Breach::ClampKept { .. } => Severity::Note,
        }
    }
}

/// Where in a pair or dual package a stage's breach arose.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Place {
    /// The pair's free-running stage.
    PaceStage,
    /// The pair's one-shot.
    WidthStage,
    /// The first half of a dual package.
    TimerA,
    /// The second half of a dual package.
    TimerB,
}

/// A breach and, for a stage of a pair or dual package, the stage it belongs to.
#[derive(Debug, Clone, PartialEq)]
pub struct Placed {
    /// The stage, `None` for a breach of the whole.
    pub place: Option<Place>,
    /// What was broken.
    pub breach: Breach,
}

/// Where the predicates put their breaches: every one (for a report), or only the first Error
/// (the search's gate, which then stops and skips the rules that never refuse).
enum Out {
    All(Vec<Breach>),
    FirstError(Option<Breach>),
}

impl Out {
    /// Take one breach; `Break` once the gate has its Error.
    fn push(&mut self, b: Breach) -> ControlFlow<()> {
        match self {
            Out::All(v) => {
                v.push(b);
                ControlFlow::Continue(())
            }
            Out::FirstError(slot) => {
                if b.severity() == Severity::Error {
                    *slot = Some(b);
                    ControlFlow::Break(())
                } else {
                    ControlFlow::Continue(())
                }
            }
        }
    }

    /// Whether the rules that can only warn, caution or note are wanted.
    fn all(&self) -> bool {
        matches!(self, Out::All(_))
    }
}

/// Every breach of one stage against the family and the build limits, in report order.
pub fn stage_breaches(stage: &Stage, family: &Family, limits: &Limits) -> Vec<Breach> {
    let mut out = Out::All(Vec::new());
    let _ = decide(stage, family, limits, &mut out);
    match out {
        Out::All(v) => v,
        Out::FirstError(b) => b.into_iter().collect(),
    }
}

/// The first Error breach of one stage (default build limits), deciding on numbers only: the
/// search's gate. It equals the first Error of [`stage_breaches`].
pub fn first_error(stage: &Stage, family: &Family) -> Option<Breach> {
    let mut out = Out::FirstError(None);
    let _ = decide(stage, family, &Limits::default(), &mut out);
    match out {
        Out::FirstError(b) => b,
        Out::All(v) => v.into_iter().find(|b| b.severity() == Severity::Error),
    }
}

/// The rules of one stage, in report order.
fn decide(stage: &Stage, family: &Family, limits: &Limits, out: &mut Out) -> ControlFlow<()> {
    let vcc = stage.conditions.vcc.si();
    let (smin, smax) = (family.supply_min.value, family.supply_max.value);
    if vcc < smin || vcc > smax {
        out.push(Breach::SupplyRange {
            vcc,
            min: smin,
            max: smax,
            family: family.name,
            provenance: family.supply_max.provenance,
        })?;
    }
    if vcc > 50.0 && out.all() {
        out.push(Breach::HighVoltage { vcc })?;
    }
    let times = match stage.times() {
        Ok(t) => t,
        Err(e) => {
            out.push(Breach::Form(e))?;
            // Still check what does not need times.
            return decide_r1(stage, family, limits, out);
        }
    };
    decide_r1(stage, family, limits, out)?;
    decide_bias(stage, family, out)?;
    decide_capacitor(stage, out)?;
    if out.all() {
        // These only ever warn.
        decide_output_current(stage, family, out)?;
        decide_discharge_dump(stage, out)?;
    }

    let fmax = family.max_freq.value;
    if let Some(frequency) = times.frequency {
        let fr = frequency.si();
        if fr > fmax {
            out.push(Breach::MaxFrequency {
                frequency,
                max: fmax,
                family: family.name,
                provenance: family.max_freq.provenance,
            })?;
        } else if fr > fmax / 2.0 && out.all() {
            out.push(Breach::NearMaxFrequency {
                frequency,
                max: fmax,
                family: family.name,
            })?;
        }
    } else if times.high.si() < 1.0 / fmax && out.all() {
        out.push(Breach::ShortPulse {
            pulse: times.high,
            max: fmax,
            family: family.name,
        })?;
    }
    if stage.form == Form::Monostable
        && let Some(trigger) = limits.trigger
        && trigger >= times.high
    {
        out.push(Breach::TriggerNotShorter {
            trigger,
            pulse: times.high,
        })?;
    }
    if stage.form == Form::Monostable
        && let Some(trigger) = limits.trigger
        && trigger.si() < MIN_TRIGGER_PULSE
        && out.all()
    {
        out.push(Breach::TriggerTooBrief { trigger })?;
    }
    if stage.form == Form::Square && !family.rail_to_rail() && out.all() {
        out.push(Breach::SquareOutput {
            family: family.name,
            drop: family.output_high_drop.value,
            provenance: family.output_high_drop.provenance,
        })?;
    }
    ControlFlow::Continue(())
}

/// Discharge-pin current and resistor dissipation: the rules on R1.
fn decide_r1(stage: &Stage, family: &Family, limits: &Limits, out: &mut Out) -> ControlFlow<()> {
    let vcc = stage.conditions.vcc.si();
    let r1 = stage.r1.si();
    if !stage.form.r1_feeds_discharge() {
        if r1 <= 0.0 {
            out.push(Breach::NoOutputResistor)?;
        }
        return ControlFlow::Continue(());
    }
    if r1 <= 0.0 {
        return out.push(Breach::R1Zero);
    }
    let from_supply = vcc / r1;
    let vu = stage
        .conditions
        .thresholds()
        .map(|(u, _)| u)
        .unwrap_or(vcc * 2.0 / 3.0);
    let vf = stage.conditions.diode_drop.si();
    let from_cap = match (stage.form, stage.r2) {
        (Form::Astable, Some(r2)) if r2.si() > 0.0 => vu / r2.si(),
        (Form::Steered, Some(rb)) if rb.si() > 0.0 => match stage.steering {
            Steering::TwoDiode => (vu - vf).max(0.0) / rb.si(),
            Steering::OneDiode => vu / rb.si(),
        },
        _ => 0.0,
    };
    let total = from_supply + from_cap;
    let limit = family.discharge_max.value;
    let degree = if total > limit {
        Some(Degree::Over)
    } else if total > limit / 2.0 {
        Some(Degree::Near)
    } else {
        None
    };
    if let Some(degree) = degree {
        out.push(Breach::DischargeCurrent {
            degree,
            from_supply,
            from_cap,
            vcc,
            r1: stage.r1,
            limit,
            family: family.name,
            provenance: family.discharge_max.provenance,
        })?;
    }
    let power = vcc * vcc / r1;
    let rating = limits.resistor_power.si();
    let degree = if power > rating {
        Some(Degree::Over)
    } else if power > rating / 2.0 {
        Some(Degree::Near)
    } else {
        None
    };
    if let Some(degree) = degree {
        out.push(Breach::ResistorPower {
            degree,
            power,
            vcc,
            r1: stage.r1,
            rating,
        })?;
    }
    if power > 1.0 && out.all() {
        out.push(Breach::HotResistor { power })?;
    }
    ControlFlow::Continue(())
}

/// Output current above which the light-load output-high drop no longer holds: about 1 mA for
/// a CMOS part, 10 mA for a bipolar one (from memory).
pub fn light_load_limit(family: &Family) -> f64 {
    if family.rail_to_rail() { 1e-3 } else { 10e-3 }
}

/// Largest output current the family is rated for: 200 mA bipolar, 10 mA CMOS (from memory).
pub fn output_rating(family: &Family) -> f64 {
    if family.rail_to_rail() { 10e-3 } else { 200e-3 }
}

/// The output-driven form: the output feeds the timing resistor, so its current at the moment
/// of switching, `(Voh − Vl)/R` sourced and `Vu/R` sunk, must stay inside the light-load range
/// the output-drop figure holds for and inside the output rating (a Warning either way).
fn decide_output_current(stage: &Stage, family: &Family, out: &mut Out) -> ControlFlow<()> {
    if stage.form != Form::Square {
        return ControlFlow::Continue(());
    }
    let c = &stage.conditions;
    let Ok((vu, vl)) = c.thresholds() else {
        return ControlFlow::Continue(());
    };
    let r = stage.r1.si();
    if r <= 0.0 {
        return ControlFlow::Continue(());
    }
    let voh = c.vcc.si() - c.output_high_drop.si();
    let peak = ((voh - vl) / r).max(vu / r);
    let (light, rating) = (light_load_limit(family), output_rating(family));
    // A Warning either way: the search's closed-form limits (solve/reach) mirror every Error.
    if peak <= light {
        return ControlFlow::Continue(());
    }
    out.push(Breach::OutputCurrent {
        peak,
        light,
        rating,
        over_rating: peak > rating,
        family: family.name,
    })
}

/// Charge above which a one-shot's capacitor, dumped straight into the discharge pin at the end
/// of every pulse, stresses the discharge transistor: 10 µC (≈ 1.5 µF at 6 V; from memory,
/// the usual advice is a small series resistor above a few µF).
pub const DUMP_CHARGE_WARN: f64 = 10e-6;

/// A monostable's capacitor discharges through nothing but the discharge transistor.
fn decide_discharge_dump(stage: &Stage, out: &mut Out) -> ControlFlow<()> {
    if stage.form != Form::Monostable {
        return ControlFlow::Continue(());
    }
    let Ok((vu, _)) = stage.conditions.thresholds() else {
        return ControlFlow::Continue(());
    };
    let charge = stage.c.si() * vu;
    if charge > DUMP_CHARGE_WARN {
        out.push(Breach::DischargeDump {
            c: stage.c,
            charge,
            vu,
        })?;
    }
    ControlFlow::Continue(())
}

/// Pin bias currents (and an electrolytic's leakage) against the currents that set the timing.
fn decide_bias(stage: &Stage, family: &Family, out: &mut Out) -> ControlFlow<()> {
    let c = &stage.conditions;
    let Ok((vu, vl)) = c.thresholds() else {
        return ControlFlow::Continue(());
    };
    let vcc = c.vcc.si();
    let vf = c.diode_drop.si();
    let r1 = stage.r1.si();
    let r2 = stage.r2.map_or(0.0, |r| r.si());
    let voh = vcc - c.output_high_drop.si();
    let (charge_r, charge_i) = match stage.form {
        Form::Monostable => (r1, (vcc - vu) / r1),
        Form::Astable => (r1 + r2, (vcc - vu) / (r1 + r2)),
        Form::Steered => (r1, (vcc - vf - vu) / r1),
        Form::Square => (r1, (voh - vu) / r1),
    };
    let discharge = match stage.form {
        Form::Monostable => None,
        Form::Astable => Some((r2, vl / r2)),
        Form::Steered => match stage.steering {
            Steering::TwoDiode => Some((r2, (vl - vf) / r2)),
            Steering::OneDiode => Some((r2, vl / r2)),
        },
        Form::Square => Some((r1, vl / r1)),
    };
    let one = |pin: Pin, through: f64, current: f64, figure: &super::family::Figure, want: f64| {
        let bias = figure.value;
        if !(current.is_finite() && current > 0.0 && bias > 0.0) {
            return None;
        }
        let ratio = current / bias;
        let degree = if ratio < BIAS_RATIO_ERROR {
            Degree::Over
        } else if ratio < want {
            Degree::Near
        } else {
            return None;
        };
        Some(Breach::BiasCurrent {
            degree,
            pin,
            current,
            through,
            ratio,
            bias,
            want,
            family: family.name,
            provenance: figure.provenance,
        })
    };
    if let Some(b) = one(
        Pin::Threshold,
        charge_r,
        charge_i,
        &family.threshold_current,
        BIAS_RATIO_WARN,
    ) {
        out.push(b)?;
    }
    if let Some((r, i)) = discharge
        && let Some(b) = one(
            Pin::Trigger,
            r,
            i,
            &family.trigger_current,
            TRIGGER_RATIO_WARN,
        )
    {
        out.push(b)?;
    }
    // Leakage against the same charging current.
    if let Some(cap) = stage.cap
        && cap.technology.is_electrolytic()
        && charge_i > 0.0
    {
        let leak = leakage_estimate(
            cap.technology,
            stage.c.si(),
            cap.voltage_rating.map(|v| v.si()),
            vcc,
        );
        let share = leak / charge_i;
        let degree = if share > 0.5 {
            Some(Degree::Over)
        } else if share > 0.01 {
            Some(Degree::Near)
        } else {
            None
        };
        if let Some(degree) = degree {
            out.push(Breach::Leakage {
                degree,
                leak,
                rating: cap.voltage_rating,
                vcc,
                aluminium: cap.technology == Technology::Electrolytic,
                charging: charge_i,
                share,
            })?;
        }
    }
    ControlFlow::Continue(())
}

/// Dielectric, rating, polarity, strays, stored energy.
fn decide_capacitor(stage: &Stage, out: &mut Out) -> ControlFlow<()> {
    let c = stage.c.si();
    let vcc = stage.conditions.vcc.si();
    let all = out.all();
    if c < STRAY_LIMIT_F && all {
        out.push(Breach::StrayCapacitance { c: stage.c })?;
    }
    let energy = 0.5 * c * vcc * vcc;
    if energy > 1.0 && all {
        out.push(Breach::StoredEnergy { energy, vcc })?;
    }
    let Some(cap) = stage.cap else {
        return ControlFlow::Continue(());
    };
    if all {
        match cap.technology {
            Technology::Electrolytic | Technology::Tantalum => {
                out.push(Breach::ElectrolyticTiming)?;
            }
            Technology::Y5v => out.push(Breach::LossyCeramic)?,
            Technology::X7r => out.push(Breach::DriftingCeramic)?,
            _ => {}
        }
        if cap.technology.is_polarised() {
            out.push(Breach::Polarity)?;
            if c >= 100e-6 && vcc >= 35.0 {
                out.push(Breach::BigElectrolytic { c, vcc })?;
            }
        }
    }
    match cap.voltage_rating {
        Some(rating) if rating.si() < vcc => out.push(Breach::RatingBelowSupply { rating, vcc }),
        Some(rating) if rating.si() < RATING_MARGIN * vcc && all => {
            out.push(Breach::RatingMargin { rating, vcc })
        }
        None if cap.technology.is_polarised() && all => out.push(Breach::RatingUnknown { vcc }),
        _ => ControlFlow::Continue(()),
    }
}

/// Largest leakage of an electrolytic: the datasheet maximum `0.01·C·V µA` (aluminium at least
/// 3 µA; from memory) is given at the **rated** voltage, so `V` is the rating — an upper bound at
/// any lower working voltage. Without a rating the supply stands in. Zero for every
/// non-electrolytic dielectric.
pub fn leakage_estimate(tech: Technology, c: f64, rating: Option<f64>, vcc: f64) -> f64 {
    if !tech.is_electrolytic() {
        return 0.0;
    }
    let at = rating.filter(|r| *r > 0.0).unwrap_or(vcc);
    // 0.01·C[µF]·V µA equals 0.01·C[F]·V A.
    let leak = 0.01 * c * at;
    if tech == Technology::Electrolytic {
        leak.max(3e-6)
    } else {
        leak
    }
}

/// Shortest trigger dip that reliably sets the latch: 1 µs (from memory; data sheets give a
/// fraction of that, this is a conservative figure for both families).
pub const MIN_TRIGGER_PULSE: f64 = 1e-6;

/// The network coupling a pair's pace output into the width stage's trigger.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Coupling {
    /// Series capacitor from the pace output to the trigger, farads.
    pub capacitor: f64,
    /// Pull-up from the trigger to the supply, ohms.
    pub pull_up: f64,
    /// A clamp diode from the trigger (anode) to the supply (cathode).
    pub clamp: bool,
}

/// Capacitor decoupling an undriven control pin, farads: 10 nF (common practice), the same in
/// the schematic and the netlist.
pub const CONTROL_DECOUPLING: f64 = 10e-9;

/// The pair's coupling, the same parts in the schematic and the netlist: 1 nF, 10 kΩ and a
/// small-signal clamp diode (common practice for an edge-triggered one-shot).
pub const PAIR_COUPLING: Coupling = Coupling {
    capacitor: 1e-9,
    pull_up: 10e3,
    clamp: true,
};

/// What a coupling does on the pace output's falling edge.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct TriggerDip {
    /// How long the trigger stays under its threshold, seconds; `None` when it never gets there.
    pub below: Option<f64>,
    /// The trigger threshold, volts.
    pub threshold: f64,
    /// The lowest the trigger goes, volts.
    pub lowest: f64,
    /// How high the trigger would rise on the rising edge without the clamp, volts.
    pub unclamped_peak: f64,
}

/// The dip through `k` when the pace output (swinging 0…`voh`) falls, for a trigger threshold
/// `vtrig` and supply `vcc`: the trigger starts at `vcc − voh` and recovers as
/// `vcc − voh·e^(−t/RC)`, so it stays below `vtrig` for `RC·ln(voh/(vcc − vtrig))`.
pub fn trigger_dip(k: &Coupling, vcc: f64, voh: f64, vtrig: f64) -> TriggerDip {
    let lowest = vcc - voh;
    let below = (lowest < vtrig && vcc > vtrig)
        .then(|| k.pull_up * k.capacitor * (voh / (vcc - vtrig)).ln());
    TriggerDip {
        below,
        threshold: vtrig,
        lowest,
        unclamped_peak: vcc + voh,
    }
}

/// The breaches of a pair's trigger coupling for a pulse of `width` seconds.
fn coupling_breaches(dip: &TriggerDip, k: &Coupling, width: f64, vcc: f64) -> Vec<Breach> {
    let mut out = Vec::new();
    match dip.below {
        // A Warning: the output-high drop is a typical light-load figure, so the margin either
        // way is within its spread.
        None => out.push(Breach::TriggerNotReached {
            lowest: dip.lowest,
            threshold: dip.threshold,
        }),
        Some(held) if held >= width => out.push(Breach::CouplingStretches {
            coupling: *k,
            held,
            width,
        }),
        Some(dip) if dip < MIN_TRIGGER_PULSE => out.push(Breach::CouplingDipBrief { dip }),
        Some(_) => {}
    }
    let peak = dip.unclamped_peak;
    out.push(if k.clamp {
        Breach::ClampKept { peak, vcc }
    } else {
        Breach::ClampMissing { peak, vcc }
    });
    out
}

fn placed(place: Option<Place>, v: Vec<Breach>) -> impl Iterator<Item = Placed> {
    v.into_iter().map(move |breach| Placed { place, breach })
}

/// Every breach of a pair: a periodic `pace` stage triggering the monostable `width`. Both
/// stages are checked; the width must stay below the period (Error otherwise).
pub fn pair_breaches(pace: &Stage, width: &Stage, family: &Family, limits: &Limits) -> Vec<Placed> {
    let pace_limits = Limits {
        trigger: None,
        ..*limits
    };
    let mut out: Vec<Placed> = placed(
        Some(Place::PaceStage),
        stage_breaches(pace, family, &pace_limits),
    )
    .chain(placed(
        Some(Place::WidthStage),
        stage_breaches(width, family, limits),
    ))
    .collect();
    let mut whole = Vec::new();
    if !pace.form.is_periodic() {
        whole.push(Breach::PaceNotPeriodic);
    }
    if width.form != Form::Monostable {
        whole.push(Breach::WidthNotMonostable);
    }
    if let (Ok(p), Ok(w)) = (pace.times(), width.times())
        && let (Some(period), Some(low)) = (p.period, p.low)
    {
        let wd = w.high.si();
        if wd >= period.si() {
            whole.push(Breach::WidthOverPeriod {
                width: w.high,
                period,
            });
        } else if wd > 0.9 * period.si() {
            whole.push(Breach::WidthNearPeriod {
                width: w.high,
                period,
            });
        }
        if limits.trigger.is_none() {
            let vcc = width.conditions.vcc.si();
            let voh = vcc
                - pace
                    .conditions
                    .output_high_drop
                    .si()
                    .max(family.output_high_drop.value);
            let vtrig = width.conditions.thresholds().map_or(vcc / 3.0, |(_, l)| l);
            let dip = trigger_dip(&PAIR_COUPLING, vcc, voh, vtrig);
            whole.extend(coupling_breaches(&dip, &PAIR_COUPLING, wd, vcc));
        }
        if low.si() >= wd && limits.trigger.is_none() {
            whole.push(Breach::DirectTriggerStretches { low, width: w.high });
        }
    }
    out.extend(placed(None, whole));
    out
}

/// A pair whose width can reach its period somewhere inside the tolerances: `max_duty` is the
/// exact worst-case maximum of width/period (from the corner search). A Warning: the nominal
/// design works, but some builds from these parts will not.
pub fn pair_worst_case_breach(max_duty: f64) -> Option<Breach> {
    (max_duty >= 1.0).then_some(Breach::WidthMayReachPeriod { max_duty })
}

/// Every breach of two stages in one dual package: each is checked on its own, with the shared
/// supply.
pub fn dual_breaches(a: &Stage, b: &Stage, family: &Family, limits: &Limits) -> Vec<Placed> {
    let mut out: Vec<Placed> = placed(Some(Place::TimerA), stage_breaches(a, family, limits))
        .chain(placed(
            Some(Place::TimerB),
            stage_breaches(b, family, limits),
        ))
        .collect();
    if a.conditions.vcc != b.conditions.vcc {
        out.push(Placed {
            place: None,
            breach: Breach::DualSupply,
        });
    }
    out
}

/// Check one stage with default build limits: every breach, worded.
pub fn check_stage(stage: &Stage, family: &Family) -> Vec<Finding> {
    check_stage_with(stage, family, &Limits::default())
}

/// Check one stage against the family and the build limits: every breach, worded.
pub fn check_stage_with(stage: &Stage, family: &Family, limits: &Limits) -> Vec<Finding> {
    stage_breaches(stage, family, limits)
        .iter()
        .map(Breach::finding)
        .collect()
}

/// Check a pair (see [`pair_breaches`]): every breach, worded.
pub fn check_pair(pace: &Stage, width: &Stage, family: &Family, limits: &Limits) -> Vec<Finding> {
    pair_breaches(pace, width, family, limits)
        .iter()
        .map(Placed::finding)
        .collect()
}

/// The pair's worst-case overlap (see [`pair_worst_case_breach`]), worded.
pub fn check_pair_worst_case(max_duty: f64) -> Option<Finding> {
    pair_worst_case_breach(max_duty).map(|b| b.finding())
}

/// Check a dual package (see [`dual_breaches`]): every breach, worded.
pub fn check_dual(a: &Stage, b: &Stage, family: &Family, limits: &Limits) -> Vec<Finding> {
    dual_breaches(a, b, family, limits)
        .iter()
        .map(Placed::finding)
        .collect()
}

/// Whether any finding is an Error.
pub fn has_error(findings: &[Finding]) -> bool {
    findings.iter().any(|x| x.severity == Severity::Error)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::timing::{CapFacts, Conditions};
    use crate::units::Tolerance;

    fn v(x: f64) -> Volts {
        Volts::from_si(x).expect("volts")
    }
    fn r(x: f64) -> Ohms {
        Ohms::from_si(x).expect("ohms")
    }
    fn c(x: f64) -> Farads {
        Farads::from_si(x).expect("farads")
    }
    fn codes(v: &[Finding], sev: Severity) -> Vec<&'static str> {
        v.iter()
            .filter(|x| x.severity == sev)
            .map(|x| x.code)
            .collect()
    }
    fn good() -> Stage {
        Stage::astable(r(4700.0), r(68e3), c(10e-9), Conditions::ideal(v(9.0)))
    }

    #[test]
    fn a_sound_astable_is_quiet() {
        let found = check_stage(&good(), &Family::bipolar());
        assert!(found.is_empty(), "{found:?}");
        let mono = Stage::monostable(r(100e3), c(1e-6), Conditions::ideal(v(9.0)));
        assert!(check_stage(&mono, &Family::cmos()).is_empty());
    }

    #[test]
    fn twelve_volts_across_ten_ohms_is_1_2_amps() {
        // common practice (Ohm's law): 12 V across 10 Ω is 1.2 A, far over any discharge pin.
        let s = Stage::monostable(r(10.0), c(1e-6), Conditions::ideal(v(12.0)));
        let found = check_stage(&s, &Family::bipolar());
        let d = found
            .iter()
            .find(|x| x.code == "discharge-current")
            .expect("discharge finding");
        assert_eq!(d.severity, Severity::Error);
        assert!(d.message.contains("1.2 A"), "{}", d.message);
        // Vcc²/R = 14.4 W: resistor power error and a hot-resistor caution.
        assert!(codes(&found, Severity::Error).contains(&"resistor-power"));
        assert!(codes(&found, Severity::Caution).contains(&"hot-resistor"));
    }

    #[test]
    fn zero_r1_is_refused() {
        let mut s = good();
        s.r1 = Ohms::ZERO;
        assert!(codes(&check_stage(&s, &Family::bipolar()), Severity::Error).contains(&"r1-zero"));
    }

    #[test]
    fn big_resistance_meets_bias_current() {
        // 10 MΩ at 9 V: (9 − 6)/10 MΩ = 0.3 µA, 3× the 0.1 µA bipolar figure → Error.
        let s = Stage::monostable(r(10e6), c(1e-6), Conditions::ideal(v(9.0)));
        let b = check_stage(&s, &Family::bipolar());
        assert!(
            codes(&b, Severity::Error).contains(&"bias-current"),
            "{b:?}"
        );
        // 1 MΩ: 3 µA, 30× → Warning.
        let s = Stage::monostable(r(1e6), c(1e-6), Conditions::ideal(v(9.0)));
        assert!(
            codes(&check_stage(&s, &Family::bipolar()), Severity::Warning)
                .contains(&"bias-current")
        );
        // CMOS bias is picoamps: quiet.
        assert!(check_stage(&s, &Family::cmos()).is_empty());
    }

    #[test]
    fn electrolytic_leakage_rating_and_polarity() {
        let mut s = Stage::monostable(r(1e6), c(100e-6), Conditions::ideal(v(9.0)));
        s.cap = Some(CapFacts {
            technology: Technology::Electrolytic,
            voltage_rating: Some(v(6.3)),
            tolerance: Tolerance::symmetric_percent(20.0).expect("tol"),
        });
        let found = check_stage(&s, &Family::cmos());
        // 0.01·100·9 = 9 µA leak vs 3 µA charging → Error.
        let errs = codes(&found, Severity::Error);
        assert!(errs.contains(&"leakage"), "{found:?}");
        assert!(errs.contains(&"voltage-rating"));
        assert!(codes(&found, Severity::Note).contains(&"polarity"));
        assert!(codes(&found, Severity::Warning).contains(&"electrolytic-timing"));
        // With 10 kΩ (300 µA) the leak is 3 %: a Warning; rating 10 V < 13.5 V margin: Warning.
        s.r1 = r(10e3);
        s.cap = s.cap.map(|mut k| {
            k.voltage_rating = Some(v(10.0));
            k
        });
        let found = check_stage(&s, &Family::cmos());
        let warns = codes(&found, Severity::Warning);
        assert!(
            warns.contains(&"leakage") && warns.contains(&"voltage-rating"),
            "{found:?}"
        );
        assert!(!has_error(&found));
        // Film capacitor: none of that.
        s.cap = s.cap.map(|mut k| {
            k.technology = Technology::Film;
            k.voltage_rating = Some(v(63.0));
            k
        });
        // (100 µF still dumps into the discharge pin at the end of each pulse: that warning only.)
        let rest = check_stage(&s, &Family::cmos());
        assert!(rest.iter().all(|f| f.code == "discharge-dump"), "{rest:?}");
    }

    #[test]
    fn small_capacitor_and_high_frequency() {
        let s = Stage::astable(r(1e3), r(1e3), c(47e-12), Conditions::ideal(v(9.0)));
        let found = check_stage(&s, &Family::bipolar());
        assert!(codes(&found, Severity::Warning).contains(&"stray-capacitance"));
        // 1.44/(3 kΩ·47 pF) ≈ 10 MHz: above both families' maxima.
        assert!(codes(&found, Severity::Error).contains(&"max-frequency"));
        assert!(
            codes(&check_stage(&s, &Family::cmos()), Severity::Error).contains(&"max-frequency")
        );
    }

    #[test]
    fn supply_range_and_cautions() {
        let s = Stage::monostable(r(1e6), c(1e-6), Conditions::ideal(v(3.0)));
        assert!(
            codes(&check_stage(&s, &Family::bipolar()), Severity::Error).contains(&"supply-range")
        );
        assert!(
            !codes(&check_stage(&s, &Family::cmos()), Severity::Error).contains(&"supply-range")
        );
        let s = Stage::monostable(r(1e6), c(10e-3), Conditions::ideal(v(60.0)));
        let found = check_stage(&s, &Family::bipolar());
        let cautions = codes(&found, Severity::Caution);
        // ½·10 mF·60² = 18 J.
        assert!(cautions.contains(&"high-voltage") && cautions.contains(&"stored-energy"));
        assert!(found.iter().any(|x| x.message.contains("local codes")));
    }

    #[test]
    fn trigger_must_be_shorter_than_pulse() {
        let s = Stage::monostable(r(10e3), c(1e-9), Conditions::ideal(v(9.0))); // ≈ 11 µs
        let mut lim = Limits {
            trigger: Some(Seconds::from_si(20e-6).expect("s")),
            ..Limits::default()
        };
        assert!(
            codes(
                &check_stage_with(&s, &Family::cmos(), &lim),
                Severity::Error
            )
            .contains(&"trigger-width")
        );
        lim.trigger = Some(Seconds::from_si(1e-6).expect("s"));
        assert!(check_stage_with(&s, &Family::cmos(), &lim).is_empty());
    }

    #[test]
    fn square_wave_on_bipolar_warns() {
        let s = Stage::square(r(10e3), c(10e-9), Conditions::ideal(v(9.0)));
        assert!(
            codes(&check_stage(&s, &Family::bipolar()), Severity::Warning)
                .contains(&"square-output")
        );
        assert!(check_stage(&s, &Family::cmos()).is_empty());
    }

    #[test]
    fn pair_width_must_stay_below_period() {
        let cond = Conditions::ideal(v(9.0));
        let pace = Stage::astable(r(1e3), r(10e3), c(100e-9), cond); // period ≈ 1.46 ms
        let short = Stage::monostable(r(10e3), c(10e-9), cond); // ≈ 0.11 ms
        let long = Stage::monostable(r(100e3), c(100e-9), cond); // ≈ 11 ms
        let lim = Limits::default();
        assert!(!has_error(&check_pair(
            &pace,
            &short,
            &Family::bipolar(),
            &lim
        )));
        let found = check_pair(&pace, &long, &Family::bipolar(), &lim);
        assert!(codes(&found, Severity::Error).contains(&"width-exceeds-period"));
    }

    #[test]
    fn the_lesser_warnings_trigger_and_stay_quiet() {
        let cond = Conditions::ideal(v(9.0));
        let fam = Family::bipolar();
        // ≈ 62 kHz: above half of the 100 kHz bipolar figure, below it.
        let s = Stage::astable(r(1e3), r(11e3), c(1e-9), cond);
        let found = check_stage(&s, &fam);
        assert!(
            codes(&found, Severity::Warning).contains(&"near-max-frequency"),
            "{found:?}"
        );
        assert!(!has_error(&found));
        // ln3·1 kΩ·1 nF ≈ 1.1 µs: shorter than 1/100 kHz.
        let s = Stage::monostable(r(1e3), c(1e-9), cond);
        assert!(codes(&check_stage(&s, &fam), Severity::Warning).contains(&"short-pulse"));
        // 9 V across 470 Ω: 172 mW, over half of 0.25 W but under it.
        let s = Stage::monostable(r(470.0), c(1e-6), cond);
        let found = check_stage(&s, &fam);
        assert!(
            codes(&found, Severity::Warning).contains(&"resistor-power"),
            "{found:?}"
        );
        assert!(!codes(&found, Severity::Error).contains(&"resistor-power"));
        // Discharge path against the trigger pin: 3 V / 10 MΩ = 0.3 µA < 10 × 0.5 µA.
        let s = Stage::astable(r(10e3), r(10e6), c(1e-9), cond);
        let found = check_stage(&s, &fam);
        assert!(
            found
                .iter()
                .any(|x| x.severity == Severity::Error && x.message.starts_with("discharging"))
        );
        // Dielectrics: Y5V warns, X7R notes, C0G is quiet.
        let mut s = good();
        for (tech, sev) in [
            (Technology::Y5v, Some(Severity::Warning)),
            (Technology::X7r, Some(Severity::Note)),
            (Technology::C0g, None),
        ] {
            s.cap = Some(CapFacts {
                technology: tech,
                voltage_rating: Some(v(50.0)),
                tolerance: Tolerance::symmetric_percent(5.0).expect("tol"),
            });
            let found = check_stage(&s, &fam);
            match sev {
                Some(sev) => assert!(codes(&found, sev).contains(&"dielectric"), "{found:?}"),
                None => assert!(found.is_empty(), "{found:?}"),
            }
        }
        // Big electrolytic at high voltage: caution.
        let mut s = Stage::monostable(r(1e6), c(220e-6), Conditions::ideal(v(40.0)));
        s.cap = Some(CapFacts {
            technology: Technology::Electrolytic,
            voltage_rating: Some(v(63.0)),
            tolerance: Tolerance::symmetric_percent(20.0).expect("tol"),
        });
        assert!(codes(&check_stage(&s, &fam), Severity::Caution).contains(&"big-electrolytic"));
    }

    #[test]
    fn pair_near_period_and_direct_trigger_warn() {
        let cond = Conditions::ideal(v(9.0));
        let lim = Limits::default();
        // Period ≈ ln2·(1k+20k)·100n ≈ 1.456 ms; width ln3·12.5k·100n ≈ 1.373 ms (94 %).
        let pace = Stage::astable(r(1e3), r(10e3), c(100e-9), cond);
        let width = Stage::monostable(r(12.5e3), c(100e-9), cond);
        let found = check_pair(&pace, &width, &Family::bipolar(), &lim);
        assert!(
            codes(&found, Severity::Warning).contains(&"width-near-period"),
            "{found:?}"
        );
        // Width 110 µs is shorter than the pace low time 693 µs: direct trigger would stretch it.
        let width = Stage::monostable(r(1e3), c(100e-9), cond);
        let found = check_pair(&pace, &width, &Family::bipolar(), &lim);
        assert!(codes(&found, Severity::Warning).contains(&"trigger-width"));
        assert!(!has_error(&found));
    }

    #[test]
    fn pair_worst_case_flags_overlap() {
        assert!(check_pair_worst_case(0.99).is_none());
        let w = check_pair_worst_case(1.06).expect("finding");
        assert_eq!(w.severity, Severity::Warning);
        assert!(w.message.contains("106 %"));
    }

    #[test]
    fn discharge_current_counts_the_capacitor_too() {
        // CMOS limit 10 mA: 9 V / 1.5 kΩ = 6 mA from the supply, + 6 V / 1 kΩ = 6 mA → 12 mA.
        let s = Stage::astable(r(1500.0), r(1000.0), c(100e-9), Conditions::ideal(v(9.0)));
        assert!(
            codes(&check_stage(&s, &Family::cmos()), Severity::Error)
                .contains(&"discharge-current")
        );
        // 9 V / 4.7 kΩ + 6 V / 68 kΩ ≈ 2 mA: quiet.
        assert!(check_stage(&good(), &Family::cmos()).is_empty());
    }

    #[test]
    fn output_driven_square_watches_its_output_current() {
        let cond = Conditions::ideal(Volts::from_si(9.0).expect("v"));
        let small = Stage::square(
            Ohms::from_si(1e3).expect("r"),
            Farads::from_si(1e-6).expect("c"),
            cond,
        );
        let codes = |s: &Stage, fam: &Family, sev: Severity| -> Vec<&'static str> {
            check_stage(s, fam)
                .into_iter()
                .filter(|x| x.severity == sev)
                .map(|x| x.code)
                .collect()
        };
        // CMOS: 9 V − 3 V over 1 kΩ = 6 mA: above the light load (1 mA, from memory).
        assert!(codes(&small, &Family::cmos(), Severity::Warning).contains(&"output-current"));
        let big = Stage::square(
            Ohms::from_si(100e3).expect("r"),
            Farads::from_si(1e-8).expect("c"),
            cond,
        );
        assert!(!codes(&big, &Family::cmos(), Severity::Warning).contains(&"output-current"));
        let tiny = Stage::square(
            Ohms::from_si(100.0).expect("r"),
            Farads::from_si(1e-6).expect("c"),
            cond,
        );
        let rated = check_stage(&tiny, &Family::cmos());
        assert!(
            rated
                .iter()
                .any(|x| x.code == "output-current" && x.message.contains("output rating")),
            "{rated:?}"
        );
    }

    #[test]
    fn a_large_one_shot_capacitor_dumping_into_the_discharge_pin_is_flagged() {
        let cond = Conditions::ideal(Volts::from_si(9.0).expect("v"));
        let r = Ohms::from_si(10e3).expect("r");
        let big = Stage::monostable(r, Farads::from_si(100e-6).expect("c"), cond);
        let small = Stage::monostable(r, Farads::from_si(100e-9).expect("c"), cond);
        let has = |s: &Stage| {
            check_stage(s, &Family::bipolar())
                .iter()
                .any(|x| x.code == "discharge-dump")
        };
        assert!(has(&big) && !has(&small));
    }

    #[test]
    fn leakage_is_the_datasheet_figure_at_the_rating() {
        // from memory: at most 0.01·C·V µA at the rated voltage (aluminium at least 3 µA).
        let al = Technology::Electrolytic;
        let at = leakage_estimate(al, 100e-6, Some(16.0), 9.0);
        assert!((at - 16e-6).abs() < 1e-12, "{at}");
        let none = leakage_estimate(al, 100e-6, None, 9.0);
        assert!((none - 9e-6).abs() < 1e-12, "{none}");
        let floor = leakage_estimate(al, 1e-6, Some(50.0), 9.0);
        assert!((floor - 3e-6).abs() < 1e-12, "{floor}");
        let ta = leakage_estimate(Technology::Tantalum, 1e-6, Some(50.0), 9.0);
        assert!((ta - 0.5e-6).abs() < 1e-12, "{ta}");
        assert_eq!(
            leakage_estimate(Technology::Film, 1e-6, Some(50.0), 9.0),
            0.0
        );
        // In the check: 100 µF rated 16 V, 120 kΩ at 9 V charges with 25 µA at the threshold.
        // At the rating the leak is 16 µA (64 %): an Error; the old rule at the supply gave
        // 9 µA (36 %), a Warning — this fails before the rating was used.
        let mut s = Stage::monostable(r(120e3), c(100e-6), Conditions::ideal(v(9.0)));
        s.cap = Some(CapFacts {
            technology: al,
            voltage_rating: Some(v(16.0)),
            tolerance: Tolerance::symmetric_percent(20.0).expect("tol"),
        });
        let found = check_stage(&s, &Family::cmos());
        assert!(
            codes(&found, Severity::Error).contains(&"leakage"),
            "{found:?}"
        );
    }

    #[test]
    fn a_trigger_pulse_too_short_for_the_latch_is_flagged() {
        // from memory: 1 µs is the conservative minimum trigger pulse.
        let s = Stage::monostable(r(100e3), c(100e-9), Conditions::ideal(v(9.0)));
        let short = Limits {
            trigger: Some(Seconds::from_si(0.5e-6).expect("s")),
            ..Limits::default()
        };
        let found = check_stage_with(&s, &Family::bipolar(), &short);
        assert!(
            codes(&found, Severity::Warning).contains(&"trigger-pulse-width"),
            "{found:?}"
        );
        let fine = Limits {
            trigger: Some(Seconds::from_si(5e-6).expect("s")),
            ..Limits::default()
        };
        let found = check_stage_with(&s, &Family::bipolar(), &fine);
        assert!(!found.iter().any(|f| f.code == "trigger-pulse-width"));
    }

    #[test]
    fn the_pair_coupling_dip_and_its_clamp() {
        // Full swing at 9 V, trigger at 3 V: below for 10 kΩ·1 nF·ln(9/6) = 4.05 µs; without
        // the clamp the rising edge lifts the trigger to 18 V.
        let d = trigger_dip(&PAIR_COUPLING, 9.0, 9.0, 3.0);
        let t = d.below.expect("fires");
        assert!((t - 10e-6 * 1.5f64.ln()).abs() < 1e-12, "{t}");
        assert_eq!(d.unclamped_peak, 18.0);
        // A swing that stops above the trigger level never fires.
        assert!(
            trigger_dip(&PAIR_COUPLING, 5.0, 3.3, 5.0 / 3.0)
                .below
                .is_none()
        );
        let cond = Conditions::ideal(v(9.0));
        let pace = Stage::astable(r(1e3), r(10e3), c(100e-9), cond);
        let width = Stage::monostable(r(10e3), c(10e-9), cond);
        let found = check_pair(&pace, &width, &Family::cmos(), &Limits::default());
        assert!(
            codes(&found, Severity::Note).contains(&"trigger-clamp"),
            "{found:?}"
        );
        assert!(!found.iter().any(|f| f.code == "trigger-coupling"));
        // Bipolar at 5 V: the output high sits 1.7 V down (from memory), the trigger only
        // reaches 1.7 V against its 1.67 V level.
        let cond = Conditions::ideal(v(5.0));
        let pace = Stage::astable(r(1e3), r(10e3), c(100e-9), cond);
        let width = Stage::monostable(r(10e3), c(10e-9), cond);
        let found = check_pair(&pace, &width, &Family::bipolar(), &Limits::default());
        assert!(
            codes(&found, Severity::Warning).contains(&"trigger-coupling"),
            "{found:?}"
        );
        // A dip that outlasts the pulse: an Error.
        let k = Coupling {
            capacitor: 1e-6,
            clamp: false,
            ..PAIR_COUPLING
        };
        let dip = trigger_dip(&k, 9.0, 9.0, 3.0);
        let fs: Vec<Finding> = coupling_breaches(&dip, &k, 1e-3, 9.0)
            .iter()
            .map(Breach::finding)
            .collect();
        assert!(
            codes(&fs, Severity::Error).contains(&"trigger-coupling"),
            "{fs:?}"
        );
        assert!(codes(&fs, Severity::Warning).contains(&"trigger-clamp"));
    }

    /// Every rule's code and severity come from its typed value alone (the old codes and
    /// severities, unchanged), and its finding carries exactly those: the wording adds only
    /// the sentence.
    #[test]
    fn every_rule_has_its_code_and_severity_from_the_value() {
        use Severity::{Caution, Error, Note, Warning};
        let p = Provenance::FromMemory;
        let (hz, s) = (
            Hertz::from_si(1e3).expect("hz"),
            Seconds::from_si(1e-3).expect("s"),
        );
        let bias = |degree| Breach::BiasCurrent {
            degree,
            pin: Pin::Trigger,
            current: 1e-6,
            through: 1e6,
            ratio: 2.0,
            bias: 5e-7,
            want: 50.0,
            family: "bipolar",
            provenance: p,
        };
        let leak = |degree| Breach::Leakage {
            degree,
            leak: 1e-5,
            rating: None,
            vcc: 9.0,
            aluminium: true,
            charging: 1e-5,
            share: 1.0,
        };
        let discharge = |degree| Breach::DischargeCurrent {
            degree,
            from_supply: 1e-2,
            from_cap: 0.0,
            vcc: 9.0,
            r1: r(900.0),
            limit: 1e-2,
            family: "cmos",
            provenance: p,
        };
        let power = |degree| Breach::ResistorPower {
            degree,
            power: 0.2,
            vcc: 9.0,
            r1: r(400.0),
            rating: 0.25,
        };
        let table: Vec<(Breach, &str, Severity)> = vec![
            (
                Breach::SupplyRange {
                    vcc: 3.0,
                    min: 4.5,
                    max: 16.0,
                    family: "bipolar",
                    provenance: p,
                },
                "supply-range",
                Error,
            ),
            (Breach::HighVoltage { vcc: 60.0 }, "high-voltage", Caution),
            (
                Breach::Form(FormError::NoSupply(Volts::ZERO)),
                "form",
                Error,
            ),
            (Breach::NoOutputResistor, "zero-resistance", Error),
            (Breach::R1Zero, "r1-zero", Error),
            (discharge(Degree::Over), "discharge-current", Error),
            (discharge(Degree::Near), "discharge-current", Warning),
            (power(Degree::Over), "resistor-power", Error),
            (power(Degree::Near), "resistor-power", Warning),
            (Breach::HotResistor { power: 2.0 }, "hot-resistor", Caution),
            (
                Breach::MaxFrequency {
                    frequency: hz,
                    max: 1e5,
                    family: "bipolar",
                    provenance: p,
                },
                "max-frequency",
                Error,
            ),
            (
                Breach::NearMaxFrequency {
                    frequency: hz,
                    max: 1e5,
                    family: "bipolar",
                },
                "near-max-frequency",
                Warning,
            ),
            (
                Breach::ShortPulse {
                    pulse: s,
                    max: 1e5,
                    family: "bipolar",
                },
                "short-pulse",
                Warning,
            ),
            (
                Breach::TriggerNotShorter {
                    trigger: s,
                    pulse: s,
                },
                "trigger-width",
                Error,
            ),
            (
                Breach::TriggerTooBrief { trigger: s },
                "trigger-pulse-width",
                Warning,
            ),
            (
                Breach::SquareOutput {
                    family: "bipolar",
                    drop: 1.7,
                    provenance: p,
                },
                "square-output",
                Warning,
            ),
            (
                Breach::OutputCurrent {
                    peak: 1.0,
                    light: 1e-3,
                    rating: 1e-2,
                    over_rating: true,
                    family: "cmos",
                },
                "output-current",
                Warning,
            ),
            (
                Breach::DischargeDump {
                    c: c(1e-4),
                    charge: 6e-4,
                    vu: 6.0,
                },
                "discharge-dump",
                Warning,
            ),
            (bias(Degree::Over), "bias-current", Error),
            (bias(Degree::Near), "bias-current", Warning),
            (leak(Degree::Over), "leakage", Error),
            (leak(Degree::Near), "leakage", Warning),
            (
                Breach::StrayCapacitance { c: c(1e-11) },
                "stray-capacitance",
                Warning,
            ),
            (
                Breach::StoredEnergy {
                    energy: 2.0,
                    vcc: 60.0,
                },
                "stored-energy",
                Caution,
            ),
            (Breach::ElectrolyticTiming, "electrolytic-timing", Warning),
            (Breach::LossyCeramic, "dielectric", Warning),
            (Breach::DriftingCeramic, "dielectric", Note),
            (Breach::Polarity, "polarity", Note),
            (
                Breach::BigElectrolytic { c: 1e-3, vcc: 40.0 },
                "big-electrolytic",
                Caution,
            ),
            (
                Breach::RatingBelowSupply {
                    rating: v(6.3),
                    vcc: 9.0,
                },
                "voltage-rating",
                Error,
            ),
            (
                Breach::RatingMargin {
                    rating: v(10.0),
                    vcc: 9.0,
                },
                "voltage-rating",
                Warning,
            ),
            (Breach::RatingUnknown { vcc: 9.0 }, "voltage-rating", Note),
            (
                Breach::TriggerNotReached {
                    lowest: 1.7,
                    threshold: 1.67,
                },
                "trigger-coupling",
                Warning,
            ),
            (
                Breach::CouplingStretches {
                    coupling: PAIR_COUPLING,
                    held: 1e-3,
                    width: 1e-4,
                },
                "trigger-coupling",
                Error,
            ),
            (
                Breach::CouplingDipBrief { dip: 1e-7 },
                "trigger-pulse-width",
                Warning,
            ),
            (
                Breach::ClampKept {
                    peak: 18.0,
                    vcc: 9.0,
                },
                "trigger-clamp",
                Note,
            ),
            (
                Breach::ClampMissing {
                    peak: 18.0,
                    vcc: 9.0,
                },
                "trigger-clamp",
                Warning,
            ),
            (Breach::PaceNotPeriodic, "pair-form", Error),
            (Breach::WidthNotMonostable, "pair-form", Error),
            (
                Breach::WidthOverPeriod {
                    width: s,
                    period: s,
                },
                "width-exceeds-period",
                Error,
            ),
            (
                Breach::WidthNearPeriod {
                    width: s,
                    period: s,
                },
                "width-near-period",
                Warning,
            ),
            (
                Breach::DirectTriggerStretches { low: s, width: s },
                "trigger-width",
                Warning,
            ),
            (
                Breach::WidthMayReachPeriod { max_duty: 1.06 },
                "width-may-exceed-period",
                Warning,
            ),
            (Breach::DualSupply, "dual-supply", Error),
        ];
        for (b, code, severity) in &table {
            assert_eq!((b.code(), b.severity()), (*code, *severity), "{b:?}");
            let f = b.finding();
            assert_eq!((f.code, f.severity), (*code, *severity), "{b:?}");
            assert!(!f.message.is_empty(), "{b:?}");
            let placed = Placed {
                place: Some(Place::TimerB),
                breach: b.clone(),
            }
            .finding();
            assert_eq!((placed.code, placed.severity), (*code, *severity));
            assert_eq!(placed.message, format!("timer B: {}", f.message));
        }
    }

    /// The gate's early stop and its skipping of the rules that never refuse give the first
    /// worded Error, over a grid that crosses every limit of every form (the random version is
    /// `solve::admit`'s property test).
    #[test]
    fn the_first_error_is_the_first_worded_error() {
        let mut refused = 0;
        let mut codes_seen = std::collections::BTreeSet::new();
        for family in [Family::bipolar(), Family::cmos()] {
            for form in [Form::Monostable, Form::Astable, Form::Steered, Form::Square] {
                for vcc in [3.0, 9.0, 60.0] {
                    for e in 0..=16 {
                        let r1 = 10f64.powf(f64::from(e) * 0.5);
                        for ce in 0..=10 {
                            let s = Stage {
                                form,
                                r1: r(r1),
                                r2: form.has_r2().then_some(r(r1 * 3.0)),
                                c: c(10f64.powf(-12.0 + f64::from(ce))),
                                cap: (ce % 3 == 0).then(|| CapFacts {
                                    technology: Technology::Electrolytic,
                                    voltage_rating: Some(v(16.0)),
                                    tolerance: Tolerance::symmetric_percent(20.0).expect("tol"),
                                }),
                                conditions: Conditions::ideal(v(vcc)),
                                steering: Steering::default(),
                            };
                            let worded = check_stage(&s, &family);
                            let want = worded.into_iter().find(|f| f.severity == Severity::Error);
                            let got = first_error(&s, &family);
                            assert_eq!(got.as_ref().map(Breach::finding), want, "{s:?}");
                            if let Some(b) = got {
                                refused += 1;
                                codes_seen.insert(b.code());
                            }
                        }
                    }
                }
            }
        }
        assert!(refused > 100, "{refused}");
        assert!(codes_seen.len() >= 6, "{codes_seen:?}");
    }
}
