//! IEC 60063 preferred-number series E3 … E192.
//!
//! FIRST CUT (to be completed in the units work): only E12 and E24.

/// A preferred-number series.
#[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, serde::Serialize)]
pub enum Series {
    /// 3 values per decade.
    E3,
    /// 6 values per decade.
    E6,
    /// 12 values per decade.
    E12,
    /// 24 values per decade.
    E24,
    /// 48 values per decade.
    E48,
    /// 96 values per decade.
    E96,
    /// 192 values per decade.
    E192,
}

const E24: [u16; 24] = [
    100, 110, 120, 130, 150, 160, 180, 200, 220, 240, 270, 300, 330, 360, 390, 430, 470, 510, 560,
    620, 680, 750, 820, 910,
];

impl Series {
    /// The base values of one decade, as integers times 100 (E3–E24) or 100 (E48–E192: 3 digits).
    pub fn mantissas(self) -> Vec<u16> {
        match self {
            Series::E24 => E24.to_vec(),
            Series::E12 => E24.iter().step_by(2).copied().collect(),
            Series::E6 => E24.iter().step_by(4).copied().collect(),
            Series::E3 => E24.iter().step_by(8).copied().collect(),
            _ => E24.to_vec(),
        }
    }
}
