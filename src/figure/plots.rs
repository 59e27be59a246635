//! The plot kinds: box, strip and means plots with letters, interaction
//! plots, residual diagnostics (residuals against fitted, normal Q-Q) and
//! power curves. Drawers place numbers they are given; they compute none.

use super::{Figure, PALETTE, Scale, Svg, dense, nice_ticks, text_width, tick_label};
use crate::outcome::linear::NormalQq;

pub(super) const WIDTH: f64 = 480.0;
const HEIGHT: f64 = 320.0;
pub(super) const TICK_SIZE: f64 = 11.0;
pub(super) const TITLE_SIZE: f64 = 12.0;
const LETTER_SIZE: f64 = 12.0;
pub(super) const INK: &str = "#1d1d1f";
pub(super) const GRID: &str = "#e3e3e8";
pub(super) const MUTED: &str = "#6e6e73";

/// A line of an interaction plot: its name and (mean, lower, upper) per x level.
pub(super) type Series = (String, Vec<(f64, f64, f64)>);

/// A categorical plot drawer.
pub(super) type CategoricalPlot = fn(&Chart, &[Group]) -> String;

/// What every categorical plot is told besides its groups: its id, title
/// and description (for screen readers), axis titles and reference line.
pub(super) struct Chart<'a> {
    pub id: &'a str,
    pub title: &'a str,
    pub desc: &'a str,
    pub y_title: &'a str,
    pub x_title: &'a str,
    pub reference: Option<f64>,
}

impl Chart<'_> {
    /// The drawing with its axes laid out for the groups, and each group's x.
    fn layout(&self, groups: &[Group]) -> (Svg, Frame, Vec<f64>) {
        let mut svg = Svg::new(self.id, WIDTH, HEIGHT, self.title, self.desc);
        let labels: Vec<&str> = groups.iter().map(|g| g.label).collect();
        let (lo, hi) = range(groups);
        let (frame, xs) = Frame::categorical(
            &mut svg,
            XAxis {
                labels: &labels,
                at: None,
            },
            lo,
            hi,
            self.y_title,
            self.x_title,
            self.reference,
        );
        (svg, frame, xs)
    }
}

/// One group on a categorical axis.
#[derive(Clone)]
pub(super) struct Group<'a> {
    pub label: &'a str,
    pub values: &'a [f64],
    pub letters: Option<&'a str>,
    /// First quartile, median and third quartile, for box plots.
    pub quartiles: (f64, f64, f64),
    /// Mean and interval (NaN where there is none), for means plots and
    /// the bars of strip plots.
    pub mean: f64,
    pub ci: (f64, f64),
}

/// SplitMix64: a fixed hash, so jitter is the same on every build and machine.
fn jitter(level: usize, index: usize) -> f64 {
    let mut z = (level as u64).wrapping_mul(0x9E37_79B9_7F4A_7C15)
        ^ (index as u64).wrapping_add(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
    z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
    z ^= z >> 31;
    (z >> 11) as f64 / (1u64 << 53) as f64 - 0.5
}

/// The plotting frame: y axis with ticks and grid, x axis with level labels.
struct Frame {
    y: Scale,
    x0: f64,
    x1: f64,
    top: f64,
    bottom: f64,
}

/// The categories along the x axis, and where they stand: evenly spaced,
/// or at numeric positions (a profile's times) spread proportionally.
#[derive(Clone, Copy)]
pub(super) struct XAxis<'a> {
    pub labels: &'a [&'a str],
    pub at: Option<&'a [f64]>,
}

impl XAxis<'_> {
    /// The centre of each category between `left` and `right`, and the
    /// narrowest gap between neighbours (the room a label has).
    fn centres(&self, left: f64, right: f64) -> (Vec<f64>, f64) {
        let n = self.labels.len().max(1);
        let slot = (right - left) / n as f64;
        let even = || (0..n).map(|i| left + slot * (i as f64 + 0.5)).collect();
        let Some(at) = self.at.filter(|a| a.len() == n && n > 1) else {
            return (even(), slot);
        };
        let (lo, hi) = at
            .iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), &t| {
                (l.min(t), h.max(t))
            });
        if hi <= lo {
            return (even(), slot);
        }
        let span = right - left - slot;
        let centres: Vec<f64> = at
            .iter()
            .map(|t| left + slot / 2.0 + (t - lo) / (hi - lo) * span)
            .collect();
        let mut sorted = centres.clone();
        sorted.sort_by(f64::total_cmp);
        let gap = sorted.windows(2).map(|w| w[1] - w[0]).fold(slot, f64::min);
        (centres, gap)
    }
}

impl Frame {
    /// Lays out axes for the categories of `axis` and the data range [lo, hi].
    fn categorical(
        svg: &mut Svg,
        axis: XAxis<'_>,
        lo: f64,
        hi: f64,
        y_title: &str,
        x_title: &str,
        reference: Option<f64>,
    ) -> (Frame, Vec<f64>) {
        let (lo, hi) = match reference {
            Some(r) => (lo.min(r), hi.max(r)),
            None => (lo, hi),
        };
        let pad = (hi - lo).abs().max(1e-12) * 0.06;
        let ticks = nice_ticks(lo - pad, hi + pad, 5);
        let step = if ticks.len() > 1 {
            ticks[1] - ticks[0]
        } else {
            1.0
        };
        let tick_texts: Vec<String> = ticks.iter().map(|t| tick_label(*t, step)).collect();
        let tick_w = tick_texts
            .iter()
            .map(|t| text_width(t, TICK_SIZE as f32) as f64)
            .fold(0.0, f64::max);
        let left = 28.0 + tick_w + 8.0;
        let right = WIDTH - 14.0;
        let labels = axis.labels;
        let (centres, slot) = axis.centres(left, right);
        let widest = labels
            .iter()
            .map(|l| text_width(l, TICK_SIZE as f32) as f64)
            .fold(0.0, f64::max);
        let angle = tick_angle(widest, slot);
        let label_space = match angle {
            Some(a) => (widest * (-a).to_radians().sin()).min(110.0) + 14.0,
            None => 18.0,
        };
        let bottom = HEIGHT - 20.0 - label_space;
        let top = 30.0;
        let y = Scale::spanning(&ticks, bottom, top);
        y_grid(svg, &y, (&ticks, &tick_texts), (left, right));
        svg.line(left, top - 8.0, left, bottom, INK, 1.0, None);
        svg.line(left, bottom, right, bottom, INK, 1.0, None);
        if let Some(r) = reference {
            svg.line(left, y.map(r), right, y.map(r), MUTED, 1.0, Some("4 3"));
        }
        for (x, label) in centres.iter().zip(labels) {
            if let Some(a) = angle {
                svg.text(
                    *x + TICK_SIZE * 0.3,
                    bottom + 12.0,
                    label,
                    "end",
                    TICK_SIZE,
                    Some(a),
                    "xtick",
                );
            } else {
                svg.text(*x, bottom + 16.0, label, "middle", TICK_SIZE, None, "xtick");
            }
        }
        axis_titles(svg, (y_title, x_title), (left, right), (top, bottom));
        (
            Frame {
                y,
                x0: left,
                x1: right,
                top,
                bottom,
            },
            centres,
        )
    }

    fn slot(&self, n: usize) -> f64 {
        (self.x1 - self.x0) / n.max(1) as f64
    }
}

/// Horizontal grid lines at the y ticks, with their labels at the left.
fn y_grid(
    svg: &mut Svg,
    y: &Scale,
    (ticks, labels): (&[f64], &[String]),
    (left, right): (f64, f64),
) {
    for (t, label) in ticks.iter().zip(labels) {
        let py = y.map(*t);
        svg.line(left, py, right, py, GRID, 1.0, None);
        svg.text(left - 6.0, py + 4.0, label, "end", TICK_SIZE, None, "ytick");
    }
}

/// The y title turned along the left edge, the x title under the plot.
fn axis_titles(
    svg: &mut Svg,
    (y_title, x_title): (&str, &str),
    (left, right): (f64, f64),
    (top, bottom): (f64, f64),
) {
    let y_at = (top + bottom) / 2.0;
    svg.text(
        14.0,
        y_at,
        y_title,
        "middle",
        TITLE_SIZE,
        Some(-90.0),
        "axis-title",
    );
    let x_at = (left + right) / 2.0;
    svg.text(
        x_at,
        HEIGHT - 6.0,
        x_title,
        "middle",
        TITLE_SIZE,
        None,
        "axis-title",
    );
}

/// Letter groups above a level. When the letters are wider than the level's
/// slot (many levels, many groups) they are set vertically, reading upwards,
/// so that neighbours never collide.
/// `top` is the highest value drawn for the level (data units), `levels`
/// how many levels share the axis.
fn letters_at(
    svg: &mut Svg,
    frame: &Frame,
    (x, top): (f64, f64),
    letters: Option<&str>,
    levels: usize,
) {
    let (y_px, slot) = (frame.y.map(top), frame.slot(levels));
    if let Some(l) = letters.filter(|l| !l.is_empty()) {
        if text_width(l, LETTER_SIZE as f32) as f64 > slot - 2.0 {
            let x = x + LETTER_SIZE * 0.35;
            svg.text(
                x,
                y_px - 6.0,
                l,
                "start",
                LETTER_SIZE,
                Some(-90.0),
                "letters",
            );
        } else {
            svg.text(x, y_px - 8.0, l, "middle", LETTER_SIZE, None, "letters");
        }
    }
}

/// The angle of x tick labels: level, or tilted just enough that neighbouring
/// labels (one slot apart) clear each other by a line height.
fn tick_angle(widest: f64, slot: f64) -> Option<f64> {
    let clearance = TICK_SIZE + 2.0;
    if widest <= slot - 6.0 {
        None
    } else if slot * 0.5 >= clearance {
        Some(-30.0)
    } else if slot * std::f64::consts::FRAC_1_SQRT_2 >= clearance {
        Some(-45.0)
    } else {
        Some(-90.0)
    }
}

/// Observations over all groups of a categorical figure.
fn observations(groups: &[Group]) -> usize {
    groups.iter().map(|g| g.values.len()).sum()
}

fn range(groups: &[Group]) -> (f64, f64) {
    let mut lo = f64::INFINITY;
    let mut hi = f64::NEG_INFINITY;
    for g in groups {
        for v in g.values.iter().chain([&g.ci.0, &g.ci.1, &g.mean]) {
            if v.is_finite() {
                lo = lo.min(*v);
                hi = hi.max(*v);
            }
        }
    }
    if lo.is_finite() { (lo, hi) } else { (0.0, 1.0) }
}

pub(super) fn box_plot(chart: &Chart, groups: &[Group]) -> String {
    let (mut svg, frame, xs) = chart.layout(groups);
    let half = (frame.slot(groups.len()) * 0.22).min(28.0);
    let many = dense::summarised(observations(groups));
    for (i, (g, &x)) in groups.iter().zip(&xs).enumerate() {
        let colour = PALETTE[0];
        if g.values.len() >= 2 {
            let (q1, median, q3) = g.quartiles;
            let iqr = q3 - q1;
            let low = g
                .values
                .iter()
                .copied()
                .filter(|v| *v >= q1 - 1.5 * iqr)
                .fold(f64::INFINITY, f64::min);
            let high = g
                .values
                .iter()
                .copied()
                .filter(|v| *v <= q3 + 1.5 * iqr)
                .fold(f64::NEG_INFINITY, f64::max);
            let y = |v: f64| frame.y.map(v);
            svg.line(x, y(high), x, y(q3), INK, 1.0, None);
            svg.line(x, y(q1), x, y(low), INK, 1.0, None);
            svg.line(
                x - half * 0.5,
                y(high),
                x + half * 0.5,
                y(high),
                INK,
                1.0,
                None,
            );
            svg.line(
                x - half * 0.5,
                y(low),
                x + half * 0.5,
                y(low),
                INK,
                1.0,
                None,
            );
            svg.rect(
                x - half,
                y(q3),
                2.0 * half,
                (y(q1) - y(q3)).max(0.5),
                "#dbe9f5",
                colour,
            );
            svg.line(x - half, y(median), x + half, y(median), INK, 2.0, None);
        }
        if !many {
            for (j, v) in g.values.iter().enumerate() {
                let jx = x + jitter(i, j) * half * 1.4;
                svg.marker(jx, frame.y.map(*v), 2.6, 0, "#ffffff", INK, "point");
            }
        }
        let top = g.values.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        letters_at(&mut svg, &frame, (x, top), g.letters, groups.len());
    }
    let _ = frame.top;
    let _ = frame.bottom;
    svg.finish()
}

pub(super) fn strip_plot(chart: &Chart, groups: &[Group]) -> String {
    let (mut svg, frame, xs) = chart.layout(groups);
    let half = (frame.slot(groups.len()) * 0.25).min(30.0);
    let many = dense::summarised(observations(groups));
    let values: Vec<&[f64]> = groups.iter().map(|g| g.values).collect();
    let largest = if many {
        dense::largest_bin(&values, &frame.y)
    } else {
        0
    };
    for (i, (g, &x)) in groups.iter().zip(&xs).enumerate() {
        if many {
            dense::binned_strip(&mut svg, &frame.y, x, half, g.values, largest, "#9cc3e0");
        } else {
            for (j, v) in g.values.iter().enumerate() {
                svg.marker(
                    x + jitter(i, j) * half * 1.6,
                    frame.y.map(*v),
                    3.0,
                    0,
                    PALETTE[0],
                    "#ffffff",
                    "point",
                );
            }
        }
        if g.mean.is_finite() {
            svg.line(
                x - half,
                frame.y.map(g.mean),
                x + half,
                frame.y.map(g.mean),
                INK,
                2.0,
                None,
            );
        }
        let top = g.values.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        letters_at(&mut svg, &frame, (x, top), g.letters, groups.len());
    }
    svg.finish()
}

pub(super) fn means_plot(chart: &Chart, groups: &[Group]) -> String {
    let (mut svg, frame, xs) = chart.layout(groups);
    let half = (frame.slot(groups.len()) * 0.3).min(34.0);
    let many = dense::summarised(observations(groups));
    for (i, (g, &x)) in groups.iter().zip(&xs).enumerate() {
        // Faint observations behind the summary, so the spread stays visible
        // (unless there are too many to see one by one).
        let faint = if many { &[][..] } else { g.values };
        for (j, v) in faint.iter().enumerate() {
            svg.marker(
                x + half * 0.9 + jitter(i, j) * 8.0,
                frame.y.map(*v),
                2.0,
                0,
                "#c7c7cc",
                "#c7c7cc",
                "point",
            );
        }
        if g.ci.0.is_finite() && g.ci.1.is_finite() {
            let (a, b) = (frame.y.map(g.ci.0), frame.y.map(g.ci.1));
            svg.line(x, a, x, b, INK, 1.5, None);
            svg.line(x - 6.0, a, x + 6.0, a, INK, 1.5, None);
            svg.line(x - 6.0, b, x + 6.0, b, INK, 1.5, None);
        }
        svg.marker(x, frame.y.map(g.mean), 4.5, 0, PALETTE[0], INK, "mean");
        let top = if g.ci.1.is_finite() { g.ci.1 } else { g.mean };
        letters_at(&mut svg, &frame, (x, top), g.letters, groups.len());
    }
    svg.finish()
}

fn scatter_frame(
    svg: &mut Svg,
    xs: &[f64],
    ys: &[f64],
    x_title: &str,
    y_title: &str,
) -> (Scale, Scale) {
    scatter_frame_in(svg, xs, ys, (x_title, y_title), (None, false))
}

/// As `scatter_frame`, optionally with a fixed y range (probabilities).
fn scatter_frame_in(
    svg: &mut Svg,
    xs: &[f64],
    ys: &[f64],
    (x_title, y_title): (&str, &str),
    (y_fixed, x_from_zero): (Option<(f64, f64)>, bool),
) -> (Scale, Scale) {
    let finite = |v: &[f64]| {
        v.iter()
            .copied()
            .filter(|x| x.is_finite())
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), x| {
                (a.min(x), b.max(x))
            })
    };
    let (xl, xh) = finite(xs);
    let (yl, yh) = finite(ys);
    let pad = |l: f64, h: f64| ((h - l).abs().max(1e-9)) * 0.06;
    // Amounts that start at zero (doses, rates) keep their axis at zero.
    let x_low = match x_from_zero && xl >= 0.0 {
        true => (xl - pad(xl, xh)).max(0.0),
        false => xl - pad(xl, xh),
    };
    let xt = nice_ticks(x_low, xh + pad(xl, xh), 5);
    let yt = match y_fixed {
        Some((a, b)) => nice_ticks(a, b, 5),
        None => nice_ticks(yl - pad(yl, yh), yh + pad(yl, yh), 5),
    };
    let ystep = if yt.len() > 1 { yt[1] - yt[0] } else { 1.0 };
    let xstep = if xt.len() > 1 { xt[1] - xt[0] } else { 1.0 };
    let ylabels: Vec<String> = yt.iter().map(|t| tick_label(*t, ystep)).collect();
    let tick_w = ylabels
        .iter()
        .map(|t| text_width(t, TICK_SIZE as f32) as f64)
        .fold(0.0, f64::max);
    let (left, right, top, bottom) = (28.0 + tick_w + 8.0, WIDTH - 14.0, 20.0, HEIGHT - 42.0);
    let xs_scale = Scale::spanning(&xt, left, right);
    let ys_scale = Scale::spanning(&yt, bottom, top);
    y_grid(svg, &ys_scale, (&yt, &ylabels), (left, right));
    for t in &xt {
        let px = xs_scale.map(*t);
        svg.line(px, bottom, px, bottom + 4.0, INK, 1.0, None);
        svg.text(
            px,
            bottom + 16.0,
            &tick_label(*t, xstep),
            "middle",
            TICK_SIZE,
            None,
            "xtick",
        );
    }
    svg.line(left, top, left, bottom, INK, 1.0, None);
    svg.line(left, bottom, right, bottom, INK, 1.0, None);
    axis_titles(svg, (y_title, x_title), (left, right), (top, bottom));
    (xs_scale, ys_scale)
}

/// Means (x, mean, interval) at a quantitative factor's values, and a
/// fitted curve through `curve` (empty for none).
pub(super) fn trend_plot(
    id: &str,
    title: &str,
    desc: &str,
    points: &[(f64, f64, f64, f64)],
    curve: &[(f64, f64)],
    (x_title, y_title): (&str, &str),
) -> String {
    let mut svg = Svg::new(id, WIDTH, HEIGHT, title, desc);
    let xs: Vec<f64> = points.iter().map(|p| p.0).collect();
    let ys: Vec<f64> = points
        .iter()
        .flat_map(|p| [p.2, p.3])
        .chain(curve.iter().map(|c| c.1))
        .collect();
    let (x, y) = scatter_frame_in(&mut svg, &xs, &ys, (x_title, y_title), (None, true));
    if !curve.is_empty() {
        let line: Vec<(f64, f64)> = curve.iter().map(|&(a, b)| (x.map(a), y.map(b))).collect();
        svg.polyline(&line, PALETTE[1], 2.0);
    }
    for &(px, mean, lo, hi) in points {
        let cx = x.map(px);
        if lo.is_finite() && hi.is_finite() {
            let (a, b) = (y.map(lo), y.map(hi));
            svg.line(cx, a, cx, b, INK, 1.5, None);
            svg.line(cx - 5.0, a, cx + 5.0, a, INK, 1.5, None);
            svg.line(cx - 5.0, b, cx + 5.0, b, INK, 1.5, None);
        }
        svg.marker(cx, y.map(mean), 4.5, 0, PALETTE[0], INK, "mean");
    }
    svg.finish()
}

/// Residuals against fitted values; `flags` are (index, label) of points to name.
pub(super) fn residual_plot(
    id: &str,
    title: &str,
    desc: &str,
    fitted: &[f64],
    residuals: &[f64],
    flags: &[(usize, String)],
) -> String {
    let mut svg = Svg::new(id, WIDTH, HEIGHT, title, desc);
    let (x, y) = scatter_frame(&mut svg, fitted, residuals, "Fitted value", "Residual");
    svg.line(x.p0, y.map(0.0), x.p1, y.map(0.0), MUTED, 1.0, Some("4 3"));
    if dense::summarised(residuals.len()) {
        dense::density_grid(&mut svg, &x, &y, fitted, residuals);
    }
    let each = if dense::summarised(residuals.len()) {
        0
    } else {
        residuals.len()
    };
    for (i, (f, e)) in fitted.iter().zip(residuals).take(each).enumerate() {
        // Points that share a fitted value (one-way) are spread slightly.
        svg.marker(
            x.map(*f) + jitter(7, i) * 6.0,
            y.map(*e),
            2.8,
            0,
            PALETTE[0],
            "#ffffff",
            "point",
        );
    }
    for (i, label) in flags {
        svg.text(
            x.map(fitted[*i]) + 6.0,
            y.map(residuals[*i]) - 4.0,
            label,
            "start",
            TICK_SIZE,
            None,
            "flag",
        );
    }
    svg.finish()
}

/// Normal Q-Q plot of the residuals at their Blom positions, with the line
/// through their quartiles.
pub(super) fn qq_plot(id: &str, title: &str, desc: &str, qq: &NormalQq) -> String {
    // Every order statistic, or a bounded selection of them on large data.
    let ranks = dense::qq_ranks(qq.residuals.len());
    let theoretical: Vec<f64> = ranks.iter().map(|&r| qq.scores[r]).collect();
    let sample: Vec<f64> = ranks.iter().map(|&r| qq.residuals[r]).collect();
    let mut svg = Svg::new(id, WIDTH, HEIGHT, title, desc);
    let (x, y) = scatter_frame(
        &mut svg,
        &theoretical,
        &sample,
        "Normal quantile",
        "Residual",
    );
    if let Some((intercept, slope)) = qq.line {
        let (a, b) = (x.d0, x.d1);
        svg.line(
            x.map(a),
            y.map(intercept + slope * a),
            x.map(b),
            y.map(intercept + slope * b),
            MUTED,
            1.0,
            Some("4 3"),
        );
    }
    for (t, v) in theoretical.iter().zip(&sample) {
        svg.marker(x.map(*t), y.map(*v), 2.8, 0, PALETTE[0], "#ffffff", "point");
    }
    svg.finish()
}

/// Interaction plot: x = levels of one factor, a line per level of another;
/// `traces` (series index, value per x level) are drawn faintly behind the
/// means in their series' colour (a profile's subjects).
#[allow(clippy::too_many_arguments)]
pub(super) fn interaction_plot(
    id: &str,
    title: &str,
    desc: &str,
    x: XAxis<'_>,
    series: &[Series],
    traces: &[(usize, Vec<f64>)],
    (y_title, x_title, legend_title): (&str, &str, &str),
    reference: Option<f64>,
) -> String {
    let mut svg = Svg::new(id, WIDTH, HEIGHT, title, desc);
    let mut lo = f64::INFINITY;
    let mut hi = f64::NEG_INFINITY;
    let means = series
        .iter()
        .flat_map(|(_, pts)| pts.iter().flat_map(|(m, l, u)| [*m, *l, *u]));
    let traced = traces.iter().flat_map(|(_, v)| v.iter().copied());
    for v in means.chain(traced).filter(|v| v.is_finite()) {
        lo = lo.min(v);
        hi = hi.max(v);
    }
    let (frame, xs) = Frame::categorical(&mut svg, x, lo, hi, y_title, x_title, reference);
    for (s, values) in traces {
        let line: Vec<(f64, f64)> = values
            .iter()
            .zip(&xs)
            .filter(|(v, _)| v.is_finite())
            .map(|(v, x)| (*x, frame.y.map(*v)))
            .collect();
        svg.faint_polyline(&line, PALETTE[s % PALETTE.len()]);
    }
    let legend_width = series
        .iter()
        .map(|(name, _)| text_width(name, TICK_SIZE as f32) as f64 + 14.0)
        .chain([text_width(legend_title, TICK_SIZE as f32) as f64])
        .fold(60.0, f64::max);
    let dodge = (frame.slot(x.labels.len()) * 0.08).min(8.0);
    let offset = |s: usize| (s as f64 - (series.len() as f64 - 1.0) / 2.0) * dodge;
    for (s, (name, pts)) in series.iter().enumerate() {
        let colour = PALETTE[s % PALETTE.len()];
        let line: Vec<(f64, f64)> = pts
            .iter()
            .zip(&xs)
            .filter(|((m, _, _), _)| m.is_finite())
            .map(|((m, _, _), x)| (x + offset(s), frame.y.map(*m)))
            .collect();
        svg.polyline(&line, colour, 1.6);
        for ((m, l, u), x) in pts.iter().zip(&xs) {
            if !m.is_finite() {
                continue;
            }
            let px = x + offset(s);
            if l.is_finite() && u.is_finite() {
                svg.line(px, frame.y.map(*l), px, frame.y.map(*u), colour, 1.2, None);
            }
            svg.marker(px, frame.y.map(*m), 4.0, s, colour, INK, "mean");
        }
        // Legend, top right, one row per series under the factor's name.
        let ly = frame.top + 14.0 * s as f64;
        let lx = frame.x1 - legend_width;
        svg.marker(lx, ly - 4.0, 4.0, s, colour, INK, "legend");
        svg.text(lx + 10.0, ly, name, "start", TICK_SIZE, None, "legend");
    }
    svg.text(
        frame.x1 - legend_width - 4.0,
        frame.top - 14.0,
        legend_title,
        "start",
        TICK_SIZE,
        None,
        "legend-title",
    );
    svg.finish()
}

/// The power curve of a `power` block: power against n per group, with the
/// target (or the given n) marked.
pub fn power_figures(r: &crate::outcome::PowerResult, number: &mut usize) -> Vec<Figure> {
    if r.curve.len() < 2 {
        return Vec::new();
    }
    let n_max = r.curve.last().map_or(2, |(n, _)| *n);
    let ns: Vec<usize> = (2..=n_max.max(3)).step_by((n_max / 60).max(1)).collect();
    let xs: Vec<f64> = ns.iter().map(|n| *n as f64).collect();
    let ps: Vec<f64> = ns
        .iter()
        .map(|n| crate::stats::effect::one_way_power(r.groups, *n, r.cohens_f, r.alpha))
        .collect();
    let id = format!("{}-power", r.id);
    let n = *number;
    let caption = format!(
        "Figure {n}. Power of the one-way F test against observations per group ({} groups, Cohen's f = {}, α = {}).",
        r.groups,
        crate::format::significant(r.cohens_f, 3),
        r.alpha
    );
    let mut svg = Svg::new(&id, WIDTH, HEIGHT, &caption, &caption);
    let (x, y) = scatter_frame_in(
        &mut svg,
        &xs,
        &ps,
        ("Observations per group", "Power"),
        (Some((0.0, 1.0)), false),
    );
    let pts: Vec<(f64, f64)> = xs
        .iter()
        .zip(&ps)
        .map(|(a, b)| (x.map(*a), y.map(*b)))
        .collect();
    svg.polyline(&pts, PALETTE[0], 2.0);
    if let Some(t) = r.target {
        svg.line(x.p0, y.map(t), x.p1, y.map(t), MUTED, 1.0, Some("4 3"));
    }
    if let Some(nn) = r.n_per_group {
        svg.marker(
            x.map(nn as f64),
            y.map(r.power),
            4.5,
            0,
            PALETTE[1],
            INK,
            "answer",
        );
        svg.text(
            x.map(nn as f64) + 8.0,
            y.map(r.power) + 14.0,
            &format!("n = {nn}"),
            "start",
            TICK_SIZE,
            None,
            "answer",
        );
    }
    *number += 1;
    vec![Figure {
        id,
        kind: "power",
        number: n,
        caption,
        svg: svg.finish(),
    }]
}
