//! Unit tests for `stats::range_tail`.

use super::*;
use crate::stats::dist::normal_sf as direct_normal_sf;

#[test]
fn the_log_normal_tail_joins_its_asymptotic_series() {
    // Reference: erfc from the libm crate below x = 30 (a few ulps); at
    // x = 30 both forms are available and must agree to the series'
    // truncation (3e-15 relative, i.e. that much absolute in the log).
    for x in [-40.0, -5.0, -0.5, 0.0, 0.5, 5.0, 20.0, 29.999] {
        let direct = direct_normal_sf(x).ln();
        assert!(
            (ln_normal_sf(x) - direct).abs() <= 1e-14 * direct.abs().max(1.0),
            "{x}"
        );
    }
    let u: f64 = 1.0 / 900.0;
    let series = 1.0 - u * (1.0 - 3.0 * u * (1.0 - 5.0 * u * (1.0 - 7.0 * u * (1.0 - 9.0 * u))));
    let asymptotic = -450.0 - HALF_LN_2PI - 30f64.ln() + series.ln();
    assert!((asymptotic - direct_normal_sf(30.0).ln()).abs() < 1e-12);
    // Far beyond underflow: ln Φ̄(100) = −5005.5242… (mpmath, 30 digits:
    // log(ncdf(-100)) = -5005.524208694205088...).
    assert!((ln_normal_sf(100.0) + 5_005.524_208_694_205).abs() < 1e-9);
}
