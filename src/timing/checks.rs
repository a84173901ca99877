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

use super::design::{Form, Stage, Steering};
use super::family::Family;
use crate::model::Technology;
use crate::units::{Amps, Engineering, Farads, Seconds, Volts, Watts, format_sig};
use serde::Serialize;

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

/// One result of a check.
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
    pub resistor_power: Watts,
    /// Length of the trigger pulse driving a monostable, if known.
    pub trigger: Option<Seconds>,
}

impl Default for Limits {
    fn default() -> Self {
        Self {
            // common practice: the usual small through-hole resistor is rated 0.25 W.
            resistor_power: Watts::from_base(250_000),
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

const CODES_NOTE: &str = "Follow local codes and licensed practice.";

fn f(e: Error3) -> Finding {
    Finding {
        severity: e.0,
        code: e.1,
        message: e.2,
    }
}
type Error3 = (Severity, &'static str, String);

fn amps(a: f64) -> String {
    Amps::from_si(a).map_or_else(|| format!("{a} A"), |x| x.eng(3))
}
fn volts(v: f64) -> String {
    Volts::from_si(v).map_or_else(|| format!("{v} V"), |x| x.eng(3))
}

/// Check one stage with default build limits.
pub fn check_stage(stage: &Stage, family: &Family) -> Vec<Finding> {
    check_stage_with(stage, family, &Limits::default())
}

/// Check one stage against the family and the build limits.
pub fn check_stage_with(stage: &Stage, family: &Family, limits: &Limits) -> Vec<Finding> {
    let mut out = Vec::new();
    let vcc = stage.conditions.vcc.si();
    let (smin, smax) = (family.supply_min.value, family.supply_max.value);
    if vcc < smin || vcc > smax {
        out.push(f((
            Severity::Error,
            "supply-range",
            format!(
                "supply {} is outside the {} family's range {} to {} ({})",
                volts(vcc),
                family.name,
                volts(smin),
                volts(smax),
                family.supply_max.provenance.label()
            ),
        )));
    }
    if vcc > 50.0 {
        out.push(f((
            Severity::Caution,
            "high-voltage",
            format!(
                "supply {} is above 50 V: shock hazard; insulate, fuse and discharge before touching. {CODES_NOTE}",
                volts(vcc)
            ),
        )));
    }
    let times = match stage.times() {
        Ok(t) => t,
        Err(e) => {
            out.push(f((Severity::Error, "form", e.to_string())));
            // Still check what does not need times.
            check_r1(stage, family, limits, &mut out);
            return out;
        }
    };
    check_r1(stage, family, limits, &mut out);
    check_bias(stage, family, &mut out);
    check_capacitor(stage, &mut out);
    check_output_current(stage, family, &mut out);
    check_discharge_dump(stage, &mut out);

    let fmax = family.max_freq.value;
    if let Some(freq) = times.frequency {
        let fr = freq.si();
        if fr > fmax {
            out.push(f((
                Severity::Error,
                "max-frequency",
                format!(
                    "frequency {} is above the {} family's practical maximum {} ({})",
                    freq.eng(4),
                    family.name,
                    format_sig(fmax, 3, "Hz"),
                    family.max_freq.provenance.label()
                ),
            )));
        } else if fr > fmax / 2.0 {
            out.push(f((
                Severity::Warning,
                "near-max-frequency",
                format!(
                    "frequency {} is above half the {} family's practical maximum {}: edges and thresholds lag, expect the period to run long",
                    freq.eng(4),
                    family.name,
                    format_sig(fmax, 3, "Hz")
                ),
            )));
        }
    } else if times.high.si() < 1.0 / fmax {
        out.push(f((
            Severity::Warning,
            "short-pulse",
            format!(
                "pulse {} is shorter than one period of the {} family's maximum frequency {}; the chip's own delays become a large part of it",
                times.high.eng(3),
                family.name,
                format_sig(fmax, 3, "Hz")
            ),
        )));
    }
    if stage.form == Form::Monostable
        && let Some(trig) = limits.trigger
        && trig >= times.high
    {
        out.push(f((
            Severity::Error,
            "trigger-width",
            format!(
                "trigger pulse {} is not shorter than the output pulse {}: the output stays high as long as the trigger is held low; shorten the trigger (e.g. couple it through a small capacitor)",
                trig.eng(3),
                times.high.eng(3)
            ),
        )));
    }
    if stage.form == Form::Monostable
        && let Some(trig) = limits.trigger
        && let Some(finding) = check_trigger_minimum(trig)
    {
        out.push(finding);
    }
    if stage.form == Form::Square && !family.rail_to_rail() {
        out.push(f((
            Severity::Warning,
            "square-output",
            format!(
                "the {} family's output sits about {} below the supply when high ({}), so the output-driven square wave charges toward less than Vcc: the high time runs long and the duty is above 50 %. Use a CMOS timer, or model it with the output-drop refinement",
                family.name,
                volts(family.output_high_drop.value),
                family.output_high_drop.provenance.label()
            ),
        )));
    }
    out
}

/// Discharge-pin current and resistor dissipation: the checks on R1.
fn check_r1(stage: &Stage, family: &Family, limits: &Limits, out: &mut Vec<Finding>) {
    let vcc = stage.conditions.vcc.si();
    let r1 = stage.r1.si();
    if !stage.form.r1_feeds_discharge() {
        if r1 <= 0.0 {
            out.push(f((
                Severity::Error,
                "zero-resistance",
                "the resistor from the output to the capacitor is zero: the output would drive the capacitor directly".to_string(),
            )));
        }
        return;
    }
    if r1 <= 0.0 {
        out.push(f((
            Severity::Error,
            "r1-zero",
            "R1 is zero: while discharging, the discharge pin would short the supply to ground through the chip".to_string(),
        )));
        return;
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
    let detail = if from_cap > 0.0 {
        format!(
            "{} from the supply through R1 (Vcc/R1 = {} / {}) plus {} from the capacitor",
            amps(from_supply),
            volts(vcc),
            stage.r1.eng(4),
            amps(from_cap)
        )
    } else {
        format!(
            "{} (Vcc/R1 = {} / {})",
            amps(from_supply),
            volts(vcc),
            stage.r1.eng(4)
        )
    };
    if total > limit {
        out.push(f((
            Severity::Error,
            "discharge-current",
            format!(
                "discharge pin would sink {} = {detail}, above the {} family's limit {} ({}); raise R1",
                amps(total),
                family.name,
                amps(limit),
                family.discharge_max.provenance.label()
            ),
        )));
    } else if total > limit / 2.0 {
        out.push(f((
            Severity::Warning,
            "discharge-current",
            format!(
                "discharge pin sinks {} = {detail}, over half the {} family's limit {} ({}); the discharge transistor's drop shifts the timing",
                amps(total),
                family.name,
                amps(limit),
                family.discharge_max.provenance.label()
            ),
        )));
    }
    let p = vcc * vcc / r1;
    let rating = limits.resistor_power.si();
    let pw = |x: f64| Watts::from_si(x).map_or_else(|| format!("{x} W"), |w| w.eng(3));
    if p > rating {
        out.push(f((
            Severity::Error,
            "resistor-power",
            format!(
                "R1 dissipates {} while the capacitor discharges (Vcc²/R1 = {}² / {}), above its {} rating",
                pw(p),
                volts(vcc),
                stage.r1.eng(4),
                pw(rating)
            ),
        )));
    } else if p > rating / 2.0 {
        out.push(f((
            Severity::Warning,
            "resistor-power",
            format!(
                "R1 dissipates {} while discharging (Vcc²/R1), over half its {} rating (common practice derating)",
                pw(p),
                pw(rating)
            ),
        )));
    }
    if p > 1.0 {
        out.push(f((
            Severity::Caution,
            "hot-resistor",
            format!(
                "R1 dissipates {}: it gets hot enough to burn skin and scorch the board; mount it clear of other parts. {CODES_NOTE}",
                pw(p)
            ),
        )));
    }
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
/// the output-drop figure holds for (Warning) and inside the output rating (Error).
fn check_output_current(stage: &Stage, family: &Family, out: &mut Vec<Finding>) {
    if stage.form != Form::Square {
        return;
    }
    let c = &stage.conditions;
    let Ok((vu, vl)) = c.thresholds() else {
        return;
    };
    let r = stage.r1.si();
    if r <= 0.0 {
        return;
    }
    let voh = c.vcc.si() - c.output_high_drop.si();
    let peak = ((voh - vl) / r).max(vu / r);
    let (light, rating) = (light_load_limit(family), output_rating(family));
    // A Warning either way: the search's closed-form limits (solve/reach) mirror every Error.
    if peak <= light {
        return;
    }
    let over_rating = peak > rating;
    out.push(f((
        Severity::Warning,
        "output-current",
        format!(
            "the output drives the timing resistor with up to {} at each edge (plus any load); {} — use a larger resistance and a smaller capacitor",
            amps(peak),
            if over_rating {
                format!(
                    "above the {} family's output rating of about {} (from memory)",
                    family.name,
                    amps(rating)
                )
            } else {
                format!(
                    "above the light load (about {}, from memory) its output-high drop figure holds for, so the high time runs longer than predicted",
                    amps(light)
                )
            }
        ),
    )));
}

/// Charge above which a one-shot's capacitor, dumped straight into the discharge pin at the end
/// of every pulse, stresses the discharge transistor: 10 µC (≈ 1.5 µF at 6 V; from memory,
/// the usual advice is a small series resistor above a few µF).
pub const DUMP_CHARGE_WARN: f64 = 10e-6;

/// A monostable's capacitor discharges through nothing but the discharge transistor.
fn check_discharge_dump(stage: &Stage, out: &mut Vec<Finding>) {
    if stage.form != Form::Monostable {
        return;
    }
    let Ok((vu, _)) = stage.conditions.thresholds() else {
        return;
    };
    let q = stage.c.si() * vu;
    if q > DUMP_CHARGE_WARN {
        out.push(f((
            Severity::Warning,
            "discharge-dump",
            format!(
                "at the end of each pulse the {} capacitor dumps {:.0} µC from {} straight into the discharge pin, limited only by the transistor; put about 100 Ω in series with the discharge pin (common practice) — it adds about 100 Ω·C to the recovery time, not to the pulse",
                stage.c.eng(3),
                q * 1e6,
                volts(vu)
            ),
        )));
    }
}

/// Pin bias currents against the currents that set the timing.
fn check_bias(stage: &Stage, family: &Family, out: &mut Vec<Finding>) {
    let c = &stage.conditions;
    let Ok((vu, vl)) = c.thresholds() else {
        return;
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
    let mut one = |what: &str, pin: &str, r: f64, i: f64, bias: f64, prov: &str, want: f64| {
        if !(i.is_finite() && i > 0.0 && bias > 0.0) {
            return;
        }
        let ratio = i / bias;
        let sev = if ratio < BIAS_RATIO_ERROR {
            Severity::Error
        } else if ratio < want {
            Severity::Warning
        } else {
            return;
        };
        let rname = crate::units::Ohms::from_si(r).map_or_else(|| format!("{r} Ω"), |x| x.eng(4));
        out.push(f((
            sev,
            "bias-current",
            format!(
                "{what} current at the {pin} is {} through {rname}, only {:.0}× the {} family's {pin}-pin current {} ({prov}); common practice wants at least {:.0}×, so the timing runs long by roughly {:.1} % — use a smaller resistance and a larger capacitor, or a CMOS timer",
                amps(i),
                ratio,
                family.name,
                amps(bias),
                want,
                100.0 / ratio
            ),
        )));
    };
    one(
        "charging",
        "threshold",
        charge_r,
        charge_i,
        family.threshold_current.value,
        family.threshold_current.provenance.label(),
        BIAS_RATIO_WARN,
    );
    if let Some((r, i)) = discharge {
        one(
            "discharging",
            "trigger",
            r,
            i,
            family.trigger_current.value,
            family.trigger_current.provenance.label(),
            TRIGGER_RATIO_WARN,
        );
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
        let sev = if share > 0.5 {
            Some(Severity::Error)
        } else if share > 0.01 {
            Some(Severity::Warning)
        } else {
            None
        };
        if let Some(sev) = sev {
            out.push(f((
                sev,
                "leakage",
                format!(
                    "the electrolytic may leak up to {} (0.01·C·V µA at its rating {}{}, from memory: the datasheet maximum) against a charging current of {} at the threshold ({:.0} % of it){}",
                    amps(leak),
                    cap.voltage_rating.map_or_else(|| format!("unknown, taken as the supply {}", volts(vcc)), |v| v.eng(3)),
                    if cap.technology == Technology::Electrolytic { ", at least 3 µA" } else { "" },
                    amps(charge_i),
                    share * 100.0,
                    if sev == Severity::Error {
                        ": the capacitor may never reach the threshold"
                    } else {
                        ": the timing runs long and varies from part to part"
                    }
                ),
            )));
        }
    }
}

/// Dielectric, rating, polarity, strays, stored energy.
fn check_capacitor(stage: &Stage, out: &mut Vec<Finding>) {
    let c = stage.c.si();
    let vcc = stage.conditions.vcc.si();
    if c < STRAY_LIMIT_F {
        out.push(f((
            Severity::Warning,
            "stray-capacitance",
            format!(
                "timing capacitance {} is under 100 pF: about 5 pF of pin and board strays (from memory) add {:.0} % or more",
                stage.c.eng(3),
                STRAY_TYPICAL_F / c * 100.0
            ),
        )));
    }
    let energy = 0.5 * c * vcc * vcc;
    if energy > 1.0 {
        out.push(f((
            Severity::Caution,
            "stored-energy",
            format!(
                "the timing capacitor stores {:.1} J at {}: it can burn, shock and weld tools; discharge it through a resistor before handling. {CODES_NOTE}",
                energy,
                volts(vcc)
            ),
        )));
    }
    let Some(cap) = stage.cap else {
        return;
    };
    match cap.technology {
        Technology::Electrolytic | Technology::Tantalum => out.push(f((
            Severity::Warning,
            "electrolytic-timing",
            "an electrolytic timing capacitor has a wide tolerance, leaks and drifts with age and temperature; prefer film or C0G ceramic where the value allows".to_string(),
        ))),
        Technology::Y5v => out.push(f((
            Severity::Warning,
            "dielectric",
            "Y5V/Z5U ceramic loses much of its capacitance with voltage and temperature; poor for timing — prefer film or C0G".to_string(),
        ))),
        Technology::X7r => out.push(f((
            Severity::Note,
            "dielectric",
            "X7R ceramic drifts with voltage and temperature by several percent; C0G or film is steadier for timing".to_string(),
        ))),
        _ => {}
    }
    if cap.technology.is_polarised() {
        out.push(f((
            Severity::Note,
            "polarity",
            "polarised capacitor: fit its + lead to the threshold/trigger node and its − lead to ground".to_string(),
        )));
        if c >= 100e-6 && vcc >= 35.0 {
            out.push(f((
                Severity::Caution,
                "big-electrolytic",
                format!(
                    "a {} electrolytic at {} holds a dangerous charge and can vent if reversed or over-volted. {CODES_NOTE}",
                    Farads::from_si(c).map_or_else(String::new, |x| x.eng(3)),
                    volts(vcc)
                ),
            )));
        }
    }
    match cap.voltage_rating {
        Some(rating) if rating.si() < vcc => out.push(f((
            Severity::Error,
            "voltage-rating",
            format!(
                "capacitor rated {} is below the supply {}",
                rating.eng(3),
                volts(vcc)
            ),
        ))),
        Some(rating) if rating.si() < RATING_MARGIN * vcc => out.push(f((
            Severity::Warning,
            "voltage-rating",
            format!(
                "capacitor rated {} has less than the 1.5× margin over the supply {} (common practice: at least {})",
                rating.eng(3),
                volts(vcc),
                volts(RATING_MARGIN * vcc)
            ),
        ))),
        None if cap.technology.is_polarised() => out.push(f((
            Severity::Note,
            "voltage-rating",
            format!(
                "voltage rating unknown: use at least {} (1.5× the supply, common practice)",
                volts(RATING_MARGIN * vcc)
            ),
        ))),
        _ => {}
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

/// The findings on a pair's trigger coupling for a pulse of `width` seconds.
fn coupling_findings(dip: &TriggerDip, k: &Coupling, width: f64, vcc: f64) -> Vec<Finding> {
    let mut out = Vec::new();
    match dip.below {
        None => out.push(f((
            // A Warning: the output-high drop is a typical light-load figure, so the margin
            // either way is within its spread.
            Severity::Warning,
            "trigger-coupling",
            format!(
                "with the family's output-high drop the pace output's falling edge pulls the width stage's trigger only down to {}, not below its threshold {}: the one-shot may never fire; use a CMOS timer, which swings closer to the supply",
                volts(dip.lowest),
                volts(dip.threshold)
            ),
        ))),
        Some(t) if t >= width => out.push(f((
            Severity::Error,
            "trigger-coupling",
            format!(
                "the coupling ({} nF, {} kΩ pull-up) holds the trigger low for {}, not shorter than the pulse {}: the pulse is stretched; use a smaller coupling capacitor",
                k.capacitor * 1e9,
                k.pull_up / 1e3,
                Seconds::from_si(t).map_or_else(|| format!("{t} s"), |x| x.eng(3)),
                Seconds::from_si(width).map_or_else(|| format!("{width} s"), |x| x.eng(3)),
            ),
        ))),
        Some(t) if t < MIN_TRIGGER_PULSE => out.push(f((
            Severity::Warning,
            "trigger-pulse-width",
            format!(
                "the coupling makes a trigger dip of only {}, under the {} the latch needs to set reliably (from memory); use a larger coupling capacitor",
                Seconds::from_si(t).map_or_else(|| format!("{t} s"), |x| x.eng(3)),
                Seconds::from_si(MIN_TRIGGER_PULSE).map_or_else(String::new, |x| x.eng(3)),
            ),
        ))),
        Some(_) => {}
    }
    if k.clamp {
        out.push(f((
            Severity::Note,
            "trigger-clamp",
            format!(
                "keep the clamp diode from the width stage's trigger to the supply: on each rising edge of the pace output the coupling capacitor would lift the trigger to about {}, above the supply {} (common practice)",
                volts(dip.unclamped_peak),
                volts(vcc)
            ),
        )));
    } else {
        out.push(f((
            Severity::Warning,
            "trigger-clamp",
            format!(
                "no clamp diode on the width stage's trigger: each rising edge of the pace output lifts it to about {}, above the supply {}; add a small-signal diode from the trigger to the supply",
                volts(dip.unclamped_peak),
                volts(vcc)
            ),
        )));
    }
    out
}

/// A trigger pulse given for a one-shot that is too short to set the latch.
fn check_trigger_minimum(trig: Seconds) -> Option<Finding> {
    (trig.si() < MIN_TRIGGER_PULSE).then(|| {
        f((
            Severity::Warning,
            "trigger-pulse-width",
            format!(
                "trigger pulse {} is shorter than the {} the latch needs to set reliably (from memory): the one-shot may miss it",
                trig.eng(3),
                Seconds::from_si(MIN_TRIGGER_PULSE).map_or_else(String::new, |x| x.eng(3)),
            ),
        ))
    })
}

fn prefixed(label: &str, mut v: Vec<Finding>) -> Vec<Finding> {
    for x in &mut v {
        x.message = format!("{label}: {}", x.message);
    }
    v
}

/// Fixed frequency with adjustable width: a periodic `pace` stage triggers the monostable
/// `width`. Both stages are checked; the width must stay below the period (Error otherwise).
pub fn check_pair(pace: &Stage, width: &Stage, family: &Family, limits: &Limits) -> Vec<Finding> {
    let mut out = prefixed(
        "pace stage",
        check_stage_with(
            pace,
            family,
            &Limits {
                trigger: None,
                ..*limits
            },
        ),
    );
    out.extend(prefixed(
        "width stage",
        check_stage_with(width, family, limits),
    ));
    if !pace.form.is_periodic() {
        out.push(f((
            Severity::Error,
            "pair-form",
            "the pace stage must run free (astable, steered or square), not fire once".to_string(),
        )));
    }
    if width.form != Form::Monostable {
        out.push(f((
            Severity::Error,
            "pair-form",
            "the width stage must be a monostable".to_string(),
        )));
    }
    if let (Ok(p), Ok(w)) = (pace.times(), width.times())
        && let (Some(period), Some(low)) = (p.period, p.low)
    {
        let wd = w.high.si();
        if wd >= period.si() {
            out.push(f((
                Severity::Error,
                "width-exceeds-period",
                format!(
                    "pulse width {} is not below the period {}: the one-shot would still be high when the next trigger comes, so the width is not controlled",
                    w.high.eng(4),
                    period.eng(4)
                ),
            )));
        } else if wd > 0.9 * period.si() {
            out.push(f((
                Severity::Warning,
                "width-near-period",
                format!(
                    "pulse width {} is over 90 % of the period {}: the timing capacitor has little time to empty before the next trigger (common practice: keep 10 % spare)",
                    w.high.eng(4),
                    period.eng(4)
                ),
            )));
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
            out.extend(coupling_findings(&dip, &PAIR_COUPLING, wd, vcc));
        }
        if low.si() >= wd && limits.trigger.is_none() {
            out.push(f((
                Severity::Warning,
                "trigger-width",
                format!(
                    "if the pace output drives the trigger directly, its low time {} is not shorter than the pulse {} and would stretch it; couple the trigger through a small capacitor (a differentiator)",
                    low.eng(4),
                    w.high.eng(4)
                ),
            )));
        }
    }
    out
}

/// A pair whose width can reach its period somewhere inside the tolerances: `max_duty` is the
/// exact worst-case maximum of width/period (from the corner search). A Warning: the nominal
/// design works, but some builds from these parts will not.
pub fn check_pair_worst_case(max_duty: f64) -> Option<Finding> {
    (max_duty >= 1.0).then(|| {
        f((
            Severity::Warning,
            "width-may-exceed-period",
            format!(
                "within the tolerances the pulse width can reach {:.0} % of the period: some builds from these parts will not control the width; use tighter parts or more margin",
                max_duty * 100.0
            ),
        ))
    })
}

/// Two stages in one dual package: each is checked on its own, with the shared supply.
pub fn check_dual(a: &Stage, b: &Stage, family: &Family, limits: &Limits) -> Vec<Finding> {
    let mut out = prefixed("timer A", check_stage_with(a, family, limits));
    out.extend(prefixed("timer B", check_stage_with(b, family, limits)));
    if a.conditions.vcc != b.conditions.vcc {
        out.push(f((
            Severity::Error,
            "dual-supply",
            "both halves of a dual package run from one supply pin".to_string(),
        )));
    }
    out
}

/// Whether any finding is an Error.
pub fn has_error(findings: &[Finding]) -> bool {
    findings.iter().any(|x| x.severity == Severity::Error)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::timing::{CapFacts, Conditions};
    use crate::units::{Ohms, Tolerance};

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
        let fs = coupling_findings(&dip, &k, 1e-3, 9.0);
        assert!(
            codes(&fs, Severity::Error).contains(&"trigger-coupling"),
            "{fs:?}"
        );
        assert!(codes(&fs, Severity::Warning).contains(&"trigger-clamp"));
    }
}
