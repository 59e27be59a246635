//! What a repeated-measures profile figure draws: the model's estimated
//! marginal means at each level of the time factor (the `x_axis` factor
//! when it varies within subjects, else the first within-subject factor),
//! one series per level of the first between-subject treatment factor,
//! each with its interval from its own SE and df; and, for `plot:
//! subjects`, each subject's mean at each time.

use super::families::{Estimating, Slice};
use crate::data::FactorialRows;
use crate::doc::block::{AnovaSpec, PlotKind};
use crate::outcome::repeated::{PROFILE_SUBJECTS, Profile, RepeatedDetail};

/// The profile, when a profile figure is asked for.
pub(super) fn profile(
    spec: &AnovaSpec,
    estimating: &Estimating<'_>,
    data: &FactorialRows,
    repeated: &RepeatedDetail,
    subject: usize,
) -> Option<Profile> {
    let kinds = &spec.plots.kinds;
    let with_subjects = kinds.contains(&PlotKind::Subjects);
    if !with_subjects && !kinds.contains(&PlotKind::Profile) {
        return None;
    }
    let model = estimating.model;
    let index = |name: &String| model.index_of(name);
    let within: Vec<usize> = repeated.within.iter().filter_map(index).collect();
    let time = spec
        .plots
        .x_axis
        .as_ref()
        .and_then(|x| model.index_of(x))
        .filter(|f| within.contains(f))
        .or_else(|| within.first().copied())?;
    let group = repeated
        .between
        .iter()
        .filter_map(index)
        .find(|&f| !model.is_block(f));
    let vary: Vec<usize> = group.into_iter().chain([time]).collect();
    let (estimates, _) = estimating.estimates(&Slice { vary, within: None });
    let times = estimating.levels[time];
    let means = estimates
        .chunks(times)
        .map(|c| c.iter().map(|e| (e.mean, e.ci_lower, e.ci_upper)).collect())
        .collect();
    let labels = &estimating.labels[time];
    let positions = labels
        .iter()
        .map(|l| l.trim().parse::<f64>().ok().filter(|t| t.is_finite()))
        .collect::<Option<Vec<f64>>>()
        .filter(|p| p.windows(2).all(|w| w[0] < w[1]));
    Some(Profile {
        time: model.factor_names[time].clone(),
        times: labels.clone(),
        positions,
        group: group.map(|g| model.factor_names[g].clone()),
        groups: group.map_or_else(Vec::new, |g| estimating.labels[g].clone()),
        means,
        subjects: if with_subjects {
            subject_lines(data, subject, time, group)
        } else {
            Vec::new()
        },
        subjects_total: data.layout.levels[subject].len(),
    })
}

/// Each subject's group and mean at each time (averaged over any other
/// within-subject factor), for the first `PROFILE_SUBJECTS` subjects.
fn subject_lines(
    data: &FactorialRows,
    subject: usize,
    time: usize,
    group: Option<usize>,
) -> Vec<(usize, Vec<f64>)> {
    let subjects = data.layout.levels[subject].len().min(PROFILE_SUBJECTS);
    let times = data.layout.levels[time].len();
    let mut sums = vec![vec![(0.0, 0usize); times]; subjects];
    let mut groups = vec![0usize; subjects];
    for i in 0..data.offsets.len() {
        let row = data.row(i);
        let s = row[subject];
        if s >= subjects {
            continue;
        }
        if let Some(g) = group {
            groups[s] = row[g];
        }
        let cell = &mut sums[s][row[time]];
        cell.0 += data.offsets[i];
        cell.1 += 1;
    }
    sums.into_iter()
        .zip(groups)
        .map(|(cells, g)| {
            let values = cells
                .into_iter()
                .map(|(sum, n)| {
                    if n == 0 {
                        f64::NAN
                    } else {
                        data.origin + sum / n as f64
                    }
                })
                .collect();
            (g, values)
        })
        .collect()
}
