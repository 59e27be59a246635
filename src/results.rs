//! The results file `<stem>.results.json`: a documented contract that other
//! tools and checks read. Field names here are stable: new fields may be
//! added, and a renamed field raises `SCHEMA_VERSION` (README lists the changes).
//!
//! Numbers are written in shortest round-trip form (serde_json uses `ryu`).
//! A value that is not finite is written as `null`, and the block's
//! `warnings` say why.

mod contrasts;
mod covariates;
mod dose;
mod equivalence;
mod friedman;
mod mixed;
mod repeated;
mod traits;
mod transform;
mod trend;

use crate::doc::power::EffectInput;
use crate::outcome::linear::{Comparison, Estimate, Family, InputForm, LinearOutcome};
use crate::outcome::{BlockResult, PowerResult};
use crate::provenance::{Input, sha256_hex};
use crate::stats::compare::Method;
use crate::stats::dunnett::Sides;
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
    Power(Box<PowerRecord>),
    Traits(Box<traits::TraitsRecord>),
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
    /// Models with random terms: the mean's own df.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub df: Option<f64>,
    pub ci_lower: Option<f64>,
    pub ci_upper: Option<f64>,
    /// With `transform`: the arithmetic mean on the data's scale, and the
    /// mean and limits back-transformed.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub arithmetic_mean: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub back: Option<transform::BackRecord>,
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

/// An `anova` block, one-factor or factorial: the fields that have no
/// meaning for the design are left out (`ss_type` and `cells` for one
/// factor; `welch` and `kruskal` unless computed).
#[derive(Serialize)]
pub struct BlockRecord {
    #[serde(flatten)]
    pub head: BlockHead,
    /// Factorial designs: 1, 2 or 3.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub ss_type: Option<u8>,
    pub anova: AnovaRecord,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub welch: Option<WelchRecord>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub kruskal: Option<KruskalRecord>,
    pub checks: ChecksRecord,
    /// One factor: its levels. Factorial designs: the estimated marginal
    /// means of the first comparison family.
    pub groups: Vec<GroupRecord>,
    /// Factorial designs: the cells of the treatment factors.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub cells: Option<Vec<CellRecord>>,
    pub comparisons: Vec<ComparisonRecord>,
    pub figures: Vec<FigureRecord>,
    pub warnings: Vec<String>,
    /// Notes the author acknowledged (`acknowledge`, planned exclusions).
    pub acknowledged: Vec<String>,
    /// Models with random terms: how the model was fitted.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub fit: Option<mixed::FitRecord>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub variance_components: Option<Vec<mixed::ComponentRecord>>,
    /// Balanced designs with random terms: the classical strata.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub strata: Option<Vec<mixed::StratumRecord>>,
    /// Models with random terms: SED, df and LSD per kind of comparison.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub seds: Option<Vec<mixed::SedRecord>>,
    /// Repeated-measures blocks (`subject`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub repeated: Option<repeated::RepeatedRecord>,
    /// Blocks with covariates (`covariate`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub covariates: Option<covariates::CovariatesRecord>,
    /// Blocks with planned contrasts (`contrast`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub planned_contrasts: Option<contrasts::ContrastsRecord>,
    /// Blocks with `trend`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub trend: Option<trend::TrendRecord>,
    /// Blocks with `transform`.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub transform: Option<transform::TransformRecord>,
    /// Blocks with `noec`: the dose-response tests.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub dose_response: Option<dose::DoseRecord>,
    /// Friedman's test (`method: ranks` with `block:`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub friedman: Option<friedman::FriedmanRecord>,
    /// Blocks with `margin`: the equivalence tests.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub equivalence: Option<equivalence::EquivalenceRecord>,
}

/// The fields every `anova` record opens with, one-factor or factorial.
#[derive(Serialize)]
pub struct BlockHead {
    pub id: String,
    pub kind: &'static str,
    pub line: usize,
    pub data: String,
    /// The SQL file that computed the summary file (blocks with `query`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub query: Option<String>,
    pub response: String,
    pub factors: Vec<String>,
    pub n: usize,
    pub n_excluded: usize,
    pub excluded: Vec<ExcludedRecord>,
    pub alpha: f64,
    /// The omnibus test the block declared: "anova", "welch" or "ranks".
    pub method: &'static str,
    /// What the data file held: "observations", "summaries" (n, mean, SD
    /// or SE per level or cell) or "exact sums".
    pub input: &'static str,
    /// With exact sums: the origin they were taken from, as an exact decimal.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub origin: Option<String>,
}

impl BlockHead {
    fn new(o: &LinearOutcome) -> Self {
        BlockHead {
            id: o.id.clone(),
            kind: "anova",
            line: o.line,
            data: o.data.clone(),
            query: o.query.clone(),
            response: o.response.clone(),
            factors: o.factors.iter().map(|f| f.name.clone()).collect(),
            n: o.n,
            n_excluded: o.exclusions.len(),
            excluded: o
                .exclusions
                .iter()
                .map(|e| ExcludedRecord {
                    line: e.line,
                    reason: e.reason.clone(),
                })
                .collect(),
            alpha: o.alpha,
            method: o.method.key(),
            input: match o.input {
                InputForm::Observations => "observations",
                InputForm::Summaries => "summaries",
                InputForm::ExactSums { .. } => "exact sums",
            },
            origin: match &o.input {
                InputForm::ExactSums { origin } => Some(origin.clone()),
                _ => None,
            },
        }
    }
}

#[derive(Serialize)]
pub struct ExcludedRecord {
    pub line: usize,
    pub reason: String,
}

/// The error a term is tested against: its stratum's name, or "combined".
fn error_name(o: &LinearOutcome, t: &crate::outcome::linear::TermTest) -> String {
    t.stratum
        .and_then(|s| o.strata.get(s))
        .map_or_else(|| "combined".to_string(), |s| s.name.clone())
}

#[derive(Serialize)]
pub struct AnovaRecord {
    pub terms: Vec<TermRecord>,
    pub residual: ResidualRecord,
    pub total: TotalRecord,
    pub r_squared: Option<f64>,
    /// The residual SD as a percentage of the grand mean (models without
    /// random terms).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub cv_percent: Option<f64>,
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
    /// Models with random terms: the test's denominator df (fractional
    /// when it is) and the error it is tested against (a stratum's name,
    /// or "combined").
    #[serde(skip_serializing_if = "Option::is_none")]
    pub df_den: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub error: Option<String>,
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
    /// "conditional" in blocks with random terms: the residuals are the
    /// observations less the fixed effects and the predicted unit effects,
    /// and `studentized_residual` is the studentized conditional residual;
    /// "normalised" with a covariance structure over a repeated factor:
    /// each subject's residuals transformed by the inverse Cholesky factor
    /// of its fitted covariance, and `studentized_residual` is that value.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub residuals: Option<&'static str>,
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
    /// With `transform`: as for a comparison's means.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub arithmetic_mean: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub back: Option<transform::BackRecord>,
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
    /// The standard error of a difference, `[smallest, largest]` (equal
    /// under equal replication), and the least significant difference at
    /// the family's α; absent where each pair has its own df.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub sed: Option<[f64; 2]>,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub lsd: Option<[f64; 2]>,
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
    /// With `transform: log` or `logit`: the difference as a ratio (of
    /// geometric means, or of odds) with its interval.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub ratio: Option<transform::RatioRecord>,
}

/// Level → letters (or a cell's factor → level), in design order.
pub type Letters = OrderedMap<String>;

/// Name → value, written in the order given (not sorted by key).
pub struct OrderedMap<V>(pub Vec<(String, V)>);

impl<V: Serialize> Serialize for OrderedMap<V> {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        let mut map = serializer.serialize_map(Some(self.0.len()))?;
        for (k, v) in &self.0 {
            map.serialize_entry(k, v)?;
        }
        map.end()
    }
}

/// The record of one `anova` block, one-factor or factorial.
pub fn block_record(o: &LinearOutcome) -> BlockRecord {
    let welch = &o.alternatives.welch;
    let kruskal = &o.alternatives.kruskal;
    let mixed = o.mixed.as_ref().map(|m| mixed::mixed_records(o, m));
    let (fit, variance_components, strata, seds) = match mixed {
        Some(m) => (
            Some(m.fit),
            Some(m.variance_components),
            m.strata,
            Some(m.seds),
        ),
        None => (None, None, None, None),
    };
    BlockRecord {
        head: BlockHead::new(o),
        ss_type: o.ss_type_number(),
        anova: anova_record(o),
        welch: welch.map(|w| WelchRecord {
            f: finite(w.f),
            df1: w.df1,
            df2: finite(w.df2),
            p: finite(w.p),
        }),
        kruskal: kruskal.as_ref().map(|k| KruskalRecord {
            h: finite(k.h),
            df: k.df,
            p: finite(k.p),
        }),
        checks: checks_record(&o.checks),
        groups: groups_record(o),
        cells: (!o.is_one_factor()).then(|| cells_record(o)),
        comparisons: o
            .families
            .iter()
            .filter_map(|fam| {
                let c = fam.comparison.as_ref()?;
                Some(comparison_record(o, fam, c))
            })
            .collect(),
        figures: Vec::new(),
        warnings: o.warnings.clone(),
        acknowledged: o.acknowledged.clone(),
        fit,
        variance_components,
        strata,
        seds,
        repeated: o.repeated.as_deref().map(repeated::repeated_record),
        covariates: o
            .covariates
            .as_deref()
            .map(|d| covariates::covariates_record(o, d)),
        planned_contrasts: o.contrasts.as_deref().map(contrasts::contrasts_record),
        trend: o.trend.as_deref().map(trend::trend_record),
        transform: o
            .transform
            .as_deref()
            .map(|d| transform::transform_record(d, &o.response)),
        dose_response: o.dose.as_deref().map(dose::dose_record),
        friedman: o.friedman.as_deref().map(|d| {
            let term = &o.factors[d.factor].name;
            let compared = o.main_family(term).and_then(|f| f.comparison.as_ref());
            friedman::friedman_record(o, d, compared)
        }),
        equivalence: o
            .equivalence
            .as_deref()
            .map(|d| equivalence::equivalence_record(o, d)),
    }
}

/// The ANOVA table: every term, the residual and the total.
fn anova_record(o: &LinearOutcome) -> AnovaRecord {
    let residual = o.residual();
    AnovaRecord {
        terms: o
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
                not_tested: (!t.tested).then_some(BLOCK_REASON),
                effect: t.effect.map(|e| EffectRecord {
                    eta_sq: e.eta_sq.and_then(finite),
                    partial_eta_sq: finite(e.partial_eta_sq),
                    omega_sq: finite(e.omega_sq),
                    cohens_f: finite(e.cohens_f),
                    partial_eta_sq_ci: [
                        finite(e.partial_eta_sq_ci.0),
                        finite(e.partial_eta_sq_ci.1),
                    ],
                    ci_level: e.ci_level,
                }),
                df_den: o.mixed.is_some().then_some(t.denominator_df),
                error: o.mixed.is_some().then(|| error_name(o, t)),
            })
            .collect(),
        // Fixed-effects strata have whole degrees of freedom.
        residual: ResidualRecord {
            df: residual.df as usize,
            ss: finite(residual.ss),
            ms: finite(residual.ms),
        },
        total: TotalRecord {
            df: o.total_df,
            ss: finite(o.total_ss),
        },
        r_squared: finite(o.r_squared),
        cv_percent: o.cv_percent().and_then(finite),
    }
}

/// One factor: its levels with their spread. Several factors: the
/// estimated marginal means of the first family (no SD or quartiles).
fn groups_record(o: &LinearOutcome) -> Vec<GroupRecord> {
    let group =
        |m: &Estimate, ci_error: &'static str, family: Option<(&Family, usize)>| GroupRecord {
            arithmetic_mean: family.and_then(|(f, i)| transform::arithmetic_record(o, f, i)),
            back: transform::back_record(o, m),
            level: m.label.clone(),
            n: m.n,
            mean: finite(m.mean),
            sd: None,
            se: finite(m.se),
            ci_lower: finite(m.ci_lower),
            ci_upper: finite(m.ci_upper),
            ci_error,
            median: None,
            q1: None,
            q3: None,
        };
    if !o.is_one_factor() {
        // The first compared family's means (empty when nothing is compared).
        let Some(family) = o.families.iter().find(|f| f.comparison.is_some()) else {
            return Vec::new();
        };
        return (family.estimates.iter().enumerate())
            .map(|(i, m)| group(m, "pooled", Some((family, i))))
            .collect();
    }
    let ci_error = if o.ci_pooled { "pooled" } else { "level" };
    let family = o.families.first();
    o.levels
        .iter()
        .enumerate()
        .map(|(i, l)| GroupRecord {
            sd: finite(l.sd),
            median: finite(l.median),
            q1: finite(l.q1),
            q3: finite(l.q3),
            ..group(&l.estimate(), ci_error, family.map(|f| (f, i)))
        })
        .collect()
}

/// The cells of the treatment factors, each named by its levels.
fn cells_record(o: &LinearOutcome) -> Vec<CellRecord> {
    o.cells
        .iter()
        .map(|c| CellRecord {
            levels: OrderedMap(
                o.cell_factors
                    .iter()
                    .zip(&c.levels)
                    .map(|(&f, &l)| {
                        let factor = &o.factors[f];
                        (factor.name.clone(), factor.levels[l].clone())
                    })
                    .collect(),
            ),
            n: c.n,
            mean: if c.n > 0 { finite(c.mean) } else { None },
        })
        .collect()
}

/// One comparison family. Factorial families list the means they compare
/// (one factor's are its `groups`); Dunnett names its control and sides.
fn comparison_record(o: &LinearOutcome, fam: &Family, c: &Comparison) -> ComparisonRecord {
    let label = |i: usize| fam.estimates[i].label.clone();
    let means = fam
        .estimates
        .iter()
        .enumerate()
        .map(|(i, m)| MeanRecord {
            arithmetic_mean: transform::arithmetic_record(o, fam, i),
            back: transform::back_record(o, m),
            level: m.label.clone(),
            n: m.n,
            mean: finite(m.mean),
            se: finite(m.se),
            df: m.df.and_then(finite),
            ci_lower: finite(m.ci_lower),
            ci_upper: finite(m.ci_upper),
        })
        .collect();
    ComparisonRecord {
        term: fam.term.clone(),
        within: fam.within.clone(),
        method: c.method.key(),
        alpha: c.alpha,
        critical_value: finite(c.critical),
        control: c.control.map(label),
        sides: (c.method == Method::Dunnett).then_some(match c.sides {
            Sides::Two => "two-sided",
            Sides::Greater => "greater",
            Sides::Less => "less",
        }),
        means: (!o.is_one_factor()).then_some(means),
        pairs: c
            .contrasts
            .iter()
            .map(|p| PairRecord {
                a: label(p.a),
                b: label(p.b),
                diff: finite(p.estimate),
                se: finite(p.se),
                lower: finite(p.lower),
                upper: finite(p.upper),
                p_adj: finite(p.p_adj),
                significant: p.significant,
                df: if p.own_df { finite(p.df) } else { None },
                ratio: transform::ratio_record(o, p),
            })
            .collect(),
        letters: OrderedMap(
            fam.estimates
                .iter()
                .zip(&c.letters)
                .map(|(m, l)| (m.label.clone(), l.clone()))
                .collect(),
        ),
        sed: crate::outcome::precision::sed(c)
            .filter(|_| o.mixed.is_none())
            .map(|s| [s.min, s.max]),
        lsd: crate::outcome::precision::sed(c)
            .filter(|_| o.mixed.is_none())
            .map(|s| [s.lsd_min, s.lsd_max]),
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
        residuals: c.residuals.key(),
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
    let linear = |o: &LinearOutcome, i: usize| {
        let mut rec = block_record(o);
        rec.figures = figure_records(i);
        BlockEntry::Anova(Box::new(rec))
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
                BlockResult::Linear(r) => linear(r, i),
                BlockResult::Power(r) => {
                    let mut rec = power_record(r);
                    rec.figures = figure_records(i);
                    BlockEntry::Power(Box::new(rec))
                }
                BlockResult::Traits(t) => {
                    // Each trait's figures carry its outcome's id first.
                    let all = figure_records(i);
                    let of_trait = |id: &str| -> Vec<FigureRecord> {
                        let prefix = format!("{id}-");
                        all.iter()
                            .filter(|f| f.id.starts_with(&prefix))
                            .map(|f| FigureRecord {
                                id: f.id.clone(),
                                kind: f.kind,
                                file: f.file.clone(),
                                sha256: f.sha256.clone(),
                            })
                            .collect()
                    };
                    BlockEntry::Traits(Box::new(traits::traits_record(t, of_trait)))
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
