//! The unit structure declared by the random terms: checked to be an
//! orthogonal block structure (Nelder 1965) — every term's units of equal
//! size, any two terms nested or crossed orthogonally, and the set closed
//! under meets and joins — and laid out as strata, coarsest first.

use super::partition::Partition;
use super::reason::{NotClassical, StratumId};

/// The strata of a recognised unit structure, in table order: random terms
/// by increasing number of units (a coarser term always has fewer units, so
/// every stratum follows those above it), the residual last.
#[derive(Debug, Clone)]
pub(super) struct UnitStructure {
    pub ids: Vec<StratumId>,
    pub partitions: Vec<Partition>,
    /// Observations per unit of each stratum.
    pub unit_size: Vec<usize>,
    /// `above[g][h]`: stratum h is strictly coarser than stratum g.
    pub above: Vec<Vec<bool>>,
    /// Degrees of freedom of each stratum (its dimension).
    pub df: Vec<usize>,
}

/// Checks each random term on its own and every pair of terms.
pub(super) fn unit_structure(
    random: &[Partition],
    n: usize,
) -> Result<UnitStructure, Vec<NotClassical>> {
    if random.is_empty() {
        return Err(vec![NotClassical::NoRandomTerm]);
    }
    let mut reasons = Vec::new();
    for (r, p) in random.iter().enumerate() {
        match p.uniform_size() {
            _ if p.present() == 1 => {
                reasons.push(NotClassical::RandomTermIsWhole { random_term: r })
            }
            Some(1) => reasons.push(NotClassical::RandomTermIsResidual { random_term: r }),
            Some(_) => {}
            None => reasons.push(NotClassical::UnequalUnitSizes {
                random_term: r,
                sizes: present_sizes(p),
            }),
        }
    }
    if reasons.is_empty() {
        pair_checks(random, n, &mut reasons);
    }
    if !reasons.is_empty() {
        return Err(reasons);
    }
    Ok(layout(random, n))
}

fn present_sizes(p: &Partition) -> Vec<(usize, usize)> {
    p.sizes
        .iter()
        .enumerate()
        .filter(|(_, s)| **s > 0)
        .map(|(u, s)| (u, *s))
        .collect()
}

/// Any two terms: distinct, and either nested or crossed with every unit of
/// one meeting every unit of the other within their join, the meet and the
/// join being declared (or the observations and the whole experiment).
fn pair_checks(random: &[Partition], n: usize, reasons: &mut Vec<NotClassical>) {
    let observations = Partition::observations(n);
    for first in 0..random.len() {
        for second in first + 1..random.len() {
            let (a, b) = (&random[first], &random[second]);
            if a.same_as(b) {
                reasons.push(NotClassical::SameUnits { first, second });
                continue;
            }
            if a.nested_in(b) || b.nested_in(a) {
                continue;
            }
            let meet = a.meet(b);
            let join = a.join(b);
            if !(meet.same_as(&observations) || random.iter().any(|r| r.same_as(&meet))) {
                reasons.push(NotClassical::UndeclaredMeet { first, second });
            }
            if !(join.present() == 1 || random.iter().any(|r| r.same_as(&join))) {
                reasons.push(NotClassical::UndeclaredJoin { first, second });
            }
            if !crossed_evenly(a, b, &meet, &join) {
                reasons.push(NotClassical::CrossedUnevenly { first, second });
            }
        }
    }
}

/// Within each unit of the join, every unit of `a` meets every unit of `b`
/// in the same number of observations.
fn crossed_evenly(a: &Partition, b: &Partition, meet: &Partition, join: &Partition) -> bool {
    let count_in_join = |p: &Partition| {
        let mut seen = std::collections::BTreeSet::new();
        let mut counts = vec![0usize; join.sizes.len()];
        for (&u, &j) in p.unit.iter().zip(&join.unit) {
            if seen.insert(u) {
                counts[j] += 1;
            }
        }
        counts
    };
    let (na, nb, nm) = (count_in_join(a), count_in_join(b), count_in_join(meet));
    meet.uniform_size().is_some()
        && (0..join.sizes.len()).all(|j| join.sizes[j] == 0 || nm[j] == na[j] * nb[j])
}

/// Orders the strata, records which lie above which, and their df.
fn layout(random: &[Partition], n: usize) -> UnitStructure {
    let mut order: Vec<usize> = (0..random.len()).collect();
    order.sort_by_key(|&r| (random[r].present(), r));
    let mut ids: Vec<StratumId> = order.iter().map(|&r| StratumId::Random(r)).collect();
    let mut partitions: Vec<Partition> = order.iter().map(|&r| random[r].clone()).collect();
    ids.push(StratumId::Residual);
    partitions.push(Partition::observations(n));
    let s = partitions.len();
    let above: Vec<Vec<bool>> = (0..s)
        .map(|g| {
            (0..s)
                .map(|h| {
                    h != g
                        && partitions[g].nested_in(&partitions[h])
                        && !partitions[h].nested_in(&partitions[g])
                })
                .collect()
        })
        .collect();
    let mut df = vec![0usize; s];
    for g in 0..s {
        let taken: usize = (0..g).filter(|&h| above[g][h]).map(|h| df[h]).sum();
        df[g] = partitions[g].present().saturating_sub(1 + taken);
    }
    let unit_size = partitions
        .iter()
        .map(|p| p.uniform_size().unwrap_or(1))
        .collect();
    UnitStructure {
        ids,
        partitions,
        unit_size,
        above,
        df,
    }
}
