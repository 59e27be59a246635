//! The omnibus table: the analysis of variance of every term, each under
//! the stratum it is tested against, or for one factor its Welch or
//! Kruskal-Wallis alternative.

use super::keys::Keys;
use super::{
    cell, col, effect_decimals, factors_text, headline_table, join_words, measure, shown_term,
    text, variance_columns,
};
use crate::format::{
    alpha_text, column_decimals, confidence_label, df_text, f_stat, fixed, p_value,
};
use crate::outcome::linear::{LinearOutcome, TermTest};
use crate::render::view::{Cell, TableView};
use crate::stats::linear::SsType;

/// Why a blocking factor's row shows no F, p or effect size.
const BLOCK_NOT_TESTED: &str = "Blocks are reported (SS, df, MS) but not tested: blocks are not randomized, so an F for them is not a valid test (Montgomery, ch. 4). Their sum of squares is what the blocking removed from the error.";

/// The ANOVA table: per stratum its terms and then its own row; blocking
/// factors show SS, df and MS but are not tested.
pub fn anova_table(o: &LinearOutcome, keys: &Keys, number: usize) -> TableView {
    // SS and MS to five significant digits of the total SS: one number of
    // decimals for both columns, so they line up and compare.
    let dec = column_decimals(&[o.total_ss], 5);
    let eta_dec = effect_decimals(
        o.terms
            .iter()
            .filter_map(|t| t.effect.map(|e| e.partial_eta_sq)),
    );
    let mut rows = Vec::new();
    for (s, stratum) in o.strata.iter().enumerate() {
        for t in o.terms.iter().filter(|t| t.stratum == Some(s)) {
            rows.push(term_row(o, t, keys, dec, eta_dec));
        }
        let k = |q: &str| {
            if s + 1 == o.strata.len() {
                keys.field(&format!("anova.residual.{q}"))
            } else {
                keys.field(&format!("strata.{}.{q}", stratum.name))
            }
        };
        let has_terms = o.terms.iter().any(|t| t.stratum == Some(s));
        let label = shown_term(&o.presentation.plots, &stratum.name);
        rows.push(vec![
            text(if has_terms && s + 1 < o.strata.len() {
                format!("Error: {label}")
            } else {
                label
            }),
            cell(df_text(stratum.df), k("df")),
            cell(fixed(stratum.ss, dec), k("ss")),
            cell(fixed(stratum.ms, dec), k("ms")),
            text(""),
            text(""),
            text(""),
        ]);
    }
    rows.push(vec![
        text("Total"),
        cell(o.total_df.to_string(), keys.field("anova.total.df")),
        cell(fixed(o.total_ss, dec), keys.field("anova.total.ss")),
        text(""),
        text(""),
        text(""),
        text(""),
    ]);
    let mut view = TableView {
        number,
        id: format!("{}-anova", o.id),
        caption: anova_caption(o, number),
        columns: [variance_columns(), vec![col("η²", true)]].concat(),
        rows,
        footnotes: if o.mixed.is_some() {
            strata_footnotes(o)
        } else if o.is_one_factor() {
            one_factor_footnotes(o)
        } else {
            factorial_footnotes(o)
        },
    };
    // A mixed model's terms have no η² (their errors differ).
    if o.mixed.is_some() {
        view.columns.pop();
        for row in &mut view.rows {
            row.pop();
        }
    }
    view
}

fn term_row(o: &LinearOutcome, t: &TermTest, keys: &Keys, dec: u32, eta_dec: u32) -> Vec<Cell> {
    let k = |q: &str| keys.term(&t.name, q);
    let plots = &o.presentation.plots;
    let label = if t.tested {
        shown_term(plots, &t.name)
    } else {
        format!("{} (block)", shown_term(plots, &t.name))
    };
    let mut row = vec![
        text(label),
        cell(t.df.to_string(), k("df")),
        cell(fixed(t.ss, dec), k("ss")),
        cell(fixed(t.ms, dec), k("ms")),
    ];
    if t.tested {
        let eta = t
            .effect
            .map_or(String::new(), |e| fixed(e.partial_eta_sq, eta_dec));
        row.extend([
            cell(f_stat(t.f), k("f")),
            cell(p_value(t.p), k("p")),
            cell(eta, k("effect.partial_eta_sq")),
        ]);
    } else {
        row.extend([text("not tested"), text(""), text("")]);
    }
    row
}

fn ss_text(ss_type: SsType) -> &'static str {
    match ss_type {
        SsType::I => "Type I (sequential, in the order shown) sums of squares",
        SsType::II => "Type II sums of squares",
        SsType::III => "Type III sums of squares, sum-to-zero coding",
    }
}

fn anova_caption(o: &LinearOutcome, number: usize) -> String {
    let about = match o.covariates.as_deref() {
        Some(d) => format!(
            "Analysis of covariance of {} by {}, adjusted for {} (N = {}",
            measure(o),
            factors_text(o),
            join_words(
                &d.covariates
                    .iter()
                    .map(|c| o.presentation.plots.display(&c.name).to_string())
                    .collect::<Vec<_>>()
            ),
            o.n
        ),
        None => format!(
            "Analysis of variance of {} by {} (N = {}",
            measure(o),
            factors_text(o),
            o.n
        ),
    };
    if o.mixed.is_some() {
        return match &o.presentation.caption {
            Some(c) => format!("Table {number}. {c}"),
            None => format!(
                "Table {number}. {}) in strata: each error line is the variation of one size of unit.",
                about
            ),
        };
    }
    match (&o.presentation.caption, o.ss_type) {
        (Some(c), None) => format!("Table {number}. {c}"),
        (Some(c), Some(ss)) => format!(
            "Table {number}. {} ({}).",
            c.trim_end_matches('.'),
            ss_text(ss)
        ),
        (None, None) => format!("Table {number}. {about})."),
        (None, Some(ss)) => format!("Table {number}. {about}; {}).", ss_text(ss)),
    }
}

fn one_factor_footnotes(o: &LinearOutcome) -> Vec<String> {
    let mut footnotes = Vec::new();
    for t in &o.terms {
        footnotes.push(format!(
            "Critical value F({}, {}) at α = {} is {}; R² = {}.",
            t.df,
            df_text(t.denominator_df),
            alpha_text(o.alpha),
            fixed(t.critical_f, 3),
            fixed(o.r_squared, 3)
        ));
        if let Some(e) = t.effect {
            let eta_sq = e.eta_sq.unwrap_or(e.partial_eta_sq);
            let (lower, upper) = e.partial_eta_sq_ci;
            let eta_dec = effect_decimals([eta_sq, lower, upper]);
            footnotes.push(format!(
                "Effect size: η² = {} (partial η², here the same; {} CI {} to {}, from the noncentral F), ω² = {}, Cohen's f = {}.",
                fixed(eta_sq, eta_dec),
                confidence_label(1.0 - e.ci_level),
                fixed(lower, eta_dec),
                fixed(upper, eta_dec),
                crate::format::effect_size(e.omega_sq),
                crate::format::effect_size(e.cohens_f)
            ));
        }
    }
    footnotes
}

/// The classical stratum table of a design with random terms: which error
/// each term is tested against, and each error's coefficient of variation.
fn strata_footnotes(o: &LinearOutcome) -> Vec<String> {
    let plots = &o.presentation.plots;
    let mut footnotes = vec![format!(
        "Each stratum is the variation of one size of unit; a term is tested against the error line of the stratum it was applied in ({}). Random terms are not tested: their variances are in the table of variance components.",
        o.strata
            .iter()
            .enumerate()
            .filter_map(|(s, stratum)| {
                let tested: Vec<String> = o
                    .terms
                    .iter()
                    .filter(|t| t.stratum == Some(s) && t.tested)
                    .map(|t| shown_term(plots, &t.name))
                    .collect();
                (!tested.is_empty()).then(|| {
                    format!(
                        "{} against {} on {} df",
                        super::join_words(&tested),
                        shown_term(plots, &stratum.name),
                        df_text(stratum.df)
                    )
                })
            })
            .collect::<Vec<_>>()
            .join("; ")
    )];
    if let Some(m) = &o.mixed
        && !m.cvs.is_empty()
    {
        footnotes.push(format!(
            "Coefficients of variation: {}.",
            m.cvs
                .iter()
                .map(|(name, cv)| format!("{} {} %", shown_term(plots, name), fixed(*cv, 1)))
                .collect::<Vec<_>>()
                .join("; ")
        ));
    }
    footnotes
}

fn factorial_footnotes(o: &LinearOutcome) -> Vec<String> {
    let plots = &o.presentation.plots;
    let tested: Vec<(&TermTest, (f64, f64))> = o
        .terms
        .iter()
        .filter(|t| t.tested)
        .map(|t| {
            (
                t,
                t.effect
                    .map_or((f64::NAN, f64::NAN), |e| e.partial_eta_sq_ci),
            )
        })
        .collect();
    let ci_dec = effect_decimals(tested.iter().flat_map(|(_, ci)| [ci.0, ci.1]));
    let (crits, intervals): (Vec<String>, Vec<String>) = tested
        .iter()
        .map(|(t, ci)| {
            let term = shown_term(plots, &t.name);
            let df2 = df_text(t.denominator_df);
            (
                format!("{term} F({}, {df2}) = {}", t.df, fixed(t.critical_f, 3)),
                format!("{term} {} to {}", fixed(ci.0, ci_dec), fixed(ci.1, ci_dec)),
            )
        })
        .unzip();
    let mut footnotes = vec![
        format!(
            "Critical values at α = {}: {}. R² = {}.",
            alpha_text(o.alpha),
            crits.join("; "),
            fixed(o.r_squared, 3)
        ),
        format!(
            "η² is partial η² = SS/(SS + SS residual); {} intervals for it from the noncentral F: {}.",
            confidence_label(o.alpha),
            intervals.join("; ")
        ),
        "All factors are fixed effects; every F uses the residual mean square.".to_string(),
    ];
    if o.terms.iter().any(|t| !t.tested) {
        footnotes.push(BLOCK_NOT_TESTED.to_string());
    }
    if o.types_agree {
        footnotes.push("The design is balanced: Types I, II and III sums of squares agree.".into());
    }
    footnotes.extend(super::covariates::anova_footnotes(o));
    footnotes
}

/// Welch's ANOVA of a one-factor block, not assuming equal variances.
pub fn welch_table(o: &LinearOutcome, keys: &Keys, number: usize) -> TableView {
    let row = o.alternatives.welch.map(|w| {
        vec![
            cell(f_stat(w.f), keys.field("welch.f")),
            cell(df_text(w.df1), keys.field("welch.df1")),
            cell(fixed(w.df2, 2), keys.field("welch.df2")),
            cell(p_value(w.p), keys.field("welch.p")),
        ]
    });
    let classical = o.terms.first().map_or(String::new(), |t| {
        crate::format::f_statement(t.df as f64, t.denominator_df, t.f, t.p)
    });
    alternative_table(
        o,
        number,
        (
            "welch",
            "Welch's analysis of variance",
            ", not assuming equal variances",
        ),
        &["Welch's F", "df₁", "df₂", "p"],
        row,
        format!("Welch (1951). The classical F test, for comparison: {classical}."),
    )
}

/// The Kruskal-Wallis test of a one-factor block.
pub fn kruskal_table(o: &LinearOutcome, keys: &Keys, number: usize) -> TableView {
    let row = o.alternatives.kruskal.as_ref().map(|k| {
        vec![
            cell(fixed(k.h, 2), keys.field("kruskal.h")),
            cell(df_text(k.df), keys.field("kruskal.df")),
            cell(p_value(k.p), keys.field("kruskal.p")),
        ]
    });
    alternative_table(
        o,
        number,
        ("kruskal", "Kruskal-Wallis test", ""),
        &["H", "df", "p"],
        row,
        "Kruskal & Wallis (1952); H is corrected for ties and referred to the chi-squared distribution.".into(),
    )
}

/// A one-row table of an omnibus alternative; `(suffix, test, remark)`
/// name its table id, its test for the caption and a remark after N.
fn alternative_table(
    o: &LinearOutcome,
    number: usize,
    (suffix, test, remark): (&str, &str, &str),
    headers: &[&str],
    row: Option<Vec<Cell>>,
    footnote: String,
) -> TableView {
    let factor = factors_text(o);
    let mut columns = vec![col("Source", false)];
    columns.extend(headers.iter().map(|h| col(*h, true)));
    let rows = row
        .into_iter()
        .map(|cells| std::iter::once(text(factor.clone())).chain(cells).collect())
        .collect();
    TableView {
        columns,
        rows,
        footnotes: vec![footnote],
        ..headline_table(o, number, suffix, || {
            format!(
                "{test} of {} by {factor} (N = {}){remark}.",
                measure(o),
                o.n
            )
        })
    }
}
