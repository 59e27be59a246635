//! A partition of the observations into units (the levels of one random term,
//! or of a treatment term): the unit of each observation, with the relations
//! between partitions that the stratum structure needs (nesting, meet, join).

/// The units of one partition. Unit numbers are the caller's; numbers with no
/// observation are simply absent (they play no part in any check).
#[derive(Debug, Clone, PartialEq, Eq)]
pub(super) struct Partition {
    /// `unit[i]` is the unit of observation i.
    pub unit: Vec<usize>,
    /// Observations per unit number (0 for an absent unit).
    pub sizes: Vec<usize>,
}

impl Partition {
    pub fn new(unit: Vec<usize>) -> Partition {
        let count = unit.iter().map(|u| u + 1).max().unwrap_or(0);
        let mut sizes = vec![0; count];
        for &u in &unit {
            sizes[u] += 1;
        }
        Partition { unit, sizes }
    }

    /// Every observation its own unit.
    pub fn observations(n: usize) -> Partition {
        Partition::new((0..n).collect())
    }

    /// Number of units that hold at least one observation.
    pub fn present(&self) -> usize {
        self.sizes.iter().filter(|&&s| s > 0).count()
    }

    /// The common unit size when every present unit has the same size.
    pub fn uniform_size(&self) -> Option<usize> {
        let mut sizes = self.sizes.iter().copied().filter(|&s| s > 0);
        let first = sizes.next()?;
        sizes.all(|s| s == first).then_some(first)
    }

    /// True when every unit of `self` lies inside one unit of `other`.
    pub fn nested_in(&self, other: &Partition) -> bool {
        let mut parent: Vec<Option<usize>> = vec![None; self.sizes.len()];
        self.unit
            .iter()
            .zip(&other.unit)
            .all(|(&u, &v)| *parent[u].get_or_insert(v) == v)
    }

    /// True when the two partitions group the observations the same way.
    pub fn same_as(&self, other: &Partition) -> bool {
        self.nested_in(other) && other.nested_in(self)
    }

    /// The units of both at once: observations share a unit of the meet when
    /// they share a unit of each.
    pub fn meet(&self, other: &Partition) -> Partition {
        let mut label = std::collections::BTreeMap::new();
        let unit = self
            .unit
            .iter()
            .zip(&other.unit)
            .map(|pair| {
                let next = label.len();
                *label.entry(pair).or_insert(next)
            })
            .collect();
        Partition::new(unit)
    }

    /// The finest partition coarser than both: units of either that share an
    /// observation are joined (connected components).
    pub fn join(&self, other: &Partition) -> Partition {
        let offset = self.sizes.len();
        let mut parent: Vec<usize> = (0..offset + other.sizes.len()).collect();
        fn root(parent: &mut [usize], mut x: usize) -> usize {
            while parent[x] != x {
                parent[x] = parent[parent[x]];
                x = parent[x];
            }
            x
        }
        for (&u, &v) in self.unit.iter().zip(&other.unit) {
            let (a, b) = (root(&mut parent, u), root(&mut parent, offset + v));
            if a != b {
                parent[a.max(b)] = a.min(b);
            }
        }
        let unit = self.unit.iter().map(|&u| root(&mut parent, u)).collect();
        Partition::new(unit)
    }

    /// Mean of `values` within each unit, repeated for each observation
    /// (the projection onto functions constant within units). Two-pass
    /// compensated sums keep it exact for the decimal-shifted response.
    pub fn unit_means(&self, values: &[f64]) -> Vec<f64> {
        let mut sums = vec![crate::stats::sum::NeumaierSum::default(); self.sizes.len()];
        for (&u, &v) in self.unit.iter().zip(values) {
            sums[u].add(v);
        }
        let means: Vec<f64> = sums
            .iter()
            .zip(&self.sizes)
            .map(|(s, &n)| if n > 0 { s.value() / n as f64 } else { 0.0 })
            .collect();
        self.unit.iter().map(|&u| means[u]).collect()
    }

    /// Σ over units of (Σ of the unit's weights)².
    pub fn squared_unit_totals(&self, weights: &[f64]) -> f64 {
        let mut sums = vec![crate::stats::sum::NeumaierSum::default(); self.sizes.len()];
        for (&u, &w) in self.unit.iter().zip(weights) {
            sums[u].add(w);
        }
        crate::stats::sum::neumaier(sums.iter().map(|s| s.value() * s.value()))
    }
}
