//! Friedman's test for one treatment factor in complete blocks (Friedman
//! 1937, *JASA* 32:675–701; Hollander & Wolfe 1999, *Nonparametric
//! Statistical Methods*, 2nd ed., §7.1; Conover 1999, *Practical
//! Nonparametric Statistics*, 3rd ed., §5.8), Kendall's coefficient of
//! concordance, and two rank post hoc procedures of the same family: the
//! Wilcoxon-Nemenyi-McDonald-Thompson comparison of rank sums (Hollander &
//! Wolfe §7.3, simultaneous, studentized range at ∞ df) and Conover's
//! t-based comparison (Conover §5.8, per pair).

use super::compare::{Method, Pair, Pairwise};
use super::dist::{chi2_sf, normal_sf, t_isf, t_sf};
use super::ptukey::{ptukey_sf, qtukey_isf};
use super::ranks::mid_ranks;

/// Friedman's test on a complete table, with what its post hoc
/// procedures need.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Friedman {
    /// χ² corrected for ties within blocks (equal to the uncorrected one
    /// without ties).
    pub chi_sq: f64,
    /// χ² without the tie correction: 12/(bk(k+1)) ΣRⱼ² − 3b(k+1).
    pub chi_sq_uncorrected: f64,
    /// k − 1.
    pub df: f64,
    /// P(χ²(k − 1) > chi_sq).
    pub p: f64,
    /// Kendall's W = χ²/(b(k − 1)), with χ² tie-corrected: Kendall's
    /// coefficient of concordance with his correction for ties.
    pub kendall_w: f64,
    /// b, the number of blocks.
    pub blocks: usize,
    /// Each level's rank sum Rⱼ over the blocks.
    pub rank_sums: Vec<f64>,
    /// Rⱼ / b.
    pub mean_ranks: Vec<f64>,
    /// Σ over blocks of Σ(t³ − t) over each block's tie groups.
    pub ties: f64,
    /// The divisor of the tie correction, 1 − ties/(b(k³ − k)); 1 without ties.
    pub tie_correction: f64,
    /// Σ of every squared within-block rank (Conover's A₁).
    pub sum_sq_ranks: f64,
}

impl Friedman {
    /// k, the number of levels.
    pub fn levels(&self) -> usize {
        self.rank_sums.len()
    }

    /// True when some block has tied values.
    pub fn has_ties(&self) -> bool {
        self.ties > 0.0
    }
}

/// Why Friedman's test cannot be computed.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum FriedmanError {
    /// Fewer than two blocks.
    TooFewBlocks(usize),
    /// Fewer than two levels.
    TooFewLevels(usize),
    /// Block `index` does not hold one value per level.
    Ragged(usize),
    /// Every block is tied throughout: the ranks carry no information.
    AllTied,
}

/// Friedman's test on `table[block][level]`: every block holds one value
/// for every level (a complete block design, one observation per cell).
/// Values are ranked within each block, ties sharing their mid-rank.
pub fn friedman(table: &[Vec<f64>]) -> Result<Friedman, FriedmanError> {
    let b = table.len();
    if b < 2 {
        return Err(FriedmanError::TooFewBlocks(b));
    }
    let k = table[0].len();
    if k < 2 {
        return Err(FriedmanError::TooFewLevels(k));
    }
    if let Some(i) = table.iter().position(|row| row.len() != k) {
        return Err(FriedmanError::Ragged(i));
    }
    let mut rank_sums = vec![0.0; k];
    let (mut ties, mut sum_sq_ranks) = (0.0, 0.0);
    for row in table {
        let (ranks, t) = mid_ranks(row);
        ties += t;
        for (sum, r) in rank_sums.iter_mut().zip(&ranks) {
            *sum += r;
            sum_sq_ranks += r * r;
        }
    }
    let (bf, kf) = (b as f64, k as f64);
    let tie_correction = 1.0 - ties / (bf * (kf * kf * kf - kf));
    if !super::is_positive(tie_correction) {
        return Err(FriedmanError::AllTied);
    }
    // Σ(Rⱼ − b(k+1)/2)², the spread of the rank sums about their
    // expectation, summed exactly as deviations (no cancellation).
    let expected = bf * (kf + 1.0) / 2.0;
    let spread: f64 = rank_sums.iter().map(|r| (r - expected).powi(2)).sum();
    let chi_sq_uncorrected = 12.0 * spread / (bf * kf * (kf + 1.0));
    let chi_sq = chi_sq_uncorrected / tie_correction;
    let df = kf - 1.0;
    Ok(Friedman {
        chi_sq,
        chi_sq_uncorrected,
        df,
        p: chi2_sf(chi_sq, df),
        kendall_w: chi_sq / (bf * df),
        blocks: b,
        mean_ranks: rank_sums.iter().map(|r| r / bf).collect(),
        rank_sums,
        ties,
        tie_correction,
        sum_sq_ranks,
    })
}

/// All pairs (j, i) for i < j, by the Wilcoxon-Nemenyi-McDonald-Thompson
/// procedure (Hollander & Wolfe 1999 §7.3, large-sample form): levels u
/// and v differ when |R_u − R_v| ≥ q(α; k, ∞)·√(bk(k+1)/12). Each pair's
/// `diff` is the difference in mean ranks, `se` its standard error
/// √(k(k+1)/(6b)) under the null hypothesis (no tie correction, as the
/// procedure is defined), `statistic` the studentized range
/// q = √2·|diff|/se and `p_adj` P(Q > q) for k means at ∞ df: simultaneous
/// over all pairs. No intervals: a rank difference estimates no parameter.
pub fn nemenyi(f: &Friedman, alpha: f64) -> Pairwise {
    let k = f.levels();
    let (bf, kf) = (f.blocks as f64, k as f64);
    let se = (kf * (kf + 1.0) / (6.0 * bf)).sqrt();
    let mut pairs = Vec::with_capacity(k * (k - 1) / 2);
    for i in 0..k {
        for j in (i + 1)..k {
            let (a, b) = (j, i);
            let diff = f.mean_ranks[a] - f.mean_ranks[b];
            let z = diff / se;
            let q = std::f64::consts::SQRT_2 * z.abs();
            let p_raw = (2.0 * normal_sf(z.abs())).min(1.0);
            let mut pair = Pair::tested(a, b, (diff, se), q, p_raw);
            pair.p_adj = ptukey_sf(q, k, f64::INFINITY).min(1.0);
            pair.significant = pair.p_adj < alpha;
            pairs.push(pair);
        }
    }
    Pairwise {
        method: Method::Nemenyi,
        alpha,
        pairs,
        critical: qtukey_isf(alpha, k, f64::INFINITY),
    }
}

/// All pairs (j, i) for i < j, by Conover's (1999 §5.8) t-based
/// comparison: t = |R_u − R_v| / √(2(bA₁ − ΣRⱼ²)/((b − 1)(k − 1))) on
/// (b − 1)(k − 1) df, with A₁ the sum of the squared within-block ranks
/// (ties included). `diff` is the difference in rank sums and `se` its
/// standard error; `p_adj` equals the per-pair p (Conover's procedure
/// tests each pair at α once Friedman's test has rejected). The critical
/// value is t at 1 − α/2. `None` when the ranks leave no residual spread
/// (every block ranks the levels identically).
pub fn conover(f: &Friedman, alpha: f64) -> Option<Pairwise> {
    let k = f.levels();
    let (bf, kf) = (f.blocks as f64, k as f64);
    let df = (bf - 1.0) * (kf - 1.0);
    let sum_sq_rank_sums: f64 = f.rank_sums.iter().map(|r| r * r).sum();
    let residual = bf * f.sum_sq_ranks - sum_sq_rank_sums;
    if !super::is_positive(residual) {
        return None;
    }
    let se = (2.0 * residual / df).sqrt();
    let mut pairs = Vec::with_capacity(k * (k - 1) / 2);
    for i in 0..k {
        for j in (i + 1)..k {
            let (a, b) = (j, i);
            let diff = f.rank_sums[a] - f.rank_sums[b];
            let t = diff / se;
            let p = (2.0 * t_sf(t.abs(), df)).min(1.0);
            let mut pair = Pair::tested(a, b, (diff, se), t, p);
            pair.significant = p < alpha;
            pairs.push(pair);
        }
    }
    Some(Pairwise {
        method: Method::ConoverFriedman,
        alpha,
        pairs,
        critical: t_isf(alpha / 2.0, df),
    })
}

#[cfg(test)]
#[path = "friedman_tests.rs"]
mod tests;
