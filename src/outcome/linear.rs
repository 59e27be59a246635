//! The outcome of every linear analysis, whatever the engine (one factor,
//! factorial, blocked, Latin square; later mixed models and covariates):
//! factors with their roles, error strata, each term's test against its own
//! stratum with a real-valued denominator df, level and cell statistics,
//! families of estimates and contrasts, checks and notes. Projections
//! (tables, prose, the results file, figures) read only this.

use super::Checks;
use crate::data::Exclusion;
use crate::doc::block::{Omnibus, Order, PlotSpec, Show};
use crate::stats::compare::Method;
use crate::stats::dunnett::Sides;
use crate::stats::linear::SsType;
use crate::stats::ranks::KruskalWallis;
use crate::stats::welch::WelchAnova;

/// What a factor is in the design.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum Role {
    /// A factor whose levels were assigned and are compared.
    Treatment,
    /// A blocking factor: it removes variation but is not tested.
    Block,
}

/// The residual stratum's name, as the ANOVA table prints it.
pub const RESIDUAL: &str = "Residual";

/// Term label for people: `wool × tension`.
pub fn term_label(name: &str) -> String {
    name.replace(':', " × ")
}

/// A categorical factor of the model.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Factor {
    /// The column name.
    pub name: String,
    pub role: Role,
    /// Levels in design order.
    pub levels: Vec<String>,
}

/// An error stratum: the variation of one size of experimental unit that
/// the terms applied to that unit are tested against. Fixed-effects models
/// have one, the residual.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Stratum {
    /// `Residual`, or the unit's name (`block:variety`).
    pub name: String,
    pub df: f64,
    pub ss: f64,
    pub ms: f64,
}

/// Effect sizes of one term.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct TermEffect {
    /// η² of the term in the whole model; only where it differs in meaning
    /// from the partial one (one factor).
    pub eta_sq: Option<f64>,
    pub partial_eta_sq: f64,
    /// ω² (one factor) or partial ω² (several factors); may be negative.
    pub omega_sq: f64,
    pub cohens_f: f64,
    /// Interval for partial η² at `ci_level`.
    pub partial_eta_sq_ci: (f64, f64),
    pub ci_level: f64,
}

/// One row of the ANOVA table: a term and its test.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct TermTest {
    /// Factor names joined by `:` (`wool:tension`).
    pub name: String,
    /// Indices into `LinearOutcome::factors`.
    pub factors: Vec<usize>,
    pub df: usize,
    pub ss: f64,
    pub ms: f64,
    pub f: f64,
    pub p: f64,
    pub critical_f: f64,
    /// The stratum this term is tested against (index into `strata`);
    /// `None` when a mixed model's test combines several (unbalanced data).
    pub stratum: Option<usize>,
    /// Denominator df of the test; real-valued where an approximation
    /// (Satterthwaite, Kenward-Roger) gives it.
    pub denominator_df: f64,
    /// False for blocking factors: SS, df and MS are reported, the F, p,
    /// critical value and effect size are not (NaN / `None`).
    pub tested: bool,
    pub effect: Option<TermEffect>,
}

/// Statistics of one level of a one-factor design, from the raw data or a
/// summary table.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct LevelSummary {
    pub name: String,
    pub n: usize,
    pub mean: f64,
    /// Sample SD (n − 1 divisor); NaN for n = 1.
    pub sd: f64,
    pub se: f64,
    pub ci_lower: f64,
    pub ci_upper: f64,
    pub median: f64,
    pub q1: f64,
    pub q3: f64,
}

/// Observed data in one cell (one combination of the treatment factors' levels).
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct CellRow {
    pub levels: Vec<usize>,
    pub n: usize,
    pub mean: f64,
    pub sd: f64,
    /// The mean less the data's origin, as computed from the offsets: cell
    /// contrasts taken from `mean` would carry the rounding of the origin's
    /// magnitude (1e-8 near 1e8).
    #[serde(skip)]
    pub offset: f64,
}

/// An estimate: a level's mean, an estimated marginal mean or a cell mean.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Estimate {
    pub label: String,
    pub n: usize,
    pub mean: f64,
    pub se: f64,
    /// The estimate's own df (mixed models); `None` where it is its
    /// stratum's.
    pub df: Option<f64>,
    pub ci_lower: f64,
    pub ci_upper: f64,
}

/// A contrast between two estimates of a family (`b` minus `a` in the
/// order the procedure lists them), with its own SE and df.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Contrast {
    pub a: usize,
    pub b: usize,
    pub estimate: f64,
    pub se: f64,
    /// Degrees of freedom of this contrast: the stratum's for pooled
    /// procedures, the pair's own for Games-Howell.
    pub df: f64,
    /// Whether `df` is the pair's own (the procedure gives each pair its df).
    pub own_df: bool,
    pub lower: f64,
    pub upper: f64,
    /// t, q, F or z, as the procedure defines it.
    pub statistic: f64,
    pub p_raw: f64,
    pub p_adj: f64,
    pub significant: bool,
}

/// How a family's estimates were compared.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Comparison {
    pub method: Method,
    pub alpha: f64,
    pub contrasts: Vec<Contrast>,
    /// Letters per estimate, in estimate order; empty for many-to-one.
    pub letters: Vec<String>,
    /// The t, q, F or d critical value behind the intervals (NaN where each
    /// contrast has its own).
    pub critical: f64,
    /// The control estimate (many-to-one procedures).
    pub control: Option<usize>,
    pub sides: Sides,
    /// Fisher's protection withheld every declaration (F not significant).
    pub withheld: bool,
    /// Notes on the procedure (worded by the rendering layer).
    pub notes: Vec<super::procedure_note::ProcedureNote>,
}

/// A family of estimates: a term's marginal means, a slice of them (`within`),
/// or all cells; with their comparison when one was asked for.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Family {
    /// The factor's name, or `cells`.
    pub term: String,
    /// `Some("B=level")` for simple effects.
    pub within: Option<String>,
    pub estimates: Vec<Estimate>,
    pub comparison: Option<Comparison>,
}

/// The omnibus alternatives a one-factor block may report.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Alternatives {
    pub welch: Option<WelchAnova>,
    pub kruskal: Option<KruskalWallis>,
}

/// One observation as analysed, for figures.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Observation {
    /// Level index per factor, in `factors` order.
    pub levels: Vec<usize>,
    pub value: f64,
    pub fitted: f64,
    pub residual: f64,
    /// The data line it came from.
    pub line: usize,
}

/// Options that shape the presentation only; they travel beside the
/// numbers and never enter the computation.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Presentation {
    /// Decimals for means, SDs, SEs, intervals and differences.
    pub decimals: u32,
    pub caption: Option<String>,
    pub order: Order,
    pub show: Show,
    pub plots: PlotSpec,
}

/// A linear analysis: the hub every projection reads.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct LinearOutcome {
    pub id: String,
    pub line: usize,
    pub data: String,
    /// `query`: the SQL file that computed a summary file. (No
    /// `skip_serializing_if` in outcomes: the cache's encoding needs every field.)
    #[serde(default)]
    pub query: Option<String>,
    pub response: String,
    pub alpha: f64,
    /// Observations analysed.
    pub n: usize,
    pub exclusions: Vec<Exclusion>,
    /// The omnibus test the block declared.
    pub method: Omnibus,
    /// The sums of squares of a factorial fit (`None` for one factor).
    pub ss_type: Option<SsType>,
    /// False when the three SS types give different tables.
    pub types_agree: bool,
    pub factors: Vec<Factor>,
    pub strata: Vec<Stratum>,
    pub terms: Vec<TermTest>,
    pub total_df: usize,
    pub total_ss: f64,
    pub r_squared: f64,
    /// Level statistics of a one-factor design (empty for several factors).
    pub levels: Vec<LevelSummary>,
    /// True when SEs and intervals use the pooled error; false for each
    /// level's own SD (Welch).
    pub ci_pooled: bool,
    /// Cells of the treatment factors (empty for one factor).
    pub cells: Vec<CellRow>,
    /// The factors a cell's `levels` refer to: every factor but the blocks.
    pub cell_factors: Vec<usize>,
    pub families: Vec<Family>,
    pub alternatives: Alternatives,
    pub checks: Checks,
    pub warnings: Vec<String>,
    /// Notes the author acknowledged, listed in the provenance section.
    pub acknowledged: Vec<String>,
    pub presentation: Presentation,
    /// Every observation, for figures; empty for summary input and when no
    /// figure needs them.
    pub observations: Vec<Observation>,
    /// Descriptive summaries of `observations`, for figures (empty with them).
    pub observed: Observed,
    /// Models with random terms: the fit, variance components, SEDs.
    pub mixed: Option<Box<super::mixed::MixedDetail>>,
    /// Repeated-measures blocks (`subject`): the factors' classification
    /// and the univariate tests with sphericity corrections.
    #[serde(default)]
    pub repeated: Option<Box<super::repeated::RepeatedDetail>>,
    /// Blocks with covariates: slopes, the value means are adjusted to,
    /// the balance check and the test of equal slopes.
    #[serde(default)]
    pub covariates: Option<Box<super::covariates::CovariateDetail>>,
    /// Planned contrasts (`contrast`).
    #[serde(default)]
    pub contrasts: Option<Box<super::contrasts::ContrastDetail>>,
    /// A polynomial trend over a quantitative factor (`trend`).
    #[serde(default)]
    pub trend: Option<Box<super::trend::TrendDetail>>,
    /// A transformed response (`transform`), or the Box-Cox profile.
    #[serde(default)]
    pub transform: Option<Box<super::transform::TransformDetail>>,
    /// Dose-response tests for the NOEC and LOEC (`noec`).
    #[serde(default)]
    pub dose: Option<Box<super::dose::DoseDetail>>,
    /// Friedman's test (`method: ranks` with a `block:` factor).
    #[serde(default)]
    pub friedman: Option<Box<super::friedman::FriedmanDetail>>,
    /// Equivalence of each level with the control (`margin`).
    #[serde(default)]
    pub equivalence: Option<Box<super::equivalence::EquivalenceDetail>>,
    /// Whether the data were observations or summaries.
    #[serde(default)]
    pub input: InputForm,
}

/// What the data file of a block held.
#[derive(Debug, Clone, PartialEq, Default, serde::Serialize, serde::Deserialize)]
pub enum InputForm {
    /// One row per observation.
    #[default]
    Observations,
    /// One row per level or cell: n, mean and SD (or SE).
    Summaries,
    /// One row per level or cell: n and the exact sums Σ(y − origin) and
    /// Σ(y − origin)², taken from this origin (an exact decimal).
    ExactSums { origin: String },
}

impl LinearOutcome {
    /// The residual stratum (every fixed-effects model's only one).
    pub fn residual(&self) -> &Stratum {
        // Engines always push the residual stratum last.
        &self.strata[self.strata.len() - 1]
    }

    /// The treatment factors, in model order.
    pub fn treatments(&self) -> impl Iterator<Item = (usize, &Factor)> {
        self.factors
            .iter()
            .enumerate()
            .filter(|(_, f)| f.role == Role::Treatment)
    }

    /// True for a one-factor design (no blocks, one treatment factor).
    pub fn is_one_factor(&self) -> bool {
        self.ss_type.is_none()
    }

    /// The family of a main effect (not a slice), if one exists.
    pub fn main_family(&self, term: &str) -> Option<&Family> {
        self.families
            .iter()
            .find(|f| f.term == term && f.within.is_none())
    }
}

impl LinearOutcome {
    /// The sums-of-squares type as the results file and prose number it
    /// (1, 2 or 3); `None` for one factor, where the types coincide.
    pub fn ss_type_number(&self) -> Option<u8> {
        self.ss_type.map(|t| match t {
            SsType::I => 1,
            SsType::II => 2,
            SsType::III => 3,
        })
    }
}

impl LevelSummary {
    /// The level as an estimate (its mean with its SE and interval).
    pub fn estimate(&self) -> Estimate {
        Estimate {
            label: self.name.clone(),
            n: self.n,
            mean: self.mean,
            se: self.se,
            ci_lower: self.ci_lower,
            ci_upper: self.ci_upper,
            df: None,
        }
    }
}

/// The observed distribution of one level of a factor: what box and strip
/// plots draw.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct LevelSpread {
    pub n: usize,
    /// The mean of the level's observations (not a model estimate).
    pub mean: f64,
    pub q1: f64,
    pub median: f64,
    pub q3: f64,
}

/// Observed means of the combined levels of two treatment factors, with
/// intervals from the residual stratum: what an interaction plot draws.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct TwoWayMeans {
    /// Indices into `LinearOutcome::factors`, the first one's levels major.
    pub factors: [usize; 2],
    /// One per level pair, at `a * levels(b) + b`; NaN where no data.
    pub estimates: Vec<Estimate>,
}

/// The residuals' normal Q-Q coordinates (Blom positions).
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct NormalQq {
    /// The finite residuals in ascending order.
    pub residuals: Vec<f64>,
    /// The standard normal quantile of each residual's plotting position.
    pub scores: Vec<f64>,
    /// The line through the quartiles: residual = intercept + slope × score;
    /// `None` with fewer than four residuals.
    pub line: Option<(f64, f64)>,
}

/// Descriptive summaries of the observations, for figures.
#[derive(Debug, Clone, Default, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Observed {
    /// Per factor (in `factors` order; empty for blocks), per level.
    pub spreads: Vec<Vec<LevelSpread>>,
    /// Every pair of treatment factors (first index lower).
    pub two_way: Vec<TwoWayMeans>,
    /// Present when a Q-Q plot was asked for.
    pub qq: Option<NormalQq>,
}
