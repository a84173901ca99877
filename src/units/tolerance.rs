//! A part's tolerance: how far below and above its marked value the real part may lie.
//! Symmetric for most parts (±1 %), asymmetric for some electrolytics (−20/+80 %).

use super::Ratio;

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
