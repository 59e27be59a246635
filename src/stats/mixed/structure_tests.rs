//! Σ(ψ), its derivatives and the parameter space of each structure.

use super::*;

/// Central difference of Σ in parameter a.
fn numeric_first(p: &Pattern, psi: &[f64], a: usize) -> DMatrix<f64> {
    let h = 1e-6 * psi[a].abs().max(1e-3);
    let mut up = psi.to_vec();
    let mut down = psi.to_vec();
    up[a] += h;
    down[a] -= h;
    (p.sigma(&up) - p.sigma(&down)) / (2.0 * h)
}

fn close(a: &DMatrix<f64>, b: &DMatrix<f64>, rel: f64) {
    let scale = a.amax().max(b.amax()).max(1e-300);
    assert!((a - b).amax() <= rel * scale, "{a} vs {b}");
}

/// Analytic first and second derivatives against central differences
/// (spec 2.4, last line; 1e-7 relative is the central difference's own
/// accuracy at a step of 1e-6).
#[test]
fn derivatives_match_central_differences() {
    let times = [0.0, 1.0, 2.0, 4.0, 7.0];
    let cases: [(Structure, Vec<f64>); 3] = [
        (Structure::CompoundSymmetry, vec![-0.1, 2.0]),
        (Structure::Autoregressive, vec![3.0, 0.6]),
        (
            Structure::Unstructured,
            (0..15)
                .map(|i| {
                    if [0, 2, 5, 9, 14].contains(&i) {
                        4.0
                    } else {
                        0.3
                    }
                })
                .collect(),
        ),
    ];
    for (structure, psi) in cases {
        let p = Pattern::new(structure, &times);
        assert!(p.admissible(&psi), "{structure:?}");
        for a in 0..p.n_params() {
            close(&p.first(&psi, a), &numeric_first(&p, &psi, a), 1e-7);
            for b in 0..p.n_params() {
                let mut up = psi.clone();
                let mut down = psi.clone();
                let h = 1e-6 * psi[b].abs().max(1e-3);
                up[b] += h;
                down[b] -= h;
                let numeric = (p.first(&up, a) - p.first(&down, a)) / (2.0 * h);
                let analytic = p.second(&psi, a, b).unwrap_or_else(|| DMatrix::zeros(5, 5));
                close(&analytic, &numeric, 1e-6);
            }
        }
    }
}

#[test]
fn the_parameter_space_is_positive_definite_sigma() {
    let p = Pattern::new(Structure::CompoundSymmetry, &[0.0, 1.0, 2.0, 3.0]);
    // σ² + kσ²ₛ > 0: a negative common covariance down to −σ²/k.
    assert!(p.admissible(&[-0.24, 1.0]));
    assert!(!p.admissible(&[-0.26, 1.0]));
    assert!(!p.admissible(&[0.5, 0.0]));
    assert!(p.signed(0) && !p.signed(1));
    let ar = Pattern::new(Structure::Autoregressive, &[0.0, 1.0, 3.0]);
    assert!(ar.admissible(&[1.0, -0.5]) && !ar.admissible(&[1.0, 1.0]));
    assert!(ar.signed(1) && !ar.scales(1) && ar.scales(0));
    // A half-unit lag: ρ^0.5 needs ρ > 0.
    let half = Pattern::new(Structure::Autoregressive, &[0.0, 0.5, 1.0]);
    assert!(!half.admissible(&[1.0, -0.5]) && half.admissible(&[1.0, 0.5]));
    assert!(!half.signed(1));
    assert_eq!(half.starts().len(), 1);
    let un = Pattern::new(Structure::Unstructured, &[0.0, 1.0]);
    // (1,1), (1,2), (2,2): correlation above 1 is refused.
    assert!(un.admissible(&[1.0, 0.9, 1.0]) && !un.admissible(&[1.0, 1.1, 1.0]));
    assert_eq!(un.param_name(1), "covariance of occasions 1 and 2");
}

#[test]
fn unequal_times_give_powers_of_the_lag() {
    let p = Pattern::new(Structure::Autoregressive, &[0.0, 1.0, 3.0]);
    let s = p.sigma(&[2.0, 0.5]);
    assert_eq!(s[(0, 1)], 1.0);
    assert_eq!(s[(0, 2)], 2.0 * 0.125);
    assert_eq!(s[(1, 2)], 2.0 * 0.25);
    assert_eq!(s[(2, 2)], 2.0);
}
