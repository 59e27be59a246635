//! Comparison families of a factorial model: estimated marginal means of
//! each compared factor (over all levels of the others, or within each
//! level of one: simple effects), or observed cell means.

use super::cells::TreatmentCells;
use super::fit::Fitted;
use super::model::{Errors, Model};
use crate::analysis::MAX_COMPARED_LEVELS;
use crate::analysis::compare::{Declared, comparison_result, letters, protect};
use crate::analysis::notes::{Note, NoteKind};
use crate::data::FactorialData;
use crate::diag::Diagnostic;
use crate::outcome::linear::{CellRow, Estimate, Family, TermTest, term_label};
use crate::outcome::procedure_note::ProcedureNote;
use crate::stats::compare::{Method, Pairwise, pairwise_with_se};
use crate::stats::dist::t_isf;
use crate::stats::dunnett::Sides;
use crate::stats::linear::grid_average;

/// What the families are built from.
pub(super) struct Comparing<'a> {
    pub errors: &'a Errors<'a>,
    pub model: &'a Model,
    pub data: &'a FactorialData,
    pub fitted: &'a Fitted,
    pub levels: &'a [usize],
    pub rows: &'a [TermTest],
    pub cells: &'a [CellRow],
    pub treatment: &'a TreatmentCells,
    pub types_agree: bool,
    pub alpha: f64,
}

/// One marginal-means family: factor `f`, within level `slice` of factor
/// `within` when given.
#[derive(Clone, Copy)]
struct Slice {
    factor: usize,
    within: Option<(usize, usize)>,
}

/// An estimate from the fit: its value (an offset from the data's origin),
/// its variance in units of the MSE, and its weights over the coefficients.
type GridEstimate = (f64, f64, Vec<f64>);

impl Slice {
    /// Whether a full cell of the data lies at level `l` of the factor,
    /// within the slice.
    fn holds(&self, row: &[usize], l: usize) -> bool {
        row[self.factor] == l && self.within.is_none_or(|(w, s)| row[w] == s)
    }
}

impl Comparing<'_> {
    /// The families `compare:`, `within:` and `cells:` ask for, and the
    /// notes they raise.
    pub fn families(&self, method: Method) -> Result<(Vec<Family>, Vec<Note>), Diagnostic> {
        let spec = self.errors.spec;
        let compared = self.compared()?;
        let within = self.within()?;
        let cells_wanted = spec.cells.as_ref().is_some_and(|c| c.value.wanted());
        let marginal_wanted = !cells_wanted || spec.compare_terms.is_some() || within.is_some();
        if marginal_wanted && self.fitted.rank_deficient {
            return Err(self.errors.model(
                "marginal means cannot be estimated with empty cells and an interaction in the model".into(),
                "compare observed cell means with `cells: yes`, or drop the interaction",
            ));
        }
        let mut families = Vec::new();
        let mut notes = Vec::new();
        if marginal_wanted {
            for &f in compared.iter().filter(|f| Some(**f) != within) {
                if self.levels[f] > MAX_COMPARED_LEVELS {
                    notes.push(Note::other(format!(
                        "`{}` has {} levels; sheaf compares at most {} levels, so its comparisons are skipped.",
                        self.model.factor_names[f], self.levels[f], MAX_COMPARED_LEVELS
                    )));
                    continue;
                }
                let slices: Vec<Slice> = match within {
                    Some(w) => (0..self.levels[w])
                        .map(|s| Slice {
                            factor: f,
                            within: Some((w, s)),
                        })
                        .collect(),
                    None => vec![Slice {
                        factor: f,
                        within: None,
                    }],
                };
                for slice in slices {
                    families.push(self.marginal_family(slice, method));
                }
            }
        }
        if cells_wanted {
            families.push(self.cells_family(method)?);
        }
        if within.is_none() && !cells_wanted {
            notes.extend(self.interaction_note());
        }
        Ok((families, notes))
    }

    /// The factors to compare: `compare_terms`, or every treatment factor
    /// that is a main effect of the model.
    fn compared(&self) -> Result<Vec<usize>, Diagnostic> {
        let (doc, model) = (self.errors.doc, self.model);
        let Some(c) = &self.errors.spec.compare_terms else {
            return Ok((0..model.factor_names.len())
                .filter(|f| !model.is_block(*f) && model.terms.iter().any(|t| t == &vec![*f]))
                .collect());
        };
        c.value
            .iter()
            .map(|name| match model.index_of(name) {
                Some(i) if !model.is_block(i) => Ok(i),
                Some(_) => Err(doc.error_at(
                    c.line,
                    Some(c.column),
                    format!("`{name}` is a block; blocks are not compared"),
                )),
                None => Err(model.not_a_factor(doc, c.line, c.column, name)),
            })
            .collect()
    }

    /// The factor named by `within`, if any.
    fn within(&self) -> Result<Option<usize>, Diagnostic> {
        let Some(w) = &self.errors.spec.within else {
            return Ok(None);
        };
        match self.model.index_of(&w.value) {
            Some(i) => Ok(Some(i)),
            None => Err(self
                .model
                .not_a_factor(self.errors.doc, w.line, w.column, &w.value)),
        }
    }

    fn t_crit(&self) -> f64 {
        t_isf(self.alpha / 2.0, self.fitted.residual_df as f64)
    }

    /// A mean with its SE and interval.
    fn mean_row(&self, label: String, n: usize, mean: f64, se: f64) -> Estimate {
        let t = self.t_crit();
        Estimate {
            label,
            n,
            mean,
            se,
            ci_lower: mean - t * se,
            ci_upper: mean + t * se,
            df: None,
        }
    }

    /// Every treatment factor's estimated marginal means, compared with
    /// nothing (`compare: none`); none where empty cells leave them
    /// inestimable.
    pub fn marginal_means(&self) -> Vec<Family> {
        if self.fitted.rank_deficient {
            return Vec::new();
        }
        self.treatment
            .factors
            .iter()
            .filter(|&&f| self.levels[f] <= MAX_COMPARED_LEVELS)
            .map(|&f| {
                let slice = Slice {
                    factor: f,
                    within: None,
                };
                let (estimates, _) = self.marginal_estimates(&slice);
                Family {
                    term: self.model.factor_names[f].clone(),
                    within: None,
                    estimates,
                    comparison: None,
                }
            })
            .collect()
    }

    /// Estimated marginal means of one factor (within one slice) with
    /// their SEs and intervals, and each estimate's offset, variance and
    /// grid weights (for the SEs of differences).
    fn marginal_estimates(&self, slice: &Slice) -> (Vec<Estimate>, Vec<GridEstimate>) {
        let (fitted, data, f) = (self.fitted, self.data, slice.factor);
        let mse = fitted.mse();
        let estimates: Vec<GridEstimate> = (0..self.levels[f])
            .map(|l| {
                let mut fixed = vec![None; self.levels.len()];
                fixed[f] = Some(l);
                if let Some((w, s)) = slice.within {
                    fixed[w] = Some(s);
                }
                let weights = grid_average(&self.model.terms, self.levels, &fixed);
                let (value, var) = fitted.estimate(&weights);
                (value, var, weights)
            })
            .collect();
        // Observations at level l (within the slice): summed over the full
        // cells, each holding its cell's n rows.
        let count = |l: usize| {
            data.layout
                .cells
                .iter()
                .zip(&fitted.cell_summaries)
                .filter(|(r, _)| slice.holds(r, l))
                .map(|(_, c)| c.n)
                .sum::<usize>()
        };
        let means: Vec<Estimate> = estimates
            .iter()
            .enumerate()
            .map(|(l, (v, var, _))| {
                let label = data.layout.levels[f][l].clone();
                self.mean_row(label, count(l), data.origin + v, (mse * var).sqrt())
            })
            .collect();
        (means, estimates)
    }

    /// Estimated marginal means of one factor (within one slice), compared
    /// pairwise with the SE of each difference from the fit.
    fn marginal_family(&self, slice: Slice, method: Method) -> Family {
        let (fitted, data, f) = (self.fitted, self.data, slice.factor);
        let mse = fitted.mse();
        let (means, estimates) = self.marginal_estimates(&slice);
        let diff_se = |a: usize, b: usize| {
            let d: Vec<f64> = estimates[a]
                .2
                .iter()
                .zip(&estimates[b].2)
                .map(|(x, y)| x - y)
                .collect();
            (mse * fitted.estimate(&d).1).sqrt()
        };
        let offsets: Vec<f64> = estimates.iter().map(|e| e.0).collect();
        let nu = fitted.residual_df as f64;
        let family = pairwise_with_se(&offsets, diff_se, nu, self.alpha, method);
        // Protection by the factor's own F test, for main-effect families.
        let protect_p = self
            .rows
            .iter()
            .find(|r| r.factors == vec![f])
            .map_or(f64::NAN, |r| r.p);
        let within = slice.within.map(|(w, s)| {
            format!(
                "{}={}",
                self.model.factor_names[w], data.layout.levels[w][s]
            )
        });
        let protected = self.errors.spec.protected && within.is_none();
        let name = &self.model.factor_names[f];
        self.family(name, within, means, family, (protected, protect_p))
    }

    /// Observed cell means, compared pairwise; needs the model with every
    /// interaction of the treatment factors.
    fn cells_family(&self, method: Method) -> Result<Family, Diagnostic> {
        let (spec, doc) = (self.errors.spec, self.errors.doc);
        let treatment = &self.treatment.factors;
        let full_interaction = self
            .model
            .terms
            .iter()
            .any(|t| t.len() == treatment.len() && treatment.iter().all(|f| t.contains(f)));
        let at = spec.cells.as_ref().map_or(spec.model.line, |c| c.line);
        if !full_interaction || (!self.model.blocks.is_empty() && !self.types_agree) {
            return Err(doc
                .error_at(at, None, "`cells` compares cell means, which needs the model with all interactions of the treatment factors (and complete blocks)")
                .hint("write the model as `y ~ A * B` (plus any blocks), or compare marginal means with `within`"));
        }
        let present: Vec<&CellRow> = self.cells.iter().filter(|c| c.n > 0).collect();
        if present.len() > MAX_COMPARED_LEVELS {
            return Err(doc
                .error_at(
                    at,
                    None,
                    format!(
                        "`cells` would compare {} cells; sheaf compares at most {}",
                        present.len(),
                        MAX_COMPARED_LEVELS
                    ),
                )
                .hint("compare marginal means, or within one factor, instead"));
        }
        let mse = self.fitted.mse();
        let means: Vec<Estimate> = present
            .iter()
            .map(|c| {
                let label = treatment
                    .iter()
                    .zip(&c.levels)
                    .map(|(&f, &l)| self.data.layout.levels[f][l].clone())
                    .collect::<Vec<_>>()
                    .join(" × ");
                self.mean_row(label, c.n, c.mean, (mse / c.n as f64).sqrt())
            })
            .collect();
        let offsets: Vec<f64> = present.iter().map(|c| c.offset).collect();
        let family = pairwise_with_se(
            &offsets,
            |a, b| (mse * (1.0 / present[a].n as f64 + 1.0 / present[b].n as f64)).sqrt(),
            self.fitted.residual_df as f64,
            self.alpha,
            method,
        );
        Ok(self.family("cells", None, means, family, (false, f64::NAN)))
    }

    /// A family with its protection, notes and letters; `protection` is
    /// whether Fisher's protection applies and the p of its F test.
    fn family(
        &self,
        term: &str,
        within: Option<String>,
        means: Vec<Estimate>,
        mut family: Pairwise,
        (protected, p): (bool, f64),
    ) -> Family {
        let alpha = self.alpha;
        let method = family.method;
        let mut notes = Vec::new();
        let mut withheld = false;
        if method == Method::Lsd {
            if !protected {
                notes.push(ProcedureNote::Unprotected {
                    several_tests: true,
                });
            } else if protect(&mut family.pairs, p, alpha) {
                withheld = true;
                notes.push(ProcedureNote::ProtectionWithheld {
                    term: Some(term.to_string()),
                    alpha,
                });
            }
        }
        if method == Method::Holm {
            notes.push(ProcedureNote::Holm);
        }
        let values: Vec<f64> = means.iter().map(|m| m.mean).collect();
        let declared = Declared {
            letters: letters(&family.pairs, &values),
            withheld,
            notes,
        };
        Family {
            term: term.to_string(),
            within,
            estimates: means,
            comparison: Some(comparison_result(
                method,
                family,
                (alpha, self.fitted.residual_df as f64),
                declared,
                None,
                Sides::Two,
            )),
        }
    }

    /// A significant interaction under main-effect comparisons.
    fn interaction_note(&self) -> Option<Note> {
        let alpha = self.alpha;
        let row = self
            .rows
            .iter()
            .find(|r| r.factors.len() > 1 && r.p < alpha)?;
        let inter = term_label(&row.name);
        let other = row
            .factors
            .get(1)
            .map_or("B".to_string(), |&f| self.model.factor_names[f].clone());
        Some(Note::new(
            NoteKind::Interaction,
            format!(
                "The {inter} interaction is significant at α = {alpha}: comparisons of main-effect means averaged over the other factor may mislead. Compare within each level with `within: {other}`, or compare all cells with `cells: yes`."
            ),
        ))
    }
}
