//! Unit tests for `stats::special`.

use super::*;

#[test]
fn ln_beta_matches_direct_form_where_that_is_safe() {
    // Source: identity B(a,b) = Γ(a)Γ(b)/Γ(a+b); at moderate arguments the
    // direct form is accurate, so the two must agree to ~1e-13.
    for &(a, b) in &[(12.0, 0.5), (15.5, 22.25), (10.0, 10.0), (30.0, 3.0)] {
        let direct = ln_gamma(a) + ln_gamma(b) - ln_gamma(a + b);
        assert!((ln_beta(a, b) - direct).abs() < 1e-12, "{a} {b}");
    }
}

#[test]
fn incomplete_beta_known_values() {
    // Source: closed forms (common practice): I_x(1, 1) = x; I_x(a, 1) = x^a;
    // I_x(1, b) = 1 − (1 − x)^b.
    let (v, _) = inc_beta_pair(1.0, 1.0, 0.3, 0.7);
    assert!((v - 0.3).abs() < 1e-15);
    let (v, _) = inc_beta_pair(3.0, 1.0, 0.4, 0.6);
    assert!((v - 0.064).abs() < 1e-15);
    let (v, c) = inc_beta_pair(1.0, 4.0, 0.2, 0.8);
    assert!((c - 0.4096).abs() < 1e-15 && (v - 0.5904).abs() < 1e-15);
}
