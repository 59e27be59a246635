//! Residuals of the fitted model, their leverages, and the observations
//! flagged by their externally studentized residual.

use super::fit::Fitted;
use crate::data::{FactorialData, Observed};
use crate::outcome::OutlierRow;
use crate::stats::assumptions::{OUTLIER_THRESHOLD, OUTLIERS_KEPT, externally_studentized};
use crate::stats::extremes::Extremes;
use crate::stats::sum::neumaier;

/// Per observation, its residual; per design row (a full cell, or an
/// observation when covariates vary within cells), its leverage.
pub(super) struct Residuals {
    pub values: Vec<f64>,
    /// Per design row, its fitted value x'b and leverage x'(XᵀX)⁻¹x.
    pub row_fitted: Vec<f64>,
    pub row_leverage: Vec<f64>,
}

impl Residuals {
    /// Fitted values and leverages are the same for every observation of a
    /// full cell: x'b and x'(XᵀX)⁻¹x with the cell's unweighted design row.
    pub fn new(data: &FactorialData, fitted: &Fitted) -> Self {
        let kept_design: Vec<&Vec<f64>> = fitted
            .unweighted
            .iter()
            .zip(&fitted.full.kept)
            .filter(|(_, k)| **k)
            .map(|(c, _)| c)
            .collect();
        let (b, cov) = (&fitted.coefficients, &fitted.covariance);
        let row_of = |c: usize| -> Vec<f64> { kept_design.iter().map(|col| col[c]).collect() };
        let rows = fitted.rows();
        let row_fitted: Vec<f64> = (0..rows)
            .map(|c| neumaier(row_of(c).iter().zip(b).map(|(x, b)| x * b)))
            .collect();
        let row_leverage: Vec<f64> = (0..rows)
            .map(|c| {
                let x = row_of(c);
                neumaier(
                    (0..x.len()).map(|a| x[a] * neumaier((0..x.len()).map(|j| cov[a][j] * x[j]))),
                )
            })
            .collect();
        // Summary input has no observations, hence no residuals.
        let values = data.observed().map_or_else(Vec::new, |observed| {
            (0..observed.offsets.len())
                .map(|i| observed.offsets[i] - row_fitted[fitted.row_of(observed, i)])
                .collect()
        });
        Residuals {
            values,
            row_fitted,
            row_leverage,
        }
    }

    /// The observations beyond the outlier threshold: how many in all, and
    /// the most extreme of them with their labels, in data order.
    pub fn outliers(&self, data: &FactorialData, fitted: &Fitted) -> (usize, Vec<OutlierRow>) {
        let Some(observed) = data.observed() else {
            return (0, Vec::new());
        };
        let (mse, nu) = (fitted.mse(), fitted.residual_df as f64);
        // Only the most extreme are kept with their labels; the rest are counted.
        let mut flagged = Extremes::new(OUTLIERS_KEPT);
        for (i, &e) in self.values.iter().enumerate() {
            let h = self.row_leverage[fitted.row_of(observed, i)];
            if h >= 1.0 - 1e-12 || fitted.residual_df < 2 {
                continue;
            }
            let t = externally_studentized(e, mse, h, nu);
            if t.abs() > OUTLIER_THRESHOLD {
                flagged.offer(t.abs(), (i, t));
            }
        }
        flagged_rows((observed, &data.layout.levels, data.origin), flagged)
    }
}

/// The flagged observations (row, studentized residual) with their data
/// line, labels and value, in data order, and how many were flagged in all.
pub(in crate::analysis) fn flagged_rows(
    (observed, levels, origin): (Observed<'_>, &[Vec<String>], f64),
    flagged: Extremes<(usize, f64)>,
) -> (usize, Vec<OutlierRow>) {
    let count = flagged.total();
    let mut rows: Vec<OutlierRow> = flagged
        .into_most_extreme_first()
        .into_iter()
        .map(|(i, t)| OutlierRow {
            line: observed.lines[i],
            level: observed
                .row(i)
                .iter()
                .enumerate()
                .map(|(f, &l)| levels[f][l].clone())
                .collect::<Vec<_>>()
                .join(" × "),
            value: origin + observed.offsets[i],
            studentized_residual: t,
        })
        .collect();
    rows.sort_by_key(|o| o.line);
    (count, rows)
}
