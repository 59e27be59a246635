//! Fixed-effects linear models with categorical factors: design matrices in
//! sum-to-zero coding, least squares by Householder QR (never the normal
//! equations, which square the condition number; METHODS 2.2 N3), and
//! Type I, II and III sums of squares by model comparison (METHODS 3.3).
//!
//! The kernel is small and written here rather than taken from a linear
//! algebra crate: it needs column-by-column rank detection in term order
//! (so aliased columns are dropped and counted per term), and nothing else.

use super::sum::neumaier;

/// A model term: the indices of the variables it crosses. Factors come
/// first (index < number of factors); a covariate (a numeric column that
/// enters as a straight line) is numbered after them, so `[g, x]` with x a
/// covariate is the term whose columns are g's effect codes times x: one
/// slope per level of g.
pub type TermFactors = Vec<usize>;

/// The observations of a factorial layout: per row, each factor's level index.
#[derive(Debug, Clone, PartialEq)]
pub struct Layout {
    /// Number of levels of each factor.
    pub levels: Vec<usize>,
    /// `rows[i][f]` is the level of factor f in observation i.
    pub rows: Vec<Vec<usize>>,
}

/// Sum-to-zero (effect) coding of one factor's level: L − 1 values,
/// cₗ = 1[level = l] − 1[level = L − 1].
fn effect_code(level: usize, n_levels: usize) -> impl Iterator<Item = f64> {
    (0..n_levels - 1).map(move |l| {
        if level == l {
            1.0
        } else if level == n_levels - 1 {
            -1.0
        } else {
            0.0
        }
    })
}

/// The design columns of one term for one observation: the products of its
/// factors' effect codes, first factor varying slowest.
pub fn term_row(term: &[usize], levels: &[usize], row: &[usize]) -> Vec<f64> {
    term_row_with(term, levels, row, &[])
}

/// As [`term_row`], with the observation's covariate values (centred);
/// covariate `c` is variable `levels.len() + c`. A covariate not given is
/// held at 0, its centred mean, as reference grids hold it.
pub fn term_row_with(term: &[usize], levels: &[usize], row: &[usize], numbers: &[f64]) -> Vec<f64> {
    let mut out = vec![1.0];
    for &f in term {
        if f >= levels.len() {
            let x = numbers.get(f - levels.len()).copied().unwrap_or(0.0);
            out.iter_mut().for_each(|a| *a *= x);
            continue;
        }
        let codes: Vec<f64> = effect_code(row[f], levels[f]).collect();
        out = out
            .iter()
            .flat_map(|a| codes.iter().map(move |c| a * c))
            .collect();
    }
    out
}

/// Number of design columns a term contributes before aliasing (a
/// covariate multiplies by one).
pub fn term_width(term: &[usize], levels: &[usize]) -> usize {
    term.iter()
        .map(|&f| levels.get(f).map_or(1, |l| l - 1))
        .product()
}

/// The full design row (intercept, then every term in order).
pub fn design_row(terms: &[TermFactors], levels: &[usize], row: &[usize]) -> Vec<f64> {
    design_row_with(terms, levels, row, &[])
}

/// As [`design_row`], with the observation's centred covariate values.
pub fn design_row_with(
    terms: &[TermFactors],
    levels: &[usize],
    row: &[usize],
    numbers: &[f64],
) -> Vec<f64> {
    let mut out = vec![1.0];
    for t in terms {
        out.extend(term_row_with(t, levels, row, numbers));
    }
    out
}

/// Column index ranges of each term in the full design (after the intercept).
pub fn term_columns(terms: &[TermFactors], levels: &[usize]) -> Vec<std::ops::Range<usize>> {
    let mut start = 1;
    terms
        .iter()
        .map(|t| {
            let w = term_width(t, levels);
            let r = start..start + w;
            start += w;
            r
        })
        .collect()
}

/// A least-squares fit of y on chosen columns of a design matrix.
#[derive(Debug, Clone)]
pub struct Fit {
    /// For each requested column: kept (estimable) or dropped as aliased.
    pub kept: Vec<bool>,
    pub rank: usize,
    /// Residual sum of squares.
    pub rss: f64,
    /// Qᵀy for the kept columns, in order: the Type I contributions.
    pub effects: Vec<f64>,
    /// Upper-triangular R of the kept columns, row-major rank × rank.
    pub r: Vec<Vec<f64>>,
}

/// A column is aliased when what it adds beyond the earlier columns is below
/// this fraction of its own norm (about 1e-9 of a radian from their span).
const ALIAS_TOL: f64 = 1e-9;

/// Householder QR of the given columns (column-major), in order, dropping
/// columns that are linear combinations of earlier ones.
pub fn fit(columns: &[Vec<f64>], y: &[f64]) -> Fit {
    let n = y.len();
    let mut a: Vec<Vec<f64>> = columns.to_vec();
    let mut qty = y.to_vec();
    let mut kept = vec![false; columns.len()];
    let mut r_cols: Vec<Vec<f64>> = Vec::new();
    let mut effects = Vec::new();
    let mut k = 0;
    for j in 0..a.len() {
        let original = neumaier(columns[j].iter().map(|v| v * v)).sqrt();
        let rest = neumaier(a[j][k..].iter().map(|v| v * v)).sqrt();
        if k >= n || original == 0.0 || rest <= ALIAS_TOL * original {
            continue;
        }
        // Reflector v = x + sign(x₀)‖x‖e₀ over rows k..n.
        let alpha = if a[j][k] >= 0.0 { -rest } else { rest };
        let mut v: Vec<f64> = a[j][k..].to_vec();
        v[0] -= alpha;
        let vnorm2 = neumaier(v.iter().map(|x| x * x));
        let apply = |target: &mut [f64]| {
            let dot = neumaier(v.iter().zip(&target[k..]).map(|(a, b)| a * b));
            let scale = 2.0 * dot / vnorm2;
            for (t, vi) in target[k..].iter_mut().zip(&v) {
                *t -= scale * vi;
            }
        };
        for later in a.iter_mut().skip(j + 1) {
            apply(later);
        }
        apply(&mut qty);
        let mut rcol: Vec<f64> = a[j][..k].to_vec();
        rcol.push(alpha);
        r_cols.push(rcol);
        effects.push(qty[k]);
        kept[j] = true;
        k += 1;
    }
    let rss = neumaier(qty[k..].iter().map(|v| v * v));
    // R row-major from its columns.
    let mut r = vec![vec![0.0; k]; k];
    for (j, col) in r_cols.iter().enumerate() {
        for (i, v) in col.iter().enumerate() {
            r[i][j] = *v;
        }
    }
    Fit {
        kept,
        rank: k,
        rss,
        effects,
        r,
    }
}

impl Fit {
    /// Coefficients of the kept columns (back-substitution R b = Qᵀy).
    pub fn coefficients(&self) -> Vec<f64> {
        let k = self.rank;
        let mut b = vec![0.0; k];
        for i in (0..k).rev() {
            let s = neumaier((i + 1..k).map(|j| self.r[i][j] * b[j]));
            b[i] = (self.effects[i] - s) / self.r[i][i];
        }
        b
    }

    /// (XᵀX)⁻¹ of the kept columns, as R⁻¹R⁻ᵀ.
    #[allow(clippy::needless_range_loop)] // triangular index loops read best as such
    pub fn unscaled_covariance(&self) -> Vec<Vec<f64>> {
        let k = self.rank;
        // R⁻¹ by back-substitution, column by column.
        let mut inv = vec![vec![0.0; k]; k];
        for c in 0..k {
            for i in (0..=c).rev() {
                let rhs = if i == c { 1.0 } else { 0.0 };
                let s = neumaier((i + 1..=c).map(|j| self.r[i][j] * inv[j][c]));
                inv[i][c] = (rhs - s) / self.r[i][i];
            }
        }
        let mut cov = vec![vec![0.0; k]; k];
        for i in 0..k {
            for j in 0..k {
                cov[i][j] = neumaier((i.max(j)..k).map(|m| inv[i][m] * inv[j][m]));
            }
        }
        cov
    }
}

/// The sums-of-squares type.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum SsType {
    /// Sequential, in model order.
    I,
    /// Each term adjusted for every term that does not contain it.
    II,
    /// Each term adjusted for all others (sum-to-zero coding).
    III,
}

/// One row of a factorial ANOVA table.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct TermSs {
    pub df: usize,
    pub ss: f64,
}

/// Sums of squares of every term under one type, plus the full model's RSS
/// and rank.
#[derive(Debug, Clone, PartialEq)]
pub struct SsTable {
    pub terms: Vec<TermSs>,
    pub rss: f64,
    pub rank: usize,
}

fn columns_for(design: &[Vec<f64>], chosen: impl Iterator<Item = usize>) -> Vec<Vec<f64>> {
    chosen.map(|c| design[c].clone()).collect()
}

/// True when term `outer` contains term `inner` (a superset of its factors).
pub fn contains(outer: &[usize], inner: &[usize]) -> bool {
    outer.len() > inner.len() && inner.iter().all(|f| outer.contains(f))
}

/// Sums of squares of each term by the chosen type. `design` is column-major
/// (intercept first, then the terms' columns as laid out by `term_columns`).
pub fn sums_of_squares(
    design: &[Vec<f64>],
    y: &[f64],
    terms: &[TermFactors],
    ranges: &[std::ops::Range<usize>],
    ss_type: SsType,
) -> SsTable {
    let all = fit(design, y);
    let rss_of = |included: &dyn Fn(usize) -> bool| -> (f64, usize) {
        let cols: Vec<usize> = std::iter::once(0)
            .chain(
                ranges
                    .iter()
                    .enumerate()
                    .filter(|(t, _)| included(*t))
                    .flat_map(|(_, r)| r.clone()),
            )
            .collect();
        let f = fit(&columns_for(design, cols.into_iter()), y);
        (f.rss, f.rank)
    };
    let terms_ss = match ss_type {
        SsType::I => {
            // Sequential: the squared effects of each term's kept columns.
            let mut pos = usize::from(all.kept[0]);
            ranges
                .iter()
                .map(|r| {
                    let mut ss = 0.0;
                    let mut df = 0;
                    for c in r.clone() {
                        if all.kept[c] {
                            ss += all.effects[pos] * all.effects[pos];
                            pos += 1;
                            df += 1;
                        }
                    }
                    TermSs { df, ss }
                })
                .collect()
        }
        SsType::II => (0..terms.len())
            .map(|t| {
                let base = |u: usize| u != t && !contains(&terms[u], &terms[t]);
                let (rss_without, rank_without) = rss_of(&base);
                let (rss_with, rank_with) = rss_of(&|u| base(u) || u == t);
                TermSs {
                    df: rank_with - rank_without,
                    ss: (rss_without - rss_with).max(0.0),
                }
            })
            .collect(),
        SsType::III => (0..terms.len())
            .map(|t| {
                let (rss_without, rank_without) = rss_of(&|u| u != t);
                TermSs {
                    df: all.rank - rank_without,
                    ss: (rss_without - all.rss).max(0.0),
                }
            })
            .collect(),
    };
    SsTable {
        terms: terms_ss,
        rss: all.rss,
        rank: all.rank,
    }
}

/// The average design row over the reference grid: every combination of
/// the factors' levels, with the factors in `fixed` held at the given level
/// (equal weights, as for estimated marginal means). Covariates are held
/// at their means (0 after centring), so these are also the means adjusted
/// for them.
pub fn grid_average(terms: &[TermFactors], levels: &[usize], fixed: &[Option<usize>]) -> Vec<f64> {
    grid_average_with(terms, levels, fixed, &[])
}

/// As [`grid_average`], with the centred covariates at `numbers` instead
/// of 0 (a group's line at another covariate value).
pub fn grid_average_with(
    terms: &[TermFactors],
    levels: &[usize],
    fixed: &[Option<usize>],
    numbers: &[f64],
) -> Vec<f64> {
    let mut combo = vec![0usize; levels.len()];
    for (f, v) in fixed.iter().enumerate() {
        if let Some(v) = v {
            combo[f] = *v;
        }
    }
    let mut sum: Vec<f64> = Vec::new();
    let mut count = 0usize;
    loop {
        let row = design_row_with(terms, levels, &combo, numbers);
        if sum.is_empty() {
            sum = row;
        } else {
            for (s, r) in sum.iter_mut().zip(&row) {
                *s += r;
            }
        }
        count += 1;
        // Next combination of the free factors (odometer order).
        let mut f = levels.len();
        loop {
            if f == 0 {
                return sum.into_iter().map(|v| v / count as f64).collect();
            }
            f -= 1;
            if fixed[f].is_some() {
                continue;
            }
            combo[f] += 1;
            if combo[f] < levels[f] {
                break;
            }
            combo[f] = 0;
        }
    }
}

impl Fit {
    /// Lᵀb and Lᵀ(XᵀX)⁻¹L for a linear function L over the design columns;
    /// `None` when the design is rank-deficient, where such functions may not
    /// be estimable (sheaf then refuses rather than print a number that
    /// depends on the coding).
    pub fn estimate(
        &self,
        l: &[f64],
        cov: &[Vec<f64>],
        coefficients: &[f64],
    ) -> Option<(f64, f64)> {
        if self.kept.iter().any(|k| !k) || l.len() != self.kept.len() {
            return None;
        }
        let value = neumaier(l.iter().zip(coefficients).map(|(a, b)| a * b));
        let mut var = 0.0;
        for i in 0..l.len() {
            var += l[i] * neumaier((0..l.len()).map(|j| cov[i][j] * l[j]));
        }
        Some((value, var))
    }
}

/// Column-major design matrix of a layout.
pub fn design_matrix(layout: &Layout, terms: &[TermFactors]) -> Vec<Vec<f64>> {
    design_matrix_with(layout, &[], terms)
}

/// Column-major design matrix of a layout whose row i has the centred
/// covariate values `numbers[i]` (none when `numbers` is empty).
pub fn design_matrix_with(
    layout: &Layout,
    numbers: &[Vec<f64>],
    terms: &[TermFactors],
) -> Vec<Vec<f64>> {
    let rows: Vec<Vec<f64>> = layout
        .rows
        .iter()
        .enumerate()
        .map(|(i, r)| {
            let x = numbers.get(i).map_or(&[][..], |v| &v[..]);
            design_row_with(terms, &layout.levels, r, x)
        })
        .collect();
    let p = rows.first().map_or(1, Vec::len);
    (0..p)
        .map(|j| rows.iter().map(|r| r[j]).collect())
        .collect()
}

#[cfg(test)]
#[path = "linear_tests.rs"]
mod tests;
