//! The one-factor and factorial results as the linear outcome: the bridge
//! while the engines move to producing `LinearOutcome` themselves.

use super::linear::{
    Alternatives, Comparison, Contrast, Estimate, Factor, Family, LevelSummary, LinearOutcome,
    Observation, Observed, Presentation, Role, Stratum, TermEffect, TermTest,
};
use super::{AnovaResult, ComparisonResult, EmmRow, FactorialResult};

/// The residual stratum's name, as the ANOVA table prints it.
pub const RESIDUAL: &str = "Residual";

fn comparison(c: &ComparisonResult, df: f64) -> Comparison {
    Comparison {
        method: c.method,
        alpha: c.alpha,
        contrasts: c
            .pairs
            .iter()
            .map(|p| Contrast {
                a: p.a,
                b: p.b,
                estimate: p.diff,
                se: p.se,
                df: p.df.unwrap_or(df),
                own_df: p.df.is_some(),
                lower: p.lower,
                upper: p.upper,
                statistic: p.statistic,
                p_raw: p.p_raw,
                p_adj: p.p_adj,
                significant: p.significant,
            })
            .collect(),
        letters: c.letters.clone(),
        critical: c.critical,
        control: c.control,
        sides: c.sides,
        withheld: c.withheld,
        notes: c.notes.clone(),
    }
}

/// The level means of a one-factor block as its factor's family.
fn one_way_family(r: &AnovaResult, residual_df: f64) -> Family {
    Family {
        term: r.factor.clone(),
        within: None,
        estimates: r
            .levels
            .iter()
            .map(|l| Estimate {
                label: l.name.clone(),
                n: l.n,
                mean: l.mean,
                se: l.se,
                ci_lower: l.ci_lower,
                ci_upper: l.ci_upper,
            })
            .collect(),
        comparison: r.comparison.as_ref().map(|c| comparison(c, residual_df)),
    }
}

/// Every observation of a one-factor block, level by level; the fitted
/// value is the level's mean.
fn one_way_observations(r: &AnovaResult) -> Vec<Observation> {
    r.observations
        .iter()
        .zip(&r.observation_lines)
        .enumerate()
        .flat_map(|(i, (values, lines))| {
            let mean = r.levels.get(i).map_or(f64::NAN, |l| l.mean);
            values
                .iter()
                .zip(lines)
                .map(move |(&value, &line)| Observation {
                    levels: vec![i],
                    value,
                    fitted: mean,
                    residual: value - mean,
                    line,
                })
        })
        .collect()
}

/// The factor's test in a one-factor ANOVA table.
fn one_way_term(r: &AnovaResult, residual_df: f64) -> TermTest {
    let t = &r.table;
    TermTest {
        name: r.factor.clone(),
        factors: vec![0],
        df: t.df_between,
        ss: t.ss_between,
        ms: t.ms_between,
        f: t.f,
        p: t.p,
        critical_f: t.f_crit,
        stratum: 0,
        denominator_df: residual_df,
        tested: true,
        effect: r.effect.map(|e| TermEffect {
            eta_sq: Some(e.eta_sq),
            partial_eta_sq: e.partial_eta_sq,
            omega_sq: e.omega_sq,
            cohens_f: e.cohens_f,
            partial_eta_sq_ci: e.partial_eta_sq_ci,
            ci_level: e.level,
        }),
    }
}

impl From<&AnovaResult> for LinearOutcome {
    fn from(r: &AnovaResult) -> Self {
        let t = &r.table;
        let residual_df = t.df_within as f64;
        let family = one_way_family(r, residual_df);
        let levels: Vec<LevelSummary> = r
            .levels
            .iter()
            .map(|l| LevelSummary {
                name: l.name.clone(),
                n: l.n,
                mean: l.mean,
                sd: l.sd,
                se: l.se,
                ci_lower: l.ci_lower,
                ci_upper: l.ci_upper,
                median: l.median,
                q1: l.q1,
                q3: l.q3,
            })
            .collect();
        let observations = one_way_observations(r);
        let observed = Observed::one_factor(&levels, &observations, &r.plots);
        LinearOutcome {
            id: r.id.clone(),
            line: r.line,
            data: r.data.clone(),
            response: r.response.clone(),
            alpha: r.alpha,
            n: r.n,
            exclusions: r.exclusions.clone(),
            method: r.method,
            ss_type: None,
            types_agree: true,
            factors: vec![Factor {
                name: r.factor.clone(),
                role: Role::Treatment,
                levels: r.levels.iter().map(|l| l.name.clone()).collect(),
            }],
            strata: vec![Stratum {
                name: RESIDUAL.to_string(),
                df: residual_df,
                ss: t.ss_within,
                ms: t.ms_within,
            }],
            terms: vec![one_way_term(r, residual_df)],
            total_df: t.n.saturating_sub(1),
            total_ss: t.ss_total,
            r_squared: t.r_squared,
            levels,
            ci_pooled: r.ci_pooled,
            cells: Vec::new(),
            cell_factors: vec![0],
            families: vec![family],
            alternatives: Alternatives {
                welch: r.welch,
                kruskal: r.kruskal.clone(),
            },
            checks: r.checks.clone(),
            warnings: r.warnings.clone(),
            acknowledged: r.acknowledged.clone(),
            presentation: Presentation {
                decimals: r.decimals,
                caption: r.caption.clone(),
                order: r.order,
                show: r.show,
                plots: r.plots.clone(),
            },
            observations,
            observed,
        }
    }
}

/// An estimated marginal (or cell) mean as an estimate.
fn estimate_of(m: &EmmRow) -> Estimate {
    Estimate {
        label: m.label.clone(),
        n: m.n,
        mean: m.mean,
        se: m.se,
        ci_lower: m.ci_lower,
        ci_upper: m.ci_upper,
    }
}

impl From<&FactorialResult> for LinearOutcome {
    fn from(r: &FactorialResult) -> Self {
        let residual_df = r.residual_df as f64;
        let factors = r
            .factors
            .iter()
            .zip(&r.levels)
            .enumerate()
            .map(|(i, (name, levels))| Factor {
                name: name.clone(),
                role: if r.cell_factors.contains(&i) {
                    Role::Treatment
                } else {
                    Role::Block
                },
                levels: levels.clone(),
            })
            .collect();
        let terms = r
            .terms
            .iter()
            .map(|t| TermTest {
                name: t.name.clone(),
                factors: t.factors.clone(),
                df: t.df,
                ss: t.ss,
                ms: t.ms,
                f: t.f,
                p: t.p,
                critical_f: t.critical_f,
                stratum: 0,
                denominator_df: residual_df,
                tested: !t.is_block,
                effect: Some(TermEffect {
                    eta_sq: None,
                    partial_eta_sq: t.partial_eta_sq,
                    omega_sq: t.partial_omega_sq,
                    cohens_f: (t.partial_eta_sq / (1.0 - t.partial_eta_sq)).sqrt(),
                    partial_eta_sq_ci: t.partial_eta_sq_ci,
                    ci_level: 1.0 - r.alpha,
                }),
            })
            .collect();
        let families = r
            .families
            .iter()
            .map(|f| Family {
                term: f.term.clone(),
                within: f.within.clone(),
                estimates: f.means.iter().map(estimate_of).collect(),
                comparison: Some(comparison(&f.comparison, residual_df)),
            })
            .chain(r.marginal_means.iter().map(|(term, means)| Family {
                term: term.clone(),
                within: None,
                estimates: means.iter().map(estimate_of).collect(),
                comparison: None,
            }))
            .collect();
        let observations = (0..r.values.len())
            .map(|i| Observation {
                levels: r.rows.get(i).cloned().unwrap_or_default(),
                value: r.values[i],
                fitted: r.fitted.get(i).copied().unwrap_or(f64::NAN),
                residual: r.residuals.get(i).copied().unwrap_or(f64::NAN),
                line: r.lines.get(i).copied().unwrap_or(0),
            })
            .collect::<Vec<_>>();
        let observed = Observed::factorial(r, &observations);
        LinearOutcome {
            id: r.id.clone(),
            line: r.line,
            data: r.data.clone(),
            response: r.response.clone(),
            alpha: r.alpha,
            n: r.n,
            exclusions: r.exclusions.clone(),
            method: crate::doc::block::Omnibus::Anova,
            ss_type: Some(r.ss_type),
            types_agree: r.types_agree,
            factors,
            strata: vec![Stratum {
                name: RESIDUAL.to_string(),
                df: residual_df,
                ss: r.residual_ss,
                ms: r.mse,
            }],
            terms,
            total_df: r.n.saturating_sub(1),
            total_ss: r.total_ss,
            r_squared: r.r_squared,
            levels: Vec::new(),
            ci_pooled: true,
            cells: r.cells.clone(),
            cell_factors: r.cell_factors.clone(),
            families,
            alternatives: Alternatives {
                welch: None,
                kruskal: None,
            },
            checks: r.checks.clone(),
            warnings: r.warnings.clone(),
            acknowledged: r.acknowledged.clone(),
            presentation: Presentation {
                decimals: r.decimals,
                caption: r.caption.clone(),
                order: r.order,
                show: r.show,
                plots: r.plots.clone(),
            },
            observations,
            observed,
        }
    }
}
