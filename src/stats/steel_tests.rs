//! Unit tests for `stats::steel`.
//!
//! References: tests/reference/dose_ranks.json (U from scipy
//! `mannwhitneyu`; the joint normal p and critical |z| by mpmath quadrature
//! of the product-correlation integral at 30 digits; the exact p in
//! rational arithmetic by inclusion-exclusion, and on tiny designs by
//! enumerating every arrangement), and linear-extensions.md E.3, E.5.

use super::*;
use crate::stats::jonckheere::tests::{close, number, promelas, reference};

fn promelas_steel() -> Steel {
    let data = promelas();
    let treatments: Vec<&[f64]> = data[1..].iter().map(|g| g.as_slice()).collect();
    steel(&data[0], &treatments, Direction::Decrease, 0.05).unwrap()
}

#[test]
fn promelas_counts_and_normal_approximation() {
    let s = promelas_steel();
    let r = &reference()["steel"];
    for (i, pair) in s.pairs.iter().enumerate() {
        assert_eq!(pair.u, number(&r["u"][i]), "U {i}");
        // Closed form in double precision: 1e-12 (measured exact).
        close(pair.z, number(&r["z"][i]), 1e-12, &format!("z {i}"));
        // The ν = ∞ product-correlation integral by the 16-point
        // Gauss-Legendre panels of `dunnett_cdf` against mpmath at 30
        // digits: 1e-10 relative (measured 4.7e-15; critical |z| 5.8e-15).
        close(
            pair.p_normal,
            number(&r["p_normal"][i]),
            1e-10,
            &format!("p normal {i}"),
        );
    }
    close(
        s.critical_z,
        number(&r["critical_z"]),
        1e-10,
        "critical |z|",
    );
}

#[test]
fn promelas_exact_matches_the_rational_values() {
    // The Python rationals rounded once to f64; the positive-term f64 sum
    // here: 1e-13 relative (measured at most 1.1e-14).
    let s = promelas_steel();
    let r = &reference()["steel"];
    assert_eq!(s.exact_skipped, None);
    for (i, pair) in s.pairs.iter().enumerate() {
        let ratio = &r["p_exact_rational"][i];
        let want = number(&ratio[0]) / number(&ratio[1]);
        close(pair.p_exact.unwrap(), want, 1e-13, &format!("exact p {i}"));
    }
}

#[test]
fn promelas_matches_the_printed_values() {
    // linear-extensions.md E.5, 12 significant digits printed (5e-12), and
    // E.3's 7466897/133855722 for a treatment wholly below the control.
    let s = promelas_steel();
    let z = [
        -1.15470053838,
        -1.1616357391,
        -1.73205080757,
        -2.30940107676,
        -2.30940107676,
    ];
    let normal = [
        0.3608776953,
        0.357779490265,
        0.149098680374,
        0.0434241508914,
        0.0434241508914,
    ];
    let exact = [
        0.445977110423,
        0.445977110423,
        0.189605374053,
        0.0557831737668,
        0.0557831737668,
    ];
    for (i, pair) in s.pairs.iter().enumerate() {
        close(pair.z, z[i], 5e-12, "z");
        close(pair.p_normal, normal[i], 5e-12, "normal p");
        close(pair.p_exact.unwrap(), exact[i], 5e-12, "exact p");
    }
    close(
        s.pairs[4].p_exact.unwrap(),
        7466897.0 / 133855722.0,
        1e-14,
        "rational",
    );
    close(s.critical_z, 2.25098164031, 5e-12, "critical |z|");
    // Summary of E.5: the normal approximation declares 256 and 512
    // (LOEC 256 = dose index 3, NOEC 128); the exact test declares none.
    assert_eq!(
        s.finding_normal(),
        Finding::Effect {
            loec: 3,
            noec: Some(2)
        }
    );
    assert_eq!(s.finding(), Finding::NoEffect);
}

#[test]
fn exact_matches_enumeration_on_tiny_designs() {
    // Adjusted p by enumerating every arrangement of the labelled values
    // (Python), including unequal sizes and the increase direction.
    // Rational counts over at most 2520 arrangements: 1e-13 (measured 6e-16).
    let r = reference();
    for case in r["steel_tiny"].as_array().unwrap() {
        let list = |v: &serde_json::Value| -> Vec<f64> {
            v.as_array().unwrap().iter().map(number).collect()
        };
        let control = list(&case["control"]);
        let treatments: Vec<Vec<f64>> = case["treatments"]
            .as_array()
            .unwrap()
            .iter()
            .map(list)
            .collect();
        let slices: Vec<&[f64]> = treatments.iter().map(|t| t.as_slice()).collect();
        let direction = match case["direction"].as_str().unwrap() {
            "increase" => Direction::Increase,
            _ => Direction::Decrease,
        };
        let s = steel(&control, &slices, direction, 0.05).unwrap();
        for (i, pair) in s.pairs.iter().enumerate() {
            let want = number(&case["p_exact"][i]);
            close(
                pair.p_exact.unwrap(),
                want,
                1e-13,
                &format!("{case} pair {i}"),
            );
        }
    }
}

#[test]
fn one_treatment_is_the_exact_mann_whitney_test() {
    // scipy mannwhitneyu(method='exact'): U = 2 with 4 and 4 gives 4/70;
    // and each P.promelas pair alone against scipy's exact p.
    let s = steel(
        &[4.0, 5.0, 7.0, 8.0],
        &[&[1.0, 2.0, 3.0, 6.0]],
        Direction::Decrease,
        0.05,
    )
    .unwrap();
    assert_eq!(s.pairs[0].u, 2.0);
    let r = reference();
    close(
        s.pairs[0].p_exact.unwrap(),
        number(&r["sanity"]["mann_whitney_4_4_u2"]),
        1e-14,
        "scipy",
    );
    let data = promelas();
    for (i, t) in data[1..].iter().enumerate() {
        let alone = steel(&data[0], &[t.as_slice()], Direction::Decrease, 0.05).unwrap();
        let want = number(&r["steel"]["mann_whitney_exact"][i]);
        close(
            alone.pairs[0].p_exact.unwrap(),
            want,
            1e-13,
            &format!("pair {i}"),
        );
    }
}

#[test]
fn five_treatments_wholly_below_the_control() {
    // 1 − E[(1 − V⁴)⁵], V ~ Beta(1, 4), by mpmath quadrature.
    let control = [10.0, 11.0, 12.0, 13.0];
    let low: &[f64] = &[1.0, 2.0, 3.0, 4.0];
    let s = steel(&control, &[low; 5], Direction::Decrease, 0.05).unwrap();
    let want = number(&reference()["sanity"]["five_treatments_u0"]);
    for pair in &s.pairs {
        close(pair.p_exact.unwrap(), want, 1e-13, "Beta(1, 4)");
    }
}

#[test]
fn a_tie_with_the_control_leaves_only_the_normal_approximation() {
    let s = steel(
        &[1.0, 2.0, 3.0],
        &[&[0.5, 2.0], &[0.1, 0.2]],
        Direction::Decrease,
        0.05,
    )
    .unwrap();
    assert!(s.pairs.iter().all(|p| p.p_exact.is_none()));
    assert!(s.exact_skipped.unwrap().contains("equals a control value"));
    assert_eq!(s.pairs[0].u, 1.5);
}

#[test]
fn large_designs_fall_back_with_a_reason() {
    // Control and six treatments of 12: the central cut-off is refused,
    // while a treatment far below the control is still computed exactly.
    let control: Vec<f64> = (0..12).map(|i| 100.0 + i as f64).collect();
    let middle: Vec<f64> = (0..12).map(|i| 94.5 + i as f64).collect();
    let low: Vec<f64> = (0..12).map(|i| i as f64).collect();
    let treatments: Vec<&[f64]> = vec![&middle, &middle, &middle, &middle, &middle, &low];
    let s = steel(&control, &treatments, Direction::Decrease, 0.05).unwrap();
    assert!(s.pairs[0].p_exact.is_none());
    assert!(s.pairs[5].p_exact.is_some());
    let why = s.exact_skipped.unwrap();
    assert!(
        why.contains("treatment(s) 1, 2, 3, 4, 5") && why.contains("cap"),
        "{why}"
    );
}

#[test]
fn bad_input_gives_none() {
    assert!(steel(&[], &[&[1.0]], Direction::Decrease, 0.05).is_none());
    assert!(steel(&[1.0], &[], Direction::Decrease, 0.05).is_none());
    assert!(steel(&[1.0], &[&[]], Direction::Decrease, 0.05).is_none());
    assert!(steel(&[1.0], &[&[f64::INFINITY]], Direction::Decrease, 0.05).is_none());
    assert!(steel(&[1.0], &[&[2.0]], Direction::Decrease, 1.5).is_none());
}
