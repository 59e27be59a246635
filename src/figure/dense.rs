//! Summaries drawn in place of points when a figure would have too many.
//!
//! A figure of twenty million points is a file of gigabytes that no reader
//! can see point by point. Above [`POINT_LIMIT`] observations a figure draws
//! what the points would show: binned densities for strips and residuals,
//! boxes without the points, and a Q-Q plot of selected order statistics.
//! Captions say which (see [`caption_note`]).

use super::{Scale, Svg};

/// The most observations a figure draws one by one.
pub const POINT_LIMIT: usize = 2000;

/// Bins along the value axis of a binned strip.
const STRIP_BINS: usize = 40;

/// Bins of the residual plot's density grid (across, down).
const GRID_BINS: (usize, usize) = (60, 36);

/// Order statistics a summarised Q-Q plot keeps in each tail, one by one.
pub const QQ_TAIL: usize = 50;

/// Points a summarised Q-Q plot draws in all (a line of 600 points is as
/// smooth on screen as one of millions).
const QQ_POINTS: usize = 600;

/// True when a figure of `n` observations draws summaries instead of points.
pub fn summarised(n: usize) -> bool {
    n > POINT_LIMIT
}

/// The sentence a caption adds when its figure is summarised.
pub fn caption_note(n: usize, what: &str) -> String {
    format!(
        " With {} observations (more than {}), individual points are not drawn: {what}.",
        crate::format::count(n),
        crate::format::count(POINT_LIMIT)
    )
}

/// Counts of `values` in `bins` equal bins of the scale's domain; values
/// outside it (or not finite) are not counted.
fn histogram(values: &[f64], scale: &Scale, bins: usize) -> Vec<usize> {
    let (lo, hi) = (scale.d0.min(scale.d1), scale.d0.max(scale.d1));
    let width = (hi - lo) / bins as f64;
    let mut counts = vec![0usize; bins];
    if !crate::stats::is_positive(width) {
        return counts;
    }
    for v in values {
        if v.is_finite() && *v >= lo && *v <= hi {
            let i = (((v - lo) / width) as usize).min(bins - 1);
            counts[i] += 1;
        }
    }
    counts
}

/// The largest bin count over groups, so strips share one width scale.
pub fn largest_bin(groups: &[&[f64]], scale: &Scale) -> usize {
    groups
        .iter()
        .flat_map(|g| histogram(g, scale, STRIP_BINS))
        .max()
        .unwrap_or(0)
}

/// A binned strip: one horizontal bar per bin of values, centred on `x`, as
/// wide as the bin's count relative to `largest` (half-width `half`).
pub fn binned_strip(
    svg: &mut Svg,
    y: &Scale,
    x: f64,
    half: f64,
    values: &[f64],
    largest: usize,
    fill: &str,
) {
    let counts = histogram(values, y, STRIP_BINS);
    let (lo, hi) = (y.d0.min(y.d1), y.d0.max(y.d1));
    let step = (hi - lo) / STRIP_BINS as f64;
    for (i, &count) in counts.iter().enumerate() {
        if count == 0 || largest == 0 {
            continue;
        }
        let w = (half * count as f64 / largest as f64).max(0.5);
        let (top, bottom) = (
            y.map(lo + step * (i + 1) as f64),
            y.map(lo + step * i as f64),
        );
        svg.rect(x - w, top, 2.0 * w, (bottom - top).abs(), fill, fill);
    }
}

/// A density grid of (x, y) pairs: each cell shaded by the logarithm of its
/// count, so that both crowded and sparse regions stay visible.
pub fn density_grid(svg: &mut Svg, xs: &Scale, ys: &Scale, x: &[f64], y: &[f64]) {
    let (nx, ny) = GRID_BINS;
    let span = |s: &Scale| (s.d0.min(s.d1), s.d0.max(s.d1));
    let ((x0, x1), (y0, y1)) = (span(xs), span(ys));
    let (wx, wy) = ((x1 - x0) / nx as f64, (y1 - y0) / ny as f64);
    if !(crate::stats::is_positive(wx) && crate::stats::is_positive(wy)) {
        return;
    }
    let mut counts = vec![0usize; nx * ny];
    for (a, b) in x.iter().zip(y) {
        if a.is_finite() && b.is_finite() && (x0..=x1).contains(a) && (y0..=y1).contains(b) {
            let i = (((a - x0) / wx) as usize).min(nx - 1);
            let j = (((b - y0) / wy) as usize).min(ny - 1);
            counts[j * nx + i] += 1;
        }
    }
    let top = counts.iter().copied().max().unwrap_or(0);
    if top == 0 {
        return;
    }
    let scale = ((top + 1) as f64).ln();
    for j in 0..ny {
        for i in 0..nx {
            let count = counts[j * nx + i];
            if count == 0 {
                continue;
            }
            let shade = 0.15 + 0.85 * ((count + 1) as f64).ln() / scale;
            let (px0, px1) = (xs.map(x0 + wx * i as f64), xs.map(x0 + wx * (i + 1) as f64));
            let (py0, py1) = (ys.map(y0 + wy * (j + 1) as f64), ys.map(y0 + wy * j as f64));
            let fill = blue_shade(shade);
            svg.rect(px0, py0, (px1 - px0).abs(), (py1 - py0).abs(), &fill, &fill);
        }
    }
}

/// White (0) to the palette's blue (1), as an RGB colour.
fn blue_shade(t: f64) -> String {
    // The palette's blue is #0072B2.
    let mix = |c: f64| (255.0 + (c - 255.0) * t.clamp(0.0, 1.0)).round() as u8;
    format!("#{:02x}{:02x}{:02x}", mix(0.0), mix(114.0), mix(178.0))
}

/// Ranks (0-based, ascending) a summarised Q-Q plot draws out of `n` sorted
/// values: every one of the [`QQ_TAIL`] smallest and largest, and evenly
/// spaced ranks between, [`QQ_POINTS`] in all.
pub fn qq_ranks(n: usize) -> Vec<usize> {
    if !summarised(n) {
        return (0..n).collect();
    }
    let middle = QQ_POINTS - 2 * QQ_TAIL;
    let (first, last) = (QQ_TAIL, n - QQ_TAIL);
    let mut ranks: Vec<usize> = (0..QQ_TAIL).collect();
    let span = (last - first) as f64;
    for k in 0..middle {
        let r = first + (span * k as f64 / middle as f64) as usize;
        if ranks.last().is_none_or(|&p| r > p) {
            ranks.push(r);
        }
    }
    ranks.extend(last..n);
    ranks
}

#[cfg(test)]
#[path = "dense_tests.rs"]
mod tests;
