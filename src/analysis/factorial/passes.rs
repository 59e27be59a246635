//! The checks of a factorial block fitted from its cells' sums, made in
//! passes over the observations with the one-factor engine's pass code
//! (`one_way::observations`): from the rows kept in memory, or by reading
//! the file again in memory that does not grow with the rows. Both run the
//! same code, so they give the same bits.
//!
//! Each observation's residual is its value less its full cell's fitted
//! value; its leverage is its cell's. The spread tests compare the
//! residuals across the treatment cells, or across the first treatment
//! factor's levels when some treatment cell holds a single observation.

use super::cells::TreatmentCells;
use super::checks::first_factor_note;
use super::fit::Fitted;
use super::read::Rereading;
use super::residuals::Residuals;
use crate::analysis::checks::summary_checks;
use crate::analysis::notes::Note;
use crate::analysis::one_way::observations::{
    Fitting, Observed, Passes, Reread, Visit, observe_fitted,
};
use crate::data::scan::ScanSpec;
use crate::data::{DataError, FactorialData, ObservationColumns};
use crate::doc::block::{AnovaSpec, CheckSet};
use crate::outcome::{Checks, OutlierRow};
use crate::stats::assumptions::bartlett;
use crate::stats::oneway::GroupSummary;

/// What the checks read.
pub(super) struct Checking<'a> {
    pub spec: &'a AnovaSpec,
    pub data: &'a FactorialData,
    pub fitted: &'a Fitted,
    pub residuals: &'a Residuals,
    pub treatment: &'a TreatmentCells,
    pub factor_names: &'a [String],
}

/// The checks, a note when the spread could not be compared cell by cell,
/// and the total sum of squares when the passes computed it.
pub(super) struct Checked {
    pub checks: Checks,
    pub note: Option<Note>,
    pub total_ss: Option<f64>,
}

/// Observations kept in memory, one row each in file order: each run of
/// rows of one cell is visited at once.
struct KeptRows<'a>(&'a ObservationColumns);

impl Passes for KeptRows<'_> {
    fn pass(&mut self, _last: bool, visit: Visit<'_>) -> Result<(), DataError> {
        let rows = self.0;
        let mut start = 0;
        while start < rows.cell_of.len() {
            let cell = rows.cell_of[start];
            let run = rows.cell_of[start..]
                .iter()
                .take_while(|&&c| c == cell)
                .count();
            let end = start + run;
            visit(cell, &rows.offsets[start..end], &rows.lines[start..end]);
            start = end;
        }
        Ok(())
    }
}

impl Checking<'_> {
    /// Per full cell: its residuals' n, mean and sum of squares.
    fn cell_residuals(&self) -> Vec<GroupSummary> {
        (self.data.cell_summaries.iter().enumerate())
            .map(|(c, s)| GroupSummary {
                n: s.n,
                mean: s.mean - self.residuals.row_fitted[c],
                ss: s.ss,
            })
            .collect()
    }

    /// Groups of full cells (`group_of`, numbered from zero), each group's
    /// residuals merged from its cells' in cell order.
    fn grouped(&self, group_of: &[usize], groups: usize) -> Vec<GroupSummary> {
        let none = GroupSummary {
            n: 0,
            mean: f64::NAN,
            ss: f64::NAN,
        };
        let mut merged = vec![none; groups];
        for (s, &g) in self.cell_residuals().iter().zip(group_of) {
            merged[g] = merged[g].merge(s);
        }
        merged
    }

    /// The treatment cells that hold observations, numbered from zero, as
    /// each full cell's group; and how many there are.
    fn treatment_groups(&self) -> (Vec<usize>, usize) {
        let cells = self.data.layout.cells.len();
        let mut held = vec![false; self.treatment.combos.len()];
        for c in 0..cells {
            held[self.treatment.of(c)] = true;
        }
        // Numbered in the treatment cells' order (first factor slowest).
        let number: Vec<usize> = held
            .iter()
            .scan(0, |next, &h| {
                let n = *next;
                *next += usize::from(h);
                Some(n)
            })
            .collect();
        let group_of = (0..cells).map(|c| number[self.treatment.of(c)]).collect();
        (group_of, held.iter().filter(|&&h| h).count())
    }

    /// The grand mean of the offsets, from the cells.
    fn grand(&self) -> f64 {
        let cells = &self.data.cell_summaries;
        crate::stats::sum::neumaier(cells.iter().map(|c| c.n as f64 * c.mean))
            / self.data.n().max(1) as f64
    }

    fn fitting(&self, group_of: Vec<usize>, groups: usize) -> Fitting {
        let rows = &self.residuals.row_fitted;
        Fitting {
            n: self.data.cell_summaries.iter().map(|s| s.n).collect(),
            groups: self.grouped(&group_of, groups),
            group_of,
            fitted: rows.clone(),
            shift: rows.clone(),
            leverage: self.residuals.row_leverage.clone(),
            mse: self.fitted.mse(),
            df: self.fitted.residual_df,
            grand: self.grand(),
        }
    }

    /// The outliers flagged in the passes, with their labels and values.
    fn outliers(&self, observed: &Observed) -> Vec<OutlierRow> {
        let data = self.data;
        (observed.outliers.iter())
            .map(|o| OutlierRow {
                line: o.line,
                level: (data.layout.cells[o.level].iter().enumerate())
                    .map(|(f, &l)| data.layout.levels[f][l].clone())
                    .collect::<Vec<_>>()
                    .join(" × "),
                value: data.origin + o.offset,
                studentized_residual: o.studentized,
            })
            .collect()
    }
}

/// The checks `checks:` asks for: from the cells' summaries alone with
/// `checks: summary`, else in passes over the observations, kept in
/// memory or read again from `rereading`.
pub(super) fn checks(
    checking: &Checking<'_>,
    rereading: Option<Rereading<'_>>,
) -> Result<Checked, DataError> {
    let spec = checking.spec;
    let (treatment_of, treatments) = checking.treatment_groups();
    let by_treatment = checking.grouped(&treatment_of, treatments);
    let base = summary_checks(&by_treatment, spec.checks.shown());
    if spec.checks == CheckSet::Summary {
        let checks = Checks {
            by_request: true,
            ..base
        };
        return Ok(Checked {
            checks,
            note: None,
            total_ss: None,
        });
    }
    let (fit, note) = if by_treatment.iter().all(|s| s.n >= 2) {
        (checking.fitting(treatment_of, treatments), None)
    } else {
        by_first_factor(checking, &by_treatment)
    };
    let factors: Vec<&str> = checking.factor_names.iter().map(String::as_str).collect();
    let observed = match (rereading, &checking.data.observations) {
        (Some(r), _) => observe_fitted(&mut reread(spec, &factors, r), &fit)?,
        (None, Some(rows)) => observe_fitted(&mut KeptRows(rows), &fit)?,
        (None, None) => return Err(no_observations()),
    };
    let checks = Checks {
        from_summary: false,
        brown_forsythe: observed.brown_forsythe,
        levene: observed.levene,
        bartlett: bartlett(&fit.groups),
        shapiro_wilk: observed.shapiro_wilk,
        skewness: observed.skewness,
        excess_kurtosis: observed.excess_kurtosis,
        outlier_count: observed.outlier_count,
        outliers: checking.outliers(&observed),
        ..base
    };
    Ok(Checked {
        checks,
        note,
        total_ss: Some(observed.total_ss),
    })
}

/// Unreplicated cells (blocks): the spread of the residuals across the
/// levels of the first treatment factor instead, with a note that says so.
fn by_first_factor(
    checking: &Checking<'_>,
    by_treatment: &[GroupSummary],
) -> (Fitting, Option<Note>) {
    let first = checking.treatment.factors.first().copied().unwrap_or(0);
    let data = checking.data;
    let group_of: Vec<usize> = data.layout.cells.iter().map(|row| row[first]).collect();
    let fit = checking.fitting(group_of, data.layout.levels[first].len());
    let single = by_treatment.iter().filter(|s| s.n < 2).count();
    let note = first_factor_note(&checking.factor_names[first], single, by_treatment.len());
    (fit, Some(note))
}

/// The passes that read the block's CSV data again.
fn reread<'a>(spec: &'a AnovaSpec, factors: &'a [&'a str], rereading: Rereading<'a>) -> Reread<'a> {
    let Rereading {
        again,
        first,
        cells,
    } = rereading;
    Reread {
        again,
        spec: ScanSpec {
            response: &spec.model.value.response,
            factors,
            format: &spec.csv,
            filters: &spec.rows.filters,
            exclude: &spec.rows.exclude,
            keep_values: false,
        },
        first,
        design: cells,
    }
}

fn no_observations() -> DataError {
    DataError {
        line: None,
        column: None,
        message:
            "internal error: the checks found neither the observations nor a way to read them again"
                .into(),
        hint: Some("report this".into()),
    }
}
