//! The figures of a linear block (one factor, factorial, blocked, Latin
//! square), drawn from its outcome alone: box, strip and means plots per
//! factor, and the interaction, residual and Q-Q plots of the model. Every
//! number drawn is one the outcome holds; nothing here computes a statistic.

use super::Figure;
use super::dense;
use super::plots::{
    CategoricalPlot, Chart, Group, Series, XAxis, box_plot, interaction_plot, means_plot, qq_plot,
    residual_plot, strip_plot,
};
use crate::doc::block::PlotKind;
use crate::format::{confidence_label, fixed};
use crate::outcome::linear::{Family, LinearOutcome};

/// The figures of a linear block, numbered on from `number`. Box, strip and
/// means plots are drawn for every factor whose main effect (or a slice of
/// it) was compared, the first keeping the plain id `<block>-<kind>` and the
/// others adding `-<factor>`; without comparisons, for the first treatment
/// factor. The model's figures (interaction, residuals, Q-Q) are drawn once.
pub fn linear_figures(o: &LinearOutcome, number: &mut usize) -> Vec<Figure> {
    linear_figures_named(o, &o.id, number)
}

/// As `linear_figures`, with the ids opened by `name` rather than the
/// outcome's id (a trait of a several-response block: `weights-Prewt`).
pub fn linear_figures_named(o: &LinearOutcome, name: &str, number: &mut usize) -> Vec<Figure> {
    let plotted = plotted_factors(o);
    if plotted.is_empty() {
        return Vec::new();
    }
    let mut out = Vec::new();
    for &kind in &o.presentation.plots.kinds {
        let id = figure_id(name, kind);
        let targets: Vec<(Option<usize>, String)> = match kind {
            PlotKind::Box | PlotKind::Strip | PlotKind::Means => plotted
                .iter()
                .enumerate()
                .map(|(i, &f)| match i {
                    0 => (Some(f), id.clone()),
                    _ => (Some(f), format!("{id}-{}", o.factors[f].name)),
                })
                .collect(),
            _ => vec![(None, id)],
        };
        for (factor, id) in targets {
            let n = *number;
            let drawn = match factor {
                Some(f) => Some(factor_figure(o, kind, f, &id, n)),
                None => model_figure(o, kind, &id, n),
            };
            if let Some((caption, svg)) = drawn {
                *number += 1;
                out.push(Figure {
                    id,
                    kind: kind.key(),
                    number: n,
                    caption,
                    svg,
                });
            }
        }
    }
    out
}

/// The factors that get box, strip and means plots, in family order.
fn plotted_factors(o: &LinearOutcome) -> Vec<usize> {
    let mut plotted: Vec<usize> = Vec::new();
    for fam in o.families.iter().filter(|f| f.comparison.is_some()) {
        if let Some(f) = o.factors.iter().position(|f| f.name == fam.term)
            && !plotted.contains(&f)
        {
            plotted.push(f);
        }
    }
    if plotted.is_empty() {
        plotted.extend(o.treatments().map(|(i, _)| i).take(1));
    }
    plotted
}

/// Where a means plot's means come from, as its caption must say.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(super) enum MeansSource {
    /// A one-factor design's level means (its family's estimates).
    Levels,
    /// The model's estimated marginal means (the factor's main family).
    Marginal,
    /// The observed means of the factor's levels: no family exists.
    Observed,
}

/// The groups of a box, strip or means plot of factor `f`: each level's
/// observations, quartiles, letters and mean with its interval. Means and
/// intervals come from the factor's main family; without one, the observed
/// means with no interval.
pub(super) fn factor_groups<'a>(
    o: &'a LinearOutcome,
    f: usize,
    values: &'a [Vec<f64>],
) -> (Vec<Group<'a>>, MeansSource) {
    let family: Option<&Family> = o.main_family(&o.factors[f].name);
    let letters = family
        .and_then(|fam| fam.comparison.as_ref())
        .filter(|c| !c.letters.is_empty());
    let spreads = o.observed.spreads.get(f);
    let groups = o.factors[f]
        .levels
        .iter()
        .enumerate()
        .map(|(l, name)| {
            let spread = spreads.and_then(|s| s.get(l));
            let estimate = family.and_then(|fam| fam.estimates.get(l));
            Group {
                label: name,
                values: values.get(l).map_or(&[][..], Vec::as_slice),
                letters: letters.and_then(|c| c.letters.get(l)).map(String::as_str),
                quartiles: spread
                    .map_or((f64::NAN, f64::NAN, f64::NAN), |s| (s.q1, s.median, s.q3)),
                mean: estimate.map_or(spread.map_or(f64::NAN, |s| s.mean), |e| e.mean),
                ci: estimate.map_or((f64::NAN, f64::NAN), |e| (e.ci_lower, e.ci_upper)),
            }
        })
        .collect::<Vec<Group<'a>>>();
    let groups = match o.transformation() {
        None => groups,
        Some(t) => (groups.into_iter())
            .map(|g| Group {
                quartiles: (
                    t.back(g.quartiles.0),
                    t.back(g.quartiles.1),
                    t.back(g.quartiles.2),
                ),
                mean: t.back(g.mean),
                ci: (t.back(g.ci.0), t.back(g.ci.1)),
                ..g
            })
            .collect(),
    };
    let source = match family {
        Some(_) if o.is_one_factor() => MeansSource::Levels,
        Some(_) => MeansSource::Marginal,
        None => MeansSource::Observed,
    };
    (groups, source)
}

/// The observations at each level of factor `f`, in data order, on the
/// data's scale (a transformed block's values taken back).
pub(super) fn values_by_level(o: &LinearOutcome, f: usize) -> Vec<Vec<f64>> {
    let back = |z: f64| o.transformation().map_or(z, |t| t.back(z));
    let mut values = vec![Vec::new(); o.factors[f].levels.len()];
    for obs in &o.observations {
        if let Some(v) = obs.levels.get(f).and_then(|&l| values.get_mut(l)) {
            v.push(back(obs.value));
        }
    }
    values
}

/// Captions name the response as the tables do: its label, else its column.
fn subject(o: &LinearOutcome) -> &str {
    let spec = &o.presentation.plots;
    spec.label.as_deref().unwrap_or(spec.display(&o.response))
}

/// Box, strip or means plot of the response by factor `f`, with the
/// factor's letters when its main effect was compared.
fn factor_figure(
    o: &LinearOutcome,
    kind: PlotKind,
    f: usize,
    id: &str,
    n: usize,
) -> (String, String) {
    let spec = &o.presentation.plots;
    let values = values_by_level(o, f);
    let (groups, source) = factor_groups(o, f, &values);
    let subject = subject(o);
    let factor = spec.display(&o.factors[f].name);
    let count = o.observations.len();
    let many = dense::summarised(count);
    let note = dense_note(kind, count);
    let (what, draw): (String, CategoricalPlot) = match kind {
        PlotKind::Box => (
            format!(
                "{subject} by {factor}: box plots (median, quartiles, whiskers to the most extreme values within 1.5 IQR){}.{note}",
                if many { "" } else { " with every observation" }
            ),
            box_plot,
        ),
        PlotKind::Strip => (
            format!(
                "{} of {subject} by {factor}, with the {} as bars.{note}",
                if many {
                    "Observations"
                } else {
                    "Every observation"
                },
                match source {
                    MeansSource::Levels => "level means",
                    MeansSource::Marginal => "estimated marginal means",
                    MeansSource::Observed => "observed means",
                }
            ),
            strip_plot,
        ),
        _ => (
            format!(
                "{}{}.{note}",
                means_phrase(o, source, subject, factor),
                if many { "" } else { "; observations in grey" }
            ),
            means_plot,
        ),
    };
    let letters_note = o
        .main_family(&o.factors[f].name)
        .and_then(|fam| fam.comparison.as_ref())
        .filter(|c| !c.letters.is_empty())
        .map_or(String::new(), |c| {
            format!(
                " Levels sharing a letter do not differ significantly ({}, α = {}).",
                c.method.title(),
                c.alpha
            )
        });
    let caption = format!("Figure {n}. {what}{letters_note}");
    let desc = format!(
        "Levels {}; means {}.",
        groups
            .iter()
            .map(|g| g.label)
            .collect::<Vec<_>>()
            .join(", "),
        groups
            .iter()
            .map(|g| fixed(
                g.mean,
                o.transform
                    .as_deref()
                    .map_or(o.presentation.decimals, |t| t.data_decimals)
            ))
            .collect::<Vec<_>>()
            .join(", ")
    );
    let y_title = axis_title(o);
    let chart = Chart {
        id,
        title: &caption,
        desc: &desc,
        y_title: &y_title,
        x_title: factor,
        reference: spec.reference,
    };
    let svg = draw(&chart, &groups);
    (caption, svg)
}

/// What a means plot shows, as its caption's first words say it.
fn means_phrase(o: &LinearOutcome, source: MeansSource, subject: &str, factor: &str) -> String {
    let conf = confidence_label(o.alpha);
    if let (Some(t), MeansSource::Levels | MeansSource::Marginal) = (o.transformation(), source) {
        use crate::outcome::transform::Wording;
        return format!(
            "{} of {subject} by {factor} with {conf} confidence intervals, back-transformed from the {} scale",
            crate::outcome::transform::plural_capitalised(t.back_name()),
            t.scale()
        );
    }
    match source {
        MeansSource::Levels => format!(
            "Means of {subject} by {factor} with {conf} confidence intervals ({})",
            if o.ci_pooled {
                "pooled"
            } else {
                "each level's own SD"
            }
        ),
        MeansSource::Marginal => format!(
            "Estimated marginal means of {subject} by {factor} with {conf} confidence intervals from the model"
        ),
        MeansSource::Observed => format!(
            "Observed means of {subject} by {factor}, without intervals (the analysis made no estimates for this factor)"
        ),
    }
}

/// "Residuals", or "Conditional residuals" with random terms.
fn residuals_noun(o: &LinearOutcome) -> &'static str {
    if o.mixed.is_some() {
        "Conditional residuals"
    } else {
        "Residuals"
    }
}

/// The figures of the model drawn once: interaction, residuals, Q-Q.
fn model_figure(o: &LinearOutcome, kind: PlotKind, id: &str, n: usize) -> Option<(String, String)> {
    let subject = subject(o);
    let count = o.observations.len();
    let note = dense_note(kind, count);
    match kind {
        PlotKind::Interaction => interaction_figure(o, id, n),
        PlotKind::Profile => profile_figure(o, id, n, false),
        PlotKind::Subjects => profile_figure(o, id, n, true),
        PlotKind::Trend => {
            let x_title = o
                .trend
                .as_deref()
                .map_or("", |t| o.presentation.plots.display(&t.factor));
            super::trend::trend_figure(o, id, n, (x_title, &axis_title(o)))
        }
        PlotKind::Doses => {
            super::dose::dose_figure(o, id, n, &values_by_level(o, 0), (subject, &axis_title(o)))
        }
        PlotKind::Equivalence => super::equivalence::equivalence_figure(o, id, n),
        PlotKind::Residuals => {
            let many = dense::summarised(count);
            let lines: Vec<usize> = o.observations.iter().map(|obs| obs.line).collect();
            let fitted: Vec<f64> = o.observations.iter().map(|obs| obs.fitted).collect();
            let residuals: Vec<f64> = o.observations.iter().map(|obs| obs.residual).collect();
            let flags = flagged_points(&o.checks, &lines, many);
            let caption = format!(
                "Figure {n}. {} of {subject} against fitted values{}{}.{note}",
                residuals_noun(o),
                if o.is_one_factor() {
                    " (level means)"
                } else if o.mixed.is_some() {
                    " (fixed effects plus predicted unit effects)"
                } else {
                    ""
                },
                residual_flags_phrase(many)
            );
            let desc = format!("{} residuals; {} flagged.", residuals.len(), flags.len());
            let svg = residual_plot(id, &caption, &desc, &fitted, &residuals, &flags);
            Some((caption, svg))
        }
        PlotKind::Qq => {
            let qq = o.observed.qq.as_ref()?;
            let caption = format!(
                "Figure {n}. Normal Q-Q plot of the {} of {subject} (Blom positions), with a line through the quartiles.{note}",
                residuals_noun(o).to_lowercase()
            );
            let desc = format!("{} residuals against normal quantiles.", qq.residuals.len());
            Some((caption.clone(), qq_plot(id, &caption, &desc, qq)))
        }
        _ => None,
    }
}

/// Observed cell means of two treatment factors: `x_axis` (else the first
/// treatment factor) on the axis, one line per level of the next, each mean
/// with its interval from the residual mean square.
fn interaction_figure(o: &LinearOutcome, id: &str, n: usize) -> Option<(String, String)> {
    let spec = &o.presentation.plots;
    let treatments: Vec<usize> = o.treatments().map(|(i, _)| i).collect();
    let fa = spec
        .x_axis
        .as_ref()
        .and_then(|x| o.factors.iter().position(|f| &f.name == x))
        .filter(|f| treatments.contains(f))
        .or_else(|| treatments.first().copied())?;
    let fb = *treatments.iter().find(|&&f| f != fa)?;
    let table = o
        .observed
        .two_way
        .iter()
        .find(|t| t.factors == [fa.min(fb), fa.max(fb)])?;
    let (a_levels, b_levels) = (&o.factors[fa].levels, &o.factors[fb].levels);
    let width = o.factors[table.factors[1]].levels.len();
    let at = |a: usize, b: usize| match fa < fb {
        true => a * width + b,
        false => b * width + a,
    };
    let series: Vec<Series> = b_levels
        .iter()
        .enumerate()
        .map(|(b, name)| {
            let points = (0..a_levels.len())
                .map(|a| {
                    table
                        .estimates
                        .get(at(a, b))
                        .map_or((f64::NAN, f64::NAN, f64::NAN), |e| {
                            (e.mean, e.ci_lower, e.ci_upper)
                        })
                })
                .collect();
            (name.clone(), points)
        })
        .collect();
    let x_labels: Vec<&str> = a_levels.iter().map(String::as_str).collect();
    let (x_name, line_name) = (
        spec.display(&o.factors[fa].name),
        spec.display(&o.factors[fb].name),
    );
    // With random terms a cell mean's interval depends on which units it
    // averages over; the means are drawn without one.
    let intervals = if o.mixed.is_some() {
        " (observed means; see the tables for standard errors)".to_string()
    } else {
        format!(
            ", with {} confidence intervals (model residual mean square)",
            confidence_label(o.alpha)
        )
    };
    let caption = format!(
        "Figure {n}. Cell means of {}: {x_name} on the axis, one line per level of {line_name}{intervals}.",
        subject(o),
    );
    let lines = Lines {
        series: &series,
        traces: &[],
        names: (x_name, line_name),
    };
    lines_figure(o, id, caption, (&x_labels, None), lines)
}

/// A repeated-measures profile: the model's means at each time with their
/// intervals, a line per between-subject group, and for `plot: subjects`
/// each subject's observations faintly behind them.
fn profile_figure(
    o: &LinearOutcome,
    id: &str,
    n: usize,
    with_subjects: bool,
) -> Option<(String, String)> {
    let p = o.repeated.as_ref()?.profile.as_ref()?;
    let traces = if with_subjects { &p.subjects[..] } else { &[] };
    let spec = &o.presentation.plots;
    let names: Vec<String> = match &p.group {
        Some(_) => p.groups.clone(),
        None => vec![subject(o).to_string()],
    };
    let series: Vec<Series> = names.into_iter().zip(p.means.iter().cloned()).collect();
    let x_labels: Vec<&str> = p.times.iter().map(String::as_str).collect();
    let time = spec.display(&p.time);
    let group = p.group.as_deref().map_or("", |g| spec.display(g));
    let lines = match &p.group {
        Some(_) => format!(", one line per level of {group}"),
        None => String::new(),
    };
    let traced = if traces.is_empty() {
        String::new()
    } else if p.subjects.len() < p.subjects_total {
        format!(
            "; faint lines: the first {} of {} subjects' observations",
            p.subjects.len(),
            p.subjects_total
        )
    } else {
        "; faint lines: each subject's observations".to_string()
    };
    let spaced = if p.positions.is_some() {
        format!("; {time} is spaced in proportion to its values")
    } else {
        String::new()
    };
    let caption = format!(
        "Figure {n}. Estimated marginal means of {} at each level of {time}{lines}, with {} confidence intervals from the mixed model (each mean with its own SE and df){traced}{spaced}.",
        subject(o),
        confidence_label(o.alpha)
    );
    let lines = Lines {
        series: &series,
        traces,
        names: (time, group),
    };
    lines_figure(o, id, caption, (&x_labels, p.positions.as_deref()), lines)
}

/// The lines of a figure of means across the levels of one factor.
struct Lines<'a> {
    /// A line per level of the other factor (or group).
    series: &'a [Series],
    /// Drawn faintly behind the means (a profile's subjects).
    traces: &'a [(usize, Vec<f64>)],
    /// The axis's factor and the legend's.
    names: (&'a str, &'a str),
}

/// Means across the levels on the axis (`labels`, at `at` when they are
/// spaced by value), with their intervals, a line per series.
fn lines_figure(
    o: &LinearOutcome,
    id: &str,
    caption: String,
    (labels, at): (&[&str], Option<&[f64]>),
    lines: Lines<'_>,
) -> Option<(String, String)> {
    let (x_name, line_name) = lines.names;
    let svg = interaction_plot(
        id,
        &caption,
        &caption,
        XAxis { labels, at },
        lines.series,
        lines.traces,
        (&axis_title(o), x_name, line_name),
        o.presentation.plots.reference,
    );
    Some((caption, svg))
}

/// The response axis's title: the response as captions name it, and its unit.
fn axis_title(o: &LinearOutcome) -> String {
    match &o.presentation.plots.unit {
        Some(u) => format!("{} ({u})", subject(o)),
        None => subject(o).to_string(),
    }
}

/// The caption's sentence for a figure drawn as a summary (empty otherwise).
fn dense_note(kind: PlotKind, observations: usize) -> String {
    if !dense::summarised(observations) {
        return String::new();
    }
    let what = match kind {
        PlotKind::Box => "boxes and whiskers only",
        PlotKind::Strip => {
            "each level's observations are drawn as a binned density, each bar as wide as the count in its bin"
        }
        PlotKind::Means => "the observations behind the means are left out",
        PlotKind::Residuals => {
            "each cell of a grid is shaded by the number of observations in it (logarithmic scale)"
        }
        PlotKind::Qq => {
            return dense::caption_note(
                observations,
                &format!(
                    "the {0} smallest and {0} largest residuals are drawn with evenly spaced order statistics between them",
                    dense::QQ_TAIL
                ),
            );
        }
        PlotKind::Interaction
        | PlotKind::Profile
        | PlotKind::Subjects
        | PlotKind::Trend
        | PlotKind::Doses
        | PlotKind::Equivalence => {
            return String::new();
        }
    };
    dense::caption_note(observations, what)
}

/// Points of a residual plot to label: (index into `lines`, "line N") for
/// the flagged observations, in one pass over the lines. A summarised plot
/// labels none: its labels would pile up on the few drawn cells, and the
/// checks table names the most extreme.
fn flagged_points(
    checks: &crate::outcome::Checks,
    lines: &[usize],
    summarised: bool,
) -> Vec<(usize, String)> {
    if summarised {
        return Vec::new();
    }
    let mut wanted: std::collections::BTreeSet<usize> =
        checks.outliers.iter().map(|o| o.line).collect();
    // A line labels its first observation only (a wide row holds several).
    lines
        .iter()
        .enumerate()
        .filter(|(_, l)| wanted.remove(l))
        .map(|(i, l)| (i, format!("line {l}")))
        .collect()
}

/// How a residual plot's caption says where flagged observations are.
fn residual_flags_phrase(summarised: bool) -> &'static str {
    if summarised {
        "; observations beyond ±3 studentized residuals are counted, and the most extreme named, under the assumption checks"
    } else {
        "; observations beyond ±3 studentized residuals are labelled with their data line"
    }
}

fn figure_id(block: &str, kind: PlotKind) -> String {
    format!("{block}-{}", kind.key())
}

#[cfg(test)]
#[path = "linear_tests.rs"]
mod tests;
