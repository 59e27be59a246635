//! The view model: every number of a block formatted once, as strings, with
//! the results-file key it came from. Templates only lay these out.

use super::format::{column_decimals, df_text, f_stat, fixed, p_value};
use crate::analysis::AnovaResult;
use crate::doc::block::Order;
use serde::Serialize;

#[derive(Debug, Clone, Serialize)]
pub struct Cell {
    pub text: String,
    /// Results-file path of the quantity, e.g. `growth.anova.terms.group.f`.
    pub key: Option<String>,
}

#[derive(Debug, Clone, Serialize)]
pub struct Column {
    pub label: String,
    pub numeric: bool,
}

#[derive(Debug, Clone, Serialize)]
pub struct TableView {
    pub number: usize,
    pub id: String,
    pub caption: String,
    pub columns: Vec<Column>,
    pub rows: Vec<Vec<Cell>>,
    pub footnotes: Vec<String>,
}

#[derive(Debug, Clone, Serialize)]
pub struct BlockView {
    pub id: String,
    pub tables: Vec<TableView>,
    pub notes: Vec<String>,
    pub warnings: Vec<String>,
}

fn cell(text: String, key: Option<String>) -> Cell {
    Cell { text, key }
}

fn text(t: impl Into<String>) -> Cell {
    Cell {
        text: t.into(),
        key: None,
    }
}

fn col(label: impl Into<String>, numeric: bool) -> Column {
    Column {
        label: label.into(),
        numeric,
    }
}

/// "95%" for α = 0.05, "97.5%" for α = 0.025.
pub fn confidence_label(alpha: f64) -> String {
    let pct = (1.0 - alpha) * 100.0;
    let rounded = (pct * 1000.0).round() / 1000.0;
    if rounded.fract() == 0.0 {
        format!("{rounded:.0}%")
    } else {
        format!("{rounded}%")
    }
}

/// Formats α as written in captions: 0.05 → "0.05".
pub fn alpha_text(alpha: f64) -> String {
    format!("{alpha}")
}

/// Builds the block's tables; `next_table` is the number of its first table.
pub fn block_view(r: &AnovaResult, next_table: &mut usize) -> BlockView {
    let t = &r.table;
    let id = &r.id;
    let d = r.decimals;
    let mut tables = Vec::new();
    let mut take_number = || {
        let n = *next_table;
        *next_table += 1;
        n
    };
    let conf = confidence_label(r.alpha);

    if r.show.anova {
        // SS to five significant digits of the total, MS to four of the
        // largest mean square, each column on one number of decimals.
        let ss_dec = column_decimals(&[t.ss_total], 5);
        let ms_dec = column_decimals(&[t.ms_between, t.ms_within], 4);
        let term_key = |q: &str| Some(format!("{id}.anova.terms.{}.{q}", r.factor));
        let rows = vec![
            vec![
                text(r.factor.clone()),
                cell(t.df_between.to_string(), term_key("df")),
                cell(fixed(t.ss_between, ss_dec), term_key("ss")),
                cell(fixed(t.ms_between, ms_dec), term_key("ms")),
                cell(f_stat(t.f), term_key("f")),
                cell(p_value(t.p), term_key("p")),
            ],
            vec![
                text("Residual"),
                cell(
                    t.df_within.to_string(),
                    Some(format!("{id}.anova.residual.df")),
                ),
                cell(
                    fixed(t.ss_within, ss_dec),
                    Some(format!("{id}.anova.residual.ss")),
                ),
                cell(
                    fixed(t.ms_within, ms_dec),
                    Some(format!("{id}.anova.residual.ms")),
                ),
                text(""),
                text(""),
            ],
            vec![
                text("Total"),
                cell((t.n - 1).to_string(), Some(format!("{id}.anova.total.df"))),
                cell(
                    fixed(t.ss_total, ss_dec),
                    Some(format!("{id}.anova.total.ss")),
                ),
                text(""),
                text(""),
                text(""),
            ],
        ];
        let number = take_number();
        let caption = match &r.caption {
            Some(c) => format!("Table {number}. {c}"),
            None => format!(
                "Table {number}. Analysis of variance of {} by {} (N = {}).",
                r.response, r.factor, t.n
            ),
        };
        let footnotes = vec![format!(
            "Critical value F({}, {}) at α = {} is {}; R² = {}.",
            t.df_between,
            df_text(t.df_within as f64),
            alpha_text(r.alpha),
            fixed(t.f_crit, 3),
            fixed(t.r_squared, 3)
        )];
        tables.push(TableView {
            number,
            id: format!("{id}-anova"),
            caption,
            columns: vec![
                col("Source", false),
                col("df", true),
                col("SS", true),
                col("MS", true),
                col("F", true),
                col("p", true),
            ],
            rows,
            footnotes,
        });
    }

    if r.show.means {
        let letters = r.comparison.as_ref().map(|c| &c.letters);
        let mut order: Vec<usize> = (0..r.levels.len()).collect();
        if r.order == Order::Mean {
            order.sort_by(|&a, &b| {
                r.levels[b]
                    .mean
                    .total_cmp(&r.levels[a].mean)
                    .then(a.cmp(&b))
            });
        }
        let rows = order
            .iter()
            .map(|&i| {
                let l = &r.levels[i];
                let g = |q: &str| Some(format!("{id}.groups.{}.{q}", l.name));
                let mut row = vec![
                    text(l.name.clone()),
                    cell(l.n.to_string(), g("n")),
                    cell(fixed(l.mean, d), g("mean")),
                    cell(fixed(l.sd, d), g("sd")),
                    cell(fixed(l.se, d), g("se")),
                    cell(
                        format!("{} to {}", fixed(l.ci_lower, d), fixed(l.ci_upper, d)),
                        g("ci"),
                    ),
                ];
                if let Some(ls) = letters {
                    row.push(cell(
                        ls[i].clone(),
                        Some(format!("{id}.comparisons.{}.letters", r.factor)),
                    ));
                }
                row
            })
            .collect();
        let mut columns = vec![
            col(r.factor.clone(), false),
            col("n", true),
            col("Mean", true),
            col("SD", true),
            col("SE", true),
            col(format!("{conf} CI"), true),
        ];
        let mut footnotes = vec![format!(
            "SE and {conf} confidence intervals use the pooled error mean square (MSE = {}, {} df), as the ANOVA model assumes equal variances; SD is each level's own.",
            super::format::significant(t.ms_within, 4),
            t.df_within
        )];
        if let Some(c) = &r.comparison {
            columns.push(col("Letters", false));
            let rows_note = if r.order == Order::Mean {
                " Rows run from the highest mean."
            } else {
                ""
            };
            footnotes.push(format!(
                "Means sharing a letter are not significantly different ({}, α = {}); the letter a marks the group holding the highest mean.{rows_note}",
                c.method.title(),
                alpha_text(c.alpha)
            ));
        }
        let number = take_number();
        tables.push(TableView {
            number,
            id: format!("{id}-means"),
            caption: format!("Table {number}. Means of {} by {}.", r.response, r.factor),
            columns,
            rows,
            footnotes,
        });
    }

    let mut notes = Vec::new();
    if let Some(c) = &r.comparison {
        notes.extend(c.notes.iter().cloned());
        if r.show.pairs {
            let p_label = if c.method.key() == "lsd" {
                "p"
            } else {
                "adjusted p"
            };
            let rows = c
                .pairs
                .iter()
                .enumerate()
                .map(|(i, p)| {
                    let k = |q: &str| Some(format!("{id}.comparisons.{}.pairs.{i}.{q}", r.factor));
                    vec![
                        text(format!("{} − {}", r.levels[p.a].name, r.levels[p.b].name)),
                        cell(fixed(p.diff, d), k("diff")),
                        cell(fixed(p.se, d), k("se")),
                        cell(
                            format!("{} to {}", fixed(p.lower, d), fixed(p.upper, d)),
                            k("ci"),
                        ),
                        cell(p_value(p.p_adj), k("p_adj")),
                        cell(
                            if p.significant {
                                "yes".into()
                            } else {
                                "no".into()
                            },
                            k("significant"),
                        ),
                    ]
                })
                .collect();
            let interval = match c.method.key() {
                "holm" => format!("{conf} Bonferroni simultaneous intervals"),
                "tukey" | "bonferroni" => format!("{conf} simultaneous intervals"),
                _ => format!("{conf} intervals per pair"),
            };
            let number = take_number();
            tables.push(TableView {
                number,
                id: format!("{id}-pairs"),
                caption: format!("Table {number}. Pairwise comparisons of {} means ({}, {interval}).", r.factor, c.method.title()),
                columns: vec![
                    col("Comparison", false),
                    col("Difference", true),
                    col("SE", true),
                    col(format!("{conf} CI"), true),
                    col(p_label, true),
                    col(format!("Significant at α = {}", alpha_text(c.alpha)), false),
                ],
                rows,
                footnotes: vec![format!(
                    "Difference is the first level's mean minus the second's; SE = √(MSE(1/nᵢ + 1/nⱼ)). Procedure: {} ({}).",
                    c.method.title(),
                    c.method.citation()
                )],
            });
        }
    }
    BlockView {
        id: id.clone(),
        tables,
        notes,
        warnings: r.warnings.clone(),
    }
}
