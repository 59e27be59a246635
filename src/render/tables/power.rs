//! A `power` block's view: the answer as a sentence, and power over a
//! range of group sizes.

use super::{Numbering, cell, col, typeset};
use crate::format::{alpha_text, fixed, significant};
use crate::outcome::PowerResult;
use crate::render::view::{BlockView, TableView};

/// A `power` block: the answer as a sentence, and power over a range of n.
pub fn power_view(r: &PowerResult, next_table: &mut usize) -> BlockView {
    let mut numbers = Numbering(next_table);
    let effect = match &r.effect {
        crate::doc::power::EffectInput::CohensF(f) => format!("Cohen's f = {}", significant(*f, 3)),
        crate::doc::power::EffectInput::Means { means, sd, .. } => format!(
            "expected means {} with a common SD of {} (Cohen's f = {})",
            means
                .iter()
                .map(|m| format!("{m}"))
                .collect::<Vec<_>>()
                .join(", "),
            sd,
            significant(r.cohens_f, 3)
        ),
    };
    let setting = format!(
        "With {} groups, {effect} and α = {}",
        r.groups,
        alpha_text(r.alpha)
    );
    let lead = match (r.target, r.n_per_group) {
        (Some(target), Some(n)) => {
            let below = r.curve.iter().find(|(m, _)| *m + 1 == n).map(|(_, p)| *p);
            let below_text = below.map_or(String::new(), |p| {
                format!("; {} per group would give {}", n - 1, fixed(p, 3))
            });
            format!(
                "{setting}, {n} observations per group ({} in all) reach power {} against the target {}{below_text}.",
                n * r.groups,
                fixed(r.power, 3),
                target
            )
        }
        (Some(target), None) => {
            format!("{setting}, no practical number of observations reaches power {target}.")
        }
        (None, Some(n)) => format!(
            "{setting}, {n} observations per group ({} in all) give power {}: the chance that the F test detects an effect of this size.",
            n * r.groups,
            fixed(r.power, 3)
        ),
        (None, None) => setting,
    };
    let mut tables = Vec::new();
    if !r.curve.is_empty() {
        let number = numbers.next();
        let id = &r.id;
        tables.push(TableView {
            number,
            id: format!("{id}-power"),
            caption: match &r.caption {
                Some(c) => format!("Table {number}. {c}"),
                None => format!(
                    "Table {number}. Power of the one-way F test with {} groups and Cohen's f = {}.",
                    r.groups,
                    significant(r.cohens_f, 3)
                ),
            },
            columns: vec![col("n per group", true), col("Total N", true), col("Power", true)],
            rows: r
                .curve
                .iter()
                .enumerate()
                .map(|(i, (n, p))| {
                    vec![
                        cell(n.to_string(), format!("{id}.curve.{i}.n_per_group")),
                        cell((n * r.groups).to_string(), format!("{id}.curve.{i}.n_total")),
                        cell(fixed(*p, 3), format!("{id}.curve.{i}.power")),
                    ]
                })
                .collect(),
            footnotes: vec![
                "Exact power from the noncentral F distribution with noncentrality λ = f²·N (Cohen 1988, ch. 8); equal group sizes.".into(),
            ],
        });
    }
    typeset(BlockView {
        figures: Vec::new(),
        id: r.id.clone(),
        lead: Some(lead),
        tables,
        notes: Vec::new(),
        warnings: r.warnings.clone(),
        ..BlockView::default()
    })
}
