//! Normalised residuals on invented incomplete data.

use super::*;
use crate::stats::mixed::structure::Structure;
use crate::stats::mixed::subjects::tests::invented_data;

/// With the scale free, REML's optimum has r'V̂⁻¹r = N − p (the score in
/// the direction Σ → cΣ is (N − p)/c − r'V⁻¹r/c², a property of the
/// likelihood, not of this code), and the normalised residuals' squares sum
/// to r'V̂⁻¹r. The fit stops at a scaled gradient of 1e-6, so 1e-6
/// relative.
#[test]
fn squares_sum_to_the_residual_df() {
    let (y, design, layout) = invented_data();
    for structure in [
        Structure::CompoundSymmetry,
        Structure::Autoregressive,
        Structure::Unstructured,
    ] {
        let fit = super::super::fit_repeated(&y, &design, &layout, structure).unwrap();
        let r = fit.residuals(&y, &design, &layout).unwrap();
        let ss: f64 = r.normalised.iter().map(|v| v * v).sum();
        let df = (y.len() - design.rank()) as f64;
        assert!((ss - df).abs() <= 1e-6 * df, "{structure:?}: {ss} vs {df}");
        for ((f, m), y) in r.fitted.iter().zip(&r.marginal).zip(&y) {
            assert!((f + m - y).abs() < 1e-12);
        }
    }
}

/// Each subject's normalised residuals reproduce its marginal ones through
/// L (LL' = Σ̂ at its occasions), checked by multiplying back.
#[test]
fn multiplying_by_the_cholesky_factor_gives_the_marginal_residuals() {
    let (y, design, layout) = invented_data();
    let fit = super::super::fit_repeated(&y, &design, &layout, Structure::Unstructured).unwrap();
    let r = fit.residuals(&y, &design, &layout).unwrap();
    for subject in layout.by_subject(y.len()).unwrap() {
        let k = subject.rows.len();
        let sigma = DMatrix::from_fn(k, k, |a, b| {
            fit.covariance[subject.occasions[a]][subject.occasions[b]]
        });
        let l = sigma.cholesky().unwrap().l();
        let z = DVector::from_iterator(k, subject.rows.iter().map(|&i| r.normalised[i]));
        let back = l * z;
        for (j, &i) in subject.rows.iter().enumerate() {
            assert!((back[j] - r.marginal[i]).abs() < 1e-10);
        }
    }
}

/// Data that do not match the fit are refused.
#[test]
fn refuses_other_data() {
    let (y, design, layout) = invented_data();
    let fit =
        super::super::fit_repeated(&y, &design, &layout, Structure::CompoundSymmetry).unwrap();
    assert!(matches!(
        fit.residuals(&y[1..], &design, &layout),
        Err(MixedError::LengthMismatch { .. })
    ));
}
