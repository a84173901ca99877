//! The one grammar for a duty-cycle target, used by every command and file that asks for one.
//!
//! - a range: `60..75%`, `60%..75%`, `0.6..0.75` — the high time's share of the period must lie
//!   inside it (a `%` on either end applies to both);
//! - a point with its window: `60%±2`, `60±2%`, `60% +-2%` — the window is in percentage points;
//! - a point alone: `60%` — the window is [`DEFAULT_WINDOW_POINTS`] points either side
//!   (common practice for a duty target; say `60%±0.5` for a tighter one).
//!
//! Every form resolves to the same thing, a window strictly inside (0 %, 100 %), so a single
//! value means the same in `find`, `plan` files and everywhere else. Pure; no I/O.

use crate::units::{self, Ratio};

/// The window of a duty target given as a single value, in percentage points either side.
pub const DEFAULT_WINDOW_POINTS: u32 = 1;

/// A duty-cycle target, resolved to its window.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
pub struct DutyWindow {
    /// Lowest acceptable share of the period spent high.
    pub low: Ratio,
    /// Highest acceptable share.
    pub high: Ratio,
    /// The value aimed at, when one was named (the middle of a range otherwise).
    pub aim: Ratio,
}

impl DutyWindow {
    /// Whether `d` (a share of the period) lies in the window.
    pub fn contains(&self, d: Ratio) -> bool {
        self.low <= d && d <= self.high
    }

    /// The window as SI fractions (0 … 1), low first.
    pub fn si(&self) -> (f64, f64) {
        (self.low.si(), self.high.si())
    }
}

impl std::fmt::Display for DutyWindow {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "{}..{} %",
            self.low.percent_text(6),
            self.high.percent_text(6)
        )
    }
}

/// A duty target that could not be read.
#[derive(Debug, Clone, PartialEq, Eq, thiserror::Error)]
#[error(
    "cannot read {text:?} as a duty cycle: {reason} (expected a range such as 60..75% or a \
     point with its window such as 60%±2)"
)]
pub struct DutyError {
    /// The text as given.
    pub text: String,
    /// What went wrong.
    pub reason: String,
}

const POINT: i64 = 10_000_000; // one percentage point in ppb

/// Read a duty target in the one grammar (see the module header).
pub fn parse_duty(text: &str) -> Result<DutyWindow, DutyError> {
    let fail = |reason: String| DutyError {
        text: text.to_string(),
        reason,
    };
    let ratio = |s: &str| units::parse_ratio(s).map_err(|e| fail(e.reason));
    let t = text.trim();
    let (low, high, aim) = if let Some((a, b)) = t.split_once("..") {
        let (a, b) = (a.trim(), b.trim());
        let percent = a.ends_with('%') || b.ends_with('%');
        let with = |s: &str| {
            if percent && !s.ends_with('%') {
                format!("{s}%")
            } else {
                s.to_string()
            }
        };
        let (lo, hi) = (ratio(&with(a))?, ratio(&with(b))?);
        if lo > hi {
            return Err(fail("the low end comes first".into()));
        }
        (lo, hi, Ratio::from_base((lo.base() + hi.base()) / 2))
    } else {
        let split = ["±", "+/-", "+-"].iter().find_map(|sep| t.split_once(sep));
        let (point, window) = match split {
            Some((p, w)) => (p.trim(), Some(w.trim())),
            None => (t, None),
        };
        let percent = point.ends_with('%') || window.is_some_and(|w| w.ends_with('%'));
        let point_text = if percent && !point.ends_with('%') {
            format!("{point}%")
        } else {
            point.to_string()
        };
        let aim = ratio(&point_text)?;
        let half = match window {
            None => i64::from(DEFAULT_WINDOW_POINTS) * POINT,
            Some(w) => {
                let w = w.trim_end_matches('%').trim();
                if w.is_empty() {
                    return Err(fail("the window after ± is missing".into()));
                }
                ratio(&format!("{w}%"))?.base()
            }
        };
        (
            Ratio::from_base(aim.base() - half),
            Ratio::from_base(aim.base() + half),
            aim,
        )
    };
    if low.base() <= 0 || high.base() >= Ratio::PER_SI {
        return Err(fail(
            "the window must lie strictly between 0 % and 100 %".into(),
        ));
    }
    Ok(DutyWindow { low, high, aim })
}

impl std::str::FromStr for DutyWindow {
    type Err = DutyError;
    fn from_str(s: &str) -> Result<Self, Self::Err> {
        parse_duty(s)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn pct(w: &DutyWindow) -> (String, String, String) {
        (
            w.low.percent_text(6),
            w.high.percent_text(6),
            w.aim.percent_text(6),
        )
    }

    #[test]
    fn every_form_gives_a_window() {
        let s = |a: &str, b: &str, c: &str| (a.to_string(), b.to_string(), c.to_string());
        let cases = [
            ("60..75%", s("60", "75", "67.5")),
            ("60%..75%", s("60", "75", "67.5")),
            ("60%..75", s("60", "75", "67.5")),
            ("0.6..0.75", s("60", "75", "67.5")),
            ("60%", s("59", "61", "60")),
            ("0.6", s("59", "61", "60")),
            ("60%±2", s("58", "62", "60")),
            ("60±2%", s("58", "62", "60")),
            ("60% +- 0.5%", s("59.5", "60.5", "60")),
            ("30%+/-5", s("25", "35", "30")),
        ];
        for (text, want) in cases {
            let w = parse_duty(text).expect(text);
            assert_eq!(pct(&w), want, "{text}");
        }
    }

    #[test]
    fn bad_windows_are_refused() {
        for (text, says) in [
            ("75..60%", "low end"),
            ("0..50%", "strictly between"),
            ("99.5%", "strictly between"),
            ("60%±", "missing"),
            ("lots", "cannot read"),
        ] {
            let e = parse_duty(text).expect_err(text);
            assert!(e.to_string().contains(says), "{text}: {e}");
        }
    }

    #[test]
    fn contains_is_inclusive() {
        let w = parse_duty("60..75%").expect("range");
        assert!(w.contains(Ratio::from_base(600_000_000)));
        assert!(w.contains(Ratio::from_base(750_000_000)));
        assert!(!w.contains(Ratio::from_base(750_000_001)));
    }
}
