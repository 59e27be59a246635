//! The Jonckheere-Terpstra trend test (Terpstra 1952, *Indag. Math.*
//! 14:327–333; Jonckheere 1954, *Biometrika* 41:133–145), one-sided in a
//! dose-response direction (linear-extensions.md E.2).
//!
//! J counts the pairs (a from an earlier group, b from a later one) with
//! a < b, ties counting one half, so a large J means an increase. The
//! normal approximation uses the tie-corrected variance of Hollander &
//! Wolfe (1999) and no continuity correction. Without ties between groups
//! the exact null distribution for continuous data is used as well: J is
//! the sum of independent Mann-Whitney counts of each group against the
//! pooled groups before it (the q-multinomial of MacMahon 1916), convolved
//! here in f64 probabilities, where every step adds positive terms.
//! Ties inside one group do not change J and so leave the exact test valid.

use super::dist::{normal_cdf, normal_sf};
use super::dose::Direction;

/// Work above which the exact distribution is not computed (multiply-adds
/// of the Mann-Whitney recursions and the convolution). Designs this large
/// are far beyond regulated studies, and the normal approximation is then
/// good. Measured in the test build (opt-level 1): P.promelas (six groups
/// of 4) 0.07 ms; six groups of 20 0.03 s, of 30 0.15 s, of 35 (work
/// 1.5e8, the largest equal design under the cap) 0.26 s.
pub const JONCKHEERE_EXACT_WORK_CAP: f64 = 2e8;

/// The Jonckheere-Terpstra test of one ordered set of groups.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Jonckheere {
    /// J in the increasing sense: pairs (earlier < later), ties one half.
    pub j: f64,
    /// Σ_{i<j} nᵢnⱼ, the number of pairs counted.
    pub pairs: f64,
    /// E(J) = pairs / 2.
    pub mean: f64,
    /// Var(J) with the tie correction (equal to the untied one without ties).
    pub variance: f64,
    pub variance_untied: f64,
    /// (J − E)/√Var, increasing sense, no continuity correction.
    pub z: f64,
    /// One-sided p in `direction` by the normal approximation.
    pub p_normal: f64,
    /// One-sided exact p for continuous data; `None` with ties between
    /// groups or beyond [`JONCKHEERE_EXACT_WORK_CAP`].
    pub p_exact: Option<f64>,
    pub ties_between_groups: bool,
}

impl Jonckheere {
    /// The p a decision should use: exact when available.
    pub fn p(&self) -> f64 {
        self.p_exact.unwrap_or(self.p_normal)
    }
}

/// The test on `groups` ordered control first, then doses by increasing
/// dose. Empty groups are skipped. `None` with fewer than two groups with
/// data, a non-finite value, or every value equal (no variance).
pub fn jonckheere(groups: &[&[f64]], direction: Direction) -> Option<Jonckheere> {
    let groups: Vec<&[f64]> = groups.iter().copied().filter(|g| !g.is_empty()).collect();
    if groups.len() < 2 || groups.iter().flat_map(|g| g.iter()).any(|x| !x.is_finite()) {
        return None;
    }
    let sizes: Vec<f64> = groups.iter().map(|g| g.len() as f64).collect();
    let j = count_j(&groups);
    let n = sizes.iter().sum::<f64>();
    let sum_sq = sizes.iter().map(|m| m * m).sum::<f64>();
    let pairs = (n * n - sum_sq) / 2.0;
    let mean = pairs / 2.0;
    let variance_untied = (n * n * (2.0 * n + 3.0)
        - sizes.iter().map(|m| m * m * (2.0 * m + 3.0)).sum::<f64>())
        / 72.0;
    let all: Vec<f64> = groups.iter().flat_map(|g| g.iter().copied()).collect();
    let variance = tied_variance(&sizes, &tie_sizes(&all));
    if !crate::stats::is_positive(variance) {
        return None;
    }
    let z = (j - mean) / variance.sqrt();
    let p_normal = match direction {
        Direction::Decrease => normal_cdf(z),
        Direction::Increase => normal_sf(z),
    };
    let ties_between_groups = ties_between(&groups);
    let p_exact = if ties_between_groups {
        None
    } else {
        let counts: Vec<usize> = groups.iter().map(|g| g.len()).collect();
        exact_distribution(&counts).map(|dist| exact_tail(&dist, j, direction))
    };
    Some(Jonckheere {
        j,
        pairs,
        mean,
        variance,
        variance_untied,
        z,
        p_normal,
        p_exact,
        ties_between_groups,
    })
}

/// J = Σ_{i<j} #{(a, b): a in group i, b in group j, a < b} + ½·#{a = b}.
fn count_j(groups: &[&[f64]]) -> f64 {
    let mut j = 0.0;
    for (i, earlier) in groups.iter().enumerate() {
        for later in &groups[i + 1..] {
            j += pair_count(earlier, later);
        }
    }
    j
}

/// #{(a, b): a < b} + ½·#{a = b}, a from `low`, b from `high`: the
/// Mann-Whitney count of `high` over `low`.
pub(crate) fn pair_count(low: &[f64], high: &[f64]) -> f64 {
    let mut count = 0.0;
    for &a in low {
        for &b in high {
            if a < b {
                count += 1.0;
            } else if a == b {
                count += 0.5;
            }
        }
    }
    count
}

/// Sizes of the groups of equal values among `values` (sizes ≥ 2 only).
fn tie_sizes(values: &[f64]) -> Vec<f64> {
    let mut sorted = values.to_vec();
    sorted.sort_by(f64::total_cmp);
    let mut sizes = Vec::new();
    let mut i = 0;
    while i < sorted.len() {
        let run = sorted[i..].iter().take_while(|&&x| x == sorted[i]).count();
        if run > 1 {
            sizes.push(run as f64);
        }
        i += run;
    }
    sizes
}

/// Var(J) with ties (Hollander & Wolfe 1999, as in linear-extensions.md E.2).
fn tied_variance(sizes: &[f64], ties: &[f64]) -> f64 {
    let n: f64 = sizes.iter().sum();
    let sum = |v: &[f64], f: &dyn Fn(f64) -> f64| v.iter().map(|&x| f(x)).sum::<f64>();
    let first = n * (n - 1.0) * (2.0 * n + 5.0)
        - sum(sizes, &|m| m * (m - 1.0) * (2.0 * m + 5.0))
        - sum(ties, &|t| t * (t - 1.0) * (2.0 * t + 5.0));
    let second = sum(sizes, &|m| m * (m - 1.0) * (m - 2.0))
        * sum(ties, &|t| t * (t - 1.0) * (t - 2.0))
        / (36.0 * n * (n - 1.0) * (n - 2.0));
    let third =
        sum(sizes, &|m| m * (m - 1.0)) * sum(ties, &|t| t * (t - 1.0)) / (8.0 * n * (n - 1.0));
    // With n = 2 the second term is 0/0 but its numerator is always 0.
    first / 72.0 + if second.is_finite() { second } else { 0.0 } + third
}

/// True when a value occurs in two different groups.
fn ties_between(groups: &[&[f64]]) -> bool {
    let mut tagged: Vec<(f64, usize)> = groups
        .iter()
        .enumerate()
        .flat_map(|(g, v)| v.iter().map(move |&x| (x, g)))
        .collect();
    tagged.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
    tagged
        .windows(2)
        .any(|w| w[0].0 == w[1].0 && w[0].1 != w[1].1)
}

/// P(J = j), j = 0…Σ_{i<j} nᵢnⱼ, for continuous data under H₀; `None`
/// beyond [`JONCKHEERE_EXACT_WORK_CAP`].
pub fn exact_distribution(sizes: &[usize]) -> Option<Vec<f64>> {
    let mut work = 0.0;
    let mut before = 0usize;
    let mut length = 1.0;
    for &m in sizes {
        let (a, b) = (m as f64, before as f64);
        work += a * a * b * b / 4.0 + length * (a * b + 1.0);
        length += a * b;
        before += m;
    }
    if work > JONCKHEERE_EXACT_WORK_CAP {
        return None;
    }
    let mut dist = vec![1.0];
    let mut before = 0usize;
    for &m in sizes {
        dist = convolve(&dist, &mann_whitney_distribution(m, before));
        before += m;
    }
    Some(dist)
}

/// P(U = u), u = 0…mn, of the Mann-Whitney count of m values against n
/// (continuous data, H₀). The largest of the m + n values comes from the
/// m-sample with probability m/(m + n) and then exceeds all n others, so
/// P_{m,n}(u) = m/(m+n)·P_{m−1,n}(u − n) + n/(m+n)·P_{m,n−1}(u): positive
/// terms only, no cancellation.
pub fn mann_whitney_distribution(m: usize, n: usize) -> Vec<f64> {
    // current[i] holds P_{i, c} for the column c reached so far.
    let mut current: Vec<Vec<f64>> = vec![vec![1.0]; m + 1];
    for c in 1..=n {
        for i in 1..=m {
            let (wi, wc) = (i as f64 / (i + c) as f64, c as f64 / (i + c) as f64);
            let mut next = vec![0.0; i * c + 1];
            for (u, &p) in current[i].iter().enumerate() {
                next[u] += wc * p;
            }
            for (u, &p) in current[i - 1].iter().enumerate() {
                next[u + c] += wi * p;
            }
            current[i] = next;
        }
    }
    current.swap_remove(m)
}

fn convolve(a: &[f64], b: &[f64]) -> Vec<f64> {
    let mut out = vec![0.0; a.len() + b.len() - 1];
    for (i, &x) in a.iter().enumerate() {
        for (j, &y) in b.iter().enumerate() {
            out[i + j] += x * y;
        }
    }
    out
}

/// P(J ≤ j) for a decrease, P(J ≥ j) for an increase, summed from the
/// far end of the tail (smallest terms first).
fn exact_tail(dist: &[f64], j: f64, direction: Direction) -> f64 {
    let j = j.round() as usize;
    let tail: f64 = match direction {
        Direction::Decrease => dist[..=j.min(dist.len() - 1)].iter().sum(),
        Direction::Increase => dist[j.min(dist.len())..].iter().rev().sum(),
    };
    tail.min(1.0)
}

#[cfg(test)]
#[path = "jonckheere_tests.rs"]
pub(crate) mod tests;
