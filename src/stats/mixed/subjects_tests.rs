//! The REML criterion's derivatives on invented incomplete data.

use super::*;
use crate::stats::linear::Layout;
use crate::stats::mixed::repeated_layout::RepeatedLayout;
use crate::stats::mixed::structure::Structure;

/// Eight invented subjects, two groups, four occasions at times 0, 1, 2, 4,
/// three observations missing: the responses, the design (group + occasion)
/// and the layout.
pub(crate) fn invented_data() -> (Vec<f64>, FixedDesign, RepeatedLayout) {
    let y_by_subject = [
        [10.1, 11.3, 12.9, 14.2],
        [9.4, 10.9, 11.2, 13.8],
        [11.7, 12.0, 14.1, 15.0],
        [8.8, 10.2, 10.1, 12.7],
        [10.9, 12.6, 13.0, 16.1],
        [9.9, 10.3, 12.2, 12.9],
        [10.6, 11.1, 13.4, 13.9],
        [9.1, 11.6, 11.8, 14.6],
    ];
    let missing = [(1, 2), (3, 0), (4, 3)];
    let (mut y, mut subject, mut occasion, mut rows) = (vec![], vec![], vec![], vec![]);
    for (s, ys) in y_by_subject.iter().enumerate() {
        for (o, v) in ys.iter().enumerate() {
            if !missing.contains(&(s, o)) {
                y.push(*v);
                subject.push(s);
                occasion.push(o);
                rows.push(vec![s % 2, o]);
            }
        }
    }
    let layout = Layout {
        levels: vec![2, 4],
        rows,
    };
    let design = FixedDesign::new(&layout, &[vec![0], vec![1]]);
    let rl = RepeatedLayout {
        subjects: 8,
        subject_of: subject,
        occasions: 4,
        occasion_of: occasion,
        times: Some(vec![0.0, 1.0, 2.0, 4.0]),
    };
    (y, design, rl)
}

/// The invented data's model with `structure`.
pub(crate) fn invented(structure: Structure) -> SubjectBlocks {
    let (y, design, rl) = invented_data();
    let times = rl.checked_times().unwrap();
    let subjects = rl.by_subject(y.len()).unwrap();
    SubjectBlocks::new(&y, &design, &subjects, Pattern::new(structure, &times)).unwrap()
}

fn interior(structure: Structure) -> Vec<f64> {
    match structure {
        Structure::CompoundSymmetry => vec![0.4, 0.9],
        Structure::Autoregressive => vec![1.3, 0.55],
        Structure::Unstructured => vec![1.2, 0.3, 1.0, 0.2, 0.4, 1.5, 0.1, 0.3, 0.5, 1.8],
    }
}

/// Gradient and observed Hessian of d against central differences of the
/// criterion and of the gradient (spec 2.4; 9.6 item 6 asks 1e-6).
#[test]
fn derivatives_match_central_differences() {
    for structure in [
        Structure::CompoundSymmetry,
        Structure::Autoregressive,
        Structure::Unstructured,
    ] {
        let m = invented(structure);
        let psi = interior(structure);
        let der = m.derivatives(&psi).unwrap();
        for a in 0..psi.len() {
            let h = 1e-5 * psi[a].abs();
            let (mut up, mut down) = (psi.clone(), psi.clone());
            up[a] += h;
            down[a] -= h;
            let numeric = (m.criterion(&up).unwrap() - m.criterion(&down).unwrap()) / (2.0 * h);
            let g = der.gradient[a];
            assert!(
                (g - numeric).abs() <= 1e-6 * g.abs().max(1.0),
                "{structure:?} gradient {a}: {g} vs {numeric}"
            );
            let gu = m.derivatives(&up).unwrap().gradient;
            let gd = m.derivatives(&down).unwrap().gradient;
            for b in 0..psi.len() {
                let numeric = (gu[b] - gd[b]) / (2.0 * h);
                let an = der.hessian[(a, b)];
                assert!(
                    (an - numeric).abs() <= 1e-6 * an.abs().max(1.0),
                    "{structure:?} Hessian ({a}, {b}): {an} vs {numeric}"
                );
            }
        }
    }
}

/// The expected information is symmetric and positive definite at an
/// interior point (the optimiser's Fisher step solves with it).
#[test]
fn expected_information_is_symmetric_positive_definite() {
    for structure in [
        Structure::CompoundSymmetry,
        Structure::Autoregressive,
        Structure::Unstructured,
    ] {
        let m = invented(structure);
        let e = m.derivatives(&interior(structure)).unwrap().expected;
        assert!((&e - e.transpose()).amax() <= 1e-12 * e.amax());
        assert!(e.cholesky().is_some(), "{structure:?}");
    }
}

/// The Qₐ_b and Pₐ of the KR matrices agree with the traces in the
/// derivatives: tr(ΦQₐ_b) and tr(ΦPₐ) enter the expected information.
#[test]
fn kr_matrices_agree_with_the_derivatives() {
    let m = invented(Structure::Autoregressive);
    let psi = interior(Structure::Autoregressive);
    let (fe, r) = m.kr_matrices(&psi, &[0, 1]).unwrap();
    let solved = m.solve(&psi).unwrap();
    let sums = m.sums(&psi, &solved);
    for a in 0..2 {
        assert!((&fe.p[a] - &sums.p[a]).amax() <= 1e-12 * sums.p[a].amax());
        for b in 0..2 {
            let t = inner(&fe.phi, &fe.q[a][b]);
            assert!((t - sums.tr_phi_q[(a, b)]).abs() <= 1e-10 * t.abs());
        }
    }
    assert_eq!(r[0][0].amax(), 0.0);
    assert!(r[1][1].amax() > 0.0);
}
