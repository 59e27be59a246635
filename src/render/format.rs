//! The one number policy for everything a reader sees (METHODS 4.2).
//!
//! Rounding rule: a number is rounded from its exact binary value to the
//! nearest decimal (ties cannot occur in binary, so 2.675, stored as
//! 2.67499999…, prints as 2.67). The results file keeps full precision.

/// Placeholder for a value that does not exist (for example F with no
/// residual degrees of freedom).
pub const NOT_AVAILABLE: &str = "–";

/// `x` with exactly `decimals` digits after the point; "-0.00" prints as "0.00".
pub fn fixed(x: f64, decimals: u32) -> String {
    if x.is_nan() {
        return NOT_AVAILABLE.to_string();
    }
    if x.is_infinite() {
        return if x > 0.0 { "∞".into() } else { "-∞".into() };
    }
    let s = format!("{:.*}", decimals as usize, x);
    if s.starts_with('-') && s[1..].chars().all(|c| c == '0' || c == '.') {
        s[1..].to_string()
    } else {
        s
    }
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
    if df.fract() == 0.0 {
        format!("{df:.0}")
    } else {
        fixed(df, 2)
    }
}

#[cfg(test)]
#[path = "format_tests.rs"]
mod tests;
