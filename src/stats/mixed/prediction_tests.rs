//! Predictions against Henderson's mixed-model equations and against a
//! dense N×N computation, on the invented unbalanced layout of the
//! derivative tests. (Outside references are in tests/mixed_core.rs.)

use nalgebra::DMatrix;

use super::super::components::tests::invented;
use super::super::fit::fit;

/// Rounding of sums over about thirty values of size 10-20 after a fit
/// whose own solves are accurate to ~1e-13 relative: 1e-9 absolute leaves
/// room without hiding a wrong formula (which errs by O(1)).
const TOL: f64 = 1e-9;

#[test]
fn predictions_solve_the_mixed_model_equations() {
    let (y, design, random) = invented();
    let f = fit(&y, &design, &random).unwrap();
    let pr = f.predictions(&y, &design, &random).unwrap();
    let sigma2 = f.components.last().unwrap().variance;
    // X'e = 0 (first row of Henderson's equations).
    for col in &design.columns {
        let s: f64 = col.iter().zip(&pr.residuals).map(|(x, e)| x * e).sum();
        assert!(s.abs() < TOL, "X'e = {s}");
    }
    // Z'ⱼe = (σ²/σ²ⱼ)ûⱼ level by level (second row: Z'e = σ²G⁻¹û).
    for (j, t) in random.iter().enumerate() {
        let variance = f.components[j].variance;
        assert!(variance > 0.0);
        for level in 0..t.levels {
            let s: f64 = (0..y.len())
                .filter(|&i| t.level_of[i] == level)
                .map(|i| pr.residuals[i])
                .sum();
            let want = sigma2 / variance * pr.terms[j].effects[level];
            assert!((s - want).abs() < TOL, "{}: {s} vs {want}", t.name);
        }
    }
    for ((f, e), y) in pr.fitted.iter().zip(&pr.residuals).zip(&y) {
        assert!((f + e - y).abs() < TOL);
    }
}

/// V and Π formed densely (N = 30 here), the route the module avoids.
fn dense_pi(
    f: &super::super::fit::MixedFit,
    design: &super::super::design::FixedDesign,
    random: &[super::super::design::RandomTerm],
) -> DMatrix<f64> {
    let n = design.rows();
    let sigma2 = f.components.last().unwrap().variance;
    let mut v = DMatrix::<f64>::identity(n, n) * sigma2;
    for (j, t) in random.iter().enumerate() {
        for a in 0..n {
            for b in 0..n {
                if t.level_of[a] == t.level_of[b] {
                    v[(a, b)] += f.components[j].variance;
                }
            }
        }
    }
    let v_inv = v.cholesky().unwrap().inverse();
    let x = DMatrix::from_fn(n, design.rank(), |r, c| design.columns[c][r]);
    let phi = (x.transpose() * &v_inv * &x).cholesky().unwrap().inverse();
    &v_inv - &v_inv * &x * phi * x.transpose() * &v_inv
}

#[test]
fn standardised_values_match_a_dense_computation() {
    let (y, design, random) = invented();
    let f = fit(&y, &design, &random).unwrap();
    let pr = f.predictions(&y, &design, &random).unwrap();
    let pi = dense_pi(&f, &design, &random);
    let sigma2 = f.components.last().unwrap().variance;
    for i in 0..y.len() {
        let want = pr.residuals[i] / (sigma2 * pi[(i, i)].sqrt());
        let got = pr.studentized[i];
        assert!(
            (got - want).abs() < 1e-8 * want.abs().max(1.0),
            "row {i}: {got} vs {want}"
        );
    }
    for (j, t) in random.iter().enumerate() {
        let variance = f.components[j].variance;
        for level in 0..t.levels {
            let rows: Vec<usize> = (0..y.len()).filter(|&i| t.level_of[i] == level).collect();
            // (Z'ΠZ)ₖₖ: the sum of Π over the level's rows.
            let s: f64 = rows
                .iter()
                .flat_map(|&a| rows.iter().map(move |&b| (a, b)))
                .map(|(a, b)| pi[(a, b)])
                .sum();
            let want = pr.terms[j].effects[level] / (variance * s.sqrt());
            let got = pr.terms[j].standardized[level];
            assert!(
                (got - want).abs() < 1e-8 * want.abs().max(1.0),
                "{} {level}: {got} vs {want}",
                t.name
            );
        }
    }
}

#[test]
fn data_of_another_size_is_refused() {
    let (y, design, random) = invented();
    let f = fit(&y, &design, &random).unwrap();
    let err = f.predictions(&y[1..], &design, &random).unwrap_err();
    assert!(matches!(
        err,
        super::super::error::MixedError::LengthMismatch { .. }
    ));
}
