//! What a block with covariates adds to its outcome (analysis of
//! covariance): each covariate's common slope and the value the means are
//! adjusted to, the groups' covariate means and ranges, the balance check,
//! the test of equal slopes, and, where it fails, the separate slopes.

/// A test by F with its degrees of freedom.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct FTest {
    pub f: f64,
    pub df1: f64,
    pub df2: f64,
    pub p: f64,
}

/// One group (a level of the treatment factor, or a treatment cell) as
/// the covariate saw it.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct CovariateGroup {
    pub label: String,
    pub n: usize,
    pub mean: f64,
    pub min: f64,
    pub max: f64,
}

/// One covariate: its common slope and where the means are adjusted to.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Covariate {
    pub name: String,
    /// The grand mean over the rows analysed: the value every adjusted mean
    /// is predicted at.
    pub mean: f64,
    pub min: f64,
    pub max: f64,
    /// Digits after the decimal point in the data.
    pub decimals: u32,
    /// The common slope (response units per covariate unit), its SE and
    /// df: the residual df, or in a mixed model its own (Kenward-Roger or
    /// Satterthwaite).
    pub slope: f64,
    pub se: f64,
    pub df: f64,
    pub groups: Vec<CovariateGroup>,
    /// The covariate compared among the groups (one-way F): a clear
    /// difference suggests the treatment may have changed it.
    pub balance: FTest,
}

/// A group's own slope in the separate-slopes model, and its mean
/// predicted at the covariate's grand mean.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct GroupSlope {
    pub label: String,
    pub slope: f64,
    pub se: f64,
    /// The df of the slope's SE (the separate model's residual df, or in a
    /// mixed model the slope's own).
    pub df: f64,
    pub mean_at: f64,
    pub mean_at_se: f64,
}

/// The difference between two groups' lines at one covariate value, from
/// the separate-slopes model (`b` minus `a`), unadjusted for multiplicity.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct LineDifference {
    pub a: usize,
    pub b: usize,
    pub at: f64,
    pub estimate: f64,
    pub se: f64,
    pub df: f64,
    pub t: f64,
    pub p: f64,
    pub lower: f64,
    pub upper: f64,
}

/// Where along the covariate two groups' lines differ at α (Johnson and
/// Neyman 1936): the boundaries, and the parts of the observed range
/// where the difference is significant.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct DifferenceRegion {
    pub a: usize,
    pub b: usize,
    /// Where the difference's interval touches zero, ascending (none when
    /// it never does).
    pub boundaries: Vec<f64>,
    /// Closed ranges within the observed covariate range where the groups
    /// differ significantly.
    pub significant: Vec<(f64, f64)>,
}

/// The separate-slopes model of one factor and one covariate, or in a
/// mixed model of the treatment cells and one covariate.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct SeparateSlopes {
    /// The residual mean square and df of the fixed-effects model; NaN in
    /// a mixed model, where each estimate has its own df.
    pub ms: f64,
    pub df: f64,
    pub groups: Vec<GroupSlope>,
    pub differences: Vec<LineDifference>,
    pub regions: Vec<DifferenceRegion>,
}

/// The test of equal slopes: every treatment-by-covariate term at once.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct SlopesTest {
    pub ss: f64,
    pub test: FTest,
}

/// One comparison family's means before adjustment, and each level's
/// covariate means, for the adjusted-means table.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct AdjustedFamily {
    pub term: String,
    pub within: Option<String>,
    pub unadjusted: Vec<f64>,
    /// `covariate_means[c][l]`: covariate c's mean at level l.
    pub covariate_means: Vec<Vec<f64>>,
}

/// Everything a block with covariates adds.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct CovariateDetail {
    pub covariates: Vec<Covariate>,
    /// The groups the balance check and the slopes test compare (the
    /// treatment factors' names joined by ` × `).
    pub groups_of: String,
    /// `None` when no residual df are left for it.
    pub slopes: Option<SlopesTest>,
    /// One factor and one covariate, without blocks, when the slopes test
    /// rejects at α.
    pub separate: Option<SeparateSlopes>,
    pub families: Vec<AdjustedFamily>,
}

impl CovariateDetail {
    /// The slopes differ at α: one adjusted mean per group is not a full
    /// answer.
    pub fn slopes_differ(&self, alpha: f64) -> bool {
        self.slopes.as_ref().is_some_and(|s| s.test.p < alpha)
    }

    /// The before-adjustment view of one family, if it has one.
    pub fn family(&self, term: &str, within: Option<&str>) -> Option<&AdjustedFamily> {
        self.families
            .iter()
            .find(|f| f.term == term && f.within.as_deref() == within)
    }
}
