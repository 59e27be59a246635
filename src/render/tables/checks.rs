//! The assumption-check table: variance homogeneity, normality of the
//! residuals, their shape, and the observations flagged as outlying.

use super::keys::Keys;
use super::{cell, col, join_words, text};
use crate::format::{alpha_text, df_text, f_stat, fixed, p_value};
use crate::outcome::mixed::PredictedEffects;
use crate::outcome::{Checks, OUTLIERS_LISTED, ResidualKind, most_extreme};
use crate::render::view::{Cell, TableView};
use crate::stats::assumptions::{FTest, OUTLIER_THRESHOLD, ShapiroWilkSkip};

/// Each random term's predicted effects, and how a term is displayed.
type Predicted<'a> = (&'a [PredictedEffects], &'a dyn Fn(&str) -> String);

/// The table; `subject` reads like "weight by group". A model with random
/// terms adds a row per random term for its predicted effects, named as
/// `shown` displays a term.
pub fn checks_table(
    c: &Checks,
    (predicted, shown): Predicted<'_>,
    keys: &Keys,
    alpha: f64,
    subject: &str,
    number: usize,
) -> TableView {
    let residuals = c.residuals.plural();
    let reading = |p: f64, yes: &str, no: &str| if p < alpha { yes } else { no }.to_string();
    let unequal = "no evidence of unequal variances";
    let mut rows = vec![
        variance_row(
            c,
            keys,
            "Brown-Forsythe (median-centred)",
            "brown_forsythe",
            &c.brown_forsythe,
            alpha,
        ),
        variance_row(c, keys, "Levene (mean-centred)", "levene", &c.levene, alpha),
    ];
    rows.push(match c.bartlett {
        Some(b) => vec![
            text("Bartlett"),
            cell(
                fixed(b.statistic, 2),
                keys.field("checks.bartlett.statistic"),
            ),
            cell(df_text(b.df), keys.field("checks.bartlett.df")),
            cell(p_value(b.p), keys.field("checks.bartlett.p")),
            text(reading(
                b.p,
                "variances differ (sensitive to non-normality)",
                unequal,
            )),
        ],
        None => not_computed(
            "Bartlett",
            "needs two or more values with spread in every level",
        ),
    });
    rows.push(match &c.shapiro_wilk {
        Ok(sw) => vec![
            text(format!("Shapiro-Wilk ({residuals})")),
            cell(fixed(sw.w, 4), keys.field("checks.shapiro_wilk.w")),
            cell(format!("n = {}", sw.n), keys.field("checks.shapiro_wilk.n")),
            cell(p_value(sw.p), keys.field("checks.shapiro_wilk.p")),
            text(reading(
                sw.p,
                "residuals depart from normality",
                "no evidence against normality",
            )),
        ],
        Err(why) => not_computed(
            &format!("Shapiro-Wilk ({residuals})"),
            match why {
                ShapiroWilkSkip::TooFew => "not computed: fewer than 3 residuals",
                ShapiroWilkSkip::TooMany => "not computed: more than 5,000 residuals",
                ShapiroWilkSkip::NoSpread => "not computed: the residuals have no spread",
                ShapiroWilkSkip::Summary if c.by_request => "not computed (`checks: summary`)",
                ShapiroWilkSkip::Summary => "not possible from summary statistics",
            },
        ),
    });
    let moment_note = |normal: &str| {
        if c.by_request {
            "not computed (`checks: summary`)".to_string()
        } else if c.from_summary {
            "needs the raw observations".to_string()
        } else {
            normal.to_string()
        }
    };
    rows.push(vec![
        text(format!("Skewness of {residuals}")),
        cell(fixed(c.skewness, 2), keys.field("checks.skewness")),
        text(""),
        text(""),
        text(moment_note("0 for a symmetric distribution")),
    ]);
    rows.push(vec![
        text(format!("Excess kurtosis of {residuals}")),
        cell(
            fixed(c.excess_kurtosis, 2),
            keys.field("checks.excess_kurtosis"),
        ),
        text(""),
        text(""),
        text(moment_note("0 for a normal distribution")),
    ]);
    rows.extend(
        predicted
            .iter()
            .map(|p| predicted_row(p, &shown(&p.term), keys, alpha)),
    );
    TableView {
        number,
        id: format!("{}-checks", keys.block()),
        caption: format!("Table {number}. Assumption checks for {subject}."),
        columns: vec![
            col("Check", false),
            col("Statistic", true),
            col("df", true),
            col("p", true),
            col("Reading at α", false),
        ],
        rows,
        footnotes: footnotes(c, (predicted, shown), alpha),
    }
}

/// How to read the table, the flagged observations and, with random terms,
/// what conditional residuals are and the flagged units.
fn footnotes(c: &Checks, (predicted, shown): Predicted<'_>, alpha: f64) -> Vec<String> {
    let mut footnotes = vec![
        format!(
            "Readings use α = {}. A check that passes does not prove an assumption holds, and with many observations small, harmless departures reach significance: look at the data as well. Skewness and kurtosis are the bias-adjusted sample estimates.",
            alpha_text(alpha)
        ),
        outliers_note(c),
    ];
    match c.residuals {
        ResidualKind::Ordinary => {}
        ResidualKind::Conditional => footnotes.push(CONDITIONAL_NOTE.to_string()),
        ResidualKind::Normalised => footnotes.push(NORMALISED_NOTE.to_string()),
    }
    footnotes.extend(
        predicted
            .iter()
            .map(|p| flagged_units_note(p, &shown(&p.term))),
    );
    footnotes
}

/// What conditional residuals and predicted effects are, for a reader who
/// knows residuals from fixed-effects models.
const CONDITIONAL_NOTE: &str = "With random terms, the residuals are conditional: each observation less the fixed effects and its units' predicted effects (best linear unbiased predictions). Outliers are flagged by the residual over its standard deviation under the fitted model, and each unit's predicted effect likewise; the predicted effects are shrunk towards 0, the more so the fewer observations a unit has.";

/// What normalised residuals are, for the same reader.
const NORMALISED_NOTE: &str = "With a covariance structure over the repeated factor, the residuals are normalised: each subject's residuals (observation less the fixed effects) transformed by the fitted covariance of its observations, so that under the model they are uncorrelated with unit variance. Outliers are flagged by their size on that scale.";

/// Shapiro-Wilk on a random term's standardised predicted effects.
fn predicted_row(p: &PredictedEffects, term: &str, keys: &Keys, alpha: f64) -> Vec<Cell> {
    let name = format!("Shapiro-Wilk (predicted effects of {term})");
    let k = |q: &str| {
        keys.field(&format!(
            "variance_components.{}.predicted_effects.shapiro_wilk.{q}",
            p.term
        ))
    };
    match p.shapiro_wilk {
        Some(sw) => vec![
            text(name),
            cell(fixed(sw.w, 4), k("w")),
            cell(format!("n = {}", sw.n), k("n")),
            cell(p_value(sw.p), k("p")),
            text(if sw.p < alpha {
                "effects depart from normality"
            } else {
                "no evidence against normality"
            }),
        ],
        None => not_computed(
            &name,
            if p.units < 3 {
                "not computed: fewer than 3 units"
            } else {
                "not computed: the variance is estimated at 0"
            },
        ),
    }
}

/// Units whose predicted effect is beyond the threshold, or that none is.
fn flagged_units_note(p: &PredictedEffects, term: &str) -> String {
    if p.flagged_count == 0 {
        return format!(
            "No unit of {term} has a standardised predicted effect beyond ±{OUTLIER_THRESHOLD}."
        );
    }
    let mut worst: Vec<&crate::outcome::mixed::FlaggedUnit> = p.flagged.iter().collect();
    worst.sort_by(|a, b| b.standardized.abs().total_cmp(&a.standardized.abs()));
    let names: Vec<String> = worst
        .iter()
        .take(OUTLIERS_LISTED)
        .map(|u| format!("`{}`", u.unit))
        .collect();
    format!(
        "{} of {term} {} a standardised predicted effect beyond ±{OUTLIER_THRESHOLD} (flagged, not excluded){}: {}.",
        crate::format::counted(p.flagged_count, "unit", "units"),
        if p.flagged_count == 1 { "has" } else { "have" },
        if p.flagged_count > names.len() {
            ", the most extreme"
        } else {
            ""
        },
        join_words(&names)
    )
}

/// A test of equal variances (an F statistic with two df).
fn variance_row(
    c: &Checks,
    keys: &Keys,
    name: &str,
    key: &str,
    test: &Option<FTest>,
    alpha: f64,
) -> Vec<Cell> {
    let k = |q: &str| keys.field(&format!("checks.{key}.{q}"));
    match test {
        Some(t) => vec![
            text(name),
            cell(f_stat(t.statistic), k("statistic")),
            cell(format!("{}, {}", df_text(t.df1), df_text(t.df2)), k("df")),
            cell(p_value(t.p), k("p")),
            text(if t.p < alpha {
                "variances differ"
            } else {
                "no evidence of unequal variances"
            }),
        ],
        None => not_computed(
            name,
            if c.by_request {
                "not computed (`checks: summary`)"
            } else if c.from_summary {
                "needs the raw observations"
            } else {
                "not defined for these data"
            },
        ),
    }
}

/// A check that could not be computed, and why.
fn not_computed(name: &str, why: &str) -> Vec<Cell> {
    vec![text(name), text("–"), text(""), text("–"), text(why)]
}

/// What the table says about outlying observations.
fn outliers_note(c: &Checks) -> String {
    if c.by_request {
        "Outlying observations were not looked for (`checks: summary`).".to_string()
    } else if c.from_summary {
        "Outlying observations cannot be looked for in summary statistics.".to_string()
    } else if c.outliers.is_empty() {
        format!(
            "No observation has {} beyond ±{OUTLIER_THRESHOLD}.",
            residual_kind(c)
        )
    } else {
        outlier_sentence(c)
    }
}

/// The flagged observations: each line when there are few, else the count
/// and the most extreme few (the report never lists a number of lines that
/// grows with the data).
fn outlier_sentence(c: &Checks) -> String {
    if c.outlier_count <= OUTLIERS_LISTED {
        let lines: Vec<String> = c.outliers.iter().map(|o| o.line.to_string()).collect();
        let (observations, lines_word) = if lines.len() == 1 {
            ("One observation has", "data line")
        } else {
            ("Observations have", "data lines")
        };
        return format!(
            "{observations} {} beyond ±{OUTLIER_THRESHOLD} (flagged, not excluded): {lines_word} {}.",
            residual_kind(c),
            join_words(&lines)
        );
    }
    let worst: Vec<String> = most_extreme(&c.outliers, OUTLIERS_LISTED)
        .iter()
        .map(|o| o.line.to_string())
        .collect();
    format!(
        "{} observations have {} beyond ±{OUTLIER_THRESHOLD} (flagged, not excluded); the {OUTLIERS_LISTED} most extreme are on data lines {}, and the results file lists the {} most extreme.",
        crate::format::count(c.outlier_count),
        residual_kind(c),
        join_words(&worst),
        c.outliers.len()
    )
}

/// How the flagged residuals were scaled.
fn residual_kind(c: &Checks) -> &'static str {
    c.residuals.scaled()
}
