//! Sums of squares and cross-products of contrast scores, split by the
//! between-subject model: the intercept (the within effect itself), each
//! between term (its interaction with the effect), and the residual (the
//! effect × subjects within groups error).

use nalgebra::DMatrix;

use super::between_basis::{BetweenBasis, dot};
use crate::stats::sum::{NeumaierSum, neumaier};

/// The split of one effect's SSCP (each p × p).
pub(crate) struct SscpSplit {
    pub(crate) intercept: DMatrix<f64>,
    pub(crate) terms: Vec<DMatrix<f64>>,
    pub(crate) error: DMatrix<f64>,
}

/// The N × p scores Y·C of every subject on the contrasts C (k × p). Within
/// contrasts are orthogonal to 1, so each subject's responses are centred
/// first (`centre`): that changes no score and keeps a large common level
/// from cancelling digits.
pub(crate) fn scores(
    responses: &[Vec<f64>],
    contrasts: &DMatrix<f64>,
    centre: bool,
) -> DMatrix<f64> {
    let rows: Vec<Vec<f64>> = responses
        .iter()
        .map(|row| {
            let level = if centre {
                neumaier(row.iter().copied()) / row.len() as f64
            } else {
                0.0
            };
            row.iter().map(|y| y - level).collect()
        })
        .collect();
    DMatrix::from_fn(rows.len(), contrasts.ncols(), |i, j| {
        neumaier(
            rows[i]
                .iter()
                .enumerate()
                .map(|(o, y)| y * contrasts[(o, j)]),
        )
    })
}

/// Splits the SSCP of `scores` (N × p) over the basis of the between model.
pub(crate) fn split(scores: &DMatrix<f64>, basis: &BetweenBasis) -> SscpSplit {
    let n = scores.nrows();
    let p = scores.ncols();
    let columns: Vec<Vec<f64>> = (0..p)
        .map(|j| scores.column(j).iter().copied().collect())
        .collect();
    let means: Vec<f64> = columns
        .iter()
        .map(|c| neumaier(c.iter().copied()) / n as f64)
        .collect();
    let centred: Vec<Vec<f64>> = columns
        .iter()
        .zip(&means)
        .map(|(c, m)| c.iter().map(|x| x - m).collect())
        .collect();
    // Coefficients on the basis vectors after the intercept (which are
    // orthogonal to 1, so the centred column gives the same coefficients).
    let coefficients: Vec<Vec<f64>> = basis.vectors[1..]
        .iter()
        .map(|q| centred.iter().map(|c| dot(q, c)).collect())
        .collect();
    let residuals: Vec<Vec<f64>> = (0..p)
        .map(|j| residual(&centred[j], &basis.vectors[1..], &coefficients, j))
        .collect();
    let intercept = DMatrix::from_fn(p, p, |j, l| n as f64 * means[j] * means[l]);
    let terms = basis
        .blocks
        .iter()
        .map(|block| {
            let rows = &coefficients[block.start - 1..block.end - 1];
            DMatrix::from_fn(p, p, |j, l| neumaier(rows.iter().map(|r| r[j] * r[l])))
        })
        .collect();
    let error = DMatrix::from_fn(p, p, |j, l| dot(&residuals[j], &residuals[l]));
    SscpSplit {
        intercept,
        terms,
        error,
    }
}

/// The centred column less its projection on the non-intercept basis.
fn residual(
    centred: &[f64],
    vectors: &[Vec<f64>],
    coefficients: &[Vec<f64>],
    j: usize,
) -> Vec<f64> {
    (0..centred.len())
        .map(|i| {
            let mut s = NeumaierSum::default();
            s.add(centred[i]);
            for (q, c) in vectors.iter().zip(coefficients) {
                s.add(-q[i] * c[j]);
            }
            s.value()
        })
        .collect()
}
