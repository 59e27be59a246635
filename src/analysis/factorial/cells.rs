//! Cells over the treatment factors (blocks left out): which observations
//! each holds, and each cell's n, mean and SD.

use super::terms::combinations;
use crate::data::FactorialData;
use crate::outcome::linear::CellRow;
use crate::stats::oneway::GroupSummary;

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
    pub fn new(data: &FactorialData, factors: Vec<usize>, levels: &[usize]) -> Self {
        let combos = combinations(&factors, levels);
        let in_cell =
            |row: &[usize], combo: &[usize]| factors.iter().zip(combo).all(|(&f, &l)| row[f] == l);
        // Each full cell lies in one treatment cell: group rows in one pass.
        let of_full_cell = data
            .cells
            .iter()
            .map(|r| combos.iter().position(|c| in_cell(r, c)).unwrap_or(0))
            .collect();
        TreatmentCells {
            factors,
            combos,
            of_full_cell,
        }
    }

    /// A value per observation, grouped by treatment cell.
    pub fn group(&self, data: &FactorialData, value: &dyn Fn(usize) -> f64) -> Vec<Vec<f64>> {
        let mut groups: Vec<Vec<f64>> = vec![Vec::new(); self.combos.len()];
        for (i, &c) in data.cell_of.iter().enumerate() {
            groups[self.of_full_cell[c]].push(value(i));
        }
        groups
    }

    /// Each treatment cell's n, mean and SD.
    pub fn rows(&self, data: &FactorialData) -> Vec<CellRow> {
        let by_treatment = self.group(data, &|i| data.offsets[i]);
        self.combos
            .iter()
            .zip(&by_treatment)
            .map(|(combo, values)| {
                let s = GroupSummary::from_values(values);
                CellRow {
                    levels: combo.clone(),
                    n: s.n,
                    mean: data.origin + s.mean,
                    sd: s.variance().sqrt(),
                    offset: s.mean,
                }
            })
            .collect()
    }
}
