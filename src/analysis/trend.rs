//! Polynomial trends over a quantitative factor, whatever the engine
//! (linear-extensions specification B.3, B.4). The levels' means m with
//! covariance V give the inner product ⟨f, g⟩ = fᵀWg, W = MSE·V⁻¹ (the
//! replications nᵢ on the diagonal for one factor); the powers of the
//! centred and scaled scores are made orthogonal under it (modified
//! Gram-Schmidt, twice), and component d has SS = (p_dᵀWm)²/(p_dᵀWp_d). The
//! components then add up to the treatment SS whatever the spacing and
//! the replication, which coefficients orthogonal without weights do not.

use super::contrasts::LevelMeans;
use crate::diag::Diagnostic;
use crate::doc::Document;
use crate::doc::block::AnovaSpec;
use crate::doc::block_trend::TrendSpec;
use crate::outcome::trend::{FiellerSet, Optimum, TrendCurve, TrendDetail, TrendRow, TrendVerdict};
use crate::stats::dist::f_sf;
use crate::stats::sum::neumaier;

/// The highest degree shown (and chosen for the curve).
pub(crate) const MAX_DEGREE: usize = 3;

pub(crate) fn dot(a: &[f64], w: &[Vec<f64>], b: &[f64]) -> f64 {
    neumaier(
        a.iter()
            .zip(w)
            .map(|(ai, row)| ai * neumaier(row.iter().zip(b).map(|(x, y)| x * y))),
    )
}

/// The inverse of a small symmetric positive definite matrix by
/// Gauss-Jordan elimination with partial pivoting.
pub(crate) fn inverse(a: &[Vec<f64>]) -> Option<Vec<Vec<f64>>> {
    let k = a.len();
    let mut m: Vec<Vec<f64>> = a
        .iter()
        .enumerate()
        .map(|(i, row)| {
            let mut r = row.clone();
            r.extend((0..k).map(|j| f64::from(u8::from(i == j))));
            r
        })
        .collect();
    for col in 0..k {
        let pivot = (col..k).max_by(|&i, &j| m[i][col].abs().total_cmp(&m[j][col].abs()))?;
        if m[pivot][col].abs() < 1e-300 {
            return None;
        }
        m.swap(col, pivot);
        let p = m[col][col];
        m[col].iter_mut().for_each(|v| *v /= p);
        let pivot_row = m[col].clone();
        for (r, row) in m.iter_mut().enumerate() {
            if r != col {
                let factor = row[col];
                row.iter_mut()
                    .zip(&pivot_row)
                    .for_each(|(v, p)| *v -= factor * p);
            }
        }
    }
    Some(m.into_iter().map(|r| r[k..].to_vec()).collect())
}

/// Each level's score: given, or read from its name.
pub(crate) fn scores(
    doc: &Document,
    t: &TrendSpec,
    labels: &[String],
) -> Result<Vec<f64>, Diagnostic> {
    let err = |msg: String, hint: &str| {
        doc.error_at(t.line, Some(t.column), msg)
            .hint(hint.to_string())
    };
    let values: Vec<f64> = match &t.scores {
        Some(given) => labels
            .iter()
            .map(|l| {
                given.iter().find(|(g, _)| g == l).map(|g| g.1).ok_or_else(|| {
                    err(format!("the trend gives no value for the level `{l}`"), "give every level of the factor its value")
                })
            })
            .collect::<Result<_, _>>()?,
        None => labels
            .iter()
            .map(|l| {
                crate::data::decimal::parse_number(l).map(|n| n.to_f64()).ok_or_else(|| {
                    err(
                        format!("the level `{l}` of `{}` is not a number, so the trend needs the levels' values", t.factor),
                        "give each level its value: `trend: dose = control 0, low 10, high 40`",
                    )
                })
            })
            .collect::<Result<_, _>>()?,
    };
    if let Some(g) = t
        .scores
        .as_ref()
        .and_then(|g| g.iter().find(|(l, _)| !labels.contains(l)))
    {
        return Err(err(
            format!("`{}` is not a level of `{}`", g.0, t.factor),
            "name the factor's levels as the data write them",
        ));
    }
    for (i, a) in values.iter().enumerate() {
        if let Some(j) = values[i + 1..].iter().position(|b| b == a) {
            return Err(err(
                format!(
                    "the levels `{}` and `{}` have the same value {a}",
                    labels[i],
                    labels[i + 1 + j]
                ),
                "a trend needs a distinct value per level",
            ));
        }
    }
    Ok(values)
}

/// The trend of a block, or `None` when it asks for none.
pub(crate) fn trend(
    doc: &Document,
    spec: &AnovaSpec,
    m: &LevelMeans<'_>,
    (error_ms, n): (f64, Option<&[usize]>),
    alpha: f64,
) -> Result<Option<TrendDetail>, Diagnostic> {
    let Some(t) = &spec.trend else {
        return Ok(None);
    };
    let x = scores(doc, t, m.labels)?;
    let k = x.len();
    let scaled: Vec<Vec<f64>> = m
        .covariance
        .iter()
        .map(|r| r.iter().map(|v| v / error_ms).collect())
        .collect();
    let Some(w) = inverse(&scaled) else {
        return Err(doc
            .error_at(
                t.line,
                Some(t.column),
                "the trend cannot be computed: the level means are not all estimable",
            )
            .hint("check the design for empty cells"));
    };
    let ((centre, half), u) = scaled_scores(&x);
    let shown = MAX_DEGREE.min(k - 1);
    let basis = orthogonal_basis(&u, &w, shown);
    let ones = vec![1.0; k];
    let treatment_ss =
        dot(&m.means, &w, &m.means) - dot(&ones, &w, &m.means).powi(2) / dot(&ones, &w, &ones);
    let row = |degree: usize, ss: f64, df: f64| TrendRow {
        degree,
        df,
        ss,
        f: ss / df / error_ms,
        p: f_sf(ss / df / error_ms, df, m.df),
        error_df: m.df,
    };
    let components: Vec<TrendRow> = basis
        .iter()
        .enumerate()
        .map(|(i, p)| row(i + 1, dot(p, &w, &m.means).powi(2) / dot(p, &w, p), 1.0))
        .collect();
    let lack_of_fit: Vec<TrendRow> = (1..=shown)
        .filter(|&d| d < k - 1)
        .map(|d| {
            let explained = neumaier(components[..d].iter().map(|c| c.ss));
            row(d, (treatment_ss - explained).max(0.0), (k - 1 - d) as f64)
        })
        .collect();
    let mut detail = TrendDetail {
        factor: m.factor.to_string(),
        scores: m.labels.iter().cloned().zip(x.iter().copied()).collect(),
        components,
        lack_of_fit,
        treatment_ss,
        treatment_df: (k - 1) as f64,
        error_ms,
        error_df: m.df,
        df_method: None,
        verdict: TrendVerdict::NoTrend,
        curve: None,
    };
    detail.verdict = verdict(&detail, alpha);
    if let (TrendVerdict::Degree(d), Some(n)) = (detail.verdict, n) {
        detail.curve = Some(curve(&detail, m, n, (centre, half), d, 1.0 - alpha));
    }
    Ok(Some(detail))
}

/// The scores centred and scaled to [−1, 1] (u = (x − centre)/half), with
/// the centre and the half range.
pub(crate) fn scaled_scores(x: &[f64]) -> ((f64, f64), Vec<f64>) {
    let (lo, hi) = x
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &v| {
            (a.min(v), b.max(v))
        });
    let (centre, half) = (0.5 * (lo + hi), 0.5 * (hi - lo));
    (
        (centre, half),
        x.iter().map(|v| (v - centre) / half).collect(),
    )
}

/// The matrix taking a polynomial's coefficients on u to the factor's
/// units: x = centre + half·u gives γᵢ = Σⱼ βⱼ·C(j, i)·(−centre)^(j−i)/halfʲ.
pub(crate) fn unit_transform(cols: usize, (centre, half): (f64, f64)) -> Vec<Vec<f64>> {
    (0..cols)
        .map(|i| {
            (0..cols)
                .map(|j| match j >= i {
                    true => binomial(j, i) * (-centre).powi((j - i) as i32) / half.powi(j as i32),
                    false => 0.0,
                })
                .collect()
        })
        .collect()
}

/// Powers 1…degree of u made orthogonal to each other and to the
/// constant under W (modified Gram-Schmidt, each pass done twice).
pub(crate) fn orthogonal_basis(u: &[f64], w: &[Vec<f64>], degree: usize) -> Vec<Vec<f64>> {
    let mut basis: Vec<Vec<f64>> = vec![vec![1.0; u.len()]];
    for d in 1..=degree {
        let mut p: Vec<f64> = u.iter().map(|v| v.powi(d as i32)).collect();
        for _ in 0..2 {
            for q in &basis {
                let c = dot(&p, w, q) / dot(q, w, q);
                p.iter_mut().zip(q).for_each(|(a, b)| *a -= c * b);
            }
        }
        basis.push(p);
    }
    basis.remove(0);
    basis
}

/// The degree rule (B.3): the highest degree ≤ 3 whose component is
/// significant, when the lack of fit after it is not.
pub(crate) fn verdict(t: &TrendDetail, alpha: f64) -> TrendVerdict {
    let significant: Vec<usize> = t
        .components
        .iter()
        .filter(|c| c.p < alpha)
        .map(|c| c.degree)
        .collect();
    if significant.is_empty() {
        return TrendVerdict::NoTrend;
    }
    significant
        .iter()
        .rev()
        .find(|&&d| t.lack_of_fit_after(d).is_none_or(|l| l.p >= alpha))
        .map_or(TrendVerdict::NotPolynomial, |&d| TrendVerdict::Degree(d))
}

/// The polynomial of degree d fitted to the observations (for one factor,
/// the level means weighted by their n), with the regression's residual
/// mean square (within levels plus lack of fit), in the factor's units.
fn curve(
    t: &TrendDetail,
    m: &LevelMeans<'_>,
    n: &[usize],
    (centre, half): (f64, f64),
    d: usize,
    level: f64,
) -> TrendCurve {
    let u: Vec<f64> = t.scores.iter().map(|(_, x)| (x - centre) / half).collect();
    let cols = d + 1;
    // Weighted least squares by the normal equations of a (d+1)-column
    // design on scaled scores in [−1, 1]: well conditioned for d ≤ 3.
    let mut xtx = vec![vec![0.0; cols]; cols];
    let mut xty = vec![0.0; cols];
    for (i, &ui) in u.iter().enumerate() {
        let row: Vec<f64> = (0..cols).map(|j| ui.powi(j as i32)).collect();
        for a in 0..cols {
            xty[a] += n[i] as f64 * row[a] * m.means[i];
            for b in 0..cols {
                xtx[a][b] += n[i] as f64 * row[a] * row[b];
            }
        }
    }
    let inv = inverse(&xtx).unwrap_or_else(|| vec![vec![f64::NAN; cols]; cols]);
    let beta: Vec<f64> = (0..cols)
        .map(|a| neumaier((0..cols).map(|b| inv[a][b] * xty[b])))
        .collect();
    let within = t.error_ms * t.error_df;
    let lof = t.lack_of_fit_after(d).map_or(0.0, |l| l.ss);
    let total_n: usize = n.iter().sum();
    let df = (total_n - cols) as f64;
    let ms = (within + lof) / df;
    let transform = unit_transform(cols, (centre, half));
    let coefficients: Vec<f64> = transform
        .iter()
        .map(|r| neumaier(r.iter().zip(&beta).map(|(a, b)| a * b)))
        .collect();
    let covariance: Vec<Vec<f64>> = (transform.iter())
        .map(|a| transform.iter().map(|b| ms * dot(a, &inv, b)).collect())
        .collect();
    let se = (0..cols).map(|i| covariance[i][i].sqrt()).collect();
    let tested = t.scores.iter().map(|s| s.1);
    let range = (
        tested.clone().fold(f64::INFINITY, f64::min),
        tested.fold(f64::NEG_INFINITY, f64::max),
    );
    let optimum = (d == 2).then(|| optimum(&coefficients, &covariance, df, level, range));
    TrendCurve {
        degree: d,
        coefficients,
        se,
        ms,
        df,
        optimum,
    }
}

/// The quadratic's turning point and its Fieller set at `level`: the x
/// where (b₁ + 2b₂x)² − t²(v₁₁ + 4xv₁₂ + 4x²v₂₂) ≤ 0, a quadratic in x.
pub(crate) fn optimum(
    b: &[f64],
    v: &[Vec<f64>],
    df: f64,
    level: f64,
    (low, high): (f64, f64),
) -> Optimum {
    let (b1, b2) = (b[1], b[2]);
    let x = -b1 / (2.0 * b2);
    let t2 = crate::stats::dist::t_isf((1.0 - level) / 2.0, df).powi(2);
    let qa = 4.0 * (b2 * b2 - t2 * v[2][2]);
    let qb = 4.0 * (b1 * b2 - t2 * v[1][2]);
    let qc = b1 * b1 - t2 * v[1][1];
    let disc = qb * qb - 4.0 * qa * qc;
    let roots = || {
        let r = disc.sqrt();
        // The root without cancellation first, the other from their product.
        let q = -0.5 * (qb + qb.signum() * r);
        let (x1, x2) = (q / qa, qc / q);
        (x1.min(x2), x1.max(x2))
    };
    let set = match (qa > 0.0, disc > 0.0) {
        (true, true) => {
            let (l, u) = roots();
            FiellerSet::Bounded(l, u)
        }
        (false, true) => {
            let (l, u) = roots();
            FiellerSet::TwoHalfLines(l, u)
        }
        _ => FiellerSet::WholeLine,
    };
    Optimum {
        x,
        maximum: b2 < 0.0,
        set,
        level,
        within_range: (low..=high).contains(&x),
    }
}

fn binomial(n: usize, k: usize) -> f64 {
    (0..k).fold(1.0, |acc, i| acc * (n - i) as f64 / (i + 1) as f64)
}
