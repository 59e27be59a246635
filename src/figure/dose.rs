//! The dose figure (`plot: doses`): the means in dose order from the
//! control, with their intervals, the control's mean as a dashed line, and
//! the doses with an effect by the block's first dose-response procedure
//! marked with an asterisk.

use super::linear::factor_groups;
use super::plots::{Chart, Group, means_plot};
use crate::format::{alpha_text, confidence_label};
use crate::outcome::dose::Noec;
use crate::outcome::linear::LinearOutcome;

/// The figure's caption and SVG, when the block has dose-response tests.
pub(super) fn dose_figure(
    o: &LinearOutcome,
    id: &str,
    n: usize,
    values: &[Vec<f64>],
    (subject, y_title): (&str, &str),
) -> Option<(String, String)> {
    let d = o.dose.as_deref()?;
    let test = d.tests.first()?;
    let (groups, _) = factor_groups(o, 0, values);
    let levels = &o.factors[0].levels;
    let at = |name: &str| levels.iter().position(|l| l == name);
    let mut ordered: Vec<Group> = Vec::new();
    let mut take = |i: Option<usize>, marked: bool| {
        if let Some(g) = i.and_then(|i| groups.get(i)) {
            ordered.push(Group {
                letters: marked.then_some("*"),
                ..g.clone()
            });
        }
    };
    take(at(&d.control), false);
    for (k, dose) in d.doses.iter().enumerate() {
        let marked = test
            .steps
            .iter()
            .any(|s| s.dose == k && s.tested && s.significant);
        take(at(&dose.level), marked);
    }
    let factor = o.presentation.plots.display(&d.factor);
    let finding = match (test.loec, test.noec()) {
        (None, _) => "no dose has an effect".to_string(),
        (Some(l), Noec::Dose(m)) => {
            format!("NOEC = {}, LOEC = {}", d.doses[m].level, d.doses[l].level)
        }
        (Some(l), _) => format!("LOEC = {}, the lowest dose", d.doses[l].level),
    };
    let caption = format!(
        "Figure {n}. Means of {subject} at each {factor}, in increasing dose from the control, with {} confidence intervals; the dashed line is the control's mean. * marks the doses with an effect by {} (one-sided α = {}): {finding}.",
        confidence_label(o.alpha),
        test.method.title(),
        alpha_text(d.alpha)
    );
    let desc = format!("{} means in dose order against the control.", ordered.len());
    let chart = Chart {
        id,
        title: &caption,
        desc: &desc,
        y_title,
        x_title: factor,
        reference: Some(d.control_mean),
    };
    Some((caption.clone(), means_plot(&chart, &ordered)))
}
