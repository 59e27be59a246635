//! Plan and compute: binds an analysis block to its data, checks the design,
//! and runs the statistics. The result is the one source of every number in
//! the report, the results file and the prose.

pub mod factorial;

use crate::data::decimal::Number;
use crate::data::scan::{
    CHUNK_BYTES, ScanSpec, Scanned, ScannedLevel, Source, scan_file, scan_table,
};
use crate::data::{DataError, Exclusion, SummaryColumns, SummaryRow, Table, prepare, summary_rows};
use crate::diag::Diagnostic;
use crate::doc::block::{AnovaSpec, CheckSet, Omnibus};
use crate::doc::power::{EffectInput, PowerGoal, PowerSpec};
use crate::doc::{Block, Document};
use crate::outcome::{
    AnovaResult, Checks, ComparisonResult, LevelResult, OUTLIERS_LISTED, OutlierRow, PowerResult,
    most_extreme,
};
use crate::provenance::Input;
use crate::stats::assumptions::{
    Center, OUTLIER_THRESHOLD, ShapiroWilkSkip, bartlett, levene, outliers, quartiles,
    shapiro_wilk, skewness_kurtosis,
};
use crate::stats::compare::{LevelMean, Method, pairwise};
use crate::stats::dist::t_isf;
use crate::stats::dunnett::{DUNNETT_MIN_ALPHA, Sides, dunnett};
use crate::stats::effect::one_way_effects;
use crate::stats::effect::{one_way_power, one_way_sample_size};
use crate::stats::letters::{compact_letters, letter_count};
use crate::stats::oneway::{GroupSummary, OneWay, OneWayError, one_way, total_sum_of_squares};
use crate::stats::ranks::{KruskalWallis, dunn, kruskal_wallis};
use crate::stats::welch::{games_howell, welch_anova};

/// Above this many levels pairwise comparisons are skipped with a warning
/// (200 levels are 19,900 pairs, each with its own studentized-range tail).
pub const MAX_COMPARED_LEVELS: usize = 200;

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

/// Where a block's data come from.
pub enum Data<'a> {
    /// In memory, shared by the blocks that read the file.
    Loaded(&'a Input),
    /// A large CSV file, read once in chunks while it is hashed.
    Stream {
        path: &'a str,
        reader: Box<dyn std::io::Read + Send + 'a>,
    },
}

/// Whether a block reads raw observations from a CSV file in long layout,
/// which the chunked reader (`data::scan`) handles.
pub(crate) fn reads_csv_rows(spec: &AnovaSpec) -> bool {
    spec.summary.is_none()
        && spec.rows.wide.is_none()
        && crate::data::reader::reader_for(&spec.data.value).streams_rows()
}

/// Whether a block can read its data file as a stream: a one-factor model
/// on raw observations in a CSV file, in long layout.
pub fn streams(spec: &AnovaSpec) -> bool {
    let model = &spec.model.value;
    model.terms.len() == 1 && model.terms[0].factors.len() == 1 && reads_csv_rows(spec)
}

/// Whether a one-factor block needs every value (checks on residuals,
/// ranks, figures), or only per-level summaries.
fn keeps_values(spec: &AnovaSpec) -> bool {
    spec.checks != CheckSet::Summary
        || spec.method == Omnibus::Ranks
        || !spec.plots.kinds.is_empty()
}

/// Reads a block's CSV data with the chunked reader, from memory or from a
/// stream; a streamed file also comes back as the `Input` that records it.
pub(crate) fn scan_csv(
    data: Data<'_>,
    spec: &ScanSpec<'_>,
) -> Result<(Scanned, Option<Input>), DataError> {
    let (source, path) = match data {
        Data::Loaded(input) => (
            Source::Memory(input.bytes.as_deref().unwrap_or_default()),
            None,
        ),
        Data::Stream { path, reader } => (Source::Stream(reader), Some(path)),
    };
    let scanned = scan_file(source, spec, CHUNK_BYTES, reader_threads())?;
    let input = path.map(|path| Input {
        path: path.to_string(),
        sha256: scanned.sha256.clone().unwrap_or_default(),
        size: scanned.bytes,
        bytes: None,
    });
    Ok((scanned, input))
}

/// Worker threads for reading large files; the results never depend on it.
pub(crate) fn reader_threads() -> usize {
    std::thread::available_parallelism().map_or(1, |n| n.get().min(8))
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
    let sheet = match &block.spec {
        crate::doc::BlockSpec::Anova(spec) => spec.sheet.as_deref(),
        _ => None,
    };
    let reader = crate::data::reader::reader_for(display_path);
    let mut d = match reader.place(display_path, sheet, e.line, e.column) {
        Some(place) => Diagnostic::new(e.message).at(&place, None, None),
        None => Diagnostic::new(e.message).at(display_path, e.line, e.column),
    };
    if let Some(h) = e.hint {
        d = d.hint(h);
    }
    d.note(format!(
        "read by the block `{}` at {}:{}",
        block.id, doc.name, data_line
    ))
}

/// The levels of a block as loaded: summaries in design order, with the raw
/// observations when the data file has them.
struct Sample {
    names: Vec<String>,
    summaries: Vec<GroupSummary>,
    /// Offsets and data lines per level; `None` for summary input.
    raw: Option<RawLevels>,
    /// Every mean and offset is relative to this value (see `data::decimal`).
    origin: f64,
    /// Most decimals written in the response (or means) column.
    decimals: u32,
    excluded: Vec<Exclusion>,
    /// Range of F over the rounding of published summaries.
    rounding: Option<RoundingRange>,
}

/// Raw observations per level: offsets from the origin and their data lines.
type RawLevels = (Vec<Vec<f64>>, Vec<Vec<usize>>);

/// How far F and p can move when each published mean and SD is anywhere
/// within half a unit of its last printed digit (METHODS 3.19).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RoundingRange {
    pub f_low: f64,
    pub f_high: f64,
    pub p_low: f64,
    pub p_high: f64,
}

/// Runs a one-factor `anova` block on its data file. A streamed file comes
/// back as the `Input` that records it (hash and size, no bytes).
pub fn run_anova(
    doc: &Document,
    block: &Block,
    spec: &AnovaSpec,
    data: Data<'_>,
    display_path: &str,
) -> Result<(AnovaResult, Option<Input>), Diagnostic> {
    let formula = &spec.model.value;
    // `compile` sends models with several terms to `factorial::run_factorial`.
    if formula.terms.len() != 1 || formula.terms[0].factors.len() != 1 {
        return Err(doc.error_at(
            spec.model.line,
            None,
            "internal error: a factorial model reached the one-factor analysis",
        ));
    }
    let factor = formula.terms[0].factors[0].clone();
    let response = formula.response.clone();
    let fail = |e: DataError| {
        let model_note = e.message.starts_with("no column named");
        let d = data_error(doc, block, spec.data.line, display_path, e);
        if model_note {
            d.note(format!(
                "the model is `{}` (line {})",
                formula_text(&spec.model.value),
                spec.model.line
            ))
        } else {
            d
        }
    };
    let mut streamed = None;
    let mut sample = match (&spec.summary, data) {
        (None, data) => {
            let scan_spec = ScanSpec {
                response: &response,
                factors: &[factor.as_str()],
                format: &spec.csv,
                filters: &spec.rows.filters,
                exclude: &spec.rows.exclude,
                keep_values: keeps_values(spec),
            };
            let (scanned, ruled_out) = match data {
                data if streams(spec) => {
                    let (scanned, input) = scan_csv(data, &scan_spec).map_err(fail)?;
                    streamed = input;
                    (scanned, Vec::new())
                }
                Data::Loaded(input) => {
                    let (table, ruled_out) = read_rows(doc, block, spec, input, display_path)?;
                    let scanned = scan_table(&table, &response, &[factor.as_str()], &spec.csv)
                        .map_err(fail)?;
                    (scanned, ruled_out)
                }
                Data::Stream { .. } => {
                    return Err(doc.error_at(
                        block.line,
                        None,
                        "internal error: a table layout reached the streaming reader",
                    ));
                }
            };
            let path = streamed
                .as_ref()
                .map_or(spec.data.value.as_str(), |i| i.path.as_str());
            let mut sample = load_raw(doc, spec, scanned, &factor, path, display_path)?;
            sample.excluded.extend(ruled_out);
            sample
        }
        (Some(columns), Data::Loaded(input)) => {
            use crate::doc::block::PlotKind;
            if let Some(k) = spec
                .plots
                .kinds
                .iter()
                .find(|k| !matches!(k, PlotKind::Means))
            {
                return Err(doc
                    .error_at(
                        spec.model.line,
                        None,
                        format!(
                            "`plot: {}` needs the raw observations, not summaries",
                            k.key()
                        ),
                    )
                    .hint("with `input: summary` only `plot: means` can be drawn"));
            }
            let (table, ruled_out) = read_rows(doc, block, spec, input, display_path)?;
            let mut sample =
                load_summary(doc, block, spec, columns, &table, &factor, display_path)?;
            sample.excluded.extend(ruled_out);
            sample
        }
        (Some(_), Data::Stream { .. }) => {
            return Err(doc.error_at(
                block.line,
                None,
                "internal error: a summary table reached the streaming reader",
            ));
        }
    };
    sample.excluded.sort_by_key(|e| e.line);
    let names: Vec<&str> = sample.names.iter().map(String::as_str).collect();
    check_labels(doc, spec, &names)?;
    apply_labels(&mut sample.names, &spec.labels);
    let data_path = spec.data.value.clone();
    let result = analyse(doc, block, spec, sample, factor, response, &data_path)?;
    Ok((result, streamed))
}

/// One plain sentence per kind of exclusion: missing values, `exclude`
/// lines (with their reason) and `where` filters, each with its data lines.
pub(crate) fn exclusion_notes(excluded: &[Exclusion], path: &str) -> Vec<String> {
    let kind = |e: &Exclusion| -> String {
        if e.reason.ends_with("is missing") {
            "because a value was missing".to_string()
        } else {
            format!("by the document ({})", e.reason)
        }
    };
    // One pass: the lines of each kind, kinds in order of first appearance.
    let mut kinds: Vec<(String, Vec<usize>)> = Vec::new();
    for e in excluded {
        let k = kind(e);
        match kinds.iter_mut().find(|(name, _)| *name == k) {
            Some((_, lines)) => lines.push(e.line),
            None => kinds.push((k, vec![e.line])),
        }
    }
    kinds
        .into_iter()
        .map(|(k, mut lines)| {
            lines.dedup();
            let count = lines.len();
            let (rows, were) = if count == 1 {
                ("row", "was")
            } else {
                ("rows", "were")
            };
            format!(
                "{} {rows} of {path} {were} left out {k} ({}).",
                crate::format::count(count),
                line_ranges(&lines)
            )
        })
        .collect()
}

/// How many runs of consecutive lines an exclusion note names before it
/// summarises the rest (the results file keeps every line).
const EXCLUSION_RUNS_LISTED: usize = 24;

/// "line 7", "lines 3, 5–9 and 12", or the first runs and a count of the
/// rest: runs of consecutive lines are written as ranges.
pub(crate) fn line_ranges(lines: &[usize]) -> String {
    let mut runs: Vec<(usize, usize)> = Vec::new();
    for &line in lines {
        match runs.last_mut() {
            Some((_, end)) if line == *end + 1 => *end = line,
            _ => runs.push((line, line)),
        }
    }
    // Two neighbours read better as two lines than as a range.
    let runs: Vec<(usize, usize)> = runs
        .into_iter()
        .flat_map(|(a, b)| {
            if b == a + 1 {
                vec![(a, a), (b, b)]
            } else {
                vec![(a, b)]
            }
        })
        .collect();
    let text = |&(a, b): &(usize, usize)| {
        if a == b {
            a.to_string()
        } else {
            format!("{a}–{b}")
        }
    };
    let word = if lines.len() == 1 { "line" } else { "lines" };
    let shown: Vec<String> = runs.iter().take(EXCLUSION_RUNS_LISTED).map(text).collect();
    if runs.len() <= EXCLUSION_RUNS_LISTED {
        let listed = match shown.split_last() {
            Some((last, rest)) if !rest.is_empty() => format!("{} and {last}", rest.join(", ")),
            _ => shown.join(""),
        };
        return format!("{word} {listed}");
    }
    let rest: usize = runs[EXCLUSION_RUNS_LISTED..]
        .iter()
        .map(|(a, b)| b - a + 1)
        .sum();
    format!(
        "lines {}, and {} more up to line {}; the results file lists every line",
        shown.join(", "),
        crate::format::count(rest),
        runs.last().map_or(0, |r| r.1)
    )
}

/// Every level named in `labels` must be a level with data: a misspelt name
/// would otherwise leave its level unrenamed without a word.
pub(crate) fn check_labels(
    doc: &Document,
    spec: &AnovaSpec,
    levels: &[&str],
) -> Result<(), Diagnostic> {
    let Some((line, column)) = spec.labels_at else {
        return Ok(());
    };
    let Some((from, _)) = spec
        .labels
        .iter()
        .find(|(from, _)| !levels.contains(&from.as_str()))
    else {
        return Ok(());
    };
    let at = list_item_column(doc, line, column, |item| {
        item.split_once('=').is_some_and(|(f, _)| f.trim() == from)
    });
    let known = levels
        .iter()
        .map(|l| format!("`{l}`"))
        .collect::<Vec<_>>()
        .join(", ");
    let d = doc.error_at(
        line,
        Some(at),
        format!("`labels` renames `{from}`, which is not a level with data"),
    );
    Err(match crate::diag::nearest(from, levels.iter().copied()) {
        Some(n) => d.hint(format!("did you mean `{n}`? The levels are {known}")),
        None => d.hint(format!("the levels are {known}")),
    })
}

/// The 1-based column of the first item of a comma-separated value that
/// `is_item` accepts, on a document line whose value starts at `value_column`;
/// the value's own column when none does.
fn list_item_column(
    doc: &Document,
    line: usize,
    value_column: usize,
    is_item: impl Fn(&str) -> bool,
) -> usize {
    let text = doc.lines.line_text(&doc.source, line);
    let Some((start, _)) = text.char_indices().nth(value_column.saturating_sub(1)) else {
        return value_column;
    };
    let mut offset = start;
    for part in text[start..].split(',') {
        if is_item(part.trim()) {
            let lead = part.len() - part.trim_start().len();
            return 1 + text[..offset + lead].chars().count();
        }
        offset += part.len() + 1;
    }
    value_column
}

/// Renames levels for display (`labels`); names not listed stay as they are.
pub(crate) fn apply_labels(names: &mut [String], labels: &[(String, String)]) {
    for n in names.iter_mut() {
        if let Some((_, to)) = labels.iter().find(|(from, _)| from == n) {
            *n = to.clone();
        }
    }
}

/// Reads a block's data file (CSV or spreadsheet) and applies its row rules
/// (`layout`, `where`, `exclude`); returns the rows and those left out.
pub(crate) fn read_rows(
    doc: &Document,
    block: &Block,
    spec: &AnovaSpec,
    input: &Input,
    display_path: &str,
) -> Result<(Table, Vec<Exclusion>), Diagnostic> {
    let fail = |e| data_error(doc, block, spec.data.line, display_path, e);
    let table = crate::data::read_table(
        &input.path,
        input.bytes.as_deref().unwrap_or_default(),
        &spec.csv,
        spec.sheet.as_deref(),
        spec.range.as_deref(),
    )
    .map_err(fail)?;
    prepare(table, &spec.rows).map_err(fail)
}

/// The design order of the levels found in the data: `levels` if given (it
/// must name exactly the data's levels), else first appearance.
fn design_order(
    doc: &Document,
    spec: &AnovaSpec,
    found: &[&str],
    factor: &str,
    path: &str,
) -> Result<Vec<usize>, Diagnostic> {
    let Some(listed) = &spec.levels else {
        return Ok((0..found.len()).collect());
    };
    let found_text = found
        .iter()
        .map(|l| format!("`{l}`"))
        .collect::<Vec<_>>()
        .join(", ");
    for name in &listed.value {
        if !found.contains(&name.as_str()) {
            let column = list_item_column(doc, listed.line, listed.column, |item| item == name);
            let d = doc.error_at(
                listed.line,
                Some(column),
                format!("level `{name}` does not occur in column `{factor}` of {path}"),
            );
            return Err(match crate::diag::nearest(name, found.iter().copied()) {
                Some(n) => d.hint(format!(
                    "did you mean `{n}`? The levels in the data are {found_text}"
                )),
                None => d.hint(format!("the levels in the data are {found_text}")),
            });
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
    Ok(listed
        .value
        .iter()
        .filter_map(|name| found.iter().position(|f| f == name))
        .collect())
}

fn too_few_levels(
    doc: &Document,
    spec: &AnovaSpec,
    factor: &str,
    used: &[String],
    display_path: &str,
) -> Diagnostic {
    let which = match used.first() {
        None => "no level".to_string(),
        Some(n) => format!("only `{n}`"),
    };
    doc.error_at(spec.model.line, Some(spec.model.column), format!("`{factor}` needs two or more levels with data; {which} has observations"))
        .hint("an analysis of variance compares levels: check the factor column and the missing-value markers")
        .note(format!("data file {display_path}"))
}

/// The levels of a scanned file in design order; levels whose rows all
/// lacked a response are left out and named.
fn load_raw(
    doc: &Document,
    spec: &AnovaSpec,
    scanned: Scanned,
    factor: &str,
    path: &str,
    display_path: &str,
) -> Result<Sample, Diagnostic> {
    let found: Vec<&str> = scanned.levels.iter().map(|l| l.name.as_str()).collect();
    let order = design_order(doc, spec, &found, factor, path)?;
    let mut empty = Vec::new();
    let mut used = Vec::new();
    for &i in &order {
        if scanned.levels[i].summary.n == 0 {
            empty.push(scanned.levels[i].name.clone());
        } else {
            used.push(i);
        }
    }
    let names: Vec<String> = used
        .iter()
        .map(|&i| scanned.levels[i].name.clone())
        .collect();
    if used.len() < 2 {
        return Err(too_few_levels(doc, spec, factor, &names, display_path));
    }
    let keep = keeps_values(spec);
    let mut levels: Vec<Option<ScannedLevel>> = scanned.levels.into_iter().map(Some).collect();
    let used: Vec<ScannedLevel> = used.iter().filter_map(|&i| levels[i].take()).collect();
    Ok(Sample {
        summaries: used.iter().map(|l| l.summary).collect(),
        raw: keep.then(|| used.into_iter().map(|l| (l.offsets, l.lines)).unzip()),
        names,
        origin: scanned.origin,
        decimals: scanned.decimals,
        excluded: scanned.excluded,
        rounding: None,
    }
    .with_empty_levels(empty))
}

impl Sample {
    /// Records levels that had rows but no usable response, as exclusions
    /// are recorded: they are named in the warnings by `analyse`.
    fn with_empty_levels(mut self, empty: Vec<String>) -> Self {
        for name in empty {
            self.excluded.push(Exclusion {
                line: 0,
                reason: format!("level `{name}` has no observations"),
            });
        }
        self
    }
}

fn load_summary(
    doc: &Document,
    block: &Block,
    spec: &AnovaSpec,
    columns: &SummaryColumns,
    table: &Table,
    factor: &str,
    display_path: &str,
) -> Result<Sample, Diagnostic> {
    let rows = summary_rows(table, factor, columns, &spec.csv)
        .map_err(|e| data_error(doc, block, spec.data.line, display_path, e))?;
    let found: Vec<&str> = rows.iter().map(|r| r.level.as_str()).collect();
    let order = design_order(doc, spec, &found, factor, &spec.data.value)?;
    let names: Vec<String> = order.iter().map(|&i| rows[i].level.clone()).collect();
    if names.len() < 2 {
        return Err(too_few_levels(doc, spec, factor, &names, display_path));
    }
    let to_sd = |r: &SummaryRow, spread: f64| {
        if columns.spread_is_se {
            spread * (r.n as f64).sqrt()
        } else {
            spread
        }
    };
    // Means relative to the first one, subtracted as exact decimals (as the
    // raw path subtracts its origin): parsed as f64, means near 1e8 would
    // already have lost their last digits (METHODS 2.2).
    let origin_exact = rows[order[0]].mean_exact;
    let origin = origin_exact.to_f64();
    let offsets: Vec<f64> = rows
        .iter()
        .map(|r| {
            match (r.mean_exact, origin_exact) {
                (Number::Exact(mean), Number::Exact(first)) => mean.minus(first),
                _ => None,
            }
            .unwrap_or(r.mean - origin)
        })
        .collect();
    let summaries_at = |shift_mean: &dyn Fn(usize) -> f64, shift_sd: f64| -> Vec<GroupSummary> {
        order
            .iter()
            .map(|&i| {
                let r = &rows[i];
                let sd = (to_sd(r, r.spread) + shift_sd * to_sd(r, r.spread_half_unit)).max(0.0);
                GroupSummary {
                    n: r.n,
                    mean: offsets[i] + shift_mean(i),
                    ss: (r.n as f64 - 1.0) * sd * sd,
                }
            })
            .collect()
    };
    let summaries = summaries_at(&|_| 0.0, 0.0);
    // Rounding sensitivity: F is largest with the means pushed apart and the
    // SDs at their lowest, smallest with the means pulled together and the
    // SDs at their highest.
    let n_total: f64 = summaries.iter().map(|s| s.n as f64).sum();
    let grand = summaries.iter().map(|s| s.n as f64 * s.mean).sum::<f64>() / n_total;
    let away = |i: usize| {
        let r = &rows[i];
        if offsets[i] >= grand {
            r.mean_half_unit
        } else {
            -r.mean_half_unit
        }
    };
    let toward = |i: usize| {
        let r = &rows[i];
        let d = offsets[i] - grand;
        -d.signum() * r.mean_half_unit.min(d.abs())
    };
    let f_of = |g: &[GroupSummary]| {
        one_way(g, 0.05, None)
            .map(|t| (t.f, t.p))
            .unwrap_or((f64::NAN, f64::NAN))
    };
    let (f_high, p_low) = f_of(&summaries_at(&away, -1.0));
    let (f_low, p_high) = f_of(&summaries_at(&toward, 1.0));
    let decimals = order
        .iter()
        .map(|&i| rows[i].mean_decimals)
        .max()
        .unwrap_or(0);
    Ok(Sample {
        names,
        summaries,
        raw: None,
        origin,
        decimals: decimals.saturating_sub(1),
        excluded: Vec::new(),
        rounding: Some(RoundingRange {
            f_low,
            f_high,
            p_low,
            p_high,
        }),
    })
}

/// The statistics of a loaded sample.
fn analyse(
    doc: &Document,
    block: &Block,
    spec: &AnovaSpec,
    sample: Sample,
    factor: String,
    response: String,
    data_path: &str,
) -> Result<AnovaResult, Diagnostic> {
    let alpha = spec.alpha.unwrap_or(doc.front.alpha);
    let mut warnings = Vec::new();
    let Sample {
        names,
        summaries,
        raw,
        origin,
        decimals: data_decimals,
        excluded,
        rounding,
    } = sample;
    let (excluded, empty): (Vec<Exclusion>, Vec<Exclusion>) =
        excluded.into_iter().partition(|e| e.line > 0);
    for e in &empty {
        warnings.push(format!(
            "{} with a value of `{response}`; it is left out of the analysis",
            e.reason
        ));
    }
    let total_ss = raw
        .as_ref()
        .map(|(offsets, _)| total_sum_of_squares(offsets.iter().map(Vec::as_slice)));
    // Two or more levels were checked when loading, so `one_way` cannot refuse.
    let table = one_way(&summaries, alpha, total_ss).map_err(|OneWayError::TooFewLevels(k)| {
        doc.error_at(
            block.line,
            None,
            format!("internal error: {k} level(s) reached the analysis"),
        )
    })?;
    warnings.extend(table.warnings.iter().cloned());
    for (s, name) in summaries.iter().zip(&names) {
        if s.n == 1 {
            warnings.push(format!(
                "level `{name}` has a single observation: it adds nothing to the error term, and its SD cannot be computed"
            ));
        }
    }
    let first_lines: Vec<usize> = match &raw {
        Some((_, lines)) => lines
            .iter()
            .map(|l| l.first().copied().unwrap_or(0))
            .collect(),
        None => vec![0; names.len()],
    };
    let named: Vec<(&str, usize)> = names.iter().map(String::as_str).zip(first_lines).collect();
    let rows = summaries.iter().map(|s| s.n).sum();
    warnings.extend(crate::data::levels::level_warnings(&factor, &named, rows));
    warnings.extend(exclusion_notes(&excluded, data_path));
    if let Some(r) = rounding {
        warnings.push(format!(
            "These results come from published summaries (n, mean and SD per level). Checks that need the raw observations (Brown-Forsythe, Levene, Shapiro-Wilk, outliers, ranks) could not be done. Rounding the summaries to their printed digits leaves F between {} and {} ({}).",
            crate::format::fixed(r.f_low, 2),
            crate::format::fixed(r.f_high, 2),
            p_range(r.p_low, r.p_high)
        ));
    }

    let nu = table.df_within as f64;
    let checks = match &raw {
        _ if spec.checks == CheckSet::Summary => Checks {
            by_request: true,
            ..summary_checks(&summaries, true)
        },
        Some((offsets, lines)) => {
            let offsets: Vec<&[f64]> = offsets.iter().map(Vec::as_slice).collect();
            let lines: Vec<&[usize]> = lines.iter().map(Vec::as_slice).collect();
            assumption_checks(
                &offsets,
                &summaries,
                &table,
                origin,
                &names,
                &lines,
                spec.checks.shown(),
            )
        }
        None => summary_checks(&summaries, spec.checks.shown()),
    };
    warnings.extend(checks.advice(spec.method, alpha, data_decimals));

    let welch = match spec.method {
        Omnibus::Welch => Some(welch_anova(&summaries).map_err(|i| {
            doc.error_at(spec.model.line, None, format!("Welch's ANOVA is undefined: level `{}` has fewer than two observations or no spread", names[i]))
                .hint("every level needs at least two differing values; use `method: anova` or `method: ranks`")
        })?),
        _ => None,
    };
    let kruskal = match (spec.method, &raw) {
        (Omnibus::Ranks, Some((offsets, _))) => {
            let offsets: Vec<&[f64]> = offsets.iter().map(Vec::as_slice).collect();
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
        (Omnibus::Ranks, None) => {
            return Err(doc
                .error_at(
                    spec.model.line,
                    None,
                    "Kruskal-Wallis needs the raw observations, not summaries",
                )
                .hint("use `method: anova` or `method: welch` with `input: summary`"));
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
    let levels: Vec<LevelResult> = summaries
        .iter()
        .zip(&names)
        .enumerate()
        .map(|(i, (s, name))| {
            let mean = origin + s.mean;
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
            let (q1, median, q3) = raw
                .as_ref()
                .map_or((f64::NAN, f64::NAN, f64::NAN), |(offsets, _)| {
                    quartiles(&offsets[i])
                });
            LevelResult {
                name: name.clone(),
                n: s.n,
                mean,
                sd: s.variance().sqrt(),
                se,
                ci_lower: mean - t * se,
                ci_upper: mean + t * se,
                median: origin + median,
                q1: origin + q1,
                q3: origin + q3,
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
            } else if levels.len() > MAX_COMPARED_LEVELS {
                warnings.push(format!(
                    "{} levels would give {} pairwise comparisons; sheaf compares at most {MAX_COMPARED_LEVELS} levels. Group the levels, or use `compare: none`.",
                    levels.len(),
                    levels.len() * (levels.len() - 1) / 2
                ));
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
        .unwrap_or((data_decimals + 1).min(6));
    // Only figures read the observations; without them the result (and the
    // cache entry) stays small whatever the number of rows.
    let (observations, observation_lines) = match raw {
        Some((offsets, lines)) if !spec.plots.kinds.is_empty() => (
            offsets
                .into_iter()
                .map(|g| g.into_iter().map(|y| origin + y).collect())
                .collect(),
            lines,
        ),
        _ => (Vec::new(), Vec::new()),
    };
    let (warnings, acknowledged) = split_acknowledged(warnings, &spec.acknowledge);
    Ok(AnovaResult {
        method: spec.method,
        checks,
        welch,
        kruskal,
        effect,
        ci_pooled: pooled,
        id: block.id.clone(),
        line: block.line,
        data: data_path.to_string(),
        response,
        factor,
        alpha,
        n: table.n,
        exclusions: excluded,
        table,
        levels,
        comparison,
        warnings,
        acknowledged,
        decimals,
        caption: spec.caption.clone(),
        order: spec.order,
        show: spec.show,
        observations,
        observation_lines,
        plots: spec.plots.clone(),
    })
}

fn formula_text(f: &crate::doc::formula::Formula) -> String {
    let terms: Vec<String> = f.terms.iter().map(|t| t.to_string()).collect();
    format!("{} ~ {}", f.response, terms.join(" + "))
}

/// Largest over smallest level SD (NaN when a level has none or no spread).
fn sd_ratio(summaries: &[GroupSummary]) -> f64 {
    let sds: Vec<f64> = summaries
        .iter()
        .map(|s| s.variance().sqrt())
        .filter(|v| v.is_finite())
        .collect();
    match (
        sds.iter().copied().fold(f64::NAN, f64::max),
        sds.iter().copied().fold(f64::NAN, f64::min),
    ) {
        (hi, lo) if lo > 0.0 => hi / lo,
        _ => f64::NAN,
    }
}

/// Checks possible from summaries alone: Bartlett and the SD ratio.
fn summary_checks(summaries: &[GroupSummary], shown: bool) -> Checks {
    let sd_ratio = sd_ratio(summaries);
    Checks {
        shown,
        brown_forsythe: None,
        levene: None,
        bartlett: bartlett(summaries),
        shapiro_wilk: Err(ShapiroWilkSkip::Summary),
        skewness: f64::NAN,
        excess_kurtosis: f64::NAN,
        sd_ratio,
        balanced: summaries.iter().all(|s| s.n == summaries[0].n),
        outlier_count: 0,
        outliers: Vec::new(),
        from_summary: true,
        by_request: false,
    }
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
    let sd_ratio = sd_ratio(summaries);
    let means: Vec<f64> = summaries.iter().map(|s| s.mean).collect();
    let found = outliers(offsets, &means, table.ms_within, table.df_within);
    let mut flagged: Vec<OutlierRow> = found
        .most_extreme
        .into_iter()
        .map(|o| OutlierRow {
            line: lines[o.level][o.index],
            level: names[o.level].clone(),
            value: origin + offsets[o.level][o.index],
            studentized_residual: o.studentized,
        })
        .collect();
    flagged.sort_by_key(|o| o.line);
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
        outlier_count: found.total,
        outliers: flagged,
        from_summary: false,
        by_request: false,
    }
}

/// The kind of a "check before use" note (a key of `NOTE_KINDS`), or
/// `planned` for rows the document itself left out; `None` for notes that
/// cannot be acknowledged.
pub fn note_kind(text: &str) -> Option<&'static str> {
    let starts = |p: &str| text.starts_with(p);
    let has = |p: &str| text.contains(p);
    Some(if has(" left out by the document (") {
        "planned"
    } else if has(" left out because a value was missing") {
        "missing"
    } else if starts("The data are unbalanced") {
        "unbalanced"
    } else if starts("The level variances differ")
        || starts("The variances differ")
        || starts("Levene's mean-centred test")
        || starts("The largest level SD")
    {
        "variances"
    } else if starts("The residuals depart") || starts("Shapiro-Wilk is not computed") {
        "normality"
    } else if starts("The observation on line")
        || has(" observations have a studentized residual beyond")
    {
        "outliers"
    } else if has(" interaction is significant at") {
        "interaction"
    } else if has(" of levels has no observations") || has(" of levels have no observations") {
        "empty-cells"
    } else if has("has a single observation") || starts("Some levels have fewer than five") {
        "small-levels"
    } else if starts("These results come from published summaries") {
        "summary"
    } else {
        return None;
    })
}

/// Splits notes into those still to check and those the author acknowledged
/// (listed kinds, and planned exclusions always).
pub(crate) fn split_acknowledged(
    notes: Vec<String>,
    kinds: &[String],
) -> (Vec<String>, Vec<String>) {
    notes.into_iter().partition(|n| match note_kind(n) {
        Some("planned") => false,
        Some(k) => !kinds.iter().any(|a| a == k),
        None => true,
    })
}

/// "p between 0.012 and 0.031", or one phrase when both ends print alike
/// ("p < 0.001 throughout").
pub(crate) fn p_range(low: f64, high: f64) -> String {
    let (a, b) = (crate::format::p_value(low), crate::format::p_value(high));
    if a == b {
        format!("{} throughout", crate::format::p_phrase(low))
    } else {
        format!("p between {a} and {b}")
    }
}

impl Checks {
    /// When only the mean-centred Levene test rejects equal variances: say so,
    /// with both p-values, and what that means for the F tests.
    pub fn levene_only_note(&self, alpha: f64) -> Option<String> {
        let p3 = crate::format::p_phrase;
        let levene = self.levene.filter(|t| t.p < alpha)?;
        let bf = self.brown_forsythe.filter(|t| t.p >= alpha)?;
        Some(format!(
            "Levene's mean-centred test finds unequal variances ({}), but the median-centred Brown-Forsythe test, which is less swayed by skewed or heavy-tailed data, does not ({}): the evidence against equal variances is weak. Compare the spread of the groups before relying on the pooled error mean square.",
            p3(levene.p),
            p3(bf.p)
        ))
    }

    /// Plain-language advice when a check fails at α, naming the key that
    /// switches to the alternative. The declared method is never changed.
    /// `decimals` is the data's own precision, for quoting values.
    pub fn advice(&self, method: Omnibus, alpha: f64, decimals: u32) -> Vec<String> {
        let mut out = Vec::new();
        let p3 = crate::format::p_phrase;
        if method == Omnibus::Anova {
            if let Some(bf) = self.brown_forsythe.filter(|t| t.p < alpha) {
                out.push(format!(
                    "The level variances differ (Brown-Forsythe {}). The F test and pooled comparisons assume equal variances; consider `method: welch` (Welch's ANOVA with Games-Howell comparisons).",
                    p3(bf.p)
                ));
            } else if let Some(text) = self.levene_only_note(alpha) {
                out.push(format!(
                    "{text} If in doubt, `method: welch` gives Welch's ANOVA with Games-Howell comparisons."
                ));
            } else if self.sd_ratio > 2.0 && !self.balanced {
                out.push(format!(
                    "The largest level SD is {} times the smallest, with unequal group sizes; the F test can mislead there. Consider `method: welch`.",
                    crate::format::fixed(self.sd_ratio, 1)
                ));
            }
        }
        if method != Omnibus::Ranks
            && let Ok(sw) = self.shapiro_wilk.as_ref()
            && sw.p < alpha
        {
            out.push(format!(
                        "The residuals depart from a normal distribution (Shapiro-Wilk W = {}, {}). Look at how they depart; consider a transformation of the response, or `method: ranks` (Kruskal-Wallis with Dunn's comparisons).",
                        crate::format::fixed(sw.w, 3),
                        p3(sw.p)
                    ));
        }
        if let Err(ShapiroWilkSkip::TooMany) = self.shapiro_wilk {
            out.push("Shapiro-Wilk is not computed above 5,000 residuals (outside the range of Royston's approximation); judge normality from skewness, kurtosis and a Q-Q plot.".into());
        }
        out.extend(self.outlier_advice(decimals));
        out
    }

    /// One note per flagged observation when there are few; otherwise one
    /// note with the count and the most extreme few, so that the advice
    /// (printed on the terminal and boxed in the report) never grows with
    /// the number of rows.
    pub fn outlier_advice(&self, decimals: u32) -> Vec<String> {
        let describe = |o: &OutlierRow| {
            format!(
                "line {} (level `{}`, value {}, studentized residual {})",
                o.line,
                o.level,
                crate::format::fixed(o.value, decimals),
                crate::format::fixed(o.studentized_residual, 2)
            )
        };
        if self.outlier_count <= OUTLIERS_LISTED {
            return self
                .outliers
                .iter()
                .map(|o| {
                    format!(
                        "The observation on {} is beyond ±{OUTLIER_THRESHOLD}; check it against the records. Flagging excludes nothing.",
                        describe(o)
                    )
                })
                .collect();
        }
        let worst: Vec<String> = most_extreme(&self.outliers, OUTLIERS_LISTED)
            .into_iter()
            .map(describe)
            .collect();
        vec![format!(
            "{} observations have a studentized residual beyond ±{OUTLIER_THRESHOLD}; the {OUTLIERS_LISTED} most extreme are on {}. Check them against the records; the results file lists the {} most extreme. Flagging excludes nothing; with this many, look at the distribution of the residuals (a transformation of the response, or `method: ranks`) rather than at single observations.",
            crate::format::count(self.outlier_count),
            worst.join("; "),
            self.outliers.len()
        )]
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
            if alpha < DUNNETT_MIN_ALPHA {
                return Err(doc
                    .error_at(
                        c.line,
                        Some(c.column),
                        format!("Dunnett's critical value is accurate only for alpha of at least {DUNNETT_MIN_ALPHA:e}; alpha here is {alpha:e}"),
                    )
                    .hint("its tail is found as 1 − cdf, which cannot resolve a smaller alpha: use a larger alpha, or `compare: tukey`, whose tail is computed directly down to 1e-300"));
            }
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
