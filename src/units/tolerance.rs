//! A part's tolerance: how far below and above its marked value the real part may lie.
//! Symmetric for most parts (±1 %), asymmetric for some electrolytics (−20/+80 %).
//! Owns the tolerance type, the IEC 60062 letter codes and its display; parsing of the typed
//! forms lives in `parse.rs`.

use super::Ratio;
use super::decimal::plain;
use std::fmt;

/// Tolerance as two non-negative magnitudes: the real value lies in
/// `[nominal·(1 − minus), nominal·(1 + plus)]`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, serde::Serialize)]
pub struct Tolerance {
    /// How far below nominal, as a ratio (0.05 for −5 %).
    pub minus: Ratio,
    /// How far above nominal, as a ratio (0.05 for +5 %).
    pub plus: Ratio,
}

impl Tolerance {
    /// A symmetric tolerance of `percent` either way.
    pub fn symmetric_percent(percent: f64) -> Option<Self> {
        let r = Ratio::from_percent(percent)?;
        (r.base() >= 0).then_some(Self { minus: r, plus: r })
    }

    /// An asymmetric tolerance, e.g. `asymmetric_percent(20.0, 80.0)` for −20/+80 %.
    pub fn asymmetric_percent(minus: f64, plus: f64) -> Option<Self> {
        let minus = Ratio::from_percent(minus)?;
        let plus = Ratio::from_percent(plus)?;
        (minus.base() >= 0 && plus.base() >= 0).then_some(Self { minus, plus })
    }

    /// The tolerance a letter code stands for (IEC 60062): B ±0.1 %, C ±0.25 %, D ±0.5 %,
    /// F ±1 %, G ±2 %, J ±5 %, K ±10 %, M ±20 %, and Z −20/+80 %. Upper case only.
    pub fn from_letter(letter: char) -> Option<Self> {
        let ppb: i64 = match letter {
            'B' => 1_000_000,
            'C' => 2_500_000,
            'D' => 5_000_000,
            'F' => 10_000_000,
            'G' => 20_000_000,
            'J' => 50_000_000,
            'K' => 100_000_000,
            'M' => 200_000_000,
            'Z' => {
                return Some(Self {
                    minus: Ratio::from_base(200_000_000),
                    plus: Ratio::from_base(800_000_000),
                });
            }
            _ => return None,
        };
        let r = Ratio::from_base(ppb);
        Some(Self { minus: r, plus: r })
    }

    /// The letter code of this tolerance, if it has one (see [`from_letter`](Self::from_letter)).
    pub fn letter(self) -> Option<char> {
        "BCDFGJKMZ"
            .chars()
            .find(|&l| Self::from_letter(l) == Some(self))
    }

    /// The lower and upper multipliers, e.g. (0.95, 1.05) for ±5 %.
    pub fn factors(self) -> (f64, f64) {
        (1.0 - self.minus.si(), 1.0 + self.plus.si())
    }

    /// The wider of the two sides, as a ratio.
    pub fn widest(self) -> Ratio {
        self.minus.max(self.plus)
    }

    /// Whether both sides are equal.
    pub fn is_symmetric(self) -> bool {
        self.minus == self.plus
    }
}

/// A ratio in parts per 10^9 as a plain percentage number: 10 000 000 → "1".
fn percent_text(r: Ratio) -> String {
    let b = r.base();
    let sign = if b < 0 { "-" } else { "" };
    format!("{sign}{}", plain(&b.unsigned_abs().to_string(), -7))
}

impl fmt::Display for Tolerance {
    /// `±1 %` when symmetric, `−20/+80 %` otherwise (with a true minus sign).
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.is_symmetric() {
            write!(f, "±{} %", percent_text(self.plus))
        } else {
            write!(
                f,
                "\u{2212}{}/+{} %",
                percent_text(self.minus),
                percent_text(self.plus)
            )
        }
    }
}
