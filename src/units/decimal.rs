//! Exact decimal arithmetic for parsing and display: a typed number is kept as digits and a power
//! of ten until it is scaled once into a quantity's integer base unit, and a stored integer is
//! shown by moving the decimal point, so `4.7k` is exactly 4 700 000 mΩ and shows as `4.7 kΩ`.
//! No floating point here; no knowledge of units or prefixes beyond the power of ten.

/// A non-negative decimal number `mantissa × 10^exp`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) struct Decimal {
    /// The significant digits as an integer.
    pub mantissa: u128,
    /// The power of ten.
    pub exp: i32,
}

/// Why a decimal does not fit a base-unit integer.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum ScaleError {
    /// Larger than `i64::MAX` base units.
    TooLarge,
    /// Not zero, but rounds to zero base units.
    TooFine,
}

/// Most significant digits a typed number may carry (u128 holds 38).
pub(crate) const MAX_DIGITS: usize = 36;

impl Decimal {
    /// `self × 10^shift`, rounded half up to an integer that fits `i64`.
    pub fn to_integer(self, shift: i32) -> Result<i64, ScaleError> {
        if self.mantissa == 0 {
            return Ok(0);
        }
        let e = self.exp.saturating_add(shift);
        let value = if e >= 0 {
            let p = u32::try_from(e)
                .ok()
                .and_then(|e| 10u128.checked_pow(e))
                .ok_or(ScaleError::TooLarge)?;
            self.mantissa.checked_mul(p).ok_or(ScaleError::TooLarge)?
        } else {
            let k = e.unsigned_abs();
            match 10u128.checked_pow(k) {
                // More than 38 places below the base unit: rounds to zero.
                None => return Err(ScaleError::TooFine),
                Some(p) => {
                    let (q, r) = (self.mantissa / p, self.mantissa % p);
                    // r < p ≤ 10^38, so 2·r < 2^128.
                    if r * 2 >= p { q + 1 } else { q }
                }
            }
        };
        if value == 0 {
            return Err(ScaleError::TooFine);
        }
        i64::try_from(value).map_err(|_| ScaleError::TooLarge)
    }
}

/// Round `magnitude` to `sig` significant digits (half up); `sig` of 0 counts as 1.
pub(crate) fn round_sig(magnitude: u128, sig: usize) -> u128 {
    let sig = sig.max(1);
    let n = digit_count(magnitude);
    if n <= sig {
        return magnitude;
    }
    let drop = u32::try_from(n - sig).unwrap_or(u32::MAX);
    match 10u128.checked_pow(drop) {
        Some(p) => {
            let q = magnitude / p;
            let r = magnitude % p;
            let q = if r * 2 >= p { q + 1 } else { q };
            q.saturating_mul(p)
        }
        None => 0,
    }
}

/// Number of decimal digits of `v` (1 for zero).
pub(crate) fn digit_count(v: u128) -> usize {
    if v == 0 { 1 } else { v.ilog10() as usize + 1 }
}

/// `digits × 10^exp` written as a plain decimal with no exponent and no trailing zeros after the
/// point: ("47", -1) → "4.7", ("5", 2) → "500", ("5", -3) → "0.005".
pub(crate) fn plain(digits: &str, exp: i32) -> String {
    let digits = digits.trim_start_matches('0');
    if digits.is_empty() {
        return "0".to_string();
    }
    if exp >= 0 {
        let zeros = usize::try_from(exp).unwrap_or(0);
        return format!("{digits}{}", "0".repeat(zeros));
    }
    let places = usize::try_from(exp.unsigned_abs()).unwrap_or(usize::MAX);
    let (int, frac) = if places >= digits.len() {
        (
            "0".to_string(),
            format!("{}{digits}", "0".repeat(places - digits.len())),
        )
    } else {
        let (a, b) = digits.split_at(digits.len() - places);
        (a.to_string(), b.to_string())
    };
    let frac = frac.trim_end_matches('0');
    if frac.is_empty() {
        int
    } else {
        format!("{int}.{frac}")
    }
}

/// SI prefixes used in display, by power of ten.
const PREFIXES: [(i32, &str); 10] = [
    (-15, "f"),
    (-12, "p"),
    (-9, "n"),
    (-6, "µ"),
    (-3, "m"),
    (0, ""),
    (3, "k"),
    (6, "M"),
    (9, "G"),
    (12, "T"),
];

/// Engineering form of `±digits × 10^exp`: the prefix puts the leading digit in [1, 1000)
/// (clamped to femto … tera), e.g. ("4700", 0, "Ω") → "4.7 kΩ".
pub(crate) fn engineering(negative: bool, digits: &str, exp: i32, symbol: &str) -> String {
    let digits = digits.trim_start_matches('0');
    if digits.is_empty() {
        return format!("0 {symbol}").trim_end().to_string();
    }
    let n = i32::try_from(digits.len()).unwrap_or(i32::MAX);
    let magnitude = n - 1 + exp;
    let exp3 = (magnitude.div_euclid(3) * 3).clamp(-15, 12);
    let prefix = PREFIXES
        .iter()
        .find(|(e, _)| *e == exp3)
        .map_or("", |(_, p)| *p);
    let sign = if negative { "-" } else { "" };
    let m = plain(digits, exp - exp3);
    format!("{sign}{m} {prefix}{symbol}").trim_end().to_string()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn scaling_is_exact_and_rounds_half_up() {
        let d = |m, e| Decimal {
            mantissa: m,
            exp: e,
        };
        assert_eq!(d(47, -1).to_integer(6), Ok(4_700_000));
        assert_eq!(d(15, -1).to_integer(0), Ok(2));
        assert_eq!(d(14, -1).to_integer(0), Ok(1));
        assert_eq!(d(4, -1).to_integer(0), Err(ScaleError::TooFine));
        assert_eq!(d(1, -400).to_integer(3), Err(ScaleError::TooFine));
        assert_eq!(d(1, 400).to_integer(3), Err(ScaleError::TooLarge));
        assert_eq!(d(1, 19).to_integer(0), Err(ScaleError::TooLarge));
        assert_eq!(d(0, 400).to_integer(3), Ok(0));
    }

    #[test]
    fn plain_moves_the_point() {
        assert_eq!(plain("47", -1), "4.7");
        assert_eq!(plain("5", 2), "500");
        assert_eq!(plain("5", -3), "0.005");
        assert_eq!(plain("4700", -3), "4.7");
        assert_eq!(plain("000", 0), "0");
    }

    #[test]
    fn engineering_picks_the_prefix() {
        assert_eq!(engineering(false, "4700", 0, "Ω"), "4.7 kΩ");
        assert_eq!(engineering(false, "680", -15, "F"), "680 fF");
        assert_eq!(engineering(false, "1", -16, "F"), "0.1 fF");
        assert_eq!(engineering(true, "25", -4, "V"), "-2.5 mV");
        assert_eq!(engineering(false, "0", 0, "s"), "0 s");
    }

    #[test]
    fn round_sig_carries() {
        assert_eq!(round_sig(3333, 3), 3330);
        assert_eq!(round_sig(9996, 3), 10000);
        assert_eq!(round_sig(12, 5), 12);
        assert_eq!(round_sig(15, 0), 20);
    }
}
