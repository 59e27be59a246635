//! The one-factor engine's outcome: the ANOVA table as one term tested
//! against the residual stratum, the levels as the factor's family of
//! estimates, and the observations figures draw.

use crate::outcome::linear::{
    Comparison, Factor, Family, LevelSummary, Observation, RESIDUAL, Role, Stratum, TermEffect,
    TermTest,
};
use crate::stats::effect::EffectSizes;
use crate::stats::oneway::OneWay;

/// The factor's test in a one-factor ANOVA table.
pub(super) fn factor_term(factor: &str, table: &OneWay, effect: Option<EffectSizes>) -> TermTest {
    TermTest {
        name: factor.to_string(),
        factors: vec![0],
        df: table.df_between,
        ss: table.ss_between,
        ms: table.ms_between,
        f: table.f,
        p: table.p,
        critical_f: table.f_crit,
        stratum: Some(0),
        denominator_df: table.df_within as f64,
        tested: true,
        effect: effect.map(|e| TermEffect {
            eta_sq: Some(e.eta_sq),
            partial_eta_sq: e.partial_eta_sq,
            omega_sq: e.omega_sq,
            cohens_f: e.cohens_f,
            partial_eta_sq_ci: e.partial_eta_sq_ci,
            ci_level: e.level,
        }),
    }
}

/// The one factor, with the levels that entered the analysis.
pub(super) fn factor(name: &str, levels: &[LevelSummary]) -> Factor {
    Factor {
        name: name.to_string(),
        role: Role::Treatment,
        levels: levels.iter().map(|l| l.name.clone()).collect(),
    }
}

/// The residual, the one-factor model's only stratum.
pub(super) fn residual(table: &OneWay) -> Stratum {
    Stratum {
        name: RESIDUAL.to_string(),
        df: table.df_within as f64,
        ss: table.ss_within,
        ms: table.ms_within,
    }
}

/// The level means as the factor's family, with its comparison.
pub(super) fn level_family(
    factor: &str,
    levels: &[LevelSummary],
    comparison: Option<Comparison>,
) -> Family {
    Family {
        term: factor.to_string(),
        within: None,
        estimates: levels.iter().map(LevelSummary::estimate).collect(),
        comparison,
    }
}

/// Every observation, level by level (absolute values); the fitted value
/// is the level's mean.
pub(super) fn observations(
    values: Vec<Vec<f64>>,
    lines: Vec<Vec<usize>>,
    levels: &[LevelSummary],
) -> Vec<Observation> {
    values
        .into_iter()
        .zip(lines)
        .enumerate()
        .flat_map(|(i, (values, lines))| {
            let mean = levels.get(i).map_or(f64::NAN, |l| l.mean);
            values
                .into_iter()
                .zip(lines)
                .map(move |(value, line)| Observation {
                    levels: vec![i],
                    value,
                    fitted: mean,
                    residual: value - mean,
                    line,
                })
        })
        .collect()
}
