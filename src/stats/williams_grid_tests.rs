//! Unit tests for `stats::williams_grid`.

use super::*;

/// The times at which the running means of the doses, taken from the top
/// dose down, are W(1/Rᵤ) (no control): Rᵤ the replication of doses u…k.
fn running_mean_times(ns: &[usize]) -> Vec<f64> {
    let mut total = 0.0;
    let mut times: Vec<f64> = ns
        .iter()
        .rev()
        .map(|&r| {
            total += r as f64;
            1.0 / total
        })
        .collect();
    times.reverse();
    times
}

#[test]
fn equal_steps_reproduce_spitzer() {
    // tests/reference/williams.json: Spitzer's Pₖ(y) in mpmath at 40 digits.
    // The sweep's panels converge geometrically; 1e-13 leaves room for
    // rounding over a few thousand nodes.
    let reference: serde_json::Value =
        serde_json::from_str(include_str!("../../tests/reference/williams.json")).unwrap();
    for case in reference["spitzer"].as_array().unwrap() {
        let k = case["doses"].as_u64().unwrap() as usize;
        let y = case["y"].as_f64().unwrap();
        let want = case["p"].as_f64().unwrap();
        let got = BrownianMaximum::new(&running_mean_times(&vec![1; k])).cdf(y);
        assert!((got - want).abs() < 1e-13, "k {k} y {y}: {got} vs {want}");
    }
}

#[test]
fn sparre_andersen_at_zero() {
    // P(every partial sum of k symmetric continuous steps ≤ 0) =
    // C(2k, k)/4ᵏ (Sparre Andersen 1954; Feller vol. II, XII.7), for any
    // step sizes of one law: here 3 replicates per dose.
    let mut central = 1.0;
    for k in 1..=12usize {
        central *= (2 * k - 1) as f64 / (2 * k) as f64;
        let got = BrownianMaximum::new(&running_mean_times(&vec![3; k])).cdf(0.0);
        assert!((got - central).abs() < 1e-13, "k {k}: {got} vs {central}");
    }
}

#[test]
fn unequal_steps_against_the_forward_grid() {
    // tests/reference/williams.json: the specification's uniform forward
    // grid with Richardson extrapolation (error estimate below 3e-14).
    let reference: serde_json::Value =
        serde_json::from_str(include_str!("../../tests/reference/williams.json")).unwrap();
    for case in reference["unequal_running_means"].as_array().unwrap() {
        let ns: Vec<usize> = case["ns"]
            .as_array()
            .unwrap()
            .iter()
            .map(|n| n.as_u64().unwrap() as usize)
            .collect();
        let x = case["x"].as_f64().unwrap();
        let want = case["p"].as_f64().unwrap();
        let got = BrownianMaximum::new(&running_mean_times(&ns)).cdf(x);
        assert!((got - want).abs() < 1e-11, "{ns:?}: {got} vs {want}");
    }
}

#[test]
fn one_time_is_a_normal_cdf() {
    let single = BrownianMaximum::new(&[2.25]);
    for y in [-2.0, 0.0, 0.4, 3.0] {
        let want = crate::stats::dist::normal_cdf(y / 1.5);
        assert!((single.cdf(y) - want).abs() < 1e-15);
    }
}

#[test]
fn williams_times_end_at_one() {
    // c = 5, doses (4, 4, 3): τᵤ = (1/5 + 1/Rᵤ)/(1/5 + 1/3), R = 11, 7, 3.
    let times = williams_times(5, &[4, 4, 3]);
    let scale = 0.2 + 1.0 / 3.0;
    let want = [(0.2 + 1.0 / 11.0) / scale, (0.2 + 1.0 / 7.0) / scale, 1.0];
    for (t, w) in times.iter().zip(want) {
        assert!((t - w).abs() < 1e-15);
    }
}
