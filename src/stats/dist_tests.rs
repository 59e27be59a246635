//! Unit tests for `stats::dist`.

use super::*;

fn rel(a: f64, b: f64) -> f64 {
    ((a - b) / b).abs()
}

#[test]
fn normal_quantiles() {
    // Source: standard normal table (common practice), z_0.975 = 1.959963984540054.
    assert!(rel(normal_isf(0.025), 1.959_963_984_540_054) < 1e-14);
    // Source: scipy.stats.norm.isf(5e-11) = 6.466951087240516 (scipy 1.x).
    assert!(rel(normal_isf(5e-11), 6.466_951_087_240_516) < 1e-12);
}

#[test]
fn t_and_f_critical_values_match_printed_tables() {
    // Source: METHODS 6.5, printed t and F tables (from memory; confirmed with scipy).
    let t = |df: f64| t_isf(0.025, df);
    for &(df, tab) in &[(1.0, 12.706), (5.0, 2.571), (10.0, 2.228), (27.0, 2.052)] {
        assert!((t(df) - tab).abs() < 5e-4, "df {df}: {}", t(df));
    }
    for &(d1, d2, tab) in &[(1.0, 10.0, 4.965), (2.0, 27.0, 3.354), (4.0, 20.0, 2.866)] {
        assert!((f_isf(0.05, d1, d2) - tab).abs() < 5e-4);
    }
}

#[test]
fn f_with_one_numerator_df_is_t_squared() {
    // Source: identity F(1, ν) = T²_ν (common practice).
    for &df in &[3.0, 27.0, 1e4, 1e7] {
        for &t in &[0.5, 2.0, 4.5] {
            assert!(rel(f_sf(t * t, 1.0, df), 2.0 * t_sf(t, df)) < 1e-12);
        }
    }
}

#[test]
fn chi_square_quantiles_match_scipy() {
    // Source: scipy 1.17.1 `stats.chi2.isf(p, df)`. The quantile inherits
    // the survival function's ~1e-14 relative accuracy; 1e-11 leaves room
    // for the conditioning near the median at large df.
    for &(p, df, want) in &[
        (0.025, 3.7, 10.618_055_248_352_462),
        (0.975, 3.7, 0.394_576_875_341_516_9),
        (1e-10, 2.5, 47.855_951_712_898_964),
        (0.5, 1000.0, 999.333_412_403_381),
    ] {
        let got = chi2_isf(p, df);
        assert!(rel(got, want) < 1e-11, "p {p}, df {df}: {got} vs {want}");
    }
}
