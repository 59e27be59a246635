//! The cell of a row of several factors, found from each factor's level:
//! a row of a known cell costs a few 8-byte comparisons instead of
//! building its cell key and hashing it (see `rows::cell_key`).

use super::*;

/// Levels per factor beyond which a chunk falls back to the cell key.
const LEVELS_AT_MOST: usize = 64;
/// Factors beyond which a chunk falls back to the cell key (8 bits each).
const FACTORS_AT_MOST: usize = 8;

/// Each factor's levels as met in one chunk, and each combination met,
/// packed one byte per factor, with its level in the chunk.
#[derive(Default)]
pub(super) struct CellIndex {
    /// Per factor: each level's short key and name.
    factors: Vec<Vec<((u64, usize), String)>>,
    cells: HashMap<u64, usize, BuildHasherDefault<ShortHasher>>,
}

impl CellIndex {
    /// The packed level indices of a row's (untrimmed) factor cells;
    /// `None` beyond the limits, where the caller uses the cell key.
    pub(super) fn combination(&mut self, factor_cells: &[&str]) -> Option<u64> {
        if factor_cells.len() > FACTORS_AT_MOST {
            return None;
        }
        if self.factors.len() < factor_cells.len() {
            self.factors.resize_with(factor_cells.len(), Vec::new);
        }
        let mut packed = 0u64;
        for (f, cell) in factor_cells.iter().enumerate() {
            let name = trim(cell);
            let key = short_key(name);
            let levels = &mut self.factors[f];
            let found = levels
                .iter()
                .position(|(k, n)| *k == key && (name.len() <= 8 || n == name));
            let i = match found {
                Some(i) => i,
                None if levels.len() < LEVELS_AT_MOST => {
                    levels.push((key, name.to_string()));
                    levels.len() - 1
                }
                None => return None,
            };
            packed |= (i as u64) << (8 * f);
        }
        Some(packed)
    }

    /// The chunk's level of a combination met before.
    pub(super) fn get(&self, combination: u64) -> Option<usize> {
        self.cells.get(&combination).copied()
    }

    pub(super) fn insert(&mut self, combination: u64, level: usize) {
        self.cells.insert(combination, level);
    }
}
