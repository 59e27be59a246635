//! How the treatments sit on the units: each treatment factor either constant
//! within every unit of a random term or varying within them; no unit lacking
//! a treatment combination it should hold; treatments fully crossed with equal
//! replication; and each fixed term estimated in exactly one stratum, balanced
//! over the units of every stratum above it.

use std::collections::{BTreeMap, BTreeSet};

use super::partition::Partition;
use super::reason::{MissingCell, NotClassical, StratumId};
use super::unit_structure::UnitStructure;
use crate::stats::linear::{Layout, TermFactors, term_row};

/// A unit's fixed levels, the free combinations seen in it, and one of its
/// observations.
type UnitCells = (Vec<usize>, BTreeSet<Vec<usize>>, usize);

/// Most missing cells named one by one; the rest are counted.
const MAX_NAMED_CELLS: usize = 100;

/// Largest treatment cross listed cell by cell; beyond it a layout is
/// judged by its counts alone (keeps the reasons bounded).
const MAX_LISTED: usize = 4096;

fn levels_of(row: &[usize], factors: &[usize]) -> Vec<usize> {
    factors.iter().map(|&f| row[f]).collect()
}

/// True when the factors take one combination of levels within every unit.
fn constant_within(treatments: &Layout, factors: &[usize], units: &Partition) -> bool {
    let mut seen: BTreeMap<usize, Vec<usize>> = BTreeMap::new();
    units.unit.iter().zip(&treatments.rows).all(|(&u, row)| {
        let combo = levels_of(row, factors);
        seen.entry(u).or_insert_with(|| combo.clone()) == &combo
    })
}

/// Every combination of the levels of `factors`, first factor slowest;
/// `None` when there are more than `MAX_LISTED`.
fn cross(levels: &[usize], factors: &[usize]) -> Option<Vec<Vec<usize>>> {
    let size = factors
        .iter()
        .try_fold(1usize, |acc, &f| acc.checked_mul(levels[f]))?;
    if size > MAX_LISTED {
        return None;
    }
    let mut all = vec![Vec::new()];
    for &f in factors {
        all = all
            .into_iter()
            .flat_map(|c: Vec<usize>| {
                (0..levels[f]).map(move |l| {
                    let mut next = c.clone();
                    next.push(l);
                    next
                })
            })
            .collect();
    }
    Some(all)
}

/// A factor constant within some units (of two or more observations) of a
/// random term but varying within others.
pub(super) fn varying_within(treatments: &Layout, random: &[Partition]) -> Vec<NotClassical> {
    let mut reasons = Vec::new();
    for (r, units) in random.iter().enumerate() {
        for factor in 0..treatments.levels.len() {
            let mut first: BTreeMap<usize, usize> = BTreeMap::new();
            let mut varying = BTreeSet::new();
            for (&u, row) in units.unit.iter().zip(&treatments.rows) {
                if *first.entry(u).or_insert(row[factor]) != row[factor] {
                    varying.insert(u);
                }
            }
            let constant = (0..units.sizes.len())
                .filter(|&u| units.sizes[u] > 1 && !varying.contains(&u))
                .count();
            if constant > 0 && !varying.is_empty() {
                reasons.push(NotClassical::VariesWithinUnits {
                    factor,
                    random_term: r,
                    units: varying.into_iter().collect(),
                });
            }
        }
    }
    reasons
}

/// Units lacking a treatment combination: within a unit of a random term,
/// the factors constant within that term keep the unit's levels and every
/// other factor should take all its levels. A cell already named for a
/// coarser unit containing this one is not named again.
pub(super) fn missing_cells(treatments: &Layout, random: &[Partition]) -> Vec<NotClassical> {
    let all: Vec<usize> = (0..treatments.levels.len()).collect();
    let mut order: Vec<usize> = (0..random.len()).collect();
    order.sort_by_key(|&r| (random[r].present(), r));
    let mut named: BTreeSet<(usize, usize, Vec<usize>)> = BTreeSet::new();
    let mut cells: Vec<MissingCell> = Vec::new();
    let mut unnamed = 0;
    for &r in &order {
        let units = &random[r];
        let coarser: Vec<usize> = (0..random.len())
            .filter(|&c| c != r && units.nested_in(&random[c]) && !random[c].nested_in(units))
            .collect();
        let (fixed, free): (Vec<usize>, Vec<usize>) = all
            .iter()
            .partition(|&&f| constant_within(treatments, &[f], units));
        let Some(expected) = cross(&treatments.levels, &free) else {
            continue;
        };
        let mut present: BTreeMap<usize, UnitCells> = BTreeMap::new();
        for (i, (&u, row)) in units.unit.iter().zip(&treatments.rows).enumerate() {
            let entry = present
                .entry(u)
                .or_insert_with(|| (levels_of(row, &fixed), BTreeSet::new(), i));
            entry.1.insert(levels_of(row, &free));
        }
        for (&unit, (fixed_levels, seen, witness)) in &present {
            for combo in expected.iter().filter(|c| !seen.contains(*c)) {
                let mut levels = vec![0; all.len()];
                fixed
                    .iter()
                    .zip(fixed_levels)
                    .for_each(|(&f, &l)| levels[f] = l);
                free.iter().zip(combo).for_each(|(&f, &l)| levels[f] = l);
                let named_above = coarser
                    .iter()
                    .any(|&c| named.contains(&(c, random[c].unit[*witness], levels.clone())));
                if named_above {
                    continue;
                }
                named.insert((r, unit, levels.clone()));
                if cells.len() < MAX_NAMED_CELLS {
                    cells.push(MissingCell {
                        random_term: r,
                        unit,
                        levels,
                    });
                } else {
                    unnamed += 1;
                }
            }
        }
    }
    if cells.is_empty() {
        Vec::new()
    } else {
        vec![NotClassical::MissingCells { cells, unnamed }]
    }
}

/// Every combination of all treatment levels present, equally often.
pub(super) fn replication(treatments: &Layout) -> Vec<NotClassical> {
    let all: Vec<usize> = (0..treatments.levels.len()).collect();
    let mut counts: BTreeMap<Vec<usize>, usize> = BTreeMap::new();
    for row in &treatments.rows {
        *counts.entry(levels_of(row, &all)).or_insert(0) += 1;
    }
    let complete = all
        .iter()
        .try_fold(1usize, |acc, &f| acc.checked_mul(treatments.levels[f]))
        == Some(counts.len());
    let mut values = counts.values();
    let first = values.next().copied();
    if complete && values.all(|&c| Some(c) == first) {
        return Vec::new();
    }
    if let Some(grid) = cross(&treatments.levels, &all) {
        for combo in grid {
            counts.entry(combo).or_insert(0);
        }
    }
    vec![NotClassical::UnequalReplication {
        counts: counts.into_iter().collect(),
    }]
}

/// The stratum (index into the structure) of each fixed term.
pub(super) fn place_terms(
    treatments: &Layout,
    terms: &[TermFactors],
    structure: &UnitStructure,
) -> Result<Vec<usize>, Vec<NotClassical>> {
    let mut reasons = Vec::new();
    let mut placed = Vec::new();
    for (t, factors) in terms.iter().enumerate() {
        let candidates: Vec<usize> = (0..structure.partitions.len())
            .filter(|&g| constant_within(treatments, factors, &structure.partitions[g]))
            .collect();
        let coarsest = candidates
            .iter()
            .copied()
            .find(|&c| candidates.iter().all(|&d| d == c || structure.above[d][c]));
        let Some(stratum) = coarsest else {
            reasons.push(NotClassical::NoSingleStratum { term: t });
            continue;
        };
        for h in (0..structure.partitions.len()).filter(|&h| structure.above[stratum][h]) {
            if let StratumId::Random(r) = structure.ids[h]
                && !balanced_within(treatments, factors, &structure.partitions[h])
            {
                reasons.push(NotClassical::NotOrthogonal {
                    term: t,
                    random_term: r,
                });
            }
        }
        placed.push(stratum);
    }
    if reasons.is_empty() {
        Ok(placed)
    } else {
        Err(reasons)
    }
}

/// The term's contrasts (its sum-to-zero design columns) total zero over
/// every unit, so the term carries no information about differences between
/// these units. The codes are −1, 0 and 1, so the totals are exact integers.
fn balanced_within(treatments: &Layout, factors: &[usize], units: &Partition) -> bool {
    let mut totals: BTreeMap<usize, Vec<f64>> = BTreeMap::new();
    for (&u, row) in units.unit.iter().zip(&treatments.rows) {
        let codes = term_row(factors, &treatments.levels, row);
        let total = totals.entry(u).or_insert_with(|| vec![0.0; codes.len()]);
        total.iter_mut().zip(&codes).for_each(|(t, c)| *t += c);
    }
    totals.values().all(|t| t.iter().all(|v| *v == 0.0))
}
