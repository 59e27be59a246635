//! The trend figure (`plot: trend`): a quantitative factor's means at their
//! values with their intervals, and the fitted polynomial drawn over the
//! tested range only.

use super::plots::trend_plot;
use crate::format::confidence_label;
use crate::outcome::linear::LinearOutcome;
use crate::outcome::trend::{TrendVerdict, degree_name};

/// Points on the fitted curve across the tested range.
const CURVE_POINTS: usize = 120;

/// The figure's caption and SVG, when the block has a trend.
pub(super) fn trend_figure(
    o: &LinearOutcome,
    id: &str,
    n: usize,
    (x_title, y_title): (&str, &str),
) -> Option<(String, String)> {
    let t = o.trend.as_deref()?;
    let family = o
        .families
        .iter()
        .find(|f| f.term == t.factor && f.within.is_none())?;
    let points: Vec<(f64, f64, f64, f64)> = family
        .estimates
        .iter()
        .filter_map(|e| {
            let score = t.scores.iter().find(|(l, _)| *l == e.label)?.1;
            Some((score, e.mean, e.ci_lower, e.ci_upper))
        })
        .collect();
    let (lo, hi) = points
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), p| {
            (a.min(p.0), b.max(p.0))
        });
    let curve: Vec<(f64, f64)> = t.curve.as_ref().map_or_else(Vec::new, |c| {
        (0..=CURVE_POINTS)
            .map(|i| {
                let x = lo + (hi - lo) * i as f64 / CURVE_POINTS as f64;
                let y = c.coefficients.iter().rev().fold(0.0, |acc, b| acc * x + b);
                (x, y)
            })
            .collect()
    });
    let drawn = match (t.verdict, &t.curve) {
        (TrendVerdict::Degree(d), Some(_)) => format!(
            " The line is the fitted {} trend, drawn over the tested range only.",
            degree_name(d)
        ),
        (TrendVerdict::Degree(d), None) => format!(
            " The {} trend was chosen; its curve is drawn for one-factor blocks only.",
            degree_name(d)
        ),
        (TrendVerdict::NoTrend, _) => {
            " No trend component is significant, so no curve is drawn.".into()
        }
        (TrendVerdict::NotPolynomial, _) => {
            " No low-order polynomial describes the means, so no curve is drawn.".into()
        }
    };
    let caption = format!(
        "Figure {n}. Means of {y_title} at each {x_title} with {} confidence intervals.{drawn}",
        confidence_label(o.alpha)
    );
    let desc = format!("{} means against {x_title}.", points.len());
    let svg = trend_plot(id, &caption, &desc, &points, &curve, (x_title, y_title));
    Some((caption, svg))
}
