//! The closed-form elimination against the plain dense computation it
//! replaces: a Cholesky of the whole A = ΛZ'ZΛ + I and W'H⁻¹W = W'W − K'K
//! with K = L⁻¹ΛZ'W (mixed-models spec 2.2), on invented layouts where the
//! term with the most levels is not the first.

use nalgebra::DMatrix;

use super::*;
use crate::stats::linear::Layout;
use crate::stats::mixed::design::{FixedDesign, RandomTerm};

/// Invented data: 3 sites, 24 plots nested in sites with 2-5 observations
/// each, 5 days crossed with the plots, 2 treatments on the plots.
fn nested_and_crossed() -> (Vec<f64>, FixedDesign, Vec<RandomTerm>) {
    let (mut y, mut rows) = (Vec::new(), Vec::new());
    let (mut site, mut plot, mut day) = (Vec::new(), Vec::new(), Vec::new());
    for p in 0..24 {
        for s in 0..(2 + p * 5 % 4) {
            let dy = (p + 2 * s) % 5;
            rows.push(vec![p % 2]);
            site.push(p / 8);
            plot.push(p);
            day.push(dy);
            let k = (y.len() * 7919 % 97) as f64;
            y.push(20.0 + (p % 2) as f64 + (p / 8) as f64 * 2.0 + (p % 5) as f64 * 0.7 + k / 29.0);
        }
    }
    let design = FixedDesign::new(
        &Layout {
            levels: vec![2],
            rows,
        },
        &[vec![0]],
    );
    let term = |name: &str, levels, level_of| RandomTerm {
        name: name.into(),
        levels,
        level_of,
    };
    let random = vec![
        term("site", 3, site),
        term("plot", 24, plot),
        term("day", 5, day),
    ];
    (y, design, random)
}

/// W'H⁻¹W and ln|H| by one dense Cholesky of the whole A.
fn dense(cp: &CrossProducts, lambda: &[f64]) -> (DMatrix<f64>, f64) {
    let q = cp.q;
    let a = DMatrix::from_fn(q, q, |r, c| {
        lambda[r] * cp.ww[(r, c)] * lambda[c] + if r == c { 1.0 } else { 0.0 }
    });
    let l = a.cholesky().unwrap().unpack();
    let ln_det = 2.0 * l.diagonal().iter().map(|v| v.ln()).sum::<f64>();
    let b = DMatrix::from_fn(q, cp.ww.ncols(), |r, c| lambda[r] * cp.ww[(r, c)]);
    let k = l.solve_lower_triangular(&b).unwrap();
    (&cp.ww - k.transpose() * &k, ln_det)
}

/// Relative SDs of each random column from one θ per term.
fn lambda_of(cp: &CrossProducts, theta: &[f64]) -> Vec<f64> {
    let mut out = vec![0.0; cp.q];
    for (b, t) in cp.blocks.iter().zip(theta) {
        for k in b.clone() {
            out[k] = *t;
        }
    }
    out
}

/// Both computations apply the same identities in a different order; on
/// matrices of size ~40 with entries up to ~1e4 the rounding of either is
/// about size·ε relative to the largest entry (~1e-14), so 1e-11 leaves a
/// wide margin while any algebraic slip (a missing term, a wrong block)
/// shows at order 1.
const TOL: f64 = 1e-11;

fn check(random: &[RandomTerm], theta: &[f64]) {
    let (y, design, _) = nested_and_crossed();
    let cp = CrossProducts::new(&y, &design, random).unwrap();
    let lambda = lambda_of(&cp, theta);
    let (want, want_ln_det) = dense(&cp, &lambda);
    let elimination = Elimination::new(&cp);
    let factor = elimination.factor(&lambda).unwrap();
    let got = elimination.full(&factor).unwrap();
    let scale = cp.ww.amax();
    assert!(
        (&got - &want).amax() <= TOL * scale,
        "W'H⁻¹W differs by {} (scale {scale})",
        (&got - &want).amax()
    );
    assert!((factor.ln_det_h - want_ln_det).abs() <= TOL * (1.0 + want_ln_det.abs()));
    let first = elimination.first_fixed();
    let corner = elimination.corner(&factor, first);
    let fixed = cp.q..cp.ww.ncols();
    let want_corner = want.view((cp.q, cp.q), (fixed.len(), fixed.len()));
    assert!((corner - want_corner).amax() <= TOL * scale);
    // A⁻¹ against the dense Cholesky inverse; its entries are at most 1.
    let q = cp.q;
    let a = DMatrix::from_fn(q, q, |r, c| {
        lambda[r] * cp.ww[(r, c)] * lambda[c] + if r == c { 1.0 } else { 0.0 }
    });
    let want_inverse = a.cholesky().unwrap().inverse();
    let got_inverse = elimination.random_inverse(&factor).unwrap();
    assert!(
        (&got_inverse - &want_inverse).amax() <= TOL,
        "A⁻¹ differs by {}",
        (&got_inverse - &want_inverse).amax()
    );
}

#[test]
fn the_largest_term_in_the_middle_matches_the_dense_computation() {
    let (_, _, random) = nested_and_crossed();
    check(&random, &[0.8, 1.7, 0.4]);
    // A term at its bound and a very large relative SD.
    check(&random, &[0.0, 30.0, 0.05]);
}

#[test]
fn one_term_and_no_term_match_the_dense_computation() {
    let (_, _, random) = nested_and_crossed();
    check(&random[1..2], &[1.3]);
    check(&random[2..], &[0.6]);
    check(&[], &[]);
}

#[test]
fn the_first_of_equally_large_terms_leads() {
    let (_, _, random) = nested_and_crossed();
    let twin = RandomTerm {
        name: "plot again".into(),
        ..random[1].clone()
    };
    let pair = [random[2].clone(), random[1].clone(), twin];
    let (y, design, _) = nested_and_crossed();
    let cp = CrossProducts::new(&y, &design, &pair).unwrap();
    assert_eq!(Elimination::new(&cp).lead, 5..29);
    check(&pair, &[0.5, 1.1, 0.9]);
}
