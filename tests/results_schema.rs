//! The results file as another program reads it. The structs below are written from README.md
//! ("The results file" and the sections it refers to), not taken from the crate: every
//! documented field is required, unknown fields are refused, a field may be `null` only where
//! README says so, and may be absent only where README says it appears in some records only.
//! Every golden results file (tests/cases/*/expected/*.results.json, both the HTML and the
//! Markdown variant) must read into them, so a field that is renamed, vanishes or appears
//! without being documented fails here; then the invariants README states are checked.

use serde::{Deserialize, Deserializer};
use sha2::{Digest, Sha256};
use std::collections::BTreeMap;
use std::fmt::Display;
use std::path::{Path, PathBuf};

/// The consumer's view of the results file, field by field as README documents it.
#[allow(dead_code)] // every field is read so that it must exist; not all are checked further
mod contract {
    use super::{nullable, present};
    use serde::Deserialize;
    use std::collections::BTreeMap;

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct ResultsFile {
        pub sheaf: String,
        pub schema: u64,
        pub document: String,
        pub document_sha256: String,
        pub format: Format,
        pub inputs: Vec<Input>,
        pub blocks: Vec<Block>,
    }

    #[derive(Deserialize, Clone, Copy, PartialEq, Debug)]
    #[serde(rename_all = "lowercase")]
    pub enum Format {
        Html,
        Md,
        Tex,
        Docx,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Input {
        pub path: String,
        pub sha256: String,
        pub bytes: u64,
    }

    /// A block's record; its `kind` says which.
    #[derive(Deserialize)]
    #[serde(tag = "kind", rename_all = "lowercase")]
    pub enum Block {
        Anova(Box<AnovaBlock>),
        Power(Box<PowerBlock>),
        Traits(Box<TraitsBlock>),
    }

    /// A block with several responses: one `anova` record per trait (its `id` the response)
    /// and the trait table's numbers.
    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct TraitsBlock {
        pub id: String,
        pub line: u64,
        pub data: String,
        pub responses: Vec<String>,
        pub factors: Vec<String>,
        pub alpha: f64,
        pub traits: Vec<Block>,
        pub trait_table: TraitTable,
        pub figures: Vec<Figure>,
        pub warnings: Vec<String>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct TraitTable {
        #[serde(deserialize_with = "nullable")]
        pub procedure: Option<String>,
        pub factors: Vec<TraitTableFactor>,
        pub columns: BTreeMap<String, TraitColumn>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct TraitTableFactor {
        pub term: String,
        pub rows: Vec<TraitTableRow>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct TraitTableRow {
        pub level: String,
        pub cells: BTreeMap<String, TraitTableCell>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct TraitTableCell {
        pub n: u64,
        #[serde(deserialize_with = "nullable")]
        pub mean: Option<f64>,
        pub letters: String,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct TraitColumn {
        #[serde(deserialize_with = "nullable")]
        pub grand_mean: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub minimum: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub cv_percent: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub cv_computed: Option<f64>,
        pub sed: BTreeMap<String, [f64; 2]>,
        pub lsd: BTreeMap<String, [f64; 2]>,
        pub marks: BTreeMap<String, String>,
        pub interactions: Vec<String>,
        pub residual_df: f64,
    }

    /// One-factor and factorial `anova` blocks share a kind; factorial ones add `ss_type` and
    /// `cells` (and `means` in each comparison), one-factor ones may add `welch` or `kruskal`.
    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct AnovaBlock {
        pub id: String,
        pub line: u64,
        pub data: String,
        /// Blocks with `query` only: the SQL file that computed the summary.
        #[serde(default, deserialize_with = "present")]
        pub query: Option<String>,
        pub response: String,
        pub factors: Vec<String>,
        pub n: u64,
        pub n_excluded: u64,
        pub excluded: Vec<Excluded>,
        pub alpha: f64,
        pub method: Omnibus,
        pub input: InputKind,
        /// With exact sums only: the origin as an exact decimal.
        #[serde(default, deserialize_with = "present")]
        pub origin: Option<String>,
        #[serde(default, deserialize_with = "present")]
        pub ss_type: Option<u8>,
        pub anova: Anova,
        #[serde(default, deserialize_with = "present")]
        pub welch: Option<Welch>,
        #[serde(default, deserialize_with = "present")]
        pub kruskal: Option<Kruskal>,
        pub checks: Checks,
        pub groups: Vec<Group>,
        #[serde(default, deserialize_with = "present")]
        pub cells: Option<Vec<Cell>>,
        pub comparisons: Vec<Comparison>,
        pub figures: Vec<Figure>,
        pub warnings: Vec<String>,
        pub acknowledged: Vec<String>,
        /// Blocks with random terms only.
        #[serde(default, deserialize_with = "present")]
        pub fit: Option<Fit>,
        #[serde(default, deserialize_with = "present")]
        pub variance_components: Option<Vec<Component>>,
        /// Balanced designs with random terms only.
        #[serde(default, deserialize_with = "present")]
        pub strata: Option<Vec<StratumRow>>,
        #[serde(default, deserialize_with = "present")]
        pub seds: Option<Vec<SedRow>>,
        #[serde(default, deserialize_with = "present")]
        pub repeated: Option<Repeated>,
        /// Blocks with `covariate` only.
        #[serde(default, deserialize_with = "present")]
        pub covariates: Option<Covariates>,
        /// Blocks with `contrast` only.
        #[serde(default, deserialize_with = "present")]
        pub planned_contrasts: Option<PlannedContrasts>,
        /// Blocks with `trend` only.
        #[serde(default, deserialize_with = "present")]
        pub trend: Option<Trend>,
        /// Blocks with `transform` only.
        #[serde(default, deserialize_with = "present")]
        pub transform: Option<Transform>,
        /// Friedman's test (`method: ranks` with `block:`) only.
        #[serde(default, deserialize_with = "present")]
        pub friedman: Option<Friedman>,
        /// Blocks with `noec` only.
        #[serde(default, deserialize_with = "present")]
        pub dose_response: Option<DoseResponse>,
        /// Blocks with `margin` only.
        #[serde(default, deserialize_with = "present")]
        pub equivalence: Option<Equivalence>,
    }

    /// README: "Blocks with `margin` add `equivalence` …".
    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Equivalence {
        pub control: String,
        pub claim: String,
        pub alpha: f64,
        pub comparison_alpha: f64,
        pub interval_level: f64,
        pub variance: String,
        pub margins: EquivalenceMargins,
        #[serde(deserialize_with = "nullable")]
        pub control_mean: Option<f64>,
        pub all_equivalent: bool,
        pub difference_alpha: f64,
        pub comparisons: Vec<EquivalenceComparison>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct EquivalenceMargins {
        pub kind: String,
        pub lower: f64,
        pub upper: f64,
        pub on_analysis_scale: Limits,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Limits {
        #[serde(deserialize_with = "nullable")]
        pub lower: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub upper: Option<f64>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct EquivalenceComparison {
        pub level: String,
        pub control: String,
        #[serde(deserialize_with = "nullable")]
        pub difference: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub se: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub df: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub lower: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub upper: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub t_lower: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub t_upper: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub p_lower: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub p_upper: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub p: Option<f64>,
        pub equivalent: bool,
        #[serde(deserialize_with = "nullable")]
        pub p_difference: Option<f64>,
        pub different: bool,
        #[serde(default, deserialize_with = "present")]
        pub ratio: Option<EquivalenceRatio>,
    }

    /// A ratio and its limits.
    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct EquivalenceRatio {
        #[serde(deserialize_with = "nullable")]
        pub estimate: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub lower: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub upper: Option<f64>,
    }

    /// README: "Blocks with `noec` add `dose_response` …".
    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct DoseResponse {
        pub factor: String,
        pub control: String,
        pub control_n: u64,
        #[serde(deserialize_with = "nullable")]
        pub control_mean: Option<f64>,
        pub direction: Direction,
        pub alpha: f64,
        pub doses_from: DosesFrom,
        pub doses: Vec<DoseLevel>,
        #[serde(deserialize_with = "nullable")]
        pub error_ms: Option<f64>,
        pub error_df: f64,
        pub tests: std::collections::BTreeMap<DoseProcedure, DoseTest>,
        pub agree: bool,
        pub reversals: Vec<DoseReversal>,
    }

    #[derive(Deserialize, PartialEq, Debug)]
    #[serde(rename_all = "lowercase")]
    pub enum Direction {
        Decrease,
        Increase,
    }

    #[derive(Deserialize, PartialEq, Debug)]
    #[serde(rename_all = "lowercase")]
    pub enum DosesFrom {
        Names,
        Given,
    }

    #[derive(Deserialize, PartialEq, Eq, PartialOrd, Ord, Debug)]
    #[serde(rename_all = "lowercase")]
    pub enum DoseProcedure {
        Williams,
        Jonckheere,
        Ordinal,
        Dunnett,
        Steel,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct DoseLevel {
        pub level: String,
        pub dose: f64,
        pub n: u64,
        #[serde(deserialize_with = "nullable")]
        pub mean: Option<f64>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct DoseTest {
        #[serde(deserialize_with = "nullable")]
        pub loec: Option<String>,
        #[serde(deserialize_with = "nullable")]
        pub noec: Option<String>,
        pub noec_reading: NoecReading,
        pub kind: DoseKind,
        #[serde(deserialize_with = "nullable")]
        pub approximation: Option<String>,
        pub unequal_replication: bool,
        pub steps: Vec<DoseStep>,
    }

    #[derive(Deserialize, PartialEq, Debug)]
    #[serde(rename_all = "snake_case")]
    pub enum NoecReading {
        Dose,
        BelowLowest,
        AtLeastHighest,
    }

    #[derive(Deserialize, PartialEq, Debug)]
    #[serde(rename_all = "kebab-case")]
    pub enum DoseKind {
        StepDown,
        ManyToOne,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct DoseStep {
        pub level: String,
        #[serde(deserialize_with = "nullable")]
        pub statistic: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub z: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub restricted_mean: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub critical: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub df: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub p: Option<f64>,
        pub p_source: PSource,
        pub tested: bool,
        pub significant: bool,
    }

    #[derive(Deserialize, PartialEq, Debug)]
    #[serde(rename_all = "lowercase")]
    pub enum PSource {
        Exact,
        Normal,
        T,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct DoseReversal {
        pub level: String,
        #[serde(deserialize_with = "nullable")]
        pub t: Option<f64>,
        pub df: f64,
        #[serde(deserialize_with = "nullable")]
        pub p: Option<f64>,
    }

    /// README: "Blocks with `method: ranks` and `block:` add `friedman` …".
    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Friedman {
        pub factor: String,
        pub block: String,
        #[serde(deserialize_with = "nullable")]
        pub statistic: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub statistic_uncorrected: Option<f64>,
        pub df: f64,
        #[serde(deserialize_with = "nullable")]
        pub p: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub kendall_w: Option<f64>,
        pub blocks: u64,
        pub ties: f64,
        pub tie_correction: f64,
        #[serde(deserialize_with = "nullable")]
        pub procedure: Option<Procedure>,
        pub levels: Vec<RankedLevel>,
        pub pairs: Vec<RankPair>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct RankedLevel {
        pub level: String,
        pub blocks: u64,
        pub rank_sum: f64,
        pub mean_rank: f64,
        #[serde(deserialize_with = "nullable")]
        pub median: Option<f64>,
        pub letters: String,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct RankPair {
        pub a: String,
        pub b: String,
        pub rank_sum_diff: f64,
        pub mean_rank_diff: f64,
        #[serde(deserialize_with = "nullable")]
        pub statistic: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub p_adj: Option<f64>,
        pub significant: bool,
    }

    /// README: "Blocks with `transform` add `transform` …".
    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Transform {
        #[serde(deserialize_with = "nullable")]
        pub name: Option<String>,
        #[serde(deserialize_with = "nullable")]
        pub scale: Option<String>,
        #[serde(deserialize_with = "nullable")]
        pub analysed: Option<String>,
        #[serde(deserialize_with = "nullable")]
        pub offset: Option<f64>,
        pub percent: bool,
        #[serde(deserialize_with = "nullable")]
        pub back_transformed: Option<String>,
        #[serde(deserialize_with = "nullable")]
        pub difference: Option<String>,
        #[serde(default, deserialize_with = "present")]
        pub box_cox: Option<BoxCox>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct BoxCox {
        #[serde(deserialize_with = "nullable")]
        pub lambda: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub lower: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub upper: Option<f64>,
        pub level: f64,
        #[serde(deserialize_with = "nullable")]
        pub log_likelihood: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub suggestion: Option<f64>,
        pub no_transformation_indicated: bool,
        pub at_boundary: bool,
        pub profile: Vec<ProfilePoint>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct ProfilePoint {
        pub lambda: f64,
        #[serde(deserialize_with = "nullable")]
        pub log_likelihood: Option<f64>,
    }

    /// A mean and its limits back on the data's scale.
    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Back {
        #[serde(deserialize_with = "nullable")]
        pub mean: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub lower: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub upper: Option<f64>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Ratio {
        #[serde(deserialize_with = "nullable")]
        pub estimate: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub lower: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub upper: Option<f64>,
        #[serde(default, deserialize_with = "present")]
        pub percent_change: Option<f64>,
    }

    /// README: "Blocks with `trend` add `trend` …".
    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Trend {
        pub factor: String,
        pub scores: Vec<TrendScore>,
        pub components: Vec<TrendRow>,
        pub lack_of_fit: Vec<TrendRow>,
        pub treatment_ss: Option<f64>,
        pub treatment_df: f64,
        pub error_ss: Option<f64>,
        pub error_ms: Option<f64>,
        /// Null in a mixed model, where each row has its own.
        #[serde(deserialize_with = "nullable")]
        pub error_df: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub df_method: Option<String>,
        #[serde(deserialize_with = "nullable")]
        pub degree: Option<u64>,
        pub verdict: String,
        #[serde(default, deserialize_with = "present")]
        pub curve: Option<TrendCurve>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct TrendScore {
        pub level: String,
        pub score: f64,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct TrendRow {
        pub term: String,
        pub degree: u64,
        pub df: f64,
        pub ss: Option<f64>,
        pub ms: Option<f64>,
        pub f: Option<f64>,
        pub p: Option<f64>,
        pub error_df: f64,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct TrendCurve {
        pub degree: u64,
        pub coefficients: Vec<Option<f64>>,
        pub se: Vec<Option<f64>>,
        pub ms: Option<f64>,
        pub df: f64,
        /// Quadratic curves only.
        #[serde(default, deserialize_with = "present")]
        pub optimum: Option<TrendOptimum>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct TrendOptimum {
        #[serde(deserialize_with = "nullable")]
        pub x: Option<f64>,
        pub kind: String,
        pub within_range: bool,
        pub level: f64,
        pub set: String,
        #[serde(deserialize_with = "nullable")]
        pub lower: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub upper: Option<f64>,
    }

    /// README: "Blocks with `covariate` add `covariates` …".
    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Covariates {
        pub groups_of: String,
        pub covariates: Vec<CovariateRecord>,
        #[serde(deserialize_with = "nullable")]
        pub equal_slopes: Option<FRow>,
        #[serde(default, deserialize_with = "present")]
        pub separate_slopes: Option<SeparateSlopes>,
        pub unadjusted: Vec<Unadjusted>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct CovariateRecord {
        pub name: String,
        pub adjusted_to: f64,
        pub min: f64,
        pub max: f64,
        pub slope: Option<f64>,
        pub slope_se: Option<f64>,
        pub slope_df: f64,
        pub groups: Vec<CovariateGroup>,
        pub balance: FRow,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct CovariateGroup {
        pub level: String,
        pub n: u64,
        pub mean: f64,
        pub min: f64,
        pub max: f64,
    }

    /// An F test: `f`, `df1`, `df2`, `p` (and `ss` for the slopes test).
    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct FRow {
        #[serde(default)]
        pub ss: Option<f64>,
        pub f: Option<f64>,
        pub df1: f64,
        pub df2: f64,
        pub p: Option<f64>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct SeparateSlopes {
        pub ms: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub df: Option<f64>,
        pub groups: Vec<OwnSlope>,
        pub differences: Vec<LineDifference>,
        pub regions: Vec<Region>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct OwnSlope {
        pub level: String,
        pub slope: Option<f64>,
        pub se: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub df: Option<f64>,
        pub mean_at: Option<f64>,
        pub mean_at_se: Option<f64>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct LineDifference {
        pub a: String,
        pub b: String,
        pub at: f64,
        pub difference: Option<f64>,
        pub se: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub df: Option<f64>,
        pub t: Option<f64>,
        pub p: Option<f64>,
        pub ci_lower: Option<f64>,
        pub ci_upper: Option<f64>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Region {
        pub a: String,
        pub b: String,
        pub boundaries: Vec<f64>,
        pub significant: Vec<[f64; 2]>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Unadjusted {
        pub term: String,
        #[serde(default)]
        pub within: Option<String>,
        pub means: std::collections::BTreeMap<String, Option<f64>>,
        pub covariate_means:
            std::collections::BTreeMap<String, std::collections::BTreeMap<String, Option<f64>>>,
    }

    /// README: "Blocks with `contrast` add `planned_contrasts` …".
    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct PlannedContrasts {
        pub factor: String,
        pub adjustment: String,
        pub orthogonal: bool,
        pub critical_value: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub df_method: Option<String>,
        #[serde(deserialize_with = "nullable")]
        pub joint: Option<FRow>,
        pub contrasts: Vec<PlannedContrast>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct PlannedContrast {
        pub name: String,
        pub weights: std::collections::BTreeMap<String, f64>,
        pub estimate: Option<f64>,
        pub se: Option<f64>,
        pub df: f64,
        pub t: Option<f64>,
        pub p: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub p_adj: Option<f64>,
        pub ci_lower: Option<f64>,
        pub ci_upper: Option<f64>,
        pub in_response_units: bool,
    }

    /// README: "`repeated` with `subject`, `within` and `between` …".
    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Repeated {
        pub subject: String,
        pub within: Vec<String>,
        pub between: Vec<String>,
        pub subjects: u64,
        pub complete_subjects: u64,
        pub incomplete: Vec<String>,
        pub incomplete_count: u64,
        #[serde(deserialize_with = "nullable")]
        pub univariate: Option<Vec<WithinTerm>>,
        #[serde(default, deserialize_with = "present")]
        pub univariate_not_computed: Option<String>,
        #[serde(default, deserialize_with = "present")]
        pub covariance: Option<Covariance>,
    }

    /// `repeated.covariance` (README, "The same units measured several
    /// times").
    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Covariance {
        pub structure: String,
        pub factor: String,
        pub occasions: Vec<String>,
        #[serde(deserialize_with = "nullable")]
        pub times: Option<Vec<f64>>,
        pub parameters: Vec<CovarianceParameter>,
        pub matrix: Vec<Vec<Option<f64>>>,
        #[serde(deserialize_with = "nullable")]
        pub log_likelihood: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub aic: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub bic: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub bic_subjects: Option<f64>,
        pub kenward_roger_first_order: bool,
        pub comparison: Vec<StructureRow>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct CovarianceParameter {
        pub name: String,
        #[serde(deserialize_with = "nullable")]
        pub value: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub correlation: Option<f64>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct StructureRow {
        pub structure: String,
        pub parameters: u64,
        #[serde(deserialize_with = "nullable")]
        pub log_likelihood: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub aic: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub bic: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub bic_subjects: Option<f64>,
        pub lowest_aic: bool,
        pub lowest_bic: bool,
        #[serde(default, deserialize_with = "present")]
        pub not_fitted: Option<String>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct WithinTerm {
        pub term: String,
        pub df: f64,
        pub df_den: f64,
        #[serde(deserialize_with = "nullable")]
        pub f: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub p: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub p_gg: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub p_hf: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub p_lower_bound: Option<f64>,
        pub sphericity: Sphericity,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Sphericity {
        #[serde(deserialize_with = "nullable")]
        pub mauchly_w: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub chi_sq: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub df: Option<u64>,
        #[serde(deserialize_with = "nullable")]
        pub p: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub gg_epsilon: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub hf_epsilon: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub hf_epsilon_uncapped: Option<f64>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Fit {
        pub method: String,
        pub ddf: String,
        pub converged: bool,
        pub iterations: u64,
        #[serde(deserialize_with = "nullable")]
        pub log_likelihood: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub aic: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub bic: Option<f64>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Component {
        pub term: String,
        #[serde(deserialize_with = "nullable")]
        pub variance: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub sd: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub ci_lower: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub ci_upper: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub ci_method: Option<String>,
        #[serde(default, deserialize_with = "present")]
        pub levels: Option<u64>,
        #[serde(deserialize_with = "nullable")]
        pub percent: Option<f64>,
        #[serde(default, deserialize_with = "present")]
        pub predicted_effects: Option<Predicted>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Predicted {
        #[serde(deserialize_with = "nullable")]
        pub shapiro_wilk: Option<ShapiroWilk>,
        pub threshold: f64,
        pub flagged_count: u64,
        pub flagged: Vec<FlaggedUnit>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct FlaggedUnit {
        pub unit: String,
        #[serde(deserialize_with = "nullable")]
        pub effect: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub standardized: Option<f64>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct StratumRow {
        pub name: String,
        pub terms: Vec<String>,
        pub df: u64,
        #[serde(deserialize_with = "nullable")]
        pub ss: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub ms: Option<f64>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct SedRow {
        pub kind: String,
        #[serde(deserialize_with = "nullable")]
        pub sed: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub df: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub lsd: Option<f64>,
    }

    /// What the data file held (README "input: summary").
    #[derive(Deserialize, Clone, Copy, PartialEq, Debug)]
    pub enum InputKind {
        #[serde(rename = "observations")]
        Observations,
        #[serde(rename = "summaries")]
        Summaries,
        #[serde(rename = "exact sums")]
        ExactSums,
    }

    #[derive(Deserialize, Clone, Copy, PartialEq, Debug)]
    #[serde(rename_all = "lowercase")]
    pub enum Omnibus {
        Anova,
        Welch,
        Ranks,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Excluded {
        pub line: u64,
        pub reason: String,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Anova {
        pub terms: Vec<Term>,
        pub residual: Residual,
        pub total: Total,
        #[serde(deserialize_with = "nullable")]
        pub r_squared: Option<f64>,
        /// Models without random terms.
        #[serde(default, deserialize_with = "present")]
        pub cv_percent: Option<f64>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Term {
        pub term: String,
        pub df: u64,
        #[serde(deserialize_with = "nullable")]
        pub ss: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub ms: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub f: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub p: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub critical_f: Option<f64>,
        /// Blocking factors only.
        #[serde(default, deserialize_with = "present")]
        pub not_tested: Option<String>,
        #[serde(deserialize_with = "nullable")]
        pub effect: Option<Effect>,
        /// Blocks with random terms: the denominator df and the error.
        #[serde(default, deserialize_with = "present")]
        pub df_den: Option<f64>,
        #[serde(default, deserialize_with = "present")]
        pub error: Option<String>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Effect {
        #[serde(deserialize_with = "nullable")]
        pub eta_sq: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub partial_eta_sq: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub omega_sq: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub cohens_f: Option<f64>,
        pub partial_eta_sq_ci: [Option<f64>; 2],
        pub ci_level: f64,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Residual {
        pub df: u64,
        #[serde(deserialize_with = "nullable")]
        pub ss: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub ms: Option<f64>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Total {
        pub df: u64,
        #[serde(deserialize_with = "nullable")]
        pub ss: Option<f64>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Welch {
        #[serde(deserialize_with = "nullable")]
        pub f: Option<f64>,
        pub df1: f64,
        #[serde(deserialize_with = "nullable")]
        pub df2: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub p: Option<f64>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Kruskal {
        #[serde(deserialize_with = "nullable")]
        pub h: Option<f64>,
        pub df: f64,
        #[serde(deserialize_with = "nullable")]
        pub p: Option<f64>,
    }

    /// A check that cannot be computed is `null`.
    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Checks {
        #[serde(deserialize_with = "nullable")]
        pub brown_forsythe: Option<FTest>,
        #[serde(deserialize_with = "nullable")]
        pub levene: Option<FTest>,
        #[serde(deserialize_with = "nullable")]
        pub bartlett: Option<ChiSquare>,
        #[serde(deserialize_with = "nullable")]
        pub shapiro_wilk: Option<ShapiroWilk>,
        #[serde(deserialize_with = "nullable")]
        pub skewness: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub excess_kurtosis: Option<f64>,
        pub outlier_threshold: f64,
        pub outlier_count: u64,
        pub outliers: Vec<Outlier>,
        #[serde(default, deserialize_with = "present")]
        pub residuals: Option<String>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct FTest {
        #[serde(deserialize_with = "nullable")]
        pub statistic: Option<f64>,
        pub df1: f64,
        pub df2: f64,
        #[serde(deserialize_with = "nullable")]
        pub p: Option<f64>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct ChiSquare {
        #[serde(deserialize_with = "nullable")]
        pub statistic: Option<f64>,
        pub df: f64,
        #[serde(deserialize_with = "nullable")]
        pub p: Option<f64>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct ShapiroWilk {
        #[serde(deserialize_with = "nullable")]
        pub w: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub p: Option<f64>,
        pub n: u64,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Outlier {
        pub line: u64,
        pub level: String,
        #[serde(deserialize_with = "nullable")]
        pub value: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub studentized_residual: Option<f64>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Group {
        pub level: String,
        pub n: u64,
        #[serde(deserialize_with = "nullable")]
        pub mean: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub sd: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub se: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub ci_lower: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub ci_upper: Option<f64>,
        pub ci_error: CiError,
        #[serde(deserialize_with = "nullable")]
        pub median: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub q1: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub q3: Option<f64>,
        /// Blocks with `transform` only.
        #[serde(default, deserialize_with = "present")]
        pub arithmetic_mean: Option<f64>,
        #[serde(default, deserialize_with = "present")]
        pub back: Option<Back>,
    }

    #[derive(Deserialize, Clone, Copy, PartialEq, Debug)]
    #[serde(rename_all = "lowercase")]
    pub enum CiError {
        Pooled,
        Level,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Cell {
        /// Factor → level.
        pub levels: BTreeMap<String, String>,
        pub n: u64,
        #[serde(deserialize_with = "nullable")]
        pub mean: Option<f64>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Comparison {
        pub term: String,
        #[serde(deserialize_with = "nullable")]
        pub within: Option<String>,
        pub method: Procedure,
        pub alpha: f64,
        #[serde(deserialize_with = "nullable")]
        pub critical_value: Option<f64>,
        /// Dunnett only.
        #[serde(default, deserialize_with = "present")]
        pub control: Option<String>,
        /// Dunnett only.
        #[serde(default, deserialize_with = "present")]
        pub sides: Option<Sides>,
        /// Factorial blocks only.
        #[serde(default, deserialize_with = "present")]
        pub means: Option<Vec<Mean>>,
        pub pairs: Vec<Pair>,
        /// Level → letters.
        pub letters: BTreeMap<String, String>,
        /// Pairs sharing one error df: `[smallest, largest]`.
        #[serde(default, deserialize_with = "present")]
        pub sed: Option<[f64; 2]>,
        #[serde(default, deserialize_with = "present")]
        pub lsd: Option<[f64; 2]>,
    }

    #[derive(Deserialize, Clone, Copy, PartialEq, Debug)]
    #[serde(rename_all = "kebab-case")]
    pub enum Procedure {
        Lsd,
        Tukey,
        Bonferroni,
        Sidak,
        Holm,
        Scheffe,
        Dunnett,
        GamesHowell,
        Dunn,
        Nemenyi,
        Conover,
    }

    #[derive(Deserialize, Clone, Copy, PartialEq, Debug)]
    #[serde(rename_all = "kebab-case")]
    pub enum Sides {
        TwoSided,
        Greater,
        Less,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Mean {
        pub level: String,
        pub n: u64,
        #[serde(deserialize_with = "nullable")]
        pub mean: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub se: Option<f64>,
        /// Blocks with random terms: the mean's own df.
        #[serde(default, deserialize_with = "present")]
        pub df: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub ci_lower: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub ci_upper: Option<f64>,
        /// Blocks with `transform` only.
        #[serde(default, deserialize_with = "present")]
        pub arithmetic_mean: Option<f64>,
        #[serde(default, deserialize_with = "present")]
        pub back: Option<Back>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Pair {
        pub a: String,
        pub b: String,
        #[serde(deserialize_with = "nullable")]
        pub diff: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub se: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub lower: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub upper: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub p_adj: Option<f64>,
        pub significant: bool,
        /// Games-Howell only.
        #[serde(default, deserialize_with = "present")]
        pub df: Option<f64>,
        /// Blocks with `transform: log` or `logit` only.
        #[serde(default, deserialize_with = "present")]
        pub ratio: Option<Ratio>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct Figure {
        pub id: String,
        pub kind: FigureKind,
        #[serde(deserialize_with = "nullable")]
        pub file: Option<String>,
        pub sha256: String,
    }

    /// The `plot` kinds of an `anova` block, and a `power` block's curve.
    #[derive(Deserialize, Clone, Copy, PartialEq, Debug)]
    #[serde(rename_all = "lowercase")]
    pub enum FigureKind {
        Box,
        Means,
        Strip,
        Interaction,
        Residuals,
        Qq,
        Profile,
        Subjects,
        Trend,
        Doses,
        Equivalence,
        Power,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct PowerBlock {
        pub id: String,
        pub line: u64,
        pub groups: u64,
        pub effect: PowerEffect,
        pub alpha: f64,
        #[serde(deserialize_with = "nullable")]
        pub target_power: Option<f64>,
        #[serde(deserialize_with = "nullable")]
        pub n_per_group: Option<u64>,
        #[serde(deserialize_with = "nullable")]
        pub power: Option<f64>,
        pub curve: Vec<PowerPoint>,
        pub figures: Vec<Figure>,
        pub warnings: Vec<String>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct PowerEffect {
        pub cohens_f: f64,
        #[serde(deserialize_with = "nullable")]
        pub means: Option<Vec<f64>>,
        #[serde(deserialize_with = "nullable")]
        pub sd: Option<f64>,
    }

    #[derive(Deserialize)]
    #[serde(deny_unknown_fields)]
    pub struct PowerPoint {
        pub n_per_group: u64,
        #[serde(deserialize_with = "nullable")]
        pub power: Option<f64>,
    }
}

use contract::*;

/// A field that must be present and may be `null`. (A plain `Option` field may also be left
/// out, which would let a vanished field pass.)
fn nullable<'de, D: Deserializer<'de>, T: Deserialize<'de>>(d: D) -> Result<Option<T>, D::Error> {
    Option::<T>::deserialize(d)
}

/// A field that some records have and others leave out, never `null` when present.
fn present<'de, D: Deserializer<'de>, T: Deserialize<'de>>(d: D) -> Result<Option<T>, D::Error> {
    T::deserialize(d).map(Some)
}

/// The `schema` README documents.
const SCHEMA: u64 = 2;

/// README: "`outliers`, the 100 most extreme of them".
const MAX_LISTED_OUTLIERS: usize = 100;

/// Reads a results file into the contract's structs. The message names the file, serde's
/// complaint (the field) with its line and column, and the block it lies in: a block is read
/// whole before its `kind` is known, so serde's position there is the block's end.
fn read_results(name: &str, text: &str) -> Result<ResultsFile, String> {
    serde_json::from_str(text).map_err(|e| format!("{name}: {e}{}", failing_block(text)))
}

/// " (in blocks[i], id `…`)" for the first block that does not read on its own, else "".
fn failing_block(text: &str) -> String {
    let Ok(value) = serde_json::from_str::<serde_json::Value>(text) else {
        return String::new();
    };
    let blocks = value["blocks"].as_array().cloned().unwrap_or_default();
    blocks
        .iter()
        .enumerate()
        .find(|(_, b)| Block::deserialize(*b).is_err())
        .map(|(i, b)| {
            format!(
                " (in blocks[{i}], id `{}`)",
                b["id"].as_str().unwrap_or("?")
            )
        })
        .unwrap_or_default()
}

/// One golden results file: the case folder, the file and the format its name says.
struct Golden {
    case: PathBuf,
    file: PathBuf,
    format: Format,
}

impl Golden {
    fn name(&self) -> String {
        let root = Path::new(env!("CARGO_MANIFEST_DIR"));
        self.file
            .strip_prefix(root)
            .unwrap_or(&self.file)
            .display()
            .to_string()
    }
}

/// The golden cases: the folders of tests/cases that hold a `report.md` (as tests/golden.rs
/// finds them).
fn cases() -> Vec<PathBuf> {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/cases");
    let mut cases: Vec<PathBuf> = std::fs::read_dir(&root)
        .expect("tests/cases")
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.join("report.md").is_file())
        .collect();
    cases.sort();
    cases
}

/// Every `*.results.json` under each case's `expected/` (tests/golden.rs writes one per format:
/// `report.results.json` for HTML, `report.md.results.json` for Markdown,
/// `report.tex.results.json` for LaTeX, `report.docx.results.json` for docx).
fn golden_files() -> Vec<Golden> {
    let mut found = Vec::new();
    for case in cases() {
        let mut files: Vec<PathBuf> = std::fs::read_dir(case.join("expected"))
            .expect("expected folder")
            .filter_map(|e| e.ok().map(|e| e.path()))
            .filter(|p| p.to_string_lossy().ends_with(".results.json"))
            .collect();
        files.sort();
        for file in files {
            let name = file.to_string_lossy();
            let format = if name.ends_with(".md.results.json") {
                Format::Md
            } else if name.ends_with(".tex.results.json") {
                Format::Tex
            } else if name.ends_with(".docx.results.json") {
                Format::Docx
            } else {
                Format::Html
            };
            found.push(Golden {
                case: case.clone(),
                file,
                format,
            });
        }
    }
    found
}

fn read_golden(g: &Golden) -> Result<ResultsFile, String> {
    let text = std::fs::read_to_string(&g.file).map_err(|e| format!("{}: {e}", g.name()))?;
    read_results(&g.name(), &text)
}

#[test]
fn every_case_has_a_results_file_for_each_format() {
    let golden = golden_files();
    for case in cases() {
        for format in [Format::Html, Format::Md, Format::Tex, Format::Docx] {
            assert!(
                golden.iter().any(|g| g.case == case && g.format == format),
                "{} has no {format:?} results file",
                case.display()
            );
        }
    }
}

#[test]
fn every_golden_results_file_reads_into_the_documented_fields() {
    let golden = golden_files();
    assert!(!golden.is_empty(), "no golden results files found");
    let failures: Vec<String> = golden.iter().filter_map(|g| read_golden(g).err()).collect();
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
fn golden_results_files_keep_the_documented_invariants() {
    let mut problems = Vec::new();
    for g in golden_files() {
        match read_golden(&g) {
            Ok(results) => problems.extend(check_file(&g.case, g.format, &results, &g.name())),
            Err(e) => problems.push(e),
        }
    }
    assert!(problems.is_empty(), "{}", problems.join("\n"));
}

/// Broken invariants, each a line naming the file and where in it.
struct Problems {
    file: String,
    list: Vec<String>,
}

impl Problems {
    fn require(&mut self, holds: bool, at: &str, what: impl Display) {
        if !holds {
            self.list.push(format!("{}: {at}: {what}", self.file));
        }
    }
}

fn sha256_hex(bytes: &[u8]) -> String {
    Sha256::digest(bytes)
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

fn is_sha256_hex(s: &str) -> bool {
    s.len() == 64
        && s.bytes()
            .all(|b| b.is_ascii_digit() || (b'a'..=b'f').contains(&b))
}

/// A p-value is null or a probability.
fn is_probability(p: Option<f64>) -> bool {
    p.is_none_or(|p| (0.0..=1.0).contains(&p))
}

/// The checks on one file; `case` is the document's folder, against which the recorded hashes
/// are recomputed.
fn check_file(case: &Path, format: Format, r: &ResultsFile, name: &str) -> Vec<String> {
    let mut p = Problems {
        file: name.to_string(),
        list: Vec::new(),
    };
    p.require(
        r.schema == SCHEMA,
        "schema",
        format!("{} is not {SCHEMA}", r.schema),
    );
    p.require(
        r.format == format,
        "format",
        format!("{:?} in a {format:?} file", r.format),
    );
    match std::fs::read(case.join(&r.document)) {
        Ok(bytes) => p.require(
            r.document_sha256 == sha256_hex(&bytes),
            "document_sha256",
            format!("is not the SHA-256 of {}", r.document),
        ),
        Err(e) => p.require(false, "document", format!("{}: {e}", r.document)),
    }
    for (i, input) in r.inputs.iter().enumerate() {
        let at = format!("inputs[{i}] ({})", input.path);
        p.require(
            is_sha256_hex(&input.sha256),
            &at,
            "sha256 is not 64 lowercase hex digits",
        );
        match std::fs::read(case.join(&input.path)) {
            Ok(bytes) => {
                p.require(
                    input.sha256 == sha256_hex(&bytes),
                    &at,
                    "sha256 is not the file's",
                );
                p.require(
                    input.bytes == bytes.len() as u64,
                    &at,
                    "bytes is not the file's size",
                );
            }
            Err(e) => p.require(false, &at, e),
        }
    }
    let stem = r.document.strip_suffix(".md").unwrap_or(&r.document);
    let expected = case.join("expected");
    for (i, block) in r.blocks.iter().enumerate() {
        match block {
            Block::Anova(b) => {
                let at = format!("blocks[{i}] (id `{}`)", b.id);
                check_anova(&mut p, &at, b);
                check_figures(&mut p, &at, &b.id, &b.figures, format, stem, &expected);
            }
            Block::Power(b) => {
                let at = format!("blocks[{i}] (id `{}`)", b.id);
                check_power(&mut p, &at, b);
                check_figures(&mut p, &at, &b.id, &b.figures, format, stem, &expected);
            }
            Block::Traits(b) => {
                let at = format!("blocks[{i}] (id `{}`)", b.id);
                check_traits(&mut p, &at, b);
                for (j, t) in b.traits.iter().enumerate() {
                    let Block::Anova(t) = t else { continue };
                    let at = format!("{at}.traits[{j}] (id `{}`)", t.id);
                    check_anova(&mut p, &at, t);
                    let figure_stem = format!("{}-{}", b.id, t.id);
                    check_figures(
                        &mut p,
                        &at,
                        &figure_stem,
                        &t.figures,
                        format,
                        stem,
                        &expected,
                    );
                }
            }
        }
    }
    p.list
}

/// README: each trait is an `anova` record whose `id` is its response, in the order of
/// `responses`; a column per response, its `cv_percent` null exactly when the trait has a
/// value ≤ 0 and else equal to `cv_computed`; LSD above SED (t > 1 at usual α); marks among
/// `ns`, `*`, `**`, `***`; the block's own `figures` empty.
fn check_traits(p: &mut Problems, at: &str, b: &TraitsBlock) {
    let ids: Vec<&str> = b
        .traits
        .iter()
        .map(|t| match t {
            Block::Anova(a) => a.id.as_str(),
            _ => "",
        })
        .collect();
    p.require(
        ids == b.responses.iter().map(String::as_str).collect::<Vec<_>>(),
        at,
        "traits are not anova records named by `responses`, in order",
    );
    p.require(b.responses.len() >= 2, at, "fewer than two responses");
    p.require(
        b.figures.is_empty(),
        at,
        "the block's own figures are not empty",
    );
    let table = &b.trait_table;
    p.require(
        table.columns.keys().count() == b.responses.len()
            && b.responses.iter().all(|r| table.columns.contains_key(r)),
        at,
        "trait_table.columns is not one per response",
    );
    for (name, c) in &table.columns {
        let at = format!("{at}.trait_table.columns.{name}");
        let positive = c.minimum.is_none_or(|m| m > 0.0);
        p.require(
            (c.cv_percent.is_some() == positive) && (!positive || c.cv_percent == c.cv_computed),
            &at,
            "cv_percent is not cv_computed for a positive trait, null otherwise",
        );
        for (factor, sed) in &c.sed {
            let lsd = c.lsd.get(factor);
            p.require(
                sed[0] <= sed[1] && lsd.is_some_and(|l| l[0] > sed[0] && l[1] > sed[1]),
                &at,
                format!("SED and LSD of `{factor}` out of order"),
            );
        }
        p.require(
            c.marks
                .values()
                .all(|m| ["ns", "*", "**", "***"].contains(&m.as_str())),
            &at,
            "a mark outside ns, *, **, ***",
        );
    }
    for f in &table.factors {
        p.require(
            b.factors.contains(&f.term),
            at,
            format!("trait_table factor `{}` is not a factor", f.term),
        );
    }
}

/// README: `complete_subjects` of `subjects`, the others counted in
/// `incomplete_count`; corrected p-values multiply both df by ε ≤ 1, so
/// they are never below the uncorrected p; ε (GG) lies in [1/df, 1].
fn check_repeated(p: &mut Problems, at: &str, r: &Repeated) {
    p.require(
        r.complete_subjects + r.incomplete_count == r.subjects,
        at,
        "complete and incomplete subjects do not add up",
    );
    p.require(
        r.incomplete.len() as u64 == r.incomplete_count.min(100),
        at,
        "incomplete lists more or fewer subjects than counted",
    );
    p.require(
        r.univariate.is_some() != r.univariate_not_computed.is_some(),
        at,
        "univariate and univariate_not_computed: exactly one is given",
    );
    for t in r.univariate.iter().flatten() {
        let at = format!("{at}: within term {}", t.term);
        for q in [t.p, t.p_gg, t.p_hf, t.p_lower_bound] {
            p.require(is_probability(q), &at, "a p-value is not a probability");
        }
        let (raw, gg, hf, lb) = (
            t.p.unwrap_or(f64::NAN),
            t.p_gg.unwrap_or(f64::NAN),
            t.p_hf.unwrap_or(f64::NAN),
            t.p_lower_bound.unwrap_or(f64::NAN),
        );
        // Rounding of the F tail: 1e-12 relative.
        let tol = 1e-12 * raw.max(f64::MIN_POSITIVE);
        p.require(
            gg >= raw - tol && hf >= raw - tol && lb >= gg - tol,
            &at,
            "a corrected p is below the uncorrected one (or the lower bound below GG)",
        );
        let eps = t.sphericity.gg_epsilon.unwrap_or(f64::NAN);
        p.require(
            eps <= 1.0 + 1e-12 && eps >= 1.0 / t.df - 1e-12,
            &at,
            "the Greenhouse-Geisser epsilon is outside [1/df, 1]",
        );
        // Without a Mauchly test (one contrast) sphericity holds: ε = 1.
        p.require(
            t.sphericity.mauchly_w.is_some() || eps == 1.0,
            &at,
            "no Mauchly test, yet an epsilon below 1",
        );
    }
}

/// README: a figure has the id `<block>-<kind>` (`<block>-<kind>-<factor>` for the further
/// factors of a factorial), `file` null when the SVG is inlined in HTML and the file beside a
/// Markdown report (`<report>-<figure>.svg`, or `.png`) otherwise, and the SHA-256 of its SVG.
fn check_figures(
    p: &mut Problems,
    at: &str,
    block: &str,
    figures: &[Figure],
    format: Format,
    stem: &str,
    expected: &Path,
) {
    for (j, fig) in figures.iter().enumerate() {
        let at = format!("{at}.figures[{j}] (id `{}`)", fig.id);
        // The variants are named as the file spells them, in lower case.
        let prefix = format!("{block}-{}", format!("{:?}", fig.kind).to_lowercase());
        p.require(
            fig.id == prefix || fig.id.starts_with(&format!("{prefix}-")),
            &at,
            format!("id does not start with `{prefix}`"),
        );
        p.require(
            is_sha256_hex(&fig.sha256),
            &at,
            "sha256 is not 64 lowercase hex digits",
        );
        match (format, &fig.file) {
            (Format::Html | Format::Docx, file) => p.require(
                file.is_none(),
                &at,
                "file is not null in HTML or docx, which hold their figures",
            ),
            (Format::Md | Format::Tex, None) => {
                p.require(false, &at, "file is null beside a Markdown or LaTeX report")
            }
            // A LaTeX report's figures are PNG files beside it.
            (Format::Tex, Some(file)) => p.require(
                *file == format!("{stem}-{}.png", fig.id),
                &at,
                format!("file is `{file}`"),
            ),
            (Format::Md, Some(file)) => {
                let svg = format!("{stem}-{}.svg", fig.id);
                let png = format!("{stem}-{}.png", fig.id);
                p.require(
                    *file == svg || *file == png,
                    &at,
                    format!("file is `{file}`"),
                );
                // The expected folder holds the figure files golden.rs compares.
                if *file == svg {
                    let same = std::fs::read(expected.join(file))
                        .is_ok_and(|bytes| sha256_hex(&bytes) == fig.sha256);
                    p.require(same, &at, format!("sha256 is not that of {file}"));
                }
            }
        }
    }
}

/// The invariants README states for an `anova` block's record.
fn check_anova(p: &mut Problems, at: &str, b: &AnovaBlock) {
    p.require(0.0 < b.alpha && b.alpha < 1.0, at, "alpha is not in (0, 1)");
    if let Some(r) = &b.repeated {
        check_repeated(p, at, r);
    }
    p.require(
        b.n_excluded == b.excluded.len() as u64,
        at,
        "n_excluded differs from the rows listed in excluded",
    );
    p.require(
        b.origin.is_some() == (b.input == InputKind::ExactSums),
        at,
        "origin is given exactly when the input is exact sums",
    );
    p.require(
        b.welch.is_some() == (b.method == Omnibus::Welch),
        at,
        "welch is present exactly when method is welch",
    );
    // `method: ranks` is Kruskal-Wallis in one-factor blocks and
    // Friedman's test in blocked ones.
    p.require(
        b.kruskal.is_some() == (b.method == Omnibus::Ranks && b.ss_type.is_none()),
        at,
        "kruskal is present exactly when method is ranks in a one-factor block",
    );
    p.require(
        b.friedman.is_some() == (b.method == Omnibus::Ranks && b.ss_type.is_some()),
        at,
        "friedman is present exactly when method is ranks in a blocked block",
    );
    if let Some(f) = &b.friedman {
        check_friedman(p, &format!("{at}.friedman"), b, f);
    }
    let factorial = b.ss_type.is_some();
    p.require(
        b.cells.is_some() == factorial,
        at,
        "cells and ss_type come together",
    );
    p.require(
        b.ss_type.is_none_or(|t| (1..=3).contains(&t)),
        at,
        "ss_type is not 1, 2 or 3",
    );
    for t in &b.anova.terms {
        check_term(p, &format!("{at}.anova.terms `{}`", t.term), t);
    }
    if let Some(w) = &b.welch {
        p.require(is_probability(w.p), at, "welch.p is not a probability");
        p.require(
            w.df1 >= 0.0 && w.df2.is_none_or(|d| d >= 0.0),
            at,
            "welch df negative",
        );
    }
    if let Some(k) = &b.kruskal {
        p.require(is_probability(k.p), at, "kruskal.p is not a probability");
        p.require(k.df >= 0.0, at, "kruskal.df is negative");
    }
    check_checks(p, &format!("{at}.checks"), &b.checks);
    // README: SE and intervals use the pooled error, or each level's own SD under Welch.
    let own_sd = b.method == Omnibus::Welch && !factorial;
    let want = if own_sd {
        CiError::Level
    } else {
        CiError::Pooled
    };
    for g in &b.groups {
        p.require(
            g.ci_error == want,
            at,
            format!("group `{}` has ci_error {:?}", g.level, g.ci_error),
        );
    }
    if factorial {
        check_factorial_groups(p, at, b);
    }
    if let Some(d) = &b.dose_response {
        check_dose(p, &format!("{at}.dose_response"), d);
    }
    for (i, c) in b.comparisons.iter().enumerate() {
        check_comparison(p, &format!("{at}.comparisons[{i}]"), b, c);
    }
}

/// README, "Blocks with `noec` add `dose_response`": one step per dose, the
/// doses in increasing order, and the NOEC reading that the LOEC implies.
fn check_dose(p: &mut Problems, at: &str, d: &DoseResponse) {
    p.require(
        d.doses.windows(2).all(|w| w[0].dose < w[1].dose),
        at,
        "doses are not in increasing order",
    );
    p.require(
        d.doses.iter().all(|l| l.level != d.control),
        at,
        "the control is listed among the doses",
    );
    for (name, t) in &d.tests {
        let at = format!("{at}.tests.{name:?}");
        let levels: Vec<&str> = t.steps.iter().map(|s| s.level.as_str()).collect();
        let doses: Vec<&str> = d.doses.iter().map(|l| l.level.as_str()).collect();
        p.require(
            levels == doses,
            &at,
            "steps are not one per dose, in dose order",
        );
        let reading = match (&t.loec, &t.noec) {
            (None, None) => NoecReading::AtLeastHighest,
            (Some(l), None) => {
                p.require(
                    Some(l.as_str()) == doses.first().copied(),
                    &at,
                    "no NOEC below a LOEC above the lowest dose",
                );
                NoecReading::BelowLowest
            }
            (Some(l), Some(n)) => {
                let (li, ni) = (
                    doses.iter().position(|x| x == l),
                    doses.iter().position(|x| x == n),
                );
                p.require(
                    li.is_some() && ni.map(|i| i + 1) == li,
                    &at,
                    "the NOEC is not the dose below the LOEC",
                );
                NoecReading::Dose
            }
            (None, Some(_)) => {
                p.require(false, &at, "a NOEC without a LOEC");
                NoecReading::Dose
            }
        };
        p.require(
            t.noec_reading == reading,
            &at,
            format!("noec_reading is {:?}", t.noec_reading),
        );
        for s in &t.steps {
            p.require(
                is_probability(s.p),
                &at,
                format!("step {} p is not a probability", s.level),
            );
            p.require(
                !s.significant || s.tested,
                &at,
                format!("step {} significant but not tested", s.level),
            );
        }
        // Step-down procedures test from the highest dose down, and stop at
        // the first dose without an effect.
        if t.kind == DoseKind::StepDown {
            let tested: Vec<bool> = t.steps.iter().rev().map(|s| s.tested).collect();
            p.require(
                tested.windows(2).all(|w| w[0] || !w[1]),
                &at,
                "tested steps are not a run from the highest dose",
            );
        }
    }
}

/// README: a blocking factor's term has `f`, `p`, `critical_f` and its effect sizes null, with
/// `not_tested` giving the reason.
fn check_term(p: &mut Problems, at: &str, t: &Term) {
    p.require(is_probability(t.p), at, "p is not a probability");
    if let Some(e) = &t.effect
        && let [Some(lo), Some(hi)] = e.partial_eta_sq_ci
    {
        p.require(lo <= hi, at, "partial_eta_sq_ci is not [lower, upper]");
    }
    if t.not_tested.is_some() {
        p.require(
            t.f.is_none() && t.p.is_none() && t.critical_f.is_none(),
            at,
            "a term not tested has f, p or critical_f",
        );
        let sizes_null = t.effect.as_ref().is_none_or(|e| {
            e.eta_sq.is_none()
                && e.partial_eta_sq.is_none()
                && e.omega_sq.is_none()
                && e.cohens_f.is_none()
                && e.partial_eta_sq_ci == [None, None]
        });
        p.require(sizes_null, at, "a term not tested has effect sizes");
    }
}

fn check_checks(p: &mut Problems, at: &str, c: &Checks) {
    for (name, test) in [("brown_forsythe", &c.brown_forsythe), ("levene", &c.levene)] {
        if let Some(t) = test {
            p.require(
                is_probability(t.p),
                at,
                format!("{name}.p is not a probability"),
            );
            p.require(
                t.df1 >= 0.0 && t.df2 >= 0.0,
                at,
                format!("{name} df negative"),
            );
        }
    }
    if let Some(t) = &c.bartlett {
        p.require(is_probability(t.p), at, "bartlett.p is not a probability");
        p.require(t.df >= 0.0, at, "bartlett.df is negative");
    }
    if let Some(t) = &c.shapiro_wilk {
        p.require(
            is_probability(t.p),
            at,
            "shapiro_wilk.p is not a probability",
        );
    }
    // README: `outlier_count` observations beyond the threshold, the 100 most extreme listed
    // in data order.
    p.require(
        c.outliers.len() <= MAX_LISTED_OUTLIERS,
        at,
        "more than 100 outliers listed",
    );
    p.require(
        c.outliers.len() as u64 <= c.outlier_count,
        at,
        "more outliers listed than counted",
    );
    p.require(
        c.outliers.windows(2).all(|w| w[0].line < w[1].line),
        at,
        "outliers are not in data order",
    );
    for o in &c.outliers {
        p.require(
            o.studentized_residual
                .is_none_or(|r| r.abs() > c.outlier_threshold),
            at,
            format!("the outlier on line {} is within the threshold", o.line),
        );
    }
}

/// README: in a factorial block `groups` holds the first family's means (none without
/// comparisons) with `sd`, `median`, `q1` and `q3` null, and no term has an `eta_sq`.
fn check_factorial_groups(p: &mut Problems, at: &str, b: &AnovaBlock) {
    let no_spread = b
        .groups
        .iter()
        .all(|g| g.sd.is_none() && g.median.is_none() && g.q1.is_none() && g.q3.is_none());
    p.require(no_spread, at, "a marginal mean has sd, median or quartiles");
    let no_eta =
        (b.anova.terms.iter()).all(|t| t.effect.as_ref().is_none_or(|e| e.eta_sq.is_none()));
    p.require(no_eta, at, "a factorial term has eta_sq");
    let first = b.comparisons.first().and_then(|c| c.means.as_ref());
    let first: &[Mean] = first.map_or(&[], |m| m.as_slice());
    let same = b.groups.len() == first.len()
        && b.groups.iter().zip(first).all(|(g, m)| {
            g.level == m.level
                && g.n == m.n
                && g.mean == m.mean
                && g.se == m.se
                && g.ci_lower == m.ci_lower
                && g.ci_upper == m.ci_upper
        });
    p.require(
        same,
        at,
        "groups is not the first comparison family's means",
    );
}

/// One comparison family against what README says of `term`, `within`, the procedures that
/// add `control`, `sides` and each pair's `df`, letters, and `diff` = mean(a) − mean(b).
fn check_comparison(p: &mut Problems, at: &str, b: &AnovaBlock, c: &Comparison) {
    let factorial = b.ss_type.is_some();
    p.require(
        c.means.is_some() == factorial,
        at,
        "means is present exactly in factorial blocks",
    );
    p.require(
        b.factors.contains(&c.term) || (factorial && c.term == "cells"),
        at,
        format!("term `{}` is neither a factor nor cells", c.term),
    );
    if let Some(within) = &c.within {
        let factor = within.split_once('=').map(|(f, _)| f.to_string());
        p.require(
            factor.is_some_and(|f| b.factors.contains(&f)),
            at,
            format!("within `{within}` is not factor=level"),
        );
    }
    // The levels compared, with their means.
    let means: BTreeMap<&str, Option<f64>> = match &c.means {
        Some(m) => m.iter().map(|m| (m.level.as_str(), m.mean)).collect(),
        None => b
            .groups
            .iter()
            .map(|g| (g.level.as_str(), g.mean))
            .collect(),
    };
    let dunnett = c.method == Procedure::Dunnett;
    p.require(
        c.control.is_some() == dunnett,
        at,
        "control is present exactly under Dunnett",
    );
    p.require(
        c.sides.is_some() == dunnett,
        at,
        "sides is present exactly under Dunnett",
    );
    if dunnett {
        p.require(c.letters.is_empty(), at, "Dunnett has letters");
    } else {
        let keys: Vec<&str> = c.letters.keys().map(String::as_str).collect();
        let levels: Vec<&str> = means.keys().copied().collect();
        p.require(
            keys == levels,
            at,
            "letters do not name every compared level",
        );
    }
    // Games-Howell, and every procedure of a block with random terms, give
    // each pair its own df.
    let own_df = c.method == Procedure::GamesHowell || b.fit.is_some();
    let per_pair = c.method == Procedure::GamesHowell || c.method == Procedure::Dunn;
    p.require(
        c.critical_value.is_none() || !per_pair,
        at,
        "Games-Howell and Dunn have no single critical value",
    );
    p.require(0.0 < c.alpha && c.alpha < 1.0, at, "alpha is not in (0, 1)");
    for (i, pair) in c.pairs.iter().enumerate() {
        check_pair(p, &format!("{at}.pairs[{i}]"), c, pair, &means, own_df);
    }
}

fn check_pair(
    p: &mut Problems,
    at: &str,
    c: &Comparison,
    pair: &Pair,
    means: &BTreeMap<&str, Option<f64>>,
    own_df: bool,
) {
    p.require(is_probability(pair.p_adj), at, "p_adj is not a probability");
    p.require(
        pair.df.is_some() == own_df,
        at,
        "df is present exactly under Games-Howell and with random terms",
    );
    p.require(pair.df.is_none_or(|d| d >= 0.0), at, "df is negative");
    if let Some(control) = &c.control {
        p.require(
            pair.b == *control,
            at,
            "a Dunnett pair's b is not the control",
        );
    }
    let (Some(a), Some(b)) = (means.get(pair.a.as_str()), means.get(pair.b.as_str())) else {
        p.require(
            false,
            at,
            format!("`{}` or `{}` is not a compared level", pair.a, pair.b),
        );
        return;
    };
    if matches!(
        c.method,
        Procedure::Dunn | Procedure::Nemenyi | Procedure::Conover
    ) {
        // Rank procedures' diff is a difference of mean ranks (Dunn, Nemenyi) or of rank
        // sums (Conover), not of means; they have no intervals.
        p.require(
            pair.lower.is_none() && pair.upper.is_none(),
            at,
            "a rank procedure has an interval",
        );
        return;
    }
    if let (Some(a), Some(b), Some(diff)) = (*a, *b, pair.diff) {
        // The same difference in exact arithmetic; computed from other sums of the same data it
        // may differ by rounding, a few units in the last place of the means. 1e-9 of their
        // size allows any summation order and still catches a swapped pair or a wrong level.
        let tolerance = 1e-9 * a.abs().max(b.abs()).max(1.0);
        p.require(
            (diff - (a - b)).abs() <= tolerance,
            at,
            format!(
                "diff {diff} is not mean({}) - mean({}) = {}",
                pair.a,
                pair.b,
                a - b
            ),
        );
    }
}

/// README: Friedman's record, and its agreement with the block's comparison of the
/// treatment factor (the same pairs and letters; Nemenyi's diff is the difference of
/// mean ranks, Conover's of rank sums).
fn check_friedman(p: &mut Problems, at: &str, b: &AnovaBlock, f: &Friedman) {
    p.require(is_probability(f.p), at, "p is not a probability");
    p.require(
        f.kendall_w.is_none_or(|w| (0.0..=1.0 + 1e-12).contains(&w)),
        at,
        "kendall_w is not in [0, 1]",
    );
    p.require(
        0.0 < f.tie_correction && f.tie_correction <= 1.0,
        at,
        "tie_correction is not in (0, 1]",
    );
    p.require(
        f.df + 1.0 == f.levels.len() as f64,
        at,
        "df is not the number of levels less one",
    );
    // Rank sums add up to bk(k + 1)/2 exactly (halves are exact in binary).
    let k = f.levels.len() as f64;
    let total: f64 = f.levels.iter().map(|l| l.rank_sum).sum();
    p.require(
        total == f.blocks as f64 * k * (k + 1.0) / 2.0,
        at,
        "rank sums do not add up to bk(k + 1)/2",
    );
    let compared = b
        .comparisons
        .iter()
        .find(|c| c.term == f.factor && c.within.is_none());
    p.require(
        compared.map(|c| c.method) == f.procedure,
        at,
        "procedure is not the comparison's method",
    );
    let Some(c) = compared else {
        p.require(f.pairs.is_empty(), at, "pairs without a comparison");
        return;
    };
    p.require(
        c.pairs.len() == f.pairs.len(),
        at,
        "pairs differ from the comparison's",
    );
    for (mine, theirs) in f.pairs.iter().zip(&c.pairs) {
        let diff = match c.method {
            Procedure::Conover => mine.rank_sum_diff,
            _ => mine.mean_rank_diff,
        };
        p.require(
            mine.a == theirs.a
                && mine.b == theirs.b
                && theirs
                    .diff
                    .is_some_and(|d| (d - diff).abs() <= 1e-12 * diff.abs().max(1.0))
                && mine.p_adj == theirs.p_adj
                && mine.significant == theirs.significant,
            at,
            format!("pair {} - {} differs from the comparison's", mine.a, mine.b),
        );
    }
    for l in &f.levels {
        p.require(
            c.letters.get(&l.level).is_some_and(|x| *x == l.letters),
            at,
            format!("letters of `{}` differ from the comparison's", l.level),
        );
    }
}

/// README: a `power` block's inputs and answer.
fn check_power(p: &mut Problems, at: &str, b: &PowerBlock) {
    p.require(0.0 < b.alpha && b.alpha < 1.0, at, "alpha is not in (0, 1)");
    p.require(
        b.target_power.is_none_or(|t| 0.0 < t && t < 1.0),
        at,
        "target_power is not in (0, 1)",
    );
    p.require(is_probability(b.power), at, "power is not a probability");
    p.require(
        b.effect.means.is_some() == b.effect.sd.is_some(),
        at,
        "effect has means without sd or sd without means",
    );
    if b.n_per_group.is_none() {
        p.require(
            b.target_power.is_some(),
            at,
            "n_per_group is null although n was given",
        );
        p.require(b.power.is_none(), at, "power without n_per_group");
    }
    for point in &b.curve {
        p.require(
            is_probability(point.power),
            at,
            "a curve power is not a probability",
        );
    }
}

/// The structs and the checks above must refuse a changed file; these change a golden file in
/// memory the ways a careless edit of the writer would.
mod the_contract_bites {
    use super::*;
    use serde_json::Value;

    fn case(name: &str) -> PathBuf {
        Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("tests/cases")
            .join(name)
    }

    fn golden_value(case_name: &str) -> Value {
        let path = case(case_name).join("expected/report.results.json");
        let text = std::fs::read_to_string(path).expect("golden results file");
        serde_json::from_str(&text).expect("golden results file is JSON")
    }

    /// The error for a changed copy; the copy must not read.
    fn refused(value: &Value) -> String {
        let text = serde_json::to_string_pretty(value).expect("JSON");
        match read_results("changed.results.json", &text) {
            Ok(_) => panic!("a changed results file was accepted"),
            Err(e) => e,
        }
    }

    fn object(value: &mut Value) -> &mut serde_json::Map<String, Value> {
        value.as_object_mut().expect("an object")
    }

    struct Memory(&'static str);

    impl sheaf::compile::World for Memory {
        fn read(&self, path: &str) -> std::io::Result<Vec<u8>> {
            match path {
                "s.csv" => Ok(self.0.as_bytes().to_vec()),
                _ => Err(std::io::Error::from(std::io::ErrorKind::NotFound)),
            }
        }
        fn display(&self, path: &str) -> String {
            path.to_string()
        }
    }

    /// Summary input (README "input: summary") records `input`, and `origin` for exact sums
    /// only; the records read into the contract and keep its invariants.
    #[test]
    fn summary_records_say_what_the_input_was() {
        let exact = "a,b,n,origin,sum,squares\nx,p,2,10.5,1.0,0.52\nx,q,2,10.5,0.4,0.1\ny,p,2,10.5,-0.2,0.1\ny,q,2,10.5,2.0,2.02\n";
        let published =
            "a,b,n,mean,sd\nx,p,2,11,0.1\nx,q,2,10.7,0.2\ny,p,2,10.4,0.2\ny,q,2,11.5,0.1\n";
        for (csv, input, origin) in [
            (exact, InputKind::ExactSums, Some("10.5")),
            (published, InputKind::Summaries, None),
        ] {
            let doc = "```anova\nid: s\ndata: s.csv\nmodel: y ~ a + b\ninput: summary\ncompare: tukey\n```\n";
            let built = sheaf::compile::compile(
                "report.md",
                doc.as_bytes(),
                &Memory(csv),
                sheaf::render::Format::Markdown,
            )
            .expect("builds");
            let text = String::from_utf8(built.results).expect("UTF-8");
            let results = read_results("summary.results.json", &text).expect("reads");
            let Block::Anova(block) = &results.blocks[0] else {
                panic!("an anova record");
            };
            assert_eq!(block.input, input);
            assert_eq!(block.origin.as_deref(), origin);
            let mut p = Problems {
                file: "summary.results.json".into(),
                list: Vec::new(),
            };
            check_anova(&mut p, "blocks[0]", block);
            assert!(p.list.is_empty(), "{}", p.list.join("\n"));
        }
    }

    #[test]
    fn the_unchanged_copy_reads() {
        let text = serde_json::to_string(&golden_value("plant-growth")).expect("JSON");
        assert!(read_results("copy", &text).is_ok());
    }

    #[test]
    fn a_renamed_field_is_refused() {
        let mut v = golden_value("plant-growth");
        let term = object(&mut v["blocks"][0]["anova"]["terms"][0]);
        let p = term.remove("p").expect("the term has p");
        term.insert("p_value".into(), p);
        let e = refused(&v);
        assert!(e.contains("unknown field `p_value`"), "{e}");
        assert!(e.starts_with("changed.results.json: "), "{e}");
        assert!(e.contains("in blocks[0], id `growth`"), "{e}");
        assert!(e.contains("line "), "{e}");
    }

    #[test]
    fn a_vanished_field_is_refused() {
        let mut v = golden_value("plant-growth");
        object(&mut v["blocks"][0]["anova"]["residual"]).remove("ms");
        let e = refused(&v);
        assert!(e.contains("missing field `ms`"), "{e}");
    }

    #[test]
    fn a_vanished_field_that_may_be_null_is_refused() {
        let mut v = golden_value("plant-growth");
        object(&mut v["blocks"][0]["anova"]["terms"][0]).remove("critical_f");
        assert!(refused(&v).contains("missing field `critical_f`"));
        let mut v = golden_value("plant-growth");
        object(&mut v["blocks"][0]["checks"]).remove("levene");
        assert!(refused(&v).contains("missing field `levene`"));
    }

    #[test]
    fn an_undocumented_field_is_refused() {
        let mut v = golden_value("plant-growth");
        object(&mut v["blocks"][0]["groups"][0]).insert("cv".into(), Value::from(0.1));
        assert!(refused(&v).contains("unknown field `cv`"));
        let mut v = golden_value("plant-growth");
        object(&mut v).insert("created".into(), Value::from("today"));
        let e = refused(&v);
        assert!(e.contains("unknown field `created`"), "{e}");
    }

    #[test]
    fn power_records_are_held_to_their_fields_too() {
        let mut v = golden_value("power");
        object(&mut v["blocks"][0]).remove("curve");
        assert!(refused(&v).contains("missing field `curve`"));
        let mut v = golden_value("power");
        object(&mut v["blocks"][0]["curve"][0]).insert("se".into(), Value::from(0.1));
        assert!(refused(&v).contains("unknown field `se`"));
    }

    #[test]
    fn an_unknown_kind_or_method_is_refused() {
        let mut v = golden_value("plant-growth");
        v["blocks"][0]["kind"] = Value::from("mixed");
        assert!(refused(&v).contains("unknown variant `mixed`"));
        let mut v = golden_value("plant-growth");
        v["blocks"][0]["comparisons"][0]["method"] = Value::from("tukey-kramer");
        assert!(refused(&v).contains("unknown variant `tukey-kramer`"));
    }

    #[test]
    fn a_whole_number_written_as_a_real_is_refused() {
        let mut v = golden_value("plant-growth");
        v["blocks"][0]["anova"]["residual"]["df"] = Value::from(27.0);
        assert!(refused(&v).contains("invalid type"));
    }

    /// The invariants of a copy (of an HTML results file) that still reads.
    fn problems(case_name: &str, value: &Value) -> Vec<String> {
        problems_as(case_name, Format::Html, value)
    }

    fn problems_as(case_name: &str, format: Format, value: &Value) -> Vec<String> {
        let text = serde_json::to_string(value).expect("JSON");
        let r = read_results("changed", &text).expect("the copy still reads");
        check_file(&case(case_name), format, &r, "changed")
    }

    #[test]
    fn the_invariants_hold_on_the_unchanged_copy() {
        assert_eq!(
            problems("robust-methods", &golden_value("robust-methods")),
            Vec::<String>::new()
        );
    }

    #[test]
    fn a_broken_invariant_is_reported() {
        let mut v = golden_value("plant-growth");
        v["blocks"][0]["anova"]["terms"][0]["p"] = Value::from(1.5);
        let found = problems("plant-growth", &v);
        assert!(
            found.iter().any(|e| e.contains("p is not a probability")),
            "{found:?}"
        );

        let mut v = golden_value("plant-growth");
        v["inputs"][0]["sha256"] = Value::from("152cdae1");
        let found = problems("plant-growth", &v);
        assert!(
            found.iter().any(|e| e.contains("64 lowercase hex")),
            "{found:?}"
        );

        let mut v = golden_value("plant-growth");
        v["schema"] = Value::from(3);
        assert!(
            problems("plant-growth", &v)
                .iter()
                .any(|e| e.contains("schema"))
        );

        let mut v = golden_value("plant-growth");
        let diff = v["blocks"][0]["comparisons"][0]["pairs"][0]["diff"]
            .as_f64()
            .expect("diff");
        v["blocks"][0]["comparisons"][0]["pairs"][0]["diff"] = Value::from(-diff);
        let found = problems("plant-growth", &v);
        assert!(
            found.iter().any(|e| e.contains("is not mean(")),
            "{found:?}"
        );
    }

    #[test]
    fn a_figure_that_is_not_the_file_beside_the_report_is_reported() {
        let md = case("figures").join("expected/report.md.results.json");
        let text = std::fs::read_to_string(md).expect("golden results file");
        let golden: Value = serde_json::from_str(&text).expect("JSON");
        assert_eq!(
            problems_as("figures", Format::Md, &golden),
            Vec::<String>::new()
        );

        let mut v = golden.clone();
        v["blocks"][0]["figures"][0]["sha256"] = Value::from("0".repeat(64));
        let found = problems_as("figures", Format::Md, &v);
        assert!(
            found.iter().any(|e| e.contains("sha256 is not that of")),
            "{found:?}"
        );

        let mut v = golden.clone();
        v["blocks"][0]["figures"][0]["file"] = Value::Null;
        let found = problems_as("figures", Format::Md, &v);
        assert!(
            found.iter().any(|e| e.contains("file is null")),
            "{found:?}"
        );

        // The Markdown copy read as the HTML file: every figure names a file.
        assert!(!problems_as("figures", Format::Html, &golden).is_empty());
    }
}
