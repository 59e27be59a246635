//! The `power` block: sample size for a target power, or the power of a
//! given size, for a one-factor design; no data are read.

use crate::doc::power::{EffectInput, PowerGoal, PowerSpec};
use crate::doc::{Block, Document};
use crate::outcome::PowerResult;
use crate::stats::effect::{one_way_power, one_way_sample_size};

/// Runs a `power` block (no data needed).
pub fn run_power(doc: &Document, block: &Block, spec: &PowerSpec) -> PowerResult {
    let alpha = spec.alpha.unwrap_or(doc.front.alpha);
    let f = spec.effect.cohens_f();
    let k = spec.groups;
    let mut warnings = Vec::new();
    if matches!(spec.effect, EffectInput::CohensF(_)) {
        warnings.push("Cohen's benchmarks (f = 0.10, 0.25, 0.40 for small, medium, large) are no substitute for the smallest difference that matters in your setting; base the effect on that.".to_string());
    }
    let (target, n, power) = match spec.goal {
        PowerGoal::SampleSize { power } => match one_way_sample_size(k, f, alpha, power) {
            Some((n, achieved)) => (Some(power), Some(n), achieved),
            None => {
                warnings.push(format!("No n per group up to 1,000,000 reaches power {power}: the effect is too small to detect in practice."));
                (Some(power), None, f64::NAN)
            }
        },
        PowerGoal::Power { n_per_group } => (
            None,
            Some(n_per_group),
            one_way_power(k, n_per_group, f, alpha),
        ),
    };
    // A small table around the answer: half, three quarters, n − 1, n, 1.25 n, 1.5 n, 2 n.
    let mut ns: Vec<usize> = match n {
        Some(n) => [
            n / 2,
            3 * n / 4,
            n.saturating_sub(1),
            n,
            n + n / 4,
            n + n / 2,
            2 * n,
        ]
        .to_vec(),
        None => Vec::new(),
    };
    ns.retain(|&m| m >= 2);
    ns.sort_unstable();
    ns.dedup();
    let curve = ns
        .into_iter()
        .map(|m| (m, one_way_power(k, m, f, alpha)))
        .collect();
    PowerResult {
        id: block.id.clone(),
        line: block.line,
        groups: k,
        effect: spec.effect.clone(),
        cohens_f: f,
        alpha,
        target,
        n_per_group: n,
        power,
        curve,
        caption: spec.caption.clone(),
        warnings,
    }
}
