//! The one number policy for everything a reader sees (METHODS 4.2).
//!
//! Rounding rule, the same in tables, prose and figures: a number is first
//! read as a decimal of 15 significant digits (the precision a binary double
//! carries, so 1643.8 / 4, stored as 410.94999…, reads as 410.95), and that
//! decimal is rounded half away from zero (410.95 → 411.0, 2.675 → 2.68,
//! −0.125 → −0.13), the rule readers apply when they check a number by hand.
//! The results file keeps full precision.

/// Placeholder for a value that does not exist (for example F with no
/// residual degrees of freedom).
pub const NOT_AVAILABLE: &str = "–";

/// Significant digits a number is read to before it is rounded for display.
const READ_DIGITS: usize = 15;

/// `x` with exactly `decimals` digits after the point, rounded by the module's
/// rule; "-0.00" prints as "0.00".
pub fn fixed(x: f64, decimals: u32) -> String {
    if x.is_nan() {
        return NOT_AVAILABLE.to_string();
    }
    if x.is_infinite() {
        return if x > 0.0 { "∞".into() } else { "-∞".into() };
    }
    let digits = rounded_digits(x.abs(), decimals as usize);
    // `digits` holds the integer part followed by `decimals` fraction digits.
    let split = digits.len() - decimals as usize;
    let mut out = String::with_capacity(digits.len() + 2);
    if x < 0.0 && digits.iter().any(|&d| d != 0) {
        out.push('-');
    }
    out.extend(digits[..split].iter().map(|d| char::from(b'0' + d)));
    if decimals > 0 {
        out.push('.');
        out.extend(digits[split..].iter().map(|d| char::from(b'0' + d)));
    }
    out
}

/// The decimal digits of `magnitude` (finite, ≥ 0) read to [`READ_DIGITS`]
/// significant digits and rounded half away from zero to `decimals` places:
/// at least one integer digit, then exactly `decimals` fraction digits.
fn rounded_digits(magnitude: f64, decimals: usize) -> Vec<u8> {
    // "d.dddddddddddddde±x": the leading digit, 14 more, the exponent.
    let sci = format!("{:.*e}", READ_DIGITS - 1, magnitude);
    let (mantissa, exponent) = sci.split_once('e').unwrap_or((&sci, "0"));
    let exponent: i64 = exponent.parse().unwrap_or(0);
    let read: Vec<u8> = mantissa
        .bytes()
        .filter(u8::is_ascii_digit)
        .map(|b| b - b'0')
        .collect();
    // Place of digit i is 10^(exponent − i); keep places ≥ 10^(−decimals).
    let keep = exponent + decimals as i64 + 1;
    let mut kept: Vec<u8> = if keep <= 0 {
        Vec::new()
    } else {
        (0..keep as usize)
            .map(|i| read.get(i).copied().unwrap_or(0))
            .collect()
    };
    let first_dropped = if keep < 0 {
        0
    } else {
        read.get(keep as usize).copied().unwrap_or(0)
    };
    if first_dropped >= 5 && round_up(&mut kept) {
        kept.insert(0, 1);
    }
    // Pad to at least one integer digit plus the fraction.
    let width = decimals + 1;
    if kept.len() < width {
        let mut padded = vec![0; width - kept.len()];
        padded.extend(kept);
        kept = padded;
    }
    kept
}

/// Adds one in the last place; true when the carry runs off the front.
fn round_up(digits: &mut [u8]) -> bool {
    for d in digits.iter_mut().rev() {
        if *d == 9 {
            *d = 0;
        } else {
            *d += 1;
            return false;
        }
    }
    true
}

/// A count of things, with thousands separated by commas ("260,000").
pub fn count(n: usize) -> String {
    let digits = n.to_string();
    let mut out = String::with_capacity(digits.len() + digits.len() / 3);
    for (i, c) in digits.chars().enumerate() {
        if i > 0 && (digits.len() - i).is_multiple_of(3) {
            out.push(',');
        }
        out.push(c);
    }
    out
}

/// A p-value: three decimals, "< 0.001" below 0.001 and "> 0.999" above 0.999.
pub fn p_value(p: f64) -> String {
    if p.is_nan() {
        NOT_AVAILABLE.to_string()
    } else if p < 0.001 {
        "< 0.001".into()
    } else if p > 0.999 {
        "> 0.999".into()
    } else {
        fixed(p, 3)
    }
}

/// "p = 0.016" or "p < 0.001", for running text.
pub fn p_phrase(p: f64) -> String {
    let v = p_value(p);
    if v.starts_with('<') || v.starts_with('>') {
        format!("p {v}")
    } else {
        format!("p = {v}")
    }
}

/// `x` to `digits` significant digits, without exponent notation for the
/// magnitudes met in reports.
pub fn significant(x: f64, digits: u32) -> String {
    if !x.is_finite() {
        return fixed(x, 0);
    }
    if x == 0.0 {
        return "0".into();
    }
    let magnitude = x.abs().log10().floor() as i32;
    let decimals = (digits as i32 - 1 - magnitude).max(0) as u32;
    fixed(x, decimals)
}

/// Decimals that show `digits` significant digits of the largest value of a
/// column, so the column lines up on the decimal point.
pub fn column_decimals(values: &[f64], digits: u32) -> u32 {
    let largest = values
        .iter()
        .filter(|v| v.is_finite())
        .fold(0.0f64, |m, v| m.max(v.abs()));
    if largest == 0.0 {
        return digits.saturating_sub(1);
    }
    let magnitude = largest.log10().floor() as i32;
    (digits as i32 - 1 - magnitude).clamp(0, 10) as u32
}

/// An effect size: two decimals, three below 0.1 (METHODS 4.2).
pub fn effect_size(x: f64) -> String {
    if x.is_finite() && x.abs() < 0.1 {
        fixed(x, 3)
    } else {
        fixed(x, 2)
    }
}

/// The F statistic as printed in tables and prose: two decimals.
pub fn f_stat(f: f64) -> String {
    fixed(f, 2)
}

/// "F(2, 27) = 4.85, p = 0.016".
pub fn f_statement(df1: f64, df2: f64, f: f64, p: f64) -> String {
    format!(
        "F({}, {}) = {}, {}",
        df_text(df1),
        df_text(df2),
        f_stat(f),
        p_phrase(p)
    )
}

/// Whole degrees of freedom as integers, fractional ones to two decimals.
pub fn df_text(df: f64) -> String {
    if is_whole_df(df) {
        format!("{:.0}", df.round())
    } else {
        fixed(df, 2)
    }
}

/// Whether degrees of freedom are whole, allowing for the rounding of an
/// approximation that equals a stratum's df in exact arithmetic
/// (Kenward-Roger in balanced designs agrees to about 1e-11).
pub fn is_whole_df(df: f64) -> bool {
    df.is_finite() && (df - df.round()).abs() <= 1e-6 * df.abs().max(1.0)
}

/// Denominator df of an approximate test: whole when it is (to rounding of
/// the computation, 1e-6 relative), else one decimal.
pub fn approx_df_text(df: f64) -> String {
    if is_whole_df(df) {
        format!("{:.0}", df.round())
    } else {
        fixed(df, 1)
    }
}

/// Writes the minus sign of negative numbers as U+2212 (−), as typeset text
/// does; a hyphen between words (`peat-perlite`) is left alone. A `-` counts as
/// a minus when it starts the text or follows a space, `(` or `[`, and a digit
/// or `∞` follows it. The results file keeps ASCII.
pub fn typographic_minus(s: &str) -> String {
    let mut out = String::with_capacity(s.len() + 4);
    let mut prev: Option<char> = None;
    let mut chars = s.chars().peekable();
    while let Some(c) = chars.next() {
        let starts_number = chars
            .peek()
            .is_some_and(|n| n.is_ascii_digit() || *n == '∞' || *n == '.');
        let after_gap = prev.is_none_or(|p| p == ' ' || p == '(' || p == '[' || p == '\u{a0}');
        if c == '-' && starts_number && after_gap {
            out.push('\u{2212}');
        } else {
            out.push(c);
        }
        prev = Some(c);
    }
    out
}

/// The first letter in upper case: "specific growth rate" → "Specific growth rate".
pub fn capitalised(s: &str) -> String {
    let mut chars = s.chars();
    chars
        .next()
        .map(|c| c.to_uppercase().chain(chars).collect())
        .unwrap_or_default()
}

/// A count with its noun: "1 row", "3 rows".
pub fn counted(n: usize, one: &str, many: &str) -> String {
    if n == 1 {
        format!("1 {one}")
    } else {
        format!("{} {many}", count(n))
    }
}

/// "95%" for α = 0.05, "97.5%" for α = 0.025.
pub fn confidence_label(alpha: f64) -> String {
    let pct = (1.0 - alpha) * 100.0;
    let rounded = (pct * 1000.0).round() / 1000.0;
    if rounded.fract() == 0.0 {
        format!("{rounded:.0}%")
    } else {
        format!("{rounded}%")
    }
}

/// Formats α as written in captions: 0.05 → "0.05".
pub fn alpha_text(alpha: f64) -> String {
    format!("{alpha}")
}

#[cfg(test)]
#[path = "format_tests.rs"]
mod tests;
