//! The means table of a family: a one-factor design's levels (with each
//! level's own SD), a factor's estimated marginal means, a slice of them, or
//! the cells; and for rank-based one-factor blocks, medians and mean ranks.

use super::covariates;
use super::keys::Keys;
use super::{
    cell, col, display_order, family_slice, family_subject, family_table_id, measure, text,
};
use crate::doc::block::Order;
use crate::format::{alpha_text, confidence_label, df_text, fixed, significant};
use crate::outcome::linear::{Comparison, Family, LinearOutcome};
use crate::render::view::{Cell, Column, TableView};
use crate::stats::compare::Method;

/// One row per estimate: n, mean, SD (one factor), SE, interval, and letters
/// or the mark against a control when the family was compared.
pub fn means_table(o: &LinearOutcome, family: &Family, keys: &Keys, number: usize) -> TableView {
    let d = o.presentation.decimals;
    let one_factor = o.is_one_factor();
    let key = |label: &str, q: &str| {
        if one_factor {
            keys.level(label, q)
        } else {
            keys.estimate(family, label, q)
        }
    };
    let letters = family.comparison.as_ref().filter(|c| !c.letters.is_empty());
    let dunnett = family
        .comparison
        .as_ref()
        .filter(|c| c.method == Method::Dunnett);
    let means: Vec<f64> = family.estimates.iter().map(|e| e.mean).collect();
    let rows = display_order(o.presentation.order, &means)
        .into_iter()
        .map(|i| {
            let e = &family.estimates[i];
            let mut row = vec![
                text(e.label.clone()),
                cell(e.n.to_string(), key(&e.label, "n")),
            ];
            row.extend(covariates::adjusted_cells(o, family, i, keys));
            row.push(cell(fixed(e.mean, d), key(&e.label, "mean")));
            if let Some(level) = o.levels.get(i).filter(|_| one_factor) {
                row.push(cell(fixed(level.sd, d), key(&e.label, "sd")));
            }
            row.push(cell(fixed(e.se, d), key(&e.label, "se")));
            if let Some(df) = e.df {
                row.push(cell(df_text(df), key(&e.label, "df")));
            }
            row.push(cell(
                format!("{} to {}", fixed(e.ci_lower, d), fixed(e.ci_upper, d)),
                key(&e.label, "ci"),
            ));
            if let Some(c) = letters {
                row.push(cell(c.letters[i].clone(), keys.family(family, "letters")));
            }
            if let Some(c) = dunnett {
                row.push(text(control_mark(c, i)));
            }
            row
        })
        .collect();
    let what = family_subject(o, family);
    let mut columns = vec![col(what.clone(), false), col("n", true)];
    let adjusted = covariates::adjusted_columns(o);
    let mean_label = if adjusted.is_empty() {
        "Mean"
    } else {
        "Adjusted mean"
    };
    columns.extend(adjusted);
    columns.push(col(mean_label, true));
    if one_factor && !o.levels.is_empty() {
        columns.push(col("SD", true));
    }
    columns.push(col("SE", true));
    if family.estimates.iter().any(|e| e.df.is_some()) {
        columns.push(col("df", true));
    }
    columns.push(col(format!("{} CI", confidence_label(o.alpha)), true));
    let mut footnotes = vec![se_note(o, family)];
    footnotes.extend(covariates::adjusted_footnote(o));
    footnotes.extend(super::precision::precision_note(o, family));
    if let Some(c) = letters {
        columns.push(col("Letters", false));
        footnotes.push(if one_factor {
            letters_footnote(o.presentation.order, c, "mean")
        } else {
            format!(
                "Means sharing a letter are not significantly different ({}, α = {}); the letter a marks the highest mean.{}",
                c.method.title(),
                alpha_text(c.alpha),
                if o.presentation.order == Order::Mean { " Rows run from the highest mean." } else { "" }
            )
        });
    }
    if let Some(c) = dunnett {
        columns.push(col("vs control", false));
        footnotes.push(format!(
            "* differs from the control at α = {} (Dunnett). Letters are not given: Dunnett's procedure compares treatments with the control only.",
            alpha_text(c.alpha)
        ));
    }
    TableView {
        id: if one_factor {
            format!("{}-means", o.id)
        } else {
            family_table_id(o, "means", family)
        },
        caption: means_caption(o, family, number),
        number,
        columns,
        rows,
        footnotes,
    }
}

fn means_caption(o: &LinearOutcome, family: &Family, number: usize) -> String {
    let what = family_subject(o, family);
    if o.is_one_factor() {
        return format!("Table {number}. Means of {} by {what}.", measure(o));
    }
    let kind = if family.term == "cells" {
        "Cell means"
    } else if o.covariates.is_some() {
        "Adjusted means"
    } else {
        "Estimated marginal means"
    };
    format!(
        "Table {number}. {kind} of {} by {what}{}.",
        measure(o),
        family_slice(o, family)
    )
}

/// `control` for the control, `*` for a treatment that differs from it.
pub(super) fn control_mark(c: &Comparison, i: usize) -> String {
    if c.control == Some(i) {
        return "control".to_string();
    }
    c.contrasts
        .iter()
        .find(|p| p.a == i)
        .map_or(String::new(), |p| {
            if p.significant { "*".into() } else { "".into() }
        })
}

/// Where the SEs and intervals come from.
fn se_note(o: &LinearOutcome, family: &Family) -> String {
    let conf = confidence_label(o.alpha);
    let residual = o.residual();
    let structured = o.repeated.as_ref().is_some_and(|r| r.covariance.is_some());
    if structured {
        return format!(
            "Estimated marginal means from the mixed model, averaged with equal weight over the levels of the other factors. Each SE comes from the fitted covariance of the subjects' observations, and each mean has its own df; {conf} intervals use it."
        );
    }
    if o.mixed.is_some() {
        return format!(
            "Estimated marginal means from the mixed model, averaged with equal weight over the levels of the other factors. Each SE includes the variation of the random terms the mean is averaged over (blocks, whole plots), and each mean has its own df; {conf} intervals use it."
        );
    }
    if !o.is_one_factor() {
        let df = df_text(residual.df);
        return if family.term == "cells" {
            format!("SE = √(MSE/n) from the model's residual mean square ({df} df).")
        } else {
            format!(
                "Least-squares means: model predictions averaged with equal weight over the levels of the other factors, so unbalanced data are compared fairly; SE from the model ({df} df)."
            )
        };
    }
    if o.ci_pooled {
        format!(
            "SE and {conf} confidence intervals use the pooled error mean square (MSE = {}, {} df), as the ANOVA model assumes equal variances; SD is each level's own.",
            significant(residual.ms, 4),
            df_text(residual.df)
        )
    } else {
        format!(
            "SE and {conf} confidence intervals use each level's own SD (n − 1 df), as Welch's ANOVA does not assume equal variances."
        )
    }
}

/// The note under a column of letters; rows run from the highest `what`
/// when the block orders them so.
pub(super) fn letters_footnote(order: Order, c: &Comparison, what: &str) -> String {
    let rows_note = if order == Order::Mean {
        format!(" Rows run from the highest {what}.")
    } else {
        String::new()
    };
    format!(
        "Levels sharing a letter are not significantly different ({}, α = {}); the letter a marks the group holding the highest {what}.{rows_note}",
        c.method.title(),
        alpha_text(c.alpha)
    )
}

/// A rank-based one-factor block's levels: median, quartiles, mean rank,
/// mean, and letters from Dunn's comparisons.
pub fn ranks_table(o: &LinearOutcome, family: &Family, keys: &Keys, number: usize) -> TableView {
    let d = o.presentation.decimals;
    let mean_ranks: Vec<f64> = o
        .alternatives
        .kruskal
        .as_ref()
        .map_or_else(|| vec![f64::NAN; o.levels.len()], |k| k.mean_ranks.clone());
    let letters = family.comparison.as_ref().filter(|c| !c.letters.is_empty());
    let rows = display_order(o.presentation.order, &mean_ranks)
        .into_iter()
        .map(|i| {
            let l = &o.levels[i];
            let g = |q: &str| keys.level(&l.name, q);
            let mut row: Vec<Cell> = vec![
                text(l.name.clone()),
                cell(l.n.to_string(), g("n")),
                cell(fixed(l.median, d), g("median")),
                cell(
                    format!("{} to {}", fixed(l.q1, d), fixed(l.q3, d)),
                    g("iqr"),
                ),
                cell(fixed(mean_ranks[i], 1), g("mean_rank")),
                cell(fixed(l.mean, d), g("mean")),
            ];
            if let Some(c) = letters {
                row.push(cell(c.letters[i].clone(), keys.family(family, "letters")));
            }
            row
        })
        .collect();
    let what = family_subject(o, family);
    let columns = vec![
        col(what.clone(), false),
        col("n", true),
        col("Median", true),
        col("Quartiles", true),
        col("Mean rank", true),
        col("Mean", true),
    ];
    let footnotes = vec!["Quartiles by linear interpolation between order statistics; ranks are joint over all observations, ties sharing their mid-rank.".to_string()];
    let about = format!("Medians and ranks of {} by {what}.", measure(o));
    ranked_levels_table(o, (number, about), (columns, rows, footnotes), letters)
}

/// A rank-based block's table of levels (`<id>-levels`), `about` its
/// caption after the number; a column of letters with its note is added
/// when the procedure gives letters.
pub(super) fn ranked_levels_table(
    o: &LinearOutcome,
    (number, about): (usize, String),
    (mut columns, rows, mut footnotes): (Vec<Column>, Vec<Vec<Cell>>, Vec<String>),
    letters: Option<&Comparison>,
) -> TableView {
    if let Some(c) = letters {
        columns.push(col("Letters", false));
        footnotes.push(letters_footnote(o.presentation.order, c, "mean rank"));
    }
    TableView {
        number,
        id: format!("{}-levels", o.id),
        caption: format!("Table {number}. {about}"),
        columns,
        rows,
        footnotes,
    }
}
