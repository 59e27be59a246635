//! A polynomial trend over a quantitative factor's levels
//! (linear-extensions specification B.3, B.4): the orthogonal components
//! for the actual spacing and replication, the lack of fit after each, the
//! degree the curve uses, and the fitted curve.

/// One line of the trend table.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct TrendRow {
    pub degree: usize,
    pub df: f64,
    pub ss: f64,
    pub f: f64,
    pub p: f64,
    /// The denominator df of this row's F: the pooled error's for a
    /// fixed-effects model, the row's own in a mixed model.
    pub error_df: f64,
}

/// What the degree rule found.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum TrendVerdict {
    /// The highest significant degree (at most 3) with no significant lack
    /// of fit after it.
    Degree(usize),
    /// No component is significant.
    NoTrend,
    /// Lack of fit is significant after every significant degree: no
    /// low-order polynomial describes the means.
    NotPolynomial,
}

/// The fitted polynomial in the factor's units: ŷ = Σ coefficients[j]·xʲ.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct TrendCurve {
    pub degree: usize,
    pub coefficients: Vec<f64>,
    pub se: Vec<f64>,
    /// The residual mean square of the polynomial regression (lack of fit
    /// pooled with pure error) and its df; in a mixed model (generalised
    /// least squares on the marginal means) NaN, and the df of the highest
    /// component used.
    pub ms: f64,
    pub df: f64,
    /// A quadratic's turning point with its Fieller set.
    #[serde(default)]
    pub optimum: Option<Optimum>,
}

/// The turning point x* = −b₁/(2b₂) of a fitted quadratic, with its
/// Fieller (1954) set {x : (b₁ + 2b₂x)² ≤ t² var(b₁ + 2b₂x)}.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Optimum {
    pub x: f64,
    /// A maximum (b₂ < 0) or a minimum.
    pub maximum: bool,
    pub set: FiellerSet,
    /// The confidence level of the set.
    pub level: f64,
    /// Whether x* lies within the tested values.
    pub within_range: bool,
}

/// The shape of a Fieller set: an interval only when the quadratic term is
/// clearly non-zero; otherwise the data do not locate the turning point.
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub enum FiellerSet {
    Bounded(f64, f64),
    /// Everything below the first value and above the second.
    TwoHalfLines(f64, f64),
    WholeLine,
}

#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct TrendDetail {
    pub factor: String,
    /// Each level's score, in level order.
    pub scores: Vec<(String, f64)>,
    /// Linear, quadratic, cubic (as the levels allow).
    pub components: Vec<TrendRow>,
    /// Lack of fit after each shown degree that leaves df.
    pub lack_of_fit: Vec<TrendRow>,
    /// The treatment sum of squares the components split.
    pub treatment_ss: f64,
    pub treatment_df: f64,
    /// The pooled error (NaN in a mixed model, where each row has its own).
    pub error_ms: f64,
    pub error_df: f64,
    /// In a mixed model, how each row's own denominator df was found;
    /// `None` for the pooled error of a fixed-effects model.
    pub df_method: Option<crate::doc::block::DdfMethod>,
    pub verdict: TrendVerdict,
    /// One-factor blocks and mixed models, with a chosen degree.
    pub curve: Option<TrendCurve>,
}

impl TrendDetail {
    /// The lack of fit after `degree`, if any df are left.
    pub fn lack_of_fit_after(&self, degree: usize) -> Option<&TrendRow> {
        self.lack_of_fit.iter().find(|r| r.degree == degree)
    }
}

/// "linear", "quadratic", "cubic", then "degree 4" and on.
pub fn degree_name(d: usize) -> String {
    match d {
        1 => "linear".into(),
        2 => "quadratic".into(),
        3 => "cubic".into(),
        _ => format!("degree {d}"),
    }
}
