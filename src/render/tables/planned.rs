//! The table of a block's planned contrasts: each contrast's weights,
//! estimate, SE, t, df, p and interval, with notes on the adjustment, the
//! orthogonality of the set and its joint test.

use super::keys::Keys;
use super::{cell, col, text};
use crate::doc::block::DdfMethod;
use crate::doc::block_contrasts::ContrastAdjust;
use crate::format::{
    alpha_text, confidence_label, df_text, f_statement, fixed, p_value, significant,
};
use crate::outcome::contrasts::ContrastDetail;
use crate::outcome::linear::LinearOutcome;
use crate::render::view::TableView;

/// A weight as written: whole numbers plain, others to four significant
/// digits without trailing zeros (½ is 0.5, ⅓ is 0.3333).
fn weight_text(w: f64) -> String {
    if w.fract() == 0.0 {
        return format!("{w:.0}");
    }
    let s = significant(w, 4);
    match s.contains('.') {
        true => s.trim_end_matches('0').trim_end_matches('.').to_string(),
        false => s,
    }
}

pub fn planned_table(
    o: &LinearOutcome,
    d: &ContrastDetail,
    keys: &Keys,
    number: usize,
) -> TableView {
    let dec = o.presentation.decimals;
    let adjusted = d.adjust != ContrastAdjust::None;
    let rows = d
        .contrasts
        .iter()
        .map(|c| {
            let key = |q: &str| keys.field(&format!("planned_contrasts.contrasts.{}.{q}", c.name));
            let weights = c
                .weights
                .iter()
                .map(|(l, w)| format!("{l} {}", weight_text(*w)))
                .collect::<Vec<_>>()
                .join(", ");
            let mut row = vec![
                text(c.name.clone()),
                text(crate::format::typographic_minus(&weights)),
                cell(fixed(c.estimate, dec), key("estimate")),
                cell(fixed(c.se, dec), key("se")),
                cell(fixed(c.t, 2), key("t")),
                cell(df_text(c.df), key("df")),
                cell(p_value(c.p), key("p")),
            ];
            if adjusted {
                row.push(cell(p_value(c.p_adj.unwrap_or(f64::NAN)), key("p_adj")));
            }
            row.push(cell(
                format!("{} to {}", fixed(c.lower, dec), fixed(c.upper, dec)),
                key("ci"),
            ));
            row
        })
        .collect();
    let mut columns = vec![
        col("Contrast", false),
        col("Weights", false),
        col("Estimate", true),
        col("SE", true),
        col("t", true),
        col("df", true),
        col("p", true),
    ];
    if adjusted {
        columns.push(col("adjusted p", true));
    }
    columns.push(col(format!("{} CI", confidence_label(o.alpha)), true));
    let factor = o.presentation.plots.display(&d.factor).to_string();
    TableView {
        id: format!("{}-contrasts", o.id),
        caption: format!(
            "Table {number}. Planned contrasts among the {factor} means of {} ({}).",
            super::measure(o),
            adjustment_words(d.adjust)
        ),
        number,
        columns,
        rows,
        footnotes: footnotes(o, d),
    }
}

fn adjustment_words(a: ContrastAdjust) -> &'static str {
    match a {
        ContrastAdjust::None => "planned, unadjusted",
        ContrastAdjust::Bonferroni => "Bonferroni-adjusted",
        ContrastAdjust::Holm => "Holm-adjusted",
        ContrastAdjust::Scheffe => "Scheffé-adjusted",
    }
}

fn footnotes(o: &LinearOutcome, d: &ContrastDetail) -> Vec<String> {
    let means = if o.covariates.is_some() {
        "adjusted means"
    } else if o.is_one_factor() {
        "level means"
    } else {
        "estimated marginal means"
    };
    let error = match d.own_df {
        None => "SE from the model's error mean square; t on its df.".to_string(),
        Some(method) => format!(
            "SE and df of each contrast from the mixed model (df by {}, as its tests), so each contrast is judged by the variation of the units its levels were applied to; t on its own df.",
            match method {
                DdfMethod::KenwardRoger => "Kenward-Roger",
                DdfMethod::Satterthwaite => "Satterthwaite",
            }
        ),
    };
    let mut notes = vec![format!(
        "Each contrast is Σ weight × mean over the {means}; levels not listed weigh 0. {error}"
    )];
    notes.push(match d.adjust {
        ContrastAdjust::None => format!(
            "Contrasts planned before the data were seen, each tested at α = {} without adjustment for the number of contrasts.",
            alpha_text(o.alpha)
        ),
        ContrastAdjust::Bonferroni => "p-values multiplied by the number of contrasts (Bonferroni); intervals are simultaneous.".into(),
        ContrastAdjust::Holm => "p-values by Holm's step-down procedure (Holm 1979); the intervals are Bonferroni's, which contain Holm's.".into(),
        ContrastAdjust::Scheffe => "p-values and intervals by Scheffé's method (Scheffé 1953), valid for any contrast, including those suggested by the data.".into(),
    });
    if d.contrasts.len() > 1 {
        notes.push(if d.orthogonal {
            "The contrasts are orthogonal (uncorrelated under the model), so their sums of squares add up.".into()
        } else {
            "The contrasts are not orthogonal: their tests are correlated, and their sums of squares do not add up.".into()
        });
    }
    if let Some(j) = &d.joint {
        notes.push(format!(
            "All contrasts at once: {}.",
            f_statement(j.df1, j.df2, j.f, j.p)
        ));
    }
    let off: Vec<&str> = d
        .contrasts
        .iter()
        .filter(|c| !c.data_units)
        .map(|c| c.name.as_str())
        .collect();
    if !off.is_empty() {
        notes.push(format!(
            "The positive weights of {} do not sum to 1, so the estimate is not a difference of averages in the response's units (weights of ½, ½ and −1 compare the mean of two levels with a third).",
            off.join(", ")
        ));
    }
    notes
}
