//! The mixed-model engine: blocks with `random` terms. The fixed terms are
//! tested against the variation of the units they were applied to, by REML
//! with Kenward-Roger (or Satterthwaite) df; balanced designs also get the
//! classical stratum table, which REML reproduces exactly; means come from
//! the mixed model with their own SEs and df, and so do their comparisons.
//!
//! The steps, one file each: `units` (random terms from label
//! combinations), `fixed_terms` (the tests and strata), `families` (means
//! and comparisons), `detail` (fit, variance components, SEDs),
//! `residuals` (checks on the conditional residuals and the predicted unit
//! effects).

mod cell_letters;
mod control;
mod covariates;
mod detail;
mod families;
mod fixed_terms;
mod planned;
mod repeated;
mod residuals;
mod structured;
mod time_profile;
mod trend;
mod units;

use super::binding::decimals_shown;
use super::checks::{Remedies, advice};
use super::contrasts::contrast_factor;
use super::factorial::cells::TreatmentCells;
use super::factorial::checks::Source;
use super::factorial::covariate_notes;
use super::factorial::covariates::{Centred, Described};
use super::factorial::model::{Errors, Model};
use super::factorial::read::read_columns_and_covariates;
use super::notes::{Note, split_acknowledged};
use super::observed::{FactorialLayout, PooledError};
use super::outcome_base::base_outcome;
use super::request::{Analysis, Request};
use crate::data::FactorialRows;
use crate::diag::Diagnostic;
use crate::doc::block::{CellComparison, DdfMethod, Omnibus};
use crate::outcome::ResidualKind;
use crate::outcome::linear::{Factor, Family, LinearOutcome, Observation, Observed, Role};
use crate::outcome::mixed::CellLetters;
use crate::stats::linear::{Layout, design_matrix_with, term_columns};
use crate::stats::mixed::{self, Ddf, FixedDesign, Information};
use crate::stats::oneway::GroupSummary;
use crate::stats::strata::{self, StrataInput};
use families::{Estimating, Slice};
use std::collections::BTreeMap;

/// Random terms with fewer levels than this get a warning: their variance
/// rests on very few units (mixed-models spec, risk 5).
const FEW_LEVELS: usize = 5;

/// Runs a block with random terms.
pub(super) fn run_mixed(request: Request<'_>) -> Analysis {
    let (doc, block, spec) = (request.doc, request.block, request.spec);
    let errors = Errors {
        doc,
        spec,
        reused: None,
    };
    let model = Model::from_spec(doc, spec)?;
    let random = spec.random.as_ref().map_or(&[][..], |r| &r.value[..]);
    // The fixed factors first, then the columns only random terms name (the
    // covariates, read last, are split off).
    let mut names: Vec<String> = model.factor_names.clone();
    for f in random.iter().flat_map(|t| &t.factors) {
        if !names.contains(f) {
            names.push(f.clone());
        }
    }
    let (data, streamed, centred) = read_columns_and_covariates(
        &errors,
        block,
        (request.data, request.display_path),
        &model,
        &names[model.factor_names.len()..],
    )?;
    let units = units::units(&data, random, |f| names.iter().position(|n| n == f));
    let fixed_count = model.factor_names.len();
    let levels: Vec<usize> = data.layout.levels[..fixed_count]
        .iter()
        .map(Vec::len)
        .collect();
    let layout = Layout {
        levels: levels.clone(),
        rows: (0..data.offsets.len())
            .map(|i| data.row(i)[..fixed_count].to_vec())
            .collect(),
    };
    errors.two_levels_each(&model.factor_names, &levels)?;
    let design = match &centred {
        Some(c) => {
            let (cell_of, cells) = fixed_cells(&layout);
            c.check_varies((&cell_of, cells), &errors)?;
            let full = design_matrix_with(&layout, &c.rows, &model.terms);
            FixedDesign::from_columns(full, term_columns(&model.terms, &layout.levels))
        }
        None => FixedDesign::new(&layout, &model.terms),
    };
    // Aliased columns (empty cells under an interaction) leave Type III
    // tests and marginal means depending on the coding: refuse, as the
    // fixed-effects engine does.
    if design.kept.iter().any(|k| !k) {
        return Err(errors.model(
            "some combinations of the fixed factors have no observations, so the interaction's tests and the marginal means cannot be estimated".into(),
            "drop the interaction from `model`, or check the data for missing cells",
        ));
    }
    let fit =
        mixed::fit(&data.offsets, &design, &units.terms).map_err(|e| fit_error(&errors, e))?;
    let (repeated, structured) = repeated_reading(&errors, &names, &data, &model, &design)?;
    let predictions = fit
        .predictions(&data.offsets, &design, &units.terms)
        .map_err(|e| {
            errors.model(
                format!("the predicted unit effects could not be computed: {e}"),
                "check that every random term names units with several observations each",
            )
        })?;
    let analysed = Analysed {
        alpha: spec.alpha.unwrap_or(doc.front.alpha),
        ddf: match spec.ddf {
            DdfMethod::KenwardRoger => Ddf::KenwardRoger,
            DdfMethod::Satterthwaite => Ddf::Satterthwaite(Information::Observed),
        },
        random_names: units.terms.iter().map(|t| t.name.clone()).collect(),
        data,
        model,
        layout,
        design,
        fit,
        predictions,
        units,
        repeated,
        structured,
        centred,
    };
    let outcome = analysed.outcome(&errors, block)?;
    Ok((outcome, streamed))
}

/// The repeated-measures reading of a block with `subject` (the subject
/// column's index, the classification and the univariate analysis) and,
/// with `covariance`, the structured fit.
fn repeated_reading(
    errors: &Errors<'_>,
    names: &[String],
    data: &FactorialRows,
    model: &Model,
    design: &FixedDesign,
) -> Result<RepeatedReading, Diagnostic> {
    let spec = errors.spec;
    let repeated = spec
        .subject
        .as_ref()
        .map(|s| {
            let column = names.iter().position(|n| *n == s.value).ok_or_else(|| {
                errors.model(
                    format!("the subject column `{}` was not read", s.value),
                    "check `subject`",
                )
            })?;
            let detail = repeated::repeated(data, model, column, &s.value)
                .map_err(|(message, hint)| errors.model(message, &hint))?;
            Ok::<_, Diagnostic>((column, detail))
        })
        .transpose()?;
    let structured = match (&repeated, spec.covariance.as_ref()) {
        (Some((column, detail)), Some(covariance)) => {
            let within: Vec<usize> = detail
                .within
                .iter()
                .filter_map(|w| model.index_of(w))
                .collect();
            let repeats = structured::Repeats {
                data,
                design,
                subject: *column,
                within: &within,
                factor_names: &model.factor_names,
                kenward_roger: spec.ddf == DdfMethod::KenwardRoger,
                complete_subjects: detail.complete_subjects,
            };
            Some(
                structured::structured(&repeats, covariance.value)
                    .map_err(|(message, hint)| errors.model(message, &hint))?,
            )
        }
        _ => None,
    };
    Ok((repeated, structured))
}

/// The subject column's index with the repeated-measures reading, and the
/// structured fit.
type RepeatedReading = (
    Option<(usize, crate::outcome::repeated::RepeatedDetail)>,
    Option<structured::Structured>,
);

/// A fitted mixed model and what it was fitted to.
struct Analysed {
    alpha: f64,
    ddf: Ddf,
    random_names: Vec<String>,
    data: FactorialRows,
    model: Model,
    layout: Layout,
    design: FixedDesign,
    fit: mixed::MixedFit,
    predictions: mixed::Predictions,
    units: units::Units,
    /// The subject column's index among the data's factors, and the
    /// repeated-measures reading (`subject`).
    repeated: Option<(usize, crate::outcome::repeated::RepeatedDetail)>,
    /// The covariance structure `covariance` asks for, which then gives the
    /// tests, comparisons and checks in place of the random subject term.
    structured: Option<structured::Structured>,
    /// The covariates, centred (`covariate`).
    centred: Option<Centred>,
}

impl Analysed {
    /// The classical stratum analysis, when the layout has one and every
    /// stratum's variance is positive (then REML reproduces it exactly).
    fn classical(&self) -> Result<strata::StratumAnalysis, crate::outcome::mixed::NotClassical> {
        if self.structured.is_some() {
            return Err(crate::outcome::mixed::NotClassical::Structured);
        }
        if let Some(c) = &self.centred {
            return Err(crate::outcome::mixed::NotClassical::Covariate {
                names: c.names.clone(),
            });
        }
        let names = self.names();
        let labels = &self.data.layout.levels;
        let a = strata::analyse(&StrataInput {
            y: &self.data.offsets,
            shift: self.data.origin,
            treatments: &self.layout,
            terms: &self.model.terms,
            random: &self.units.layout,
        })
        .map_err(|reasons| detail::reason(&reasons, &names, labels))?;
        let pooled = a
            .components
            .iter()
            .zip(&self.fit.components)
            .find(|(c, r)| c.negative || r.on_boundary);
        match pooled {
            Some((_, r)) => Err(crate::outcome::mixed::NotClassical::Pooled {
                term: r.name.clone(),
            }),
            None => Ok(a),
        }
    }

    /// The fixed-effect inference of the model the block reports: the
    /// covariance structure's when it has one, else the random terms'.
    fn inference(&self) -> &mixed::FixedInference {
        self.structured
            .as_ref()
            .map_or(&self.fit.fixed, structured::Structured::inference)
    }

    fn names(&self) -> detail::Names<'_> {
        detail::Names {
            random: &self.random_names,
            units: &self.units.unit_names,
            factors: &self.model.factor_names,
            terms: &self.model.term_names,
        }
    }

    /// The outcome of the block.
    /// The residual variance component; none for structured covariances.
    fn residual_variance(&self) -> f64 {
        match &self.structured {
            Some(_) => f64::NAN,
            None => self.fit.components.last().map_or(f64::NAN, |c| c.variance),
        }
    }

    fn outcome(
        self,
        errors: &Errors<'_>,
        block: &crate::doc::Block,
    ) -> Result<LinearOutcome, Diagnostic> {
        let spec = errors.spec;
        let classical = self.classical();
        let tested = fixed_terms::Tested {
            fit: self.inference(),
            design: &self.design,
            ddf: self.ddf,
            alpha: self.alpha,
            classical: classical.as_ref().ok(),
            random_names: &self.random_names,
        };
        let strata = tested.strata(self.residual_variance());
        let terms: Vec<_> = self
            .model
            .terms
            .iter()
            .enumerate()
            .map(|(i, factors)| {
                let block_term = factors.len() == 1 && self.model.is_block(factors[0]);
                tested.term(i, &self.model.term_names[i], factors, !block_term)
            })
            .collect();
        let (families, cell_letters) = self.families(errors, &terms)?;
        let data = &self.data;
        let treatments = self.model.treatment_factors();
        let cells = TreatmentCells::new(&data.layout.cells, treatments.clone(), &levels_of(data));
        let (checks, spread_note) = self.checked(spec, &cells);
        let mut notes = match &self.structured {
            Some(s) => structured::notes(&s.detail, spec.ddf),
            None => self.notes(),
        };
        let covariates = self.covariate_detail(spec, &cells, &families);
        if let Some(d) = &covariates {
            notes.extend(covariate_notes::notes(d, self.alpha));
        }
        notes.extend(self.univariate_note());
        notes.extend(spread_note);
        notes.extend(advice(&checks, Remedies::Linear, self.alpha, data.decimals));
        let predicted = if self.structured.is_some() {
            Vec::new()
        } else {
            residuals::predicted_effects(
                spec,
                &self.predictions,
                &self.fit.components,
                &self.units.unit_names,
            )
        };
        notes.extend(residuals::predicted_advice(&predicted, self.alpha));
        let mut detail = match &self.structured {
            Some(s) => detail::structured(&s.fit, spec.ddf),
            None => detail::detail(
                &self.fit,
                spec.ddf,
                classical.as_ref().map_err(Clone::clone),
                &self.names(),
                self.alpha,
            ),
        };
        detail.predicted = predicted;
        detail.cell_letters = cell_letters;
        let repeated = self.repeated_detail(spec);
        let (warnings, acknowledged) = split_acknowledged(notes, &spec.acknowledge);
        let cells = cells.rows(Source::Observed(data.observed()), data.origin);
        let total_ss = GroupSummary::from_values(&data.offsets).ss;
        let observations = self.observations(spec);
        let presentation =
            super::binding::presentation(spec, decimals_shown(errors.doc, spec, data.decimals));
        Ok(LinearOutcome {
            n: data.offsets.len(),
            exclusions: data.excluded.clone(),
            method: Omnibus::Anova,
            ss_type: Some(crate::stats::linear::SsType::III),
            types_agree: detail.not_classical.is_none(),
            factors: self.factors(&treatments),
            strata,
            terms,
            total_df: data.offsets.len().saturating_sub(1),
            total_ss,
            cells,
            cell_factors: treatments,
            families,
            warnings,
            acknowledged,
            observed: self.observed(spec, &observations),
            observations,
            mixed: Some(Box::new(detail)),
            repeated: repeated.map(Box::new),
            covariates: covariates.map(Box::new),
            contrasts: self.contrasts(errors)?.map(Box::new),
            trend: trend::trend(&self, errors)?.map(Box::new),
            ..base_outcome(block, spec, self.alpha, checks, presentation)
        })
    }

    /// The covariates' slopes, the test of equal slopes and what describes
    /// them, when the block has covariates.
    fn covariate_detail(
        &self,
        spec: &crate::doc::block::AnovaSpec,
        cells: &TreatmentCells,
        families: &[Family],
    ) -> Option<crate::outcome::covariates::CovariateDetail> {
        let centred = self.centred.as_ref()?;
        let refit = |design: &FixedDesign| self.refit(spec, design);
        let covariates = covariates::MixedCovariates {
            described: Described::new(
                (
                    &self.data.layout.levels,
                    self.data.observed(),
                    self.data.origin,
                ),
                &self.model,
                centred,
                cells,
            ),
            fit: self.inference(),
            design: &self.design,
            layout: &self.layout,
            ddf: self.ddf,
            alpha: self.alpha,
            refit: &refit,
        };
        Some(covariates.detail(families))
    }

    /// The model fitted again with another fixed design: the same random
    /// terms, or the same covariance structure.
    fn refit(
        &self,
        spec: &crate::doc::block::AnovaSpec,
        design: &FixedDesign,
    ) -> Option<mixed::FixedInference> {
        let y = &self.data.offsets;
        let (Some(_), Some((subject, detail)), Some(covariance)) =
            (&self.structured, &self.repeated, &spec.covariance)
        else {
            return mixed::fit(y, design, &self.units.terms)
                .ok()
                .map(|f| f.fixed);
        };
        let within: Vec<usize> = (detail.within.iter())
            .filter_map(|w| self.model.index_of(w))
            .collect();
        let repeats = structured::Repeats {
            data: &self.data,
            design,
            subject: *subject,
            within: &within,
            factor_names: &self.model.factor_names,
            kenward_roger: spec.ddf == DdfMethod::KenwardRoger,
            complete_subjects: detail.complete_subjects,
        };
        structured::structured(&repeats, covariance.value)
            .ok()
            .map(|s| s.inference().clone())
    }

    /// Why the univariate repeated-measures analysis was not possible, when
    /// it was not.
    fn univariate_note(&self) -> Option<Note> {
        match self.repeated.as_ref().map(|(_, r)| &r.univariate) {
            Some(Err(reason)) => Some(Note::other(format!(
                "The univariate repeated-measures analysis (with sphericity corrections) was not possible: {reason}. The mixed model's tests use every observation."
            ))),
            _ => None,
        }
    }

    /// The residual checks: on the normalised residuals with a covariance
    /// structure, else on the conditional ones.
    fn checked(
        &self,
        spec: &crate::doc::block::AnovaSpec,
        cells: &TreatmentCells,
    ) -> (crate::outcome::Checks, Option<Note>) {
        let (residuals, scores, kind) = match &self.structured {
            Some(s) => (
                &s.residuals.normalised,
                &s.residuals.normalised,
                ResidualKind::Normalised,
            ),
            None => (
                &self.predictions.residuals,
                &self.predictions.studentized,
                ResidualKind::Conditional,
            ),
        };
        residuals::Checked {
            spec,
            data: &self.data,
            residuals,
            scores,
            kind,
            cells,
            factor_names: &self.model.factor_names,
            levels: &self.layout.levels,
        }
        .checks()
    }

    /// Every observation with its fixed-factor levels, fitted value (fixed
    /// effects plus predicted unit effects) and conditional residual, for
    /// figures (only when figures are asked for).
    fn observations(&self, spec: &crate::doc::block::AnovaSpec) -> Vec<Observation> {
        if spec.plots.kinds.is_empty() {
            return Vec::new();
        }
        let data = &self.data;
        let (fitted, residuals) = match &self.structured {
            Some(s) => (&s.residuals.fitted, &s.residuals.normalised),
            None => (&self.predictions.fitted, &self.predictions.residuals),
        };
        (0..data.offsets.len())
            .map(|i| Observation {
                levels: self.layout.rows[i].clone(),
                value: data.origin + data.offsets[i],
                fitted: data.origin + fitted[i],
                residual: residuals[i],
                line: data.lines[i],
            })
            .collect()
    }

    /// Level spreads and observed two-way means for figures; intervals on
    /// observed means need an error, which here depends on the comparison,
    /// so interaction plots draw the means without intervals.
    fn observed(
        &self,
        spec: &crate::doc::block::AnovaSpec,
        observations: &[Observation],
    ) -> Observed {
        let treatments = self.model.treatment_factors();
        Observed::factorial(
            FactorialLayout {
                level_counts: self.layout.levels.clone(),
                treatments: &treatments,
                plots: &spec.plots,
                error: PooledError {
                    ms: f64::NAN,
                    df: f64::NAN,
                    alpha: self.alpha,
                },
            },
            observations,
        )
    }

    /// The fixed factors with their roles.
    fn factors(&self, treatments: &[usize]) -> Vec<Factor> {
        self.model
            .factor_names
            .iter()
            .enumerate()
            .map(|(i, name)| Factor {
                name: name.clone(),
                role: if treatments.contains(&i) {
                    Role::Treatment
                } else {
                    Role::Block
                },
                levels: self.data.layout.levels[i].clone(),
            })
            .collect()
    }

    /// Warnings on the random terms: few levels, variances at zero.
    fn notes(&self) -> Vec<Note> {
        let mut notes = Vec::new();
        for c in self.fit.components.iter().filter(|c| c.name != "residual") {
            if c.levels < FEW_LEVELS {
                notes.push(Note::other(format!(
                    "`{}` has only {} levels: its variance rests on very few units and is uncertain (see its interval); keep the term, which the design defines, but do not over-read its size.",
                    c.name, c.levels
                )));
            }
            if c.on_boundary {
                notes.push(Note::other(format!(
                    "The variance of `{}` is estimated at 0 (a singular fit): these units vary no more than the level below. Tests that would use this error pool it with the next one.",
                    c.name
                )));
            }
        }
        notes
    }

    /// The repeated-measures detail with the structure and the profile.
    fn repeated_detail(
        &self,
        spec: &crate::doc::block::AnovaSpec,
    ) -> Option<crate::outcome::repeated::RepeatedDetail> {
        let (subject, detail) = self.repeated.as_ref()?;
        let count = |fixed: &[Option<usize>]| self.count(fixed);
        Some(crate::outcome::repeated::RepeatedDetail {
            covariance: self.structured.as_ref().map(|s| s.detail.clone()),
            profile: time_profile::profile(
                spec,
                &self.estimating(&count),
                &self.data,
                detail,
                *subject,
            ),
            ..detail.clone()
        })
    }

    /// Observations at the given levels of the fixed factors.
    fn count(&self, fixed: &[Option<usize>]) -> usize {
        let data = &self.data;
        (0..data.offsets.len())
            .filter(|&i| {
                let row = data.row(i);
                fixed
                    .iter()
                    .enumerate()
                    .all(|(f, l)| l.is_none_or(|l| row[f] == l))
            })
            .count()
    }

    /// The block's planned contrasts over one fixed factor's marginal means,
    /// each with its own SE and df.
    fn contrasts(
        &self,
        errors: &Errors<'_>,
    ) -> Result<Option<crate::outcome::contrasts::ContrastDetail>, Diagnostic> {
        let (doc, spec) = (errors.doc, errors.spec);
        let candidates: Vec<(String, Vec<String>)> = (self.model.treatment_factors().into_iter())
            .map(|f| {
                (
                    self.model.factor_names[f].clone(),
                    self.data.layout.levels[f].clone(),
                )
            })
            .collect();
        let Some(name) = contrast_factor(doc, spec, &candidates)? else {
            return Ok(None);
        };
        let f = self.model.index_of(&name).unwrap_or(0);
        let count = |fixed: &[Option<usize>]| self.count(fixed);
        let estimating = self.estimating(&count);
        let means = planned::MixedLevelMeans::new(&estimating, f, spec.ddf);
        crate::analysis::contrasts::planned(doc, spec, &means, self.alpha)
    }

    /// What the means and comparisons read.
    fn estimating<'a>(&'a self, count: &'a dyn Fn(&[Option<usize>]) -> usize) -> Estimating<'a> {
        Estimating {
            fit: self.inference(),
            design: &self.design,
            ddf: self.ddf,
            terms: &self.model.terms,
            levels: &self.layout.levels,
            labels: &self.data.layout.levels[..self.layout.levels.len()],
            model: &self.model,
            count,
            origin: self.data.origin,
            alpha: self.alpha,
        }
    }

    /// The comparison families `compare`, `within` and `cells` ask for (and
    /// the two-way table's letters); the marginal means alone with
    /// `compare: none`.
    fn families(
        &self,
        errors: &Errors<'_>,
        terms: &[crate::outcome::linear::TermTest],
    ) -> Result<(Vec<Family>, Option<CellLetters>), Diagnostic> {
        let spec = errors.spec;
        let count = |fixed: &[Option<usize>]| self.count(fixed);
        let estimating = self.estimating(&count);
        let fixed_count = self.layout.levels.len();
        let compared: Vec<usize> = (0..fixed_count)
            .filter(|&f| !self.model.is_block(f) && self.model.terms.contains(&vec![f]))
            .filter(|&f| {
                spec.compare_terms
                    .as_ref()
                    .is_none_or(|c| c.value.contains(&self.model.factor_names[f]))
            })
            .filter(|&f| estimating.comparable(f))
            .collect();
        let Some(method) = spec.compare else {
            let marginal = compared
                .iter()
                .map(|&f| Family {
                    term: self.model.factor_names[f].clone(),
                    within: None,
                    estimates: estimating
                        .estimates(&Slice {
                            vary: vec![f],
                            within: None,
                        })
                        .0,
                    comparison: None,
                })
                .collect();
            return Ok((marginal, None));
        };
        if method == crate::stats::compare::Method::Dunnett {
            return Ok((
                vec![control::dunnett(errors, &estimating, &compared)?],
                None,
            ));
        }
        let within = spec
            .within
            .as_ref()
            .and_then(|w| self.model.index_of(&w.value));
        let protect_p = |f: usize| {
            spec.protected.then(|| {
                terms
                    .iter()
                    .find(|t| t.factors == vec![f])
                    .map_or(f64::NAN, |t| t.p)
            })
        };
        let mut families = Vec::new();
        let cells = spec.cells.as_ref().map_or(CellComparison::No, |c| c.value);
        let cells_wanted = cells.wanted();
        if !cells_wanted || spec.compare_terms.is_some() || within.is_some() {
            for &f in compared.iter().filter(|&&f| Some(f) != within) {
                let name = &self.model.factor_names[f];
                match within {
                    Some(w) => {
                        for s in 0..self.layout.levels[w] {
                            let slice = Slice {
                                vary: vec![f],
                                within: Some((w, s)),
                            };
                            families.push(estimating.family(name, &slice, method, None));
                        }
                    }
                    None => {
                        let slice = Slice {
                            vary: vec![f],
                            within: None,
                        };
                        families.push(estimating.family(name, &slice, method, protect_p(f)));
                    }
                }
            }
        }
        let treatments = self.model.treatment_factors();
        let mut letters = None;
        if let (CellComparison::Yes, &[a, b]) = (cells, &treatments[..]) {
            letters = Some(cell_letters::row_and_column_families(
                &estimating,
                &self.model,
                terms,
                [a, b],
                method,
                &mut families,
            ));
        } else if cells_wanted {
            let slice = Slice {
                vary: treatments,
                within: None,
            };
            families.push(estimating.family("cells", &slice, method, None));
        }
        Ok((families, letters))
    }
}

/// Each observation's cell of the fixed factors, and the number of cells.
fn fixed_cells(layout: &Layout) -> (Vec<usize>, usize) {
    let mut index: BTreeMap<&[usize], usize> = BTreeMap::new();
    let cell_of = layout
        .rows
        .iter()
        .map(|r| {
            let next = index.len();
            *index.entry(&r[..]).or_insert(next)
        })
        .collect();
    (cell_of, index.len())
}

/// Levels of every factor of the data (fixed and random-only).
fn levels_of(data: &FactorialRows) -> Vec<usize> {
    data.layout.levels.iter().map(Vec::len).collect()
}

/// A fit that failed, as a diagnostic: a random term that cannot be told
/// apart from another or from the residual points at `random`; anything
/// else at the model.
fn fit_error(errors: &Errors<'_>, e: mixed::MixedError) -> Diagnostic {
    let message = format!("the mixed model could not be fitted: {e}");
    match (&e, &errors.spec.random) {
        (
            mixed::MixedError::SameGrouping { .. } | mixed::MixedError::DuplicatesResidual { .. },
            Some(random),
        ) => errors.explain(
            (errors.doc)
                .error_at(random.line, Some(random.column), message)
                .hint("each random term must hold several observations per level and group them differently from every other term"),
        ),
        _ => errors.model(
            message,
            "check that every random term names units with several observations each, and that the fixed terms are estimable",
        ),
    }
}
