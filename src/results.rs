//! The results file `<stem>.results.json`: a documented contract that other
//! tools and checks read. Field names here are stable: new fields may be
//! added, and a renamed field raises `SCHEMA_VERSION` (README lists the changes).
//!
//! Numbers are written in shortest round-trip form (serde_json uses `ryu`).
//! A value that is not finite is written as `null`, and the block's
//! `warnings` say why.

use crate::doc::power::EffectInput;
use crate::outcome::{AnovaResult, BlockResult, PowerResult};
use crate::provenance::{Input, sha256_hex};
use serde::Serialize;
use serde::ser::{SerializeMap, Serializer};

/// Version of this file's layout; raised when a field changes meaning.
pub const SCHEMA_VERSION: u32 = 2;

/// `not_tested` of a blocking factor's term.
const BLOCK_REASON: &str =
    "blocking factor: blocks are not randomized, so an F test of them is not valid";

fn finite(x: f64) -> Option<f64> {
    x.is_finite().then_some(x)
}

#[derive(Serialize)]
pub struct ResultsFile {
    pub sheaf: String,
    pub schema: u32,
    pub document: String,
    pub document_sha256: String,
    /// The report's format, `html` or `md` (what `verify` rebuilds).
    pub format: String,
    pub inputs: Vec<InputRecord>,
    pub blocks: Vec<BlockEntry>,
}

/// One block's record; its `kind` field says which.
#[derive(Serialize)]
#[serde(untagged)]
pub enum BlockEntry {
    Anova(Box<BlockRecord>),
    Factorial(Box<FactorialRecord>),
    Power(Box<PowerRecord>),
}

/// A factorial `anova` block: the same fields as a one-factor block where
/// they apply, plus `ss_type`, `cells` and estimated marginal means.
#[derive(Serialize)]
pub struct FactorialRecord {
    #[serde(flatten)]
    pub head: BlockHead,
    /// 1, 2 or 3.
    pub ss_type: u8,
    pub anova: AnovaRecord,
    pub checks: ChecksRecord,
    /// Estimated marginal means of the first compared term (as `groups` for one factor).
    pub groups: Vec<GroupRecord>,
    pub cells: Vec<CellRecord>,
    pub comparisons: Vec<ComparisonRecord>,
    pub figures: Vec<FigureRecord>,
    pub warnings: Vec<String>,
    /// Notes the author acknowledged (`acknowledge`, planned exclusions).
    pub acknowledged: Vec<String>,
}

#[derive(Serialize)]
pub struct CellRecord {
    /// Factor → level, in model order.
    pub levels: Letters,
    pub n: usize,
    pub mean: Option<f64>,
}

#[derive(Serialize)]
pub struct MeanRecord {
    pub level: String,
    pub n: usize,
    pub mean: Option<f64>,
    pub se: Option<f64>,
    pub ci_lower: Option<f64>,
    pub ci_upper: Option<f64>,
}

fn factorial_record(r: &crate::outcome::FactorialResult) -> FactorialRecord {
    let comparisons: Vec<ComparisonRecord> = r
        .families
        .iter()
        .map(|fam| {
            let c = &fam.comparison;
            ComparisonRecord {
                term: fam.term.clone(),
                within: fam.within.clone(),
                method: c.method.key(),
                alpha: c.alpha,
                critical_value: finite(c.critical),
                control: None,
                sides: None,
                means: Some(
                    fam.means
                        .iter()
                        .map(|m| MeanRecord {
                            level: m.label.clone(),
                            n: m.n,
                            mean: finite(m.mean),
                            se: finite(m.se),
                            ci_lower: finite(m.ci_lower),
                            ci_upper: finite(m.ci_upper),
                        })
                        .collect(),
                ),
                pairs: c
                    .pairs
                    .iter()
                    .map(|p| PairRecord {
                        a: fam.means[p.a].label.clone(),
                        b: fam.means[p.b].label.clone(),
                        diff: finite(p.diff),
                        se: finite(p.se),
                        lower: finite(p.lower),
                        upper: finite(p.upper),
                        p_adj: finite(p.p_adj),
                        significant: p.significant,
                        df: None,
                    })
                    .collect(),
                letters: Letters(
                    fam.means
                        .iter()
                        .zip(&c.letters)
                        .map(|(m, l)| (m.label.clone(), l.clone()))
                        .collect(),
                ),
            }
        })
        .collect();
    let groups = r
        .families
        .first()
        .map(|fam| {
            fam.means
                .iter()
                .map(|m| GroupRecord {
                    level: m.label.clone(),
                    n: m.n,
                    mean: finite(m.mean),
                    sd: None,
                    se: finite(m.se),
                    ci_lower: finite(m.ci_lower),
                    ci_upper: finite(m.ci_upper),
                    ci_error: "pooled",
                    median: None,
                    q1: None,
                    q3: None,
                })
                .collect()
        })
        .unwrap_or_default();
    FactorialRecord {
        head: BlockHead::new(
            &r.id,
            r.line,
            &r.data,
            &r.response,
            r.factors.clone(),
            r.n,
            &r.exclusions,
            r.alpha,
            "anova",
        ),
        ss_type: match r.ss_type {
            crate::stats::linear::SsType::I => 1,
            crate::stats::linear::SsType::II => 2,
            crate::stats::linear::SsType::III => 3,
        },
        anova: AnovaRecord {
            terms: r
                .terms
                .iter()
                .map(|t| TermRecord {
                    term: t.name.clone(),
                    df: t.df,
                    ss: finite(t.ss),
                    ms: finite(t.ms),
                    f: finite(t.f),
                    p: finite(t.p),
                    critical_f: finite(t.critical_f),
                    not_tested: t.is_block.then_some(BLOCK_REASON),
                    effect: Some(EffectRecord {
                        eta_sq: None,
                        partial_eta_sq: finite(t.partial_eta_sq),
                        omega_sq: finite(t.partial_omega_sq),
                        cohens_f: finite((t.partial_eta_sq / (1.0 - t.partial_eta_sq)).sqrt()),
                        partial_eta_sq_ci: [
                            finite(t.partial_eta_sq_ci.0),
                            finite(t.partial_eta_sq_ci.1),
                        ],
                        ci_level: 1.0 - r.alpha,
                    }),
                })
                .collect(),
            residual: ResidualRecord {
                df: r.residual_df,
                ss: finite(r.residual_ss),
                ms: finite(r.mse),
            },
            total: TotalRecord {
                df: r.n - 1,
                ss: finite(r.total_ss),
            },
            r_squared: finite(r.r_squared),
        },
        checks: checks_record(&r.checks),
        groups,
        cells: r
            .cells
            .iter()
            .map(|c| CellRecord {
                levels: Letters(
                    r.cell_factors
                        .iter()
                        .zip(&c.levels)
                        .map(|(&f, &l)| (r.factors[f].clone(), r.levels[f][l].clone()))
                        .collect(),
                ),
                n: c.n,
                mean: if c.n > 0 { finite(c.mean) } else { None },
            })
            .collect(),
        comparisons,
        figures: Vec::new(),
        warnings: r.warnings.clone(),
        acknowledged: r.acknowledged.clone(),
    }
}

/// A figure: its id, kind as written in `plot`, the file beside the report
/// (Markdown output; null when the SVG is inlined in HTML), and the SHA-256
/// of its SVG.
#[derive(Serialize)]
pub struct FigureRecord {
    pub id: String,
    pub kind: &'static str,
    pub file: Option<String>,
    pub sha256: String,
}

/// A `power` block: its inputs and its answer.
#[derive(Serialize)]
pub struct PowerRecord {
    pub id: String,
    pub kind: &'static str,
    pub line: usize,
    pub groups: usize,
    pub effect: PowerEffectRecord,
    pub alpha: f64,
    /// The power asked for when solving for n; null when n was given.
    pub target_power: Option<f64>,
    pub n_per_group: Option<usize>,
    pub power: Option<f64>,
    pub curve: Vec<PowerPointRecord>,
    pub figures: Vec<FigureRecord>,
    pub warnings: Vec<String>,
}

#[derive(Serialize)]
pub struct PowerEffectRecord {
    pub cohens_f: f64,
    pub means: Option<Vec<f64>>,
    pub sd: Option<f64>,
}

#[derive(Serialize)]
pub struct PowerPointRecord {
    pub n_per_group: usize,
    pub power: Option<f64>,
}

/// The record of one `power` block.
pub fn power_record(r: &PowerResult) -> PowerRecord {
    let (means, sd) = match &r.effect {
        EffectInput::Means { means, sd, .. } => (Some(means.clone()), Some(*sd)),
        EffectInput::CohensF(_) => (None, None),
    };
    PowerRecord {
        id: r.id.clone(),
        kind: "power",
        line: r.line,
        groups: r.groups,
        effect: PowerEffectRecord {
            cohens_f: r.cohens_f,
            means,
            sd,
        },
        alpha: r.alpha,
        target_power: r.target,
        n_per_group: r.n_per_group,
        power: finite(r.power),
        curve: r
            .curve
            .iter()
            .map(|(n, p)| PowerPointRecord {
                n_per_group: *n,
                power: finite(*p),
            })
            .collect(),
        figures: Vec::new(),
        warnings: r.warnings.clone(),
    }
}

#[derive(Serialize)]
pub struct InputRecord {
    pub path: String,
    pub sha256: String,
    pub bytes: usize,
}

#[derive(Serialize)]
pub struct BlockRecord {
    #[serde(flatten)]
    pub head: BlockHead,
    pub anova: AnovaRecord,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub welch: Option<WelchRecord>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub kruskal: Option<KruskalRecord>,
    pub checks: ChecksRecord,
    pub groups: Vec<GroupRecord>,
    pub comparisons: Vec<ComparisonRecord>,
    pub figures: Vec<FigureRecord>,
    pub warnings: Vec<String>,
    /// Notes the author acknowledged (`acknowledge`, planned exclusions).
    pub acknowledged: Vec<String>,
}

/// The fields every `anova` record opens with, one-factor or factorial.
#[derive(Serialize)]
pub struct BlockHead {
    pub id: String,
    pub kind: &'static str,
    pub line: usize,
    pub data: String,
    pub response: String,
    pub factors: Vec<String>,
    pub n: usize,
    pub n_excluded: usize,
    pub excluded: Vec<ExcludedRecord>,
    pub alpha: f64,
    /// The omnibus test the block declared: "anova", "welch" or "ranks".
    pub method: &'static str,
}

impl BlockHead {
    #[allow(clippy::too_many_arguments)]
    fn new(
        id: &str,
        line: usize,
        data: &str,
        response: &str,
        factors: Vec<String>,
        n: usize,
        exclusions: &[crate::data::Exclusion],
        alpha: f64,
        method: &'static str,
    ) -> Self {
        BlockHead {
            id: id.to_string(),
            kind: "anova",
            line,
            data: data.to_string(),
            response: response.to_string(),
            factors,
            n,
            n_excluded: exclusions.len(),
            excluded: exclusions
                .iter()
                .map(|e| ExcludedRecord {
                    line: e.line,
                    reason: e.reason.clone(),
                })
                .collect(),
            alpha,
            method,
        }
    }
}

#[derive(Serialize)]
pub struct ExcludedRecord {
    pub line: usize,
    pub reason: String,
}

#[derive(Serialize)]
pub struct AnovaRecord {
    pub terms: Vec<TermRecord>,
    pub residual: ResidualRecord,
    pub total: TotalRecord,
    pub r_squared: Option<f64>,
}

#[derive(Serialize)]
pub struct TermRecord {
    pub term: String,
    pub df: usize,
    pub ss: Option<f64>,
    pub ms: Option<f64>,
    pub f: Option<f64>,
    pub p: Option<f64>,
    /// The F a test of this term must exceed at α (schema 1 called it `f_crit`).
    pub critical_f: Option<f64>,
    /// Why F, p and the effect size are null: set for blocking factors.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub not_tested: Option<&'static str>,
    pub effect: Option<EffectRecord>,
}

#[derive(Serialize)]
pub struct EffectRecord {
    pub eta_sq: Option<f64>,
    pub partial_eta_sq: Option<f64>,
    pub omega_sq: Option<f64>,
    pub cohens_f: Option<f64>,
    /// [lower, upper] at `ci_level`, from the noncentral F.
    pub partial_eta_sq_ci: [Option<f64>; 2],
    pub ci_level: f64,
}

#[derive(Serialize)]
pub struct WelchRecord {
    pub f: Option<f64>,
    pub df1: f64,
    pub df2: Option<f64>,
    pub p: Option<f64>,
}

#[derive(Serialize)]
pub struct KruskalRecord {
    pub h: Option<f64>,
    pub df: f64,
    pub p: Option<f64>,
}

#[derive(Serialize)]
pub struct FTestRecord {
    pub statistic: Option<f64>,
    pub df1: f64,
    pub df2: f64,
    pub p: Option<f64>,
}

#[derive(Serialize)]
pub struct ChiSquareRecord {
    pub statistic: Option<f64>,
    pub df: f64,
    pub p: Option<f64>,
}

#[derive(Serialize)]
pub struct ShapiroRecord {
    pub w: Option<f64>,
    pub p: Option<f64>,
    pub n: usize,
}

#[derive(Serialize)]
pub struct OutlierRecord {
    pub line: usize,
    pub level: String,
    pub value: Option<f64>,
    pub studentized_residual: Option<f64>,
}

/// Assumption checks; a test that could not be computed is `null`.
#[derive(Serialize)]
pub struct ChecksRecord {
    pub brown_forsythe: Option<FTestRecord>,
    pub levene: Option<FTestRecord>,
    pub bartlett: Option<ChiSquareRecord>,
    pub shapiro_wilk: Option<ShapiroRecord>,
    pub skewness: Option<f64>,
    pub excess_kurtosis: Option<f64>,
    /// |externally studentized residual| above which observations are listed.
    pub outlier_threshold: f64,
    /// How many observations are beyond the threshold in all.
    pub outlier_count: usize,
    /// The most extreme of them (at most 100), in data order.
    pub outliers: Vec<OutlierRecord>,
}

#[derive(Serialize)]
pub struct ResidualRecord {
    pub df: usize,
    pub ss: Option<f64>,
    pub ms: Option<f64>,
}

#[derive(Serialize)]
pub struct TotalRecord {
    pub df: usize,
    pub ss: Option<f64>,
}

#[derive(Serialize)]
pub struct GroupRecord {
    pub level: String,
    pub n: usize,
    pub mean: Option<f64>,
    pub sd: Option<f64>,
    pub se: Option<f64>,
    pub ci_lower: Option<f64>,
    pub ci_upper: Option<f64>,
    /// Which error term the SE and interval use: "pooled" (the ANOVA's MSE)
    /// or "level" (the level's own SD, under Welch).
    pub ci_error: &'static str,
    pub median: Option<f64>,
    pub q1: Option<f64>,
    pub q3: Option<f64>,
}

#[derive(Serialize)]
pub struct ComparisonRecord {
    pub term: String,
    pub within: Option<String>,
    pub method: &'static str,
    pub alpha: f64,
    pub critical_value: Option<f64>,
    /// Dunnett only: the control level and "two-sided", "greater" or "less".
    #[serde(skip_serializing_if = "Option::is_none")]
    pub control: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub sides: Option<&'static str>,
    /// Factorial designs: the estimated marginal (or cell) means compared.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub means: Option<Vec<MeanRecord>>,
    pub pairs: Vec<PairRecord>,
    pub letters: Letters,
}

#[derive(Serialize)]
pub struct PairRecord {
    pub a: String,
    pub b: String,
    pub diff: Option<f64>,
    pub se: Option<f64>,
    pub lower: Option<f64>,
    pub upper: Option<f64>,
    pub p_adj: Option<f64>,
    pub significant: bool,
    /// Games-Howell: the pair's own Welch-Satterthwaite df.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub df: Option<f64>,
}

/// Level → letters, written in design order (not sorted by key).
pub struct Letters(pub Vec<(String, String)>);

impl Serialize for Letters {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        let mut map = serializer.serialize_map(Some(self.0.len()))?;
        for (k, v) in &self.0 {
            map.serialize_entry(k, v)?;
        }
        map.end()
    }
}

/// The record of one `anova` block.
pub fn block_record(r: &AnovaResult) -> BlockRecord {
    let t = &r.table;
    let comparisons = r
        .comparison
        .iter()
        .map(|c| ComparisonRecord {
            term: r.factor.clone(),
            within: None,
            method: c.method.key(),
            alpha: c.alpha,
            critical_value: finite(c.critical),
            control: c.control.map(|i| r.levels[i].name.clone()),
            means: None,
            sides: (c.method == crate::stats::compare::Method::Dunnett).then_some(match c.sides {
                crate::stats::dunnett::Sides::Two => "two-sided",
                crate::stats::dunnett::Sides::Greater => "greater",
                crate::stats::dunnett::Sides::Less => "less",
            }),
            pairs: c
                .pairs
                .iter()
                .map(|p| PairRecord {
                    a: r.levels[p.a].name.clone(),
                    b: r.levels[p.b].name.clone(),
                    diff: finite(p.diff),
                    se: finite(p.se),
                    lower: finite(p.lower),
                    upper: finite(p.upper),
                    p_adj: finite(p.p_adj),
                    significant: p.significant,
                    df: p.df.and_then(finite),
                })
                .collect(),
            letters: Letters(
                r.levels
                    .iter()
                    .zip(&c.letters)
                    .map(|(l, s)| (l.name.clone(), s.clone()))
                    .collect(),
            ),
        })
        .collect();
    BlockRecord {
        head: BlockHead::new(
            &r.id,
            r.line,
            &r.data,
            &r.response,
            vec![r.factor.clone()],
            r.n,
            &r.exclusions,
            r.alpha,
            r.method.key(),
        ),
        welch: r.welch.map(|w| WelchRecord {
            f: finite(w.f),
            df1: w.df1,
            df2: finite(w.df2),
            p: finite(w.p),
        }),
        kruskal: r.kruskal.as_ref().map(|k| KruskalRecord {
            h: finite(k.h),
            df: k.df,
            p: finite(k.p),
        }),
        checks: checks_record(&r.checks),
        anova: AnovaRecord {
            terms: vec![TermRecord {
                term: r.factor.clone(),
                df: t.df_between,
                ss: finite(t.ss_between),
                ms: finite(t.ms_between),
                f: finite(t.f),
                p: finite(t.p),
                critical_f: finite(t.f_crit),
                not_tested: None,
                effect: r.effect.map(|e| EffectRecord {
                    eta_sq: finite(e.eta_sq),
                    partial_eta_sq: finite(e.partial_eta_sq),
                    omega_sq: finite(e.omega_sq),
                    cohens_f: finite(e.cohens_f),
                    partial_eta_sq_ci: [
                        finite(e.partial_eta_sq_ci.0),
                        finite(e.partial_eta_sq_ci.1),
                    ],
                    ci_level: e.level,
                }),
            }],
            residual: ResidualRecord {
                df: t.df_within,
                ss: finite(t.ss_within),
                ms: finite(t.ms_within),
            },
            total: TotalRecord {
                df: t.n - 1,
                ss: finite(t.ss_total),
            },
            r_squared: finite(t.r_squared),
        },
        groups: r
            .levels
            .iter()
            .map(|l| GroupRecord {
                level: l.name.clone(),
                n: l.n,
                mean: finite(l.mean),
                sd: finite(l.sd),
                se: finite(l.se),
                ci_lower: finite(l.ci_lower),
                ci_upper: finite(l.ci_upper),
                ci_error: if r.ci_pooled { "pooled" } else { "level" },
                median: finite(l.median),
                q1: finite(l.q1),
                q3: finite(l.q3),
            })
            .collect(),
        comparisons,
        figures: Vec::new(),
        warnings: r.warnings.clone(),
        acknowledged: r.acknowledged.clone(),
    }
}

fn checks_record(c: &crate::outcome::Checks) -> ChecksRecord {
    let f = |t: &crate::stats::assumptions::FTest| FTestRecord {
        statistic: finite(t.statistic),
        df1: t.df1,
        df2: t.df2,
        p: finite(t.p),
    };
    ChecksRecord {
        brown_forsythe: c.brown_forsythe.as_ref().map(f),
        levene: c.levene.as_ref().map(f),
        bartlett: c.bartlett.map(|b| ChiSquareRecord {
            statistic: finite(b.statistic),
            df: b.df,
            p: finite(b.p),
        }),
        shapiro_wilk: c.shapiro_wilk.ok().map(|s| ShapiroRecord {
            w: finite(s.w),
            p: finite(s.p),
            n: s.n,
        }),
        skewness: finite(c.skewness),
        excess_kurtosis: finite(c.excess_kurtosis),
        outlier_threshold: crate::stats::assumptions::OUTLIER_THRESHOLD,
        outlier_count: c.outlier_count,
        outliers: c
            .outliers
            .iter()
            .map(|o| OutlierRecord {
                line: o.line,
                level: o.level.clone(),
                value: finite(o.value),
                studentized_residual: finite(o.studentized_residual),
            })
            .collect(),
    }
}

/// The whole results file, pretty-printed with a trailing newline.
pub fn results_json(
    document: &str,
    document_bytes: &[u8],
    format: &str,
    inputs: &[Input],
    blocks: &[BlockResult],
    figures: &[Vec<crate::figure::PlacedFigure>],
) -> Vec<u8> {
    let figure_records = |i: usize| -> Vec<FigureRecord> {
        figures.get(i).map_or_else(Vec::new, |figs| {
            figs.iter()
                .map(|p| FigureRecord {
                    id: p.figure.id.clone(),
                    kind: p.figure.kind,
                    file: p.file.clone(),
                    sha256: sha256_hex(p.figure.svg.as_bytes()),
                })
                .collect()
        })
    };
    let file = ResultsFile {
        sheaf: crate::VERSION.to_string(),
        schema: SCHEMA_VERSION,
        document: document.to_string(),
        document_sha256: sha256_hex(document_bytes),
        format: format.to_string(),
        inputs: inputs
            .iter()
            .map(|i| InputRecord {
                path: i.path.clone(),
                sha256: i.sha256.clone(),
                bytes: i.size as usize,
            })
            .collect(),
        blocks: blocks
            .iter()
            .enumerate()
            .map(|(i, b)| match b {
                BlockResult::Anova(r) => {
                    let mut rec = block_record(r);
                    rec.figures = figure_records(i);
                    BlockEntry::Anova(Box::new(rec))
                }
                BlockResult::Factorial(r) => {
                    let mut rec = factorial_record(r);
                    rec.figures = figure_records(i);
                    BlockEntry::Factorial(Box::new(rec))
                }
                BlockResult::Power(r) => {
                    let mut rec = power_record(r);
                    rec.figures = figure_records(i);
                    BlockEntry::Power(Box::new(rec))
                }
            })
            .collect(),
    };
    // Serializing plain structs of strings and numbers cannot fail.
    let mut out = serde_json::to_vec_pretty(&file).unwrap_or_default();
    out.push(b'\n');
    out
}

#[cfg(test)]
#[path = "results_tests.rs"]
mod tests;
