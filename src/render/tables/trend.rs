//! The trend table of a block: the orthogonal polynomial components for the
//! levels' actual values, the deviations from the highest degree shown, the
//! pure error (in a mixed model, each row's own denominator df instead),
//! and notes on the scores, the degree rule and the fitted
//! curve.

use super::keys::Keys;
use super::{cell, col, text, variance_columns};
use crate::doc::block::DdfMethod;
use crate::format::capitalised;
use crate::format::{alpha_text, approx_df_text, df_text, f_stat, p_value, significant};
use crate::outcome::linear::LinearOutcome;
use crate::outcome::trend::{TrendDetail, TrendRow, TrendVerdict, degree_name};
use crate::render::view::{Cell, TableView};

pub fn trend_table(o: &LinearOutcome, t: &TrendDetail, keys: &Keys, number: usize) -> TableView {
    let line = |label: String, key: &str, r: &TrendRow| -> Vec<Cell> {
        let k = |q: &str| keys.field(&format!("trend.{key}.{q}"));
        match t.df_method {
            None => vec![
                text(label),
                cell(df_text(r.df), k("df")),
                cell(significant(r.ss, 4), k("ss")),
                cell(significant(r.ss / r.df, 4), k("ms")),
                cell(f_stat(r.f), k("f")),
                cell(p_value(r.p), k("p")),
            ],
            Some(_) => vec![
                text(label),
                cell(df_text(r.df), k("df")),
                cell(approx_df_text(r.error_df), k("error_df")),
                cell(f_stat(r.f), k("f")),
                cell(p_value(r.p), k("p")),
            ],
        }
    };
    let mut rows: Vec<Vec<Cell>> = t
        .components
        .iter()
        .map(|c| {
            let name = degree_name(c.degree);
            line(capitalised(&name), &format!("components.{name}"), c)
        })
        .collect();
    let highest = t.components.last().map_or(0, |c| c.degree);
    if let Some(l) = t.lack_of_fit_after(highest) {
        let key = format!("lack_of_fit.after {}", degree_name(l.degree));
        rows.push(line("Deviations (lack of fit)".into(), &key, l));
    }
    if t.df_method.is_none() {
        rows.push(vec![
            text("Residual (pure error)"),
            cell(df_text(t.error_df), keys.field("trend.error_df")),
            cell(
                significant(t.error_ms * t.error_df, 4),
                keys.field("trend.error_ss"),
            ),
            cell(significant(t.error_ms, 4), keys.field("trend.error_ms")),
            text(""),
            text(""),
        ]);
    }
    let factor = o.presentation.plots.display(&t.factor).to_string();
    let scores = t
        .scores
        .iter()
        .map(|(l, s)| match l.parse::<f64>().ok() == Some(*s) {
            true => l.clone(),
            false => format!("{l} = {s}"),
        })
        .collect::<Vec<_>>()
        .join(", ");
    let mut footnotes = vec![match t.df_method {
        None => format!(
            "Orthogonal polynomials for the levels' actual values ({scores}) and replication, so the components add up to the {factor} sum of squares ({} on {} df); equal spacing is not assumed. Each F uses the pure error.",
            significant(t.treatment_ss, 4),
            df_text(t.treatment_df)
        ),
        Some(method) => format!(
            "Orthogonal polynomials for the levels' actual values ({scores}) under the covariance of the estimated marginal means of {factor}; equal spacing is not assumed. Each component is a contrast among those means tested with its own SE and {} df from the mixed model (F = t²), so it is judged by the variation of the units {factor} was applied to; the deviations are the joint Wald F test of the higher-degree contrasts, with the same df method. No sums of squares: each row has its own error.",
            method_name(method)
        ),
    }];
    footnotes.push(verdict_note(o, t));
    let mut columns = variance_columns();
    if t.df_method.is_some() {
        columns.splice(2..4, [col("Denominator df", true)]);
    }
    TableView {
        id: format!("{}-trend", o.id),
        caption: format!(
            "Table {number}. Trend analysis of {} on {factor}.",
            super::measure(o)
        ),
        number,
        columns,
        rows,
        footnotes,
    }
}

fn method_name(method: DdfMethod) -> &'static str {
    match method {
        DdfMethod::KenwardRoger => "Kenward-Roger",
        DdfMethod::Satterthwaite => "Satterthwaite",
    }
}

/// The degree rule's finding and, with a chosen degree, the fitted curve.
fn verdict_note(o: &LinearOutcome, t: &TrendDetail) -> String {
    let alpha = alpha_text(o.alpha);
    let rule = format!(
        "Degree rule: the highest degree up to cubic whose component is significant at α = {alpha}, when the deviations after it are not."
    );
    match t.verdict {
        TrendVerdict::NoTrend => format!("{rule} No component is significant: no trend is drawn."),
        TrendVerdict::NotPolynomial => format!(
            "{rule} The deviations stay significant after every significant degree: no low-order polynomial describes the means, and no curve is drawn."
        ),
        TrendVerdict::Degree(d) => {
            let Some(c) = &t.curve else {
                return format!("{rule} It chose the {} trend.", degree_name(d));
            };
            let x = o.presentation.plots.display(&t.factor).to_string();
            let terms: Vec<String> = c
                .coefficients
                .iter()
                .zip(&c.se)
                .enumerate()
                .map(|(j, (b, se))| {
                    let power = match j {
                        0 => String::new(),
                        1 => format!("·{x}"),
                        _ => format!("·{x}^{j}"),
                    };
                    format!("{}{power} (SE {})", significant(*b, 6), significant(*se, 3))
                })
                .collect();
            let optimum = c
                .optimum
                .as_ref()
                .map_or(String::new(), |p| optimum_sentence(p, &x));
            let fit = match t.df_method {
                None => format!(
                    "with the regression's residual mean square {} ({} df, lack of fit pooled with pure error)",
                    significant(c.ms, 4),
                    df_text(c.df)
                ),
                Some(_) => format!(
                    "by generalised least squares on the estimated marginal means with their covariance from the mixed model (intervals on {} df, the {} component's)",
                    approx_df_text(c.df),
                    degree_name(d)
                ),
            };
            format!(
                "{rule} It chose the {} trend: fitted {} = {}, {fit}, within the tested range {} to {} only.{optimum}",
                degree_name(d),
                super::measure(o),
                crate::format::typographic_minus(&terms.join(" + ").replace("+ -", "− ")),
                t.scores.iter().map(|s| s.1).fold(f64::INFINITY, f64::min),
                t.scores
                    .iter()
                    .map(|s| s.1)
                    .fold(f64::NEG_INFINITY, f64::max),
            )
        }
    }
}

/// The quadratic's turning point with its Fieller set, in words; a set
/// that is not an interval says that the data do not locate the point.
fn optimum_sentence(p: &crate::outcome::trend::Optimum, x: &str) -> String {
    use crate::outcome::trend::FiellerSet;
    let kind = if p.maximum { "maximum" } else { "minimum" };
    let level = crate::format::confidence_label(1.0 - p.level);
    let at = significant(p.x, 4);
    let range = if p.within_range {
        ""
    } else {
        " It lies outside the tested values: an extrapolation, not a finding."
    };
    match p.set {
        FiellerSet::Bounded(l, u) => format!(
            " The fitted curve has its {kind} at {x} = {at} ({level} Fieller interval {} to {}).{range}",
            significant(l, 4),
            significant(u, 4)
        ),
        FiellerSet::TwoHalfLines(l, u) => format!(
            " The fitted curve has its {kind} at {x} = {at}, but its {level} Fieller set is unbounded (below {} and above {}): the data do not locate it.",
            significant(l, 4),
            significant(u, 4)
        ),
        FiellerSet::WholeLine => format!(
            " The fitted curve has its {kind} at {x} = {at}, but its {level} Fieller set is the whole line: the data do not locate it."
        ),
    }
}
