//! Analysis block specifications: the keys of an `anova` block, checked and
//! typed, each remembering its document line.

use super::formula::{Formula, parse_formula};
use super::keyvalue::Entry;
use crate::data::{CsvFormat, DEFAULT_MISSING, Filter, RowRules, SummaryColumns};
use crate::stats::compare::Method;
use crate::stats::dunnett::Sides;
use crate::stats::linear::SsType;

/// The block kinds sheaf knows. A fenced block with any other info string is
/// ordinary code.
pub const BLOCK_KINDS: [&str; 2] = ["anova", "power"];

/// Every key an `anova` block accepts.
pub const ANOVA_KEYS: [&str; 39] = [
    "id",
    "data",
    "model",
    "compare",
    "alpha",
    "levels",
    "caption",
    "decimals",
    "delimiter",
    "decimal",
    "missing",
    "protected",
    "order",
    "show",
    "method",
    "checks",
    "control",
    "sides",
    "adjust",
    "input",
    "columns",
    "ss",
    "compare_term",
    "within",
    "cells",
    "block",
    "plot",
    "label",
    "unit",
    "reference",
    "layout",
    "where",
    "exclude",
    "labels",
    "sheet",
    "range",
    "acknowledge",
    "names",
    "x_axis",
];

/// Kinds of "check before use" note an author can acknowledge with
/// `acknowledge:`, and what each covers. Planned exclusions (`where`,
/// `exclude`) count as acknowledged without being listed.
pub const NOTE_KINDS: [(&str, &str); 9] = [
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
];

/// A value with the document line (and value column) it came from.
#[derive(Debug, Clone, PartialEq)]
pub struct Located<T> {
    pub value: T,
    pub line: usize,
    pub column: usize,
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
}

impl PlotKind {
    pub const ALL: [PlotKind; 6] = [
        PlotKind::Box,
        PlotKind::Means,
        PlotKind::Strip,
        PlotKind::Interaction,
        PlotKind::Residuals,
        PlotKind::Qq,
    ];

    pub fn key(self) -> &'static str {
        match self {
            PlotKind::Box => "box",
            PlotKind::Means => "means",
            PlotKind::Strip => "strip",
            PlotKind::Interaction => "interaction",
            PlotKind::Residuals => "residuals",
            PlotKind::Qq => "qq",
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
    /// Factorial designs: the sums-of-squares type (default III).
    pub ss_type: Option<Located<SsType>>,
    /// Factorial designs: the main effects whose levels are compared.
    pub compare_terms: Option<Located<Vec<String>>>,
    /// Factorial designs: compare within each level of this factor (simple effects).
    pub within: Option<Located<String>>,
    /// Factorial designs: compare all cell means with one letter set.
    pub cells: Option<Located<bool>>,
    /// Blocking factors: reported in the table, never compared.
    pub blocks: Option<Located<Vec<String>>>,
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

fn bad(entry: &Entry, message: String, hint: impl Into<String>) -> SpecError {
    SpecError {
        line: entry.line,
        column: entry.value_column,
        message,
        hint: Some(hint.into()),
    }
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
pub const COMPARE_METHODS: [Method; 9] = [
    Method::Tukey,
    Method::Lsd,
    Method::Bonferroni,
    Method::Holm,
    Method::Scheffe,
    Method::Sidak,
    Method::Dunnett,
    Method::GamesHowell,
    Method::Dunn,
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

/// Reads `columns: n = plots, mean = yield, sd = sd_yield` (or `se = …`).
fn summary_columns(entry: Option<&Entry>) -> Result<SummaryColumns, SpecError> {
    let mut c = SummaryColumns {
        n: "n".into(),
        mean: "mean".into(),
        spread: "sd".into(),
        spread_is_se: false,
    };
    let Some(e) = entry else {
        return Ok(c);
    };
    for part in list(&e.value) {
        let Some((key, column)) = part.split_once('=') else {
            return Err(bad(
                e,
                format!("expected `name = column`, found `{part}`"),
                "for example `columns: n = plots, mean = yield, sd = yield_sd`",
            ));
        };
        let column = column.trim().to_string();
        match key.trim().to_ascii_lowercase().as_str() {
            "n" => c.n = column,
            "mean" => c.mean = column,
            "sd" => {
                c.spread = column;
                c.spread_is_se = false;
            }
            "se" => {
                c.spread = column;
                c.spread_is_se = true;
            }
            other => {
                return Err(bad(
                    e,
                    format!("unknown summary column `{other}`"),
                    "name the columns for n, mean, and sd (or se)",
                ));
            }
        }
    }
    Ok(c)
}

fn parse_yes_no(entry: &Entry) -> Result<bool, SpecError> {
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

fn list(value: &str) -> Vec<String> {
    value
        .split(',')
        .map(|s| s.trim().to_string())
        .filter(|s| !s.is_empty())
        .collect()
}

/// Whether a `where` condition joins two comparisons with `or` (a value that
/// is itself the word "or", as in `state == or`, is not a join).
fn joins_with_or(part: &str) -> bool {
    let lower = part.to_ascii_lowercase();
    let is_comparison = |s: &str| ["==", "!=", "<", ">"].iter().any(|op| s.contains(op));
    lower
        .match_indices(" or ")
        .any(|(i, _)| is_comparison(&lower[..i]) && is_comparison(&lower[i + 4..]))
}

/// Checks an `anova` block's entries. `fence_line` is the opening fence's line.
pub fn anova_spec(
    entries: &[Entry],
    fence_line: usize,
    defaults: Defaults,
) -> Result<AnovaSpec, SpecError> {
    for e in entries {
        if !ANOVA_KEYS.contains(&e.key.as_str()) {
            let hint = match crate::diag::nearest(&e.key, ANOVA_KEYS) {
                Some(k) => format!("did you mean `{k}`?"),
                None => format!("an anova block takes {}", ANOVA_KEYS.join(", ")),
            };
            return Err(SpecError {
                line: e.line,
                column: e.key_column,
                message: format!("unknown key `{}`", e.key),
                hint: Some(hint),
            });
        }
    }
    let get = |key: &str| entries.iter().find(|e| e.key == key);
    let required = |key: &str, example: &str| {
        get(key).ok_or_else(|| SpecError {
            line: fence_line,
            column: 1,
            message: format!("this anova block has no `{key}`"),
            hint: Some(format!("add a line such as `{example}`")),
        })
    };
    let located = |e: &Entry| Located {
        value: e.value.clone(),
        line: e.line,
        column: e.value_column,
    };

    let id = get("id").map(parse_id).transpose()?;
    let data_entry = required("data", "data: plants.csv")?;
    if data_entry.value.is_empty() {
        return Err(bad(
            data_entry,
            "`data` is empty".into(),
            "name a CSV file relative to the document's folder",
        ));
    }
    let model_entry = required("model", "model: weight ~ group")?;
    let formula = parse_formula(&model_entry.value).map_err(|e| SpecError {
        line: model_entry.line,
        column: model_entry.value_column + e.offset,
        message: e.message,
        hint: Some(e.hint),
    })?;
    let method = match get("method") {
        None => Omnibus::Anova,
        Some(e) => match e.value.to_ascii_lowercase().as_str() {
            "anova" => Omnibus::Anova,
            "welch" => Omnibus::Welch,
            "ranks" | "kruskal" => Omnibus::Ranks,
            _ => {
                return Err(bad(
                    e,
                    format!("unknown method `{}`", e.value),
                    "write `anova` (the F test), `welch` (unequal variances) or `ranks` (Kruskal-Wallis)",
                ));
            }
        },
    };
    // Each omnibus test has the comparison procedures that share its assumptions.
    let compare = match (get("compare"), method) {
        (Some(e), _) => {
            let chosen = parse_compare(e)?;
            let fits = match (method, chosen) {
                (_, None) => true,
                (Omnibus::Welch, Some(m)) => m == Method::GamesHowell,
                (Omnibus::Ranks, Some(m)) => m == Method::Dunn,
                (Omnibus::Anova, Some(m)) => !matches!(m, Method::GamesHowell | Method::Dunn),
            };
            if !fits {
                let hint = match method {
                    Omnibus::Welch => "with `method: welch` use `compare: games-howell` (or none)",
                    Omnibus::Ranks => "with `method: ranks` use `compare: dunn` (or none)",
                    Omnibus::Anova => {
                        "Games-Howell goes with `method: welch`, Dunn with `method: ranks`"
                    }
                };
                return Err(bad(
                    e,
                    format!(
                        "`compare: {}` does not fit `method: {}`",
                        e.value,
                        method.key()
                    ),
                    hint,
                ));
            }
            chosen
        }
        (None, Omnibus::Welch) => Some(Method::GamesHowell),
        (None, Omnibus::Ranks) => Some(Method::Dunn),
        (None, Omnibus::Anova) => defaults.compare,
    };
    let alpha = get("alpha").map(parse_alpha).transpose()?;
    let decimals = get("decimals").map(parse_decimals).transpose()?;
    let levels = match get("levels") {
        Some(e) => {
            let names = list(&e.value);
            if names.len() < 2 {
                return Err(bad(
                    e,
                    "`levels` must list at least two levels".into(),
                    "separate level names with commas: `levels: ctrl, trt1, trt2`",
                ));
            }
            if let Some(dup) = names
                .iter()
                .enumerate()
                .find(|(i, n)| names[..*i].contains(n))
                .map(|(_, n)| n)
            {
                return Err(bad(
                    e,
                    format!("`levels` lists `{dup}` twice"),
                    "list each level once",
                ));
            }
            Some(Located {
                value: names,
                line: e.line,
                column: e.value_column,
            })
        }
        None => None,
    };
    let mut csv = CsvFormat::default();
    if let Some(e) = get("delimiter") {
        csv.delimiter = match e.value.to_ascii_lowercase().as_str() {
            "comma" | "," => b',',
            "semicolon" | ";" => b';',
            "tab" | "\\t" => b'\t',
            _ => {
                return Err(bad(
                    e,
                    format!("unknown delimiter `{}`", e.value),
                    "write `comma`, `semicolon` or `tab`",
                ));
            }
        };
    }
    if let Some(e) = get("decimal") {
        csv.decimal_comma = match e.value.to_ascii_lowercase().as_str() {
            "comma" | "," => true,
            "point" | "dot" | "." => false,
            _ => {
                return Err(bad(
                    e,
                    format!("unknown decimal mark `{}`", e.value),
                    "write `point` or `comma`",
                ));
            }
        };
        if csv.decimal_comma && csv.delimiter == b',' {
            return Err(bad(
                e,
                "a decimal comma needs another field delimiter".into(),
                "add `delimiter: semicolon` (or tab)",
            ));
        }
    }
    if let Some(e) = get("missing") {
        csv.missing = e.value.split(',').map(|s| s.trim().to_string()).collect();
        if !csv.missing.iter().any(String::is_empty) {
            csv.missing.push(String::new());
        }
    } else {
        csv.missing = DEFAULT_MISSING.iter().map(|s| s.to_string()).collect();
    }
    let protected = get("protected")
        .map(parse_yes_no)
        .transpose()?
        .unwrap_or(true);
    if let Some(e) = get("protected")
        && compare != Some(Method::Lsd)
    {
        return Err(bad(
            e,
            "`protected` applies only to `compare: lsd`".into(),
            "remove it, or choose `compare: lsd`",
        ));
    }
    let order = match get("order") {
        None => Order::Mean,
        Some(e) => match e.value.to_ascii_lowercase().as_str() {
            "mean" | "means" => Order::Mean,
            "levels" | "data" => Order::Levels,
            _ => {
                return Err(bad(
                    e,
                    format!("unknown order `{}`", e.value),
                    "write `mean` (highest first) or `levels` (as listed or as in the data)",
                ));
            }
        },
    };
    let show = match get("show") {
        None => Show {
            anova: true,
            means: true,
            pairs: true,
        },
        Some(e) => {
            let mut s = Show {
                anova: false,
                means: false,
                pairs: false,
            };
            for item in list(&e.value) {
                match item.as_str() {
                    "anova" => s.anova = true,
                    "means" => s.means = true,
                    "pairs" => s.pairs = true,
                    "none" => {}
                    other => {
                        let hint = match crate::diag::nearest(other, ["anova", "means", "pairs", "none"]) {
                            Some(n) => format!("did you mean `{n}`? Choose from anova, means, pairs, or none"),
                            None => "choose from anova, means, pairs, or none (prose can still quote the results)".into(),
                        };
                        return Err(bad(e, format!("unknown table `{other}` in `show`"), hint));
                    }
                }
            }
            s
        }
    };
    let checks = match get("checks") {
        None => CheckSet::All,
        Some(e) => match e.value.to_ascii_lowercase().as_str() {
            "all" | "yes" | "show" => CheckSet::All,
            "none" | "no" | "hide" => CheckSet::Hidden,
            "summary" => CheckSet::Summary,
            _ => {
                return Err(bad(
                    e,
                    format!("unknown `checks` value `{}`", e.value),
                    "write `all` (the default), `none` to hide the table (the checks stay in the results file), or `summary` for only the checks per-level summaries allow",
                ));
            }
        },
    };
    let control = get("control").map(located);
    if compare == Some(Method::Dunnett) && control.is_none() {
        let e = get("compare").map_or(fence_line, |e| e.line);
        return Err(SpecError {
            line: e,
            column: 1,
            message: "Dunnett's comparisons need a control level".into(),
            hint: Some("add `control: <level>`, the level every treatment is compared with".into()),
        });
    }
    if let Some(e) = get("control")
        && compare != Some(Method::Dunnett)
    {
        return Err(bad(
            e,
            "`control` applies only to `compare: dunnett`".into(),
            "remove it, or choose `compare: dunnett`",
        ));
    }
    let sides = match get("sides") {
        None => Sides::Two,
        Some(e) => {
            if compare != Some(Method::Dunnett) {
                return Err(bad(
                    e,
                    "`sides` applies only to `compare: dunnett`".into(),
                    "the other procedures are two-sided",
                ));
            }
            match e.value.to_ascii_lowercase().as_str() {
                "2" | "two" | "both" => Sides::Two,
                "1" | "greater" | "above" => Sides::Greater,
                "less" | "below" => Sides::Less,
                _ => {
                    return Err(bad(
                        e,
                        format!("unknown `sides` value `{}`", e.value),
                        "write `2` (two-sided), `1` or `greater` (treatments above the control), or `less`",
                    ));
                }
            }
        }
    };
    let adjust = match get("adjust") {
        None => Method::Holm,
        Some(e) => {
            if compare != Some(Method::Dunn) {
                return Err(bad(
                    e,
                    "`adjust` applies only to `compare: dunn`".into(),
                    "the other procedures carry their own adjustment",
                ));
            }
            match e.value.to_ascii_lowercase().as_str() {
                "holm" => Method::Holm,
                "bonferroni" => Method::Bonferroni,
                _ => {
                    return Err(bad(
                        e,
                        format!("unknown adjustment `{}`", e.value),
                        "write `holm` (the default) or `bonferroni`",
                    ));
                }
            }
        }
    };
    let summary = match get("input").map(|e| (e, e.value.to_ascii_lowercase())) {
        None => None,
        Some((_, v)) if v == "raw" => None,
        Some((_, v)) if v == "summary" => Some(summary_columns(get("columns"))?),
        Some((e, _)) => {
            return Err(bad(
                e,
                format!("unknown input `{}`", e.value),
                "write `raw` (one row per observation, the default) or `summary` (n, mean and SD per level)",
            ));
        }
    };
    if summary.is_none()
        && let Some(e) = get("columns")
    {
        return Err(bad(
            e,
            "`columns` applies only to `input: summary`".into(),
            "add `input: summary`, or remove `columns`",
        ));
    }
    let ss_type = match get("ss") {
        None => None,
        Some(e) => Some(Located {
            value: match e.value.trim().to_ascii_uppercase().as_str() {
                "1" | "I" => SsType::I,
                "2" | "II" => SsType::II,
                "3" | "III" => SsType::III,
                _ => {
                    return Err(bad(
                        e,
                        format!("unknown sums-of-squares type `{}`", e.value),
                        "write 1 (sequential), 2 or 3",
                    ));
                }
            },
            line: e.line,
            column: e.value_column,
        }),
    };
    let named_list = |key: &str| {
        get(key).map(|e| Located {
            value: list(&e.value),
            line: e.line,
            column: e.value_column,
        })
    };
    let cells = match get("cells") {
        None => None,
        Some(e) => Some(Located {
            value: parse_yes_no(e)?,
            line: e.line,
            column: e.value_column,
        }),
    };
    let factor_count = formula.factors().len();
    for key in ["ss", "compare_term", "within", "cells"] {
        if let (Some(e), true) = (get(key), factor_count < 2) {
            return Err(bad(
                e,
                format!("`{key}` applies to models with two or more factors"),
                "write the model as `y ~ A * B` (or `y ~ treatment + block`), or remove the key",
            ));
        }
    }
    let mut plots = PlotSpec {
        kinds: Vec::new(),
        label: get("label").map(|e| e.value.clone()),
        unit: get("unit").map(|e| e.value.clone()),
        reference: None,
        names: Vec::new(),
        x_axis: None,
    };
    if let Some(e) = get("plot") {
        for item in list(&e.value) {
            match PlotKind::ALL
                .iter()
                .find(|k| k.key() == item.to_ascii_lowercase())
            {
                Some(k) if !plots.kinds.contains(k) => plots.kinds.push(*k),
                Some(_) => {}
                None => {
                    let keys: Vec<&str> = PlotKind::ALL.iter().map(|k| k.key()).collect();
                    let hint = match crate::diag::nearest(&item, keys.iter().copied()) {
                        Some(n) => format!("did you mean `{n}`? The kinds are {}", keys.join(", ")),
                        None => format!("the kinds are {}", keys.join(", ")),
                    };
                    return Err(bad(e, format!("unknown plot kind `{item}`"), hint));
                }
            }
        }
        if plots.kinds.contains(&PlotKind::Interaction) && factor_count < 2 {
            return Err(bad(
                e,
                "`plot: interaction` needs a model with two or more factors".into(),
                "use box, means or strip for one factor",
            ));
        }
    }
    if let Some(e) = get("reference") {
        plots.reference = Some(
            e.value
                .trim()
                .parse::<f64>()
                .ok()
                .filter(|v| v.is_finite())
                .ok_or_else(|| {
                    bad(
                        e,
                        format!("`reference` must be a number, found `{}`", e.value),
                        "for example `reference: 0`",
                    )
                })?,
        );
    }
    let mut rows = RowRules::default();
    if let Some(e) = get("layout") {
        match e.value.to_ascii_lowercase().as_str() {
            "long" => {}
            "wide" => {
                let f = &formula;
                if f.terms.len() != 1 || f.terms[0].factors.len() != 1 {
                    return Err(bad(
                        e,
                        "`layout: wide` reads one factor: one column per level".into(),
                        "write the model as `response ~ factor`",
                    ));
                }
                rows.wide = Some((f.terms[0].factors[0].clone(), f.response.clone()));
            }
            _ => {
                return Err(bad(
                    e,
                    format!("unknown layout `{}`", e.value),
                    "write `long` (one row per observation, the default) or `wide` (one column per level)",
                ));
            }
        }
    }
    if let Some(e) = get("where") {
        for part in e.value.split(" and ") {
            let part = part.trim();
            if joins_with_or(part) {
                return Err(bad(
                    e,
                    format!(
                        "`where` joins conditions with `and` only; `or` is not supported (in `{part}`)"
                    ),
                    "for `site == a or site == b`, leave out the other values with `!=` joined by `and` (`site != c and site != d`), or mark the rows to keep in a column of the data and write `where: keep == yes`",
                ));
            }
            let op = ["==", "!=", "<=", ">=", "<", ">"]
                .into_iter()
                .find(|op| part.contains(op))
                .ok_or_else(|| {
                    bad(
                        e,
                        format!("cannot read the condition `{part}`"),
                        "write `column == value` (or !=, <, <=, >, >=); join conditions with `and`",
                    )
                })?;
            let (column, value) = part.split_once(op).unwrap_or((part, ""));
            let (column, value) = (
                column.trim().trim_matches('`'),
                value.trim().trim_matches('"'),
            );
            if column.is_empty() || value.is_empty() {
                return Err(bad(
                    e,
                    format!("cannot read the condition `{part}`"),
                    "write `column == value`, for example `where: site == north`",
                ));
            }
            rows.filters.push(Filter {
                column: column.to_string(),
                op: op.to_string(),
                value: value.to_string(),
            });
        }
    }
    if let Some(e) = get("exclude") {
        let (lines, reason) = match e.value.split_once(':') {
            Some((l, r)) => (l, r.trim().to_string()),
            None => (e.value.as_str(), String::new()),
        };
        if reason.is_empty() {
            return Err(bad(
                e,
                "`exclude` needs a reason".into(),
                "write the data lines, a colon and the reason: `exclude: 14, 27: tray knocked over`",
            ));
        }
        for item in list(lines) {
            let line = item.parse::<usize>().map_err(|_| {
                bad(
                    e,
                    format!("`{item}` is not a data line number"),
                    "give line numbers as in the data file, e.g. `exclude: 14, 27: reason`",
                )
            })?;
            rows.exclude.push((line, reason.clone()));
        }
    }
    let mut labels = Vec::new();
    if let Some(e) = get("labels") {
        for part in list(&e.value) {
            let Some((from, to)) = part.split_once('=') else {
                return Err(bad(
                    e,
                    format!("expected `level = label`, found `{part}`"),
                    "for example `labels: ctrl = Control, trt1 = Treatment 1`",
                ));
            };
            labels.push((from.trim().to_string(), to.trim().to_string()));
        }
    }
    let mut acknowledge = Vec::new();
    if let Some(e) = get("acknowledge") {
        for kind in list(&e.value) {
            if !NOTE_KINDS.iter().any(|(k, _)| *k == kind) {
                let known: Vec<&str> = NOTE_KINDS.iter().map(|(k, _)| *k).collect();
                let hint = match crate::diag::nearest(&kind, known.iter().copied()) {
                    Some(k) => format!("did you mean `{k}`? (kinds: {})", known.join(", ")),
                    None => format!("the kinds are {}", known.join(", ")),
                };
                return Err(bad(e, format!("`{kind}` is not a kind of note"), hint));
            }
            acknowledge.push(kind);
        }
    }
    let mut names = Vec::new();
    if let Some(e) = get("names") {
        for part in list(&e.value) {
            let Some((from, to)) = part.split_once('=') else {
                return Err(bad(
                    e,
                    format!("expected `column = display name`, found `{part}`"),
                    "for example `names: n_rate = Nitrogen rate, variety = Variety`",
                ));
            };
            let from = from.trim();
            if from != formula.response && !formula.factors().contains(&from) {
                return Err(bad(
                    e,
                    format!("`{from}` is neither the response nor a factor of the model"),
                    format!(
                        "name columns of the model: {}",
                        std::iter::once(formula.response.as_str())
                            .chain(formula.factors())
                            .collect::<Vec<_>>()
                            .join(", ")
                    ),
                ));
            }
            names.push((from.to_string(), to.trim().to_string()));
        }
    }
    plots.names = names;
    if let Some(e) = get("x_axis") {
        if factor_count < 2 || !formula.factors().contains(&e.value.as_str()) {
            return Err(bad(
                e,
                format!(
                    "`x_axis` must name a factor of a model with two or more factors, found `{}`",
                    e.value
                ),
                format!("the factors are {}", formula.factors().join(", ")),
            ));
        }
        plots.x_axis = Some(e.value.clone());
    }
    for (key, reader) in crate::data::reader::foreign_keys(&data_entry.value) {
        if let Some(e) = get(key) {
            return Err(bad(
                e,
                format!(
                    "`{key}` applies to {} data (.xlsx, .xls, .ods)",
                    reader.name()
                ),
                "remove it, or point `data` at the workbook",
            ));
        }
    }
    Ok(AnovaSpec {
        acknowledge,
        sheet: get("sheet").map(|e| e.value.clone()),
        range: get("range").map(|e| e.value.clone()),
        rows,
        labels,
        labels_at: get("labels").map(|e| (e.line, e.value_column)),
        plots,
        ss_type,
        compare_terms: named_list("compare_term"),
        within: get("within").map(located),
        cells,
        blocks: named_list("block"),
        summary,
        method,
        checks,
        control,
        sides,
        adjust,
        id,
        data: located(data_entry),
        model: Located {
            value: formula,
            line: model_entry.line,
            column: model_entry.value_column,
        },
        compare,
        alpha,
        levels,
        caption: get("caption").map(|e| e.value.clone()),
        decimals,
        csv,
        protected,
        order,
        show,
    })
}

#[cfg(test)]
#[path = "block_tests.rs"]
mod tests;
