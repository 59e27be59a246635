//! Factorial, blocked and Latin-square designs: any fixed-effects model with
//! categorical factors, fitted by QR, with Type I/II/III sums of squares,
//! comparisons on estimated marginal means, simple effects and cell means.

use crate::analysis::{Data, data_error, summary_checks};
use crate::data::scan::ScanSpec;
use crate::data::{factorial_from_scan, factorial_response};
use crate::diag::Diagnostic;
use crate::doc::block::{AnovaSpec, CheckSet, Omnibus};
use crate::doc::{Block, Document};
use crate::outcome::{CellRow, EmmRow, FactorialResult, Family, TermRow, term_label};
use crate::outcome::{Checks, ComparisonResult, OutlierRow};
use crate::provenance::Input;
use crate::stats::assumptions::{
    Center, OUTLIER_THRESHOLD, OUTLIERS_KEPT, bartlett, externally_studentized, levene,
    shapiro_wilk, skewness_kurtosis,
};
use crate::stats::compare::{Method, pairwise_with_se};
use crate::stats::dist::{f_isf, f_sf, t_isf};
use crate::stats::effect::noncentrality_interval;
use crate::stats::extremes::Extremes;
use crate::stats::letters::compact_letters;
use crate::stats::linear::{
    Layout, SsTable, SsType, TermFactors, design_matrix, fit, grid_average, sums_of_squares,
    term_columns,
};
use crate::stats::oneway::GroupSummary;
use crate::stats::sum::neumaier;

/// Limits that keep a model's fit and reference grid to a size that fits in
/// memory and finishes in seconds.
const MAX_DESIGN_COLUMNS: usize = 2_000;
const MAX_GRID_CELLS: f64 = 1_000_000.0;

fn ss_name(t: SsType) -> &'static str {
    match t {
        SsType::I => "Type I (sequential)",
        SsType::II => "Type II",
        SsType::III => "Type III",
    }
}

/// Every combination of the given factors' levels, first factor slowest.
fn combinations(factors: &[usize], levels: &[usize]) -> Vec<Vec<usize>> {
    let mut out = vec![Vec::new()];
    for &f in factors {
        out = out
            .into_iter()
            .flat_map(|prefix| (0..levels[f]).map(move |l| [prefix.clone(), vec![l]].concat()))
            .collect();
    }
    out
}

/// A model term none of whose contrasts is estimable after the terms before
/// it, and the earlier term that alone already determines it, if one does.
struct Confounded {
    term: usize,
    with: Option<usize>,
}

/// Terms wholly aliased with earlier terms, in model order. `design` holds
/// one row per observed combination of levels (weights do not change which
/// columns are aliased); `ranges` are the terms' columns.
fn confounded_terms(design: &[Vec<f64>], ranges: &[std::ops::Range<usize>]) -> Vec<Confounded> {
    let rows = design.first().map_or(0, Vec::len);
    let zeros = vec![0.0; rows];
    let all = fit(design, &zeros);
    let mut out = Vec::new();
    for (i, range) in ranges.iter().enumerate() {
        if range.is_empty() || range.clone().any(|c| all.kept[c]) {
            continue;
        }
        // Which single earlier term already spans it: fit the intercept,
        // that term and this one, and see whether this one adds nothing.
        let with = (0..i).find(|&j| {
            let cols: Vec<Vec<f64>> = std::iter::once(0)
                .chain(ranges[j].clone())
                .chain(range.clone())
                .map(|c| design[c].clone())
                .collect();
            let own = 1 + ranges[j].len();
            let pair = fit(&cols, &zeros);
            pair.kept[own..].iter().all(|k| !k)
        });
        out.push(Confounded { term: i, with });
    }
    out
}

/// Runs a factorial `anova` block.
pub fn run_factorial(
    doc: &Document,
    block: &Block,
    spec: &AnovaSpec,
    data: Data<'_>,
    display_path: &str,
) -> Result<(FactorialResult, Option<Input>), Diagnostic> {
    let source_data = data;
    let formula = &spec.model.value;
    let model_err = |msg: String, hint: &str| {
        doc.error_at(spec.model.line, Some(spec.model.column), msg)
            .hint(hint.to_string())
    };
    if spec.method != Omnibus::Anova {
        return Err(model_err(
            format!("`method: {}` is for one-factor models", spec.method.key()),
            "factorial and block designs use the F tests of the linear model; remove `method`",
        ));
    }
    if let Some(m) = spec
        .compare
        .filter(|m| matches!(m, Method::Dunnett | Method::GamesHowell | Method::Dunn))
    {
        return Err(model_err(
            format!(
                "`compare: {}` is available for one-factor models only",
                m.key()
            ),
            "in factorial designs use tukey, lsd, bonferroni, sidak, holm or scheffe",
        ));
    }
    if let Some(l) = &spec.levels {
        return Err(doc
            .error_at(
                l.line,
                Some(l.column),
                "`levels` applies to one-factor models",
            )
            .hint("in factorial designs levels keep their order of first appearance in the data"));
    }
    if spec.summary.is_some() {
        return Err(model_err(
            "`input: summary` applies to one-factor models".into(),
            "factorial designs need one row per observation",
        ));
    }
    let factor_names: Vec<String> = formula.factors().iter().map(|s| s.to_string()).collect();
    let index_of = |name: &str| factor_names.iter().position(|f| f == name);
    let blocks: Vec<usize> = match &spec.blocks {
        None => Vec::new(),
        Some(b) => b
            .value
            .iter()
            .map(|name| {
                index_of(name).ok_or_else(|| {
                    doc.error_at(
                        b.line,
                        Some(b.column),
                        format!("`{name}` is not a factor of the model"),
                    )
                    .hint(format!(
                        "the model's factors are {}",
                        factor_names.join(", ")
                    ))
                })
            })
            .collect::<Result<_, _>>()?,
    };
    let mut terms: Vec<TermFactors> = formula
        .terms
        .iter()
        .map(|t| t.factors.iter().filter_map(|f| index_of(f)).collect())
        .collect();
    let mut term_names: Vec<String> = formula.terms.iter().map(|t| t.to_string()).collect();

    let names: Vec<&str> = factor_names.iter().map(String::as_str).collect();
    let fail = |e| data_error(doc, block, spec.data.line, display_path, e);
    let mut streamed = None;
    let mut data = match source_data {
        // CSV in long layout: the chunked reader, keeping one number and one
        // line per observation instead of a table of strings.
        data if super::reads_csv_rows(spec) => {
            let scan_spec = ScanSpec {
                response: &formula.response,
                factors: &names,
                format: &spec.csv,
                filters: &spec.rows.filters,
                exclude: &spec.rows.exclude,
                keep_values: true,
            };
            let (scanned, input) = super::scan_csv(data, &scan_spec).map_err(fail)?;
            streamed = input;
            factorial_from_scan(scanned, names.len())
        }
        Data::Loaded(input) => {
            let (table, ruled_out) = super::read_rows(doc, block, spec, input, display_path)?;
            let mut data =
                factorial_response(&table, &formula.response, &names, &spec.csv).map_err(fail)?;
            data.excluded.extend(ruled_out);
            data
        }
        Data::Stream { .. } => {
            return Err(doc.error_at(
                block.line,
                None,
                "internal error: a table layout reached the streaming reader",
            ));
        }
    };
    data.excluded.sort_by_key(|e| e.line);
    let all_levels: Vec<&str> = data.levels.iter().flatten().map(String::as_str).collect();
    super::check_labels(doc, spec, &all_levels)?;
    for lv in data.levels.iter_mut() {
        super::apply_labels(lv, &spec.labels);
    }
    let levels: Vec<usize> = data.levels.iter().map(Vec::len).collect();
    if let Some(f) = levels.iter().position(|&l| l < 2) {
        return Err(model_err(
            format!(
                "`{}` has {} with data; a factor needs two or more",
                factor_names[f],
                crate::format::counted(levels[f], "level", "levels")
            ),
            "check the factor column and the missing-value markers",
        ));
    }
    let reused = reused_block_labels(&data, &blocks, &factor_names, &terms);
    // From here on a model error also explains block labels reused within
    // another block factor, the usual cause when blocks are nested.
    let model_err = |msg: String, hint: &str| match &reused {
        Some(note) => model_err(msg, hint).hint(note.clone()),
        None => model_err(msg, hint),
    };
    let n = data.offsets.len();
    // Observations that share every factor's level share their design row:
    // the fit works on these full cells, each weighted by √n (see below).
    let (cell_of, full_cells) = (&data.cell_of, &data.cells);
    let layout = Layout {
        levels: levels.clone(),
        rows: full_cells.clone(),
    };
    let alpha = spec.alpha.unwrap_or(doc.front.alpha);
    let mut warnings = Vec::new();

    // A term confounded with an earlier main effect (the classical layout:
    // a factorial's highest interaction given up to blocks) has no contrast
    // left to test; the usual analysis leaves it in that factor's sum of
    // squares and says so.
    for c in confounded_terms(
        &design_matrix(&layout, &terms),
        &term_columns(&terms, &levels),
    )
    .into_iter()
    .rev()
    {
        let Some(with) = c.with.filter(|&j| terms[j].len() == 1) else {
            let hint = "check that the factors really cross (each combination of levels occurs), or remove the term";
            return Err(model_err(
                format!(
                    "the term `{}` is not estimable: every one of its contrasts is determined by the terms before it ({})",
                    term_names[c.term],
                    term_names[..c.term].join(", ")
                ),
                hint,
            ));
        };
        warnings.push(format!(
            "`{0}` is confounded with `{1}`: each level of `{1}` holds only level combinations on one side of the `{0}` contrast, so that contrast is part of the differences among levels of `{1}`. It cannot be tested from these data; as in the usual analysis of a confounded design it is left out of the model and its degrees of freedom stay with `{1}`.",
            term_names[c.term], term_names[with]
        ));
        terms.remove(c.term);
        term_names.remove(c.term);
    }

    // Cells of every interaction term that have no observation.
    let mut empty: Vec<String> = Vec::new();
    for t in terms.iter().filter(|t| t.len() > 1) {
        for combo in combinations(t, &levels) {
            let present = data
                .cells
                .iter()
                .any(|r| t.iter().zip(&combo).all(|(&f, &l)| r[f] == l));
            if !present {
                let label = t
                    .iter()
                    .zip(&combo)
                    .map(|(&f, &l)| format!("{}={}", factor_names[f], data.levels[f][l]))
                    .collect::<Vec<_>>()
                    .join(", ");
                if !empty.contains(&label) {
                    empty.push(label);
                }
            }
        }
    }

    // The design matrix has one column per estimable contrast and the marginal
    // means average over every combination of levels: bound both.
    let width: usize = 1 + terms
        .iter()
        .map(|t| crate::stats::linear::term_width(t, &levels))
        .sum::<usize>();
    let grid: f64 = levels.iter().map(|&l| l as f64).product();
    if width > MAX_DESIGN_COLUMNS || grid > MAX_GRID_CELLS {
        return Err(model_err(
            format!(
                "the model needs {width} design columns over {grid} combinations of levels, more than sheaf fits"
            ),
            "drop high-order interactions (write the terms with `+` and `:`), or merge rare levels",
        ));
    }
    // XᵀX and Xᵀy depend on the data only through each full cell's n and
    // mean, so the least squares run on one row per cell, √n·x and √n·ȳ: the
    // same R, coefficients and Type I effects as one row per observation,
    // and every residual sum of squares less the within-cell sum, which is
    // added back. Memory and time follow the number of cells, not of rows.
    let mut by_cell: Vec<Vec<f64>> = vec![Vec::new(); full_cells.len()];
    for (&c, &y) in cell_of.iter().zip(&data.offsets) {
        by_cell[c].push(y);
    }
    let cell_summaries: Vec<GroupSummary> = by_cell
        .iter()
        .map(|v| GroupSummary::from_values(v))
        .collect();
    drop(by_cell);
    let within_cells = neumaier(cell_summaries.iter().map(|c| c.ss));
    let unweighted = design_matrix(&layout, &terms);
    let weights: Vec<f64> = cell_summaries.iter().map(|c| (c.n as f64).sqrt()).collect();
    let design: Vec<Vec<f64>> = unweighted
        .iter()
        .map(|col| col.iter().zip(&weights).map(|(x, w)| x * w).collect())
        .collect();
    let cell_y: Vec<f64> = cell_summaries
        .iter()
        .zip(&weights)
        .map(|(c, w)| c.mean * w)
        .collect();
    let ranges = term_columns(&terms, &levels);
    let mut full = fit(&design, &cell_y);
    full.rss += within_cells;
    let residual_df = n - full.rank;
    if residual_df == 0 {
        let has_interaction = terms.iter().any(|t| t.len() > 1);
        let d = model_err(
            "no residual degrees of freedom: the model uses up every observation".into(),
            if has_interaction {
                "with one observation per cell the interaction cannot be tested; fit the additive model, e.g. `y ~ A + B`"
            } else {
                "add replicates, or fit fewer terms"
            },
        );
        return Err(d);
    }
    let rank_deficient = full.kept.iter().any(|k| !k);
    let ss_type = spec.ss_type.as_ref().map_or(SsType::III, |l| l.value);
    if rank_deficient && ss_type == SsType::III {
        let at = spec.ss_type.as_ref().map_or(spec.model.line, |l| l.line);
        let why = if empty.is_empty() {
            "some of the model's contrasts are aliased with others (the design confounds part of a term)".to_string()
        } else {
            let cells = if empty.len() == 1 {
                "cell has"
            } else {
                "cells have"
            };
            format!("{} {cells} no data ({})", empty.len(), empty.join("; "))
        };
        return Err(doc
            .error_at(at, None, format!("Type III sums of squares are not estimable: {why}"))
            .hint("use `ss: 2` (each term adjusted for the terms that do not contain it), or drop the interaction from the model"))
            .map_err(|d: Diagnostic| match &reused {
                Some(note) => d.hint(note.clone()),
                None => d,
            });
    }
    let tables: Vec<(SsType, SsTable)> = [SsType::I, SsType::II, SsType::III]
        .into_iter()
        .filter(|t| !(rank_deficient && *t == SsType::III))
        .map(|t| {
            (t, {
                let mut table = sums_of_squares(&design, &cell_y, &terms, &ranges, t);
                table.rss += within_cells;
                table
            })
        })
        .collect();
    let chosen = tables
        .iter()
        .find(|(t, _)| *t == ss_type)
        .map(|(_, s)| s.clone())
        .unwrap_or_else(|| tables[0].1.clone());
    let types_agree = tables.iter().all(|(_, t)| {
        t.terms.iter().zip(&chosen.terms).all(|(a, b)| {
            (a.ss - b.ss).abs() <= 1e-9 * b.ss.abs().max(1e-300) || (a.ss - b.ss).abs() < 1e-12
        })
    });
    if let Some(i) = chosen.terms.iter().position(|t| t.df == 0) {
        return Err(model_err(
            format!(
                "the term `{}` is not estimable: every one of its columns is determined by earlier terms",
                term_names[i]
            ),
            "check that the factors really cross (each combination of levels occurs), or remove the term",
        ));
    }
    let mse = full.rss / residual_df as f64;
    let nu = residual_df as f64;
    let rows: Vec<TermRow> = chosen
        .terms
        .iter()
        .enumerate()
        .map(|(i, t)| {
            let df = t.df as f64;
            let ms = t.ss / df;
            let is_block = terms[i].len() == 1 && blocks.contains(&terms[i][0]);
            let row = TermRow {
                name: term_names[i].clone(),
                factors: terms[i].clone(),
                df: t.df,
                ss: t.ss,
                ms,
                f: f64::NAN,
                p: f64::NAN,
                critical_f: f64::NAN,
                partial_eta_sq: f64::NAN,
                partial_omega_sq: f64::NAN,
                partial_eta_sq_ci: (f64::NAN, f64::NAN),
                is_block,
            };
            if is_block {
                return row;
            }
            let f = ms / mse;
            let (lo, hi) = noncentrality_interval(f, df, nu, 1.0 - alpha);
            let to_eta = |lambda: f64| lambda / (lambda + df + nu + 1.0);
            TermRow {
                f,
                p: f_sf(f, df, nu),
                critical_f: f_isf(alpha, df, nu),
                partial_eta_sq: t.ss / (t.ss + full.rss),
                partial_omega_sq: df * (ms - mse) / (df * ms + (n as f64 - df) * mse),
                partial_eta_sq_ci: (to_eta(lo), to_eta(hi)),
                ..row
            }
        })
        .collect();
    let total_ss = GroupSummary::from_values(&data.offsets).ss;

    if !types_agree {
        warnings.push(format!(
            "The data are unbalanced, so Types I, II and III sums of squares differ; this table uses {}.",
            ss_name(ss_type)
        ));
    }
    warnings.extend(super::exclusion_notes(&data.excluded, &spec.data.value));
    warnings.extend(factor_level_warnings(&data, &factor_names, &blocks));
    warnings.extend(reused.clone());
    if !empty.is_empty() {
        warnings.push(format!(
            "{} of levels {} no observations ({}); {}",
            crate::format::counted(empty.len(), "combination", "combinations"),
            if empty.len() == 1 { "has" } else { "have" },
            empty.join("; "),
            if rank_deficient {
                "the interaction is estimated only from the cells with data, and marginal means cannot be estimated"
            } else {
                "the additive model estimates them from the other cells"
            }
        ));
    }

    // Observed cells over the treatment factors (blocks left out).
    let treatment: Vec<usize> = (0..levels.len()).filter(|f| !blocks.contains(f)).collect();
    let in_cell =
        |row: &[usize], combo: &[usize]| treatment.iter().zip(combo).all(|(&f, &l)| row[f] == l);
    let combos = combinations(&treatment, &levels);
    // Each full cell lies in one treatment cell: group rows in one pass.
    let treatment_of: Vec<usize> = full_cells
        .iter()
        .map(|r| combos.iter().position(|c| in_cell(r, c)).unwrap_or(0))
        .collect();
    let n_combos = combos.len();
    let group_rows = |value: &dyn Fn(usize) -> f64| {
        let mut groups: Vec<Vec<f64>> = vec![Vec::new(); n_combos];
        for (i, &c) in cell_of.iter().enumerate() {
            groups[treatment_of[c]].push(value(i));
        }
        groups
    };
    let by_treatment = group_rows(&|i| data.offsets[i]);
    let cells: Vec<CellRow> = combos
        .into_iter()
        .zip(&by_treatment)
        .map(|(combo, values)| {
            let s = GroupSummary::from_values(values);
            CellRow {
                levels: combo,
                n: s.n,
                mean: data.origin + s.mean,
                sd: s.variance().sqrt(),
                offset: s.mean,
            }
        })
        .collect();

    // Residuals, leverage and checks.
    // Fitted values and leverages are the same for every observation of a
    // full cell: x'b and x'(XᵀX)⁻¹x with the cell's unweighted design row.
    let kept_design: Vec<&Vec<f64>> = unweighted
        .iter()
        .zip(&full.kept)
        .filter(|(_, k)| **k)
        .map(|(c, _)| c)
        .collect();
    let b = full.coefficients();
    let cov = full.unscaled_covariance();
    let row_of = |c: usize| -> Vec<f64> { kept_design.iter().map(|col| col[c]).collect() };
    let cell_fitted: Vec<f64> = (0..full_cells.len())
        .map(|c| neumaier(row_of(c).iter().zip(&b).map(|(x, b)| x * b)))
        .collect();
    let cell_leverage: Vec<f64> = (0..full_cells.len())
        .map(|c| {
            let x = row_of(c);
            neumaier((0..x.len()).map(|a| x[a] * neumaier((0..x.len()).map(|j| cov[a][j] * x[j]))))
        })
        .collect();
    let residuals: Vec<f64> = (0..n)
        .map(|i| data.offsets[i] - cell_fitted[cell_of[i]])
        .collect();
    drop(by_treatment);
    // Variance checks on the residuals grouped by treatment cell: within a
    // cell of the full model these are the observations less a constant.
    let cell_groups: Vec<Vec<f64>> = group_rows(&|i| residuals[i])
        .into_iter()
        .filter(|g| !g.is_empty())
        .collect();
    let group_refs: Vec<&[f64]> = cell_groups.iter().map(Vec::as_slice).collect();
    let group_summaries: Vec<GroupSummary> = cell_groups
        .iter()
        .map(|g| GroupSummary::from_values(g))
        .collect();
    let replicated = cell_groups.iter().all(|g| g.len() >= 2);
    let (skewness, excess_kurtosis) = skewness_kurtosis(&residuals);
    let mut warnings_note: Vec<String> = Vec::new();
    // Only the most extreme are kept with their labels; the rest are counted.
    let mut flagged = Extremes::new(OUTLIERS_KEPT);
    for i in 0..n {
        let h = cell_leverage[cell_of[i]];
        if h >= 1.0 - 1e-12 || residual_df < 2 {
            continue;
        }
        let t = externally_studentized(residuals[i], mse, h, nu);
        if t.abs() > OUTLIER_THRESHOLD {
            flagged.offer(t.abs(), (i, t));
        }
    }
    let outlier_count = flagged.total();
    let mut outliers: Vec<OutlierRow> = flagged
        .into_most_extreme_first()
        .into_iter()
        .map(|(i, t)| OutlierRow {
            line: data.lines[i],
            level: data
                .row(i)
                .iter()
                .enumerate()
                .map(|(f, &l)| data.levels[f][l].clone())
                .collect::<Vec<_>>()
                .join(" × "),
            value: data.origin + data.offsets[i],
            studentized_residual: t,
        })
        .collect();
    outliers.sort_by_key(|o| o.line);
    let mut checks = summary_checks(&group_summaries, spec.checks.shown());
    if spec.checks == CheckSet::Summary {
        // Only what the cell summaries allow, as asked.
        checks.by_request = true;
    } else if replicated {
        checks.from_summary = false;
        checks.brown_forsythe = levene(&group_refs, Center::Median);
        checks.levene = levene(&group_refs, Center::Mean);
        checks.bartlett = bartlett(&group_summaries);
    } else {
        // Unreplicated cells (blocks): compare the spread of the residuals
        // across the levels of the first treatment factor instead.
        let first = treatment.first().copied().unwrap_or(0);
        let mut by_level: Vec<Vec<f64>> = vec![Vec::new(); levels[first]];
        for (i, &c) in cell_of.iter().enumerate() {
            by_level[full_cells[c][first]].push(residuals[i]);
        }
        let refs: Vec<&[f64]> = by_level.iter().map(Vec::as_slice).collect();
        let sums: Vec<GroupSummary> = by_level
            .iter()
            .map(|g| GroupSummary::from_values(g))
            .collect();
        checks.from_summary = false;
        checks.brown_forsythe = levene(&refs, Center::Median);
        checks.levene = levene(&refs, Center::Mean);
        checks.bartlett = bartlett(&sums);
        let single = cell_groups.iter().filter(|g| g.len() < 2).count();
        warnings_note.push(if single == cell_groups.len() {
            format!(
                "With one observation per treatment cell, the variance checks compare the residuals' spread across the levels of `{}`.",
                factor_names[first]
            )
        } else {
            format!(
                "{single} of the {} treatment cells hold a single observation, so the variance checks cannot compare every cell's spread; they compare the residuals' spread across the levels of `{}` instead.",
                cell_groups.len(),
                factor_names[first]
            )
        });
    }
    if !checks.by_request {
        checks.shapiro_wilk = shapiro_wilk(&residuals);
        checks.skewness = skewness;
        checks.excess_kurtosis = excess_kurtosis;
        checks.outlier_count = outlier_count;
        checks.outliers = outliers;
    }
    warnings.extend(warnings_note);
    warnings.extend(factorial_advice(&checks, alpha, data.decimals));

    // Comparisons.
    let t_crit = t_isf(alpha / 2.0, nu);
    let mut families = Vec::new();
    if let Some(method) = spec.compare {
        let compare: Vec<usize> = match &spec.compare_terms {
            Some(c) => c
                .value
                .iter()
                .map(|name| match index_of(name) {
                    Some(i) if !blocks.contains(&i) => Ok(i),
                    Some(_) => Err(doc.error_at(
                        c.line,
                        Some(c.column),
                        format!("`{name}` is a block; blocks are not compared"),
                    )),
                    None => Err(doc
                        .error_at(
                            c.line,
                            Some(c.column),
                            format!("`{name}` is not a factor of the model"),
                        )
                        .hint(format!(
                            "the model's factors are {}",
                            factor_names.join(", ")
                        ))),
                })
                .collect::<Result<_, _>>()?,
            None => (0..factor_names.len())
                .filter(|f| !blocks.contains(f) && terms.iter().any(|t| t == &vec![*f]))
                .collect(),
        };
        let within = match &spec.within {
            None => None,
            Some(w) => match index_of(&w.value) {
                Some(i) => Some(i),
                None => {
                    return Err(doc
                        .error_at(
                            w.line,
                            Some(w.column),
                            format!("`{}` is not a factor of the model", w.value),
                        )
                        .hint(format!(
                            "the model's factors are {}",
                            factor_names.join(", ")
                        )));
                }
            },
        };
        let cells_wanted = spec.cells.as_ref().is_some_and(|c| c.value);
        let marginal_wanted = !cells_wanted || spec.compare_terms.is_some() || within.is_some();
        if marginal_wanted && rank_deficient {
            return Err(model_err(
                "marginal means cannot be estimated with empty cells and an interaction in the model".into(),
                "compare observed cell means with `cells: yes`, or drop the interaction",
            ));
        }
        let emm = |fixed: &[Option<usize>]| -> (f64, f64, Vec<f64>) {
            let l = grid_average(&terms, &levels, fixed);
            let (v, var) = full.estimate(&l, &cov, &b).unwrap_or((f64::NAN, f64::NAN));
            (v, var, l)
        };
        let diff_se = |la: &[f64], lb: &[f64]| -> f64 {
            let d: Vec<f64> = la.iter().zip(lb).map(|(a, b)| a - b).collect();
            let dummy = vec![0.0; d.len()];
            let (_, var) = full
                .estimate(&d, &cov, &dummy)
                .unwrap_or((f64::NAN, f64::NAN));
            (mse * var).sqrt()
        };
        if marginal_wanted {
            for &f in compare.iter().filter(|f| Some(**f) != within) {
                if levels[f] > super::MAX_COMPARED_LEVELS {
                    warnings.push(format!(
                        "`{}` has {} levels; sheaf compares at most {} levels, so its comparisons are skipped.",
                        factor_names[f],
                        levels[f],
                        super::MAX_COMPARED_LEVELS
                    ));
                    continue;
                }
                let slices: Vec<Option<usize>> = match within {
                    Some(w) => (0..levels[w]).map(Some).collect(),
                    None => vec![None],
                };
                for slice in slices {
                    let mut estimates = Vec::new();
                    for l in 0..levels[f] {
                        let mut fixed = vec![None; levels.len()];
                        fixed[f] = Some(l);
                        if let (Some(w), Some(s)) = (within, slice) {
                            fixed[w] = Some(s);
                        }
                        estimates.push(emm(&fixed));
                    }
                    // Observations at level l (within the slice): summed over
                    // the full cells, each holding cell_summaries[c].n rows.
                    let count = |l: usize| {
                        full_cells
                            .iter()
                            .zip(&cell_summaries)
                            .filter(|(r, _)| {
                                r[f] == l
                                    && match (within, slice) {
                                        (Some(w), Some(s)) => r[w] == s,
                                        _ => true,
                                    }
                            })
                            .map(|(_, c)| c.n)
                            .sum::<usize>()
                    };
                    let means: Vec<EmmRow> = estimates
                        .iter()
                        .enumerate()
                        .map(|(l, (v, var, _))| {
                            let se = (mse * var).sqrt();
                            let mean = data.origin + v;
                            EmmRow {
                                label: data.levels[f][l].clone(),
                                n: count(l),
                                mean,
                                se,
                                ci_lower: mean - t_crit * se,
                                ci_upper: mean + t_crit * se,
                            }
                        })
                        .collect();
                    let offsets: Vec<f64> = estimates.iter().map(|e| e.0).collect();
                    let fam = pairwise_with_se(
                        &offsets,
                        |a, bb| diff_se(&estimates[a].2, &estimates[bb].2),
                        nu,
                        alpha,
                        method,
                    );
                    let protect_p = rows
                        .iter()
                        .find(|r| r.factors == vec![f])
                        .map_or(f64::NAN, |r| r.p);
                    let within_label = match (within, slice) {
                        (Some(w), Some(s)) => {
                            Some(format!("{}={}", factor_names[w], data.levels[w][s]))
                        }
                        _ => None,
                    };
                    families.push(make_family(
                        &factor_names[f],
                        within_label,
                        means,
                        fam,
                        method,
                        spec.protected && within.is_none(),
                        protect_p,
                        alpha,
                    ));
                }
            }
        }
        if cells_wanted {
            let full_interaction = terms
                .iter()
                .any(|t| t.len() == treatment.len() && treatment.iter().all(|f| t.contains(f)));
            if !full_interaction || (!blocks.is_empty() && !types_agree) {
                let c = spec.cells.as_ref().map_or(spec.model.line, |c| c.line);
                return Err(doc
                    .error_at(c, None, "`cells` compares cell means, which needs the model with all interactions of the treatment factors (and complete blocks)")
                    .hint("write the model as `y ~ A * B` (plus any blocks), or compare marginal means with `within`"));
            }
            let present: Vec<&CellRow> = cells.iter().filter(|c| c.n > 0).collect();
            if present.len() > super::MAX_COMPARED_LEVELS {
                return Err(doc
                    .error_at(
                        spec.cells.as_ref().map_or(spec.model.line, |c| c.line),
                        None,
                        format!(
                            "`cells` would compare {} cells; sheaf compares at most {}",
                            present.len(),
                            super::MAX_COMPARED_LEVELS
                        ),
                    )
                    .hint("compare marginal means, or within one factor, instead"));
            }
            let means: Vec<EmmRow> = present
                .iter()
                .map(|c| {
                    let se = (mse / c.n as f64).sqrt();
                    let label = treatment
                        .iter()
                        .zip(&c.levels)
                        .map(|(&f, &l)| data.levels[f][l].clone())
                        .collect::<Vec<_>>()
                        .join(" × ");
                    EmmRow {
                        label,
                        n: c.n,
                        mean: c.mean,
                        se,
                        ci_lower: c.mean - t_crit * se,
                        ci_upper: c.mean + t_crit * se,
                    }
                })
                .collect();
            let offsets: Vec<f64> = present.iter().map(|c| c.offset).collect();
            let fam = pairwise_with_se(
                &offsets,
                |a, bb| (mse * (1.0 / present[a].n as f64 + 1.0 / present[bb].n as f64)).sqrt(),
                nu,
                alpha,
                method,
            );
            families.push(make_family(
                "cells",
                None,
                means,
                fam,
                method,
                false,
                f64::NAN,
                alpha,
            ));
        }
        let interaction_significant = rows.iter().any(|r| r.factors.len() > 1 && r.p < alpha);
        if interaction_significant && within.is_none() && !cells_wanted {
            let inter = rows
                .iter()
                .find(|r| r.factors.len() > 1 && r.p < alpha)
                .map_or(String::new(), |r| term_label(&r.name));
            let other = rows
                .iter()
                .find(|r| r.factors.len() > 1 && r.p < alpha)
                .and_then(|r| r.factors.get(1))
                .map_or("B".to_string(), |&f| factor_names[f].clone());
            warnings.push(format!(
                "The {inter} interaction is significant at α = {alpha}: comparisons of main-effect means averaged over the other factor may mislead. Compare within each level with `within: {other}`, or compare all cells with `cells: yes`."
            ));
        }
    }
    let decimals = spec
        .decimals
        .or(doc.front.decimals)
        .unwrap_or((data.decimals + 1).min(6));
    // Only figures read the observations; without them the result (and the
    // cache entry) stays small whatever the number of rows.
    let (values, fitted, per_row_residuals, observation_rows, lines) =
        if spec.plots.kinds.is_empty() {
            Default::default()
        } else {
            (
                data.offsets.iter().map(|y| data.origin + y).collect(),
                data.offsets
                    .iter()
                    .zip(&residuals)
                    .map(|(y, e)| data.origin + y - e)
                    .collect(),
                residuals.clone(),
                data.rows(),
                data.lines.clone(),
            )
        };
    let (warnings, acknowledged) = super::split_acknowledged(warnings, &spec.acknowledge);
    let result = FactorialResult {
        id: block.id.clone(),
        line: block.line,
        data: spec.data.value.clone(),
        response: formula.response.clone(),
        factors: factor_names,
        levels: data.levels,
        alpha,
        ss_type,
        types_agree,
        terms: rows,
        residual_df,
        residual_ss: full.rss,
        mse,
        total_ss,
        r_squared: 1.0 - full.rss / total_ss,
        n,
        exclusions: data.excluded,
        cells,
        cell_factors: treatment,
        families,
        checks,
        warnings,
        acknowledged,
        decimals,
        caption: spec.caption.clone(),
        order: spec.order,
        show: spec.show,
        values,
        fitted,
        residuals: per_row_residuals,
        rows: observation_rows,
        lines,
        plots: spec.plots.clone(),
    };
    Ok((result, streamed))
}

/// Plain-language advice for factorial designs, where Welch and rank methods
/// are not available: the remedy offered is a transformation.
fn factorial_advice(checks: &Checks, alpha: f64, decimals: u32) -> Vec<String> {
    let p3 = crate::format::p_phrase;
    let mut out = Vec::new();
    if let Some(bf) = checks.brown_forsythe.filter(|t| t.p < alpha) {
        out.push(format!(
            "The variances differ (Brown-Forsythe {}). F tests in factorial designs tolerate this best with equal cell sizes; consider a variance-stabilizing transformation of the response (logarithm or square root for counts and yields).",
            p3(bf.p)
        ));
    } else if let Some(text) = checks.levene_only_note(alpha) {
        out.push(format!(
            "{text} F tests in factorial designs are robust to moderate differences when the cells are of equal size; with unequal cells, or if the spread grows with the mean, consider a variance-stabilizing transformation of the response."
        ));
    }
    if let Ok(sw) = checks.shapiro_wilk.as_ref()
        && sw.p < alpha
    {
        out.push(format!(
                "The residuals depart from a normal distribution (Shapiro-Wilk W = {}, {}); look at how they depart and consider a transformation of the response.",
                crate::format::fixed(sw.w, 3),
                p3(sw.p)
            ));
    }
    out.extend(checks.outlier_advice(decimals));
    out
}

#[allow(clippy::too_many_arguments)]
fn make_family(
    term: &str,
    within: Option<String>,
    means: Vec<EmmRow>,
    mut fam: crate::stats::compare::Pairwise,
    method: Method,
    protected: bool,
    protect_p: f64,
    alpha: f64,
) -> Family {
    let mut notes = Vec::new();
    let mut withheld = false;
    if method == Method::Lsd {
        if protected && (protect_p.is_nan() || protect_p >= alpha) {
            withheld = true;
            for p in &mut fam.pairs {
                p.significant = false;
            }
            notes.push(format!("Fisher's protected LSD: the F test for `{term}` was not significant at α = {alpha}, so no pair is declared different."));
        } else if !protected {
            notes.push("Unprotected LSD: pairs were tested whatever the F tests showed.".into());
        }
    }
    if method == Method::Holm {
        notes.push("Holm's procedure has no matching simultaneous intervals; the intervals shown are Bonferroni's.".into());
    }
    let k = means.len();
    let mut different = vec![vec![false; k]; k];
    for p in &fam.pairs {
        different[p.a][p.b] = p.significant;
        different[p.b][p.a] = p.significant;
    }
    let values: Vec<f64> = means.iter().map(|m| m.mean).collect();
    let letters = compact_letters(&values, |i, j| different[i][j]);
    Family {
        term: term.to_string(),
        within,
        means,
        comparison: ComparisonResult {
            method,
            alpha,
            pairs: fam.pairs,
            letters,
            critical: fam.critical,
            control: None,
            sides: crate::stats::dunnett::Sides::Two,
            withheld,
            notes,
        },
    }
}

/// Spelling variants among each factor's levels, and numeric treatment
/// factors with many levels for the rows (blocks are often numbered, so
/// they are not held to the second check).
fn factor_level_warnings(
    data: &crate::data::FactorialData,
    names: &[String],
    blocks: &[usize],
) -> Vec<String> {
    let mut first: Vec<Vec<usize>> = data.levels.iter().map(|l| vec![0; l.len()]).collect();
    for (i, &line) in data.lines.iter().enumerate() {
        for (f, &l) in data.row(i).iter().enumerate() {
            if first[f][l] == 0 {
                first[f][l] = line;
            }
        }
    }
    let mut warnings = Vec::new();
    for (f, levels) in data.levels.iter().enumerate() {
        let named: Vec<(&str, usize)> = levels
            .iter()
            .map(String::as_str)
            .zip(first[f].iter().copied())
            .collect();
        let found =
            crate::data::levels::level_warnings(names[f].as_str(), &named, data.lines.len());
        warnings.extend(
            found
                .into_iter()
                .filter(|w| !blocks.contains(&f) || w.starts_with("levels ")),
        );
    }
    warnings
}

/// Block factors whose labels look reused within another block factor
/// (`iblock` 1 of `rep` 1 and `iblock` 1 of `rep` 2 being different blocks):
/// every combination of the two occurs and holds several observations,
/// which incomplete blocks numbered afresh in each replicate give. Read as
/// crossed factors, such blocks are analysed wrongly.
fn reused_block_labels(
    data: &crate::data::FactorialData,
    blocks: &[usize],
    names: &[String],
    terms: &[Vec<usize>],
) -> Option<String> {
    for &outer in blocks {
        for &inner in blocks.iter().filter(|&&b| b != outer) {
            if terms
                .iter()
                .any(|t| t.contains(&outer) && t.contains(&inner))
            {
                continue;
            }
            let (a, b) = (data.levels[outer].len(), data.levels[inner].len());
            let mut counts = vec![0usize; a * b];
            for i in 0..data.lines.len() {
                let row = data.row(i);
                counts[row[outer] * b + row[inner]] += 1;
            }
            if counts.iter().all(|&c| c >= 2) && a * b <= data.cells.len() {
                let (o, n) = (&names[outer], &names[inner]);
                return Some(format!(
                    "every level of `{n}` occurs in every level of `{o}`, with several plots each: if `{n}` is numbered afresh within each `{o}` (so `{n}` 1 of `{o}` 1 and `{n}` 1 of `{o}` 2 are different blocks), the blocks are nested and the model reads them as crossed. Write the nested term `{o}:{n}` in the model in place of `{n}`, or give every block a label of its own (e.g. 1-1, 2-1)"
                ));
            }
        }
    }
    None
}
