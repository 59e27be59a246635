//! Planned contrasts, whatever the engine: the engine tests any weighing of
//! one factor's level means ([`ContrastTests`]: a fixed-effects model from
//! the means' covariance on the pooled error's df, a mixed model each
//! contrast with its own SE and df); this weighs them as the document asks,
//! tests each contrast, adjusts the set when asked, checks orthogonality
//! and tests the set jointly.

use crate::diag::Diagnostic;
use crate::doc::Document;
use crate::doc::block::{AnovaSpec, DdfMethod};
use crate::doc::block_contrasts::{ContrastAdjust, ContrastSpec};
use crate::outcome::contrasts::{ContrastDetail, PlannedContrast};
use crate::outcome::covariates::FTest;
use crate::stats::dist::{f_isf, f_sf, t_isf, t_sf};
use crate::stats::sum::neumaier;

/// A contrast's estimate with its SE and df.
pub(crate) struct Tested {
    pub estimate: f64,
    pub se: f64,
    pub df: f64,
}

/// How an engine tests contrasts among one factor's level means.
pub(crate) trait ContrastTests {
    fn factor(&self) -> &str;
    fn labels(&self) -> &[String];
    /// Σ wᵢ·meanᵢ with its SE and df (`None` where not estimable).
    fn test(&self, weights: &[f64]) -> Option<Tested>;
    /// The covariance of two contrasts under the model.
    fn covariance(&self, a: &[f64], b: &[f64]) -> f64;
    /// All contrasts at once (`None` for a dependent set).
    fn joint(&self, rows: &[Vec<f64>]) -> Option<FTest>;
    /// The df method when each contrast has its own SE and df (a mixed
    /// model); `None` for the pooled error.
    fn own_df(&self) -> Option<DdfMethod>;
}

/// One factor's level means and what the contrasts need from the model.
pub(crate) struct LevelMeans<'a> {
    pub factor: &'a str,
    pub labels: &'a [String],
    pub means: Vec<f64>,
    /// Covariance of the means, in squared response units.
    pub covariance: Vec<Vec<f64>>,
    pub df: f64,
}

impl ContrastTests for LevelMeans<'_> {
    fn factor(&self) -> &str {
        self.factor
    }

    fn labels(&self) -> &[String] {
        self.labels
    }

    fn test(&self, w: &[f64]) -> Option<Tested> {
        Some(Tested {
            estimate: neumaier(w.iter().zip(&self.means).map(|(a, b)| a * b)),
            se: quadratic(w, &self.covariance, w).sqrt(),
            df: self.df,
        })
    }

    fn covariance(&self, a: &[f64], b: &[f64]) -> f64 {
        quadratic(a, &self.covariance, b)
    }

    fn joint(&self, rows: &[Vec<f64>]) -> Option<FTest> {
        joint_test(rows, self)
    }

    fn own_df(&self) -> Option<DdfMethod> {
        None
    }
}

/// Whether a level as a contrast writes it (`1`, or `N=1` naming the
/// factor) is `label` of `factor`.
fn names(written: &str, factor: &str, label: &str) -> bool {
    written == label
        || written
            .split_once('=')
            .is_some_and(|(f, l)| f.trim() == factor && l.trim() == label)
}

/// The factor whose levels the first contrast names: the one its
/// `factor=level` items name, else the only one holding every level.
/// `Err` lists the factors when several hold them.
fn factor_of<'a>(
    spec: &AnovaSpec,
    factors: &'a [(String, Vec<String>)],
) -> Result<Option<&'a (String, Vec<String>)>, Vec<&'a str>> {
    let Some(first) = spec.contrasts.first() else {
        return Ok(None);
    };
    let holding: Vec<&(String, Vec<String>)> = factors
        .iter()
        .filter(|(f, levels)| {
            first
                .weights
                .iter()
                .all(|(l, _)| levels.iter().any(|x| names(l, f, x)))
        })
        .collect();
    match holding[..] {
        [] => Ok(None),
        [one] => Ok(Some(one)),
        _ => Err(holding.iter().map(|(f, _)| f.as_str()).collect()),
    }
}

/// The treatment factor (of `candidates`, each with its levels) whose
/// levels the block's contrasts weigh; `None` without contrasts.
pub(crate) fn contrast_factor(
    doc: &Document,
    spec: &AnovaSpec,
    candidates: &[(String, Vec<String>)],
) -> Result<Option<String>, Diagnostic> {
    let Some(first) = spec.contrasts.first() else {
        return Ok(None);
    };
    match factor_of(spec, candidates) {
        Ok(Some((name, _))) => Ok(Some(name.clone())),
        Ok(None) => Err(doc
            .error_at(first.line, Some(first.column), format!("no treatment factor has every level `{}` names", first.name))
            .hint("a contrast weighs the levels of one treatment factor; check the spelling of the levels")),
        Err(several) => Err(doc
            .error_at(
                first.line,
                Some(first.column),
                format!(
                    "the levels of `{}` belong to several factors ({})",
                    first.name,
                    several.join(", ")
                ),
            )
            .hint(format!(
                "name the factor with each level, e.g. `{}={}`",
                several[0], first.weights[0].0
            ))),
    }
}

fn weights_over(c: &ContrastSpec, factor: &str, labels: &[String]) -> Vec<f64> {
    labels
        .iter()
        .map(|l| {
            c.weights
                .iter()
                .find(|(n, _)| names(n, factor, l))
                .map_or(0.0, |w| w.1)
        })
        .collect()
}

fn quadratic(a: &[f64], v: &[Vec<f64>], b: &[f64]) -> f64 {
    neumaier(
        a.iter()
            .zip(v)
            .map(|(ai, row)| ai * neumaier(row.iter().zip(b).map(|(x, y)| x * y))),
    )
}

/// Refuses a level a contrast names that the factor does not have.
fn check_levels(doc: &Document, spec: &AnovaSpec, m: &dyn ContrastTests) -> Result<(), Diagnostic> {
    let (factor, labels) = (m.factor(), m.labels());
    for c in &spec.contrasts {
        let known = |l: &str| labels.iter().any(|x| names(l, factor, x));
        if let Some((l, _)) = c.weights.iter().find(|(l, _)| !known(l)) {
            return Err(doc
                .error_at(c.line, Some(c.column), format!("`{l}` in `{}` is not a level of `{factor}`", c.name))
                .hint(format!("the levels of `{factor}` are {}; all of a block's contrasts weigh the levels of one factor", labels.join(", "))));
        }
    }
    Ok(())
}

/// The contrasts of a block, or `None` when it declares none.
pub(crate) fn planned(
    doc: &Document,
    spec: &AnovaSpec,
    m: &dyn ContrastTests,
    alpha: f64,
) -> Result<Option<ContrastDetail>, Diagnostic> {
    if spec.contrasts.is_empty() {
        return Ok(None);
    }
    check_levels(doc, spec, m)?;
    let rows: Vec<Vec<f64>> = spec
        .contrasts
        .iter()
        .map(|c| weights_over(c, m.factor(), m.labels()))
        .collect();
    let (count, k) = (rows.len() as f64, m.labels().len() as f64);
    let adjust = spec.contrast_adjust;
    // Each contrast's critical value on its own df (one df for them all on
    // a pooled error).
    let critical = |df: f64| match adjust {
        ContrastAdjust::None => t_isf(alpha / 2.0, df),
        // Holm has no intervals of its own: Bonferroni's, which contain them.
        ContrastAdjust::Bonferroni | ContrastAdjust::Holm => t_isf(alpha / (2.0 * count), df),
        ContrastAdjust::Scheffe => ((k - 1.0) * f_isf(alpha, k - 1.0, df)).sqrt(),
    };
    let mut contrasts = Vec::with_capacity(rows.len());
    for (c, w) in spec.contrasts.iter().zip(&rows) {
        let Some(tested) = m.test(w) else {
            return Err(doc
                .error_at(
                    c.line,
                    Some(c.column),
                    format!(
                        "the contrast `{}` cannot be estimated from this model",
                        c.name
                    ),
                )
                .hint("check that every level it weighs has observations"));
        };
        let Tested { estimate, se, df } = tested;
        let t = estimate / se;
        let positive: f64 = w.iter().filter(|x| **x > 0.0).sum();
        let q = critical(df);
        contrasts.push(PlannedContrast {
            name: c.name.clone(),
            weights: c.weights.clone(),
            estimate,
            se,
            df,
            t,
            p: 2.0 * t_sf(t.abs(), df),
            p_adj: None,
            lower: estimate - q * se,
            upper: estimate + q * se,
            data_units: (positive - 1.0).abs() < 1e-9,
        });
    }
    adjust_p(&mut contrasts, adjust, k);
    let orthogonal = (0..rows.len()).all(|a| {
        (a + 1..rows.len()).all(|b| {
            let cov = m.covariance(&rows[a], &rows[b]);
            cov.abs() <= 1e-9 * (contrasts[a].se * contrasts[b].se)
        })
    });
    let one_df = contrasts.windows(2).all(|p| p[0].df == p[1].df);
    Ok(Some(ContrastDetail {
        factor: m.factor().to_string(),
        adjust,
        joint: m.joint(&rows),
        critical: match contrasts.first() {
            Some(c) if one_df => critical(c.df),
            _ => f64::NAN,
        },
        contrasts,
        orthogonal,
        own_df: m.own_df(),
    }))
}

fn adjust_p(contrasts: &mut [PlannedContrast], adjust: ContrastAdjust, k: f64) {
    let m = contrasts.len() as f64;
    match adjust {
        ContrastAdjust::None => {}
        ContrastAdjust::Bonferroni => {
            for c in contrasts.iter_mut() {
                c.p_adj = Some((c.p * m).min(1.0));
            }
        }
        ContrastAdjust::Holm => {
            // Step-down (Holm 1979): the i-th smallest p times (m − i),
            // made monotone.
            let mut order: Vec<usize> = (0..contrasts.len()).collect();
            order.sort_by(|&a, &b| contrasts[a].p.total_cmp(&contrasts[b].p));
            let mut running: f64 = 0.0;
            for (i, &c) in order.iter().enumerate() {
                running = running.max(((m - i as f64) * contrasts[c].p).min(1.0));
                contrasts[c].p_adj = Some(running);
            }
        }
        ContrastAdjust::Scheffe => {
            for c in contrasts.iter_mut() {
                c.p_adj = Some(f_sf(c.t * c.t / (k - 1.0), k - 1.0, c.df));
            }
        }
    }
}

/// F = (Λm)ᵀ(ΛVΛᵀ)⁻¹(Λm)/q on (q, ν), by Gaussian elimination with
/// partial pivoting; `None` for one contrast or a dependent set.
fn joint_test(rows: &[Vec<f64>], m: &LevelMeans<'_>) -> Option<FTest> {
    let q = rows.len();
    if q < 2 {
        return None;
    }
    let values: Vec<f64> = rows
        .iter()
        .map(|w| neumaier(w.iter().zip(&m.means).map(|(a, b)| a * b)))
        .collect();
    let mut a: Vec<Vec<f64>> = rows
        .iter()
        .map(|r| {
            rows.iter()
                .map(|s| quadratic(r, &m.covariance, s))
                .collect()
        })
        .collect();
    let mut x = values.clone();
    let scale = (0..q).map(|i| a[i][i]).fold(0.0_f64, f64::max);
    for col in 0..q {
        let pivot = (col..q).max_by(|&i, &j| a[i][col].abs().total_cmp(&a[j][col].abs()))?;
        if a[pivot][col].abs() <= 1e-10 * scale {
            return None;
        }
        a.swap(col, pivot);
        x.swap(col, pivot);
        let (upper, lower) = a.split_at_mut(col + 1);
        let pivot_row = &upper[col];
        for (r, row) in lower.iter_mut().enumerate() {
            let factor = row[col] / pivot_row[col];
            for (target, p) in row[col..].iter_mut().zip(&pivot_row[col..]) {
                *target -= factor * p;
            }
            x[col + 1 + r] -= factor * x[col];
        }
    }
    for col in (0..q).rev() {
        let s = neumaier((col + 1..q).map(|c| a[col][c] * x[c]));
        x[col] = (x[col] - s) / a[col][col];
    }
    let qf = q as f64;
    let f = neumaier(values.iter().zip(&x).map(|(v, s)| v * s)) / qf;
    Some(FTest {
        f,
        df1: qf,
        df2: m.df,
        p: f_sf(f, qf, m.df),
    })
}
