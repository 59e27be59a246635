//! A block's transformation as the engines see it: the decimals of the
//! analysis scale, the Box-Cox profile of the block's own model (spec C.2:
//! not the pooled response, which libraries profile), and the detail the
//! outcome carries.

use super::notes::Note;
use crate::diag::Diagnostic;
use crate::doc::Document;
use crate::doc::block::AnovaSpec;
use crate::outcome::linear::Family;
use crate::outcome::transform::{ArithmeticMeans, TransformDetail};
use crate::stats::linear::fit;
use crate::stats::sum::NeumaierSum;
use crate::stats::transform::{BoxCox, Declared, Profile, Transform};

/// The model Box-Cox profiles, as residuals of any response: observations
/// grouped in cells, and the design over the cells (`None` when the model
/// fits every cell its own mean, as a one-factor model does).
pub(crate) struct CellModel<'a> {
    pub cell_of: &'a [usize],
    pub cells: usize,
    /// Column-major, one row per cell, unweighted.
    pub design: Option<&'a [Vec<f64>]>,
}

impl CellModel<'_> {
    /// The residuals of z: each cell's mean comes from compensated sums;
    /// with a design, the cell means are fitted by least squares weighted
    /// by each cell's n (the same fit as one row per observation).
    fn residuals(&self, z: &[f64]) -> Vec<f64> {
        let mut sums = vec![NeumaierSum::default(); self.cells];
        let mut counts = vec![0usize; self.cells];
        for (&c, &v) in self.cell_of.iter().zip(z) {
            sums[c].add(v);
            counts[c] += 1;
        }
        let means: Vec<f64> = sums
            .iter()
            .zip(&counts)
            .map(|(s, &n)| s.value() / n.max(1) as f64)
            .collect();
        let fitted = match self.design {
            None => means,
            Some(columns) => {
                let w: Vec<f64> = counts.iter().map(|&n| (n as f64).sqrt()).collect();
                let weighted: Vec<Vec<f64>> = columns
                    .iter()
                    .map(|col| col.iter().zip(&w).map(|(x, w)| x * w).collect())
                    .collect();
                let y: Vec<f64> = means.iter().zip(&w).map(|(m, w)| m * w).collect();
                let f = fit(&weighted, &y);
                let b = f.coefficients();
                let kept: Vec<&Vec<f64>> = columns
                    .iter()
                    .zip(&f.kept)
                    .filter(|(_, k)| **k)
                    .map(|(c, _)| c)
                    .collect();
                (0..self.cells)
                    .map(|c| kept.iter().zip(&b).map(|(col, b)| col[c] * b).sum())
                    .collect()
            }
        };
        self.cell_of
            .iter()
            .zip(z)
            .map(|(&c, v)| v - fitted[c])
            .collect()
    }

    /// The Box-Cox profile of this model for the positive responses `y`
    /// (observation i from data line `line(i)`), its interval at 1 − α; a
    /// value of 0 or less is an error naming its line.
    pub fn box_cox(
        &self,
        (doc, spec): (&Document, &AnovaSpec),
        y: &[f64],
        line: impl Fn(usize) -> usize,
        alpha: f64,
    ) -> Result<BoxCox, Diagnostic> {
        if let Some(i) = y.iter().position(|&v| v <= 0.0 || !v.is_finite()) {
            return Err(doc
                .error_at(spec.model.line, None, format!("`transform: boxcox` needs values above 0 in `{}`; data line {} has one of 0 or less", spec.model.value.response, line(i)))
                .hint("Box-Cox is defined for positive values only: leave such rows out with `exclude`, or remove `transform`")
                .note(format!("data file {}", spec.data.value)));
        }
        let residuals = |z: &[f64]| self.residuals(z);
        Ok(Profile::new(y, &residuals).estimate(1.0 - alpha.min(0.5)))
    }
}

/// Flagged observations name their value as the data file writes it, not
/// on the analysis scale (the back-transformation of z is y again).
pub(crate) fn outliers_as_written(checks: &mut crate::outcome::Checks, spec: &AnovaSpec) {
    if let Some(t) = &spec.transform {
        for o in &mut checks.outliers {
            o.value = t.value.back(o.value);
        }
    }
}

/// Decimals that resolve the data's own precision on the analysis scale:
/// half a unit of the data's last decimal, carried through the
/// transformation's slope at the grand mean.
pub(crate) fn scale_decimals(t: &Declared, grand_mean: f64, data_decimals: u32) -> u32 {
    let unit = 10f64.powi(-(data_decimals as i32));
    let x = if t.percent {
        grand_mean / 100.0
    } else {
        grand_mean
    } + t.offset;
    let slope = match t.transform {
        Transform::Ln => 1.0 / x,
        Transform::Log10 => 1.0 / (x * std::f64::consts::LN_10),
        Transform::Sqrt => 0.5 / x.sqrt(),
        Transform::Logit => 1.0 / (x * (1.0 - x)),
        Transform::Arcsine => 0.5 / (x * (1.0 - x)).sqrt(),
    } * if t.percent { unit / 100.0 } else { unit };
    let decimals = -(slope.abs()).log10();
    if decimals.is_finite() {
        (decimals.ceil() as i64).clamp(1, 6) as u32
    } else {
        3
    }
}

/// The detail of a transformed block (or of one that asked for the
/// Box-Cox profile), with a note when a back-transformed mean underflows.
pub(crate) fn detail(
    declared: Option<Declared>,
    data_decimals: u32,
    arithmetic: Vec<ArithmeticMeans>,
    box_cox: Option<BoxCox>,
    families: &[Family],
) -> (TransformDetail, Vec<Note>) {
    let underflow = declared.is_some_and(|t| {
        families
            .iter()
            .flat_map(|f| &f.estimates)
            .any(|e| t.underflows(e.mean) || t.underflows(e.ci_lower))
    });
    let notes = match underflow {
        true => vec![Note::other(
            "a back-transformed mean or limit is below the smallest representable number and prints as 0",
        )],
        false => Vec::new(),
    };
    let detail = TransformDetail {
        declared,
        data_decimals,
        arithmetic,
        underflow,
        box_cox,
    };
    (detail, notes)
}
