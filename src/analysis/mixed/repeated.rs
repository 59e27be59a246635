//! The repeated-measures reading of a block with `subject`: which factors
//! vary within subjects and which are constant within each (between), the
//! subjects complete at every occasion, and the univariate analysis of
//! those with Mauchly's test and the epsilon corrections (mixed-models spec
//! 7.1-7.3, 7.5). The mixed model with the subject as a random term, which
//! uses every observation, is the block's main analysis.

use std::collections::BTreeSet;

use super::super::factorial::model::Model;
use crate::data::FactorialRows;
use crate::outcome::repeated::{Mauchly, RepeatedDetail, WithinTest};
use crate::stats::repeated::{self, BetweenTerm, RepeatedInput, Sphericity, WithinLine};

/// Subjects listed by name when some are left out (the rest are counted).
const LISTED: usize = 100;

/// A design the repeated-measures reading refuses: the message and a hint.
pub(super) type Refusal = (String, String);

/// The classification and the univariate analysis; `subject` is the
/// subject column's index among the data's factors (after the model's),
/// `subject_name` the column's name.
pub(super) fn repeated(
    data: &FactorialRows,
    model: &Model,
    subject: usize,
    subject_name: &str,
) -> Result<RepeatedDetail, Refusal> {
    let n = data.offsets.len();
    let subject_of: Vec<usize> = (0..n).map(|i| data.row(i)[subject]).collect();
    let subjects = data.layout.levels[subject].len();
    let fixed = model.factor_names.len();
    let mut within = Vec::new();
    let mut between = Vec::new();
    for f in 0..fixed {
        match classify(data, &subject_of, subjects, f) {
            Class::Between => between.push(f),
            Class::Within => within.push(f),
            Class::Neither(examples) => {
                return Err((
                    format!(
                        "`{}` varies within some subjects and is constant within others with several observations (subjects {})",
                        model.factor_names[f],
                        examples
                            .iter()
                            .map(|&s| format!("`{}`", data.layout.levels[subject][s]))
                            .collect::<Vec<_>>()
                            .join(", ")
                    ),
                    "each factor must either change within every subject (time) or stay the same for each subject (diet); check the subject and factor columns".into(),
                ));
            }
        }
    }
    if within.is_empty() {
        return Err((
            "no factor of the model varies within subjects".into(),
            "with `subject`, the model needs a factor the subjects were measured at several levels of, such as time".into(),
        ));
    }
    let grid = Occasions::new(data, &within, &subject_of, subjects);
    let names = |fs: &[usize]| term_name(model, fs);
    let incomplete: Vec<usize> = (0..subjects).filter(|&s| grid.rows[s].is_none()).collect();
    let complete: Vec<usize> = (0..subjects).filter(|&s| grid.rows[s].is_some()).collect();
    let mut first_row = vec![usize::MAX; subjects];
    for (i, &s) in subject_of.iter().enumerate().rev() {
        first_row[s] = i;
    }
    let shape = Shape {
        grid: &grid,
        within: &within,
        between: &between,
        first_row: &first_row,
    };
    let univariate = univariate(data, model, &shape, &complete, &names);
    let group_of = |s: usize| {
        between
            .iter()
            .map(|&f| data.row(first_row[s])[f])
            .collect::<Vec<usize>>()
    };
    let mut sizes: std::collections::BTreeMap<Vec<usize>, usize> = Default::default();
    for &s in &complete {
        *sizes.entry(group_of(s)).or_default() += 1;
    }
    let equal_groups = sizes.values().min() == sizes.values().max();
    Ok(RepeatedDetail {
        equal_groups,
        subject: subject_name.to_string(),
        within: within
            .iter()
            .map(|&f| model.factor_names[f].clone())
            .collect(),
        between: between
            .iter()
            .map(|&f| model.factor_names[f].clone())
            .collect(),
        subjects,
        complete_subjects: complete.len(),
        incomplete: incomplete
            .iter()
            .take(LISTED)
            .map(|&s| data.layout.levels[subject][s].clone())
            .collect(),
        incomplete_count: incomplete.len(),
        univariate,
        covariance: None,
        profile: None,
    })
}

enum Class {
    Between,
    Within,
    /// Subjects where the factor is constant although others vary in it
    /// (their indices, at most five).
    Neither(Vec<usize>),
}

/// Constant within every subject (between), varying within every subject
/// with several observations (within), or a mixture (neither).
fn classify(data: &FactorialRows, subject_of: &[usize], subjects: usize, f: usize) -> Class {
    let mut seen: Vec<BTreeSet<usize>> = vec![BTreeSet::new(); subjects];
    let mut count = vec![0usize; subjects];
    for (i, &s) in subject_of.iter().enumerate() {
        seen[s].insert(data.row(i)[f]);
        count[s] += 1;
    }
    let several: Vec<usize> = (0..subjects).filter(|&s| count[s] >= 2).collect();
    let varying = several.iter().filter(|&&s| seen[s].len() > 1).count();
    if varying == 0 {
        return Class::Between;
    }
    let constant: Vec<usize> = several
        .iter()
        .copied()
        .filter(|&s| seen[s].len() == 1)
        .take(5)
        .collect();
    if constant.is_empty() {
        Class::Within
    } else {
        Class::Neither(constant)
    }
}

/// Each subject's responses at the occasions (combinations of the within
/// factors' levels, first factor slowest); `None` for a subject with an
/// occasion missing or observed twice.
struct Occasions {
    counts: Vec<usize>,
    rows: Vec<Option<Vec<f64>>>,
}

impl Occasions {
    fn new(data: &FactorialRows, within: &[usize], subject_of: &[usize], subjects: usize) -> Self {
        let counts: Vec<usize> = within
            .iter()
            .map(|&f| data.layout.levels[f].len())
            .collect();
        let k: usize = counts.iter().product();
        let mut cells: Vec<Vec<Option<f64>>> = vec![vec![None; k]; subjects];
        let mut twice = vec![false; subjects];
        for (i, &s) in subject_of.iter().enumerate() {
            let row = data.row(i);
            let o = within
                .iter()
                .zip(&counts)
                .fold(0, |acc, (&f, &c)| acc * c + row[f]);
            if cells[s][o].replace(data.offsets[i]).is_some() {
                twice[s] = true;
            }
        }
        let rows = cells
            .into_iter()
            .zip(twice)
            .map(|(c, t)| if t { None } else { c.into_iter().collect() })
            .collect();
        Self { counts, rows }
    }
}

/// The model's name for a set of factors (its term when it has one, else
/// the factors joined with `:`).
fn term_name(model: &Model, factors: &[usize]) -> String {
    let set: BTreeSet<usize> = factors.iter().copied().collect();
    model
        .terms
        .iter()
        .position(|t| t.iter().copied().collect::<BTreeSet<_>>() == set)
        .map(|i| model.term_names[i].clone())
        .unwrap_or_else(|| {
            factors
                .iter()
                .map(|&f| model.factor_names[f].as_str())
                .collect::<Vec<_>>()
                .join(":")
        })
}

/// The design as the univariate analysis sees it.
struct Shape<'a> {
    grid: &'a Occasions,
    within: &'a [usize],
    between: &'a [usize],
    /// Each subject's first observation (its between factors' levels).
    first_row: &'a [usize],
}

/// The univariate analysis of the complete subjects, between terms from the
/// model's terms made of between factors only, in model order.
fn univariate(
    data: &FactorialRows,
    model: &Model,
    shape: &Shape<'_>,
    complete: &[usize],
    names: &dyn Fn(&[usize]) -> String,
) -> Result<Vec<WithinTest>, String> {
    if let Some(c) = model.covariate_names.first() {
        return Err(format!(
            "it has no version that adjusts for a covariate such as `{c}`"
        ));
    }
    let (grid, within, between) = (shape.grid, shape.within, shape.between);
    let responses: Vec<Vec<f64>> = complete
        .iter()
        .filter_map(|&s| grid.rows[s].clone())
        .collect();
    // A between factor is constant within a subject: read it from its first row.
    let level = |s: usize, f: usize| data.row(shape.first_row[s])[f];
    let between_terms: Vec<(Vec<usize>, BetweenTerm)> = model
        .terms
        .iter()
        .filter(|t| !t.is_empty() && t.iter().all(|f| between.contains(f)))
        .map(|t| {
            let levels: usize = t.iter().map(|&f| data.layout.levels[f].len()).product();
            let level_of = complete
                .iter()
                .map(|&s| {
                    t.iter()
                        .fold(0, |acc, &f| acc * data.layout.levels[f].len() + level(s, f))
                })
                .collect();
            (t.clone(), BetweenTerm { levels, level_of })
        })
        .collect();
    let terms: Vec<BetweenTerm> = between_terms.iter().map(|(_, t)| t.clone()).collect();
    let analysis = repeated::analyse(&RepeatedInput {
        responses: &responses,
        within: &grid.counts,
        between: &terms,
    })
    .map_err(|e| refusal(&e, data, within, &between_terms, names))?;
    let mut tests = Vec::new();
    for effect in &analysis.within {
        let factors: Vec<usize> = effect.factors.iter().map(|&w| within[w]).collect();
        let sphericity = match &effect.sphericity {
            Sphericity::HoldsTrivially => None,
            Sphericity::Tested(m) => Some(Mauchly {
                w: m.w,
                chi_sq: m.chi_sq,
                df: m.df,
                p: m.p,
            }),
        };
        let effect_name = names(&factors);
        let line = |name: String, l: &WithinLine| WithinTest {
            term: name,
            effect: effect_name.clone(),
            df: l.test.df as f64,
            df_den: effect.error.df as f64,
            f: l.test.f,
            p: l.test.p,
            p_gg: l.corrected.gg,
            p_hf: l.corrected.hf,
            p_lower_bound: l.corrected.lower_bound,
            gg_epsilon: effect.epsilons.gg,
            hf_epsilon: effect.epsilons.hf,
            hf_epsilon_uncapped: effect.epsilons.hf_uncapped,
            sphericity: sphericity.clone(),
        };
        tests.push(line(names(&factors), &effect.effect));
        for ((b, _), l) in between_terms.iter().zip(&effect.by_between) {
            let all: Vec<usize> = b.iter().chain(&factors).copied().collect();
            tests.push(line(names(&all), l));
        }
    }
    Ok(tests)
}

/// Why the univariate analysis refused, with the factors and levels named
/// (the analysis itself speaks of term and level indices).
fn refusal(
    e: &repeated::RepeatedError,
    data: &FactorialRows,
    within: &[usize],
    between_terms: &[(Vec<usize>, BetweenTerm)],
    names: &dyn Fn(&[usize]) -> String,
) -> String {
    use repeated::RepeatedError as E;
    match *e {
        E::EmptyLevel { term, level } => {
            let factors = &between_terms[term].0;
            // The level index runs over the term's factors, the last fastest.
            let mut rest = level;
            let mut parts: Vec<String> = factors
                .iter()
                .rev()
                .map(|&f| {
                    let count = data.layout.levels[f].len();
                    let text = format!("{} = {}", names(&[f]), data.layout.levels[f][rest % count]);
                    rest /= count;
                    text
                })
                .collect();
            parts.reverse();
            format!(
                "no subject with {} was observed at every occasion",
                parts.join(", ")
            )
        }
        E::AliasedTerm { term } => format!(
            "among the subjects observed at every occasion, `{}` adds nothing to the terms before it",
            names(&between_terms[term].0)
        ),
        E::TooFewWithinLevels { factor, levels } => format!(
            "`{}` has {levels} level(s) among those subjects; it needs at least 2",
            names(&[within[factor]])
        ),
        _ => e.to_string(),
    }
}
