//! Analysis block specifications: the keys of an `anova` block, checked and
//! typed, each remembering its document line.

use super::block_checks;
pub use super::block_keys::{ANOVA, AnovaDraft};
use super::formula::Formula;
use super::keyvalue::Entry;
use crate::data::{CsvFormat, RowRules, SummaryColumns};
use crate::stats::compare::Method;
use crate::stats::dunnett::Sides;
use crate::stats::linear::SsType;

/// The block kinds sheaf knows. A fenced block with any other info string is
/// ordinary code.
pub const BLOCK_KINDS: [&str; 2] = ["anova", "power"];

/// Kinds of "check before use" note an author can acknowledge with
/// `acknowledge:`, and what each covers. Planned exclusions (`where`,
/// `exclude`) count as acknowledged without being listed.
pub const NOTE_KINDS: [(&str, &str); 11] = [
    ("missing", "rows left out because a value was missing"),
    ("unbalanced", "unbalanced data: the SS types differ"),
    ("variances", "unequal variances among levels or cells"),
    (
        "normality",
        "residuals that depart from a normal distribution",
    ),
    (
        "outliers",
        "observations flagged beyond ±3 studentized residuals",
    ),
    (
        "interaction",
        "a significant interaction under main-effect comparisons",
    ),
    ("empty-cells", "combinations of levels without observations"),
    ("small-levels", "levels with one or few observations"),
    ("summary", "results computed from published summaries"),
    (
        "slopes",
        "a covariate's slope that differs among the groups",
    ),
    (
        "covariate",
        "a covariate that differs among the groups, or adjusted means outside a group's covariate range",
    ),
];

/// A value with the document line (and value column) it came from.
#[derive(Debug, Clone, PartialEq)]
pub struct Located<T> {
    pub value: T,
    pub line: usize,
    pub column: usize,
}

/// How the denominator degrees of freedom of a mixed model's tests are
/// approximated.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, serde::Serialize, serde::Deserialize)]
pub enum DdfMethod {
    /// Kenward and Roger (1997): inflated covariance and moment-matched df.
    #[default]
    KenwardRoger,
    /// Satterthwaite (1946) df from the covariance of the variance estimates.
    Satterthwaite,
}

impl DdfMethod {
    /// The name used in block keys and the results file.
    pub fn key(self) -> &'static str {
        match self {
            DdfMethod::KenwardRoger => "kenward-roger",
            DdfMethod::Satterthwaite => "satterthwaite",
        }
    }
}

/// The omnibus test of a block.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum Omnibus {
    /// The classical F test with a pooled error term.
    Anova,
    /// Welch's heteroscedastic F (with Games-Howell comparisons).
    Welch,
    /// Kruskal-Wallis on ranks (with Dunn's comparisons).
    Ranks,
}

impl Omnibus {
    pub fn key(self) -> &'static str {
        match self {
            Omnibus::Anova => "anova",
            Omnibus::Welch => "welch",
            Omnibus::Ranks => "ranks",
        }
    }
}

/// A figure kind, as written in `plot`.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum PlotKind {
    Box,
    Means,
    Strip,
    Interaction,
    Residuals,
    Qq,
    /// Repeated measures: the means at each occasion with their intervals,
    /// a line per between-subject group.
    Profile,
    /// The profile with each subject's observations as a faint line.
    Subjects,
    /// A quantitative factor's means at their values, with the fitted
    /// trend (`trend`).
    Trend,
    /// The means in dose order against the control's, with the doses that
    /// have an effect marked (`noec`).
    Doses,
    /// Each comparison's equivalence interval against the margins (`margin`).
    Equivalence,
}

impl PlotKind {
    pub const ALL: [PlotKind; 11] = [
        PlotKind::Box,
        PlotKind::Means,
        PlotKind::Strip,
        PlotKind::Interaction,
        PlotKind::Residuals,
        PlotKind::Qq,
        PlotKind::Profile,
        PlotKind::Subjects,
        PlotKind::Trend,
        PlotKind::Doses,
        PlotKind::Equivalence,
    ];

    pub fn key(self) -> &'static str {
        match self {
            PlotKind::Box => "box",
            PlotKind::Means => "means",
            PlotKind::Strip => "strip",
            PlotKind::Interaction => "interaction",
            PlotKind::Residuals => "residuals",
            PlotKind::Qq => "qq",
            PlotKind::Profile => "profile",
            PlotKind::Subjects => "subjects",
            PlotKind::Trend => "trend",
            PlotKind::Doses => "doses",
            PlotKind::Equivalence => "equivalence",
        }
    }
}

/// The figures a block draws and their axis settings.
#[derive(Debug, Clone, PartialEq, Default, serde::Serialize, serde::Deserialize)]
pub struct PlotSpec {
    pub kinds: Vec<PlotKind>,
    /// Axis title for the response (default: the column name).
    pub label: Option<String>,
    pub unit: Option<String>,
    /// A horizontal reference line.
    pub reference: Option<f64>,
    /// Display names for the response and factors (`names`): (column, as shown).
    #[serde(default)]
    pub names: Vec<(String, String)>,
    /// The factor on the x axis of interaction plots (`x_axis`).
    #[serde(default)]
    pub x_axis: Option<String>,
}

impl PlotSpec {
    /// A factor's or the response's name as the report shows it.
    pub fn display<'a>(&'a self, column: &'a str) -> &'a str {
        self.names
            .iter()
            .find(|(c, _)| c == column)
            .map_or(column, |(_, shown)| shown.as_str())
    }
}

/// Row order of the level-means table.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum Order {
    /// Highest mean first (matches the letter convention).
    Mean,
    /// The order of `levels`, or of first appearance in the data.
    Levels,
}

/// Which tables a block shows.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub struct Show {
    pub anova: bool,
    pub means: bool,
    pub pairs: bool,
}

/// `cells`: how the cell means of a factorial block are compared.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum CellComparison {
    No,
    /// The design's usual display: one letter set over all cells, except
    /// for two factors with random terms, where letters run within rows
    /// (lowercase) and within columns (uppercase), each with its own error.
    Yes,
    /// One letter set over all cells, whatever the design.
    All,
}

impl CellComparison {
    pub fn wanted(self) -> bool {
        self != CellComparison::No
    }
}

/// `checks`: which assumption checks a block computes, and whether the
/// table is shown.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum CheckSet {
    /// Every check, shown (the default).
    All,
    /// Every check, in the results file only.
    Hidden,
    /// Only what per-level summaries allow (Bartlett, the SD ratio): no raw
    /// value is kept, so a large file is read in memory proportional to its
    /// number of levels.
    Summary,
}

impl CheckSet {
    pub fn shown(self) -> bool {
        self != CheckSet::Hidden
    }
}

/// A checked `anova` block.
#[derive(Debug, Clone, PartialEq)]
pub struct AnovaSpec {
    pub id: Option<Located<String>>,
    pub data: Located<String>,
    pub model: Located<Formula>,
    /// `None` when `compare: none`.
    pub compare: Option<Method>,
    pub alpha: Option<f64>,
    pub levels: Option<Located<Vec<String>>>,
    pub caption: Option<String>,
    pub decimals: Option<u32>,
    pub csv: CsvFormat,
    /// Fisher's protection for LSD: declare pairs only after a significant F.
    pub protected: bool,
    pub order: Order,
    pub show: Show,
    pub method: Omnibus,
    /// Which assumption checks are computed and whether they are shown.
    pub checks: CheckSet,
    /// The control level for Dunnett's comparisons.
    pub control: Option<Located<String>>,
    pub sides: Sides,
    /// Adjustment of Dunn's p-values: Holm (default) or Bonferroni.
    pub adjust: Method,
    /// `input: summary`: the data file holds n, mean and SD per level.
    pub summary: Option<SummaryColumns>,
    /// `query`: the SQL file that computed the summary file (provenance).
    pub query: Option<Located<String>>,
    /// Factorial designs: the sums-of-squares type (default III).
    pub ss_type: Option<Located<SsType>>,
    /// Factorial designs: the main effects whose levels are compared.
    pub compare_terms: Option<Located<Vec<String>>>,
    /// Factorial designs: compare within each level of this factor (simple effects).
    pub within: Option<Located<String>>,
    /// Factorial designs: whether and how the cell means are compared.
    pub cells: Option<Located<CellComparison>>,
    /// A polynomial trend over a quantitative factor's levels.
    pub trend: Option<super::block_trend::TrendSpec>,
    /// Dose-response tests for the NOEC and LOEC (`noec`, `doses`).
    pub dose: Option<super::block_dose::DoseSpec>,
    /// Planned contrasts among one factor's levels, and their adjustment.
    pub contrasts: Vec<super::block_contrasts::ContrastSpec>,
    pub contrast_adjust: super::block_contrasts::ContrastAdjust,
    /// Covariates: numeric columns entering the model as straight lines
    /// (each also a term of `model`, added first where not written).
    pub covariates: Option<Located<Vec<String>>>,
    /// The transformation the analysis runs on (`transform`), with any
    /// declared offset; `None` for the data's own scale.
    pub transform: Option<Located<crate::stats::transform::Declared>>,
    /// `transform: boxcox`: report the Box-Cox profile of the model.
    pub box_cox: bool,
    /// Equivalence of each level with the control (`margin`, `claim`).
    pub equivalence: Option<super::block_equivalence::EquivalenceSpec>,
    /// Blocking factors: reported in the table, never compared.
    pub blocks: Option<Located<Vec<String>>>,
    /// Random terms (the unit structure): blocks, whole plots, batches.
    pub random: Option<Located<Vec<super::formula::Term>>>,
    /// The column naming the unit measured repeatedly (`subject`); it is
    /// also the block's random term.
    pub subject: Option<Located<String>>,
    /// The error structure over the repeated factor (`covariance`); without
    /// it the subject is a random term.
    pub covariance: Option<Located<super::block_covariance::Covariance>>,
    /// Denominator df of a mixed model's tests.
    pub ddf: DdfMethod,
    pub plots: PlotSpec,
    /// Row rules: wide layout, `where` filters, `exclude` lines.
    pub rows: RowRules,
    /// Display names for levels: (as in the data, as shown).
    pub labels: Vec<(String, String)>,
    /// Where `labels` was written (line and value column), for messages.
    pub labels_at: Option<(usize, usize)>,
    /// Spreadsheet input: the sheet (default the first) and a cell range.
    pub sheet: Option<String>,
    pub range: Option<String>,
    /// Kinds of note (from `NOTE_KINDS`) the author has dealt with.
    pub acknowledge: Vec<String>,
}

/// A problem with one key, at its line and column.
#[derive(Debug, Clone, PartialEq)]
pub struct SpecError {
    pub line: usize,
    pub column: usize,
    pub message: String,
    pub hint: Option<String>,
}

pub(super) fn bad(entry: &Entry, message: String, hint: impl Into<String>) -> SpecError {
    SpecError {
        line: entry.line,
        column: entry.value_column,
        message,
        hint: Some(hint.into()),
    }
}

/// The value `entry` names among `choices` (each with its spellings, in
/// lower case); otherwise "unknown {what} `value`" with `hint`.
pub(super) fn one_of<T: Copy>(
    entry: &Entry,
    what: &str,
    choices: &[(&[&str], T)],
    hint: &str,
) -> Result<T, SpecError> {
    let v = entry.value.to_ascii_lowercase();
    choices
        .iter()
        .find(|(names, _)| names.contains(&v.as_str()))
        .map(|(_, t)| *t)
        .ok_or_else(|| bad(entry, format!("unknown {what} `{}`", entry.value), hint))
}

/// Document-wide defaults a block falls back on.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Defaults {
    pub compare: Option<Method>,
}

/// Reads a block `id`: a letter, then letters, digits and `_`, so that prose
/// can write `{{ id.f }}`.
pub fn parse_id(e: &Entry) -> Result<Located<String>, SpecError> {
    let mut chars = e.value.chars();
    let ok = chars.next().is_some_and(|c| c.is_ascii_alphabetic())
        && chars.all(|c| c.is_ascii_alphanumeric() || c == '_');
    if !ok {
        return Err(bad(
            e,
            format!("`{}` is not a usable id", e.value),
            "an id starts with a letter and has only letters, digits and `_`, so prose can write {{ id.f }}",
        ));
    }
    Ok(Located {
        value: e.value.clone(),
        line: e.line,
        column: e.value_column,
    })
}

/// Reads an `alpha` value: a probability strictly between 0 and 1.
pub fn parse_alpha(entry: &Entry) -> Result<f64, SpecError> {
    match entry.value.parse::<f64>() {
        Ok(a) if a > 0.0 && a < 1.0 => Ok(a),
        _ => Err(bad(
            entry,
            format!(
                "`alpha` must be a number between 0 and 1, found `{}`",
                entry.value
            ),
            "for example `alpha: 0.05`",
        )),
    }
}

/// Reads a `decimals` value: 0 to 12 digits.
pub fn parse_decimals(entry: &Entry) -> Result<u32, SpecError> {
    match entry.value.parse::<u32>() {
        Ok(d) if d <= 12 => Ok(d),
        _ => Err(bad(
            entry,
            format!(
                "`decimals` must be a whole number from 0 to 12, found `{}`",
                entry.value
            ),
            "for example `decimals: 2`",
        )),
    }
}

/// Every procedure `compare` accepts, by its key.
pub const COMPARE_METHODS: [Method; 11] = [
    Method::Tukey,
    Method::Lsd,
    Method::Bonferroni,
    Method::Holm,
    Method::Scheffe,
    Method::Sidak,
    Method::Dunnett,
    Method::GamesHowell,
    Method::Dunn,
    Method::Nemenyi,
    Method::ConoverFriedman,
];

/// Reads a comparison procedure name.
pub fn parse_compare(entry: &Entry) -> Result<Option<Method>, SpecError> {
    let v = entry.value.to_ascii_lowercase();
    if v == "none" {
        return Ok(None);
    }
    if let Some(m) = COMPARE_METHODS.iter().find(|m| m.key() == v) {
        return Ok(Some(*m));
    }
    let mut names: Vec<&str> = COMPARE_METHODS.iter().map(|m| m.key()).collect();
    names.push("none");
    let listed = names.join(", ");
    let hint = match crate::diag::nearest(&v, names.iter().copied()) {
        Some(n) => format!("did you mean `{n}`? The choices are {listed}"),
        None => format!("the choices are {listed}"),
    };
    Err(bad(
        entry,
        format!("unknown comparison procedure `{}`", entry.value),
        hint,
    ))
}

pub(super) fn parse_yes_no(entry: &Entry) -> Result<bool, SpecError> {
    match entry.value.to_ascii_lowercase().as_str() {
        "yes" | "true" | "on" => Ok(true),
        "no" | "false" | "off" => Ok(false),
        _ => Err(bad(
            entry,
            format!("`{}` must be yes or no, found `{}`", entry.key, entry.value),
            "write `yes` or `no`",
        )),
    }
}

pub(super) fn list(value: &str) -> Vec<String> {
    value
        .split(',')
        .map(|s| s.trim().to_string())
        .filter(|s| !s.is_empty())
        .collect()
}

/// Checks an `anova` block's entries. `fence_line` is the opening fence's
/// line. Each key is read by its handler in the table `ANOVA`, then the keys
/// are checked against each other; every problem is returned.
pub fn anova_spec(
    entries: &[Entry],
    fence_line: usize,
    defaults: Defaults,
) -> Result<AnovaSpec, Vec<SpecError>> {
    let mut draft = AnovaDraft::default();
    let errors = ANOVA.apply(entries, &mut draft);
    if !errors.is_empty() {
        return Err(errors);
    }
    block_checks::resolve(draft, fence_line, defaults)
}

#[cfg(test)]
#[path = "block_tests.rs"]
mod tests;
