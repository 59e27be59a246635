//! The tables of Friedman's test (`method: ranks` with `block:`): the test
//! with Kendall's W, the levels' ranks with their letters, and the post hoc
//! procedure's pairs of rank sums.

use super::keys::Keys;
use super::means::ranked_levels_table;
use super::{cell, col, display_order, headline_table, measure, text, yes_no};
use crate::format::{alpha_text, df_text, fixed, p_value, significant};
use crate::outcome::friedman::{FriedmanDetail, agreement_words};
use crate::outcome::linear::{Comparison, Family, LinearOutcome};
use crate::render::view::TableView;
use crate::stats::compare::Method;

/// The factor and the block as the tables name them.
fn names(o: &LinearOutcome, d: &FriedmanDetail) -> (String, String) {
    let plots = &o.presentation.plots;
    (
        plots.display(&o.factors[d.factor].name).to_string(),
        plots.display(&o.factors[d.block].name).to_string(),
    )
}

/// Friedman's χ², its df and p, Kendall's W and the number of blocks, with
/// the tie correction, W in plain words and the two-way ANOVA's F beside it.
pub fn friedman_table(
    o: &LinearOutcome,
    d: &FriedmanDetail,
    keys: &Keys,
    number: usize,
) -> TableView {
    let f = &d.test;
    let (factor, block) = names(o, d);
    let row = vec![
        text(factor.clone()),
        cell(fixed(f.chi_sq, 2), keys.field("friedman.statistic")),
        cell(df_text(f.df), keys.field("friedman.df")),
        cell(p_value(f.p), keys.field("friedman.p")),
        cell(fixed(f.kendall_w, 2), keys.field("friedman.kendall_w")),
        cell(f.blocks.to_string(), keys.field("friedman.blocks")),
    ];
    let mut footnotes = vec![format!(
        "Friedman (1937): the values are ranked within each {block} (1 = lowest, ties sharing their mid-rank) and χ² is referred to the chi-squared distribution on k − 1 = {} df.",
        df_text(f.df)
    )];
    if f.has_ties() {
        footnotes.push(format!(
            "Ties within blocks: χ² is divided by the tie correction 1 − Σ(t³ − t)/(b(k³ − k)) = {} (uncorrected χ² = {}), and Kendall's W uses the corrected χ².",
            fixed(f.tie_correction, 4),
            fixed(f.chi_sq_uncorrected, 2)
        ));
    }
    footnotes.push(format!(
        "Kendall's W = χ²/(b(k − 1)) = {}: {} among the {} blocks in how they order the levels of {factor} (0: none beyond chance; 1: every block orders them alike). W measures agreement, not how large the differences are.",
        fixed(f.kendall_w, 2),
        agreement_words(f.kendall_w),
        f.blocks
    ));
    if let Some(t) = o.terms.iter().find(|t| t.tested && t.factors == [d.factor]) {
        footnotes.push(format!(
            "The two-way ANOVA of the same data, for comparison: F({}, {}) = {}, {}.",
            t.df,
            df_text(t.denominator_df),
            fixed(t.f, 2),
            crate::format::p_phrase(t.p)
        ));
    }
    let columns = vec![
        col("Source", false),
        col("χ²", true),
        col("df", true),
        col("p", true),
        col("Kendall's W", true),
        col("Blocks", true),
    ];
    TableView {
        columns,
        rows: vec![row],
        footnotes,
        ..headline_table(o, number, "friedman", || {
            format!(
                "Friedman's test of {} by {factor} within {block} ({} blocks × {} levels, N = {}).",
                measure(o),
                f.blocks,
                f.levels(),
                o.n
            )
        })
    }
}

/// Each level's blocks, median, mean rank and rank sum, with the letters of
/// the post hoc procedure.
pub fn levels_table(
    o: &LinearOutcome,
    d: &FriedmanDetail,
    family: Option<&Family>,
    keys: &Keys,
    number: usize,
) -> TableView {
    let dec = o.presentation.decimals;
    let (factor, block) = names(o, d);
    let letters = family
        .and_then(|f| f.comparison.as_ref())
        .filter(|c| !c.letters.is_empty());
    let mean_ranks: Vec<f64> = d.levels.iter().map(|l| l.mean_rank).collect();
    let rows = display_order(o.presentation.order, &mean_ranks)
        .into_iter()
        .map(|i| {
            let l = &d.levels[i];
            let k = |q: &str| keys.field(&format!("friedman.levels.{}.{q}", l.name));
            let mut row = vec![
                text(l.name.clone()),
                cell(l.blocks.to_string(), k("blocks")),
                cell(fixed(l.median, dec), k("median")),
                cell(fixed(l.mean_rank, 2), k("mean_rank")),
                cell(fixed(l.rank_sum, 1), k("rank_sum")),
            ];
            if let Some(c) = letters {
                row.push(cell(c.letters[i].clone(), k("letters")));
            }
            row
        })
        .collect();
    let columns = vec![
        col(factor.clone(), false),
        col("Blocks", true),
        col("Median", true),
        col("Mean rank", true),
        col("Rank sum", true),
    ];
    let footnotes = vec![format!(
        "Ranks are taken within each {block} (1 = lowest value of the {} levels), ties sharing their mid-rank; the median is over the blocks' observations.",
        d.levels.len()
    )];
    let about = format!("Ranks of {} by {factor} within {block}.", measure(o));
    ranked_levels_table(o, (number, about), (columns, rows, footnotes), letters)
}

/// The post hoc procedure's pairs: the difference in rank sums, the
/// statistic (q or t), p and the decision.
pub fn pairs_table(
    o: &LinearOutcome,
    d: &FriedmanDetail,
    (family, c): (&Family, &Comparison),
    keys: &Keys,
    number: usize,
) -> TableView {
    let f = &d.test;
    let (factor, _) = names(o, d);
    let conover = c.method == Method::ConoverFriedman;
    let statistic = if conover { "t" } else { "q" };
    let p_label = if conover { "p" } else { "adjusted p" };
    let rows = c
        .contrasts
        .iter()
        .enumerate()
        .map(|(i, p)| {
            let k = |q: &str| keys.field(&format!("friedman.pairs.{i}.{q}"));
            let rank_sum_diff = f.rank_sums[p.a] - f.rank_sums[p.b];
            vec![
                text(format!(
                    "{} − {}",
                    family.estimates[p.a].label, family.estimates[p.b].label
                )),
                cell(fixed(rank_sum_diff, 1), k("rank_sum_diff")),
                cell(fixed(p.statistic, 2), k("statistic")),
                cell(p_value(p.p_adj), k("p_adj")),
                cell(yes_no(p.significant), k("significant")),
            ]
        })
        .collect();
    let (b, kf) = (f.blocks as f64, f.levels() as f64);
    let how = if conover {
        let se = c.contrasts.first().map_or(f64::NAN, |p| p.se);
        format!(
            "t = difference / √(2(bA₁ − ΣR²)/((b − 1)(k − 1))) = difference / {}, on {} df, per pair (A₁: the sum of the squared ranks)",
            significant(se, 4),
            df_text((b - 1.0) * (kf - 1.0))
        )
    } else {
        let unit = (b * kf * (kf + 1.0) / 12.0).sqrt();
        format!(
            "q = |difference| / √(bk(k + 1)/12) = |difference| / {}, referred to the studentized range for {} means at infinite df; pairs whose rank sums differ by {} or more differ at α = {}",
            significant(unit, 4),
            f.levels(),
            fixed(c.critical * unit, 1),
            alpha_text(c.alpha)
        )
    };
    TableView {
        number,
        id: format!("{}-pairs", o.id),
        caption: format!(
            "Table {number}. Pairwise comparisons of {} between {factor} levels by their rank sums ({}, {}).",
            measure(o),
            c.method.title(),
            if conover {
                "per pair, after Friedman's test"
            } else {
                "simultaneous"
            }
        ),
        columns: vec![
            col("Comparison", false),
            col("Rank-sum difference", true),
            col(statistic, true),
            col(p_label, true),
            col(format!("Significant at α = {}", alpha_text(c.alpha)), false),
        ],
        rows,
        footnotes: vec![format!(
            "Difference is the first level's rank sum minus the second's; {how}. Procedure: {} ({}).",
            c.method.title(),
            c.method.citation()
        )],
    }
}
