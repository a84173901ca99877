//! The sentences of the electrical checks: each [`Breach`] the rules in `checks.rs` decide on is
//! turned into its [`Finding`] here, and only here. Nothing in this file decides: the code and
//! severity come from the breach itself, and the figures in the text are the ones it carries.
//! Pure (no I/O); only what a report needs is worded.

use super::checks::{
    Breach, Finding, MIN_TRIGGER_PULSE, Pin, Place, Placed, RATING_MARGIN, STRAY_TYPICAL_F,
};
use crate::units::{Amps, Engineering, Farads, Ohms, Seconds, Volts, Watts, format_sig};

const CODES_NOTE: &str = "Follow local codes and licensed practice.";

fn amps(a: f64) -> String {
    Amps::from_si(a).map_or_else(|| format!("{a} A"), |x| x.eng(3))
}
fn volts(v: f64) -> String {
    Volts::from_si(v).map_or_else(|| format!("{v} V"), |x| x.eng(3))
}
fn watts(x: f64) -> String {
    Watts::from_si(x).map_or_else(|| format!("{x} W"), |w| w.eng(3))
}
fn seconds(t: f64) -> String {
    Seconds::from_si(t).map_or_else(|| format!("{t} s"), |x| x.eng(3))
}

impl Place {
    /// The label a placed breach's sentence starts with.
    pub fn label(self) -> &'static str {
        match self {
            Place::PaceStage => "pace stage",
            Place::WidthStage => "width stage",
            Place::TimerA => "timer A",
            Place::TimerB => "timer B",
        }
    }
}

impl Placed {
    /// The finding, its sentence led by the stage's label.
    pub fn finding(&self) -> Finding {
        let mut f = self.breach.finding();
        if let Some(place) = self.place {
            f.message = format!("{}: {}", place.label(), f.message);
        }
        f
    }
}

impl Breach {
    /// The finding: the breach's own severity and code, and its sentence.
    pub fn finding(&self) -> Finding {
        Finding {
            severity: self.severity(),
            code: self.code(),
            message: self.sentence(),
        }
    }

    /// What was found, in a sentence with the figures that decided it.
    pub fn sentence(&self) -> String {
        use super::checks::Degree::{Near, Over};
        match self {
            Breach::SupplyRange {
                vcc,
                min,
                max,
                family,
                provenance,
            } => format!(
                "supply {} is outside the {} family's range {} to {} ({})",
                volts(*vcc),
                family,
                volts(*min),
                volts(*max),
                provenance.label()
            ),
            Breach::HighVoltage { vcc } => format!(
                "supply {} is above 50 V: shock hazard; insulate, fuse and discharge before touching. {CODES_NOTE}",
                volts(*vcc)
            ),
            Breach::Form(e) => e.to_string(),
            Breach::NoOutputResistor => "the resistor from the output to the capacitor is zero: the output would drive the capacitor directly".to_string(),
            Breach::R1Zero => "R1 is zero: while discharging, the discharge pin would short the supply to ground through the chip".to_string(),
            Breach::DischargeCurrent {
                degree,
                from_supply,
                from_cap,
                vcc,
                r1,
                limit,
                family,
                provenance,
            } => {
                let detail = if *from_cap > 0.0 {
                    format!(
                        "{} from the supply through R1 (Vcc/R1 = {} / {}) plus {} from the capacitor",
                        amps(*from_supply),
                        volts(*vcc),
                        r1.eng(4),
                        amps(*from_cap)
                    )
                } else {
                    format!(
                        "{} (Vcc/R1 = {} / {})",
                        amps(*from_supply),
                        volts(*vcc),
                        r1.eng(4)
                    )
                };
                let total = from_supply + from_cap;
                match degree {
                    Over => format!(
                        "discharge pin would sink {} = {detail}, above the {} family's limit {} ({}); raise R1",
                        amps(total),
                        family,
                        amps(*limit),
                        provenance.label()
                    ),
                    Near => format!(
                        "discharge pin sinks {} = {detail}, over half the {} family's limit {} ({}); the discharge transistor's drop shifts the timing",
                        amps(total),
                        family,
                        amps(*limit),
                        provenance.label()
                    ),
                }
            }
            Breach::ResistorPower {
                degree,
                power,
                vcc,
                r1,
                rating,
            } => match degree {
                Over => format!(
                    "R1 dissipates {} while the capacitor discharges (Vcc²/R1 = {}² / {}), above its {} rating",
                    watts(*power),
                    volts(*vcc),
                    r1.eng(4),
                    watts(*rating)
                ),
                Near => format!(
                    "R1 dissipates {} while discharging (Vcc²/R1), over half its {} rating (common practice derating)",
                    watts(*power),
                    watts(*rating)
                ),
            },
            Breach::HotResistor { power } => format!(
                "R1 dissipates {}: it gets hot enough to burn skin and scorch the board; mount it clear of other parts. {CODES_NOTE}",
                watts(*power)
            ),
            Breach::MaxFrequency {
                frequency,
                max,
                family,
                provenance,
            } => format!(
                "frequency {} is above the {} family's practical maximum {} ({})",
                frequency.eng(4),
                family,
                format_sig(*max, 3, "Hz"),
                provenance.label()
            ),
            Breach::NearMaxFrequency {
                frequency,
                max,
                family,
            } => format!(
                "frequency {} is above half the {} family's practical maximum {}: edges and thresholds lag, expect the period to run long",
                frequency.eng(4),
                family,
                format_sig(*max, 3, "Hz")
            ),
            Breach::ShortPulse { pulse, max, family } => format!(
                "pulse {} is shorter than one period of the {} family's maximum frequency {}; the chip's own delays become a large part of it",
                pulse.eng(3),
                family,
                format_sig(*max, 3, "Hz")
            ),
            Breach::TriggerNotShorter { trigger, pulse } => format!(
                "trigger pulse {} is not shorter than the output pulse {}: the output stays high as long as the trigger is held low; shorten the trigger (e.g. couple it through a small capacitor)",
                trigger.eng(3),
                pulse.eng(3)
            ),
            Breach::TriggerTooBrief { trigger } => format!(
                "trigger pulse {} is shorter than the {} the latch needs to set reliably (from memory): the one-shot may miss it",
                trigger.eng(3),
                Seconds::from_si(MIN_TRIGGER_PULSE).map_or_else(String::new, |x| x.eng(3)),
            ),
            Breach::SquareOutput {
                family,
                drop,
                provenance,
            } => format!(
                "the {} family's output sits about {} below the supply when high ({}), so the output-driven square wave charges toward less than Vcc: the high time runs long and the duty is above 50 %. Use a CMOS timer, or model it with the output-drop refinement",
                family,
                volts(*drop),
                provenance.label()
            ),
            Breach::OutputCurrent {
                peak,
                light,
                rating,
                over_rating,
                family,
            } => format!(
                "the output drives the timing resistor with up to {} at each edge (plus any load); {} — use a larger resistance and a smaller capacitor",
                amps(*peak),
                if *over_rating {
                    format!(
                        "above the {} family's output rating of about {} (from memory)",
                        family,
                        amps(*rating)
                    )
                } else {
                    format!(
                        "above the light load (about {}, from memory) its output-high drop figure holds for, so the high time runs longer than predicted",
                        amps(*light)
                    )
                }
            ),
            Breach::DischargeDump { c, charge, vu } => format!(
                "at the end of each pulse the {} capacitor dumps {:.0} µC from {} straight into the discharge pin, limited only by the transistor; put about 100 Ω in series with the discharge pin (common practice) — it adds about 100 Ω·C to the recovery time, not to the pulse",
                c.eng(3),
                charge * 1e6,
                volts(*vu)
            ),
            Breach::BiasCurrent {
                degree: _,
                pin,
                current,
                through,
                ratio,
                bias,
                want,
                family,
                provenance,
            } => {
                let (what, pin) = match pin {
                    Pin::Threshold => ("charging", "threshold"),
                    Pin::Trigger => ("discharging", "trigger"),
                };
                let rname =
                    Ohms::from_si(*through).map_or_else(|| format!("{through} Ω"), |x| x.eng(4));
                format!(
                    "{what} current at the {pin} is {} through {rname}, only {:.0}× the {} family's {pin}-pin current {} ({}); common practice wants at least {:.0}×, so the timing runs long by roughly {:.1} % — use a smaller resistance and a larger capacitor, or a CMOS timer",
                    amps(*current),
                    ratio,
                    family,
                    amps(*bias),
                    provenance.label(),
                    want,
                    100.0 / ratio
                )
            }
            Breach::Leakage {
                degree,
                leak,
                rating,
                vcc,
                aluminium,
                charging,
                share,
            } => format!(
                "the electrolytic may leak up to {} (0.01·C·V µA at its rating {}{}, from memory: the datasheet maximum) against a charging current of {} at the threshold ({:.0} % of it){}",
                amps(*leak),
                rating.map_or_else(
                    || format!("unknown, taken as the supply {}", volts(*vcc)),
                    |v| v.eng(3)
                ),
                if *aluminium { ", at least 3 µA" } else { "" },
                amps(*charging),
                share * 100.0,
                match degree {
                    Over => ": the capacitor may never reach the threshold",
                    Near => ": the timing runs long and varies from part to part",
                }
            ),
            Breach::StrayCapacitance { c } => format!(
                "timing capacitance {} is under 100 pF: about 5 pF of pin and board strays (from memory) add {:.0} % or more",
                c.eng(3),
                STRAY_TYPICAL_F / c.si() * 100.0
            ),
            Breach::StoredEnergy { energy, vcc } => format!(
                "the timing capacitor stores {:.1} J at {}: it can burn, shock and weld tools; discharge it through a resistor before handling. {CODES_NOTE}",
                energy,
                volts(*vcc)
            ),
            Breach::ElectrolyticTiming => "an electrolytic timing capacitor has a wide tolerance, leaks and drifts with age and temperature; prefer film or C0G ceramic where the value allows".to_string(),
            Breach::LossyCeramic => "Y5V/Z5U ceramic loses much of its capacitance with voltage and temperature; poor for timing — prefer film or C0G".to_string(),
            Breach::DriftingCeramic => "X7R ceramic drifts with voltage and temperature by several percent; C0G or film is steadier for timing".to_string(),
            Breach::Polarity => "polarised capacitor: fit its + lead to the threshold/trigger node and its − lead to ground".to_string(),
            Breach::BigElectrolytic { c, vcc } => format!(
                "a {} electrolytic at {} holds a dangerous charge and can vent if reversed or over-volted. {CODES_NOTE}",
                Farads::from_si(*c).map_or_else(String::new, |x| x.eng(3)),
                volts(*vcc)
            ),
            Breach::RatingBelowSupply { rating, vcc } => format!(
                "capacitor rated {} is below the supply {}",
                rating.eng(3),
                volts(*vcc)
            ),
            Breach::RatingMargin { rating, vcc } => format!(
                "capacitor rated {} has less than the 1.5× margin over the supply {} (common practice: at least {})",
                rating.eng(3),
                volts(*vcc),
                volts(RATING_MARGIN * vcc)
            ),
            Breach::RatingUnknown { vcc } => format!(
                "voltage rating unknown: use at least {} (1.5× the supply, common practice)",
                volts(RATING_MARGIN * vcc)
            ),
            Breach::TriggerNotReached { lowest, threshold } => format!(
                "with the family's output-high drop the pace output's falling edge pulls the width stage's trigger only down to {}, not below its threshold {}: the one-shot may never fire; use a CMOS timer, which swings closer to the supply",
                volts(*lowest),
                volts(*threshold)
            ),
            Breach::CouplingStretches {
                coupling,
                held,
                width,
            } => format!(
                "the coupling ({} nF, {} kΩ pull-up) holds the trigger low for {}, not shorter than the pulse {}: the pulse is stretched; use a smaller coupling capacitor",
                coupling.capacitor * 1e9,
                coupling.pull_up / 1e3,
                seconds(*held),
                seconds(*width),
            ),
            Breach::CouplingDipBrief { dip } => format!(
                "the coupling makes a trigger dip of only {}, under the {} the latch needs to set reliably (from memory); use a larger coupling capacitor",
                seconds(*dip),
                Seconds::from_si(MIN_TRIGGER_PULSE).map_or_else(String::new, |x| x.eng(3)),
            ),
            Breach::ClampKept { peak, vcc } => format!(
                "keep the clamp diode from the width stage's trigger to the supply: on each rising edge of the pace output the coupling capacitor would lift the trigger to about {}, above the supply {} (common practice)",
                volts(*peak),
                volts(*vcc)
            ),
            Breach::ClampMissing { peak, vcc } => format!(
                "no clamp diode on the width stage's trigger: each rising edge of the pace output lifts it to about {}, above the supply {}; add a small-signal diode from the trigger to the supply",
                volts(*peak),
                volts(*vcc)
            ),
            Breach::PaceNotPeriodic => "the pace stage must run free (astable, steered or square), not fire once".to_string(),
            Breach::WidthNotMonostable => "the width stage must be a monostable".to_string(),
            Breach::WidthOverPeriod { width, period } => format!(
                "pulse width {} is not below the period {}: the one-shot would still be high when the next trigger comes, so the width is not controlled",
                width.eng(4),
                period.eng(4)
            ),
            Breach::WidthNearPeriod { width, period } => format!(
                "pulse width {} is over 90 % of the period {}: the timing capacitor has little time to empty before the next trigger (common practice: keep 10 % spare)",
                width.eng(4),
                period.eng(4)
            ),
            Breach::DirectTriggerStretches { low, width } => format!(
                "if the pace output drives the trigger directly, its low time {} is not shorter than the pulse {} and would stretch it; couple the trigger through a small capacitor (a differentiator)",
                low.eng(4),
                width.eng(4)
            ),
            Breach::WidthMayReachPeriod { max_duty } => format!(
                "within the tolerances the pulse width can reach {:.0} % of the period: some builds from these parts will not control the width; use tighter parts or more margin",
                max_duty * 100.0
            ),
            Breach::DualSupply => "both halves of a dual package run from one supply pin".to_string(),
        }
    }
}
