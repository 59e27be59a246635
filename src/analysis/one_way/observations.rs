//! Every check a one-factor block makes on its observations, computed in
//! passes over them: from values kept in memory, or by reading the file
//! again in memory that does not grow with the rows. Both run this same
//! code with the same accumulators in the same order, so they give the same
//! bits. A factorial block runs it too (see `Fitting`): its passes visit
//! full cells, its residuals are from the model's fitted values, and its
//! spread tests compare treatment cells (groups of full cells).
//!
//! The passes (README "Large files"): the level sums come first (the
//! reader's own pass). Pass A: Levene's absolute deviations from the level
//! means, the residuals' power sums, the outliers, the total sum of squares
//! and the first counts of the median and quartile selection. Then as many
//! selection passes as the values need (none for data on a decimal grid
//! of a few thousand steps per level). Brown-Forsythe's deviations from the
//! exact medians come from pass A's record of each level (its values, or
//! its buckets with their sums) where no bucket holds values on both sides
//! of the median; else from one more pass.
//!
//! Sums are per level (per cell), Neumaier-compensated, fed each level's
//! values in file order and combined in level order (a group's cells
//! merged in cell order); outliers are ranked with ties in line order. So
//! how a pass interleaves the levels changes nothing.

use crate::analysis::binding::{Again, FirstPass, rescan_csv};
use crate::data::DataError;
use crate::data::scan::ScanSpec;
use crate::stats::assumptions::{
    FTest, OUTLIER_THRESHOLD, OUTLIERS_KEPT, ShapiroWilk, ShapiroWilkSkip, central_moments,
    externally_studentized, outlier_screen, shape_of_moments, shapiro_wilk,
};
use crate::stats::extremes::Extremes;
use crate::stats::oneway::{GroupSummary, one_way};
use crate::stats::selection::{Selection, Whole};
use crate::stats::sum::NeumaierSum;

/// Shapiro-Wilk is computed up to this many residuals (Royston's range),
/// which are then kept for it.
const SHAPIRO_WILK_MAX: usize = 5000;

/// A source of passes over the observations.
pub(in crate::analysis) trait Passes {
    /// Hands every observation to `visit(level, offsets, lines)`, in runs
    /// of one level, each level's values in file order. `verify`: check
    /// the bytes against the first pass's fingerprint (so the pass that may be the
    /// last reads the file the report records).
    fn pass(&mut self, verify: bool, visit: Visit<'_>) -> Result<(), DataError>;
}

pub(in crate::analysis) type Visit<'v> = &'v mut dyn FnMut(usize, &[f64], &[usize]);

/// Observations kept in memory, per level in design order.
pub(super) struct Kept<'a> {
    pub offsets: &'a [Vec<f64>],
    pub lines: &'a [Vec<usize>],
}

impl Passes for Kept<'_> {
    fn pass(&mut self, _verify: bool, visit: Visit<'_>) -> Result<(), DataError> {
        for (level, (offsets, lines)) in self.offsets.iter().zip(self.lines).enumerate() {
            visit(level, offsets, lines);
        }
        Ok(())
    }
}

/// A CSV file read again for each pass.
pub(in crate::analysis) struct Reread<'a> {
    pub again: Again<'a>,
    pub spec: ScanSpec<'a>,
    pub first: FirstPass,
    /// Each level of the first pass's order: its place in design order
    /// (`None` for levels without observations).
    pub design: Vec<Option<usize>>,
}

impl Passes for Reread<'_> {
    fn pass(&mut self, verify: bool, visit: Visit<'_>) -> Result<(), DataError> {
        let design = &self.design;
        let mut to_design = |level: usize, offsets: &[f64], lines: &[usize]| {
            if let Some(Some(d)) = design.get(level) {
                visit(*d, offsets, lines);
            }
        };
        rescan_csv(self.again, &self.spec, &self.first, verify, &mut to_design)
    }
}

/// An observation flagged as an outlier: its level (cell), line and offset.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(in crate::analysis) struct Flag {
    pub level: usize,
    pub line: usize,
    pub offset: f64,
    pub studentized: f64,
}

/// What the observations tell.
#[derive(Debug, Clone, PartialEq)]
pub(in crate::analysis) struct Observed {
    pub brown_forsythe: Option<FTest>,
    pub levene: Option<FTest>,
    pub shapiro_wilk: Result<ShapiroWilk, ShapiroWilkSkip>,
    pub skewness: f64,
    pub excess_kurtosis: f64,
    pub outlier_count: usize,
    /// The most extreme flagged observations (at most `OUTLIERS_KEPT`), in
    /// line order.
    pub outliers: Vec<Flag>,
    /// Per group: first quartile, median, third quartile (type 7), of the
    /// offsets less the cells' shifts (see `Fitting`).
    pub quartiles: Vec<(f64, f64, f64)>,
    /// Σ(y − ȳ)² over every observation, for the ANOVA's self-check.
    pub total_ss: f64,
    /// Per level (cell), the line of its first observation.
    pub first_lines: Vec<usize>,
    /// Passes made here (after the level sums).
    pub passes: usize,
    /// Per level (cell), its first value in file order (Brown-Forsythe's shift).
    first_values: Vec<f64>,
}

/// How the observations are fitted and grouped. The passes visit cells:
/// the levels of one factor, or the full cells of several. Each cell has a
/// fitted value (the residual is y − fitted), a leverage, and a group whose
/// spread the tests compare; the spread tests and quartiles read y − shift.
pub(in crate::analysis) struct Fitting {
    /// Per cell: its number of observations.
    pub n: Vec<usize>,
    /// Per cell: its group.
    pub group_of: Vec<usize>,
    /// Per cell: the fitted value of its observations.
    pub fitted: Vec<f64>,
    /// Per cell: what the spread tests subtract first: zero for the values
    /// themselves (one factor), the fitted value for residuals.
    pub shift: Vec<f64>,
    /// Per cell: the leverage of its observations.
    pub leverage: Vec<f64>,
    /// Per group: n, mean and sum of squares of the values y − shift.
    pub groups: Vec<GroupSummary>,
    /// The residual mean square and its degrees of freedom.
    pub mse: f64,
    pub df: usize,
    /// The grand mean (of the offsets), for the total sum of squares.
    pub grand: f64,
}

impl Fitting {
    /// One factor: each level its own group, fitted by its mean, and the
    /// spread tests on the values themselves.
    fn one_factor(summaries: &[GroupSummary]) -> Fitting {
        let table = one_way(summaries, 0.05, None).ok();
        let (mse, df, grand) = table.as_ref().map_or((f64::NAN, 0, f64::NAN), |t| {
            (t.ms_within, t.df_within, t.grand_mean)
        });
        Fitting {
            n: summaries.iter().map(|s| s.n).collect(),
            group_of: (0..summaries.len()).collect(),
            fitted: summaries.iter().map(|s| s.mean).collect(),
            shift: vec![0.0; summaries.len()],
            leverage: summaries.iter().map(|s| 1.0 / s.n as f64).collect(),
            groups: summaries.to_vec(),
            mse,
            df,
            grand,
        }
    }

    /// Per-cell summaries merged into their groups, in cell order.
    fn by_group(&self, cell: impl Fn(usize) -> GroupSummary) -> Vec<GroupSummary> {
        let none = GroupSummary {
            n: 0,
            mean: f64::NAN,
            ss: f64::NAN,
        };
        let mut groups = vec![none; self.groups.len()];
        for (c, &g) in self.group_of.iter().enumerate() {
            groups[g] = groups[g].merge(&cell(c));
        }
        groups
    }
}

/// The values less `shift` (the values themselves when it is zero).
fn shifted<'a>(values: &'a [f64], shift: f64, buffer: &'a mut Vec<f64>) -> &'a [f64] {
    if shift == 0.0 {
        return values;
    }
    buffer.clear();
    buffer.extend(values.iter().map(|y| y - shift));
    buffer
}

/// The ranks type-7 quartiles interpolate between: (low, high, fraction)
/// for the first quartile, the median and the third quartile.
fn quartile_places(n: usize) -> [(usize, usize, f64); 3] {
    let last = n.saturating_sub(1);
    [0.25, 0.5, 0.75].map(|q| {
        let h = last as f64 * q;
        let lo = h.floor() as usize;
        (lo, (lo + 1).min(last), h - lo as f64)
    })
}

/// The ranks the median averages (one for odd n, two for even n).
fn median_ranks(n: usize) -> Vec<usize> {
    let m = n / 2;
    if n % 2 == 1 {
        vec![m]
    } else {
        vec![m.saturating_sub(1), m]
    }
}

/// A summary of values z from their shifted sums Σ(z − s) and Σ(z − s)²
/// (the shifted-data formula; exact in the mean when s is near it).
fn shifted_summary(n: usize, shift: f64, sums: &[NeumaierSum; 2]) -> GroupSummary {
    let nf = n as f64;
    let (s1, s2) = (sums[0].value(), sums[1].value());
    GroupSummary {
        n,
        mean: shift + s1 / nf,
        ss: (s2 - s1 * s1 / nf).max(0.0),
    }
}

/// Adds z − s and (z − s)².
fn add_shifted(sums: &mut [NeumaierSum; 2], d: f64) {
    sums[0].add(d);
    sums[1].add(d * d);
}

/// The F test on absolute deviations (Levene, Brown-Forsythe), where defined.
fn spread_test(deviations: &[GroupSummary]) -> Option<FTest> {
    let t = one_way(deviations, 0.05, None).ok()?;
    (t.f.is_finite() && t.df_within > 0).then_some(FTest {
        statistic: t.f,
        df1: t.df_between as f64,
        df2: t.df_within as f64,
        p: t.p,
    })
}

/// Per-level sums combined in level order.
fn combined<'a>(sums: impl Iterator<Item = &'a NeumaierSum>) -> f64 {
    let mut total = NeumaierSum::default();
    for s in sums {
        total.add(s.value());
    }
    total.value()
}

/// What pass A gathers, per level (cell) unless said.
struct PassA<'s> {
    fit: &'s Fitting,
    /// Where Levene's deviations are shifted to (see `shifted_summary`):
    /// the level's first deviation, once seen.
    levene_shift: Vec<f64>,
    /// Each level's first value in file order.
    first_values: Vec<f64>,
    /// |Residual| beyond which t is computed (see `outlier_screen`).
    screens: Vec<f64>,
    first_lines: Vec<Option<usize>>,
    levene: Vec<[NeumaierSum; 2]>,
    powers: Vec<[NeumaierSum; 4]>,
    total: Vec<[NeumaierSum; 2]>,
    flagged: Extremes<Flag>,
    /// Every residual, when there are few enough for Shapiro-Wilk.
    residuals: Option<Vec<Vec<f64>>>,
}

impl<'s> PassA<'s> {
    fn new(fit: &'s Fitting) -> Self {
        let k = fit.n.len();
        let n_total: usize = fit.n.iter().sum();
        PassA {
            fit,
            levene_shift: vec![f64::NAN; k],
            first_values: vec![f64::NAN; k],
            screens: (fit.leverage.iter())
                .map(|&h| outlier_screen(fit.mse, h, fit.df as f64))
                .collect(),
            first_lines: vec![None; k],
            levene: vec![Default::default(); k],
            powers: vec![Default::default(); k],
            total: vec![Default::default(); k],
            flagged: Extremes::new(OUTLIERS_KEPT),
            residuals: (n_total <= SHAPIRO_WILK_MAX).then(|| vec![Vec::new(); k]),
        }
    }

    fn visit(&mut self, level: usize, offsets: &[f64], lines: &[usize]) {
        let fit = self.fit;
        // Levene's centre: the group's mean of the values y − cell_shift.
        let (centre, cell_shift) = (fit.groups[fit.group_of[level]].mean, fit.shift[level]);
        if self.first_lines[level].is_none()
            && let (Some(&line), Some(&y)) = (lines.first(), offsets.first())
        {
            // The shifted-data formula with a value of the data as the shift:
            // equal deviations give exactly zero spread.
            self.first_lines[level] = Some(line);
            self.first_values[level] = y;
            self.levene_shift[level] = ((y - cell_shift) - centre).abs();
        }
        let (mean, shift, screen) = (
            fit.fitted[level],
            self.levene_shift[level],
            self.screens[level],
        );
        // A leverage of one leaves no residual to studentize (a level of
        // one observation).
        let flags =
            fit.df >= 2 && crate::stats::is_positive(fit.mse) && fit.leverage[level] < 1.0 - 1e-12;
        for (&y, &line) in offsets.iter().zip(lines) {
            let e = y - mean;
            add_shifted(
                &mut self.levene[level],
                ((y - cell_shift) - centre).abs() - shift,
            );
            let p = &mut self.powers[level];
            p[0].add(e);
            p[1].add(e * e);
            p[2].add(e * e * e);
            p[3].add(e * e * e * e);
            add_shifted(&mut self.total[level], y - fit.grand);
            if flags && e.abs() > screen {
                self.flag(level, e, y, line);
            }
        }
        if let Some(r) = &mut self.residuals {
            r[level].extend(offsets.iter().map(|y| y - mean));
        }
    }

    fn flag(&mut self, level: usize, e: f64, y: f64, line: usize) {
        let fit = self.fit;
        let t = externally_studentized(e, fit.mse, fit.leverage[level], fit.df as f64);
        if t.abs() > OUTLIER_THRESHOLD {
            let flag = Flag {
                level,
                line,
                offset: y,
                studentized: t,
            };
            self.flagged.offer_at(t.abs(), line, flag);
        }
    }

    /// Levene's test, the residuals' shape and the total sum of squares.
    fn finish(self, observed: &mut Observed) {
        let fit = self.fit;
        let n_total: usize = fit.n.iter().sum();
        let deviations =
            fit.by_group(|c| shifted_summary(fit.n[c], self.levene_shift[c], &self.levene[c]));
        observed.levene = spread_test(&deviations);
        observed.first_values = self.first_values.clone();
        let power = |i: usize| combined(self.powers.iter().map(|p| &p[i]));
        let (m2, m3, m4) = central_moments(n_total, [power(0), power(1), power(2), power(3)]);
        (observed.skewness, observed.excess_kurtosis) = shape_of_moments(n_total, m2, m3, m4);
        observed.shapiro_wilk = match self.residuals {
            Some(r) => shapiro_wilk(&r.concat()),
            None => Err(ShapiroWilkSkip::TooMany),
        };
        let (t1, t2) = (
            combined(self.total.iter().map(|t| &t[0])),
            combined(self.total.iter().map(|t| &t[1])),
        );
        observed.total_ss = (t2 - t1 * t1 / n_total as f64).max(0.0);
        observed.outlier_count = self.flagged.total();
        observed.outliers = self.flagged.into_most_extreme_first();
        observed.outliers.sort_by_key(|f| f.line);
        observed.first_lines = self.first_lines.iter().map(|l| l.unwrap_or(0)).collect();
    }
}

fn spread(s: &GroupSummary) -> f64 {
    (s.ss / s.n as f64).sqrt()
}

/// The ranks each level's quartiles and median need, and where its first
/// buckets go: every quantile between the quartiles lies within √3 SDs of
/// the mean (Cantelli's inequality), so ±3 SDs holds them.
fn wanted_ranks(summaries: &[GroupSummary]) -> Vec<(usize, Vec<usize>, (f64, f64))> {
    summaries
        .iter()
        .map(|s| {
            let mut ranks: Vec<usize> = quartile_places(s.n)
                .iter()
                .flat_map(|&(lo, hi, _)| [lo, hi])
                .collect();
            ranks.extend(median_ranks(s.n));
            let reach = 3.0 * spread(s);
            (s.n, ranks, (s.mean - reach, s.mean + reach))
        })
        .collect()
}

/// Adds Brown-Forsythe's shifted deviations |y − median| − shift of a level
/// from the first pass's record of it, when that record allows: every
/// value kept (added in the order seen, as a pass over them would), or
/// buckets each wholly on one side of the median (a bucket of one value
/// adds c·d and c·d²; one of several values, through its offsets u from
/// its first value f: d = K ± u with K = ±(f − median) − shift). False,
/// with nothing added, when a bucket holds values on both sides.
fn deviations_of_whole(
    whole: &Whole,
    median: f64,
    shift: f64,
    sums: &mut [NeumaierSum; 2],
) -> bool {
    match whole {
        Whole::Values(values) => {
            for &y in values {
                add_shifted(sums, (y - median).abs() - shift);
            }
            true
        }
        Whole::Buckets(buckets) => {
            let occupied = || buckets.iter().filter(|b| b.count > 0);
            if occupied().any(|b| b.low < median && b.high > median) {
                return false;
            }
            for b in occupied() {
                let c = b.count as f64;
                let k = (b.first - median).abs() - shift;
                if b.single_valued() {
                    sums[0].add(c * k);
                    sums[1].add(c * k * k);
                } else {
                    // Above the median d = K + u, below it d = K − u.
                    let sign = if b.low >= median { 1.0 } else { -1.0 };
                    let (su, su2) = (b.offsets[0].value(), b.offsets[1].value());
                    sums[0].add(c * k);
                    sums[0].add(sign * su);
                    sums[1].add(c * k * k);
                    sums[1].add(2.0 * sign * k * su);
                    sums[1].add(su2);
                }
            }
            true
        }
    }
}

/// Every check on the observations of levels with these summaries.
pub(super) fn observe(
    passes: &mut dyn Passes,
    summaries: &[GroupSummary],
) -> Result<Observed, DataError> {
    observe_fitted(passes, &Fitting::one_factor(summaries))
}

/// Every check on the observations of cells fitted and grouped by `fit`.
pub(in crate::analysis) fn observe_fitted(
    passes: &mut dyn Passes,
    fit: &Fitting,
) -> Result<Observed, DataError> {
    let summaries = &fit.groups;
    let mut observed = Observed::empty(summaries.len());
    let mut selection = Selection::new(&wanted_ranks(summaries));
    let mut first = PassA::new(fit);
    let mut buffer = Vec::new();
    selection.begin_pass();
    // Checked against the first pass's fingerprint: it may be the last pass.
    passes.pass(true, &mut |level, offsets, lines| {
        first.visit(level, offsets, lines);
        let values = shifted(offsets, fit.shift[level], &mut buffer);
        selection.visit(fit.group_of[level], values);
    })?;
    selection.end_pass().map_err(|_| changed_error())?;
    first.finish(&mut observed);
    while !selection.done() {
        selection.begin_pass();
        passes.pass(false, &mut |level, offsets, _| {
            let values = shifted(offsets, fit.shift[level], &mut buffer);
            selection.visit(fit.group_of[level], values)
        })?;
        selection.end_pass().map_err(|_| changed_error())?;
    }
    let medians: Vec<f64> = summaries
        .iter()
        .enumerate()
        .map(|(i, s)| {
            let v = selection.values(i, &median_ranks(s.n));
            match v.as_slice() {
                [m] => *m,
                [a, b] => 0.5 * (a + b),
                _ => f64::NAN,
            }
        })
        .collect();
    observed.quartiles = summaries
        .iter()
        .enumerate()
        .map(|(i, s)| {
            let places = quartile_places(s.n);
            let at = |(lo, hi, frac): (usize, usize, f64)| {
                let v = selection.values(i, &[lo, hi]);
                v[0] + frac * (v[1] - v[0])
            };
            (at(places[0]), at(places[1]), at(places[2]))
        })
        .collect();
    // Brown-Forsythe: deviations from the group medians, shifted by each
    // cell's first deviation; for a group of one cell from the first pass's
    // record of it where that allows (see `deviations_of_whole`), else by
    // reading again.
    let median_of = |c: usize| medians[fit.group_of[c]];
    let shifts: Vec<f64> = (observed.first_values.iter().enumerate())
        .map(|(c, y)| ((y - fit.shift[c]) - median_of(c)).abs())
        .collect();
    let mut sums: Vec<[NeumaierSum; 2]> = vec![Default::default(); fit.n.len()];
    let mut cells_in = vec![0_usize; summaries.len()];
    for &g in &fit.group_of {
        cells_in[g] += 1;
    }
    let again: Vec<bool> = (0..fit.n.len())
        .map(|c| {
            let g = fit.group_of[c];
            let from_whole = cells_in[g] == 1
                && selection
                    .whole(g)
                    .is_some_and(|w| deviations_of_whole(w, medians[g], shifts[c], &mut sums[c]));
            fit.n[c] > 0 && !from_whole
        })
        .collect();
    if again.iter().any(|&a| a) {
        passes.pass(true, &mut |level, offsets, _| {
            if !again[level] {
                return;
            }
            let (median, shift, cell_shift) = (median_of(level), shifts[level], fit.shift[level]);
            for &y in offsets {
                add_shifted(&mut sums[level], ((y - cell_shift) - median).abs() - shift);
            }
        })?;
        observed.passes += 1;
    }
    let deviations = fit.by_group(|c| shifted_summary(fit.n[c], shifts[c], &sums[c]));
    observed.brown_forsythe = spread_test(&deviations);
    observed.passes += selection.passes();
    Ok(observed)
}

impl Observed {
    fn empty(k: usize) -> Observed {
        Observed {
            brown_forsythe: None,
            levene: None,
            shapiro_wilk: Err(ShapiroWilkSkip::TooFew),
            skewness: f64::NAN,
            excess_kurtosis: f64::NAN,
            outlier_count: 0,
            outliers: Vec::new(),
            quartiles: vec![(f64::NAN, f64::NAN, f64::NAN); k],
            total_ss: f64::NAN,
            first_lines: vec![0; k],
            first_values: Vec::new(),
            passes: 0,
        }
    }
}

fn changed_error() -> DataError {
    crate::data::scan::changed_error()
}

#[cfg(test)]
#[path = "observations_tests.rs"]
mod tests;
