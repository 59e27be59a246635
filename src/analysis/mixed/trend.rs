//! Polynomial trends over a fixed factor of a mixed model (the nitrogen
//! rates on the subplots of a split plot; linear-extensions specification
//! B.3, B.4). The fixed-effects construction with the estimated marginal
//! means' covariance C in place of MSE·V: W = C⁻¹, the powers of the scaled
//! scores made orthogonal under W, and component d the contrast c_d = W·p_d
//! over the means, tested with its own SE and df (F = t²). The lack of fit
//! after degree d is the joint Wald test, on the same df method, of every
//! contrast that vanishes on the polynomials of degree ≤ d. In a balanced
//! design these are the classical stratum tests.

use super::planned::MixedLevelMeans;
use super::{Analysed, Errors};
use crate::analysis::contrasts::ContrastTests;
use crate::analysis::trend::{
    MAX_DEGREE, dot, inverse, optimum, orthogonal_basis, scaled_scores, scores, unit_transform,
    verdict,
};
use crate::diag::Diagnostic;
use crate::doc::block_trend::TrendSpec;
use crate::outcome::trend::{TrendCurve, TrendDetail, TrendRow, TrendVerdict};
use crate::stats::dist::f_sf;
use crate::stats::sum::neumaier;

/// The block's trend over a fixed treatment factor's marginal means, or
/// `None` when it asks for none.
pub(super) fn trend(a: &Analysed, errors: &Errors<'_>) -> Result<Option<TrendDetail>, Diagnostic> {
    let (doc, spec) = (errors.doc, errors.spec);
    let Some(t) = &spec.trend else {
        return Ok(None);
    };
    let f = a.model.trend_factor(doc, t)?;
    let count = |fixed: &[Option<usize>]| a.count(fixed);
    let estimating = a.estimating(&count);
    let means = MixedLevelMeans::new(&estimating, f, spec.ddf);
    let x = scores(doc, t, means.labels())?;
    let not_estimable = || {
        doc.error_at(
            t.line,
            Some(t.column),
            "the trend cannot be computed: the marginal means of its factor are not all estimable",
        )
        .hint("check the design for empty cells")
    };
    let (m, c) = means_and_covariance(&means).ok_or_else(not_estimable)?;
    let w = inverse(&c).ok_or_else(not_estimable)?;
    let mut detail = components(&means, &x, &w, t).ok_or_else(not_estimable)?;
    detail.df_method = Some(spec.ddf);
    detail.verdict = verdict(&detail, a.alpha);
    if let TrendVerdict::Degree(d) = detail.verdict {
        detail.curve = Some(curve(&detail, (&m, &w), d, 1.0 - a.alpha));
    }
    Ok(Some(detail))
}

/// The marginal means (in the data's units) and their covariance under the
/// model, the one each contrast's SE is read from; `None` if not estimable.
fn means_and_covariance(means: &MixedLevelMeans<'_>) -> Option<(Vec<f64>, Vec<Vec<f64>>)> {
    let k = means.labels().len();
    let unit = |i: usize| -> Vec<f64> { (0..k).map(|j| f64::from(u8::from(i == j))).collect() };
    let m: Vec<f64> = (0..k)
        .map(|i| means.test(&unit(i)).map(|t| t.estimate))
        .collect::<Option<_>>()?;
    // Each pair once (two model contrasts by polarisation), then mirrored.
    let upper: Vec<Vec<f64>> = (0..k)
        .map(|i| {
            (0..k)
                .map(|j| match j >= i {
                    true => means.covariance(&unit(i), &unit(j)),
                    false => 0.0,
                })
                .collect()
        })
        .collect();
    let c: Vec<Vec<f64>> = (0..k)
        .map(|i| (0..k).map(|j| upper[i.min(j)][i.max(j)]).collect())
        .collect();
    if c.iter().flatten().any(|v| !v.is_finite()) {
        return None;
    }
    Some((m, c))
}

/// Each shown component tested with its own df, and the lack of fit after
/// each shown degree that leaves df.
fn components(
    means: &MixedLevelMeans<'_>,
    x: &[f64],
    w: &[Vec<f64>],
    t: &TrendSpec,
) -> Option<TrendDetail> {
    let k = x.len();
    let (_, u) = scaled_scores(x);
    let shown = MAX_DEGREE.min(k - 1);
    let components: Vec<TrendRow> = (orthogonal_basis(&u, w, shown).iter().enumerate())
        .map(|(i, p)| {
            let weights: Vec<f64> = w
                .iter()
                .map(|row| neumaier(row.iter().zip(p).map(|(a, b)| a * b)))
                .collect();
            tested(means, &[weights], i + 1)
        })
        .collect::<Option<_>>()?;
    let lack_of_fit: Vec<TrendRow> = (1..=shown)
        .filter(|&d| d < k - 1)
        .map(|d| tested(means, &beyond(&u, d), d))
        .collect::<Option<_>>()?;
    Some(TrendDetail {
        factor: t.factor.clone(),
        scores: means
            .labels()
            .iter()
            .cloned()
            .zip(x.iter().copied())
            .collect(),
        components,
        lack_of_fit,
        // The components do not split a sum of squares here: each has its
        // own error.
        treatment_ss: f64::NAN,
        treatment_df: (k - 1) as f64,
        error_ms: f64::NAN,
        error_df: f64::NAN,
        df_method: None,
        verdict: TrendVerdict::NoTrend,
        curve: None,
    })
}

/// One row: a single contrast by its t test (F = t²), several jointly by
/// the Wald F test, each with the model's df method. No sum of squares:
/// each row has its own error.
fn tested(means: &MixedLevelMeans<'_>, rows: &[Vec<f64>], degree: usize) -> Option<TrendRow> {
    let (f, df1, df2) = match rows {
        [one] => {
            let t = means.test(one)?;
            ((t.estimate / t.se).powi(2), 1.0, t.df)
        }
        _ => {
            let j = means.joint(rows)?;
            (j.f, j.df1, j.df2)
        }
    };
    Some(TrendRow {
        degree,
        df: df1,
        ss: f64::NAN,
        f,
        p: f_sf(f, df1, df2),
        error_df: df2,
    })
}

/// Contrasts spanning every weighing that vanishes on the polynomials of
/// degree ≤ d (Euclidean complement of their span, by greedy Gram-Schmidt
/// on the unit vectors). They span the same space as the components
/// W·p_j, j > d (p_jᵀWq = 0 for every such q), and the joint Wald test does
/// not depend on the basis, so this needs no powers above d.
fn beyond(u: &[f64], d: usize) -> Vec<Vec<f64>> {
    let k = u.len();
    let mut basis: Vec<Vec<f64>> = Vec::with_capacity(k);
    let add = |basis: &mut Vec<Vec<f64>>, mut v: Vec<f64>| {
        for _ in 0..2 {
            for q in basis.iter() {
                let c = neumaier(v.iter().zip(q).map(|(a, b)| a * b));
                v.iter_mut().zip(q).for_each(|(a, b)| *a -= c * b);
            }
        }
        let norm = neumaier(v.iter().map(|a| a * a)).sqrt();
        v.iter_mut().for_each(|a| *a /= norm);
        basis.push(v);
    };
    for j in 0..=d {
        add(&mut basis, u.iter().map(|v| v.powi(j as i32)).collect());
    }
    let residual = |basis: &[Vec<f64>], i: usize| 1.0 - neumaier(basis.iter().map(|q| q[i] * q[i]));
    while basis.len() < k {
        // The unit vector least explained by the basis so far.
        let Some(i) = (0..k).max_by(|&a, &b| residual(&basis, a).total_cmp(&residual(&basis, b)))
        else {
            break;
        };
        add(
            &mut basis,
            (0..k).map(|j| f64::from(u8::from(i == j))).collect(),
        );
    }
    basis.split_off(d + 1)
}

/// The polynomial of degree d fitted to the marginal means m by generalised
/// least squares with their covariance C: β = (XᵀWX)⁻¹XᵀWm, cov β =
/// (XᵀWX)⁻¹ (W = C⁻¹), in the factor's units. There is no residual mean
/// square: C is the model's. The df for the turning point's interval is
/// that of the highest component used: the interval rests on the
/// non-constant coefficients, which are contrasts among the means, and the
/// highest of them is what the degree rule judged on that df (in a balanced
/// split plot, the subplot error's df for a subplot factor, exactly).
fn curve(t: &TrendDetail, (m, w): (&[f64], &[Vec<f64>]), d: usize, level: f64) -> TrendCurve {
    let x: Vec<f64> = t.scores.iter().map(|s| s.1).collect();
    let (scale, u) = scaled_scores(&x);
    let cols = d + 1;
    // Columns 1, u, …, u^d on scores scaled to [−1, 1]: well conditioned
    // for d ≤ 3.
    let design: Vec<Vec<f64>> = (0..cols)
        .map(|j| u.iter().map(|v| v.powi(j as i32)).collect())
        .collect();
    let xtwx: Vec<Vec<f64>> = (design.iter())
        .map(|a| design.iter().map(|b| dot(a, w, b)).collect())
        .collect();
    let inv = inverse(&xtwx).unwrap_or_else(|| vec![vec![f64::NAN; cols]; cols]);
    let xtwm: Vec<f64> = design.iter().map(|a| dot(a, w, m)).collect();
    let beta: Vec<f64> = (inv.iter())
        .map(|row| neumaier(row.iter().zip(&xtwm).map(|(a, b)| a * b)))
        .collect();
    let transform = unit_transform(cols, scale);
    let coefficients: Vec<f64> = (transform.iter())
        .map(|r| neumaier(r.iter().zip(&beta).map(|(a, b)| a * b)))
        .collect();
    let covariance: Vec<Vec<f64>> = (transform.iter())
        .map(|a| transform.iter().map(|b| dot(a, &inv, b)).collect())
        .collect();
    let se = (0..cols).map(|i| covariance[i][i].sqrt()).collect();
    let df = t.components[d - 1].error_df;
    let range = (
        x.iter().copied().fold(f64::INFINITY, f64::min),
        x.iter().copied().fold(f64::NEG_INFINITY, f64::max),
    );
    let optimum = (d == 2).then(|| optimum(&coefficients, &covariance, df, level, range));
    TrendCurve {
        degree: d,
        coefficients,
        se,
        ms: f64::NAN,
        df,
        optimum,
    }
}
