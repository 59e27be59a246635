//! Exact decimal reading of numeric cells, so that data such as
//! 1000000000000.4 keep their digits.
//!
//! Parsing 1000000000000.4 straight into an f64 (ulp 1.2e-4) already throws
//! away about four of the digits that separate the observations, and no later
//! summation can recover them (METHODS 2.2). So each cell is read as an exact
//! decimal, a reference value from the same column is subtracted in exact
//! integer arithmetic, and only the small difference becomes an f64. Every sum
//! of squares, F and p is invariant to that shift; means are reported as
//! reference + mean of the differences.

/// A decimal number `digits / 10^scale`, held exactly.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Decimal {
    pub digits: i128,
    pub scale: u32,
}

/// A parsed numeric cell: exact when written in plain decimal notation,
/// otherwise (exponent notation, very long digit strings) an f64.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Number {
    Exact(Decimal),
    Float(f64),
}

impl Number {
    /// The value as the nearest f64.
    pub fn to_f64(self) -> f64 {
        match self {
            Number::Exact(d) => d.to_f64(),
            Number::Float(v) => v,
        }
    }

    /// Digits after the decimal point as written (0 for floats).
    pub fn decimals(self) -> u32 {
        match self {
            Number::Exact(d) => d.scale,
            Number::Float(_) => 0,
        }
    }
}

/// 10⁰ … 10²², every one exactly representable in f64.
const EXACT_POWERS: [f64; 23] = [
    1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14, 1e15, 1e16,
    1e17, 1e18, 1e19, 1e20, 1e21, 1e22,
];

/// Largest scale kept exactly; 10^30 times any 8-digit integer part still fits in i128.
const MAX_SCALE: u32 = 30;

impl Decimal {
    /// The value as the nearest f64. When the digits and the power of ten
    /// are both exact in f64, one division is correctly rounded (Clinger
    /// 1990, the fast path of every correct decimal reader); otherwise Rust's
    /// correctly rounded parser decides.
    pub fn to_f64(self) -> f64 {
        if self.digits.unsigned_abs() <= 1 << 53 && (self.scale as usize) < EXACT_POWERS.len() {
            return self.digits as f64 / EXACT_POWERS[self.scale as usize];
        }
        format!("{}e-{}", self.digits, self.scale)
            .parse()
            .unwrap_or(f64::NAN)
    }

    fn rescale(self, scale: u32) -> Option<i128> {
        10i128
            .checked_pow(scale - self.scale)
            .and_then(|m| self.digits.checked_mul(m))
    }

    /// self − origin as an f64, computed exactly before the final rounding.
    pub fn minus(self, origin: Decimal) -> Option<f64> {
        // The usual case (same number of decimals, 64-bit digits) without
        // 128-bit arithmetic; the same bits as the general route below.
        if self.scale == origin.scale
            && (self.scale as usize) < EXACT_POWERS.len()
            && let (Ok(a), Ok(b)) = (i64::try_from(self.digits), i64::try_from(origin.digits))
            && let Some(diff) = a.checked_sub(b)
            && diff.unsigned_abs() <= 1 << 53
        {
            return Some(diff as f64 / EXACT_POWERS[self.scale as usize]);
        }
        let scale = self.scale.max(origin.scale);
        let diff = self.rescale(scale)?.checked_sub(origin.rescale(scale)?)?;
        Some(
            Decimal {
                digits: diff,
                scale,
            }
            .to_f64(),
        )
    }
}

/// Reads a trimmed cell as a number; `None` when it is not one.
///
/// Accepts an optional sign, digits with at most one decimal point, and an
/// optional exponent (which makes the result a float). Non-finite spellings
/// (inf, nan) are not numbers here: the caller decides what they mean.
pub fn parse_number(text: &str) -> Option<Number> {
    let t = text.trim();
    let (negative, body) = match t.as_bytes().first()? {
        b'-' => (true, &t[1..]),
        b'+' => (false, &t[1..]),
        _ => (false, t),
    };
    let (mantissa, exponent) = match body.find(['e', 'E']) {
        Some(i) => (&body[..i], Some(&body[i + 1..])),
        None => (body, None),
    };
    let (int_part, frac_part) = match mantissa.split_once('.') {
        Some((i, f)) => (i, f),
        None => (mantissa, ""),
    };
    let all_digits = |s: &str| s.bytes().all(|b| b.is_ascii_digit());
    if int_part.is_empty() && frac_part.is_empty()
        || !all_digits(int_part)
        || !all_digits(frac_part)
    {
        return None;
    }
    if let Some(exp) = exponent {
        let exp_digits = exp.strip_prefix(['+', '-']).unwrap_or(exp);
        if exp_digits.is_empty() || !all_digits(exp_digits) {
            return None;
        }
        let v: f64 = t.parse().ok()?;
        return v.is_finite().then_some(Number::Float(v));
    }
    let scale = frac_part.len() as u32;
    let joined = format!("{int_part}{frac_part}");
    let significant = joined.trim_start_matches('0');
    if scale > MAX_SCALE || significant.len() > 36 {
        let v: f64 = t.parse().ok()?;
        return Some(Number::Float(v));
    }
    let magnitude: i128 = if significant.is_empty() {
        0
    } else {
        significant.parse().ok()?
    };
    let digits = if negative { -magnitude } else { magnitude };
    Some(Number::Exact(Decimal { digits, scale }))
}

/// The common case of [`parse_number`] without allocating: an optional
/// sign, at most 18 digits and one decimal point (`.`, or also `,` when
/// `comma` is set). Returns `None` for anything else, which the caller
/// then hands to [`parse_number`]; where both accept a text they agree.
pub fn parse_plain(text: &str, comma: bool) -> Option<Number> {
    plain_parts(text, comma).map(|(digits, scale)| {
        Number::Exact(Decimal {
            digits: i128::from(digits),
            scale,
        })
    })
}

/// [`parse_plain`] as (digits, scale), for readers that stay in 64 bits.
pub fn plain_parts(text: &str, comma: bool) -> Option<(i64, u32)> {
    let bytes = text.as_bytes();
    let (negative, body) = match bytes.first()? {
        b'-' => (true, &bytes[1..]),
        b'+' => (false, &bytes[1..]),
        _ => (false, bytes),
    };
    if body.is_empty() || body.len() > 19 {
        return None;
    }
    let mut digits: i64 = 0;
    let mut count = 0;
    let mut point: Option<usize> = None;
    for (i, &b) in body.iter().enumerate() {
        match b {
            b'0'..=b'9' => {
                digits = digits * 10 + i64::from(b - b'0');
                count += 1;
            }
            b'.' | b',' if point.is_none() && (b == b'.' || comma) => point = Some(i),
            _ => return None,
        }
    }
    if count == 0 || count > 18 {
        return None;
    }
    let scale = point.map_or(0, |p| body.len() - p - 1) as u32;
    Some((if negative { -digits } else { digits }, scale))
}

/// 10^scale as an exact f64, for scale ≤ 22.
pub fn exact_power(scale: u32) -> Option<f64> {
    EXACT_POWERS.get(scale as usize).copied()
}

/// (a − b) / 10^scale in 64-bit integers, correctly rounded, when the
/// difference is exact in f64 and 10^scale is too; the same bits as
/// [`Decimal::minus`].
pub fn plain_difference(a: i64, b: i64, scale: u32) -> Option<f64> {
    let diff = a.checked_sub(b)?;
    let power = EXACT_POWERS.get(scale as usize)?;
    (diff.unsigned_abs() <= 1 << 53).then(|| diff as f64 / power)
}

/// Largest magnitude analysed: squares and sums of squares of values and
/// their differences stay far inside the range of f64 (about 1.8e308).
pub const MAX_MAGNITUDE: f64 = 1e100;
/// Smallest non-zero magnitude analysed: squares of differences stay far
/// above the f64 underflow (about 2.2e-308).
pub const MIN_MAGNITUDE: f64 = 1e-100;
/// Most significant digits a number written without an exponent may carry
/// when it cannot be held exactly (more than 36 digits or 30 decimals):
/// beyond 17 an f64 would merge values that differ in the later digits.
const MAX_ROUNDED_DIGITS: usize = 17;

/// Why a parsed number cannot enter an analysis, if it cannot: a magnitude
/// beyond [`MIN_MAGNITUDE`]..[`MAX_MAGNITUDE`], or more digits than are kept.
pub fn beyond_range(text: &str, number: Number) -> Option<String> {
    let v = number.to_f64().abs();
    if v != 0.0 && !(MIN_MAGNITUDE..=MAX_MAGNITUDE).contains(&v) {
        return Some(
            "its magnitude is beyond the range sheaf can analyse (1e-100 to 1e100, or 0)".into(),
        );
    }
    let plain = !text.contains(['e', 'E']);
    if plain && matches!(number, Number::Float(_)) {
        let digits: String = text.chars().filter(char::is_ascii_digit).collect();
        let significant = digits.trim_start_matches('0').trim_end_matches('0').len();
        if significant > MAX_ROUNDED_DIGITS {
            return Some(format!(
                "it has {significant} significant digits; sheaf keeps up to 36 digits with up to 30 decimals exactly, and otherwise 17"
            ));
        }
    }
    None
}

#[cfg(test)]
#[path = "decimal_tests.rs"]
mod tests;
