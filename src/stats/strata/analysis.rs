//! The classical analysis of a recognised balanced multi-stratum design:
//! the input checked (spec 5.1), the table, the variance components.

use super::combination::Combination;
use super::components::{VarianceComponent, component_coefficients, variance_components};
use super::input::StrataInput;
use super::partition::Partition;
use super::reason::{NotClassical, StratumId};
use super::table::{Stratum, Total, stratum_table};
use super::treatment_layout::{missing_cells, place_terms, replication, varying_within};
use super::unit_structure::{UnitStructure, unit_structure};
use crate::stats::linear::Layout;
use crate::stats::sum::neumaier;

/// The stratum table, the variance components, and what the standard errors
/// of means and differences need.
#[derive(Debug, Clone)]
pub struct StratumAnalysis {
    /// Strata coarsest first (random terms by increasing number of units),
    /// the residual last.
    pub strata: Vec<Stratum>,
    pub total: Total,
    /// shift + mean of the shifted response.
    pub grand_mean: f64,
    /// Random terms in the caller's order, then the residual.
    pub components: Vec<VarianceComponent>,
    /// The stratum in which each fixed term is estimated (model order).
    pub term_strata: Vec<StratumId>,
    pub(super) structure: UnitStructure,
    pub(super) treatments: Layout,
    pub(super) terms: Vec<Vec<usize>>,
    /// Per stratum (table order): its own component as coefficients over the
    /// strata's error mean squares.
    pub(super) coefficients: Vec<Vec<f64>>,
}

impl StratumAnalysis {
    /// The error mean squares and df of the strata, in table order.
    pub(super) fn error_mean_squares(&self) -> (Vec<Option<f64>>, Vec<usize>) {
        (
            self.strata.iter().map(|s| s.error.ms).collect(),
            self.strata.iter().map(|s| s.error.df).collect(),
        )
    }

    /// A combination of the components (random terms in table order, the
    /// residual last) rewritten over the strata's error mean squares.
    pub(super) fn over_mean_squares(&self, per_stratum: &[f64]) -> Option<Combination> {
        let s = self.strata.len();
        let mut total = vec![0.0; s];
        for (g, &w) in per_stratum.iter().enumerate() {
            if w != 0.0 {
                total
                    .iter_mut()
                    .zip(&self.coefficients[g])
                    .for_each(|(t, c)| *t += w * c);
            }
        }
        let (ms, df) = self.error_mean_squares();
        Combination::new(total, &ms, &df)
    }
}

/// Input shape: lengths agree, levels within range, terms name real factors.
fn shape_checks(input: &StrataInput) -> Vec<NotClassical> {
    let n = input.len();
    if input.treatments.rows.len() != n || input.random.rows.len() != n {
        return vec![NotClassical::LengthsDiffer];
    }
    if n < 2 {
        return vec![NotClassical::TooFewObservations];
    }
    let in_range = |layout: &Layout| {
        layout.rows.iter().all(|row| {
            row.len() == layout.levels.len() && row.iter().zip(&layout.levels).all(|(l, n)| l < n)
        })
    };
    let factors = input.treatments.levels.len();
    if !in_range(input.treatments)
        || !in_range(input.random)
        || input
            .terms
            .iter()
            .any(|t| t.is_empty() || t.iter().any(|&f| f >= factors))
    {
        return vec![NotClassical::LevelOutOfRange];
    }
    let missing: Vec<usize> = (0..n).filter(|&i| !input.y[i].is_finite()).collect();
    if !missing.is_empty() {
        return vec![NotClassical::MissingResponse {
            observations: missing,
        }];
    }
    Vec::new()
}

/// Recognises the layout (spec 5.1) and, when it is a balanced
/// multi-stratum design, computes the table and the variance components.
/// Otherwise returns every reason found at the first stage that fails.
pub fn analyse(input: &StrataInput) -> Result<StratumAnalysis, Vec<NotClassical>> {
    let reasons = shape_checks(input);
    if !reasons.is_empty() {
        return Err(reasons);
    }
    let random: Vec<Partition> = (0..input.random.levels.len())
        .map(|r| Partition::new(input.random.rows.iter().map(|row| row[r]).collect()))
        .collect();
    let mut reasons = varying_within(input.treatments, &random);
    if reasons.is_empty() {
        reasons = missing_cells(input.treatments, &random);
    }
    if !reasons.is_empty() {
        return Err(reasons);
    }
    let structure = unit_structure(&random, input.len())?;
    let reasons = replication(input.treatments);
    if !reasons.is_empty() {
        return Err(reasons);
    }
    let placed = place_terms(input.treatments, input.terms, &structure)?;
    let grand_mean = input.shift + neumaier(input.y.iter().copied()) / input.len() as f64;
    let (strata, total) = stratum_table(
        &structure,
        input.y,
        grand_mean,
        input.treatments,
        input.terms,
        &placed,
    );
    let coefficients = component_coefficients(&structure);
    let ms: Vec<Option<f64>> = strata.iter().map(|s| s.error.ms).collect();
    let df: Vec<usize> = strata.iter().map(|s| s.error.df).collect();
    let components = variance_components(&structure, &coefficients, &ms, &df);
    Ok(StratumAnalysis {
        term_strata: placed.iter().map(|&g| structure.ids[g]).collect(),
        strata,
        total,
        grand_mean,
        components,
        structure,
        treatments: input.treatments.clone(),
        terms: input.terms.to_vec(),
        coefficients,
    })
}
