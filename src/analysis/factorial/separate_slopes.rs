//! The separate-slopes model of one factor and one covariate
//! (specification A.4), for when the test of equal slopes rejects: each
//! group's own slope, its mean at the covariate's grand mean, the
//! differences between the groups' lines there, and where along the
//! covariate two lines differ (Johnson and Neyman 1936).

use super::covariates::Adjusting;
use crate::outcome::covariates::{DifferenceRegion, GroupSlope, LineDifference, SeparateSlopes};
use crate::stats::dist::{t_isf, t_sf};
use crate::stats::oneway::GroupSummary;
use crate::stats::sum::neumaier;

/// Above this many groups the pairwise lines are not listed.
const MAX_GROUPS: usize = 12;

/// One group's line: n, covariate mean (centred), response mean (offset),
/// Sxx and Sxy about the group's own means.
struct Line {
    n: f64,
    x: f64,
    y: f64,
    sxx: f64,
    sxy: f64,
}

impl Line {
    fn slope(&self) -> f64 {
        self.sxy / self.sxx
    }
}

/// The separate-slopes model, where the design allows the simple form:
/// one treatment factor, no blocks, one covariate, every group with two
/// or more distinct covariate values.
pub(super) fn separate_slopes(a: &Adjusting<'_>) -> Option<SeparateSlopes> {
    let d = &a.described;
    if d.treatment.factors.len() != 1 || !d.model.blocks.is_empty() || d.centred.columns.len() != 1
    {
        return None;
    }
    let x = &d.centred.columns[0];
    let y = d.observed.offsets;
    let groups = &d.groups;
    if groups.len() > MAX_GROUPS {
        return None;
    }
    let lines: Vec<Line> = groups
        .iter()
        .map(|(_, m)| {
            let xs: Vec<f64> = m.iter().map(|&i| x[i]).collect();
            let ys: Vec<f64> = m.iter().map(|&i| y[i]).collect();
            let (gx, gy) = (
                GroupSummary::from_values(&xs),
                GroupSummary::from_values(&ys),
            );
            let sxy = neumaier(
                xs.iter()
                    .zip(&ys)
                    .map(|(a, b)| (a - gx.mean) * (b - gy.mean)),
            );
            Line {
                n: m.len() as f64,
                x: gx.mean,
                y: gy.mean,
                sxx: gx.ss,
                sxy,
            }
        })
        .collect();
    if lines.iter().any(|l| l.sxx.is_nan() || l.sxx <= 0.0) {
        return None;
    }
    let rss = within_y(a, groups) - neumaier(lines.iter().map(|l| l.sxy * l.sxy / l.sxx));
    let df = y.len() as f64 - 2.0 * lines.len() as f64;
    if df < 1.0 {
        return None;
    }
    let ms = rss / df;
    let origin = d.origin;
    let slopes = groups
        .iter()
        .zip(&lines)
        .map(|((label, _), l)| {
            // The line at the grand mean (0 after centring).
            let at = l.y - l.slope() * l.x;
            GroupSlope {
                label: label.clone(),
                slope: l.slope(),
                se: (ms / l.sxx).sqrt(),
                df,
                mean_at: origin + at,
                mean_at_se: (ms * (1.0 / l.n + l.x * l.x / l.sxx)).sqrt(),
            }
        })
        .collect();
    let t = t_isf(a.alpha / 2.0, df);
    let mut differences = Vec::new();
    let mut regions = Vec::new();
    let (lo, hi) = covariate_range(x);
    let shift = d.centred.means[0];
    for i in 0..lines.len() {
        for j in i + 1..lines.len() {
            differences.push(difference(&lines[i], &lines[j], (i, j), (ms, df, t), shift));
            regions.push(region(
                &lines[i],
                &lines[j],
                (i, j),
                (ms, t),
                (lo, hi),
                shift,
            ));
        }
    }
    Some(SeparateSlopes {
        ms,
        df,
        groups: slopes,
        differences,
        regions,
    })
}

/// The within-group sum of squares of the response, Σ Syy.
fn within_y(a: &Adjusting<'_>, groups: &[(String, Vec<usize>)]) -> f64 {
    let y = a.described.observed.offsets;
    neumaier(
        groups.iter().map(|(_, m)| {
            GroupSummary::from_values(&m.iter().map(|&i| y[i]).collect::<Vec<_>>()).ss
        }),
    )
}

fn covariate_range(x: &[f64]) -> (f64, f64) {
    x.iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), &v| {
            (lo.min(v), hi.max(v))
        })
}

/// Line b minus line a at the grand mean (centred 0): SE² = MS·[1/nₐ +
/// x̄ₐ²/Sxxₐ + 1/n_b + x̄_b²/Sxx_b], on N − 2k df.
fn difference(
    a: &Line,
    b: &Line,
    (ia, ib): (usize, usize),
    (ms, df, t): (f64, f64, f64),
    shift: f64,
) -> LineDifference {
    let at_a = a.y - a.slope() * a.x;
    let at_b = b.y - b.slope() * b.x;
    let estimate = at_b - at_a;
    let se = (ms * (1.0 / a.n + a.x * a.x / a.sxx + 1.0 / b.n + b.x * b.x / b.sxx)).sqrt();
    let stat = estimate / se;
    LineDifference {
        a: ia,
        b: ib,
        at: shift,
        estimate,
        se,
        df,
        t: stat,
        p: 2.0 * t_sf(stat.abs(), df),
        lower: estimate - t * se,
        upper: estimate + t * se,
    }
}

/// Where line b minus line a differs from zero at α. Writing the difference
/// as D(x) = d + c·x (x centred) with variances v_dd, v_dc, v_cc, the
/// boundaries solve (c² − t²v_cc)x² + 2(dc − t²v_dc)x + (d² − t²v_dd) = 0;
/// the difference is significant where that quadratic is positive.
fn region(
    a: &Line,
    b: &Line,
    (ia, ib): (usize, usize),
    (ms, t): (f64, f64),
    (lo, hi): (f64, f64),
    shift: f64,
) -> DifferenceRegion {
    // Each line's intercept at x = 0 is ȳ − b·x̄, with Var = MS(1/n + x̄²/Sxx)
    // and Cov(intercept, slope) = −MS·x̄/Sxx; the groups are independent.
    let (da, db) = (a.y - a.slope() * a.x, b.y - b.slope() * b.x);
    let (d, c) = (db - da, b.slope() - a.slope());
    let v_dd = ms * (1.0 / a.n + a.x * a.x / a.sxx + 1.0 / b.n + b.x * b.x / b.sxx);
    let v_dc = -ms * (a.x / a.sxx + b.x / b.sxx);
    let v_cc = ms * (1.0 / a.sxx + 1.0 / b.sxx);
    let t2 = t * t;
    let (qa, qb, qc) = (
        c * c - t2 * v_cc,
        2.0 * (d * c - t2 * v_dc),
        d * d - t2 * v_dd,
    );
    let q = |x: f64| (qa * x + qb) * x + qc;
    let mut boundaries = quadratic_roots(qa, qb, qc);
    boundaries.retain(|r| r.is_finite());
    difference_region((ia, ib), &boundaries, (lo, hi), shift, q)
}

/// Where lines a and b differ, given the boundaries (centred covariate
/// values where `excess` changes sign) and the observed range (lo, hi): the
/// range is cut at the boundaries inside it and each piece is kept where
/// `excess` is positive at its midpoint. `shift` (the covariate's mean)
/// puts both back on the covariate's own scale.
pub(crate) fn difference_region(
    (a, b): (usize, usize),
    boundaries: &[f64],
    (lo, hi): (f64, f64),
    shift: f64,
    excess: impl Fn(f64) -> f64,
) -> DifferenceRegion {
    let mut cuts = vec![lo];
    cuts.extend(boundaries.iter().copied().filter(|&r| r > lo && r < hi));
    cuts.push(hi);
    let significant = cuts
        .windows(2)
        .filter(|w| excess(0.5 * (w[0] + w[1])) > 0.0)
        .map(|w| (shift + w[0], shift + w[1]))
        .collect();
    DifferenceRegion {
        a,
        b,
        boundaries: boundaries.iter().map(|r| shift + r).collect(),
        significant,
    }
}

/// Real roots of αx² + βx + γ, ascending, computed without cancellation
/// (the larger root from the formula, the other from the product).
fn quadratic_roots(alpha: f64, beta: f64, gamma: f64) -> Vec<f64> {
    if alpha == 0.0 {
        return if beta == 0.0 {
            Vec::new()
        } else {
            vec![-gamma / beta]
        };
    }
    let disc = beta * beta - 4.0 * alpha * gamma;
    if disc < 0.0 {
        return Vec::new();
    }
    let q = -0.5 * (beta + beta.signum() * disc.sqrt());
    let mut roots = if q == 0.0 {
        vec![0.0]
    } else {
        vec![q / alpha, gamma / q]
    };
    roots.sort_by(f64::total_cmp);
    roots
}
