use super::*;

fn declared(transform: Transform) -> Declared {
    Declared {
        transform,
        offset: 0.0,
        percent: false,
    }
}

/// Relative difference; the tolerances below are a few ulps of the values.
fn rel(a: f64, b: f64) -> f64 {
    (a - b).abs() / b.abs().max(f64::MIN_POSITIVE)
}

#[test]
fn exact_identities_of_the_specification() {
    // linear-extensions spec C.4, "exact identities (no data)".
    let arcsine = declared(Transform::Arcsine);
    assert!(rel(arcsine.apply(0.25).unwrap(), std::f64::consts::FRAC_PI_6) < 1e-15);
    assert!(rel(arcsine.back(std::f64::consts::FRAC_PI_6), 0.25) < 1e-15);
    let logit = declared(Transform::Logit);
    assert!(rel(logit.apply(0.2).unwrap(), 0.25f64.ln()) < 1e-15);
    assert!(rel(logit.back(0.25f64.ln()), 0.2) < 1e-15);
    // y = (1, 4, 9): the mean root 2 back-transforms to 4, below the
    // arithmetic mean 14/3.
    let sqrt = declared(Transform::Sqrt);
    let roots: f64 = [1.0, 4.0, 9.0]
        .iter()
        .map(|&y| sqrt.apply(y).unwrap())
        .sum();
    assert!(rel(sqrt.back(roots / 3.0), 4.0) < 1e-15);
}

#[test]
fn domains_refuse_what_the_transformation_cannot_take() {
    assert_eq!(declared(Transform::Ln).apply(0.0), None);
    assert_eq!(declared(Transform::Log10).apply(-1.0), None);
    assert_eq!(declared(Transform::Logit).apply(1.0), None);
    assert_eq!(declared(Transform::Logit).apply(0.0), None);
    assert_eq!(declared(Transform::Arcsine).apply(1.5), None);
    assert_eq!(declared(Transform::Sqrt).apply(-0.5), None);
    assert_eq!(
        declared(Transform::Arcsine).apply(1.0),
        Some(std::f64::consts::FRAC_PI_2)
    );
    let shifted = Declared {
        offset: 1.0,
        ..declared(Transform::Ln)
    };
    assert_eq!(shifted.apply(0.0), Some(0.0));
    assert_eq!(shifted.back(0.0), 0.0);
    assert_eq!(shifted.ratio(0.3), None, "a shifted log has no ratio");
    let percent = Declared {
        percent: true,
        ..declared(Transform::Logit)
    };
    assert!(rel(percent.apply(20.0).unwrap(), 0.25f64.ln()) < 1e-15);
    assert!(rel(percent.back(0.25f64.ln()), 20.0) < 1e-14);
}

#[test]
fn log_bases_give_the_same_ratio() {
    // log10 differences are ln differences over ln 10: the same ratio.
    let (a, b) = (0.713529362643f64, 0.465507807418f64);
    let ln = declared(Transform::Ln);
    let lg = declared(Transform::Log10);
    let d_ln = ln.apply(b).unwrap() - ln.apply(a).unwrap();
    let d_lg = lg.apply(b).unwrap() - lg.apply(a).unwrap();
    assert!(rel(ln.ratio(d_ln).unwrap(), lg.ratio(d_lg).unwrap()) < 1e-14);
    assert!(rel(ln.ratio(d_ln).unwrap(), b / a) < 1e-14);
}

#[test]
fn the_derivative_in_lambda_is_continuous_across_the_series() {
    // A property of the formulas, not a reference value: the series used
    // for |λ ln y| < 0.01 and the closed form agree at the switch, and both
    // agree with a central difference of z.
    for ln_y in [-2.0f64, -0.3, 0.7, 3.0] {
        // Just inside the switch: the series against the closed form at
        // the same λ, whose cancellation error there is about 2ε/u ≈ 5e-14.
        let lambda = 0.00999 / ln_y.abs();
        let u = lambda * ln_y;
        let e = u.exp_m1();
        let closed = (u * (e + 1.0) - e) / (lambda * lambda);
        let (_, series) = box_cox_value(ln_y, lambda);
        assert!(
            rel(series, closed) < 1e-12,
            "ln y {ln_y}: {series} {closed}"
        );
        for lambda in [-1.3, -0.002, 0.0, 0.004, 0.5, 2.2] {
            let h = 1e-5;
            let numeric =
                (box_cox_value(ln_y, lambda + h).0 - box_cox_value(ln_y, lambda - h).0) / (2.0 * h);
            let (_, dz) = box_cox_value(ln_y, lambda);
            // Central difference error O(h² z‴) ≈ 1e-10 relative here.
            assert!(rel(dz, numeric) < 1e-8, "ln y {ln_y}, λ {lambda}");
        }
    }
}

#[test]
fn box_cox_of_an_intercept_model_matches_the_pooled_profile() {
    // With the intercept-only model the profile is the pooled one; here the
    // data are exact powers so that λ = 0.5 makes them a straight
    // sequence, and ℓ at 1 equals −(N/2) ln(SSE/N) by definition.
    let y: Vec<f64> = (1..=8).map(|i| (i as f64).powi(2)).collect();
    let centre = |z: &[f64]| -> Vec<f64> {
        let m = z.iter().sum::<f64>() / z.len() as f64;
        z.iter().map(|v| v - m).collect()
    };
    let profile = Profile::new(&y, &centre);
    let n = y.len() as f64;
    let mean = y.iter().sum::<f64>() / n;
    let sse: f64 = y.iter().map(|v| (v - mean).powi(2)).sum();
    assert!(rel(profile.log_likelihood(1.0), -0.5 * n * (sse / n).ln()) < 1e-13);
    let fit = profile.estimate(0.95);
    assert!(fit.lower.unwrap() < fit.lambda && fit.lambda < fit.upper.unwrap());
    let drop = fit.log_likelihood - profile.log_likelihood(fit.upper.unwrap());
    // χ²₁(0.95)/2 = 1.920729410347062 (scipy chi2.ppf(0.95, 1)/2).
    assert!((drop - 1.920729410347062).abs() < 1e-9);
}
