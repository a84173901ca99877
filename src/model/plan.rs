//! The plan file: a named project of one or more stages, each a target the search knows, built
//! a number of times. TOML, our own schema:
//!
//! ```toml
//! name = "blinker kit"        # required
//! units = 25                  # how many complete boards
//! family = "cmos"             # bipolar (default) or cmos
//! supply = "9 V"              # default 9 V
//! tolerance = "2%"            # default for every stage (1 % if absent)
//! pieces = 3                  # most pieces per position (default 3, at most 4)
//! identical = true            # every unit the same design per stage (default: any mix)
//! variants = 2                # or: at most this many designs per stage across all units
//!
//! [[stage]]
//! name = "blink"
//! form = "astable"            # value | pulse | astable | steered | square | pair
//! frequency = "2 Hz"          # or period = "500 ms"
//! duty = "55%..70%"           # optional window (astable)
//!
//! [[stage]]
//! name = "debounce"
//! form = "pulse"
//! width = "20 ms"
//! tolerance = "10%"           # overrides the plan's
//!
//! [[stage]]
//! name = "bias"
//! form = "value"
//! value = "68k"               # resistor or capacitor, by the value's unit or prefix
//! ```
//!
//! `steered` takes `high` and `low`; `square` takes `frequency` or `period`; `pair` takes
//! `frequency`/`period` and `width`. Every value is read with the units parser, so `4k7`,
//! `100n`, `1.5 kHz` all work. Unknown keys are errors, so a typo never silently drops a target.

use crate::model::Kind;
use crate::units::{self, Hertz, Ratio, Seconds, Volts};
use serde::Deserialize;

/// A problem with a plan file, naming the stage and key.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error("{0}")]
pub struct PlanFileError(pub String);

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawPlan {
    name: String,
    units: Option<u32>,
    family: Option<String>,
    supply: Option<String>,
    tolerance: Option<String>,
    pieces: Option<usize>,
    #[serde(default)]
    guarantee: bool,
    #[serde(default)]
    identical: bool,
    variants: Option<u32>,
    #[serde(default, rename = "stage")]
    stages: Vec<RawStage>,
}

#[derive(Debug, Deserialize)]
#[serde(deny_unknown_fields)]
struct RawStage {
    name: Option<String>,
    form: String,
    value: Option<String>,
    width: Option<String>,
    frequency: Option<String>,
    period: Option<String>,
    duty: Option<String>,
    high: Option<String>,
    low: Option<String>,
    tolerance: Option<String>,
    pieces: Option<usize>,
    guarantee: Option<bool>,
}

/// What one stage must achieve.
#[derive(Debug, Clone, PartialEq)]
pub enum TargetSpec {
    /// A single value to make from stock.
    Value {
        /// Resistor or capacitor.
        kind: Kind,
        /// The value in ohms or farads (SI), exact from the parser.
        resistance: Option<units::Ohms>,
        /// Capacitance, when a capacitor.
        capacitance: Option<units::Farads>,
    },
    /// A one-shot pulse width.
    Pulse {
        /// Width.
        width: Seconds,
    },
    /// Classic astable.
    Astable {
        /// Period.
        period: Seconds,
        /// Duty window, if any.
        duty: Option<super::DutyWindow>,
    },
    /// Diode-steered astable.
    Steered {
        /// High time.
        high: Seconds,
        /// Low time.
        low: Seconds,
    },
    /// Output-driven square wave.
    Square {
        /// Period.
        period: Seconds,
    },
    /// Astable pacing a monostable.
    Pair {
        /// Period of the astable.
        period: Seconds,
        /// Width of the monostable.
        width: Seconds,
    },
}

/// One stage of a plan.
#[derive(Debug, Clone, PartialEq)]
pub struct StageSpec {
    /// Name for reports.
    pub name: String,
    /// The target.
    pub target: TargetSpec,
    /// Allowed deviation.
    pub tolerance: Ratio,
    /// Most pieces per position.
    pub pieces: usize,
    /// Whether the worst case must lie inside the window.
    pub guarantee: bool,
}

/// A validated plan.
#[derive(Debug, Clone, PartialEq)]
pub struct PlanSpec {
    /// The plan's name (also the name its holds go under).
    pub name: String,
    /// Complete units wanted.
    pub units: u32,
    /// Timer family name.
    pub family: String,
    /// Supply.
    pub supply: Volts,
    /// Stages.
    pub stages: Vec<StageSpec>,
    /// At most this many designs per stage across all units (1: identical kits); `None` for
    /// any mix of designs.
    pub variants: Option<u32>,
}

fn need<'a>(stage: &str, key: &str, v: &'a Option<String>) -> Result<&'a str, PlanFileError> {
    v.as_deref().ok_or_else(|| {
        PlanFileError(format!(
            "stage {stage:?}: `{key}` is required for this form"
        ))
    })
}

fn ctx<T, E: std::fmt::Display>(
    stage: &str,
    key: &str,
    r: Result<T, E>,
) -> Result<T, PlanFileError> {
    r.map_err(|e| PlanFileError(format!("stage {stage:?}, `{key}`: {e}")))
}

fn period_of(stage: &str, s: &RawStage) -> Result<Seconds, PlanFileError> {
    match (&s.frequency, &s.period) {
        (Some(_), Some(_)) => Err(PlanFileError(format!(
            "stage {stage:?}: give `frequency` or `period`, not both"
        ))),
        (Some(f), None) => {
            let f: Hertz = ctx(stage, "frequency", units::parse_frequency(f))?;
            if !f.is_positive() {
                return Err(PlanFileError(format!(
                    "stage {stage:?}: `frequency` must be above zero"
                )));
            }
            Seconds::from_si(1.0 / f.si())
                .ok_or_else(|| PlanFileError(format!("stage {stage:?}: frequency out of range")))
        }
        (None, Some(p)) => ctx(stage, "period", units::parse_time(p)),
        (None, None) => Err(PlanFileError(format!(
            "stage {stage:?}: `frequency` or `period` is required for this form"
        ))),
    }
}

/// Read a duty window in the one grammar every command shares (`model::parse_duty`):
/// `55%..70%`, `0.55..0.7`, `60%±2`, or a single value meaning ±1 point.
pub fn parse_duty(text: &str) -> Result<super::DutyWindow, PlanFileError> {
    crate::model::parse_duty(text).map_err(|e| PlanFileError(format!("duty: {e}")))
}

/// Parse and validate a plan file's text.
pub fn parse_plan(text: &str) -> Result<PlanSpec, PlanFileError> {
    let raw: RawPlan =
        toml::from_str(text).map_err(|e| PlanFileError(format!("plan file: {e}")))?;
    crate::model::text::check_field(
        "the plan's `name`",
        raw.name.trim(),
        crate::model::text::MAX_NAME,
    )
    .map_err(|e| PlanFileError(format!("plan file: {e}")))?;
    if raw.name.trim().is_empty() {
        return Err(PlanFileError("plan file: `name` must not be empty".into()));
    }
    if raw.stages.is_empty() {
        return Err(PlanFileError("plan file: no [[stage]] given".into()));
    }
    let units = raw.units.unwrap_or(1);
    if units == 0 || units > 10_000 {
        return Err(PlanFileError(format!(
            "plan file: `units` must be 1 … 10000, not {units}"
        )));
    }
    let family = raw.family.unwrap_or_else(|| "bipolar".into());
    let supply = match &raw.supply {
        Some(s) => units::parse_voltage(s)
            .map_err(|e| PlanFileError(format!("plan file, `supply`: {e}")))?,
        None => Volts::from_base(9_000_000),
    };
    let default_tol = match &raw.tolerance {
        Some(t) => units::parse_ratio(t)
            .map_err(|e| PlanFileError(format!("plan file, `tolerance`: {e}")))?,
        None => Ratio::from_base(10_000_000),
    };
    let default_pieces = raw.pieces.unwrap_or(3);
    let mut stages = Vec::new();
    for (i, s) in raw.stages.iter().enumerate() {
        let name = match s.name.as_deref().map(str::trim) {
            Some("") | None => format!("stage {}", i + 1),
            Some(given) => {
                crate::model::text::check_field(
                    "a stage name",
                    given,
                    crate::model::text::MAX_NAME,
                )
                .map_err(|e| PlanFileError(format!("plan file: stage {}: {e}", i + 1)))?;
                given.to_string()
            }
        };
        let n = name.as_str();
        let target = match s.form.trim().to_ascii_lowercase().as_str() {
            "value" => {
                let v = need(n, "value", &s.value)?;
                match units::parse_resistance(v) {
                    Ok(r) => TargetSpec::Value {
                        kind: Kind::Resistor,
                        resistance: Some(r),
                        capacitance: None,
                    },
                    Err(_) => {
                        let c = ctx(n, "value", units::parse_capacitance(v))?;
                        TargetSpec::Value {
                            kind: Kind::Capacitor,
                            resistance: None,
                            capacitance: Some(c),
                        }
                    }
                }
            }
            "pulse" | "monostable" => TargetSpec::Pulse {
                width: ctx(n, "width", units::parse_time(need(n, "width", &s.width)?))?,
            },
            "astable" => TargetSpec::Astable {
                period: period_of(n, s)?,
                duty: s
                    .duty
                    .as_deref()
                    .map(parse_duty)
                    .transpose()
                    .map_err(|e| PlanFileError(format!("stage {n:?}: {e}")))?,
            },
            "steered" => TargetSpec::Steered {
                high: ctx(n, "high", units::parse_time(need(n, "high", &s.high)?))?,
                low: ctx(n, "low", units::parse_time(need(n, "low", &s.low)?))?,
            },
            "square" => TargetSpec::Square {
                period: period_of(n, s)?,
            },
            "pair" => TargetSpec::Pair {
                period: period_of(n, s)?,
                width: ctx(n, "width", units::parse_time(need(n, "width", &s.width)?))?,
            },
            other => {
                return Err(PlanFileError(format!(
                    "stage {n:?}: unknown form {other:?} (value, pulse, astable, steered, square or pair)"
                )));
            }
        };
        let tolerance = match &s.tolerance {
            Some(t) => ctx(n, "tolerance", units::parse_ratio(t))?,
            None => default_tol,
        };
        if tolerance.base() <= 0 || tolerance.base() >= Ratio::PER_SI / 2 {
            return Err(PlanFileError(format!(
                "stage {n:?}: tolerance must be above 0 % and below 50 %"
            )));
        }
        let pieces = s.pieces.unwrap_or(default_pieces);
        if !(1..=4).contains(&pieces) {
            return Err(PlanFileError(format!(
                "stage {n:?}: pieces must be 1 … 4, not {pieces}"
            )));
        }
        stages.push(StageSpec {
            name,
            target,
            tolerance,
            pieces,
            guarantee: s.guarantee.unwrap_or(raw.guarantee),
        });
    }
    let variants = match (raw.identical, raw.variants) {
        (true, Some(v)) if v != 1 => {
            return Err(PlanFileError(format!(
                "plan file: `identical = true` means one design per stage; `variants = {v}` contradicts it (keep one of the two)"
            )));
        }
        (_, Some(v)) if v == 0 || v > 100 => {
            return Err(PlanFileError(format!(
                "plan file: `variants` must be 1 … 100, not {v}"
            )));
        }
        (true, _) => Some(1),
        (false, v) => v,
    };
    Ok(PlanSpec {
        name: raw.name.trim().to_string(),
        units,
        family,
        supply,
        stages,
        variants,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_duty_reads_as_it_does_in_find() {
        let pct = |r: Ratio| r.si() * 100.0;
        let ends = |text: &str| {
            let w = parse_duty(text).expect(text);
            (w.low, w.high)
        };
        let (lo, hi) = ends("65%");
        assert!((pct(lo) - 64.0).abs() < 1e-9 && (pct(hi) - 66.0).abs() < 1e-9);
        let (lo, hi) = ends("65%±2");
        assert!((pct(lo) - 63.0).abs() < 1e-9 && (pct(hi) - 67.0).abs() < 1e-9);
        let (lo, hi) = ends("0.55..0.7");
        assert!((pct(lo) - 55.0).abs() < 1e-9 && (pct(hi) - 70.0).abs() < 1e-9);
        assert!(parse_duty("70%..55%").is_err());
    }

    const KIT: &str = r#"
name = "blinker kit"
units = 25
family = "cmos"
supply = "5 V"
tolerance = "2%"

[[stage]]
name = "blink"
form = "astable"
frequency = "2 Hz"
duty = "55%..70%"

[[stage]]
name = "debounce"
form = "pulse"
width = "20ms"
tolerance = "10%"

[[stage]]
form = "value"
value = "4k7"
"#;

    #[test]
    fn a_plan_reads_with_defaults_and_overrides() {
        let p = parse_plan(KIT).expect("plan");
        assert_eq!(p.units, 25);
        assert_eq!(p.supply, Volts::from_base(5_000_000));
        assert_eq!(p.stages.len(), 3);
        assert_eq!(p.stages[0].tolerance, Ratio::from_base(20_000_000));
        assert_eq!(p.stages[1].tolerance, Ratio::from_base(100_000_000));
        assert_eq!(p.stages[2].name, "stage 3");
        assert_eq!(p.variants, None);
        let kit = parse_plan(&format!("identical = true\n{KIT}")).expect("identical plan");
        assert_eq!(kit.variants, Some(1));
        assert!(
            matches!(p.stages[0].target, TargetSpec::Astable { period, duty: Some(_) } if period == Seconds::from_base(500_000_000_000))
        );
        assert!(matches!(
            p.stages[2].target,
            TargetSpec::Value {
                kind: Kind::Resistor,
                ..
            }
        ));
    }

    #[test]
    fn mistakes_are_named() {
        for (text, needle) in [
            (
                "name = \"x\"\n[[stage]]\nform = \"pulse\"\n",
                "`width` is required",
            ),
            (
                "name = \"x\"\n[[stage]]\nform = \"pulse\"\nwidht = \"1ms\"\n",
                "unknown field",
            ),
            (
                "name = \"x\"\n[[stage]]\nform = \"blinky\"\n",
                "unknown form",
            ),
            (
                "name = \"x\"\nunits = 0\n[[stage]]\nform = \"pulse\"\nwidth = \"1ms\"\n",
                "`units` must be",
            ),
            ("name = \"x\"\n", "no [[stage]]"),
            (
                "name = \"x\"\nidentical = true\nvariants = 3\n[[stage]]\nform = \"pulse\"\nwidth = \"1ms\"\n",
                "contradicts",
            ),
            (
                "name = \"x\"\nvariants = 0\n[[stage]]\nform = \"pulse\"\nwidth = \"1ms\"\n",
                "`variants` must be",
            ),
            (
                "name = \"x\"\n[[stage]]\nform = \"astable\"\nperiod = \"1ms\"\nduty = \"70%..55%\"\n",
                "the low end comes first",
            ),
        ] {
            let e = parse_plan(text).expect_err(text);
            assert!(e.0.contains(needle), "{text:?}: {e}");
        }
    }
}
