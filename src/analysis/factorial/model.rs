//! The model of a factorial block as the document states it: its factors,
//! which of them are blocks, its terms; and the keys that belong to the
//! one-factor engine only.

use crate::diag::Diagnostic;
use crate::doc::block::{AnovaSpec, Omnibus, PlotKind};
use crate::doc::{Block, Document};
use crate::stats::compare::Method;
use crate::stats::linear::TermFactors;

/// The factors and terms of a model, by index. Covariates are numbered
/// after the factors (see `stats::linear::TermFactors`).
pub(crate) struct Model {
    pub factor_names: Vec<String>,
    /// The columns declared by `covariate`, each a term of its own.
    pub covariate_names: Vec<String>,
    /// The factors named in `blocks`.
    pub blocks: Vec<usize>,
    /// Each term's factors, in model order.
    pub terms: Vec<TermFactors>,
    pub term_names: Vec<String>,
}

impl Model {
    pub fn from_spec(doc: &Document, spec: &AnovaSpec) -> Result<Model, Diagnostic> {
        let formula = &spec.model.value;
        let covariate_names = spec
            .covariates
            .as_ref()
            .map_or(Vec::new(), |c| c.value.clone());
        let factor_names: Vec<String> = formula
            .factors()
            .iter()
            .filter(|f| !covariate_names.iter().any(|c| c == *f))
            .map(|s| s.to_string())
            .collect();
        let mut model = Model {
            factor_names,
            covariate_names,
            blocks: Vec::new(),
            terms: Vec::new(),
            term_names: formula.terms.iter().map(|t| t.to_string()).collect(),
        };
        model.terms = formula
            .terms
            .iter()
            .map(|t| {
                t.factors
                    .iter()
                    .filter_map(|f| model.variable_index(f))
                    .collect()
            })
            .collect();
        if let Some(b) = &spec.blocks {
            model.blocks = b
                .value
                .iter()
                .map(|name| {
                    model
                        .index_of(name)
                        .ok_or_else(|| model.not_a_factor(doc, b.line, b.column, name))
                })
                .collect::<Result<_, _>>()?;
        }
        Ok(model)
    }

    /// A factor's index (never a covariate's).
    pub fn index_of(&self, name: &str) -> Option<usize> {
        self.factor_names.iter().position(|f| f == name)
    }

    /// A term variable's index: a factor's, or a covariate's (numbered
    /// after the factors).
    fn variable_index(&self, name: &str) -> Option<usize> {
        let covariate = || {
            let c = self.covariate_names.iter().position(|c| c == name)?;
            Some(self.factor_names.len() + c)
        };
        self.index_of(name).or_else(covariate)
    }

    /// Whether variable `v` of a term is a covariate.
    pub fn is_covariate(&self, v: usize) -> bool {
        v >= self.factor_names.len()
    }

    /// Whether a term is made of factors only.
    pub fn is_factor_term(&self, term: &[usize]) -> bool {
        term.iter().all(|&v| !self.is_covariate(v))
    }

    pub fn is_block(&self, factor: usize) -> bool {
        self.blocks.contains(&factor)
    }

    /// A key names something that is not a factor of the model.
    pub fn not_a_factor(
        &self,
        doc: &Document,
        line: usize,
        column: usize,
        name: &str,
    ) -> Diagnostic {
        doc.error_at(
            line,
            Some(column),
            format!("`{name}` is not a factor of the model"),
        )
        .hint(format!(
            "the model's factors are {}",
            self.factor_names.join(", ")
        ))
    }

    /// The treatment factor a `trend` runs over.
    pub fn trend_factor(
        &self,
        doc: &Document,
        t: &crate::doc::block_trend::TrendSpec,
    ) -> Result<usize, Diagnostic> {
        self.index_of(&t.factor)
            .filter(|f| !self.is_block(*f))
            .ok_or_else(|| {
                self.not_a_factor(doc, t.line, t.column, &t.factor)
                    .hint("a trend runs over the levels of a fixed treatment factor of `model`")
            })
    }

    /// The factors not named as blocks, in model order.
    pub fn treatment_factors(&self) -> Vec<usize> {
        (0..self.factor_names.len())
            .filter(|f| !self.is_block(*f))
            .collect()
    }
}

/// Model errors of one block; once the data are read, they also explain
/// block labels reused within another block factor, the usual cause when
/// blocks are nested.
pub(crate) struct Errors<'a> {
    pub doc: &'a Document,
    pub spec: &'a AnovaSpec,
    pub reused: Option<String>,
}

impl Errors<'_> {
    /// An error at the model, with a hint.
    pub fn model(&self, msg: String, hint: &str) -> Diagnostic {
        let model = &self.spec.model;
        let d = self
            .doc
            .error_at(model.line, Some(model.column), msg)
            .hint(hint.to_string());
        self.explain(d)
    }

    /// Refuses a factor left with fewer than two levels that have data.
    pub fn two_levels_each(&self, names: &[String], levels: &[usize]) -> Result<(), Diagnostic> {
        match levels.iter().position(|&l| l < 2) {
            Some(f) => Err(self.model(
                format!(
                    "`{}` has {} with data; a factor needs two or more",
                    names[f],
                    crate::format::counted(levels[f], "level", "levels")
                ),
                "check the factor column and the missing-value markers",
            )),
            None => Ok(()),
        }
    }

    /// Adds the note on reused block labels, where there is one.
    pub fn explain(&self, d: Diagnostic) -> Diagnostic {
        match &self.reused {
            Some(note) => d.hint(note.clone()),
            None => d,
        }
    }

    pub fn internal(&self, block: &Block, what: &str) -> Diagnostic {
        self.doc
            .error_at(block.line, None, format!("internal error: {what}"))
    }
}

/// Keys that only the one-factor engine reads.
pub(super) fn refuse_one_factor_keys(errors: &Errors<'_>) -> Result<(), Diagnostic> {
    let spec = errors.spec;
    // `method: ranks` with a block is Friedman's test (factorial/friedman.rs).
    let friedman = spec.method == Omnibus::Ranks && spec.blocks.is_some();
    if spec.method != Omnibus::Anova && !friedman {
        return Err(errors.model(
            format!("`method: {}` is for one-factor models", spec.method.key()),
            match spec.method {
                Omnibus::Ranks => "factorial designs use the F tests of the linear model; remove `method`, or, for one treatment factor in complete blocks, name the block with `block:` (Friedman's test)",
                _ => "factorial and block designs use the F tests of the linear model; remove `method`",
            },
        ));
    }
    if let Some(m) = spec
        .compare
        .filter(|m| matches!(m, Method::Dunnett | Method::GamesHowell | Method::Dunn))
    {
        return Err(errors.model(
            format!(
                "`compare: {}` is available for one-factor models only",
                m.key()
            ),
            "in factorial designs use tukey, lsd, bonferroni, sidak, holm or scheffe",
        ));
    }
    if let Some(l) = &spec.levels {
        return Err(errors
            .doc
            .error_at(
                l.line,
                Some(l.column),
                "`levels` applies to one-factor models",
            )
            .hint("in factorial designs levels keep their order of first appearance in the data"));
    }
    if spec.summary.is_some() && friedman {
        return Err(errors.model(
            "Friedman's test needs the raw observations, not summaries".into(),
            "use the ANOVA (remove `method`) with `input: summary`",
        ));
    }
    if let Some(k) = spec
        .plots
        .kinds
        .iter()
        .find(|k| !matches!(k, PlotKind::Means))
        && spec.summary.is_some()
    {
        return Err(errors.model(
            format!(
                "`plot: {}` needs the raw observations, not summaries",
                k.key()
            ),
            "with `input: summary` only `plot: means` can be drawn",
        ));
    }
    Ok(())
}
