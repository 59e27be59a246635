//! Factorial, blocked and Latin-square designs: any fixed-effects model with
//! categorical factors, fitted by QR, with Type I/II/III sums of squares,
//! comparisons on estimated marginal means, simple effects and cell means.
//!
//! The steps, one file each: `model` (factors, blocks, terms; keys for one
//! factor only), `read` (the observations), `terms` (confounded terms,
//! empty cells, size), `fit` (least squares on one row per cell), `table`
//! (sums of squares and F tests), `design_notes`, `cells` (treatment
//! cells), `residuals` (and outliers), `checks`, `passes` (the checks of a
//! model of factors only, in passes over the rows, kept or read again),
//! `families` (marginal and cell means compared).

pub(super) mod cells;
pub(super) mod checks;
pub(super) mod covariate_notes;
pub(super) mod covariates;
mod design_notes;
mod families;
mod fit;
mod friedman;
pub(super) mod model;
mod passes;
mod planned;
pub(super) mod read;
pub(super) mod residuals;
pub(super) mod separate_slopes;
mod table;
mod terms;

use super::binding::{data_error, decimals_shown};
use super::checks::{Remedies, advice};
use super::notes::{Note, split_acknowledged};
use super::observed::{FactorialLayout, PooledError};
use super::outcome_base::base_outcome;
use super::request::{Analysis, Request};
use crate::data::FactorialData;
use crate::diag::Diagnostic;
use crate::doc::block::AnovaSpec;
use crate::doc::block::Omnibus;
use crate::doc::{Block, Document};
use crate::outcome::Checks;
use crate::outcome::covariates::CovariateDetail;
use crate::outcome::linear::{
    CellRow, Factor, Family, LinearOutcome, Observation, Observed, RESIDUAL, Role, Stratum,
    TermTest,
};
use crate::stats::oneway::GroupSummary;
use cells::TreatmentCells;
use covariates::Centred;
use fit::Fitted;
use model::{Errors, Model};
use residuals::Residuals;
use table::Chosen;

/// Runs a factorial `anova` block.
pub(super) fn run_factorial(request: Request<'_>) -> Analysis {
    let (doc, block, spec) = (request.doc, request.block, request.spec);
    let mut errors = Errors {
        doc,
        spec,
        reused: None,
    };
    model::refuse_one_factor_keys(&errors)?;
    let mut model = Model::from_spec(doc, spec)?;
    let read::Observations {
        data,
        streamed,
        centred,
        arithmetic,
        input,
        from_cells,
        rereading,
    } = read::read_with_covariates(&errors, block, (request.data, request.display_path), &model)?;
    let levels: Vec<usize> = data.layout.levels.iter().map(Vec::len).collect();
    errors.two_levels_each(&model.factor_names, &levels)?;
    if let Some(c) = &centred {
        let observed = data
            .observed()
            .ok_or_else(|| errors.internal(block, "covariates without the observations"))?;
        c.check_varies((observed.cell_of, observed.cells.len()), &errors)?;
    }
    // `method: ranks` with a block: Friedman's test, on the complete table.
    let ranked = match spec.method {
        Omnibus::Ranks => {
            let pair = friedman::factors(&errors, &model)?;
            let table = friedman::complete_table(&errors, &data, pair)?;
            Some(friedman::test(&errors, &data, &table, pair)?)
        }
        _ => None,
    };
    // From here on a model error also explains block labels reused within
    // another block factor, the usual cause when blocks are nested.
    errors.reused = design_notes::reused_block_labels(&data, &model);
    let mut notes = terms::drop_confounded(&mut model, &data, &levels, &errors)?;
    let empty = terms::empty_cells(&model, &data, &levels);
    terms::check_size(&model, &levels, &errors)?;
    let fitted = Fitted::new(&data, &model, &levels, centred.as_ref(), &errors)?;
    let chosen = table::choose(&fitted, &model, &empty, &errors)?;
    let alpha = spec.alpha.unwrap_or(doc.front.alpha);
    let rows = table::term_rows(&chosen.table, &model, &fitted, alpha, data.n());
    notes.extend(design_notes::design_notes(
        &data,
        &model,
        &chosen,
        &empty,
        fitted.rank_deficient,
        (&spec.data.value, errors.reused.as_ref()),
    ));
    let treatment = TreatmentCells::new(&data.layout.cells, model.treatment_factors(), &levels);
    // Read from the cells' sums, the treatment cells come from them whether
    // or not the rows were kept, so that both ways give the same bits.
    let source = match from_cells {
        true => cells::Source::Cells(&data.cell_summaries),
        false => data.source(),
    };
    let mut analysed = Analysed {
        cells: treatment.rows(source, data.origin),
        treatment,
        residuals: Residuals::new(&data, &fitted),
        data,
        model,
        levels,
        fitted,
        chosen,
        rows,
        alpha,
        ranked,
        total_ss: None,
    };
    let checked = match from_cells {
        true => Some(
            analysed
                .checked_in_passes(spec, rereading)
                .map_err(|e| data_error(doc, block, spec.data.line, request.display_path, e))?,
        ),
        false => None,
    };
    if let Some(c) = &checked {
        analysed.total_ss = Some(c.total_ss.unwrap_or_else(|| cells_total_ss(&analysed.data)));
    }
    let (checks, families) = analysed.checks_and_families(&errors, &mut notes, checked)?;
    let planning = planned::Planning {
        errors: &errors,
        model: &analysed.model,
        data: &analysed.data,
        levels: &analysed.levels,
        fitted: &analysed.fitted,
        alpha,
    };
    let (contrasts, trend) = (planning.contrasts()?, planning.trend()?);
    let covariates = centred
        .and_then(|c| analysed.covariate_detail(&c, &families))
        .map(|detail| {
            notes.extend(covariate_notes::notes(&detail, alpha));
            Box::new(detail)
        });
    let transform = analysed.transform_detail(doc, spec, arithmetic, &families, &mut notes)?;
    let analysed_ranked = analysed.ranked.clone();
    let mut outcome = analysed.into_result(block, spec, checks, families, notes, doc);
    outcome.transform = transform.map(Box::new);
    outcome.covariates = covariates;
    outcome.contrasts = contrasts.map(Box::new);
    outcome.trend = trend.map(Box::new);
    outcome.friedman = analysed_ranked.map(Box::new);
    outcome.input = input;
    Ok((outcome, streamed))
}

/// A fitted factorial model and what was computed from it.
struct Analysed {
    data: FactorialData,
    model: Model,
    levels: Vec<usize>,
    fitted: Fitted,
    chosen: Chosen,
    rows: Vec<TermTest>,
    treatment: TreatmentCells,
    /// Each treatment cell's n, mean and SD.
    cells: Vec<CellRow>,
    residuals: Residuals,
    alpha: f64,
    /// Friedman's test, with `method: ranks`.
    ranked: Option<crate::outcome::friedman::FriedmanDetail>,
    /// The total sum of squares, when the checks' passes (or the cells)
    /// gave it.
    total_ss: Option<f64>,
}

/// Decimals on the analysis scale: the data's, or those that resolve them
/// through the transformation.
fn scale_decimals(spec: &AnovaSpec, data: &FactorialData) -> u32 {
    let Some(t) = &spec.transform else {
        return data.decimals;
    };
    let cells = &data.cell_summaries;
    let mean_z = data.origin
        + crate::stats::sum::neumaier(cells.iter().map(|c| c.n as f64 * c.mean))
            / data.n().max(1) as f64;
    super::transformation::scale_decimals(&t.value, t.value.back(mean_z), data.decimals)
}

impl Analysed {
    /// The transformation's detail, and the Box-Cox profile of this model
    /// when the block asked for it.
    fn transform_detail(
        &self,
        doc: &Document,
        spec: &AnovaSpec,
        arithmetic: Vec<Vec<f64>>,
        families: &[Family],
        notes: &mut Vec<Note>,
    ) -> Result<Option<crate::outcome::transform::TransformDetail>, Diagnostic> {
        if spec.transform.is_none() && !spec.box_cox {
            return Ok(None);
        }
        let box_cox = match (
            spec.box_cox && !self.fitted.per_observation,
            self.data.observed(),
        ) {
            (true, Some(observed)) => {
                let y: Vec<f64> = (observed.offsets.iter())
                    .map(|d| self.data.origin + d)
                    .collect();
                let model = super::transformation::CellModel {
                    cell_of: observed.cell_of,
                    cells: self.data.layout.cells.len(),
                    design: Some(&self.fitted.unweighted),
                };
                let line = |i: usize| observed.lines[i];
                Some(model.box_cox((doc, spec), &y, line, self.alpha)?)
            }
            _ => None,
        };
        let arithmetic = (self.model.factor_names.iter())
            .zip(arithmetic)
            .map(
                |(factor, means)| crate::outcome::transform::ArithmeticMeans {
                    factor: factor.clone(),
                    means,
                },
            )
            .collect();
        let data_decimals = decimals_shown(doc, spec, self.data.decimals);
        let declared = spec.transform.as_ref().map(|t| t.value);
        let (detail, more) =
            super::transformation::detail(declared, data_decimals, arithmetic, box_cox, families);
        notes.extend(more);
        Ok(Some(detail))
    }

    /// Slopes, the balance check and the test of equal slopes (which need
    /// the observations).
    fn covariate_detail(&self, centred: &Centred, families: &[Family]) -> Option<CovariateDetail> {
        let observed = self.data.observed()?;
        let detail = covariates::Adjusting {
            described: covariates::Described::new(
                (&self.data.layout.levels, observed, self.data.origin),
                &self.model,
                centred,
                &self.treatment,
            ),
            levels: &self.levels,
            fitted: &self.fitted,
            alpha: self.alpha,
        }
        .detail(families);
        Some(detail)
    }

    /// The checks made in passes over the observations (see `passes`).
    fn checked_in_passes(
        &self,
        spec: &AnovaSpec,
        rereading: Option<read::Rereading<'_>>,
    ) -> Result<passes::Checked, crate::data::DataError> {
        let checking = passes::Checking {
            spec,
            data: &self.data,
            fitted: &self.fitted,
            residuals: &self.residuals,
            treatment: &self.treatment,
            factor_names: &self.model.factor_names,
        };
        passes::checks(&checking, rereading)
    }

    /// The checks with their advice (`checked`: made in passes already),
    /// then the comparison families.
    fn checks_and_families(
        &self,
        errors: &Errors<'_>,
        notes: &mut Vec<Note>,
        checked: Option<passes::Checked>,
    ) -> Result<(Checks, Vec<Family>), Diagnostic> {
        let spec = errors.spec;
        let (mut checks, spread_note) = match checked {
            Some(c) => (c.checks, c.note),
            None => checks::checks(
                spec,
                &checks::Fit {
                    data: self.data.source(),
                    residuals: &self.residuals.values,
                    cells: &self.treatment,
                    factor_names: &self.model.factor_names,
                    levels: &self.levels,
                },
                || self.residuals.outliers(&self.data, &self.fitted),
            ),
        };
        crate::analysis::transformation::outliers_as_written(&mut checks, spec);
        notes.extend(spread_note);
        // Friedman's test assumes neither normal errors nor equal variances.
        let remedies = match self.ranked {
            Some(_) => Remedies::BlockRanks,
            None => Remedies::Linear,
        };
        notes.extend(advice(&checks, remedies, self.alpha, self.data.decimals));
        let comparing = families::Comparing {
            errors,
            model: &self.model,
            data: &self.data,
            fitted: &self.fitted,
            levels: &self.levels,
            rows: &self.rows,
            cells: &self.cells,
            treatment: &self.treatment,
            types_agree: self.chosen.types_agree,
            alpha: self.alpha,
        };
        if let Some(ranked) = &self.ranked {
            let mut families = comparing.marginal_means();
            let term = &self.model.factor_names[ranked.factor];
            match (spec.compare, families.iter_mut().find(|f| &f.term == term)) {
                (Some(method), Some(family)) => {
                    family.comparison = friedman::comparison(ranked, method, self.alpha, notes);
                }
                // Only a factor beyond the comparable number of levels has no family.
                (Some(_), None) => notes.push(Note::other(format!(
                    "{} levels would give {} pairwise comparisons; sheaf compares at most {} levels. Group the levels, or use `compare: none`.",
                    ranked.levels.len(),
                    ranked.levels.len() * (ranked.levels.len() - 1) / 2,
                    super::MAX_COMPARED_LEVELS
                ))),
                (None, _) => {}
            }
            return Ok((checks, families));
        }
        let Some(method) = spec.compare else {
            return Ok((checks, comparing.marginal_means()));
        };
        let (families, family_notes) = comparing.families(method)?;
        notes.extend(family_notes);
        Ok((checks, families))
    }

    /// The outcome of the block.
    fn into_result(
        self,
        block: &Block,
        spec: &AnovaSpec,
        checks: Checks,
        families: Vec<Family>,
        notes: Vec<Note>,
        doc: &Document,
    ) -> LinearOutcome {
        let data = self.data;
        let decimals = decimals_shown(doc, spec, scale_decimals(spec, &data));
        let total_ss = self.total_ss.unwrap_or_else(|| total_ss(&data));
        let n = data.n();
        let (warnings, acknowledged) = split_acknowledged(notes, &spec.acknowledge);
        let fitted = self.fitted;
        let residual = Stratum {
            name: RESIDUAL.to_string(),
            df: fitted.residual_df as f64,
            ss: fitted.full.rss,
            ms: fitted.mse(),
        };
        let observations = observations(spec, &data, &self.residuals.values);
        let observed = Observed::factorial(
            FactorialLayout {
                level_counts: self.levels,
                treatments: &self.treatment.factors,
                plots: &spec.plots,
                error: PooledError {
                    ms: residual.ms,
                    df: residual.df,
                    alpha: self.alpha,
                },
            },
            &observations,
        );
        let factors = self
            .model
            .factor_names
            .into_iter()
            .zip(data.layout.levels)
            .enumerate()
            .map(|(i, (name, levels))| Factor {
                name,
                role: if self.treatment.factors.contains(&i) {
                    Role::Treatment
                } else {
                    Role::Block
                },
                levels,
            })
            .collect();
        LinearOutcome {
            n,
            exclusions: data.excluded,
            ss_type: Some(self.chosen.ss_type),
            types_agree: self.chosen.types_agree,
            factors,
            r_squared: 1.0 - residual.ss / total_ss,
            strata: vec![residual],
            terms: self.rows,
            total_df: n.saturating_sub(1),
            total_ss,
            ci_pooled: true,
            cells: self.cells,
            cell_factors: self.treatment.factors,
            families,
            warnings,
            acknowledged,
            observations,
            observed,
            ..base_outcome(
                block,
                spec,
                self.alpha,
                checks,
                super::binding::presentation(spec, decimals),
            )
        }
    }
}

/// Every observation with its fitted value and residual. Only figures read
/// them; without figures the outcome (and the cache entry) stays small
/// whatever the number of rows.
fn observations(spec: &AnovaSpec, data: &FactorialData, residuals: &[f64]) -> Vec<Observation> {
    let Some(observed) = data.observed() else {
        return Vec::new();
    };
    if spec.plots.kinds.is_empty() {
        return Vec::new();
    }
    observed
        .offsets
        .iter()
        .zip(residuals)
        .zip(observed.rows())
        .zip(observed.lines)
        .map(|(((y, e), levels), &line)| Observation {
            levels,
            value: data.origin + y,
            fitted: data.origin + y - e,
            residual: *e,
            line,
        })
        .collect()
}

/// The total sum of squares about the grand mean: from the observations
/// where there are any, else from the cells (within plus between).
fn total_ss(data: &FactorialData) -> f64 {
    if let Some(observed) = data.observed() {
        return GroupSummary::from_values(observed.offsets).ss;
    }
    cells_total_ss(data)
}

/// The total sum of squares from the cells: within plus between.
fn cells_total_ss(data: &FactorialData) -> f64 {
    let cells = &data.cell_summaries;
    let n = data.n() as f64;
    let grand = crate::stats::sum::neumaier(cells.iter().map(|c| c.n as f64 * c.mean)) / n;
    crate::stats::sum::neumaier(
        cells
            .iter()
            .map(|c| c.ss + c.n as f64 * (c.mean - grand) * (c.mean - grand)),
    )
}
