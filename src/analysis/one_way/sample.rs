//! The levels of a one-factor block as loaded: from raw observations (a
//! scanned CSV file or a table) or from published summaries, in design
//! order.

use crate::analysis::binding::formula_text;
use crate::analysis::binding::{Data, data_error, design_order, read_rows, scan_csv, streams};
use crate::data::decimal::Number;
use crate::data::scan::{ScanSpec, Scanned, ScannedLevel, scan_table};
use crate::data::summary_cells::{is_exact_form, summary_cells};
use crate::data::transform::transform_scanned;
use crate::data::{DataError, Exclusion, SummaryColumns, SummaryRow, Table, summary_rows};
use crate::diag::Diagnostic;
use crate::doc::block::{AnovaSpec, CheckSet, Omnibus, PlotKind};
use crate::doc::{Block, Document};
use crate::outcome::linear::InputForm;
use crate::provenance::Input;
use crate::stats::oneway::{GroupSummary, one_way};

/// The levels of a block as loaded: summaries in design order, with the raw
/// observations when the data file has them.
pub(super) struct Sample {
    pub(super) names: Vec<String>,
    pub(super) summaries: Vec<GroupSummary>,
    /// Offsets and data lines per level; `None` for summary input.
    pub(super) raw: Option<RawLevels>,
    /// Every mean and offset is relative to this value (see `data::decimal`).
    pub(super) origin: f64,
    /// Most decimals written in the response (or means) column.
    pub(super) decimals: u32,
    pub(super) excluded: Vec<Exclusion>,
    /// Levels that had rows but no usable response.
    pub(super) empty: Vec<String>,
    /// Range of F over the rounding of published summaries.
    pub(super) rounding: Option<RoundingRange>,
    /// With `transform`: each level's arithmetic mean on the data's scale
    /// (the summaries and offsets are on the analysis scale).
    pub(super) arithmetic: Vec<f64>,
    /// Observations, published summaries, or exact sums.
    pub(super) input: InputForm,
}

/// Raw observations per level: offsets from the origin and their data lines.
pub(super) type RawLevels = (Vec<Vec<f64>>, Vec<Vec<usize>>);

/// How far F and p can move when each published mean and SD is anywhere
/// within half a unit of its last printed digit (METHODS 3.19).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RoundingRange {
    pub f_low: f64,
    pub f_high: f64,
    pub p_low: f64,
    pub p_high: f64,
}

/// Where a one-factor block is read from, and what it needs.
pub(super) struct Reading<'a> {
    pub doc: &'a Document,
    pub block: &'a Block,
    pub spec: &'a AnovaSpec,
    pub factor: &'a str,
    pub display_path: &'a str,
}

/// Whether a one-factor block needs every value (checks on residuals,
/// ranks, figures), or only per-level summaries.
fn keeps_values(spec: &AnovaSpec) -> bool {
    spec.checks != CheckSet::Summary
        || spec.method == Omnibus::Ranks
        || spec.transform.is_some()
        || spec.box_cox
        || !spec.plots.kinds.is_empty()
}

impl Reading<'_> {
    /// A data-file problem as a diagnostic; a missing column also names
    /// the model that asked for it.
    fn fail(&self, e: DataError) -> Diagnostic {
        let model_note = e.message.starts_with("no column named");
        let spec = self.spec;
        let d = data_error(self.doc, self.block, spec.data.line, self.display_path, e);
        if !model_note {
            return d;
        }
        d.note(format!(
            "the model is `{}` (line {})",
            formula_text(&spec.model.value),
            spec.model.line
        ))
    }

    fn internal(&self, what: &str) -> Diagnostic {
        self.doc
            .error_at(self.block.line, None, format!("internal error: {what}"))
    }

    /// Loads the levels in design order; a streamed file comes back as the
    /// `Input` that records it.
    pub fn load(&self, data: Data<'_>) -> Result<(Sample, Option<Input>), Diagnostic> {
        let (mut sample, streamed) = match (&self.spec.summary, data) {
            (None, data) => self.load_rows(data)?,
            (Some(columns), Data::Loaded(input)) => (self.load_summaries(columns, input)?, None),
            (Some(_), Data::Stream { .. }) => {
                return Err(self.internal("a summary table reached the streaming reader"));
            }
        };
        sample.excluded.sort_by_key(|e| e.line);
        Ok((sample, streamed))
    }

    /// Raw observations, scanned from a CSV file or taken from a table.
    fn load_rows(&self, data: Data<'_>) -> Result<(Sample, Option<Input>), Diagnostic> {
        let spec = self.spec;
        let response = spec.model.value.response.as_str();
        let scan_spec = ScanSpec {
            response,
            factors: &[self.factor],
            format: &spec.csv,
            filters: &spec.rows.filters,
            exclude: &spec.rows.exclude,
            keep_values: keeps_values(spec),
        };
        let (mut scanned, ruled_out, streamed) = match data {
            data if streams(spec) => {
                let (scanned, input) = scan_csv(data, &scan_spec).map_err(|e| self.fail(e))?;
                (scanned, Vec::new(), input)
            }
            Data::Loaded(input) => {
                let (table, ruled_out) =
                    read_rows(self.doc, self.block, spec, input, self.display_path)?;
                let scanned = scan_table(&table, response, &[self.factor], &spec.csv)
                    .map_err(|e| self.fail(e))?;
                (scanned, ruled_out, None)
            }
            Data::Stream { .. } => {
                return Err(self.internal("a table layout reached the streaming reader"));
            }
        };
        let path = streamed
            .as_ref()
            .map_or(spec.data.value.as_str(), |i| i.path.as_str());
        let arithmetic = match &spec.transform {
            Some(t) => {
                let means = transform_scanned(&mut scanned, &t.value, response)
                    .map_err(|e| self.fail(e))?;
                let names = scanned.levels.iter().map(|l| l.name.clone());
                names.zip(means).collect()
            }
            None => Vec::new(),
        };
        let mut sample = self.levels_of_scan(scanned, path)?;
        sample.excluded.extend(ruled_out);
        // Levels in design order, each with its own arithmetic mean.
        sample.arithmetic = (sample.names.iter())
            .filter_map(|n| arithmetic.iter().find(|(a, _)| a == n).map(|a| a.1))
            .collect();
        Ok((sample, streamed))
    }

    fn too_few_levels(&self, used: &[String]) -> Diagnostic {
        let which = match used.first() {
            None => "no level".to_string(),
            Some(n) => format!("only `{n}`"),
        };
        let model = &self.spec.model;
        self.doc.error_at(model.line, Some(model.column), format!("`{}` needs two or more levels with data; {which} has observations", self.factor))
            .hint("an analysis of variance compares levels: check the factor column and the missing-value markers")
            .note(format!("data file {}", self.display_path))
    }

    /// The levels of a scanned file in design order; levels whose rows all
    /// lacked a response are left out and named.
    fn levels_of_scan(&self, scanned: Scanned, path: &str) -> Result<Sample, Diagnostic> {
        let found: Vec<&str> = scanned.levels.iter().map(|l| l.name.as_str()).collect();
        let order = design_order(self.doc, self.spec, &found, self.factor, path)?;
        let (used, empty): (Vec<usize>, Vec<usize>) = order
            .iter()
            .copied()
            .partition(|&i| scanned.levels[i].summary.n > 0);
        let names: Vec<String> = used
            .iter()
            .map(|&i| scanned.levels[i].name.clone())
            .collect();
        if used.len() < 2 {
            return Err(self.too_few_levels(&names));
        }
        let empty = empty
            .iter()
            .map(|&i| scanned.levels[i].name.clone())
            .collect();
        let mut levels: Vec<Option<ScannedLevel>> = scanned.levels.into_iter().map(Some).collect();
        let used: Vec<ScannedLevel> = used.iter().filter_map(|&i| levels[i].take()).collect();
        Ok(Sample {
            summaries: used.iter().map(|l| l.summary).collect(),
            raw: keeps_values(self.spec)
                .then(|| used.into_iter().map(|l| (l.offsets, l.lines)).unzip()),
            names,
            origin: scanned.origin,
            decimals: scanned.decimals,
            excluded: scanned.excluded,
            empty,
            rounding: None,
            arithmetic: Vec::new(),
            input: InputForm::Observations,
        })
    }

    /// Published summaries (n, mean, SD or SE per level), which allow only
    /// `plot: means`.
    fn load_summaries(
        &self,
        columns: &SummaryColumns,
        input: &Input,
    ) -> Result<Sample, Diagnostic> {
        let spec = self.spec;
        if let Some(k) = spec
            .plots
            .kinds
            .iter()
            .find(|k| !matches!(k, PlotKind::Means))
        {
            return Err(self
                .doc
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
        let (table, ruled_out) = read_rows(self.doc, self.block, spec, input, self.display_path)?;
        let mut sample = self.levels_of_summaries(&table, columns)?;
        sample.excluded.extend(ruled_out);
        Ok(sample)
    }

    /// The levels of a table of summaries, in design order.
    fn levels_of_summaries(
        &self,
        table: &Table,
        columns: &SummaryColumns,
    ) -> Result<Sample, Diagnostic> {
        let (doc, spec) = (self.doc, self.spec);
        if is_exact_form(table, columns) {
            return self.levels_of_exact_sums(table, columns);
        }
        let rows = summary_rows(table, self.factor, columns, &spec.csv)
            .map_err(|e| data_error(doc, self.block, spec.data.line, self.display_path, e))?;
        let found: Vec<&str> = rows.iter().map(|r| r.level.as_str()).collect();
        let order = design_order(doc, spec, &found, self.factor, &spec.data.value)?;
        let names: Vec<String> = order.iter().map(|&i| rows[i].level.clone()).collect();
        if names.len() < 2 {
            return Err(self.too_few_levels(&names));
        }
        let published = Published::new(&rows, &order, columns.spread_is_se);
        let summaries = published.summaries_at(&|_| 0.0, 0.0);
        let decimals = order
            .iter()
            .map(|&i| rows[i].mean_decimals)
            .max()
            .unwrap_or(0);
        Ok(Sample {
            names,
            rounding: Some(published.rounding_range(&summaries)),
            arithmetic: Vec::new(),
            summaries,
            raw: None,
            origin: published.origin,
            decimals: decimals.saturating_sub(1),
            excluded: Vec::new(),
            empty: Vec::new(),
            input: InputForm::Summaries,
        })
    }

    /// The levels of a table of exact sums, in design order: each level's
    /// mean and sum of squares come exact from its sums, so no rounding
    /// range applies.
    fn levels_of_exact_sums(
        &self,
        table: &Table,
        columns: &SummaryColumns,
    ) -> Result<Sample, Diagnostic> {
        let (doc, spec) = (self.doc, self.spec);
        let read = summary_cells(table, &[self.factor], columns, &spec.csv)
            .map_err(|e| data_error(doc, self.block, spec.data.line, self.display_path, e))?;
        let found: Vec<&str> = read.cells.iter().map(|c| c.levels[0].as_str()).collect();
        let order = design_order(doc, spec, &found, self.factor, &spec.data.value)?;
        let names: Vec<String> = order.iter().map(|&i| found[i].to_string()).collect();
        if names.len() < 2 {
            return Err(self.too_few_levels(&names));
        }
        let summaries = order
            .iter()
            .map(|&i| {
                let c = &read.cells[i];
                GroupSummary {
                    n: c.n,
                    mean: c.mean,
                    ss: c.ss,
                }
            })
            .collect();
        Ok(Sample {
            names,
            summaries,
            raw: None,
            origin: read.origin,
            decimals: read.decimals,
            excluded: Vec::new(),
            empty: Vec::new(),
            rounding: None,
            arithmetic: Vec::new(),
            input: InputForm::ExactSums {
                origin: read.exact_origin.unwrap_or_default(),
            },
        })
    }
}

/// Published summaries in design order, with means as offsets from the
/// first level's mean.
struct Published<'a> {
    rows: &'a [SummaryRow],
    order: &'a [usize],
    spread_is_se: bool,
    origin: f64,
    offsets: Vec<f64>,
}

impl<'a> Published<'a> {
    fn new(rows: &'a [SummaryRow], order: &'a [usize], spread_is_se: bool) -> Self {
        // Means relative to the first one, subtracted as exact decimals (as
        // the raw path subtracts its origin): parsed as f64, means near 1e8
        // would already have lost their last digits (METHODS 2.2).
        let origin_exact = rows[order[0]].mean_exact;
        let origin = origin_exact.to_f64();
        let offsets = rows
            .iter()
            .map(|r| {
                match (r.mean_exact, origin_exact) {
                    (Number::Exact(mean), Number::Exact(first)) => mean.minus(first),
                    _ => None,
                }
                .unwrap_or(r.mean - origin)
            })
            .collect();
        Published {
            rows,
            order,
            spread_is_se,
            origin,
            offsets,
        }
    }

    fn to_sd(&self, r: &SummaryRow, spread: f64) -> f64 {
        if self.spread_is_se {
            spread * (r.n as f64).sqrt()
        } else {
            spread
        }
    }

    /// The summaries with each mean shifted by `shift_mean` and each SD by
    /// `shift_sd` half units of its last digit.
    fn summaries_at(&self, shift_mean: &dyn Fn(usize) -> f64, shift_sd: f64) -> Vec<GroupSummary> {
        self.order
            .iter()
            .map(|&i| {
                let r = &self.rows[i];
                let sd = (self.to_sd(r, r.spread) + shift_sd * self.to_sd(r, r.spread_half_unit))
                    .max(0.0);
                GroupSummary {
                    n: r.n,
                    mean: self.offsets[i] + shift_mean(i),
                    ss: (r.n as f64 - 1.0) * sd * sd,
                }
            })
            .collect()
    }

    /// Rounding sensitivity: F is largest with the means pushed apart and
    /// the SDs at their lowest, smallest with the means pulled together and
    /// the SDs at their highest.
    fn rounding_range(&self, summaries: &[GroupSummary]) -> RoundingRange {
        let n_total: f64 = summaries.iter().map(|s| s.n as f64).sum();
        let grand = summaries.iter().map(|s| s.n as f64 * s.mean).sum::<f64>() / n_total;
        let away = |i: usize| {
            let r = &self.rows[i];
            if self.offsets[i] >= grand {
                r.mean_half_unit
            } else {
                -r.mean_half_unit
            }
        };
        let toward = |i: usize| {
            let d = self.offsets[i] - grand;
            -d.signum() * self.rows[i].mean_half_unit.min(d.abs())
        };
        let f_of = |g: &[GroupSummary]| {
            one_way(g, 0.05, None)
                .map(|t| (t.f, t.p))
                .unwrap_or((f64::NAN, f64::NAN))
        };
        let (f_high, p_low) = f_of(&self.summaries_at(&away, -1.0));
        let (f_low, p_high) = f_of(&self.summaries_at(&toward, 1.0));
        RoundingRange {
            f_low,
            f_high,
            p_low,
            p_high,
        }
    }
}
