//! Cells over the treatment factors (blocks left out): which observations
//! each holds, and each cell's n, mean and SD.

use super::terms::combinations;
use crate::data::{FactorialData, Observed};
use crate::outcome::linear::CellRow;
use crate::stats::oneway::GroupSummary;
use crate::stats::sum::neumaier;

/// What a design's cells are computed from.
#[derive(Clone, Copy)]
pub(in crate::analysis) enum Source<'a> {
    /// The observations.
    Observed(Observed<'a>),
    /// Summary input: each full cell's n, mean and sum of squares.
    Cells(&'a [GroupSummary]),
}

impl FactorialData {
    /// What the cells of these data are computed from.
    pub(in crate::analysis) fn source(&self) -> Source<'_> {
        match self.observed() {
            Some(observed) => Source::Observed(observed),
            None => Source::Cells(&self.cell_summaries),
        }
    }
}

/// The treatment cells of a design, every combination of the treatment
/// factors' levels, first factor slowest.
pub(crate) struct TreatmentCells {
    /// The treatment factors, in model order.
    pub factors: Vec<usize>,
    pub combos: Vec<Vec<usize>>,
    /// For each full cell of the data, the treatment cell it lies in.
    of_full_cell: Vec<usize>,
}

impl TreatmentCells {
    pub fn new(cells: &[Vec<usize>], factors: Vec<usize>, levels: &[usize]) -> Self {
        let combos = combinations(&factors, levels);
        let in_cell =
            |row: &[usize], combo: &[usize]| factors.iter().zip(combo).all(|(&f, &l)| row[f] == l);
        // Each full cell lies in one treatment cell: group rows in one pass.
        let of_full_cell = cells
            .iter()
            .map(|r| combos.iter().position(|c| in_cell(r, c)).unwrap_or(0))
            .collect();
        TreatmentCells {
            factors,
            combos,
            of_full_cell,
        }
    }

    /// The treatment cell full cell `full` lies in.
    pub fn of(&self, full: usize) -> usize {
        self.of_full_cell[full]
    }

    /// A value per observation, grouped by treatment cell.
    pub fn group(&self, observed: Observed<'_>, value: &dyn Fn(usize) -> f64) -> Vec<Vec<f64>> {
        let mut groups: Vec<Vec<f64>> = vec![Vec::new(); self.combos.len()];
        for (i, &c) in observed.cell_of.iter().enumerate() {
            groups[self.of_full_cell[c]].push(value(i));
        }
        groups
    }

    /// Each treatment cell's n, mean and sum of squares: from the
    /// observations where there are any, else pooled from the full cells'
    /// summaries (the within parts plus each full cell's spread about the
    /// treatment cell's mean).
    fn summaries(&self, source: Source<'_>) -> Vec<GroupSummary> {
        let cells = match source {
            Source::Observed(observed) => {
                let by_treatment = self.group(observed, &|i| observed.offsets[i]);
                return by_treatment
                    .iter()
                    .map(|v| GroupSummary::from_values(v))
                    .collect();
            }
            Source::Cells(cells) => cells,
        };
        let mut members: Vec<Vec<&GroupSummary>> = vec![Vec::new(); self.combos.len()];
        for (c, s) in cells.iter().enumerate() {
            members[self.of_full_cell[c]].push(s);
        }
        members.iter().map(|m| pooled(m)).collect()
    }

    /// Each treatment cell's n, mean and SD.
    pub fn rows(&self, source: Source<'_>, origin: f64) -> Vec<CellRow> {
        self.combos
            .iter()
            .zip(self.summaries(source))
            .map(|(combo, s)| CellRow {
                levels: combo.clone(),
                n: s.n,
                mean: origin + s.mean,
                sd: s.variance().sqrt(),
                offset: s.mean,
            })
            .collect()
    }
}

/// Several groups' summaries as one group's.
fn pooled(members: &[&GroupSummary]) -> GroupSummary {
    // One member is itself (n·mean/n need not round back to the mean).
    if let [one] = members {
        return **one;
    }
    let n: usize = members.iter().map(|s| s.n).sum();
    if n == 0 {
        return GroupSummary::from_values(&[]);
    }
    let mean = neumaier(members.iter().map(|s| s.n as f64 * s.mean)) / n as f64;
    let ss = neumaier(
        members
            .iter()
            .map(|s| s.ss + s.n as f64 * (s.mean - mean) * (s.mean - mean)),
    );
    GroupSummary { n, mean, ss }
}
