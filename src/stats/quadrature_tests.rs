//! Unit tests for `stats::quadrature`.

use super::*;

#[test]
fn integrates_polynomials_exactly() {
    // An n-point rule is exact for degree 2n − 1 (common practice).
    let rule = GaussLegendre::new(16);
    let v = rule.integrate(0.0, 2.0, |x| x.powi(31));
    assert!((v - 2f64.powi(32) / 32.0).abs() / v < 1e-13);
    let w: f64 = rule.weights.iter().sum();
    assert!((w - 2.0).abs() < 1e-14);
}
