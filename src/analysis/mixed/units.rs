//! The units of a block with random terms: each random term's level for
//! every observation, formed from the combination of its factors' labels
//! (a whole plot is block and variety together, never the variety label
//! alone), numbered in sorted order of those combinations.

use crate::data::FactorialRows;
use crate::doc::formula::Term;
use crate::stats::linear::Layout;
use crate::stats::mixed::RandomTerm;
use std::collections::BTreeMap;

/// The random terms as the REML fit and the stratum analysis take them.
pub(super) struct Units {
    pub terms: Vec<RandomTerm>,
    /// One "factor" per random term: its unit for each observation.
    pub layout: Layout,
    /// Per random term, each unit's labels (`I:Victory`), for messages.
    pub unit_names: Vec<Vec<String>>,
}

/// Each random term's unit for each observation; `factor_of` gives the
/// index of a column among the data's factors.
pub(super) fn units(
    data: &FactorialRows,
    random: &[Term],
    factor_of: impl Fn(&str) -> Option<usize>,
) -> Units {
    let n = data.offsets.len();
    let mut terms = Vec::with_capacity(random.len());
    let mut unit_names = Vec::with_capacity(random.len());
    for term in random {
        let factors: Vec<usize> = term.factors.iter().filter_map(|f| factor_of(f)).collect();
        let keys: Vec<Vec<usize>> = (0..n)
            .map(|i| factors.iter().map(|&f| data.row(i)[f]).collect())
            .collect();
        let mut index: BTreeMap<&[usize], usize> = keys.iter().map(|k| (&k[..], 0)).collect();
        for (i, slot) in index.values_mut().enumerate() {
            *slot = i;
        }
        unit_names.push(
            index
                .keys()
                .map(|k| {
                    let labels: Vec<&str> = factors
                        .iter()
                        .zip(*k)
                        .map(|(&f, &l)| data.layout.levels[f][l].as_str())
                        .collect();
                    labels.join(":")
                })
                .collect(),
        );
        terms.push(RandomTerm {
            name: term.to_string(),
            levels: index.len(),
            level_of: keys.iter().map(|k| index[&k[..]]).collect(),
        });
    }
    let layout = Layout {
        levels: terms.iter().map(|t| t.levels).collect(),
        rows: (0..n)
            .map(|i| terms.iter().map(|t| t.level_of[i]).collect())
            .collect(),
    };
    Units {
        terms,
        layout,
        unit_names,
    }
}
