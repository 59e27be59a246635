//! The tables of a model with random terms: each fixed term's test with its
//! own denominator df and the error it is tested against, the variance
//! components, and the standard errors of differences per kind of
//! comparison.

use super::keys::Keys;
use super::{caption, cell, col, measure, shown_term, text};
use crate::format::{alpha_text, approx_df_text, f_stat, fixed, p_value, significant};
use crate::outcome::linear::{LinearOutcome, TermTest};
use crate::outcome::mixed::{IntervalMethod, MixedDetail, NotClassical};
use crate::render::view::TableView;

/// The error a term is tested against, for people.
fn error_text(o: &LinearOutcome, t: &TermTest) -> String {
    if let Some(r) = o.repeated.as_ref().filter(|r| r.covariance.is_some()) {
        return format!(
            "{} covariance",
            shown_term(&o.presentation.plots, &r.subject)
        );
    }
    t.stratum.and_then(|s| o.strata.get(s)).map_or_else(
        || "combined".to_string(),
        |s| shown_term(&o.presentation.plots, &s.name),
    )
}

/// Term, numerator and denominator df, F, p and the error of each tested
/// fixed term.
pub fn fixed_tests_table(
    o: &LinearOutcome,
    m: &MixedDetail,
    keys: &Keys,
    number: usize,
) -> TableView {
    let rows = o
        .terms
        .iter()
        .filter(|t| t.tested)
        .map(|t| {
            let k = |q: &str| keys.term(&t.name, q);
            vec![
                text(shown_term(&o.presentation.plots, &t.name)),
                cell(t.df.to_string(), k("df")),
                cell(approx_df_text(t.denominator_df), k("df_den")),
                cell(f_stat(t.f), k("f")),
                cell(p_value(t.p), k("p")),
                text(error_text(o, t)),
            ]
        })
        .collect();
    let first_order = o
        .repeated
        .as_ref()
        .and_then(|r| r.covariance.as_ref())
        .is_some_and(|c| c.first_order);
    let ddf = match m.fit.ddf {
        crate::doc::block::DdfMethod::KenwardRoger if first_order => {
            "Kenward-Roger (first-order, without second-derivative terms)"
        }
        crate::doc::block::DdfMethod::KenwardRoger => "Kenward-Roger",
        crate::doc::block::DdfMethod::Satterthwaite => "Satterthwaite",
    };
    let mut footnotes = vec![format!(
        "Wald F tests from the mixed model fitted by REML; denominator df by the {ddf} approximation. Each term is tested against the variation of the units it was applied to (the error column): treatments applied to larger units are judged by the variation among those units, not among the observations."
    )];
    footnotes.push(match &m.not_classical {
        None => "The design is balanced and every stratum's variance is positive, so these tests reproduce the classical stratum table exactly.".to_string(),
        Some(n) => not_classical_text(n),
    });
    footnotes.extend(super::covariates::anova_footnotes(o));
    TableView {
        number,
        id: format!("{}-fixed", o.id),
        caption: caption(number, &None, || {
            format!(
                "Tests of the fixed effects on {} (N = {}).",
                measure(o),
                o.n
            )
        }),
        columns: vec![
            col("Term", false),
            col("df", true),
            col("Denominator df", true),
            col("F", true),
            col("p", true),
            col("Error", false),
        ],
        rows,
        footnotes,
    }
}

/// Why the classical stratum table is not shown, in plain words.
fn not_classical_text(n: &NotClassical) -> String {
    match n {
        NotClassical::Unbalanced { detail } => format!(
            "No classical stratum table: the data are not balanced ({detail}). The mixed-model tests above are valid for unbalanced data."
        ),
        NotClassical::NotOrthogonal { detail } => format!(
            "No classical stratum table: {detail}. The mixed-model tests above are the analysis."
        ),
        NotClassical::Pooled { term } => format!(
            "The variance of `{term}` is estimated at 0, so the mixed model pools that stratum with the one below and its tests differ from the classical stratum tests; the classical table is the randomisation-based analysis."
        ),
        NotClassical::Covariate { names } => format!(
            "No classical stratum table: the model adjusts for {}, which a stratum table cannot do. The mixed-model tests above are the analysis.",
            names.iter().map(|n| format!("`{n}`")).collect::<Vec<_>>().join(" and ")
        ),
        NotClassical::Structured => "The errors of each subject follow the covariance structure below, fitted by REML on every observation, so there is no classical stratum table; the univariate repeated-measures analysis, where possible, is shown for comparison.".to_string(),
    }
}

/// Each random term's variance and SD, its share of the total and the
/// interval for its SD; the residual last.
pub fn components_table(
    o: &LinearOutcome,
    m: &MixedDetail,
    keys: &Keys,
    number: usize,
) -> TableView {
    let conf = crate::format::confidence_label(o.alpha);
    let rows = m
        .components
        .iter()
        .map(|c| {
            let k = |q: &str| keys.field(&format!("variance_components.{}.{q}", c.term));
            let name = if c.term == "residual" {
                "Residual".to_string()
            } else {
                shown_term(&o.presentation.plots, &c.term)
            };
            let levels = if c.levels > 0 {
                cell(c.levels.to_string(), k("levels"))
            } else {
                text("")
            };
            let variance = if c.on_boundary {
                "0 (on the boundary)".to_string()
            } else {
                significant(c.variance, 4)
            };
            vec![
                text(name),
                levels,
                cell(variance, k("variance")),
                cell(significant(c.sd, 4), k("sd")),
                cell(fixed(c.percent, 1), k("percent")),
                cell(
                    if c.ci_lower.is_finite() && c.ci_upper.is_finite() {
                        format!(
                            "{} to {}",
                            significant(c.ci_lower, 3),
                            significant(c.ci_upper, 3)
                        )
                    } else {
                        "–".to_string()
                    },
                    k("ci"),
                ),
            ]
        })
        .collect();
    let method = match m.interval_method {
        IntervalMethod::Profile => "by profile likelihood",
        IntervalMethod::Satterthwaite => {
            "by Satterthwaite's χ² approximation from the REML information (profile-likelihood intervals, which refit the model many times, are computed for models with at most 200 random-effect levels)"
        }
    };
    let mut footnotes = vec![format!(
        "Variances estimated by REML; intervals for the SD {method}. Components with fewer than five levels are estimated from few units and are uncertain; the interval shows how much."
    )];
    if m.components.iter().any(|c| !c.ci_lower.is_finite()) {
        footnotes.push(
            "An interval shown as – could not be computed (a variance at 0 has none).".to_string(),
        );
    }
    for c in m.components.iter().filter(|c| c.on_boundary) {
        footnotes.push(format!(
            "The variance of {} is estimated at 0: the data show no variation among these units beyond the level below. The term stays in the model because the design defines it.",
            shown_term(&o.presentation.plots, &c.term)
        ));
    }
    TableView {
        number,
        id: format!("{}-variance", o.id),
        caption: caption(number, &None, || {
            format!("Variance components of {}.", measure(o))
        }),
        columns: vec![
            col("Component", false),
            col("Levels", true),
            col("Variance", true),
            col("SD", true),
            col("% of total", true),
            col(format!("{conf} CI (SD)"), true),
        ],
        rows,
        footnotes,
    }
}

/// The SED, its df and the LSD at α for each kind of comparison of means.
pub fn sed_table(o: &LinearOutcome, m: &MixedDetail, keys: &Keys, number: usize) -> TableView {
    let d = o.presentation.decimals + 1;
    let rows = m
        .seds
        .iter()
        .map(|s| {
            let k = |q: &str| keys.field(&format!("seds.{}.{q}", s.kind));
            vec![
                text(s.kind.clone()),
                cell(fixed(s.sed, d), k("sed")),
                cell(approx_df_text(s.df), k("df")),
                cell(fixed(s.lsd, d), k("lsd")),
            ]
        })
        .collect();
    TableView {
        number,
        id: format!("{}-sed", o.id),
        caption: caption(number, &None, || {
            format!(
                "Standard errors of differences (SED) between means of {} and least significant differences (LSD) at α = {}.",
                measure(o),
                alpha_text(o.alpha)
            )
        }),
        columns: vec![
            col("Comparison", false),
            col("SED", true),
            col("df", true),
            col("LSD", true),
        ],
        rows,
        footnotes: vec![
            "Means compared across larger units carry those units' variation too, so each kind of comparison has its own SED and df (Satterthwaite's combination where two errors meet).".to_string(),
        ],
    }
}
