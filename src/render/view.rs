//! The view model: every number of a block formatted once, as strings, with
//! the results-file key it came from. Templates only lay these out.

use crate::doc::block::{Omnibus, Order};
use crate::format::{
    alpha_text, column_decimals, confidence_label, df_text, effect_size, f_stat, fixed, p_phrase,
    p_value, significant, typographic_minus,
};
use crate::outcome::FactorialResult;
use crate::outcome::{AnovaResult, ComparisonResult, PowerResult};
use crate::stats::assumptions::ShapiroWilkSkip;
use crate::stats::compare::Method;
use crate::stats::dunnett::Sides;
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

/// A figure as the templates place it: inline SVG (HTML) or a file link (Markdown).
#[derive(Debug, Clone, Serialize)]
pub struct FigureView {
    pub id: String,
    pub caption: String,
    pub svg: Option<String>,
    pub file: Option<String>,
}

#[derive(Debug, Clone, Serialize)]
pub struct BlockView {
    pub id: String,
    pub figures: Vec<FigureView>,
    /// A sentence that opens the block (power blocks state their answer).
    pub lead: Option<String>,
    pub tables: Vec<TableView>,
    pub notes: Vec<String>,
    pub warnings: Vec<String>,
}

fn cell(text: String, key: String) -> Cell {
    Cell {
        text,
        key: Some(key),
    }
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

/// The checks table's note on flagged observations: each line when there are
/// few, else the count and the most extreme few (the report never lists a
/// number of lines that grows with the data).
fn outlier_sentence(c: &crate::outcome::Checks) -> String {
    use crate::outcome::{OUTLIERS_LISTED, most_extreme};
    let threshold = crate::stats::assumptions::OUTLIER_THRESHOLD;
    if c.outlier_count <= OUTLIERS_LISTED {
        let lines: Vec<String> = c.outliers.iter().map(|o| o.line.to_string()).collect();
        let (observations, lines_word) = if lines.len() == 1 {
            ("One observation has", "data line")
        } else {
            ("Observations have", "data lines")
        };
        return format!(
            "{observations} an externally studentized residual beyond ±{threshold} (flagged, not excluded): {lines_word} {}.",
            join_words(&lines)
        );
    }
    let worst: Vec<String> = most_extreme(&c.outliers, OUTLIERS_LISTED)
        .iter()
        .map(|o| o.line.to_string())
        .collect();
    format!(
        "{} observations have an externally studentized residual beyond ±{threshold} (flagged, not excluded); the {OUTLIERS_LISTED} most extreme are on data lines {}, and the results file lists the {} most extreme.",
        crate::format::count(c.outlier_count),
        join_words(&worst),
        c.outliers.len()
    )
}

/// "a", "a and b", "a, b and c".
fn join_words(items: &[String]) -> String {
    match items {
        [] => String::new(),
        [one] => one.clone(),
        [rest @ .., last] => format!("{} and {last}", rest.join(", ")),
    }
}

/// The view as printed: minus signs in numeric cells and footnotes.
fn typeset(mut v: BlockView) -> BlockView {
    for t in &mut v.tables {
        for row in &mut t.rows {
            for (c, column) in row.iter_mut().zip(&t.columns) {
                if column.numeric {
                    c.text = typographic_minus(&c.text);
                }
            }
        }
        for f in &mut t.footnotes {
            *f = typographic_minus(f);
        }
    }
    v
}

/// Decimals for a column of effect sizes: two, or three when any value is
/// below 0.1 (METHODS 4.2), so that a column never mixes 0.32 and 0.032.
fn effect_decimals(values: impl IntoIterator<Item = f64>) -> u32 {
    if values.into_iter().any(|x| x.is_finite() && x.abs() < 0.1) {
        3
    } else {
        2
    }
}

/// Numbers tables through the document.
struct Numbering<'a>(&'a mut usize);

impl Numbering<'_> {
    fn next(&mut self) -> usize {
        let n = *self.0;
        *self.0 += 1;
        n
    }
}

/// Builds the block's tables; `next_table` is the number of its first table.
pub fn block_view(r: &AnovaResult, next_table: &mut usize) -> BlockView {
    let mut numbers = Numbering(next_table);
    let mut tables = Vec::new();
    if r.show.anova {
        tables.push(match r.method {
            Omnibus::Anova => anova_table(r, numbers.next()),
            Omnibus::Welch => welch_table(r, numbers.next()),
            Omnibus::Ranks => kruskal_table(r, numbers.next()),
        });
    }
    if r.checks.shown {
        tables.push(checks_table(r, numbers.next()));
    }
    if r.show.means {
        tables.push(if r.method == Omnibus::Ranks {
            ranks_table(r, numbers.next())
        } else {
            means_table(r, numbers.next())
        });
    }
    let mut notes = Vec::new();
    if let Some(c) = &r.comparison {
        notes.extend(c.notes.iter().cloned());
        if r.show.pairs {
            tables.push(pairs_table(r, c, numbers.next()));
        }
    }
    typeset(BlockView {
        figures: Vec::new(),
        id: r.id.clone(),
        lead: None,
        tables,
        notes,
        warnings: r.warnings.clone(),
    })
}

/// A `power` block: the answer as a sentence, and power over a range of n.
pub fn power_view(r: &PowerResult, next_table: &mut usize) -> BlockView {
    let mut numbers = Numbering(next_table);
    let effect = match &r.effect {
        crate::doc::power::EffectInput::CohensF(f) => format!("Cohen's f = {}", significant(*f, 3)),
        crate::doc::power::EffectInput::Means { means, sd, .. } => format!(
            "expected means {} with a common SD of {} (Cohen's f = {})",
            means
                .iter()
                .map(|m| format!("{m}"))
                .collect::<Vec<_>>()
                .join(", "),
            sd,
            significant(r.cohens_f, 3)
        ),
    };
    let setting = format!(
        "With {} groups, {effect} and α = {}",
        r.groups,
        alpha_text(r.alpha)
    );
    let lead = match (r.target, r.n_per_group) {
        (Some(target), Some(n)) => {
            let below = r.curve.iter().find(|(m, _)| *m + 1 == n).map(|(_, p)| *p);
            let below_text = below.map_or(String::new(), |p| {
                format!("; {} per group would give {}", n - 1, fixed(p, 3))
            });
            format!(
                "{setting}, {n} observations per group ({} in all) reach power {} against the target {}{below_text}.",
                n * r.groups,
                fixed(r.power, 3),
                target
            )
        }
        (Some(target), None) => {
            format!("{setting}, no practical number of observations reaches power {target}.")
        }
        (None, Some(n)) => format!(
            "{setting}, {n} observations per group ({} in all) give power {}: the chance that the F test detects an effect of this size.",
            n * r.groups,
            fixed(r.power, 3)
        ),
        (None, None) => setting,
    };
    let mut tables = Vec::new();
    if !r.curve.is_empty() {
        let number = numbers.next();
        let id = &r.id;
        tables.push(TableView {
            number,
            id: format!("{id}-power"),
            caption: match &r.caption {
                Some(c) => format!("Table {number}. {c}"),
                None => format!(
                    "Table {number}. Power of the one-way F test with {} groups and Cohen's f = {}.",
                    r.groups,
                    significant(r.cohens_f, 3)
                ),
            },
            columns: vec![col("n per group", true), col("Total N", true), col("Power", true)],
            rows: r
                .curve
                .iter()
                .enumerate()
                .map(|(i, (n, p))| {
                    vec![text(n.to_string()), text((n * r.groups).to_string()), cell(fixed(*p, 3), format!("{id}.curve.{i}.power"))]
                })
                .collect(),
            footnotes: vec![
                "Exact power from the noncentral F distribution with noncentrality λ = f²·N (Cohen 1988, ch. 8); equal group sizes.".into(),
            ],
        });
    }
    typeset(BlockView {
        figures: Vec::new(),
        id: r.id.clone(),
        lead: Some(lead),
        tables,
        notes: Vec::new(),
        warnings: r.warnings.clone(),
    })
}

fn anova_table(r: &AnovaResult, number: usize) -> TableView {
    let (t, id) = (&r.table, &r.id);
    // SS and MS to five significant digits of the total SS: one number of
    // decimals for both columns.
    let ss_dec = column_decimals(&[t.ss_total], 5);
    let ms_dec = ss_dec;
    let term = |q: &str| format!("{id}.anova.terms.{}.{q}", r.factor);
    let eta = r
        .effect
        .map_or_else(|| "".to_string(), |e| effect_size(e.partial_eta_sq));
    let rows = vec![
        vec![
            text(r.plots.display(&r.factor)),
            cell(t.df_between.to_string(), term("df")),
            cell(fixed(t.ss_between, ss_dec), term("ss")),
            cell(fixed(t.ms_between, ms_dec), term("ms")),
            cell(f_stat(t.f), term("f")),
            cell(p_value(t.p), term("p")),
            cell(eta, term("effect.partial_eta_sq")),
        ],
        vec![
            text("Residual"),
            cell(t.df_within.to_string(), format!("{id}.anova.residual.df")),
            cell(
                fixed(t.ss_within, ss_dec),
                format!("{id}.anova.residual.ss"),
            ),
            cell(
                fixed(t.ms_within, ms_dec),
                format!("{id}.anova.residual.ms"),
            ),
            text(""),
            text(""),
            text(""),
        ],
        vec![
            text("Total"),
            cell((t.n - 1).to_string(), format!("{id}.anova.total.df")),
            cell(fixed(t.ss_total, ss_dec), format!("{id}.anova.total.ss")),
            text(""),
            text(""),
            text(""),
            text(""),
        ],
    ];
    let caption = match &r.caption {
        Some(c) => format!("Table {number}. {c}"),
        None => format!(
            "Table {number}. Analysis of variance of {} by {} (N = {}).",
            measure(&r.response, &r.plots),
            r.plots.display(&r.factor),
            t.n
        ),
    };
    let mut footnotes = vec![format!(
        "Critical value F({}, {}) at α = {} is {}; R² = {}.",
        t.df_between,
        df_text(t.df_within as f64),
        alpha_text(r.alpha),
        fixed(t.f_crit, 3),
        fixed(t.r_squared, 3)
    )];
    if let Some(e) = r.effect {
        let eta_dec = effect_decimals([e.eta_sq, e.partial_eta_sq_ci.0, e.partial_eta_sq_ci.1]);
        footnotes.push(format!(
            "Effect size: η² = {} (partial η², here the same; {} CI {} to {}, from the noncentral F), ω² = {}, Cohen's f = {}.",
            fixed(e.eta_sq, eta_dec),
            confidence_label(1.0 - e.level),
            fixed(e.partial_eta_sq_ci.0, eta_dec),
            fixed(e.partial_eta_sq_ci.1, eta_dec),
            effect_size(e.omega_sq),
            effect_size(e.cohens_f)
        ));
    }
    TableView {
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
            col("η²", true),
        ],
        rows,
        footnotes,
    }
}

fn welch_table(r: &AnovaResult, number: usize) -> TableView {
    let id = &r.id;
    let rows = r
        .welch
        .iter()
        .map(|w| {
            vec![
                text(r.plots.display(&r.factor)),
                cell(f_stat(w.f), format!("{id}.welch.f")),
                cell(df_text(w.df1), format!("{id}.welch.df1")),
                cell(fixed(w.df2, 2), format!("{id}.welch.df2")),
                cell(p_value(w.p), format!("{id}.welch.p")),
            ]
        })
        .collect();
    let caption = match &r.caption {
        Some(c) => format!("Table {number}. {c}"),
        None => format!(
            "Table {number}. Welch's analysis of variance of {} by {} (N = {}), not assuming equal variances.",
            measure(&r.response, &r.plots),
            r.plots.display(&r.factor),
            r.table.n
        ),
    };
    TableView {
        number,
        id: format!("{id}-welch"),
        caption,
        columns: vec![
            col("Source", false),
            col("Welch's F", true),
            col("df₁", true),
            col("df₂", true),
            col("p", true),
        ],
        rows,
        footnotes: vec![format!(
            "Welch (1951). The classical F test, for comparison: {}.",
            crate::format::f_statement(
                r.table.df_between as f64,
                r.table.df_within as f64,
                r.table.f,
                r.table.p
            )
        )],
    }
}

fn kruskal_table(r: &AnovaResult, number: usize) -> TableView {
    let id = &r.id;
    let rows = r
        .kruskal
        .iter()
        .map(|k| {
            vec![
                text(r.plots.display(&r.factor)),
                cell(fixed(k.h, 2), format!("{id}.kruskal.h")),
                cell(df_text(k.df), format!("{id}.kruskal.df")),
                cell(p_value(k.p), format!("{id}.kruskal.p")),
            ]
        })
        .collect();
    let caption = match &r.caption {
        Some(c) => format!("Table {number}. {c}"),
        None => format!(
            "Table {number}. Kruskal-Wallis test of {} by {} (N = {}).",
            measure(&r.response, &r.plots),
            r.plots.display(&r.factor),
            r.table.n
        ),
    };
    TableView {
        number,
        id: format!("{id}-kruskal"),
        caption,
        columns: vec![col("Source", false), col("H", true), col("df", true), col("p", true)],
        rows,
        footnotes: vec![
            "Kruskal & Wallis (1952); H is corrected for ties and referred to the chi-squared distribution.".into()
        ],
    }
}

fn checks_table(r: &AnovaResult, number: usize) -> TableView {
    checks_table_of(
        &r.checks,
        &r.id,
        r.alpha,
        &format!(
            "{} by {}",
            measure(&r.response, &r.plots),
            r.plots.display(&r.factor)
        ),
        number,
    )
}

/// The assumption-check table; `subject` reads like "weight by group".
fn checks_table_of(
    c: &crate::outcome::Checks,
    id: &str,
    a: f64,
    subject: &str,
    number: usize,
) -> TableView {
    let reading = |p: f64, yes: &str, no: &str| {
        if p < a {
            yes.to_string()
        } else {
            no.to_string()
        }
    };
    let mut rows = Vec::new();
    let mut variance_test =
        |name: &str, key: &str, t: &Option<crate::stats::assumptions::FTest>| match t {
            Some(t) => rows.push(vec![
                text(name),
                cell(f_stat(t.statistic), format!("{id}.checks.{key}.statistic")),
                text(format!("{}, {}", df_text(t.df1), df_text(t.df2))),
                cell(p_value(t.p), format!("{id}.checks.{key}.p")),
                text(reading(
                    t.p,
                    "variances differ",
                    "no evidence of unequal variances",
                )),
            ]),
            None => rows.push(vec![
                text(name),
                text("–"),
                text(""),
                text("–"),
                text(if c.by_request {
                    "not computed (`checks: summary`)"
                } else if c.from_summary {
                    "needs the raw observations"
                } else {
                    "not defined for these data"
                }),
            ]),
        };
    variance_test(
        "Brown-Forsythe (median-centred)",
        "brown_forsythe",
        &c.brown_forsythe,
    );
    variance_test("Levene (mean-centred)", "levene", &c.levene);
    match c.bartlett {
        Some(b) => rows.push(vec![
            text("Bartlett"),
            cell(
                fixed(b.statistic, 2),
                format!("{id}.checks.bartlett.statistic"),
            ),
            text(df_text(b.df)),
            cell(p_value(b.p), format!("{id}.checks.bartlett.p")),
            text(reading(
                b.p,
                "variances differ (sensitive to non-normality)",
                "no evidence of unequal variances",
            )),
        ]),
        None => rows.push(vec![
            text("Bartlett"),
            text("–"),
            text(""),
            text("–"),
            text("needs two or more values with spread in every level"),
        ]),
    }
    match &c.shapiro_wilk {
        Ok(sw) => rows.push(vec![
            text("Shapiro-Wilk (residuals)"),
            cell(fixed(sw.w, 4), format!("{id}.checks.shapiro_wilk.w")),
            text(format!("n = {}", sw.n)),
            cell(p_value(sw.p), format!("{id}.checks.shapiro_wilk.p")),
            text(reading(
                sw.p,
                "residuals depart from normality",
                "no evidence against normality",
            )),
        ]),
        Err(why) => rows.push(vec![
            text("Shapiro-Wilk (residuals)"),
            text("–"),
            text(""),
            text("–"),
            text(match why {
                ShapiroWilkSkip::TooFew => "not computed: fewer than 3 residuals",
                ShapiroWilkSkip::TooMany => "not computed: more than 5,000 residuals",
                ShapiroWilkSkip::NoSpread => "not computed: the residuals have no spread",
                ShapiroWilkSkip::Summary if c.by_request => "not computed (`checks: summary`)",
                ShapiroWilkSkip::Summary => "not possible from summary statistics",
            }),
        ]),
    }
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
        text("Skewness of residuals"),
        cell(fixed(c.skewness, 2), format!("{id}.checks.skewness")),
        text(""),
        text(""),
        text(moment_note("0 for a symmetric distribution")),
    ]);
    rows.push(vec![
        text("Excess kurtosis of residuals"),
        cell(
            fixed(c.excess_kurtosis, 2),
            format!("{id}.checks.excess_kurtosis"),
        ),
        text(""),
        text(""),
        text(moment_note("0 for a normal distribution")),
    ]);
    let outliers = if c.by_request {
        "Outlying observations were not looked for (`checks: summary`).".to_string()
    } else if c.from_summary {
        "Outlying observations cannot be looked for in summary statistics.".to_string()
    } else if c.outliers.is_empty() {
        format!(
            "No observation has an externally studentized residual beyond ±{}.",
            crate::stats::assumptions::OUTLIER_THRESHOLD
        )
    } else {
        outlier_sentence(c)
    };
    TableView {
        number,
        id: format!("{id}-checks"),
        caption: format!("Table {number}. Assumption checks for {subject}."),
        columns: vec![
            col("Check", false),
            col("Statistic", true),
            col("df", true),
            col("p", true),
            col("Reading at α", false),
        ],
        rows,
        footnotes: vec![
            format!(
                "Readings use α = {}. A check that passes does not prove an assumption holds, and with many observations small, harmless departures reach significance: look at the data as well. Skewness and kurtosis are the bias-adjusted sample estimates.",
                alpha_text(a)
            ),
            outliers,
        ],
    }
}

/// Rows in display order: by mean (or mean rank) descending, or as designed.
fn display_order(r: &AnovaResult, key: &[f64]) -> Vec<usize> {
    let mut order: Vec<usize> = (0..r.levels.len()).collect();
    if r.order == Order::Mean {
        order.sort_by(|&a, &b| key[b].total_cmp(&key[a]).then(a.cmp(&b)));
    }
    order
}

fn letters_footnote(r: &AnovaResult, c: &ComparisonResult, what: &str) -> String {
    let rows_note = if r.order == Order::Mean {
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

fn means_table(r: &AnovaResult, number: usize) -> TableView {
    let (t, id, d) = (&r.table, &r.id, r.decimals);
    let conf = confidence_label(r.alpha);
    let letters = r.comparison.as_ref().filter(|c| !c.letters.is_empty());
    let dunnett = r
        .comparison
        .as_ref()
        .filter(|c| c.method == Method::Dunnett);
    let means: Vec<f64> = r.levels.iter().map(|l| l.mean).collect();
    let rows = display_order(r, &means)
        .into_iter()
        .map(|i| {
            let l = &r.levels[i];
            let g = |q: &str| format!("{id}.groups.{}.{q}", l.name);
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
            if let Some(c) = letters {
                row.push(cell(
                    c.letters[i].clone(),
                    format!("{id}.comparisons.{}.letters", r.factor),
                ));
            }
            if let Some(c) = dunnett {
                let mark = if c.control == Some(i) {
                    "control".to_string()
                } else {
                    c.pairs
                        .iter()
                        .find(|p| p.a == i)
                        .map_or(String::new(), |p| {
                            if p.significant { "*".into() } else { "".into() }
                        })
                };
                row.push(text(mark));
            }
            row
        })
        .collect();
    let mut columns = vec![
        col(r.plots.display(&r.factor), false),
        col("n", true),
        col("Mean", true),
        col("SD", true),
        col("SE", true),
        col(format!("{conf} CI"), true),
    ];
    let mut footnotes = vec![if r.ci_pooled {
        format!(
            "SE and {conf} confidence intervals use the pooled error mean square (MSE = {}, {} df), as the ANOVA model assumes equal variances; SD is each level's own.",
            significant(t.ms_within, 4),
            t.df_within
        )
    } else {
        format!(
            "SE and {conf} confidence intervals use each level's own SD (n − 1 df), as Welch's ANOVA does not assume equal variances."
        )
    }];
    if let Some(c) = letters {
        columns.push(col("Letters", false));
        footnotes.push(letters_footnote(r, c, "mean"));
    }
    if let Some(c) = dunnett {
        columns.push(col("vs control", false));
        footnotes.push(format!(
            "* differs from the control at α = {} (Dunnett). Letters are not given: Dunnett's procedure compares treatments with the control only.",
            alpha_text(c.alpha)
        ));
    }
    TableView {
        number,
        id: format!("{id}-means"),
        caption: format!(
            "Table {number}. Means of {} by {}.",
            measure(&r.response, &r.plots),
            r.plots.display(&r.factor)
        ),
        columns,
        rows,
        footnotes,
    }
}

fn ranks_table(r: &AnovaResult, number: usize) -> TableView {
    let (id, d) = (&r.id, r.decimals);
    let mean_ranks: Vec<f64> = r
        .kruskal
        .as_ref()
        .map_or_else(|| vec![f64::NAN; r.levels.len()], |k| k.mean_ranks.clone());
    let letters = r.comparison.as_ref().filter(|c| !c.letters.is_empty());
    let rows = display_order(r, &mean_ranks)
        .into_iter()
        .map(|i| {
            let l = &r.levels[i];
            let g = |q: &str| format!("{id}.groups.{}.{q}", l.name);
            let mut row = vec![
                text(l.name.clone()),
                cell(l.n.to_string(), g("n")),
                cell(fixed(l.median, d), g("median")),
                cell(
                    format!("{} to {}", fixed(l.q1, d), fixed(l.q3, d)),
                    g("iqr"),
                ),
                text(fixed(mean_ranks[i], 1)),
                cell(fixed(l.mean, d), g("mean")),
            ];
            if let Some(c) = letters {
                row.push(cell(
                    c.letters[i].clone(),
                    format!("{id}.comparisons.{}.letters", r.factor),
                ));
            }
            row
        })
        .collect();
    let mut columns = vec![
        col(r.plots.display(&r.factor), false),
        col("n", true),
        col("Median", true),
        col("Quartiles", true),
        col("Mean rank", true),
        col("Mean", true),
    ];
    let mut footnotes = vec!["Quartiles by linear interpolation between order statistics; ranks are joint over all observations, ties sharing their mid-rank.".to_string()];
    if let Some(c) = letters {
        columns.push(col("Letters", false));
        footnotes.push(letters_footnote(r, c, "mean rank"));
    }
    TableView {
        number,
        id: format!("{id}-levels"),
        caption: format!(
            "Table {number}. Medians and ranks of {} by {}.",
            measure(&r.response, &r.plots),
            r.plots.display(&r.factor)
        ),
        columns,
        rows,
        footnotes,
    }
}

fn pairs_table(r: &AnovaResult, c: &ComparisonResult, number: usize) -> TableView {
    let (id, d) = (&r.id, r.decimals);
    let conf = confidence_label(r.alpha);
    let key = |i: usize, q: &str| format!("{id}.comparisons.{}.pairs.{i}.{q}", r.factor);
    let p_label = if c.method == Method::Lsd {
        "p"
    } else {
        "adjusted p"
    };
    let sig_label = format!("Significant at α = {}", alpha_text(c.alpha));
    let name = |i: usize| r.levels[i].name.clone();
    let (columns, rows): (Vec<Column>, Vec<Vec<Cell>>) = if c.method == Method::Dunn {
        (
            vec![
                col("Comparison", false),
                col("Mean-rank difference", true),
                col("z", true),
                col(p_label, true),
                col(sig_label, false),
            ],
            c.pairs
                .iter()
                .enumerate()
                .map(|(i, p)| {
                    vec![
                        text(format!("{} − {}", name(p.a), name(p.b))),
                        cell(fixed(p.diff, 2), key(i, "diff")),
                        text(fixed(p.statistic, 2)),
                        cell(p_value(p.p_adj), key(i, "p_adj")),
                        cell(yes_no(p.significant), key(i, "significant")),
                    ]
                })
                .collect(),
        )
    } else {
        // A one-sided Dunnett bound is one number under a header naming it.
        let (interval_label, one_sided) = match (c.method, c.sides) {
            (Method::Dunnett, Sides::Greater) => (format!("{conf} lower bound"), true),
            (Method::Dunnett, Sides::Less) => (format!("{conf} upper bound"), true),
            _ => (format!("{conf} CI"), false),
        };
        let interval =
            |p: &crate::stats::compare::Pair| match (p.lower.is_finite(), p.upper.is_finite()) {
                (true, true) => format!("{} to {}", fixed(p.lower, d), fixed(p.upper, d)),
                (true, false) if one_sided => fixed(p.lower, d),
                (false, true) if one_sided => fixed(p.upper, d),
                (true, false) => format!("above {}", fixed(p.lower, d)),
                (false, true) => format!("below {}", fixed(p.upper, d)),
                _ => "–".into(),
            };
        let mut columns = vec![
            col("Comparison", false),
            col("Difference", true),
            col("SE", true),
            col(interval_label, true),
        ];
        if c.method == Method::GamesHowell {
            columns.push(col("df", true));
        }
        columns.push(col(p_label, true));
        columns.push(col(sig_label, false));
        let rows = c
            .pairs
            .iter()
            .enumerate()
            .map(|(i, p)| {
                let mut row = vec![
                    text(format!("{} − {}", name(p.a), name(p.b))),
                    cell(fixed(p.diff, d), key(i, "diff")),
                    cell(fixed(p.se, d), key(i, "se")),
                    cell(interval(p), key(i, "ci")),
                ];
                if let Some(df) = p.df {
                    row.push(cell(fixed(df, 2), key(i, "df")));
                }
                row.push(cell(p_value(p.p_adj), key(i, "p_adj")));
                row.push(cell(yes_no(p.significant), key(i, "significant")));
                row
            })
            .collect();
        (columns, rows)
    };
    let interval = match c.method {
        Method::Holm => format!("{conf} Bonferroni simultaneous intervals"),
        Method::Lsd => format!("{conf} intervals per pair"),
        Method::Dunn => "no intervals".to_string(),
        Method::Dunnett if c.sides != Sides::Two => format!("one-sided {conf} simultaneous bounds"),
        _ => format!("{conf} simultaneous intervals"),
    };
    let what = match c.method {
        Method::Dunnett => "treatment–control comparisons".to_string(),
        _ => format!(
            "pairwise comparisons of {} levels",
            r.plots.display(&r.factor)
        ),
    };
    let se_note = match c.method {
        Method::GamesHowell => {
            "SE = √(sᵢ²/nᵢ + sⱼ²/nⱼ), with the pair's own Welch-Satterthwaite df"
        }
        Method::Dunn => {
            "z is the mean-rank difference over its standard error under the joint ranking"
        }
        _ => "SE = √(MSE(1/nᵢ + 1/nⱼ))",
    };
    TableView {
        number,
        id: format!("{id}-pairs"),
        caption: format!(
            "Table {number}. {} ({}, {interval}).",
            capitalise(&what),
            c.method.title()
        ),
        columns,
        rows,
        footnotes: vec![format!(
            "Difference is the first level's {} minus the second's; {se_note}. Procedure: {} ({}).",
            if c.method == Method::Dunn {
                "mean rank"
            } else {
                "mean"
            },
            c.method.title(),
            c.method.citation()
        )],
    }
}

/// A term for people, with display names: `Wool × Tension`.
fn shown_term(plots: &crate::doc::block::PlotSpec, name: &str) -> String {
    name.split(':')
        .map(|f| plots.display(f))
        .collect::<Vec<_>>()
        .join(" × ")
}

/// The response as captions name it: its label (or display name, or column
/// name) and unit.
fn measure(response: &str, plots: &crate::doc::block::PlotSpec) -> String {
    let name = plots
        .label
        .clone()
        .unwrap_or_else(|| plots.display(response).to_string());
    match &plots.unit {
        Some(u) => format!("{name} ({u})"),
        None => name,
    }
}

fn yes_no(b: bool) -> String {
    if b { "yes".into() } else { "no".into() }
}

fn capitalise(s: &str) -> String {
    let mut c = s.chars();
    c.next().map_or_else(String::new, |f| {
        f.to_uppercase().collect::<String>() + c.as_str()
    })
}

/// The one-line statement of a block's omnibus test, for prose.
pub fn omnibus_statement(r: &AnovaResult) -> String {
    match (r.method, &r.welch, &r.kruskal) {
        (Omnibus::Welch, Some(w), _) => format!(
            "Welch's {}",
            crate::format::f_statement(w.df1, w.df2, w.f, w.p)
        ),
        (Omnibus::Ranks, _, Some(k)) => format!(
            "H({}) = {}, {}",
            df_text(k.df),
            fixed(k.h, 2),
            p_phrase(k.p)
        ),
        _ => crate::format::f_statement(
            r.table.df_between as f64,
            r.table.df_within as f64,
            r.table.f,
            r.table.p,
        ),
    }
}

/// A factorial block: the ANOVA table of every term, checks, cell means,
/// and for each comparison family its means and pairs.
pub fn factorial_view(r: &FactorialResult, next_table: &mut usize) -> BlockView {
    let mut numbers = Numbering(next_table);
    let id = &r.id;
    let d = r.decimals;
    let conf = confidence_label(r.alpha);
    let shown: Vec<&str> = r.factors.iter().map(|f| r.plots.display(f)).collect();
    let factors_text = match shown.len() {
        2 => shown.join(" and "),
        n => format!("{} and {}", shown[..n - 1].join(", "), shown[n - 1]),
    };
    let mut tables = Vec::new();
    if r.show.anova {
        let number = numbers.next();
        // SS and MS share one number of decimals (five significant digits
        // of the total SS), so sums and mean squares line up and compare.
        let ss_dec = column_decimals(&[r.total_ss], 5);
        let ms_dec = ss_dec;
        let eta_dec = effect_decimals(r.terms.iter().map(|t| t.partial_eta_sq));
        let mut rows: Vec<Vec<Cell>> = r
            .terms
            .iter()
            .map(|t| {
                let k = |q: &str| format!("{id}.anova.terms.{}.{q}", t.name);
                let label = if t.is_block {
                    format!("{} (block)", shown_term(&r.plots, &t.name))
                } else {
                    shown_term(&r.plots, &t.name)
                };
                let mut row = vec![
                    text(label),
                    cell(t.df.to_string(), k("df")),
                    cell(fixed(t.ss, ss_dec), k("ss")),
                    cell(fixed(t.ms, ms_dec), k("ms")),
                ];
                if t.is_block {
                    row.extend([text("not tested"), text(""), text("")]);
                } else {
                    row.extend([
                        cell(f_stat(t.f), k("f")),
                        cell(p_value(t.p), k("p")),
                        cell(fixed(t.partial_eta_sq, eta_dec), k("effect.partial_eta_sq")),
                    ]);
                }
                row
            })
            .collect();
        rows.push(vec![
            text("Residual"),
            cell(r.residual_df.to_string(), format!("{id}.anova.residual.df")),
            cell(
                fixed(r.residual_ss, ss_dec),
                format!("{id}.anova.residual.ss"),
            ),
            cell(fixed(r.mse, ms_dec), format!("{id}.anova.residual.ms")),
            text(""),
            text(""),
            text(""),
        ]);
        rows.push(vec![
            text("Total"),
            cell((r.n - 1).to_string(), format!("{id}.anova.total.df")),
            cell(fixed(r.total_ss, ss_dec), format!("{id}.anova.total.ss")),
            text(""),
            text(""),
            text(""),
            text(""),
        ]);
        let ss_text = match r.ss_type {
            crate::stats::linear::SsType::I => {
                "Type I (sequential, in the order shown) sums of squares"
            }
            crate::stats::linear::SsType::II => "Type II sums of squares",
            crate::stats::linear::SsType::III => "Type III sums of squares, sum-to-zero coding",
        };
        let caption = match &r.caption {
            Some(c) => format!("Table {number}. {c} ({ss_text})."),
            None => format!(
                "Table {number}. Analysis of variance of {} by {factors_text} (N = {}; {ss_text}).",
                measure(&r.response, &r.plots),
                r.n
            ),
        };
        let tested = || r.terms.iter().filter(|t| !t.is_block);
        let ci_dec =
            effect_decimals(tested().flat_map(|t| [t.partial_eta_sq_ci.0, t.partial_eta_sq_ci.1]));
        let crits: Vec<String> = tested()
            .map(|t| {
                format!(
                    "{} F({}, {}) = {}",
                    shown_term(&r.plots, &t.name),
                    t.df,
                    r.residual_df,
                    fixed(t.critical_f, 3)
                )
            })
            .collect();
        let mut footnotes = vec![
            format!(
                "Critical values at α = {}: {}. R² = {}.",
                alpha_text(r.alpha),
                crits.join("; "),
                fixed(r.r_squared, 3)
            ),
            format!(
                "η² is partial η² = SS/(SS + SS residual); {conf} intervals for it from the noncentral F: {}.",
                tested()
                    .map(|t| format!(
                        "{} {} to {}",
                        shown_term(&r.plots, &t.name),
                        fixed(t.partial_eta_sq_ci.0, ci_dec),
                        fixed(t.partial_eta_sq_ci.1, ci_dec)
                    ))
                    .collect::<Vec<_>>()
                    .join("; ")
            ),
            "All factors are fixed effects; every F uses the residual mean square.".to_string(),
        ];
        if r.terms.iter().any(|t| t.is_block) {
            footnotes.push(crate::outcome::BLOCK_NOT_TESTED.to_string());
        }
        if r.types_agree {
            footnotes
                .push("The design is balanced: Types I, II and III sums of squares agree.".into());
        }
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
                col("η²", true),
            ],
            rows,
            footnotes,
        });
    }
    if r.checks.shown {
        tables.push(checks_table_of(
            &r.checks,
            id,
            r.alpha,
            &format!("{} by {factors_text}", measure(&r.response, &r.plots)),
            numbers.next(),
        ));
    }
    if r.show.means && r.cell_factors.len() >= 2 && r.cells.iter().any(|c| c.n > 1) {
        tables.push(cell_table(r, numbers.next()));
    }
    let mut notes = Vec::new();
    for fam in &r.families {
        notes.extend(fam.comparison.notes.iter().cloned());
        let slice = fam
            .within
            .as_ref()
            .map_or(String::new(), |w| match w.split_once('=') {
                Some((factor, level)) => format!(" at {} = {level}", r.plots.display(factor)),
                None => format!(" at {w}"),
            });
        let what = if fam.term == "cells" {
            "cell".to_string()
        } else {
            r.plots.display(&fam.term).to_string()
        };
        if r.show.means {
            let number = numbers.next();
            let mut order: Vec<usize> = (0..fam.means.len()).collect();
            if r.order == Order::Mean {
                order.sort_by(|&a, &b| {
                    fam.means[b]
                        .mean
                        .total_cmp(&fam.means[a].mean)
                        .then(a.cmp(&b))
                });
            }
            let rows = order
                .into_iter()
                .map(|i| (i, &fam.means[i]))
                .map(|(i, m)| {
                    vec![
                        text(m.label.clone()),
                        text(m.n.to_string()),
                        text(fixed(m.mean, d)),
                        text(fixed(m.se, d)),
                        text(format!(
                            "{} to {}",
                            fixed(m.ci_lower, d),
                            fixed(m.ci_upper, d)
                        )),
                        text(fam.comparison.letters[i].clone()),
                    ]
                })
                .collect();
            let kind = if fam.term == "cells" {
                "Cell means"
            } else {
                "Estimated marginal means"
            };
            tables.push(TableView {
                number,
                id: format!("{id}-means-{}{}", fam.term, fam.within.as_ref().map_or(String::new(), |w| format!("-{w}"))),
                caption: format!(
                    "Table {number}. {kind} of {} by {what}{slice}.",
                    measure(&r.response, &r.plots)
                ),
                columns: vec![col(what.clone(), false), col("n", true), col("Mean", true), col("SE", true), col(format!("{conf} CI"), true), col("Letters", false)],
                rows,
                footnotes: vec![
                    if fam.term == "cells" {
                        format!("SE = √(MSE/n) from the model's residual mean square ({} df).", r.residual_df)
                    } else {
                        format!(
                            "Least-squares means: model predictions averaged with equal weight over the levels of the other factors, so unbalanced data are compared fairly; SE from the model ({} df).",
                            r.residual_df
                        )
                    },
                    format!(
                        "Means sharing a letter are not significantly different ({}, α = {}); the letter a marks the highest mean.{}",
                        fam.comparison.method.title(),
                        alpha_text(fam.comparison.alpha),
                        if r.order == Order::Mean { " Rows run from the highest mean." } else { "" }
                    ),
                ],
            });
        }
        if r.show.pairs {
            let number = numbers.next();
            let c = &fam.comparison;
            let p_label = if c.method == Method::Lsd {
                "p"
            } else {
                "adjusted p"
            };
            let rows = c
                .pairs
                .iter()
                .map(|p| {
                    let interval = format!("{} to {}", fixed(p.lower, d), fixed(p.upper, d));
                    vec![
                        text(format!(
                            "{} − {}",
                            fam.means[p.a].label, fam.means[p.b].label
                        )),
                        text(fixed(p.diff, d)),
                        text(fixed(p.se, d)),
                        text(interval),
                        text(p_value(p.p_adj)),
                        text(yes_no(p.significant)),
                    ]
                })
                .collect();
            tables.push(TableView {
                number,
                id: format!(
                    "{id}-pairs-{}{}",
                    fam.term,
                    fam.within
                        .as_ref()
                        .map_or(String::new(), |w| format!("-{w}"))
                ),
                caption: format!(
                    "Table {number}. Pairwise comparisons of {what} means{slice} ({}).",
                    c.method.title()
                ),
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
                    "Procedure: {} ({}).",
                    c.method.title(),
                    c.method.citation()
                )],
            });
        }
    }
    typeset(BlockView {
        figures: Vec::new(),
        id: id.clone(),
        lead: None,
        tables,
        notes,
        warnings: r.warnings.clone(),
    })
}

/// Observed cell means: rows by the first factor and columns by the second
/// for two factors, one row per cell otherwise. (Not shown when every cell
/// holds a single observation: that table would be the data themselves.)
fn cell_table(r: &FactorialResult, number: usize) -> TableView {
    let d = r.decimals;
    let cf = &r.cell_factors;
    let cell_letters = r.families.iter().find(|f| f.term == "cells");
    let letters_of = |c: &crate::outcome::CellRow| -> String {
        let label = cf
            .iter()
            .zip(&c.levels)
            .map(|(&f, &l)| r.levels[f][l].clone())
            .collect::<Vec<_>>()
            .join(" × ");
        cell_letters
            .and_then(|fam| {
                fam.means
                    .iter()
                    .position(|m| m.label == label)
                    .map(|i| format!(" {}", fam.comparison.letters[i]))
            })
            .unwrap_or_default()
    };
    let show = |c: &crate::outcome::CellRow| {
        if c.n == 0 {
            "no data".to_string()
        } else {
            format!("{} (n = {}){}", fixed(c.mean, d), c.n, letters_of(c))
        }
    };
    let (columns, rows) = if cf.len() == 2 {
        let (fa, fb) = (cf[0], cf[1]);
        let mut columns = vec![col(
            format!(
                "{} \\ {}",
                r.plots.display(&r.factors[fa]),
                r.plots.display(&r.factors[fb])
            ),
            false,
        )];
        columns.extend(r.levels[fb].iter().map(|l| col(l.clone(), true)));
        let rows = (0..r.levels[fa].len())
            .map(|a| {
                let mut row = vec![text(r.levels[fa][a].clone())];
                for bb in 0..r.levels[fb].len() {
                    let c = r.cells.iter().find(|c| c.levels == vec![a, bb]);
                    row.push(text(c.map_or_else(String::new, show)));
                }
                row
            })
            .collect();
        (columns, rows)
    } else {
        let mut columns: Vec<Column> = cf
            .iter()
            .map(|&f| col(r.plots.display(&r.factors[f]), false))
            .collect();
        columns.push(col("Mean (n)", true));
        let rows = r
            .cells
            .iter()
            .map(|c| {
                let mut row: Vec<Cell> = cf
                    .iter()
                    .zip(&c.levels)
                    .map(|(&f, &l)| text(r.levels[f][l].clone()))
                    .collect();
                row.push(text(show(c)));
                row
            })
            .collect();
        (columns, rows)
    };
    let mut footnotes = vec!["Observed cell means with their number of observations.".to_string()];
    if let Some(fam) = cell_letters {
        footnotes.push(format!(
            "Cells sharing a letter are not significantly different ({}, α = {}).",
            fam.comparison.method.title(),
            alpha_text(fam.comparison.alpha)
        ));
    }
    TableView {
        number,
        id: format!("{}-cells", r.id),
        caption: format!(
            "Table {number}. Cell means of {} by {}.",
            measure(&r.response, &r.plots),
            cf.iter()
                .map(|&f| r.plots.display(&r.factors[f]))
                .collect::<Vec<_>>()
                .join(" and ")
        ),
        columns,
        rows,
        footnotes,
    }
}
