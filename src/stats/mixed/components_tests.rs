//! Analytic derivatives against central differences (mixed-models spec
//! 9.6 item 6), on an invented unbalanced layout.

use nalgebra::DMatrix;

use super::*;
use crate::stats::linear::Layout;
use crate::stats::mixed::design::{FixedDesign, RandomTerm};

/// Invented data: 2 treatments × 3 blocks × plots of uneven size, with a
/// deterministic irregular response.
pub(crate) fn invented() -> (Vec<f64>, FixedDesign, Vec<RandomTerm>) {
    let mut rows = Vec::new();
    let (mut block, mut plot) = (Vec::new(), Vec::new());
    let mut y = Vec::new();
    let mut plot_id = 0;
    for b in 0..4 {
        for t in 0..2 {
            for s in 0..(2 + (b + t) % 3) {
                rows.push(vec![t, s % 2]);
                block.push(b);
                plot.push(plot_id);
                let k = (rows.len() * 7919 % 101) as f64;
                y.push(10.0 + 2.0 * t as f64 + b as f64 * 1.5 + (plot_id % 3) as f64 + k / 37.0);
            }
            plot_id += 1;
        }
    }
    let layout = Layout {
        levels: vec![2, 2],
        rows,
    };
    let design = FixedDesign::new(&layout, &[vec![0], vec![1]]);
    let random = vec![
        RandomTerm {
            name: "block".into(),
            levels: 4,
            level_of: block,
        },
        RandomTerm {
            name: "plot".into(),
            levels: plot_id,
            level_of: plot,
        },
    ];
    (y, design, random)
}

fn model() -> VarianceComponents {
    let (y, design, random) = invented();
    let cp = CrossProducts::new(&y, &design, &random).unwrap();
    VarianceComponents::new(cp, vec!["block".into(), "plot".into()])
}

/// Central-difference step relative to each parameter; the truncation error
/// is O(h²) ≈ 1e-8 and the rounding O(ε/h) ≈ 1e-12 of the criterion's scale.
const H: f64 = 1e-4;

fn shifted(psi: &[f64], i: usize, by: f64) -> Vec<f64> {
    let mut p = psi.to_vec();
    p[i] += by * psi[i];
    p
}

fn assert_rel(a: f64, b: f64, tol: f64, what: &str) {
    let scale = a.abs().max(b.abs()).max(1e-3);
    assert!(
        (a - b).abs() <= tol * scale,
        "{what}: analytic {a} vs numeric {b}"
    );
}

#[test]
fn gradient_and_hessian_match_central_differences() {
    let m = model();
    let psi = [2.5, 1.7, 3.1];
    let der = m.derivatives(&psi).unwrap();
    for i in 0..3 {
        let h = H * psi[i];
        let num = (m.criterion(&shifted(&psi, i, H)).unwrap()
            - m.criterion(&shifted(&psi, i, -H)).unwrap())
            / (2.0 * h);
        assert_rel(der.gradient[i], num, 1e-6, &format!("gradient {i}"));
        let up = m.derivatives(&shifted(&psi, i, H)).unwrap().gradient;
        let down = m.derivatives(&shifted(&psi, i, -H)).unwrap().gradient;
        for j in 0..3 {
            assert_rel(
                der.hessian[(i, j)],
                (up[j] - down[j]) / (2.0 * h),
                1e-6,
                &format!("hessian {i},{j}"),
            );
        }
    }
}

#[test]
fn p_and_q_match_central_differences_of_phi() {
    let m = model();
    let psi = [2.5, 1.7, 3.1];
    let free = [0, 1, 2];
    let fe = m.fixed_effects(&psi, &free).unwrap();
    let phi_at = |p: &[f64]| m.fixed_effects(p, &[]).unwrap().phi;
    for i in 0..3 {
        let h = H * psi[i];
        // ∂Φ/∂ψᵢ = −ΦPᵢΦ.
        let num = (phi_at(&shifted(&psi, i, H)) - phi_at(&shifted(&psi, i, -H))) / (2.0 * h);
        let ana: DMatrix<f64> = -(&fe.phi * &fe.p[i] * &fe.phi);
        for (a, b) in ana.iter().zip(num.iter()) {
            assert_rel(*a, *b, 1e-6, &format!("dPhi/dpsi {i}"));
        }
        // ∂Pⱼ/∂ψᵢ = Qᵢⱼ + Qⱼᵢ (from ∂V⁻¹ = −V⁻¹VᵢV⁻¹).
        let p_up = m.fixed_effects(&shifted(&psi, i, H), &free).unwrap().p;
        let p_down = m.fixed_effects(&shifted(&psi, i, -H), &free).unwrap().p;
        for j in 0..3 {
            let num = (&p_up[j] - &p_down[j]) / (2.0 * h);
            let ana = &fe.q[i][j] + &fe.q[j][i];
            for (a, b) in ana.iter().zip(num.iter()) {
                assert_rel(*a, *b, 1e-6, &format!("dP{j}/dpsi {i}"));
            }
        }
    }
}

#[test]
fn expected_information_is_the_mean_of_the_observed() {
    // E[y'ΠVᵢΠVⱼΠy] = tr(ΠVᵢΠVⱼ), so H = −E + 2Y has expectation E; here we
    // check only the symmetry and positivity the optimiser relies on.
    let m = model();
    let der = m.derivatives(&[2.5, 1.7, 3.1]).unwrap();
    assert!((&der.expected - der.expected.transpose()).amax() <= 1e-12 * der.expected.amax());
    assert!(der.expected.clone().cholesky().is_some());
}

#[test]
fn through_identity_parts_match_the_full_product() {
    // The diagonal and response column of T = (S − S·D·S)/σ² against the
    // full product; the same sums in another order, so agreement to a few
    // ulps of the largest entry (1e-13 relative leaves a margin).
    let n = 7;
    let s = DMatrix::from_fn(n, n, |r, c| {
        let (a, b) = (r.min(c) as f64, r.max(c) as f64);
        (a * 1.3 + b * 0.7 + 1.0).sin() + if r == c { 3.0 } else { 0.0 }
    });
    let d = [0.5, 2.0, 0.0, 1.5, 3.0, 0.25, 0.0];
    let t = through_identity(&s, &s, &d, &s, 1.7);
    let (diag, resp) = through_identity_parts(&s, &d, 6, 1.7);
    for k in 0..n {
        assert!((diag[k] - t[(k, k)]).abs() <= 1e-13 * t.amax());
        assert!((resp[k] - t[(k, 6)]).abs() <= 1e-13 * t.amax());
    }
}
