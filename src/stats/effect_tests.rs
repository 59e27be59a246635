//! Unit tests for `stats::effect`.

use super::*;

#[test]
fn dobson_effect_sizes() {
    // Source: METHODS 6.1C (computed): η² = 0.26415, ω² = 0.20408,
    // f = 0.5991; 95% CI for η² [0.0099, 0.4639], 90% [0.0319, 0.4288]
    // (noncentral F inversion).
    let (ssb, ssw) = (3.76634, 10.49209);
    let f_obs = (ssb / 2.0) / (ssw / 27.0);
    let e = one_way_effects(ssb, ssw, 2.0, 27.0, f_obs, 0.95);
    assert!((e.eta_sq - 0.26415).abs() < 5e-6);
    assert!((e.omega_sq - 0.20408).abs() < 5e-6);
    assert!((e.cohens_f - 0.5991).abs() < 5e-5);
    assert!((e.partial_eta_sq_ci.0 - 0.0099).abs() < 5e-5);
    assert!((e.partial_eta_sq_ci.1 - 0.4639).abs() < 5e-5);
    let e90 = one_way_effects(ssb, ssw, 2.0, 27.0, f_obs, 0.90);
    assert!((e90.partial_eta_sq_ci.0 - 0.0319).abs() < 5e-5);
    assert!((e90.partial_eta_sq_ci.1 - 0.4288).abs() < 5e-5);
}

#[test]
fn cohen_power_table() {
    // Source: Cohen (1988) power tables (from memory, METHODS 6.7), with the
    // exact noncentral-F values: k = 4, f = 0.25 → n = 45 (power 0.8040, and
    // 0.7939 at 44); k = 4, f = 0.10 → n = 274; k = 2, f = 0.25 → n = 64.
    let (n, power) = one_way_sample_size(4, 0.25, 0.05, 0.8).expect("found");
    assert_eq!(n, 45);
    assert!((power - 0.8040).abs() < 5e-5);
    assert!((one_way_power(4, 44, 0.25, 0.05) - 0.7939).abs() < 5e-5);
    assert_eq!(
        one_way_sample_size(4, 0.10, 0.05, 0.8).expect("found").0,
        274
    );
    assert_eq!(
        one_way_sample_size(2, 0.25, 0.05, 0.8).expect("found").0,
        64
    );
    // Computed (METHODS 6.7): k = 3, n = 10, f = 0.25 → 0.19514.
    assert!((one_way_power(3, 10, 0.25, 0.05) - 0.19514).abs() < 5e-6);
}

#[test]
fn huge_noncentrality_uses_the_two_moment_approximation() {
    // Source: scipy.stats.ncf.cdf 1.17.1 (Boost's series): at λ = 1.5e8,
    // x = 5e7, d = (3, 1e9): 0.49996737780231626; at λ = 4.1e7, x = 1e7,
    // d = (4, 500): 0.33977615558472757. Patnaik's error shrinks like 1/√λ
    // (measured 4.9e-6 and 8.3e-13 here): bar 1e-3. A huge λ (summary
    // input with n = 1e20) once made the series loop forever; it must now
    // return at once.
    let p = ncf_cdf(5e7, 3.0, 1e9, 1.5e8);
    println!("Δ at λ = 1.5e8: {:.1e}", p - 0.499_967_377_802_316_26);
    assert!((p - 0.499_967_377_802_316_26).abs() < 1e-3, "{p}");
    let p = ncf_cdf(1e7, 4.0, 500.0, 4.1e7);
    println!("Δ at λ = 4.1e7: {:.1e}", p - 0.339_776_155_584_727_57);
    assert!((p - 0.339_776_155_584_727_57).abs() < 1e-3, "{p}");
    let p = ncf_cdf(1e20, 2.0, 3e20, 2e20);
    assert!((0.0..=1.0).contains(&p), "{p}");
}
