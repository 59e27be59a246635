//! The fixed-sequence step-down trend procedure for NOEC/LOEC (Tukey,
//! Ciminera & Heyse 1985, *Biometrics* 41:295–301; linear-extensions.md
//! E.4).
//!
//! With S_j = {control, d₁, …, d_j}, a one-sided trend test is run on S_k,
//! then S_{k−1}, …, each at level α and only while the previous one was
//! significant; d_j is declared when the test on S_j is. Each hypothesis is
//! tested only after all earlier ones were rejected, so the familywise
//! error rate stays at α without adjustment. Reading "trend among the first
//! j doses" as "dose j differs from the control" assumes a monotone
//! response.
//!
//! Trend tests: Jonckheere-Terpstra (exact p when there are no ties between
//! groups, else the normal approximation), and the linear contrast with
//! ordinal scores 0, 1, …, j centred with weights nᵢ, whose variance is
//! pooled from the groups in S_j only (recomputed at each step) on
//! N_j − (j + 1) df.

use super::dist::{t_cdf, t_sf};
use super::dose::{Direction, Finding};
use super::jonckheere::jonckheere;

/// The trend test run at each step.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum TrendTest {
    Jonckheere,
    OrdinalContrast,
}

/// The test on S_j.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct TrendStep {
    /// j, the number of doses in S_j.
    pub doses: usize,
    /// J (increasing sense) or the contrast's t.
    pub statistic: f64,
    /// The normal deviate of J; `None` for the contrast.
    pub z: Option<f64>,
    /// The t's df; `None` for Jonckheere-Terpstra.
    pub df: Option<f64>,
    /// The one-sided p the decision uses (exact when available for J).
    pub p: f64,
    /// The normal-approximation p of J (the same as `p` for the contrast).
    pub p_normal: f64,
    pub exact: bool,
    /// False for the steps below the first non-significant one.
    pub tested: bool,
    pub significant: bool,
}

/// The whole procedure.
#[derive(Debug, Clone, PartialEq)]
pub struct StepDown {
    pub test: TrendTest,
    /// Index j − 1 holds S_j, lowest first.
    pub steps: Vec<TrendStep>,
    pub finding: Finding,
}

/// The step-down procedure on `groups` ordered control first, then doses
/// by increasing dose. `None` with no dose, an empty group, a non-finite
/// value, `alpha` outside (0, 1), or a step whose test cannot be computed
/// (every value equal; for the contrast, no residual df or no variance).
pub fn step_down(
    groups: &[&[f64]],
    test: TrendTest,
    direction: Direction,
    alpha: f64,
) -> Option<StepDown> {
    if groups.len() < 2
        || groups
            .iter()
            .any(|g| g.is_empty() || g.iter().any(|x| !x.is_finite()))
        || !(alpha > 0.0 && alpha < 1.0)
    {
        return None;
    }
    let mut steps = (1..groups.len())
        .map(|j| {
            let subset = &groups[..=j];
            match test {
                TrendTest::Jonckheere => jonckheere_step(subset, direction),
                TrendTest::OrdinalContrast => contrast_step(subset, direction),
            }
        })
        .collect::<Option<Vec<TrendStep>>>()?;
    // From the top: test until the first non-significant step.
    for step in steps.iter_mut().rev() {
        step.tested = true;
        step.significant = step.p < alpha;
        if !step.significant {
            break;
        }
    }
    let declared: Vec<bool> = steps.iter().map(|s| s.significant).collect();
    Some(StepDown {
        test,
        finding: Finding::step_down(&declared),
        steps,
    })
}

fn jonckheere_step(subset: &[&[f64]], direction: Direction) -> Option<TrendStep> {
    let jt = jonckheere(subset, direction)?;
    Some(TrendStep {
        doses: subset.len() - 1,
        statistic: jt.j,
        z: Some(jt.z),
        df: None,
        p: jt.p(),
        p_normal: jt.p_normal,
        exact: jt.p_exact.is_some(),
        tested: false,
        significant: false,
    })
}

/// The ordinal linear contrast on S_j: scores 0…j centred with weights nᵢ,
/// t = Σcᵢȳᵢ / √(s²·Σcᵢ²/nᵢ), s² pooled from the groups in S_j.
fn contrast_step(subset: &[&[f64]], direction: Direction) -> Option<TrendStep> {
    let sizes: Vec<f64> = subset.iter().map(|g| g.len() as f64).collect();
    let means: Vec<f64> = subset
        .iter()
        .map(|g| g.iter().sum::<f64>() / g.len() as f64)
        .collect();
    let total: f64 = sizes.iter().sum();
    let df = total - subset.len() as f64;
    let within: f64 = subset
        .iter()
        .zip(&means)
        .map(|(g, m)| g.iter().map(|x| (x - m) * (x - m)).sum::<f64>())
        .sum();
    let variance = within / df;
    if df < 1.0 || !crate::stats::is_positive(variance) {
        return None;
    }
    let centre = sizes
        .iter()
        .enumerate()
        .map(|(i, n)| i as f64 * n)
        .sum::<f64>()
        / total;
    let (mut estimate, mut weight) = (0.0, 0.0);
    for (i, (n, m)) in sizes.iter().zip(&means).enumerate() {
        let c = i as f64 - centre;
        estimate += c * m;
        weight += c * c / n;
    }
    let t = estimate / (variance * weight).sqrt();
    let p = match direction {
        Direction::Decrease => t_cdf(t, df),
        Direction::Increase => t_sf(t, df),
    };
    Some(TrendStep {
        doses: subset.len() - 1,
        statistic: t,
        z: None,
        df: Some(df),
        p,
        p_normal: p,
        exact: false,
        tested: false,
        significant: false,
    })
}

#[cfg(test)]
#[path = "step_down_tests.rs"]
mod tests;
