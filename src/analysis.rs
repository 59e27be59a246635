//! Plan and compute: binds an analysis block to its data, checks the design,
//! and runs the statistics. The result is the one source of every number in
//! the report, the results file and the prose.

use crate::data::{DataError, Exclusion, Table, factor_response};
use crate::diag::Diagnostic;
use crate::doc::block::Order;
use crate::doc::{Block, Document};
use crate::stats::compare::{LevelMean, Method, Pair, pairwise};
use crate::stats::dist::t_isf;
use crate::stats::letters::{compact_letters, letter_count};
use crate::stats::oneway::{GroupSummary, OneWay, OneWayError, one_way, total_sum_of_squares};

/// Summary of one level of the factor.
#[derive(Debug, Clone, PartialEq)]
pub struct LevelResult {
    pub name: String,
    pub n: usize,
    pub mean: f64,
    /// Sample SD (n − 1 divisor); NaN for n = 1.
    pub sd: f64,
    /// Pooled standard error √(MSE/n).
    pub se: f64,
    /// Confidence interval for the mean from the pooled MSE on ν error df.
    pub ci_lower: f64,
    pub ci_upper: f64,
}

/// One pairwise family with its letters.
#[derive(Debug, Clone, PartialEq)]
pub struct ComparisonResult {
    pub method: Method,
    pub alpha: f64,
    pub pairs: Vec<Pair>,
    /// Letters per level, in level order.
    pub letters: Vec<String>,
    /// The t or q critical value behind the intervals.
    pub critical: f64,
    /// True when Fisher's protection withheld all declarations (F not significant).
    pub withheld: bool,
    /// Plain-language notes on the procedure (protection, interval choice).
    pub notes: Vec<String>,
}

/// Everything computed for one `anova` block.
#[derive(Debug, Clone, PartialEq)]
pub struct AnovaResult {
    pub id: String,
    pub line: usize,
    pub data: String,
    pub response: String,
    pub factor: String,
    pub alpha: f64,
    pub n: usize,
    pub exclusions: Vec<Exclusion>,
    pub table: OneWay,
    /// Levels that entered the analysis, in design order.
    pub levels: Vec<LevelResult>,
    pub comparison: Option<ComparisonResult>,
    pub warnings: Vec<String>,
    /// Decimals for means, SDs, SEs, intervals and differences.
    pub decimals: u32,
    pub caption: Option<String>,
    pub order: Order,
    pub show: crate::doc::block::Show,
}

/// A data file as read for the build.
#[derive(Debug, Clone)]
pub struct Input {
    /// The path as written in the block (relative to the document's folder).
    pub path: String,
    pub bytes: Vec<u8>,
}

/// Turns a data-file problem into a diagnostic pointing into the data file,
/// with a note at the block that named it.
fn data_error(doc: &Document, block: &Block, display_path: &str, e: DataError) -> Diagnostic {
    let mut d = Diagnostic::new(e.message).at(display_path, e.line, e.column);
    if let Some(h) = e.hint {
        d = d.hint(h);
    }
    d.note(format!(
        "read by the block `{}` at {}:{}",
        block.id, doc.name, block.spec.data.line
    ))
}

/// Runs one `anova` block on its data file.
pub fn run_anova(
    doc: &Document,
    block: &Block,
    input: &Input,
    display_path: &str,
) -> Result<AnovaResult, Diagnostic> {
    let spec = &block.spec;
    let formula = &spec.model.value;
    let model_error = |message: String, hint: &str| {
        doc.error_at(spec.model.line, Some(spec.model.column), message)
            .hint(hint.to_string())
    };
    if formula.terms.len() != 1 || formula.terms[0].factors.len() != 1 {
        return Err(model_error(
            format!(
                "`{}` has {} terms; this version of sheaf fits one treatment factor",
                formula_text(formula),
                formula.terms.len()
            ),
            "write `response ~ factor`; models with several factors, interactions or blocks are not fitted yet",
        ));
    }
    let factor = formula.terms[0].factors[0].clone();
    let response = formula.response.clone();
    let table = Table::parse(&input.bytes, &spec.csv)
        .map_err(|e| data_error(doc, block, display_path, e))?;
    let data = factor_response(&table, &response, &factor, &spec.csv).map_err(|e| {
        let mut d = data_error(doc, block, display_path, e);
        d = d.note(format!(
            "the model is `{}` (line {})",
            formula_text(formula),
            spec.model.line
        ));
        d
    })?;
    let alpha = spec.alpha.unwrap_or(doc.front.alpha);
    let mut warnings = Vec::new();

    // Design order: `levels` if given (it must name exactly the data's levels), else first appearance.
    let mut order: Vec<usize> = (0..data.levels.len()).collect();
    if let Some(listed) = &spec.levels {
        let found: Vec<&str> = data.levels.iter().map(|l| l.name.as_str()).collect();
        let found_text = found
            .iter()
            .map(|l| format!("`{l}`"))
            .collect::<Vec<_>>()
            .join(", ");
        for name in &listed.value {
            if !found.contains(&name.as_str()) {
                let mut d = doc.error_at(
                    listed.line,
                    Some(listed.column),
                    format!(
                        "level `{name}` does not occur in column `{factor}` of {}",
                        input.path
                    ),
                );
                d = match crate::diag::nearest(name, found.iter().copied()) {
                    Some(n) => d.hint(format!(
                        "did you mean `{n}`? The levels in the data are {found_text}"
                    )),
                    None => d.hint(format!("the levels in the data are {found_text}")),
                };
                return Err(d);
            }
        }
        if let Some(extra) = found.iter().find(|f| !listed.value.iter().any(|l| l == *f)) {
            return Err(doc
                .error_at(
                    listed.line,
                    Some(listed.column),
                    format!("level `{extra}` occurs in the data but is not listed in `levels`"),
                )
                .hint(format!("list every level: the data have {found_text}")));
        }
        order = listed
            .value
            .iter()
            .filter_map(|name| found.iter().position(|f| f == name))
            .collect();
    }
    let mut used: Vec<usize> = Vec::new();
    for &i in &order {
        let lvl = &data.levels[i];
        if lvl.offsets.is_empty() {
            warnings.push(format!("level `{}` has no observations with a value of `{response}`; it is left out of the analysis", lvl.name));
        } else {
            used.push(i);
        }
    }
    if used.len() < 2 {
        let which = if used.is_empty() {
            "no level".to_string()
        } else {
            format!("only `{}`", data.levels[used[0]].name)
        };
        return Err(doc
            .error_at(spec.model.line, Some(spec.model.column), format!("`{factor}` needs two or more levels with data; {which} has observations"))
            .hint("an analysis of variance compares levels: check the factor column and the missing-value markers")
            .note(format!("data file {display_path}")));
    }
    let summaries: Vec<GroupSummary> = used
        .iter()
        .map(|&i| GroupSummary::from_values(&data.levels[i].offsets))
        .collect();
    let total_ss = total_sum_of_squares(used.iter().map(|&i| data.levels[i].offsets.as_slice()));
    // Two or more levels were checked above, so `one_way` cannot refuse.
    let table =
        one_way(&summaries, alpha, Some(total_ss)).map_err(|OneWayError::TooFewLevels(k)| {
            doc.error_at(
                block.line,
                None,
                format!("internal error: {k} level(s) reached the analysis"),
            )
        })?;
    warnings.extend(table.warnings.iter().cloned());
    for &i in &used {
        if data.levels[i].offsets.len() == 1 {
            warnings.push(format!(
                "level `{}` has a single observation: it adds nothing to the error term, and its SD cannot be computed",
                data.levels[i].name
            ));
        }
    }
    if !data.excluded.is_empty() {
        let lines: Vec<String> = data
            .excluded
            .iter()
            .take(12)
            .map(|e| e.line.to_string())
            .collect();
        let more = if data.excluded.len() > 12 {
            ", …"
        } else {
            ""
        };
        let (rows, were, line_word) = if data.excluded.len() == 1 {
            ("row", "was", "line")
        } else {
            ("rows", "were", "lines")
        };
        warnings.push(format!(
            "{} {rows} of {} {were} left out because a value was missing ({line_word} {}{more}).",
            data.excluded.len(),
            input.path,
            lines.join(", ")
        ));
    }

    let nu = table.df_within as f64;
    let t_crit = if table.df_within > 0 {
        t_isf(alpha / 2.0, nu)
    } else {
        f64::NAN
    };
    let levels: Vec<LevelResult> = used
        .iter()
        .zip(&summaries)
        .map(|(&i, s)| {
            let mean = data.origin + s.mean;
            let se = (table.ms_within / s.n as f64).sqrt();
            LevelResult {
                name: data.levels[i].name.clone(),
                n: s.n,
                mean,
                sd: s.variance().sqrt(),
                se,
                ci_lower: mean - t_crit * se,
                ci_upper: mean + t_crit * se,
            }
        })
        .collect();

    let comparison = match spec.compare {
        None => None,
        Some(method) => {
            if table.df_within == 0 || table.ms_within.is_nan() || table.ms_within <= 0.0 {
                warnings.push("pairwise comparisons need an error term with variation and degrees of freedom; none are reported".into());
                None
            } else {
                let means: Vec<LevelMean> = summaries
                    .iter()
                    .map(|s| LevelMean {
                        n: s.n,
                        mean: s.mean,
                    })
                    .collect();
                let mut family = pairwise(&means, table.ms_within, nu, alpha, method);
                let mut notes = Vec::new();
                let mut withheld = false;
                if method == Method::Lsd {
                    if spec.protected {
                        if table.p < alpha {
                            notes.push(format!("Fisher's protected LSD: the F test was significant at α = {alpha}, so pairs were tested."));
                        } else {
                            withheld = true;
                            for p in &mut family.pairs {
                                p.significant = false;
                            }
                            notes.push(format!("Fisher's protected LSD: the F test was not significant at α = {alpha}, so no pair is declared different."));
                        }
                    } else {
                        notes.push(
                            "Unprotected LSD: pairs were tested whatever the F test showed.".into(),
                        );
                    }
                    if levels.len() >= 4 {
                        notes.push("With four or more levels the LSD does not hold the familywise error rate at α; Tukey-Kramer does.".into());
                    }
                }
                if method == Method::Holm {
                    notes.push("Holm's procedure has no matching simultaneous intervals; the intervals shown are Bonferroni's.".into());
                }
                let k = means.len();
                let mut different = vec![vec![false; k]; k];
                for p in &family.pairs {
                    different[p.a][p.b] = p.significant;
                    different[p.b][p.a] = p.significant;
                }
                let level_means: Vec<f64> = levels.iter().map(|l| l.mean).collect();
                let letters = compact_letters(&level_means, |i, j| different[i][j]);
                if letter_count(&letters) > 26 {
                    warnings.push("more than 26 letter groups: the letter display has become hard to read; consult the pairwise table".into());
                }
                Some(ComparisonResult {
                    method,
                    alpha,
                    pairs: family.pairs,
                    letters,
                    critical: family.critical,
                    withheld,
                    notes,
                })
            }
        }
    };

    let decimals = spec
        .decimals
        .or(doc.front.decimals)
        .unwrap_or((data.decimals + 1).min(6));
    Ok(AnovaResult {
        id: block.id.clone(),
        line: block.line,
        data: input.path.clone(),
        response,
        factor,
        alpha,
        n: table.n,
        exclusions: data.excluded,
        table,
        levels,
        comparison,
        warnings,
        decimals,
        caption: spec.caption.clone(),
        order: spec.order,
        show: spec.show,
    })
}

fn formula_text(f: &crate::doc::formula::Formula) -> String {
    let terms: Vec<String> = f.terms.iter().map(|t| t.to_string()).collect();
    format!("{} ~ {}", f.response, terms.join(" + "))
}
