//! Factorial, blocked and Latin-square designs: any fixed-effects model with
//! categorical factors, fitted by QR, with Type I/II/III sums of squares,
//! comparisons on estimated marginal means, simple effects and cell means.
//!
//! The steps, one file each: `model` (factors, blocks, terms; keys for one
//! factor only), `read` (the observations), `terms` (confounded terms,
//! empty cells, size), `fit` (least squares on one row per cell), `table`
//! (sums of squares and F tests), `design_notes`, `cells` (treatment
//! cells), `residuals` (and outliers), `checks`, `families` (marginal and
//! cell means compared).

mod cells;
mod checks;
mod design_notes;
mod families;
mod fit;
mod model;
mod read;
mod residuals;
mod table;
mod terms;

use super::binding::{Data, decimals_shown};
use super::checks::{Remedies, advice};
use super::notes::{Note, split_acknowledged};
use crate::data::FactorialData;
use crate::diag::Diagnostic;
use crate::doc::block::AnovaSpec;
use crate::doc::{Block, Document};
use crate::outcome::EmmRow;
use crate::outcome::{CellRow, Checks, FactorialResult, Family, TermRow};
use crate::provenance::Input;
use crate::stats::oneway::GroupSummary;
use cells::TreatmentCells;
use fit::Fitted;
use model::{Errors, Model};
use residuals::Residuals;
use table::Chosen;

/// Runs a factorial `anova` block.
pub fn run_factorial(
    doc: &Document,
    block: &Block,
    spec: &AnovaSpec,
    data: Data<'_>,
    display_path: &str,
) -> Result<(FactorialResult, Option<Input>), Diagnostic> {
    let mut errors = Errors {
        doc,
        spec,
        reused: None,
    };
    model::refuse_one_factor_keys(&errors)?;
    let mut model = Model::from_spec(doc, spec)?;
    let names: Vec<&str> = model.factor_names.iter().map(String::as_str).collect();
    let (data, streamed) = read::read_observations(&errors, block, data, &names, display_path)?;
    let levels: Vec<usize> = data.levels.iter().map(Vec::len).collect();
    if let Some(f) = levels.iter().position(|&l| l < 2) {
        return Err(errors.model(
            format!(
                "`{}` has {} with data; a factor needs two or more",
                model.factor_names[f],
                crate::format::counted(levels[f], "level", "levels")
            ),
            "check the factor column and the missing-value markers",
        ));
    }
    // From here on a model error also explains block labels reused within
    // another block factor, the usual cause when blocks are nested.
    errors.reused = design_notes::reused_block_labels(&data, &model);
    let mut notes = terms::drop_confounded(&mut model, &data, &levels, &errors)?;
    let empty = terms::empty_cells(&model, &data, &levels);
    terms::check_size(&model, &levels, &errors)?;
    let fitted = Fitted::new(&data, &model, &levels, &errors)?;
    let chosen = table::choose(&fitted, &model, &empty, &errors)?;
    let alpha = spec.alpha.unwrap_or(doc.front.alpha);
    let rows = table::term_rows(&chosen.table, &model, &fitted, alpha, data.offsets.len());
    notes.extend(design_notes::design_notes(
        &data,
        &model,
        &chosen,
        &empty,
        fitted.rank_deficient,
        (&spec.data.value, errors.reused.as_ref()),
    ));
    let treatment = TreatmentCells::new(&data, model.treatment_factors(), &levels);
    let analysed = Analysed {
        cells: treatment.rows(&data),
        treatment,
        residuals: Residuals::new(&data, &fitted),
        data,
        model,
        levels,
        fitted,
        chosen,
        rows,
        alpha,
    };
    let (checks, families, marginal_means) = analysed.checks_and_families(&errors, &mut notes)?;
    Ok((
        analysed.into_result(block, spec, checks, (families, marginal_means), notes, doc),
        streamed,
    ))
}

/// Each treatment factor's estimated marginal means, by factor name.
type MarginalMeans = Vec<(String, Vec<EmmRow>)>;

/// A fitted factorial model and what was computed from it.
struct Analysed {
    data: FactorialData,
    model: Model,
    levels: Vec<usize>,
    fitted: Fitted,
    chosen: Chosen,
    rows: Vec<TermRow>,
    treatment: TreatmentCells,
    /// Each treatment cell's n, mean and SD.
    cells: Vec<CellRow>,
    residuals: Residuals,
    alpha: f64,
}

impl Analysed {
    /// The checks with their advice, then the comparison families.
    fn checks_and_families(
        &self,
        errors: &Errors<'_>,
        notes: &mut Vec<Note>,
    ) -> Result<(Checks, Vec<Family>, MarginalMeans), Diagnostic> {
        let spec = errors.spec;
        let (checks, spread_note) = checks::checks(
            spec,
            &checks::Fit {
                data: &self.data,
                fitted: &self.fitted,
                residuals: &self.residuals,
                cells: &self.treatment,
                factor_names: &self.model.factor_names,
                levels: &self.levels,
            },
        );
        notes.extend(spread_note);
        notes.extend(advice(
            &checks,
            Remedies::Linear,
            self.alpha,
            self.data.decimals,
        ));
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
        let Some(method) = spec.compare else {
            return Ok((checks, Vec::new(), comparing.marginal_means()));
        };
        let (families, family_notes) = comparing.families(method)?;
        notes.extend(family_notes);
        Ok((checks, families, Vec::new()))
    }

    /// The outcome of the block.
    fn into_result(
        self,
        block: &Block,
        spec: &AnovaSpec,
        checks: Checks,
        (families, marginal_means): (Vec<Family>, MarginalMeans),
        notes: Vec<Note>,
        doc: &Document,
    ) -> FactorialResult {
        let data = self.data;
        let decimals = decimals_shown(doc, spec, data.decimals);
        let total_ss = GroupSummary::from_values(&data.offsets).ss;
        let (warnings, acknowledged) = split_acknowledged(notes, &spec.acknowledge);
        let observations = Observations::kept(spec, &data, &self.residuals.values);
        let fitted = self.fitted;
        FactorialResult {
            id: block.id.clone(),
            line: block.line,
            data: spec.data.value.clone(),
            response: spec.model.value.response.clone(),
            factors: self.model.factor_names,
            alpha: self.alpha,
            ss_type: self.chosen.ss_type,
            types_agree: self.chosen.types_agree,
            terms: self.rows,
            residual_df: fitted.residual_df,
            residual_ss: fitted.full.rss,
            mse: fitted.mse(),
            total_ss,
            r_squared: 1.0 - fitted.full.rss / total_ss,
            n: data.offsets.len(),
            cells: self.cells,
            cell_factors: self.treatment.factors,
            families,
            marginal_means,
            checks,
            decimals,
            show: spec.show,
            order: spec.order,
            caption: spec.caption.clone(),
            warnings,
            acknowledged,
            values: observations.values,
            fitted: observations.fitted,
            residuals: observations.residuals,
            rows: observations.rows,
            lines: observations.lines,
            plots: spec.plots.clone(),
            levels: data.levels,
            exclusions: data.excluded,
        }
    }
}

/// Per observation: value, fitted value, residual, levels and data line.
#[derive(Default)]
struct Observations {
    values: Vec<f64>,
    fitted: Vec<f64>,
    residuals: Vec<f64>,
    rows: Vec<Vec<usize>>,
    lines: Vec<usize>,
}

impl Observations {
    /// Only figures read the observations; without them the result (and
    /// the cache entry) stays small whatever the number of rows.
    fn kept(spec: &AnovaSpec, data: &FactorialData, residuals: &[f64]) -> Self {
        if spec.plots.kinds.is_empty() {
            return Observations::default();
        }
        Observations {
            values: data.offsets.iter().map(|y| data.origin + y).collect(),
            fitted: data
                .offsets
                .iter()
                .zip(residuals)
                .map(|(y, e)| data.origin + y - e)
                .collect(),
            residuals: residuals.to_vec(),
            rows: data.rows(),
            lines: data.lines.clone(),
        }
    }
}
