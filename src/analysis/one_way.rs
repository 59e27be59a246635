//! The one-factor engine: summaries per level (streamed from large files,
//! or published), the ANOVA table, Welch's ANOVA or ranks when asked,
//! checks, level statistics and one comparison family.

mod checks;
mod comparisons;
mod levels;
mod notes;
pub(super) mod observations;
mod outcome;
mod sample;

pub use sample::RoundingRange;

use super::binding::{apply_labels, check_labels, decimals_shown};
use super::checks::{Remedies, advice};
use super::notes::{Note, split_acknowledged};
use super::outcome_base::base_outcome;
use super::request::{Analysis, Request};
use super::transformation;
use crate::diag::Diagnostic;
use crate::doc::block::{AnovaSpec, Omnibus};
use crate::doc::{Block, Document};
use crate::outcome::linear::{Alternatives, LinearOutcome, Observed};
use crate::stats::effect::{EffectSizes, one_way_effects};
use crate::stats::oneway::{OneWay, OneWayError, one_way, total_sum_of_squares};
use crate::stats::ranks::{KruskalWallis, kruskal_wallis};
use crate::stats::sum::neumaier;
use crate::stats::welch::welch_anova;
use sample::{Reading, Sample};

/// Runs a one-factor `anova` block on its data file. A streamed file comes
/// back as the `Input` that records it (hash and size, no bytes).
pub(super) fn run_anova(request: Request<'_>) -> Analysis {
    let (doc, block, spec) = (request.doc, request.block, request.spec);
    let formula = &spec.model.value;
    // `compile` sends models with several terms to `factorial::run_factorial`.
    if formula.terms.len() != 1 || formula.terms[0].factors.len() != 1 {
        return Err(doc.error_at(
            spec.model.line,
            None,
            "internal error: a factorial model reached the one-factor analysis",
        ));
    }
    let factor = formula.terms[0].factors[0].clone();
    let reading = Reading {
        doc,
        block,
        spec,
        factor: &factor,
        display_path: request.display_path,
    };
    let (mut sample, streamed) = reading.load(request.data)?;
    let names: Vec<&str> = sample.names.iter().map(String::as_str).collect();
    check_labels(doc, spec, &names)?;
    apply_labels(&mut sample.names, &spec.labels);
    let engine = Engine {
        doc,
        block,
        spec,
        alpha: spec.alpha.unwrap_or(doc.front.alpha),
    };
    let result = engine.analyse(sample, factor)?;
    Ok((result, streamed))
}

/// A block's planned contrasts and trend, each when asked for.
type LevelAnalyses = (
    Option<crate::outcome::contrasts::ContrastDetail>,
    Option<crate::outcome::trend::TrendDetail>,
);

/// What every step of the analysis reads: the block and its α.
struct Engine<'a> {
    doc: &'a Document,
    block: &'a Block,
    spec: &'a AnovaSpec,
    alpha: f64,
}

impl Engine<'_> {
    /// The statistics of a loaded sample.
    fn analyse(&self, sample: Sample, factor: String) -> Result<LinearOutcome, Diagnostic> {
        let (spec, alpha) = (self.spec, self.alpha);
        let table = self.table(&sample)?;
        let mut notes = notes::sample_notes(&sample, &table, &factor, spec);
        let mut checks = checks::checks(spec, &sample);
        transformation::outliers_as_written(&mut checks, spec);
        notes.extend(advice(
            &checks,
            Remedies::OneFactor(spec.method),
            alpha,
            sample.decimals,
        ));
        let alternatives = self.alternatives(&sample, &mut notes)?;
        let effect = self.effect(&table, &mut notes);
        let pooled = spec.method != Omnibus::Welch;
        let levels = levels::level_rows(&sample, &table, alpha, pooled);
        let comparison = self.comparison(&sample, &levels, &table, &alternatives, &mut notes)?;
        let (contrasts, trend) = self.contrasts_and_trend(&factor, &levels, &table)?;
        let families = vec![outcome::level_family(&factor, &levels, comparison)];
        let dose = self.dose(&sample, &factor, &levels, &table, &families)?;
        let transform = self.transform_detail(&sample, &factor, &families, &mut notes)?;
        let data_means: Vec<f64> = match spec.transform {
            Some(_) => sample.arithmetic.clone(),
            None => levels.iter().map(|l| l.mean).collect(),
        };
        let level_data = super::equivalence::LevelData {
            names: &sample.names,
            summaries: &sample.summaries,
            data_means: &data_means,
            mse: table.ms_within,
            df: table.df_within as f64,
        };
        let equivalence =
            super::equivalence::equivalence((self.doc, spec), &level_data, alpha, &mut notes)?;
        let decimals = decimals_shown(
            self.doc,
            spec,
            match &spec.transform {
                Some(t) => transformation::scale_decimals(
                    &t.value,
                    neumaier(
                        sample
                            .arithmetic
                            .iter()
                            .zip(&levels)
                            .map(|(m, l)| m * l.n as f64),
                    ) / table.n as f64,
                    sample.decimals,
                ),
                None => sample.decimals,
            },
        );
        let (warnings, acknowledged) = split_acknowledged(notes, &spec.acknowledge);
        // Only figures read the observations; without them the result (and
        // the cache entry) stays small whatever the number of rows.
        let observations = match sample.raw {
            Some((offsets, lines)) if !spec.plots.kinds.is_empty() => {
                let values = offsets
                    .into_iter()
                    .map(|g| g.into_iter().map(|y| sample.origin + y).collect())
                    .collect();
                outcome::observations(values, lines, &levels)
            }
            _ => Vec::new(),
        };
        let observed = Observed::one_factor(&levels, &observations, &spec.plots);
        Ok(LinearOutcome {
            n: table.n,
            exclusions: sample.excluded,
            factors: vec![outcome::factor(&factor, &levels)],
            strata: vec![outcome::residual(&table)],
            terms: vec![outcome::factor_term(&factor, &table, effect)],
            total_df: table.n.saturating_sub(1),
            total_ss: table.ss_total,
            r_squared: table.r_squared,
            ci_pooled: pooled,
            cell_factors: vec![0],
            families,
            levels,
            alternatives,
            warnings,
            acknowledged,
            observations,
            observed,
            contrasts: contrasts.map(Box::new),
            trend: trend.map(Box::new),
            transform: transform.map(Box::new),
            dose: dose.map(Box::new),
            equivalence: equivalence.map(Box::new),
            input: sample.input.clone(),
            ..base_outcome(
                self.block,
                spec,
                alpha,
                checks,
                super::binding::presentation(spec, decimals),
            )
        })
    }

    /// The dose-response tests (`noec`), with Dunnett's comparisons read
    /// for the NOEC when the block asked for them.
    fn dose(
        &self,
        sample: &Sample,
        factor: &str,
        levels: &[crate::outcome::linear::LevelSummary],
        table: &OneWay,
        families: &[crate::outcome::linear::Family],
    ) -> Result<Option<crate::outcome::dose::DoseDetail>, Diagnostic> {
        let dunnett = families[0]
            .comparison
            .as_ref()
            .filter(|c| c.method == crate::stats::compare::Method::Dunnett);
        let input = super::dose::DoseInput {
            factor,
            levels,
            observations: sample.raw.as_ref().map(|(o, _)| o.as_slice()),
            mse: table.ms_within,
            df: table.df_within as f64,
            dunnett,
        };
        super::dose::dose_response(self.doc, self.spec, self.alpha, &input)
    }

    /// The transformation's detail (and the Box-Cox profile when asked).
    fn transform_detail(
        &self,
        sample: &Sample,
        factor: &str,
        families: &[crate::outcome::linear::Family],
        notes: &mut Vec<Note>,
    ) -> Result<Option<crate::outcome::transform::TransformDetail>, Diagnostic> {
        let spec = self.spec;
        if spec.transform.is_none() && !spec.box_cox {
            return Ok(None);
        }
        let box_cox = match (spec.box_cox, &sample.raw) {
            (true, Some((offsets, lines))) => {
                let cell_of: Vec<usize> = (offsets.iter().enumerate())
                    .flat_map(|(i, g)| std::iter::repeat_n(i, g.len()))
                    .collect();
                let y: Vec<f64> = offsets
                    .iter()
                    .flatten()
                    .map(|d| sample.origin + d)
                    .collect();
                let model = transformation::CellModel {
                    cell_of: &cell_of,
                    cells: offsets.len(),
                    design: None,
                };
                let at = |i: usize| lines.iter().flatten().nth(i).copied().unwrap_or(0);
                Some(model.box_cox((self.doc, self.spec), &y, at, self.alpha)?)
            }
            _ => None,
        };
        let arithmetic = vec![crate::outcome::transform::ArithmeticMeans {
            factor: factor.to_string(),
            means: sample.arithmetic.clone(),
        }];
        let data_decimals = decimals_shown(self.doc, spec, sample.decimals);
        let declared = spec.transform.as_ref().map(|t| t.value);
        let (detail, more) =
            transformation::detail(declared, data_decimals, arithmetic, box_cox, families);
        notes.extend(more);
        Ok(Some(detail))
    }

    /// Planned contrasts and the trend over the level means, each mean's
    /// variance MSE/nᵢ (the pooled error; independent levels).
    fn contrasts_and_trend(
        &self,
        factor: &str,
        levels: &[crate::outcome::linear::LevelSummary],
        table: &crate::stats::oneway::OneWay,
    ) -> Result<LevelAnalyses, Diagnostic> {
        let labels: Vec<String> = levels.iter().map(|l| l.name.clone()).collect();
        let k = levels.len();
        let covariance = (0..k)
            .map(|i| {
                (0..k)
                    .map(|j| match i == j {
                        true => table.ms_within / levels[i].n as f64,
                        false => 0.0,
                    })
                    .collect()
            })
            .collect();
        let means = super::contrasts::LevelMeans {
            factor,
            labels: &labels,
            means: levels.iter().map(|l| l.mean).collect(),
            covariance,
            df: table.df_within as f64,
        };
        let contrasts = super::contrasts::planned(self.doc, self.spec, &means, self.alpha)?;
        if let Some(t) = self.spec.trend.as_ref().filter(|t| t.factor != factor) {
            return Err(self
                .doc
                .error_at(
                    t.line,
                    Some(t.column),
                    format!("`{}` is not the model's factor", t.factor),
                )
                .hint(format!("write `trend: {factor}`")));
        }
        let n: Vec<usize> = levels.iter().map(|l| l.n).collect();
        let trend = super::trend::trend(
            self.doc,
            self.spec,
            &means,
            (table.ms_within, Some(&n)),
            self.alpha,
        )?;
        Ok((contrasts, trend))
    }

    /// The ANOVA table, with the total sum of squares from the raw values as
    /// a self-check where there are any.
    fn table(&self, sample: &Sample) -> Result<OneWay, Diagnostic> {
        let total_ss = match (&sample.observed, &sample.raw) {
            (Some(observed), _) => Some(observed.total_ss),
            (None, Some((offsets, _))) => {
                Some(total_sum_of_squares(offsets.iter().map(Vec::as_slice)))
            }
            (None, None) => None,
        };
        // Two or more levels were checked when loading, so `one_way` cannot refuse.
        one_way(&sample.summaries, self.alpha, total_ss).map_err(|OneWayError::TooFewLevels(k)| {
            self.doc.error_at(
                self.block.line,
                None,
                format!("internal error: {k} level(s) reached the analysis"),
            )
        })
    }

    /// Welch's ANOVA or Kruskal-Wallis, when `method` asks for one.
    fn alternatives(
        &self,
        sample: &Sample,
        notes: &mut Vec<Note>,
    ) -> Result<Alternatives, Diagnostic> {
        let spec = self.spec;
        let welch = match spec.method {
            Omnibus::Welch => Some(welch_anova(&sample.summaries).map_err(|i| {
                self.doc.error_at(spec.model.line, None, format!("Welch's ANOVA is undefined: level `{}` has fewer than two observations or no spread", sample.names[i]))
                    .hint("every level needs at least two differing values; use `method: anova` or `method: ranks`")
            })?),
            _ => None,
        };
        let kruskal = match (spec.method, &sample.raw) {
            (Omnibus::Ranks, Some((offsets, _))) => Some(self.kruskal(sample, offsets, notes)?),
            (Omnibus::Ranks, None) => {
                return Err(self
                    .doc
                    .error_at(
                        spec.model.line,
                        None,
                        "Kruskal-Wallis needs the raw observations, not summaries",
                    )
                    .hint("use `method: anova` or `method: welch` with `input: summary`"));
            }
            _ => None,
        };
        Ok(Alternatives { welch, kruskal })
    }

    fn kruskal(
        &self,
        sample: &Sample,
        offsets: &[Vec<f64>],
        notes: &mut Vec<Note>,
    ) -> Result<KruskalWallis, Diagnostic> {
        let offsets: Vec<&[f64]> = offsets.iter().map(Vec::as_slice).collect();
        let kw = kruskal_wallis(&offsets).ok_or_else(|| {
            self.doc
                .error_at(
                    self.spec.model.line,
                    None,
                    "Kruskal-Wallis is undefined: every observation has the same value",
                )
                .hint("ranks cannot separate levels without any differing values")
        })?;
        if sample.summaries.iter().any(|s| s.n < 5) {
            notes.push(notes::few_for_ranks());
        }
        Ok(kw)
    }

    /// Effect sizes, where the F test has an error term.
    fn effect(&self, table: &OneWay, notes: &mut Vec<Note>) -> Option<EffectSizes> {
        let effect = (table.df_within > 0 && table.f.is_finite()).then(|| {
            one_way_effects(
                table.ss_between,
                table.ss_within,
                table.df_between as f64,
                table.df_within as f64,
                table.f,
                1.0 - self.alpha,
            )
        });
        if effect.is_some_and(|e| e.omega_sq < 0.0) {
            notes.push(Note::other(
                "ω² is negative, an estimate consistent with no effect; it is printed as computed.",
            ));
        }
        effect
    }
}
