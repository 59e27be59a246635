//! The least-squares fit of a factorial model, on one weighted row per
//! cell of the data, or on one row per observation when covariates vary
//! within the cells.

use super::covariates::Centred;
use super::model::{Errors, Model};
use crate::data::{FactorialData, Observed};
use crate::diag::Diagnostic;
use crate::stats::linear::{Fit, Layout, design_matrix, design_matrix_with, fit, term_columns};
use crate::stats::oneway::GroupSummary;
use crate::stats::sum::neumaier;

/// The fitted model and what later steps read from it.
pub(super) struct Fitted {
    /// n, mean and within sum of squares of each full cell (observations
    /// that share every factor's level).
    pub(super) cell_summaries: Vec<GroupSummary>,
    /// The design over the cells, one row each, unweighted; with
    /// covariates, over the observations.
    pub(super) unweighted: Vec<Vec<f64>>,
    /// The design has one row per observation (covariates), not per cell.
    pub(super) per_observation: bool,
    /// The same rows weighted by √n, and the weighted cell means.
    pub(super) design: Vec<Vec<f64>>,
    pub(super) cell_y: Vec<f64>,
    /// The columns of each term.
    pub(super) ranges: Vec<std::ops::Range<usize>>,
    /// The within-cell sum of squares, added back to every residual sum.
    pub(super) within_cells: f64,
    /// The full model's fit; its `rss` includes the within-cell sum.
    pub(super) full: Fit,
    pub(super) residual_df: usize,
    /// Some contrasts are aliased (empty cells under an interaction).
    pub(super) rank_deficient: bool,
    /// Coefficients and (XᵀX)⁻¹ of the kept columns.
    pub(super) coefficients: Vec<f64>,
    pub(super) covariance: Vec<Vec<f64>>,
}

impl Fitted {
    /// XᵀX and Xᵀy depend on the data only through each full cell's n and
    /// mean, so the least squares run on one row per cell, √n·x and √n·ȳ:
    /// the same R, coefficients and Type I effects as one row per
    /// observation, and every residual sum of squares less the within-cell
    /// sum, which is added back. Memory and time follow the number of
    /// cells, not of rows.
    pub fn new(
        data: &FactorialData,
        model: &Model,
        levels: &[usize],
        covariates: Option<&Centred>,
        errors: &Errors<'_>,
    ) -> Result<Fitted, Diagnostic> {
        let cell_summaries = data.cell_summaries.clone();
        let observed = match covariates {
            Some(_) => Some(data.observed().ok_or_else(|| {
                errors.model(
                    "internal error: covariates without the observations".into(),
                    "report this",
                )
            })?),
            None => None,
        };
        let (unweighted, weights, within_cells) = match (covariates, observed) {
            // A covariate varies within a cell: the cell's n and mean no
            // longer carry everything, so every observation is a row.
            (Some(c), Some(observed)) => {
                let layout = Layout {
                    levels: levels.to_vec(),
                    rows: observed.rows(),
                };
                let design = design_matrix_with(&layout, &c.rows, &model.terms);
                (design, vec![1.0; observed.offsets.len()], 0.0)
            }
            _ => {
                let layout = Layout {
                    levels: levels.to_vec(),
                    rows: data.layout.cells.clone(),
                };
                let weights = cell_summaries.iter().map(|c| (c.n as f64).sqrt()).collect();
                let within = neumaier(cell_summaries.iter().map(|c| c.ss));
                (design_matrix(&layout, &model.terms), weights, within)
            }
        };
        let design: Vec<Vec<f64>> = unweighted
            .iter()
            .map(|col| col.iter().zip(&weights).map(|(x, w)| x * w).collect())
            .collect();
        let cell_y: Vec<f64> = match observed {
            Some(observed) => observed.offsets.to_vec(),
            None => cell_summaries
                .iter()
                .zip(&weights)
                .map(|(c, w)| c.mean * w)
                .collect(),
        };
        let mut full = fit(&design, &cell_y);
        full.rss += within_cells;
        let residual_df = data.n().saturating_sub(full.rank);
        if residual_df == 0 {
            return Err(no_residual_df(model, errors));
        }
        Ok(Fitted {
            rank_deficient: full.kept.iter().any(|k| !k),
            coefficients: full.coefficients(),
            covariance: full.unscaled_covariance(),
            ranges: term_columns(&model.terms, levels),
            cell_summaries,
            unweighted,
            per_observation: covariates.is_some(),
            design,
            cell_y,
            within_cells,
            full,
            residual_df,
        })
    }

    /// The design row of observation i.
    pub fn row_of(&self, observed: Observed<'_>, i: usize) -> usize {
        if self.per_observation {
            i
        } else {
            observed.cell_of[i]
        }
    }

    /// The number of rows of the design.
    pub fn rows(&self) -> usize {
        self.unweighted.first().map_or(0, Vec::len)
    }

    /// The residual mean square.
    pub fn mse(&self) -> f64 {
        self.full.rss / self.residual_df as f64
    }

    /// Lᵀb and its unscaled variance for a linear function L over the
    /// design columns; NaN where it is not estimable.
    pub fn estimate(&self, l: &[f64]) -> (f64, f64) {
        self.full
            .estimate(l, &self.covariance, &self.coefficients)
            .unwrap_or((f64::NAN, f64::NAN))
    }
}

fn no_residual_df(model: &Model, errors: &Errors<'_>) -> Diagnostic {
    let has_interaction = model.terms.iter().any(|t| t.len() > 1);
    errors.model(
        "no residual degrees of freedom: the model uses up every observation".into(),
        if has_interaction {
            "with one observation per cell the interaction cannot be tested; fit the additive model, e.g. `y ~ A + B`"
        } else {
            "add replicates, or fit fewer terms"
        },
    )
}
