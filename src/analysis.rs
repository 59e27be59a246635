//! Plan and compute: binds an analysis block to its data, checks the design,
//! and runs the statistics. The result is the one source of every number in
//! the report, the results file and the prose.

use crate::data::{DataError, Exclusion, Table, factor_response};
use crate::diag::Diagnostic;
use crate::doc::block::{AnovaSpec, Omnibus, Order};
use crate::doc::power::{EffectInput, PowerGoal, PowerSpec};
use crate::doc::{Block, Document};
use crate::stats::assumptions::{
    Center, ChiSquareTest, FTest, OUTLIER_THRESHOLD, ShapiroWilk, ShapiroWilkSkip, bartlett,
    levene, outliers, quartiles, shapiro_wilk, skewness_kurtosis,
};
use crate::stats::compare::{LevelMean, Method, Pair, pairwise};
use crate::stats::dist::t_isf;
use crate::stats::dunnett::{Sides, dunnett};
use crate::stats::effect::{EffectSizes, one_way_effects};
use crate::stats::effect::{one_way_power, one_way_sample_size};
use crate::stats::letters::{compact_letters, letter_count};
use crate::stats::oneway::{GroupSummary, OneWay, OneWayError, one_way, total_sum_of_squares};
use crate::stats::ranks::{KruskalWallis, dunn, kruskal_wallis};
use crate::stats::welch::{WelchAnova, games_howell, welch_anova};

/// Summary of one level of the factor.
#[derive(Debug, Clone, PartialEq)]
pub struct LevelResult {
    pub name: String,
    pub n: usize,
    pub mean: f64,
    /// Sample SD (n − 1 divisor); NaN for n = 1.
    pub sd: f64,
    /// Standard error of the mean: √(MSE/n) pooled, or s/√n under Welch.
    pub se: f64,
    /// Confidence interval for the mean: pooled MSE on ν error df, or the
    /// level's own SD under Welch (see `AnovaResult::ci_pooled`).
    pub ci_lower: f64,
    pub ci_upper: f64,
    pub median: f64,
    /// First and third quartiles (linear interpolation, "type 7").
    pub q1: f64,
    pub q3: f64,
}

/// One pairwise family with its letters.
#[derive(Debug, Clone, PartialEq)]
pub struct ComparisonResult {
    pub method: Method,
    pub alpha: f64,
    pub pairs: Vec<Pair>,
    /// Letters per level, in level order; empty for Dunnett (many-to-one).
    pub letters: Vec<String>,
    /// The t or q critical value behind the intervals.
    pub critical: f64,
    /// Dunnett's control level (index into the levels).
    pub control: Option<usize>,
    /// Dunnett's sidedness.
    pub sides: Sides,
    /// True when Fisher's protection withheld all declarations (F not significant).
    pub withheld: bool,
    /// Plain-language notes on the procedure (protection, interval choice).
    pub notes: Vec<String>,
}

/// Everything computed for one `anova` block.
#[derive(Debug, Clone, PartialEq)]
pub struct AnovaResult {
    pub method: Omnibus,
    pub checks: Checks,
    pub welch: Option<WelchAnova>,
    pub kruskal: Option<KruskalWallis>,
    pub effect: Option<EffectSizes>,
    /// True when SEs and intervals use the pooled MSE; false for per-level SDs.
    pub ci_pooled: bool,
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

/// The result of any analysis block.
#[derive(Debug, Clone, PartialEq)]
pub enum BlockResult {
    Anova(Box<AnovaResult>),
    Power(PowerResult),
}

impl BlockResult {
    pub fn id(&self) -> &str {
        match self {
            BlockResult::Anova(r) => &r.id,
            BlockResult::Power(r) => &r.id,
        }
    }

    pub fn line(&self) -> usize {
        match self {
            BlockResult::Anova(r) => r.line,
            BlockResult::Power(r) => r.line,
        }
    }

    pub fn warnings(&self) -> &[String] {
        match self {
            BlockResult::Anova(r) => &r.warnings,
            BlockResult::Power(r) => &r.warnings,
        }
    }
}

/// A planned one-way experiment: the power at n per group, or the n for a power.
#[derive(Debug, Clone, PartialEq)]
pub struct PowerResult {
    pub id: String,
    pub line: usize,
    pub groups: usize,
    pub effect: EffectInput,
    pub cohens_f: f64,
    pub alpha: f64,
    /// The target power when solving for n.
    pub target: Option<f64>,
    /// n per group: the answer when solving for n, else the input.
    pub n_per_group: Option<usize>,
    /// Power at `n_per_group`.
    pub power: f64,
    /// Power over a range of n per group, for the table.
    pub curve: Vec<(usize, f64)>,
    pub caption: Option<String>,
    pub warnings: Vec<String>,
}

/// Runs a `power` block (no data needed).
pub fn run_power(doc: &Document, block: &Block, spec: &PowerSpec) -> PowerResult {
    let alpha = spec.alpha.unwrap_or(doc.front.alpha);
    let f = spec.effect.cohens_f();
    let k = spec.groups;
    let mut warnings = Vec::new();
    if matches!(spec.effect, EffectInput::CohensF(_)) {
        warnings.push("Cohen's benchmarks (f = 0.10, 0.25, 0.40 for small, medium, large) are no substitute for the smallest difference that matters in your setting; base the effect on that.".to_string());
    }
    let (target, n, power) = match spec.goal {
        PowerGoal::SampleSize { power } => match one_way_sample_size(k, f, alpha, power) {
            Some((n, achieved)) => (Some(power), Some(n), achieved),
            None => {
                warnings.push(format!("No n per group up to 1,000,000 reaches power {power}: the effect is too small to detect in practice."));
                (Some(power), None, f64::NAN)
            }
        },
        PowerGoal::Power { n_per_group } => (
            None,
            Some(n_per_group),
            one_way_power(k, n_per_group, f, alpha),
        ),
    };
    // A small table around the answer: half, three quarters, n − 1, n, 1.25 n, 1.5 n, 2 n.
    let mut ns: Vec<usize> = match n {
        Some(n) => [
            n / 2,
            3 * n / 4,
            n.saturating_sub(1),
            n,
            n + n / 4,
            n + n / 2,
            2 * n,
        ]
        .to_vec(),
        None => Vec::new(),
    };
    ns.retain(|&m| m >= 2);
    ns.sort_unstable();
    ns.dedup();
    let curve = ns
        .into_iter()
        .map(|m| (m, one_way_power(k, m, f, alpha)))
        .collect();
    PowerResult {
        id: block.id.clone(),
        line: block.line,
        groups: k,
        effect: spec.effect.clone(),
        cohens_f: f,
        alpha,
        target,
        n_per_group: n,
        power,
        curve,
        caption: spec.caption.clone(),
        warnings,
    }
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
fn data_error(
    doc: &Document,
    block: &Block,
    data_line: usize,
    display_path: &str,
    e: DataError,
) -> Diagnostic {
    let mut d = Diagnostic::new(e.message).at(display_path, e.line, e.column);
    if let Some(h) = e.hint {
        d = d.hint(h);
    }
    d.note(format!(
        "read by the block `{}` at {}:{}",
        block.id, doc.name, data_line
    ))
}

/// Runs one `anova` block on its data file.
pub fn run_anova(
    doc: &Document,
    block: &Block,
    spec: &AnovaSpec,
    input: &Input,
    display_path: &str,
) -> Result<AnovaResult, Diagnostic> {
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
        .map_err(|e| data_error(doc, block, spec.data.line, display_path, e))?;
    let data = factor_response(&table, &response, &factor, &spec.csv).map_err(|e| {
        let mut d = data_error(doc, block, spec.data.line, display_path, e);
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
    let offsets: Vec<&[f64]> = used
        .iter()
        .map(|&i| data.levels[i].offsets.as_slice())
        .collect();
    let names: Vec<String> = used.iter().map(|&i| data.levels[i].name.clone()).collect();
    let lines: Vec<&[usize]> = used
        .iter()
        .map(|&i| data.levels[i].lines.as_slice())
        .collect();
    let checks = assumption_checks(
        &offsets,
        &summaries,
        &table,
        data.origin,
        &names,
        &lines,
        spec.checks,
    );
    warnings.extend(checks.advice(spec.method, alpha, data.decimals));

    let welch = match spec.method {
        Omnibus::Welch => Some(welch_anova(&summaries).map_err(|i| {
            let line = spec.model.line;
            doc.error_at(line, None, format!("Welch's ANOVA is undefined: level `{}` has fewer than two observations or no spread", names[i]))
                .hint("every level needs at least two differing values; use `method: anova` or `method: ranks`")
        })?),
        _ => None,
    };
    let kruskal = match spec.method {
        Omnibus::Ranks => {
            let kw = kruskal_wallis(&offsets).ok_or_else(|| {
                doc.error_at(
                    spec.model.line,
                    None,
                    "Kruskal-Wallis is undefined: every observation has the same value",
                )
                .hint("ranks cannot separate levels without any differing values")
            })?;
            if summaries.iter().any(|s| s.n < 5) {
                warnings.push("Some levels have fewer than five observations: the chi-squared approximation to the Kruskal-Wallis p-value is rough there.".into());
            }
            Some(kw)
        }
        _ => None,
    };
    let effect = (table.df_within > 0 && table.f.is_finite()).then(|| {
        one_way_effects(
            table.ss_between,
            table.ss_within,
            table.df_between as f64,
            nu,
            table.f,
            1.0 - alpha,
        )
    });
    if effect.is_some_and(|e| e.omega_sq < 0.0) {
        warnings.push(
            "ω² is negative, an estimate consistent with no effect; it is printed as computed."
                .into(),
        );
    }

    // Standard errors and intervals: pooled under the ANOVA model, each
    // level's own under Welch (METHODS 3.17).
    let pooled = spec.method != Omnibus::Welch;
    let t_crit = if table.df_within > 0 {
        t_isf(alpha / 2.0, nu)
    } else {
        f64::NAN
    };
    let levels: Vec<LevelResult> = offsets
        .iter()
        .zip(&summaries)
        .zip(&names)
        .map(|((values, s), name)| {
            let mean = data.origin + s.mean;
            let (se, t) = if pooled {
                ((table.ms_within / s.n as f64).sqrt(), t_crit)
            } else {
                (
                    (s.variance() / s.n as f64).sqrt(),
                    if s.n > 1 {
                        t_isf(alpha / 2.0, (s.n - 1) as f64)
                    } else {
                        f64::NAN
                    },
                )
            };
            let (q1, median, q3) = quartiles(values);
            LevelResult {
                name: name.clone(),
                n: s.n,
                mean,
                sd: s.variance().sqrt(),
                se,
                ci_lower: mean - t * se,
                ci_upper: mean + t * se,
                median: data.origin + median,
                q1: data.origin + q1,
                q3: data.origin + q3,
            }
        })
        .collect();

    let comparison = match spec.compare {
        None => None,
        Some(method) => {
            let pooled_ok = table.df_within > 0 && table.ms_within > 0.0;
            if spec.method == Omnibus::Anova && !pooled_ok {
                warnings.push("pairwise comparisons need an error term with variation and degrees of freedom; none are reported".into());
                None
            } else {
                Some(compare_levels(
                    doc,
                    spec,
                    method,
                    &summaries,
                    &levels,
                    &table,
                    kruskal.as_ref(),
                    alpha,
                    &mut warnings,
                )?)
            }
        }
    };

    let decimals = spec
        .decimals
        .or(doc.front.decimals)
        .unwrap_or((data.decimals + 1).min(6));
    Ok(AnovaResult {
        method: spec.method,
        checks,
        welch,
        kruskal,
        effect,
        ci_pooled: pooled,
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

/// Assumption checks of one block (computed always; shown unless `checks: none`).
#[derive(Debug, Clone, PartialEq)]
pub struct Checks {
    pub shown: bool,
    pub brown_forsythe: Option<FTest>,
    pub levene: Option<FTest>,
    pub bartlett: Option<ChiSquareTest>,
    pub shapiro_wilk: Result<ShapiroWilk, ShapiroWilkSkip>,
    pub skewness: f64,
    pub excess_kurtosis: f64,
    /// Largest over smallest level SD.
    pub sd_ratio: f64,
    pub balanced: bool,
    pub outliers: Vec<OutlierRow>,
}

/// An observation flagged by its studentized residual.
#[derive(Debug, Clone, PartialEq)]
pub struct OutlierRow {
    pub line: usize,
    pub level: String,
    pub value: f64,
    pub studentized_residual: f64,
}

fn assumption_checks(
    offsets: &[&[f64]],
    summaries: &[GroupSummary],
    table: &OneWay,
    origin: f64,
    names: &[String],
    lines: &[&[usize]],
    shown: bool,
) -> Checks {
    let residuals: Vec<f64> = offsets
        .iter()
        .zip(summaries)
        .flat_map(|(g, s)| g.iter().map(move |y| y - s.mean))
        .collect();
    let (skewness, excess_kurtosis) = skewness_kurtosis(&residuals);
    let sds: Vec<f64> = summaries
        .iter()
        .map(|s| s.variance().sqrt())
        .filter(|v| v.is_finite())
        .collect();
    let sd_ratio = match (
        sds.iter().cloned().fold(f64::NAN, f64::max),
        sds.iter().cloned().fold(f64::NAN, f64::min),
    ) {
        (hi, lo) if lo > 0.0 => hi / lo,
        _ => f64::NAN,
    };
    let means: Vec<f64> = summaries.iter().map(|s| s.mean).collect();
    let flagged = outliers(offsets, &means, table.ms_within, table.df_within)
        .into_iter()
        .map(|o| OutlierRow {
            line: lines[o.level][o.index],
            level: names[o.level].clone(),
            value: origin + offsets[o.level][o.index],
            studentized_residual: o.studentized,
        })
        .collect();
    Checks {
        shown,
        brown_forsythe: levene(offsets, Center::Median),
        levene: levene(offsets, Center::Mean),
        bartlett: bartlett(summaries),
        shapiro_wilk: shapiro_wilk(&residuals),
        skewness,
        excess_kurtosis,
        sd_ratio,
        balanced: summaries.iter().all(|s| s.n == summaries[0].n),
        outliers: flagged,
    }
}

impl Checks {
    /// Plain-language advice when a check fails at α, naming the key that
    /// switches to the alternative. The declared method is never changed.
    /// `decimals` is the data's own precision, for quoting values.
    pub fn advice(&self, method: Omnibus, alpha: f64, decimals: u32) -> Vec<String> {
        let mut out = Vec::new();
        let p3 = crate::render::format::p_phrase;
        if method == Omnibus::Anova {
            if let Some(bf) = self.brown_forsythe.filter(|t| t.p < alpha) {
                out.push(format!(
                    "The level variances differ (Brown-Forsythe {}). The F test and pooled comparisons assume equal variances; consider `method: welch` (Welch's ANOVA with Games-Howell comparisons).",
                    p3(bf.p)
                ));
            } else if self.sd_ratio > 2.0 && !self.balanced {
                out.push(format!(
                    "The largest level SD is {:.1} times the smallest, with unequal group sizes; the F test can mislead there. Consider `method: welch`.",
                    self.sd_ratio
                ));
            }
        }
        if method != Omnibus::Ranks {
            if let Ok(sw) = self.shapiro_wilk.as_ref() {
                if sw.p < alpha {
                    out.push(format!(
                        "The residuals depart from a normal distribution (Shapiro-Wilk W = {:.3}, {}). Look at how they depart; consider a transformation of the response, or `method: ranks` (Kruskal-Wallis with Dunn's comparisons).",
                        sw.w,
                        p3(sw.p)
                    ));
                }
            }
        }
        if let Err(ShapiroWilkSkip::TooMany) = self.shapiro_wilk {
            out.push("Shapiro-Wilk is not computed above 5,000 residuals (outside the range of Royston's approximation); judge normality from skewness, kurtosis and a Q-Q plot.".into());
        }
        for o in &self.outliers {
            out.push(format!(
                "The observation on line {} (level `{}`, value {}) has a studentized residual of {:.2}, beyond ±{OUTLIER_THRESHOLD}; check it against the records. Flagging excludes nothing.",
                o.line,
                o.level,
                crate::render::format::fixed(o.value, decimals),
                o.studentized_residual
            ));
        }
        out
    }
}

/// Runs the chosen comparison procedure and derives its letters.
#[allow(clippy::too_many_arguments)]
fn compare_levels(
    doc: &Document,
    spec: &AnovaSpec,
    method: Method,
    summaries: &[GroupSummary],
    levels: &[LevelResult],
    table: &OneWay,
    kruskal: Option<&KruskalWallis>,
    alpha: f64,
    warnings: &mut Vec<String>,
) -> Result<ComparisonResult, Diagnostic> {
    let nu = table.df_within as f64;
    let means: Vec<LevelMean> = summaries
        .iter()
        .map(|s| LevelMean {
            n: s.n,
            mean: s.mean,
        })
        .collect();
    let mut notes = Vec::new();
    let mut control = None;
    let mut family = match method {
        Method::GamesHowell => games_howell(summaries, alpha),
        Method::Dunn => match kruskal {
            Some(kw) => dunn(kw, alpha, spec.adjust),
            None => {
                return Err(doc.error_at(
                    spec.model.line,
                    None,
                    "internal error: Dunn's test without a ranking",
                ));
            }
        },
        Method::Dunnett => {
            let Some(c) = spec.control.as_ref() else {
                return Err(doc.error_at(
                    spec.model.line,
                    None,
                    "Dunnett's comparisons need `control`",
                ));
            };
            let Some(ci) = levels.iter().position(|l| l.name == c.value) else {
                let found: Vec<&str> = levels.iter().map(|l| l.name.as_str()).collect();
                let d = doc.error_at(
                    c.line,
                    Some(c.column),
                    format!("the control `{}` is not a level with data", c.value),
                );
                return Err(
                    match crate::diag::nearest(&c.value, found.iter().copied()) {
                        Some(n) => d.hint(format!("did you mean `{n}`?")),
                        None => d.hint(format!("the levels are {}", found.join(", "))),
                    },
                );
            };
            control = Some(ci);
            let pairs: Vec<(usize, f64)> = summaries.iter().map(|s| (s.n, s.mean)).collect();
            dunnett(&pairs, ci, table.ms_within, nu, alpha, spec.sides)
        }
        _ => pairwise(&means, table.ms_within, nu, alpha, method),
    };
    let mut withheld = false;
    match method {
        Method::Lsd => {
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
                notes.push("Unprotected LSD: pairs were tested whatever the F test showed.".into());
            }
            if levels.len() >= 4 {
                notes.push("With four or more levels the LSD does not hold the familywise error rate at α; Tukey-Kramer does.".into());
            }
        }
        Method::Holm => notes.push("Holm's procedure has no matching simultaneous intervals; the intervals shown are Bonferroni's.".into()),
        Method::Scheffe => notes.push("Scheffé's procedure covers every contrast, not only pairs, so it is the most conservative choice for pairwise comparisons.".into()),
        Method::Dunn => notes.push(format!(
            "Dunn's test compares mean ranks from the joint Kruskal-Wallis ranking, with {} adjustment.",
            spec.adjust.title()
        )),
        Method::GamesHowell => notes.push("Games-Howell uses each pair's own variances and Welch-Satterthwaite degrees of freedom.".into()),
        Method::Dunnett => notes.push(match spec.sides {
            Sides::Two => "Dunnett's procedure compares each treatment with the control, two-sided.".to_string(),
            Sides::Greater => "Dunnett's procedure compares each treatment with the control, one-sided: is the treatment above the control?".to_string(),
            Sides::Less => "Dunnett's procedure compares each treatment with the control, one-sided: is the treatment below the control?".to_string(),
        }),
        _ => {}
    }
    // Letters need all pairs; Dunnett compares with one control only.
    let letters = if method == Method::Dunnett {
        Vec::new()
    } else {
        let k = levels.len();
        let mut different = vec![vec![false; k]; k];
        for p in &family.pairs {
            different[p.a][p.b] = p.significant;
            different[p.b][p.a] = p.significant;
        }
        // Rank methods order letters by mean rank, the others by mean.
        let order_by: Vec<f64> = match kruskal {
            Some(kw) if method == Method::Dunn => kw.mean_ranks.clone(),
            _ => levels.iter().map(|l| l.mean).collect(),
        };
        let letters = compact_letters(&order_by, |i, j| different[i][j]);
        if letter_count(&letters) > 26 {
            warnings.push("more than 26 letter groups: the letter display has become hard to read; consult the pairwise table".into());
        }
        letters
    };
    Ok(ComparisonResult {
        method,
        alpha,
        pairs: family.pairs,
        letters,
        critical: family.critical,
        control,
        sides: spec.sides,
        withheld,
        notes,
    })
}
