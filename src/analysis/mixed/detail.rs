//! What a model with random terms adds to the outcome: the fit, the
//! variance components with their intervals, why the classical table is
//! absent (in the words the report prints), and the SED of each kind of
//! comparison in a balanced design.

use crate::doc::block::DdfMethod;
use crate::outcome::mixed::{
    Fit, IntervalMethod, MixedDetail, NotClassical, Sed, VarianceComponent,
};
use crate::stats::mixed::{FitStatistics, MixedFit, RepeatedFit, SdInterval};
use crate::stats::strata::{self, ComparisonKind, StratumAnalysis, StratumId};

/// Most random-effect levels for which profile intervals are computed.
pub const MAX_PROFILED_LEVELS: usize = 200;

/// Names the report needs: the random terms (and their units), the fixed
/// factors and terms.
pub(super) struct Names<'a> {
    pub random: &'a [String],
    pub units: &'a [Vec<String>],
    pub factors: &'a [String],
    pub terms: &'a [String],
}

/// The fit, its components (intervals at 1 − α) and the SEDs.
pub(super) fn detail(
    fit: &MixedFit,
    ddf: DdfMethod,
    classical: Result<&StratumAnalysis, NotClassical>,
    names: &Names<'_>,
    alpha: f64,
) -> MixedDetail {
    // Each profile interval refits the model about forty times: beyond a
    // few hundred random levels that takes seconds, so large models (and a
    // profile that fails) get Satterthwaite's χ² interval instead (said in
    // the table's footnote).
    let random_levels: usize = fit
        .components
        .iter()
        .filter(|c| c.name != "residual")
        .map(|c| c.levels)
        .sum();
    let (intervals, interval_method): (Vec<Option<SdInterval>>, IntervalMethod) =
        match (random_levels <= MAX_PROFILED_LEVELS)
            .then(|| fit.profile_intervals(1.0 - alpha).ok())
            .flatten()
        {
            Some(v) => (v.into_iter().map(Some).collect(), IntervalMethod::Profile),
            None => (
                fit.satterthwaite_intervals(1.0 - alpha),
                IntervalMethod::Satterthwaite,
            ),
        };
    let total: f64 = fit.components.iter().map(|c| c.variance.max(0.0)).sum();
    let components = fit
        .components
        .iter()
        .enumerate()
        .map(|(i, c)| {
            let ci = intervals.get(i).and_then(Option::as_ref);
            VarianceComponent {
                term: c.name.clone(),
                variance: c.variance,
                sd: c.variance.max(0.0).sqrt(),
                ci_lower: ci.map_or(f64::NAN, |c| c.lower),
                ci_upper: ci.map_or(f64::NAN, |c| c.upper),
                levels: if c.name == "residual" { 0 } else { c.levels },
                percent: 100.0 * c.variance.max(0.0) / total,
                on_boundary: c.on_boundary,
            }
        })
        .collect();
    let (not_classical, cvs, seds) = match classical {
        Ok(a) => (None, cvs(a, names), seds(a, names, alpha)),
        Err(reason) => (Some(reason), Vec::new(), Vec::new()),
    };
    MixedDetail {
        fit: fit_of(&fit.statistics, ddf),
        components,
        not_classical,
        cvs,
        seds,
        predicted: Vec::new(),
        interval_method,
        cell_letters: None,
    }
}

/// The fit of a covariance structure over a repeated factor: its
/// statistics, no variance components (the structure's parameters are in
/// the repeated-measures detail) and no strata.
pub(super) fn structured(fit: &RepeatedFit, ddf: DdfMethod) -> MixedDetail {
    MixedDetail {
        fit: fit_of(&fit.statistics, ddf),
        components: Vec::new(),
        not_classical: Some(NotClassical::Structured),
        cvs: Vec::new(),
        seds: Vec::new(),
        predicted: Vec::new(),
        interval_method: IntervalMethod::Profile,
        cell_letters: None,
    }
}

/// How the model was fitted, for the outcome.
fn fit_of(s: &FitStatistics, ddf: DdfMethod) -> Fit {
    Fit {
        ddf,
        converged: s.converged,
        iterations: s.iterations,
        log_likelihood: -s.criterion / 2.0,
        aic: s.aic,
        bic: s.bic,
        max_gradient: s.max_scaled_gradient,
        n: s.observations,
        p: s.fixed_columns,
    }
}

/// The coefficient of variation of each classical error.
fn cvs(a: &StratumAnalysis, names: &Names<'_>) -> Vec<(String, f64)> {
    // Only the errors that test something (a block stratum has no CV in
    // the usual tables).
    a.strata
        .iter()
        .filter(|s| !s.treatments.is_empty() || s.id == StratumId::Residual)
        .filter_map(|s| {
            let name = match s.id {
                StratumId::Random(i) => names.random[i].clone(),
                StratumId::Residual => "residual".to_string(),
            };
            s.cv_percent.map(|cv| (name, cv))
        })
        .collect()
}

/// Each kind of comparison in words: `two V means`, `two N levels at the
/// same V`, `two V levels at the same N`.
fn kind_text(k: &ComparisonKind, names: &Names<'_>) -> String {
    let list = |fs: &[usize]| {
        fs.iter()
            .map(|&f| names.factors[f].clone())
            .collect::<Vec<_>>()
            .join(" × ")
    };
    if k.same.is_empty()
        && k.differing.len() == 1
        && names.terms[k.term] == names.factors[k.differing[0]]
    {
        return format!("two {} means", list(&k.differing));
    }
    if k.same.is_empty() {
        return format!("two {} cells differing in every factor", list(&k.differing));
    }
    format!(
        "two {} levels at the same {}",
        list(&k.differing),
        list(&k.same)
    )
}

fn seds(a: &StratumAnalysis, names: &Names<'_>, alpha: f64) -> Vec<Sed> {
    a.comparisons(alpha)
        .into_iter()
        .map(|c| Sed {
            kind: kind_text(&c.kind, names),
            sed: c.sed,
            df: c.variance.df.map_or(f64::NAN, whole_if_whole),
            lsd: c.lsd.unwrap_or(f64::NAN),
        })
        .collect()
}

/// Why the classical table is absent, in words, from the stratum analysis'
/// reasons (the first one that names something the author can see).
pub(super) fn reason(
    reasons: &[strata::NotClassical],
    names: &Names<'_>,
    labels: &[Vec<String>],
) -> NotClassical {
    use strata::NotClassical as R;
    let detail = match reasons.first() {
        Some(R::MissingCells { cells, unnamed }) => {
            let shown: Vec<String> = cells
                .iter()
                .take(5)
                .map(|c| {
                    let combo: Vec<String> = c
                        .levels
                        .iter()
                        .enumerate()
                        .map(|(f, &l)| labels[f].get(l).cloned().unwrap_or_default())
                        .collect();
                    let unit = names.units[c.random_term].get(c.unit).cloned().unwrap_or_default();
                    format!("{} in {unit}", combo.join(" × "))
                })
                .collect();
            let more = cells.len().saturating_sub(5) + unnamed;
            let tail = if more > 0 { format!(" and {more} more") } else { String::new() };
            format!("missing: {}{tail}", shown.join("; "))
        }
        Some(R::UnequalReplication { .. }) => "treatment combinations have unequal numbers of observations".to_string(),
        Some(R::MissingResponse { observations }) => format!("{} observations have no response", observations.len()),
        Some(R::VariesWithinUnits { factor, random_term, .. }) => {
            return NotClassical::NotOrthogonal {
                detail: format!(
                    "`{}` changes within some units of `{}`, so it was not applied to whole units of that size",
                    names.factors[*factor], names.random[*random_term]
                ),
            };
        }
        Some(R::NotOrthogonal { term, random_term }) => {
            return NotClassical::NotOrthogonal {
                detail: format!(
                    "`{}` is not balanced over the units of `{}`",
                    names.terms[*term], names.random[*random_term]
                ),
            };
        }
        Some(_) => "the random terms do not form a balanced layout (units of equal size, nested or evenly crossed)".to_string(),
        None => "no reason given".to_string(),
    };
    NotClassical::Unbalanced { detail }
}

/// Degrees of freedom that equal a whole number up to the rounding of their
/// computation (1e-9 relative; Kenward-Roger gives the stratum df exactly in
/// balanced designs, to about 1e-12 in floating point) are stored whole.
pub(super) fn whole_if_whole(df: f64) -> f64 {
    let r = df.round();
    if (df - r).abs() <= 1e-9 * r.abs().max(1.0) {
        r
    } else {
        df
    }
}
