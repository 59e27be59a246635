//! Unit tests for `stats::jonckheere`, and the P.promelas fixtures the
//! other rank-based dose-response tests share.
//!
//! References: tests/reference/dose_ranks.json (statsmodels
//! `jonckheere_terpstra`; exact counts from the q-multinomial in Python
//! integers, checked there against enumeration of every arrangement) and
//! the values printed in linear-extensions.md E.5.

use super::*;
use serde_json::Value;

/// The open P.promelas data as groups: control, then 32 … 512 µg/L.
pub(crate) fn promelas() -> Vec<Vec<f64>> {
    let path = format!(
        "{}/tests/data/open/P.promelas.csv",
        env!("CARGO_MANIFEST_DIR")
    );
    let text = std::fs::read_to_string(path).expect("P.promelas.csv");
    let mut groups: Vec<(f64, Vec<f64>)> = Vec::new();
    for line in text.lines().skip(1).filter(|l| !l.trim().is_empty()) {
        let (conc, weight) = line.split_once(',').expect("two columns");
        let (conc, weight): (f64, f64) = (conc.parse().unwrap(), weight.trim().parse().unwrap());
        match groups.iter_mut().find(|g| g.0 == conc) {
            Some(g) => g.1.push(weight),
            None => groups.push((conc, vec![weight])),
        }
    }
    groups.sort_by(|a, b| a.0.total_cmp(&b.0));
    groups.into_iter().map(|g| g.1).collect()
}

pub(crate) fn reference() -> Value {
    let path = format!(
        "{}/tests/reference/dose_ranks.json",
        env!("CARGO_MANIFEST_DIR")
    );
    serde_json::from_str(&std::fs::read_to_string(path).expect("dose_ranks.json")).expect("json")
}

pub(crate) fn number(v: &Value) -> f64 {
    v.as_f64().expect("number")
}

/// Relative difference within `tol` (absolute below 1e-300).
pub(crate) fn close(got: f64, want: f64, tol: f64, what: &str) {
    let err = (got - want).abs() / want.abs().max(1e-300);
    assert!(
        err <= tol,
        "{what}: got {got}, want {want} (relative {err:e})"
    );
}

fn slices(groups: &[Vec<f64>]) -> Vec<&[f64]> {
    groups.iter().map(|g| g.as_slice()).collect()
}

#[test]
fn promelas_matches_statsmodels_at_every_step() {
    // statsmodels jonckheere_terpstra(alternative='smaller') on S_j. Same
    // closed forms in double precision: 1e-10 relative (measured: at most
    // 1.5e-16 for Var and z, 2.1e-15 for the normal p).
    let data = promelas();
    let all = slices(&data);
    let r = reference();
    for step in r["jonckheere"]["steps"].as_array().unwrap() {
        let doses = step["doses"].as_u64().unwrap() as usize;
        let jt = jonckheere(&all[..=doses], Direction::Decrease).unwrap();
        let what = format!("S_{doses}");
        close(jt.j, number(&step["j"]), 1e-10, &format!("{what} J"));
        close(jt.mean, number(&step["mean"]), 1e-10, &format!("{what} E"));
        close(
            jt.variance,
            number(&step["variance"]),
            1e-10,
            &format!("{what} Var"),
        );
        close(jt.z, number(&step["z"]), 1e-10, &format!("{what} z"));
        close(
            jt.p_normal,
            number(&step["p_normal"]),
            1e-10,
            &format!("{what} p"),
        );
        // Exact: the Python value is a ratio of exact integers, rounded
        // once; the f64 convolution adds positive terms only. 1e-12
        // relative (measured: at most 9e-16).
        let exact = jt.p_exact.expect("no ties between groups");
        close(
            exact,
            number(&step["p_exact"]),
            1e-12,
            &format!("{what} exact p"),
        );
    }
}

#[test]
fn promelas_matches_the_printed_values() {
    // linear-extensions.md E.5, printed to 12 significant digits: 5e-12.
    let data = promelas();
    let jt = jonckheere(&slices(&data), Direction::Decrease).unwrap();
    assert_eq!((jt.j, jt.pairs, jt.mean), (36.0, 240.0, 120.0));
    close(jt.variance_untied, 393.333333333, 5e-12, "Var untied");
    close(jt.variance, 393.115942029, 5e-12, "Var tied");
    close(jt.z, -4.23661459491, 5e-12, "z");
    close(jt.p_normal, 1.13457567419e-05, 5e-12, "normal p");
    close(jt.p_exact.unwrap(), 2.80774538741e-06, 5e-12, "exact p");
    // The one tie lies inside the 64 µg/L group: no tie between groups.
    assert!(!jt.ties_between_groups);
    let r = reference();
    close(
        jt.variance_untied,
        number(&r["jonckheere"]["steps"][0]["variance_untied"]),
        1e-12,
        "Var untied (reference)",
    );
}

#[test]
fn exact_distribution_counts_every_arrangement() {
    // Counts by enumerating all arrangements of small designs (Python).
    let r = reference();
    for case in r["jonckheere"]["enumerated"].as_array().unwrap() {
        let sizes: Vec<usize> = case["sizes"]
            .as_array()
            .unwrap()
            .iter()
            .map(|v| v.as_u64().unwrap() as usize)
            .collect();
        let counts: Vec<f64> = case["counts"]
            .as_array()
            .unwrap()
            .iter()
            .map(number)
            .collect();
        let total: f64 = counts.iter().sum();
        let dist = exact_distribution(&sizes).unwrap();
        assert_eq!(dist.len(), counts.len(), "{sizes:?}");
        for (p, c) in dist.iter().zip(&counts) {
            // Probabilities times the total are the integer counts up to
            // rounding: 1e-12 relative (measured 4.4e-16).
            close(p * total, *c, 1e-12, &format!("{sizes:?}"));
        }
    }
}

#[test]
fn mann_whitney_four_and_four() {
    // scipy mannwhitneyu(method='exact'): U ≤ 2 with 4 and 4 is 4/70.
    let r = reference();
    let dist = mann_whitney_distribution(4, 4);
    let p: f64 = dist[..=2].iter().sum();
    close(
        p,
        number(&r["sanity"]["mann_whitney_4_4_u2"]),
        1e-14,
        "scipy",
    );
    close(p, 4.0 / 70.0, 1e-14, "4/70");
}

#[test]
fn increase_is_the_mirror_of_decrease() {
    // Negating the data turns a decrease into an increase: same p.
    let data = promelas();
    let negated: Vec<Vec<f64>> = data
        .iter()
        .map(|g| g.iter().map(|x| -x).collect())
        .collect();
    let down = jonckheere(&slices(&data), Direction::Decrease).unwrap();
    let up = jonckheere(&slices(&negated), Direction::Increase).unwrap();
    assert_eq!(up.j, down.pairs - down.j);
    close(up.p_normal, down.p_normal, 1e-12, "normal p");
    close(up.p_exact.unwrap(), down.p_exact.unwrap(), 1e-12, "exact p");
}

#[test]
fn ties_between_groups_use_the_normal_approximation() {
    let groups: [&[f64]; 3] = [&[1.0, 2.0, 3.0], &[3.0, 4.0], &[5.0, 6.0]];
    let jt = jonckheere(&groups, Direction::Increase).unwrap();
    assert!(jt.ties_between_groups);
    assert_eq!(jt.p_exact, None);
    // One tie (3 in groups 0 and 1) counts one half.
    assert_eq!(jt.j, 15.5);
    assert!(jt.variance < jt.variance_untied);
}

#[test]
fn bad_input_gives_none() {
    assert!(jonckheere(&[&[1.0, 2.0]], Direction::Decrease).is_none());
    assert!(jonckheere(&[&[1.0, 2.0], &[]], Direction::Decrease).is_none());
    assert!(jonckheere(&[&[1.0, f64::NAN], &[2.0]], Direction::Decrease).is_none());
    assert!(jonckheere(&[&[1.0, 1.0], &[1.0]], Direction::Decrease).is_none());
}

#[test]
fn exact_work_is_capped() {
    // Three groups of 300: about 2e9 steps, refused; six of 40 (2.5e8) too.
    assert!(exact_distribution(&[300, 300, 300]).is_none());
    assert!(exact_distribution(&[40; 6]).is_none());
    assert!(exact_distribution(&[35; 6]).is_some());
    assert!(exact_distribution(&[4, 4, 4, 4, 4, 4]).is_some());
}
