//! The equivalence figure (`plot: equivalence`): each comparison's
//! interval as a horizontal bar with its estimate, against dashed lines at
//! the margins and a solid line at no difference. A bar wholly between the
//! dashed lines is a comparison shown equivalent.

use super::plots::{GRID, INK, TICK_SIZE, TITLE_SIZE, WIDTH};
use super::{PALETTE, Scale, Svg, nice_ticks, text_width, tick_label};
use crate::format::confidence_label;
use crate::outcome::linear::LinearOutcome;

/// Height of one comparison's row, and of the frame around the rows.
const ROW: f64 = 34.0;
const FRAME: f64 = 96.0;

/// One bar: its label, estimate, interval, and whether it was shown equivalent.
struct Bar {
    label: String,
    estimate: f64,
    lower: f64,
    upper: f64,
    equivalent: bool,
}

/// The figure's caption and SVG, when the block tests equivalence.
pub(super) fn equivalence_figure(
    o: &LinearOutcome,
    id: &str,
    n: usize,
) -> Option<(String, String)> {
    let d = o.equivalence.as_deref()?;
    let ratio = o.transformation().filter(|_| d.ratio());
    let bars: Vec<Bar> = d
        .rows
        .iter()
        .map(|r| {
            let s = r.shown(ratio);
            let sign = if ratio.is_some() { "/" } else { "−" };
            Bar {
                label: format!("{} {sign} {}", r.level, d.control),
                estimate: s.estimate,
                lower: s.lower,
                upper: s.upper,
                equivalent: r.tost.equivalent,
            }
        })
        .collect();
    let margins = d.shown_margins();
    let none = if ratio.is_some() { 1.0 } else { 0.0 };
    let what = if ratio.is_some() {
        "ratios of geometric means"
    } else {
        "differences"
    };
    let level = confidence_label(1.0 - d.level);
    let caption = format!(
        "Figure {n}. Equivalence with {}: {level} confidence intervals of the {what} as bars (filled dot: shown equivalent), against the margins {} (dashed lines). A bar wholly between the dashed lines shows equivalence.",
        d.control,
        d.margin_words().replace('-', "−")
    );
    let desc = format!(
        "{} intervals against margins at {} and {}.",
        bars.len(),
        margins.0,
        margins.1
    );
    let x_title = if ratio.is_some() {
        format!("Ratio to {} ({level} CI)", d.control)
    } else {
        format!("Difference from {} ({level} CI)", d.control)
    };
    let svg = draw(id, (&caption, &desc), &bars, (margins, none), &x_title);
    Some((caption, svg))
}

/// Draws the bars; `lines` are the margins and the value of no difference.
fn draw(
    id: &str,
    (title, desc): (&str, &str),
    bars: &[Bar],
    (margins, none): ((f64, f64), f64),
    x_title: &str,
) -> String {
    let height = FRAME + ROW * bars.len() as f64;
    let mut svg = Svg::new(id, WIDTH, height, title, desc);
    let widest = bars
        .iter()
        .map(|b| f64::from(text_width(&b.label, TICK_SIZE as f32)))
        .fold(0.0, f64::max);
    // A browser without the bundled font sets the labels in a wider one:
    // leave a sixth more room than the font's own widths.
    let (left, right) = (
        (widest * 1.17 + 20.0).clamp(60.0, WIDTH / 2.0),
        WIDTH - 20.0,
    );
    let (top, bottom) = (20.0, height - 56.0);
    let values: Vec<f64> = bars
        .iter()
        .flat_map(|b| [b.lower, b.upper, b.estimate])
        .chain([margins.0, margins.1, none])
        .filter(|v| v.is_finite())
        .collect();
    let lo = values.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = values.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let pad = 0.05 * (hi - lo).max(f64::EPSILON);
    let ticks = nice_ticks(lo - pad, hi + pad, 6);
    let x = Scale::spanning(&ticks, left, right);
    let step = ticks.get(1).zip(ticks.first()).map_or(1.0, |(b, a)| b - a);
    for t in &ticks {
        let px = x.map(*t);
        svg.line(px, top, px, bottom, GRID, 1.0, None);
        svg.text(
            px,
            bottom + 16.0,
            &tick_label(*t, step),
            "middle",
            TICK_SIZE,
            None,
            "xtick",
        );
    }
    svg.line(x.map(none), top, x.map(none), bottom, INK, 1.0, None);
    for m in [margins.0, margins.1] {
        svg.line(
            x.map(m),
            top,
            x.map(m),
            bottom,
            PALETTE[1],
            1.5,
            Some("6 4"),
        );
    }
    for (i, b) in bars.iter().enumerate() {
        let y = top + ROW * (i as f64 + 0.5);
        svg.text(
            left - 8.0,
            y + 4.0,
            &b.label,
            "end",
            TICK_SIZE,
            None,
            "ytick",
        );
        if b.lower.is_finite() && b.upper.is_finite() {
            let (a, c) = (x.map(b.lower), x.map(b.upper));
            svg.line(a, y, c, y, INK, 2.0, None);
            svg.line(a, y - 6.0, a, y + 6.0, INK, 2.0, None);
            svg.line(c, y - 6.0, c, y + 6.0, INK, 2.0, None);
        }
        let fill = if b.equivalent { PALETTE[0] } else { "#ffffff" };
        svg.marker(x.map(b.estimate), y, 4.5, 0, fill, INK, "estimate");
    }
    svg.line(left, bottom, right, bottom, INK, 1.0, None);
    svg.text(
        (left + right) / 2.0,
        height - 20.0,
        x_title,
        "middle",
        TITLE_SIZE,
        None,
        "axis-title",
    );
    svg.finish()
}

#[cfg(test)]
#[path = "equivalence_tests.rs"]
mod tests;
