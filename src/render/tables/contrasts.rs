//! The contrasts of a compared family: each pair's difference, SE, interval
//! (or one-sided bound), own df where the procedure gives one, adjusted p
//! and verdict; for Dunn's procedure the mean-rank difference and z.

use super::keys::Keys;
use super::{cell, col, family_slice, family_subject, family_table_id, text, yes_no};
use crate::format::{alpha_text, confidence_label, fixed, p_value};
use crate::outcome::linear::{Comparison, Contrast, Family, LinearOutcome};
use crate::render::view::{Cell, Column, TableView};
use crate::stats::compare::Method;
use crate::stats::dunnett::Sides;

pub fn contrasts_table(
    o: &LinearOutcome,
    family: &Family,
    c: &Comparison,
    keys: &Keys,
    number: usize,
) -> TableView {
    let p_label = if c.method == Method::Lsd {
        "p"
    } else {
        "adjusted p"
    };
    let sig_label = format!("Significant at α = {}", alpha_text(c.alpha));
    let (mut columns, rows) = if c.method == Method::Dunn {
        rank_rows(family, c, keys)
    } else {
        difference_rows(o, family, c, keys)
    };
    columns.push(col(p_label, true));
    columns.push(col(sig_label, false));
    let (id, caption, footnote) = if o.is_one_factor() {
        (
            format!("{}-pairs", o.id),
            one_factor_caption(o, c, number),
            one_factor_footnote(c),
        )
    } else {
        (
            family_table_id(o, "pairs", family),
            format!(
                "Table {number}. Pairwise comparisons of {} {} of {}{} ({}).",
                family_subject(o, family),
                if o.covariates.is_some() {
                    "adjusted means"
                } else {
                    "means"
                },
                super::measure(o),
                family_slice(o, family),
                c.method.title()
            ),
            format!("Procedure: {} ({}).", c.method.title(), c.method.citation()),
        )
    };
    TableView {
        number,
        id,
        caption,
        columns,
        rows,
        footnotes: std::iter::once(footnote)
            .chain(super::transform::ratio_columns(o, c).footnote())
            .collect(),
    }
}

/// The first columns and every row (the adjusted p and verdict included) for
/// procedures on means.
pub(super) fn difference_rows(
    o: &LinearOutcome,
    family: &Family,
    c: &Comparison,
    keys: &Keys,
) -> (Vec<Column>, Vec<Vec<Cell>>) {
    let d = o.presentation.decimals;
    let conf = confidence_label(o.alpha);
    // A one-sided Dunnett bound is one number under a header naming it.
    let (interval_label, one_sided) = match (c.method, c.sides) {
        (Method::Dunnett, Sides::Greater) => (format!("{conf} lower bound"), true),
        (Method::Dunnett, Sides::Less) => (format!("{conf} upper bound"), true),
        _ => (format!("{conf} CI"), false),
    };
    let interval = |p: &Contrast| match (p.lower.is_finite(), p.upper.is_finite()) {
        (true, true) => format!("{} to {}", fixed(p.lower, d), fixed(p.upper, d)),
        (true, false) if one_sided => fixed(p.lower, d),
        (false, true) if one_sided => fixed(p.upper, d),
        (true, false) => format!("above {}", fixed(p.lower, d)),
        (false, true) => format!("below {}", fixed(p.upper, d)),
        _ => "–".into(),
    };
    let ratio = super::transform::ratio_columns(o, c);
    let mut columns = vec![
        col("Comparison", false),
        col("Difference", true),
        col("SE", true),
    ];
    if !ratio.shown() {
        columns.push(col(interval_label, true));
    }
    // Games-Howell and mixed models give each pair its own df.
    let own_df = c.contrasts.iter().any(|p| p.own_df);
    if own_df {
        columns.push(col("df", true));
    }
    columns.extend(ratio.columns());
    let rows = rows_of(family, c, keys, |p, k| {
        let mut middle = vec![
            cell(fixed(p.estimate, d), k("diff")),
            cell(fixed(p.se, d), k("se")),
        ];
        if !ratio.shown() {
            middle.push(cell(interval(p), k("ci")));
        }
        if own_df {
            middle.push(cell(crate::format::df_text(p.df), k("df")));
        }
        middle.extend(ratio.cells(p, k));
        middle
    });
    (columns, rows)
}

/// Dunn's procedure: mean-rank differences and their z, without intervals.
fn rank_rows(family: &Family, c: &Comparison, keys: &Keys) -> (Vec<Column>, Vec<Vec<Cell>>) {
    let columns = vec![
        col("Comparison", false),
        col("Mean-rank difference", true),
        col("z", true),
    ];
    let rows = rows_of(family, c, keys, |p, k| {
        vec![
            cell(fixed(p.estimate, 2), k("diff")),
            cell(fixed(p.statistic, 2), k("statistic")),
        ]
    });
    (columns, rows)
}

/// `trt1 − ctrl`.
fn pair_label(family: &Family, p: &Contrast) -> String {
    format!(
        "{} − {}",
        family.estimates[p.a].label, family.estimates[p.b].label
    )
}

/// One row per contrast: its label, the cells `middle` gives (from the
/// contrast and its key maker), the adjusted p and whether the pair differs.
fn rows_of(
    family: &Family,
    c: &Comparison,
    keys: &Keys,
    middle: impl Fn(&Contrast, &dyn Fn(&str) -> String) -> Vec<Cell>,
) -> Vec<Vec<Cell>> {
    c.contrasts
        .iter()
        .enumerate()
        .map(|(i, p)| {
            let k = |q: &str| keys.contrast(family, i, q);
            let mut row = vec![text(pair_label(family, p))];
            row.extend(middle(p, &k));
            row.push(cell(p_value(p.p_adj), k("p_adj")));
            row.push(cell(yes_no(p.significant), k("significant")));
            row
        })
        .collect()
}

fn one_factor_caption(o: &LinearOutcome, c: &Comparison, number: usize) -> String {
    let conf = confidence_label(o.alpha);
    let interval = match c.method {
        Method::Holm => format!("{conf} Bonferroni simultaneous intervals"),
        Method::Lsd => format!("{conf} intervals per pair"),
        Method::Dunn => "no intervals".to_string(),
        Method::Dunnett if c.sides != Sides::Two => format!("one-sided {conf} simultaneous bounds"),
        _ => format!("{conf} simultaneous intervals"),
    };
    let what = match c.method {
        Method::Dunnett => format!(
            "Treatment–control comparisons of {} by {}",
            super::measure(o),
            super::factors_text(o)
        ),
        _ => format!(
            "Pairwise comparisons of {} between {} levels",
            super::measure(o),
            super::factors_text(o)
        ),
    };
    format!("Table {number}. {what} ({}, {interval}).", c.method.title())
}

fn one_factor_footnote(c: &Comparison) -> String {
    let se_note = match c.method {
        Method::GamesHowell => {
            "SE = √(sᵢ²/nᵢ + sⱼ²/nⱼ), with the pair's own Welch-Satterthwaite df"
        }
        Method::Dunn => {
            "z is the mean-rank difference over its standard error under the joint ranking"
        }
        _ => "SE = √(MSE(1/nᵢ + 1/nⱼ))",
    };
    format!(
        "Difference is the first level's {} minus the second's; {se_note}. Procedure: {} ({}).",
        if c.method == Method::Dunn {
            "mean rank"
        } else {
            "mean"
        },
        c.method.title(),
        c.method.citation()
    )
}
