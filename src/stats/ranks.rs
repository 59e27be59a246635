//! Rank methods: Kruskal-Wallis with the tie correction (Kruskal & Wallis
//! 1952, *JASA* 47:583–621) and Dunn's pairwise test on the joint ranks
//! (Dunn 1964, *Technometrics* 6:241–252); METHODS 3.15.

use super::compare::{Method, Pair, Pairwise, holm};
use super::dist::{chi2_sf, normal_sf};

/// Mid-ranks of all values (1-based), and Σ(t³ − t) over tie groups.
pub fn mid_ranks(values: &[f64]) -> (Vec<f64>, f64) {
    let mut order: Vec<usize> = (0..values.len()).collect();
    order.sort_by(|&a, &b| values[a].total_cmp(&values[b]).then(a.cmp(&b)));
    let mut ranks = vec![0.0; values.len()];
    let mut ties = 0.0;
    let mut i = 0;
    while i < order.len() {
        let mut j = i;
        while j + 1 < order.len() && values[order[j + 1]] == values[order[i]] {
            j += 1;
        }
        let rank = (i + j) as f64 / 2.0 + 1.0;
        for &idx in &order[i..=j] {
            ranks[idx] = rank;
        }
        let t = (j - i + 1) as f64;
        ties += t * t * t - t;
        i = j + 1;
    }
    (ranks, ties)
}

/// The Kruskal-Wallis test and what Dunn's test needs from its ranking.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct KruskalWallis {
    /// Tie-corrected H.
    pub h: f64,
    pub df: f64,
    pub p: f64,
    /// Mean rank of each level.
    pub mean_ranks: Vec<f64>,
    pub n: Vec<usize>,
    /// Σ(t³ − t) over tie groups.
    pub ties: f64,
}

/// Kruskal-Wallis on groups of raw values; `None` when every value is equal.
pub fn kruskal_wallis(groups: &[&[f64]]) -> Option<KruskalWallis> {
    let all: Vec<f64> = groups.iter().flat_map(|g| g.iter().copied()).collect();
    let n_total = all.len() as f64;
    let (ranks, ties) = mid_ranks(&all);
    let correction = 1.0 - ties / (n_total.powi(3) - n_total);
    if !crate::stats::is_positive(correction) || groups.len() < 2 {
        return None;
    }
    let mut offset = 0;
    let mut mean_ranks = Vec::with_capacity(groups.len());
    let mut h = 0.0;
    for g in groups {
        let r: f64 = ranks[offset..offset + g.len()].iter().sum();
        offset += g.len();
        h += r * r / g.len() as f64;
        mean_ranks.push(r / g.len() as f64);
    }
    h = (12.0 / (n_total * (n_total + 1.0)) * h - 3.0 * (n_total + 1.0)) / correction;
    let df = (groups.len() - 1) as f64;
    Some(KruskalWallis {
        h,
        df,
        p: chi2_sf(h, df),
        mean_ranks,
        n: groups.iter().map(|g| g.len()).collect(),
        ties,
    })
}

/// Dunn's test for all pairs, adjusted by Bonferroni (Dunn's original) or Holm.
pub fn dunn(kw: &KruskalWallis, alpha: f64, adjust: Method) -> Pairwise {
    let k = kw.n.len();
    let n_total: f64 = kw.n.iter().sum::<usize>() as f64;
    let variance_unit = n_total * (n_total + 1.0) / 12.0 - kw.ties / (12.0 * (n_total - 1.0));
    let mut pairs = Vec::with_capacity(k * (k - 1) / 2);
    for i in 0..k {
        for j in (i + 1)..k {
            let (a, b) = (j, i);
            let diff = kw.mean_ranks[a] - kw.mean_ranks[b];
            let se = (variance_unit * (1.0 / kw.n[a] as f64 + 1.0 / kw.n[b] as f64)).sqrt();
            let z = diff / se;
            let p = (2.0 * normal_sf(z.abs())).min(1.0);
            pairs.push(Pair::tested(a, b, (diff, se), z, p));
        }
    }
    let m = pairs.len() as f64;
    let adjusted: Vec<f64> = match adjust {
        Method::Holm => holm(&pairs.iter().map(|p| p.p_raw).collect::<Vec<_>>()),
        _ => pairs.iter().map(|p| (p.p_raw * m).min(1.0)).collect(),
    };
    for (p, adj) in pairs.iter_mut().zip(adjusted) {
        p.p_adj = adj;
        p.significant = adj < alpha;
    }
    Pairwise {
        method: Method::Dunn,
        alpha,
        pairs,
        critical: f64::NAN,
    }
}

#[cfg(test)]
#[path = "ranks_tests.rs"]
mod tests;
