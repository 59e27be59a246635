//! Kenward-Roger's moment match and its guards (mixed-models spec 3.3).

use super::*;

#[test]
fn one_row_gives_lambda_one_and_two_over_a2() {
    // ℓ = 1 makes A₁ = A₂, g = −1, λ = 1 and m = 2/A₂ (spec 3.3).
    let (m, lambda) = moment_match(1.0, 0.2, 0.2).unwrap();
    assert!((m - 10.0).abs() < 1e-12, "{m}");
    assert!((lambda - 1.0).abs() < 1e-12, "{lambda}");
}

#[test]
fn a_contrast_free_of_psi_has_infinite_df() {
    assert_eq!(moment_match(2.0, 0.0, 0.0), Some((f64::INFINITY, 1.0)));
}

#[test]
fn an_undefined_match_is_refused() {
    // ℓ = 1, A₂ = 0.6: 1 − c₃B = 1 − 2A₂ < 0, where the match is undefined.
    assert_eq!(moment_match(1.0, 0.6, 0.6), None);
}

#[test]
fn a_refused_match_falls_back_to_expected_satterthwaite() {
    // One parameter, Φ = [1], P = [−1] and a large W: A₂ = W = 0.6.
    let inputs = DfInputs {
        phi: DMatrix::from_element(1, 1, 1.0),
        phi_adjusted: DMatrix::from_element(1, 1, 1.0),
        p: vec![DMatrix::from_element(1, 1, -1.0)],
        cov_expected: DMatrix::from_element(1, 1, 0.6),
        cov_observed: DMatrix::from_element(1, 1, 0.6),
    };
    let l = DMatrix::from_element(1, 1, 1.0);
    let test = kenward_roger(&inputs, &[2.0], &l).unwrap();
    assert_eq!(test.method, DfMethod::SatterthwaiteAfterKenwardRoger);
    // Satterthwaite: 2v²/(g'Ag) = 2/(0.6) with v = 1, g = 1.
    assert!((test.df_den - 2.0 / 0.6).abs() < 1e-12, "{test:?}");
    assert!((test.f - 4.0).abs() < 1e-12);
}

#[test]
fn several_equal_directions_return_their_common_df() {
    // Two orthogonal rows with the same variance and gradient: E gives back ν.
    let inputs = DfInputs {
        phi: DMatrix::identity(2, 2),
        phi_adjusted: DMatrix::identity(2, 2),
        p: vec![-DMatrix::identity(2, 2)],
        cov_expected: DMatrix::from_element(1, 1, 0.1),
        cov_observed: DMatrix::from_element(1, 1, 0.1),
    };
    let test = satterthwaite(
        &inputs,
        &[1.0, 1.0],
        &DMatrix::identity(2, 2),
        Information::Observed,
    )
    .unwrap();
    assert!((test.df_den - 20.0).abs() < 1e-9, "{test:?}");
    assert_eq!(test.method, DfMethod::Satterthwaite(Information::Observed));
}
