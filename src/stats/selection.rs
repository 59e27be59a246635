//! Exact order statistics of many groups of values that are seen only in
//! passes (a file read again and again), in memory bounded by a budget
//! whatever the number of values or groups.
//!
//! Each wanted rank starts in a window holding every value of its group.
//! A pass counts the window's values in buckets (tracking each bucket's
//! smallest and largest value); the bucket that holds the rank becomes the
//! next window, narrowed to the values actually in it. A bucket whose
//! smallest and largest value are the same value answers at once; a window
//! with few enough values is collected in the next pass and the rank is
//! selected from them. Buckets are a monotone function of the value, so a
//! bucket's values are a run of the sorted values, and the answer is the
//! very value (the same bits) a sort of all values puts at that rank.
//!
//! Values are ordered as `f64::total_cmp` orders them, as the in-memory
//! selection does.

use std::cmp::Ordering;

use crate::stats::sum::NeumaierSum;

/// Buckets counted at once over all windows of a pass (64 bytes each).
pub const BUCKET_BUDGET: usize = 1 << 18;
/// Values collected at once over all windows of a pass (8 bytes each).
pub const COLLECT_BUDGET: usize = 1 << 19;
/// A window of at most this many values is collected rather than counted.
const COLLECT_AT_MOST: usize = 1 << 12;
/// Buckets of one window: at most this many, at least `MIN_BUCKETS`.
const MAX_BUCKETS: usize = 1 << 12;
const MIN_BUCKETS: usize = 16;

/// Where a group's wanted values may still be: the values between `low`
/// and `high` (inclusive, in total order; `None` for every value), with
/// `below` of the group's values before it and `count` inside it.
#[derive(Debug, Clone, Copy)]
struct Window {
    bounds: Option<(f64, f64)>,
    below: usize,
    count: usize,
    /// Where the buckets are laid (values outside go to two end buckets).
    grid: (f64, f64),
}

impl Window {
    fn holds(&self, v: f64) -> bool {
        match self.bounds {
            None => true,
            Some((lo, hi)) => {
                v.total_cmp(&lo) != Ordering::Less && v.total_cmp(&hi) != Ordering::Greater
            }
        }
    }

    fn same(&self, other: &Window) -> bool {
        let bits = |w: &Window| w.bounds.map(|(a, b)| (a.to_bits(), b.to_bits()));
        bits(self) == bits(other) && self.below == other.below
    }
}

/// A wanted rank of a group: found, or the window it is in.
#[derive(Debug, Clone, Copy)]
struct Target {
    rank: usize,
    found: Option<f64>,
    window: Window,
}

/// The buckets of a window: a monotone map from value to bucket.
#[derive(Debug, Clone, Copy)]
enum Grid {
    /// Equal widths between `lo` and `hi`, plus one bucket below and one above.
    Linear {
        lo: f64,
        hi: f64,
        scale: f64,
        inner: usize,
    },
    /// Equal slices of the order-preserving integer keys of the values, for
    /// ranges too wide (or too narrow) for arithmetic on the values.
    Keys { lo: u64, span: u128, buckets: usize },
}

/// The order-preserving integer of a value (the order of `total_cmp`).
fn key(v: f64) -> u64 {
    let bits = v.to_bits();
    if bits >> 63 == 1 {
        !bits
    } else {
        bits | 1 << 63
    }
}

impl Grid {
    fn new(lo: f64, hi: f64, buckets: usize) -> Grid {
        let width = hi - lo;
        if lo.total_cmp(&hi) == Ordering::Equal {
            return Grid::Linear {
                lo,
                hi,
                scale: 0.0,
                inner: 1,
            };
        }
        let scale = (buckets - 2) as f64 / width;
        if width.is_normal() && width > 0.0 && scale.is_finite() && lo.is_finite() && hi.is_finite()
        {
            Grid::Linear {
                lo,
                hi,
                scale,
                inner: buckets - 2,
            }
        } else {
            let (a, b) = (key(lo).min(key(hi)), key(lo).max(key(hi)));
            Grid::Keys {
                lo: a,
                span: u128::from(b - a) + 1,
                buckets,
            }
        }
    }

    fn len(&self) -> usize {
        match *self {
            Grid::Linear { inner, .. } => inner + 2,
            Grid::Keys { buckets, .. } => buckets,
        }
    }

    fn bucket(&self, v: f64) -> usize {
        match *self {
            Grid::Linear {
                lo,
                hi,
                scale,
                inner,
            } => {
                if v.total_cmp(&lo) == Ordering::Less {
                    0
                } else if v.total_cmp(&hi) == Ordering::Greater {
                    inner + 1
                } else if inner == 1 {
                    1
                } else {
                    // Rounding is monotone, so is the whole expression.
                    let x = (v - lo) * scale;
                    1 + if x >= 0.0 {
                        (x as usize).min(inner - 1)
                    } else {
                        0
                    }
                }
            }
            Grid::Keys { lo, span, buckets } => {
                let k = key(v).saturating_sub(lo);
                let b = u128::from(k) * buckets as u128 / span;
                (b as usize).min(buckets - 1)
            }
        }
    }
}

/// One bucket of a counted window: how many values, the smallest and the
/// largest, and (for a window holding all of its group, see [`Whole`]) the
/// first value seen with the sums of every value's offset from it.
#[derive(Debug, Clone, Copy)]
pub struct Bucket {
    pub count: u64,
    pub low: f64,
    pub high: f64,
    pub first: f64,
    /// Σ(v − first) and Σ(v − first)², in the order the values were seen.
    pub offsets: [NeumaierSum; 2],
}

impl Bucket {
    const EMPTY: Bucket = Bucket {
        count: 0,
        low: f64::NAN,
        high: f64::NAN,
        first: f64::NAN,
        offsets: [NeumaierSum::ZERO; 2],
    };

    /// True when every value in the bucket is the same value.
    pub fn single_valued(&self) -> bool {
        self.low.total_cmp(&self.high) == Ordering::Equal
    }
}

/// A group as the first pass saw it, when that pass read every value of
/// the group in one window: enough to compute sums over the group that
/// depend on order statistics found only later (Brown-Forsythe's
/// deviations from the median) without reading the values again.
#[derive(Debug, Clone)]
pub enum Whole {
    /// Every value, in the order seen.
    Values(Vec<f64>),
    /// The buckets in value order.
    Buckets(Vec<Bucket>),
}

/// What a pass does for one window of one group.
enum Work {
    /// `sums`: whether the buckets track their offset sums (a window
    /// holding the whole group, in the first pass).
    Count {
        grid: Grid,
        buckets: Vec<Bucket>,
        sums: bool,
    },
    Collect(Vec<f64>),
}

/// A window being read in this pass, and the targets it serves.
struct Active {
    window: Window,
    work: Work,
    targets: Vec<usize>,
}

/// Order statistics of several groups, found over as many passes as needed.
pub struct Selection {
    /// Per group, its wanted ranks.
    targets: Vec<Vec<Target>>,
    /// Per group, the windows read in the current pass.
    active: Vec<Vec<Active>>,
    passes: usize,
    /// Buckets and collected values allowed in one pass.
    budgets: (usize, usize),
    /// Per group, how the first pass saw it, when it read it whole.
    whole: Vec<Option<Whole>>,
}

impl Selection {
    /// `groups`: per group, its number of values, the ranks wanted (0-based)
    /// and a range likely to hold them (for the first buckets; any range is
    /// correct, a good one saves passes).
    pub fn new(groups: &[(usize, Vec<usize>, (f64, f64))]) -> Selection {
        Selection::with_budgets(groups, BUCKET_BUDGET, COLLECT_BUDGET)
    }

    /// As [`Selection::new`], with other budgets of buckets and collected
    /// values per pass.
    pub fn with_budgets(
        groups: &[(usize, Vec<usize>, (f64, f64))],
        buckets: usize,
        collect: usize,
    ) -> Selection {
        let targets = groups
            .iter()
            .map(|(n, ranks, grid)| {
                let mut ranks: Vec<usize> = ranks.iter().copied().filter(|r| r < n).collect();
                ranks.sort_unstable();
                ranks.dedup();
                ranks
                    .into_iter()
                    .map(|rank| Target {
                        rank,
                        found: None,
                        window: Window {
                            bounds: None,
                            below: 0,
                            count: *n,
                            grid: *grid,
                        },
                    })
                    .collect()
            })
            .collect();
        Selection {
            whole: vec![None; groups.len()],
            targets,
            active: Vec::new(),
            passes: 0,
            budgets: (buckets.max(MIN_BUCKETS), collect),
        }
    }

    /// True when every wanted rank is found.
    pub fn done(&self) -> bool {
        self.targets.iter().flatten().all(|t| t.found.is_some())
    }

    /// Passes begun so far.
    pub fn passes(&self) -> usize {
        self.passes
    }

    /// Chooses what the next pass reads: windows to collect while they fit
    /// the collecting budget, then windows to count while they fit the
    /// bucket budget; the rest wait for a later pass.
    pub fn begin_pass(&mut self) {
        self.passes += 1;
        let mut windows: Vec<(usize, Window, Vec<usize>)> = Vec::new();
        for (g, targets) in self.targets.iter().enumerate() {
            for (t, target) in targets.iter().enumerate() {
                if target.found.is_some() {
                    continue;
                }
                match windows
                    .iter_mut()
                    .find(|(wg, w, _)| *wg == g && w.same(&target.window))
                {
                    Some((_, _, ts)) => ts.push(t),
                    None => windows.push((g, target.window, vec![t])),
                }
            }
        }
        let counted = windows
            .iter()
            .filter(|(_, w, _)| w.count > COLLECT_AT_MOST)
            .count();
        let (bucket_budget, collect_budget) = self.budgets;
        let per_window = (bucket_budget / counted.max(1)).clamp(MIN_BUCKETS, MAX_BUCKETS);
        let (mut collected, mut buckets) = (0, 0);
        self.active = (0..self.targets.len()).map(|_| Vec::new()).collect();
        for (g, window, targets) in windows {
            let work = if window.count <= COLLECT_AT_MOST {
                if collected > 0 && collected + window.count > collect_budget {
                    continue;
                }
                collected += window.count;
                Work::Collect(Vec::with_capacity(window.count))
            } else {
                if buckets > 0 && buckets + per_window > bucket_budget {
                    continue;
                }
                buckets += per_window;
                let grid = Grid::new(window.grid.0, window.grid.1, per_window);
                Work::Count {
                    grid,
                    buckets: vec![Bucket::EMPTY; grid.len()],
                    sums: self.passes == 1 && window.bounds.is_none(),
                }
            };
            self.active[g].push(Active {
                window,
                work,
                targets,
            });
        }
    }

    /// Reads some values of `group` during a pass (any order, any runs).
    pub fn visit(&mut self, group: usize, values: &[f64]) {
        let Some(active) = self.active.get_mut(group) else {
            return;
        };
        for a in active.iter_mut() {
            let window = a.window;
            match &mut a.work {
                Work::Collect(kept) => {
                    kept.extend(values.iter().copied().filter(|&v| window.holds(v)));
                }
                Work::Count {
                    grid,
                    buckets,
                    sums,
                } => {
                    for &v in values {
                        if !window.holds(v) {
                            continue;
                        }
                        let b = &mut buckets[grid.bucket(v)];
                        if b.count == 0 {
                            (b.low, b.high, b.first) = (v, v, v);
                        } else if v.total_cmp(&b.low) == Ordering::Less {
                            b.low = v;
                        } else if v.total_cmp(&b.high) == Ordering::Greater {
                            b.high = v;
                        }
                        b.count += 1;
                        if *sums {
                            let u = v - b.first;
                            b.offsets[0].add(u);
                            b.offsets[1].add(u * u);
                        }
                    }
                }
            }
        }
    }

    /// Ends a pass: each target read in it is found or narrowed. A window
    /// that did not hold the count it should have (the data changed between
    /// passes) is an error.
    pub fn end_pass(&mut self) -> Result<(), SelectionError> {
        let active = std::mem::take(&mut self.active);
        for (g, windows) in active.into_iter().enumerate() {
            for a in windows {
                let window = a.window;
                match a.work {
                    Work::Collect(mut kept) => {
                        if kept.len() != window.count {
                            return Err(SelectionError::Changed);
                        }
                        if self.passes == 1 && window.bounds.is_none() {
                            self.whole[g] = Some(Whole::Values(kept.clone()));
                        }
                        kept.sort_unstable_by(f64::total_cmp);
                        for t in a.targets {
                            let target = &mut self.targets[g][t];
                            target.found = Some(kept[target.rank - window.below]);
                        }
                    }
                    Work::Count { buckets, sums, .. } => {
                        if buckets.iter().map(|b| b.count).sum::<u64>() != window.count as u64 {
                            return Err(SelectionError::Changed);
                        }
                        for t in a.targets {
                            narrow(&mut self.targets[g][t], &buckets);
                        }
                        if sums {
                            self.whole[g] = Some(Whole::Buckets(buckets));
                        }
                    }
                }
            }
        }
        Ok(())
    }

    /// How the first pass saw a group, when it read every value of it in
    /// one window (and the group had values).
    pub fn whole(&self, group: usize) -> Option<&Whole> {
        self.whole.get(group).and_then(Option::as_ref)
    }

    /// The values of each group's ranks, in the order asked (NaN for a rank
    /// beyond its group or not yet found).
    pub fn values(&self, group: usize, ranks: &[usize]) -> Vec<f64> {
        ranks
            .iter()
            .map(|r| {
                self.targets[group]
                    .iter()
                    .find(|t| t.rank == *r)
                    .and_then(|t| t.found)
                    .unwrap_or(f64::NAN)
            })
            .collect()
    }
}

/// Moves a target into the bucket that holds its rank, or finds it there.
fn narrow(target: &mut Target, buckets: &[Bucket]) {
    let mut before = target.window.below;
    for b in buckets {
        let c = b.count as usize;
        if target.rank < before + c {
            if b.single_valued() {
                target.found = Some(b.low);
            } else {
                target.window = Window {
                    bounds: Some((b.low, b.high)),
                    below: before,
                    count: c,
                    grid: (b.low, b.high),
                };
            }
            return;
        }
        before += c;
    }
}

/// Why a selection could not finish.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SelectionError {
    /// A later pass did not see the values an earlier pass counted.
    Changed,
}

#[cfg(test)]
#[path = "selection_tests.rs"]
mod tests;
