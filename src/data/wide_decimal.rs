//! Decimals too wide for 128 bits: the sums and sums of squares a database
//! engine writes as DECIMAL(38, s), and the exact ratios formed from them,
//! each rounded once to the nearest f64.

use num_bigint::{BigInt, BigUint, Sign};

/// Most significant digits a wide decimal may carry: an engine's DECIMAL
/// holds 38, and a longer text is more likely a typing error than a sum.
pub const MAX_WIDE_DIGITS: usize = 38;

/// A decimal `digits / 10^scale`, held exactly however many digits it has.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct WideDecimal {
    pub digits: BigInt,
    pub scale: u32,
}

/// Why a text is not a wide decimal.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum WideError {
    /// Not digits with an optional sign and decimal point.
    NotDecimal,
    /// More than [`MAX_WIDE_DIGITS`] significant digits.
    TooLong(usize),
}

impl WideDecimal {
    /// Reads an optional sign, digits and at most one decimal point (`.`,
    /// or `,` when `comma` is set); exponents are refused, since they mean
    /// the value was rounded to a float on the way.
    pub fn parse(text: &str, comma: bool) -> Result<WideDecimal, WideError> {
        let t = text.trim();
        let (negative, body) = match t.as_bytes().first() {
            Some(b'-') => (true, &t[1..]),
            Some(b'+') => (false, &t[1..]),
            _ => (false, t),
        };
        let point = |c: char| c == '.' || (comma && c == ',');
        let (int_part, frac_part) = match body.find(point) {
            Some(i) => (&body[..i], &body[i + 1..]),
            None => (body, ""),
        };
        let all_digits = |s: &str| s.bytes().all(|b| b.is_ascii_digit());
        if (int_part.is_empty() && frac_part.is_empty())
            || !all_digits(int_part)
            || !all_digits(frac_part)
        {
            return Err(WideError::NotDecimal);
        }
        let joined = format!("{int_part}{frac_part}");
        let significant = joined.trim_start_matches('0');
        if significant.len() > MAX_WIDE_DIGITS {
            return Err(WideError::TooLong(significant.len()));
        }
        let magnitude = BigUint::parse_bytes(significant.as_bytes(), 10).unwrap_or_default();
        let sign = if negative { Sign::Minus } else { Sign::Plus };
        Ok(WideDecimal {
            digits: BigInt::from_biguint(sign, magnitude),
            scale: frac_part.len() as u32,
        })
    }

    /// Digits after the point once trailing zeros are dropped.
    pub fn significant_decimals(&self) -> u32 {
        let mut d = self.digits.clone();
        let mut scale = self.scale;
        let ten = BigInt::from(10);
        while scale > 0 && (&d % &ten) == BigInt::ZERO {
            d /= &ten;
            scale -= 1;
        }
        scale
    }

    /// The digits at a larger scale (same value).
    pub fn at_scale(&self, scale: u32) -> BigInt {
        &self.digits * BigInt::from(10).pow(scale.saturating_sub(self.scale))
    }

    /// Whether two decimals are the same number (1.50 = 1.5).
    pub fn same_value(&self, other: &WideDecimal) -> bool {
        let scale = self.scale.max(other.scale);
        self.at_scale(scale) == other.at_scale(scale)
    }

    /// The nearest f64.
    pub fn to_f64(&self) -> f64 {
        ratio_to_f64(&self.digits, &BigUint::from(10u32).pow(self.scale))
    }
}

/// An exact ratio of integers: a cell mean before its one rounding.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct ExactRatio {
    pub numerator: BigInt,
    pub denominator: BigUint,
}

impl ExactRatio {
    /// The decimal as a ratio.
    pub fn of_decimal(d: &WideDecimal) -> ExactRatio {
        ExactRatio {
            numerator: d.digits.clone(),
            denominator: BigUint::from(10u32).pow(d.scale),
        }
    }

    /// self − other, exactly.
    pub fn minus(&self, other: &ExactRatio) -> ExactRatio {
        let (a, c) = (&self.numerator, &other.numerator);
        let (b, d) = (&self.denominator, &other.denominator);
        ExactRatio {
            numerator: a * BigInt::from(d.clone()) - c * BigInt::from(b.clone()),
            denominator: b * d,
        }
    }

    /// self + other, exactly.
    pub fn plus(&self, other: &ExactRatio) -> ExactRatio {
        let negated = ExactRatio {
            numerator: -other.numerator.clone(),
            denominator: other.denominator.clone(),
        };
        self.minus(&negated)
    }

    /// The nearest f64.
    pub fn to_f64(&self) -> f64 {
        ratio_to_f64(&self.numerator, &self.denominator)
    }
}

/// Sum / n exactly, and squares − sum²/n rounded once: the cell's mean and
/// within-cell sum of squares, relative to the origin the sums were taken
/// from. `None` when the sum of squares comes out negative (the sums cannot
/// belong to real data).
pub fn cell_moments(n: u64, sum: &WideDecimal, squares: &WideDecimal) -> Option<(ExactRatio, f64)> {
    let n_big = BigUint::from(n);
    let mean = ExactRatio {
        numerator: sum.digits.clone(),
        denominator: &n_big * BigUint::from(10u32).pow(sum.scale),
    };
    // squares − sum²/n = (squares·n·10^(2a) − sum²·10^b) / (n·10^(2a+b)),
    // with sum = A/10^a and squares = B/10^b.
    let (a, b) = (sum.scale, squares.scale);
    let ten = |k: u32| BigInt::from(10).pow(k);
    let numerator =
        &squares.digits * BigInt::from(n) * ten(2 * a) - &sum.digits * &sum.digits * ten(b);
    if numerator.sign() == Sign::Minus {
        return None;
    }
    let denominator = n_big * BigUint::from(10u32).pow(2 * a + b);
    Some((mean, ratio_to_f64(&numerator, &denominator)))
}

/// numerator / denominator correctly rounded to the nearest f64 (ties to
/// even): 65 or more quotient bits and a sticky bit for the remainder, so
/// that the one rounding of the u128 → f64 conversion is the only one.
pub fn ratio_to_f64(numerator: &BigInt, denominator: &BigUint) -> f64 {
    if numerator.sign() == Sign::NoSign || denominator.bits() == 0 {
        return 0.0;
    }
    let magnitude = numerator.magnitude();
    // Shift so that the quotient has 65 or 66 bits.
    let shift = 65 + denominator.bits() as i64 - magnitude.bits() as i64;
    let (quotient, remainder) = if shift >= 0 {
        let scaled = magnitude << (shift as u64);
        (&scaled / denominator, &scaled % denominator)
    } else {
        let scaled = denominator << ((-shift) as u64);
        (magnitude / &scaled, magnitude % &scaled)
    };
    let digits = quotient.to_u64_digits();
    let mut q: u128 = 0;
    for (k, d) in digits.iter().enumerate().take(2) {
        q |= u128::from(*d) << (64 * k);
    }
    let sticky = u128::from(remainder.bits() != 0);
    let value = ((q << 1) | sticky) as f64;
    let scaled = libm::ldexp(value, -(shift as i32) - 1);
    match numerator.sign() {
        Sign::Minus => -scaled,
        _ => scaled,
    }
}

#[cfg(test)]
#[path = "wide_decimal_tests.rs"]
mod tests;
