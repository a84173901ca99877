//! Exact physical quantities: one newtype per dimension, each an integer count of a small base
//! unit, so a stocked value is stored and compared exactly and never as a display string.
//!
//! | type      | base unit      | range of i64 in SI          |
//! |-----------|----------------|-----------------------------|
//! | `Ohms`    | milliohm       | ±9.2 PΩ                     |
//! | `Farads`  | femtofarad     | ±9.2 kF                     |
//! | `Seconds` | picosecond     | ±106 days                   |
//! | `Hertz`   | microhertz     | ±9.2 THz                    |
//! | `Volts`   | microvolt      | ±9.2 MV                     |
//! | `Amps`    | picoampere     | ±9.2 MA                     |
//! | `Watts`   | microwatt      | ±9.2 MW                     |
//! | `Ratio`   | part per 10^9  | ±9.2·10^9                   |
//!
//! Computed values (a parallel network, a period from the physics) are rounded to the base unit
//! by [`from_si`](Ohms::from_si); the relative rounding error is far below any part tolerance.
//! This module owns no parsing and no I/O; see `parse.rs` and `display.rs`.

/// What every quantity newtype shares: an exact integer count of a base unit that is a power of
/// ten of the SI unit. Lets preferred-number look-ups and display work on any quantity.
pub trait BaseUnits: Copy + Ord {
    /// The base unit is `10^-BASE_DIGITS` of the SI unit (3 for milliohms).
    const BASE_DIGITS: u32;
    /// The SI unit symbol ("Ω", "F"; empty for a ratio).
    const SYMBOL: &'static str;
    /// From a count of base units.
    fn from_base(base: i64) -> Self;
    /// The count of base units.
    fn base(self) -> i64;
}

macro_rules! quantity {
    ($(#[$doc:meta])* $name:ident, $per_si:expr, $symbol:expr) => {
        $(#[$doc])*
        #[derive(Debug, Clone, Copy, PartialEq, Eq, PartialOrd, Ord, Hash, Default)]
        pub struct $name(i64);

        impl $name {
            /// How many base units make one SI unit.
            pub const PER_SI: i64 = $per_si;
            /// The unit symbol used in display.
            pub const SYMBOL: &'static str = $symbol;
            /// Zero.
            pub const ZERO: Self = Self(0);
            /// How many decimal places the base unit adds: `PER_SI` is `10^BASE_DIGITS`.
            pub const BASE_DIGITS: u32 = Self::PER_SI.ilog10();
            /// The largest value that fits.
            pub const MAX: Self = Self(i64::MAX);

            /// From a count of base units.
            pub const fn from_base(base: i64) -> Self {
                Self(base)
            }

            /// The count of base units.
            pub const fn base(self) -> i64 {
                self.0
            }

            /// From a value in SI units, rounded to the nearest base unit. `None` when the value
            /// is not finite or does not fit.
            pub fn from_si(si: f64) -> Option<Self> {
                let scaled = (si * Self::PER_SI as f64).round();
                // i64::MAX as f64 rounds up to 2^63, which itself does not fit: use strict <.
                if scaled.is_finite() && scaled < i64::MAX as f64 && scaled > i64::MIN as f64 {
                    Some(Self(scaled as i64))
                } else {
                    None
                }
            }

            /// The value in SI units.
            pub fn si(self) -> f64 {
                self.0 as f64 / Self::PER_SI as f64
            }

            /// Sum that reports overflow instead of wrapping.
            pub fn checked_add(self, other: Self) -> Option<Self> {
                self.0.checked_add(other.0).map(Self)
            }

            /// Whether the value is above zero.
            pub const fn is_positive(self) -> bool {
                self.0 > 0
            }
        }

        impl BaseUnits for $name {
            const BASE_DIGITS: u32 = Self::BASE_DIGITS;
            const SYMBOL: &'static str = Self::SYMBOL;
            fn from_base(base: i64) -> Self {
                Self(base)
            }
            fn base(self) -> i64 {
                self.0
            }
        }

        impl serde::Serialize for $name {
            /// JSON carries the SI value as a number; the exact integer is kept in the store.
            fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
                s.serialize_f64(self.si())
            }
        }
    };
}

quantity!(
    /// Resistance, in milliohms.
    Ohms, 1_000, "Ω"
);
quantity!(
    /// Capacitance, in femtofarads.
    Farads, 1_000_000_000_000_000, "F"
);
quantity!(
    /// Time, in picoseconds.
    Seconds, 1_000_000_000_000, "s"
);
quantity!(
    /// Frequency, in microhertz.
    Hertz, 1_000_000, "Hz"
);
quantity!(
    /// Voltage, in microvolts.
    Volts, 1_000_000, "V"
);
quantity!(
    /// Current, in picoamperes.
    Amps, 1_000_000_000_000, "A"
);
quantity!(
    /// Power, in microwatts.
    Watts, 1_000_000, "W"
);
quantity!(
    /// A dimensionless ratio (duty cycle, tolerance), in parts per 10^9: 1.0 is 1 000 000 000.
    Ratio, 1_000_000_000, ""
);

impl Ratio {
    /// From a percentage, e.g. `from_percent(1.0)` is 0.01.
    pub fn from_percent(percent: f64) -> Option<Self> {
        Self::from_si(percent / 100.0)
    }

    /// As a percentage.
    pub fn percent(self) -> f64 {
        self.si() * 100.0
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn base_units_are_exact() {
        assert_eq!(Ohms::from_si(4700.0), Some(Ohms::from_base(4_700_000)));
        assert_eq!(
            Farads::from_si(100e-9),
            Some(Farads::from_base(100_000_000))
        );
        assert_eq!(Ratio::from_percent(1.0), Some(Ratio::from_base(10_000_000)));
    }

    #[test]
    fn base_digits_match_per_si() {
        assert_eq!(Ohms::BASE_DIGITS, 3);
        assert_eq!(Farads::BASE_DIGITS, 15);
        assert_eq!(Seconds::BASE_DIGITS, 12);
        assert_eq!(Ratio::BASE_DIGITS, 9);
        assert_eq!(10i64.pow(Hertz::BASE_DIGITS), Hertz::PER_SI);
    }

    #[test]
    fn out_of_range_is_none() {
        assert_eq!(Ohms::from_si(f64::NAN), None);
        assert_eq!(Ohms::from_si(f64::INFINITY), None);
        assert_eq!(Ohms::from_si(1e300), None);
    }
}
