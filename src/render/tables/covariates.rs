//! What covariates add to a block's tables (specification A.9): the
//! covariate columns of the adjusted-means table and its footnote, the
//! lines under the ANOVA table (common slope, test of equal slopes), the
//! table of the covariate by group (with the separate slopes when they
//! differ), and the differences between the groups' lines.

use super::keys::Keys;
use super::{cell, col, text};
use crate::format::{confidence_label, df_text, f_statement, fixed, p_value, significant};
use crate::outcome::covariates::{Covariate, CovariateDetail, DifferenceRegion, SeparateSlopes};
use crate::outcome::linear::{Family, LinearOutcome};
use crate::render::view::{Cell, Column, TableView};
use crate::stats::linear::SsType;

/// The groups' factors by their display names: `Substrate mix × Irrigation`.
fn groups_shown(o: &LinearOutcome, d: &CovariateDetail) -> String {
    d.groups_of
        .split(" × ")
        .map(|f| o.presentation.plots.display(f).to_string())
        .collect::<Vec<_>>()
        .join(" × ")
}

/// Digits shown for a covariate's values: its data's, plus two for means.
fn mean_digits(c: &Covariate) -> u32 {
    c.decimals + 2
}

/// The covariate means and the unadjusted mean of estimate `i` of a
/// family, as cells placed before the adjusted mean.
pub fn adjusted_cells(o: &LinearOutcome, family: &Family, i: usize, keys: &Keys) -> Vec<Cell> {
    let Some((d, a)) = o
        .covariates
        .as_deref()
        .and_then(|d| Some((d, d.family(&family.term, family.within.as_deref())?)))
    else {
        return Vec::new();
    };
    let slice = match &family.within {
        Some(w) => format!("{}@{w}", family.term),
        None => family.term.clone(),
    };
    let label = &family.estimates[i].label;
    let key = |what: &str| keys.field(&format!("covariates.unadjusted.{slice}.{what}"));
    let mut cells: Vec<Cell> = d
        .covariates
        .iter()
        .zip(&a.covariate_means)
        .map(|(c, means)| {
            cell(
                fixed(means[i], mean_digits(c)),
                key(&format!("covariate_means.{}.{label}", c.name)),
            )
        })
        .collect();
    cells.push(cell(
        fixed(a.unadjusted[i], o.presentation.decimals),
        key(&format!("means.{label}")),
    ));
    cells
}

/// The columns `adjusted_cells` fills.
pub fn adjusted_columns(o: &LinearOutcome) -> Vec<Column> {
    let Some(d) = o.covariates.as_deref() else {
        return Vec::new();
    };
    let shown = |name: &str| o.presentation.plots.display(name).to_string();
    let mut columns: Vec<Column> = d
        .covariates
        .iter()
        .map(|c| col(shown(&c.name), true))
        .collect();
    columns.push(col("Observed mean", true));
    columns
}

/// "Means adjusted to Prewt = 82.41 (the overall mean); common slope 0.434
/// (SE 0.161)."
pub fn adjusted_footnote(o: &LinearOutcome) -> Option<String> {
    let d = o.covariates.as_deref()?;
    let shown = |name: &str| o.presentation.plots.display(name).to_string();
    let parts: Vec<String> = d
        .covariates
        .iter()
        .map(|c| {
            format!(
                "{} = {} (the overall mean; common slope {}, SE {})",
                shown(&c.name),
                fixed(c.mean, mean_digits(c)),
                significant(c.slope, 3),
                significant(c.se, 3)
            )
        })
        .collect();
    let mut note = format!(
        "Means adjusted to {}. The covariate columns and the observed mean are each group's means before adjustment. With a covariate, Tukey-Kramer p-values are approximate (the differences of adjusted means do not have the correlation the studentized range assumes); Bonferroni and Holm hold their level exactly.",
        parts.join("; ")
    );
    if d.slopes_differ(o.alpha) {
        note.push_str(" The slopes differ among groups, so these adjusted means assume parallel lines the data do not support: see the differences at stated covariate values.");
    }
    Some(note)
}

/// The lines under the ANOVA table: each slope, and the test of equal
/// slopes (always shown).
pub fn anova_footnotes(o: &LinearOutcome) -> Vec<String> {
    let Some(d) = o.covariates.as_deref() else {
        return Vec::new();
    };
    let shown = |name: &str| o.presentation.plots.display(name).to_string();
    let mut notes: Vec<String> = d
        .covariates
        .iter()
        .map(|c| {
            format!(
                "{} enters as a straight line with one common slope: {} per unit (SE {}, {} df).",
                shown(&c.name),
                significant(c.slope, 4),
                significant(c.se, 3),
                df_text(c.df)
            )
        })
        .collect();
    let adjusted = match o.ss_type {
        Some(SsType::I) => "for the lines above it (Type I, in the order shown)",
        Some(SsType::III) => "for every other term (Type III)",
        _ => "for every other term (Type II)",
    };
    notes.push(match o.mixed.is_some() {
        true => "A covariate is not orthogonal to the factors: each test here is adjusted for every other term (Type III Wald tests of the mixed model).".into(),
        false => format!(
            "A covariate is not orthogonal to the factors, so the sums of squares depend on their type: each line here is adjusted {adjusted}."
        ),
    });
    notes.push(match &d.slopes {
        Some(s) => format!(
            "Test of equal slopes (the covariate's slope the same in every level of {}): {}.",
            groups_shown(o, d),
            f_statement(s.test.df1, s.test.df2, s.test.f, s.test.p)
        ),
        None => "The test of equal slopes could not be run: no residual degrees of freedom are left for the separate-slopes model.".into(),
    });
    notes
}

/// One table per covariate: its mean and range in each group, the
/// balance check, and the groups' own slopes when they differ.
pub fn covariate_table(
    o: &LinearOutcome,
    d: &CovariateDetail,
    c: usize,
    keys: &Keys,
    number: usize,
) -> TableView {
    let cov = &d.covariates[c];
    let name = o.presentation.plots.display(&cov.name).to_string();
    let separate = d.separate.as_ref().filter(|_| d.covariates.len() == 1);
    let digits = mean_digits(cov);
    let key = |level: &str, q: &str| {
        keys.field(&format!(
            "covariates.covariates.{}.groups.{level}.{q}",
            cov.name
        ))
    };
    let rows = cov
        .groups
        .iter()
        .enumerate()
        .map(|(g, group)| {
            let mut row = vec![
                text(group.label.clone()),
                cell(group.n.to_string(), key(&group.label, "n")),
                cell(fixed(group.mean, digits), key(&group.label, "mean")),
                text(format!(
                    "{} to {}",
                    fixed(group.min, cov.decimals),
                    fixed(group.max, cov.decimals)
                )),
            ];
            if let Some(s) = separate {
                row.extend(slope_cells(o, s, g, keys));
            }
            row
        })
        .collect();
    let mut columns = vec![
        col(groups_shown(o, d), false),
        col("n", true),
        col(format!("{name} mean"), true),
        col("Range", false),
    ];
    let mut footnotes = vec![format!(
        "Balance: {name} compared among the groups, {}. A covariate the treatments could have changed (measured after they began) must not be adjusted for; say in the report when it was measured.",
        f_statement(
            cov.balance.df1,
            cov.balance.df2,
            cov.balance.f,
            cov.balance.p
        )
    )];
    if let Some(s) = separate {
        columns.extend([col("Own slope", true), col("SE", true)]);
        if s.ms.is_nan() {
            columns.push(col("df", true));
        }
        columns.extend([
            col(
                format!("Mean at {name} = {}", fixed(cov.mean, digits)),
                true,
            ),
            col("SE", true),
        ]);
        footnotes.push(match s.ms.is_nan() {
            true => format!(
                "Own slopes and means from the mixed model with one slope per group (REML), each SE with its own {} df.",
                ddf_name(o)
            ),
            false => format!(
                "Own slopes and means from the separate-slopes model (one line per group; residual mean square {}, {} df).",
                significant(s.ms, 4),
                df_text(s.df)
            ),
        });
    }
    TableView {
        id: format!("{}-covariate-{}", o.id, cov.name),
        caption: format!("Table {number}. {name} by {}.", groups_shown(o, d)),
        number,
        columns,
        rows,
        footnotes,
    }
}

fn slope_cells(o: &LinearOutcome, s: &SeparateSlopes, g: usize, keys: &Keys) -> Vec<Cell> {
    let group = &s.groups[g];
    let key = |q: &str| {
        keys.field(&format!(
            "covariates.separate_slopes.groups.{}.{q}",
            group.label
        ))
    };
    let d = o.presentation.decimals;
    let mut cells = vec![
        cell(significant(group.slope, 4), key("slope")),
        cell(significant(group.se, 3), key("se")),
    ];
    // A mixed model gives each slope its own df.
    if s.ms.is_nan() {
        cells.push(cell(df_text(group.df), key("df")));
    }
    cells.extend([
        cell(fixed(group.mean_at, d), key("mean_at")),
        cell(fixed(group.mean_at_se, d), key("mean_at_se")),
    ]);
    cells
}

/// The differences between the groups' lines at the covariate's mean, and
/// where along the covariate each pair differs.
pub fn lines_table(
    o: &LinearOutcome,
    d: &CovariateDetail,
    s: &SeparateSlopes,
    keys: &Keys,
    number: usize,
) -> TableView {
    let cov = &d.covariates[0];
    let name = o.presentation.plots.display(&cov.name).to_string();
    let dec = o.presentation.decimals;
    let label = |i: usize| s.groups[i].label.clone();
    // A mixed model gives each difference its own df; where along the
    // covariate the lines differ is then not computed (the df change with it).
    let own_df = s.ms.is_nan();
    let rows = s
        .differences
        .iter()
        .enumerate()
        .map(|(i, diff)| {
            let key =
                |q: &str| keys.field(&format!("covariates.separate_slopes.differences.{i}.{q}"));
            let mut row = vec![
                text(format!("{} − {}", label(diff.b), label(diff.a))),
                cell(fixed(diff.estimate, dec), key("difference")),
                cell(fixed(diff.se, dec), key("se")),
            ];
            if own_df {
                row.push(cell(df_text(diff.df), key("df")));
            }
            row.extend([
                cell(
                    format!("{} to {}", fixed(diff.lower, dec), fixed(diff.upper, dec)),
                    key("ci"),
                ),
                cell(p_value(diff.p), key("p")),
            ]);
            if let Some(region) = s.regions.get(i) {
                row.push(text(region_text(region, cov)));
            }
            row
        })
        .collect();
    let mut columns = vec![
        col("Comparison", false),
        col("Difference", true),
        col("SE", true),
    ];
    if own_df {
        columns.push(col("df", true));
    }
    columns.extend([
        col(format!("{} CI", confidence_label(o.alpha)), true),
        col("p (unadjusted)", true),
    ]);
    let source = match own_df {
        true => format!(
            "from the mixed model with one slope per group, each with its own {} df",
            ddf_name(o)
        ),
        false => format!("from the separate-slopes model ({} df)", df_text(s.df)),
    };
    let mut footnotes = vec![format!(
        "Each difference is one line minus the other at the stated value of {name}, {source}; p-values and intervals are not adjusted for the number of pairs."
    )];
    if !s.regions.is_empty() {
        columns.push(col(format!("Differ at α where {name} is"), false));
        footnotes.push(format!(
            "The last column gives the values of {name}, within the observed range {} to {}, where the two lines differ at α (Johnson and Neyman 1936{}); boundaries outside that range would be extrapolation and are not used.",
            fixed(cov.min, cov.decimals),
            fixed(cov.max, cov.decimals),
            if own_df { ", each value with its own df" } else { "" }
        ));
    }
    TableView {
        id: format!("{}-lines", o.id),
        caption: format!(
            "Table {number}. Differences between the {} lines of {} at {name} = {} (separate slopes).",
            groups_shown(o, d),
            super::measure(o),
            fixed(cov.mean, mean_digits(cov))
        ),
        number,
        columns,
        rows,
        footnotes,
    }
}

/// The df method of a mixed model's tests, by name.
fn ddf_name(o: &LinearOutcome) -> &'static str {
    match o.mixed.as_ref().map(|m| m.fit.ddf) {
        Some(crate::doc::block::DdfMethod::Satterthwaite) => "Satterthwaite",
        _ => "Kenward-Roger",
    }
}

/// "above 78.92", "81.41 to 85.42", "nowhere in the data", "everywhere".
fn region_text(r: &DifferenceRegion, c: &Covariate) -> String {
    let digits = c.decimals + 2;
    let at_edge = |v: f64, edge: f64| (v - edge).abs() <= 1e-9 * edge.abs().max(1.0);
    let parts: Vec<String> = r
        .significant
        .iter()
        .map(|&(lo, hi)| match (at_edge(lo, c.min), at_edge(hi, c.max)) {
            (true, true) => "everywhere in the data".to_string(),
            (true, false) => format!("below {}", fixed(hi, digits)),
            (false, true) => format!("above {}", fixed(lo, digits)),
            (false, false) => format!("{} to {}", fixed(lo, digits), fixed(hi, digits)),
        })
        .collect();
    if parts.is_empty() {
        "nowhere in the data".into()
    } else {
        parts.join("; ")
    }
}
