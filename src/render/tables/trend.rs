//! The trend table of a block: the orthogonal polynomial components for the
//! levels' actual values, the deviations from the highest degree shown, the
//! pure error, and notes on the scores, the degree rule and the fitted
//! curve.

use super::keys::Keys;
use super::{cell, text, variance_columns};
use crate::format::capitalised;
use crate::format::{alpha_text, df_text, f_stat, p_value, significant};
use crate::outcome::linear::LinearOutcome;
use crate::outcome::trend::{TrendDetail, TrendVerdict, degree_name};
use crate::render::view::{Cell, TableView};

pub fn trend_table(o: &LinearOutcome, t: &TrendDetail, keys: &Keys, number: usize) -> TableView {
    let line = |label: String, key: &str, df: f64, ss: f64, f: f64, p: f64| -> Vec<Cell> {
        let k = |q: &str| keys.field(&format!("trend.{key}.{q}"));
        vec![
            text(label),
            cell(df_text(df), k("df")),
            cell(significant(ss, 4), k("ss")),
            cell(significant(ss / df, 4), k("ms")),
            cell(f_stat(f), k("f")),
            cell(p_value(p), k("p")),
        ]
    };
    let mut rows: Vec<Vec<Cell>> = t
        .components
        .iter()
        .map(|c| {
            let name = degree_name(c.degree);
            line(
                capitalised(&name),
                &format!("components.{name}"),
                c.df,
                c.ss,
                c.f,
                c.p,
            )
        })
        .collect();
    let highest = t.components.last().map_or(0, |c| c.degree);
    if let Some(l) = t.lack_of_fit_after(highest) {
        let key = format!("lack_of_fit.after {}", degree_name(l.degree));
        rows.push(line(
            "Deviations (lack of fit)".into(),
            &key,
            l.df,
            l.ss,
            l.f,
            l.p,
        ));
    }
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
    let mut footnotes = vec![format!(
        "Orthogonal polynomials for the levels' actual values ({scores}) and replication, so the components add up to the {factor} sum of squares ({} on {} df); equal spacing is not assumed. Each F uses the pure error.",
        significant(t.treatment_ss, 4),
        df_text(t.treatment_df)
    )];
    footnotes.push(verdict_note(o, t));
    TableView {
        id: format!("{}-trend", o.id),
        caption: format!(
            "Table {number}. Trend analysis of {} on {factor}.",
            super::measure(o)
        ),
        number,
        columns: variance_columns(),
        rows,
        footnotes,
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
            format!(
                "{rule} It chose the {} trend: fitted {} = {}, with the regression's residual mean square {} ({} df, lack of fit pooled with pure error), within the tested range {} to {} only.{optimum}",
                degree_name(d),
                super::measure(o),
                crate::format::typographic_minus(&terms.join(" + ").replace("+ -", "− ")),
                significant(c.ms, 4),
                df_text(c.df),
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
