//! What a repeated-measures block (`subject`) adds to the mixed-model
//! outcome: which factors vary within subjects and which between, how many
//! subjects the univariate analysis could use, and its within-subject tests
//! with Mauchly's test and the Greenhouse-Geisser and Huynh-Feldt
//! corrections (mixed-models spec 7.1-7.3, 7.5).

/// Mauchly's test of sphericity for one within-subject effect.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Mauchly {
    pub w: f64,
    pub chi_sq: f64,
    pub df: usize,
    /// First-order p (Mauchly 1940).
    pub p: f64,
}

/// A within-subject term of the univariate analysis: the uncorrected F and
/// its corrected p-values side by side.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct WithinTest {
    /// The term in the model's notation (`diet:week`).
    pub term: String,
    /// The within-subject effect whose contrasts, error and sphericity the
    /// term shares (`week` for `diet:week`).
    pub effect: String,
    pub df: f64,
    pub df_den: f64,
    pub f: f64,
    pub p: f64,
    pub p_gg: f64,
    pub p_hf: f64,
    pub p_lower_bound: f64,
    pub gg_epsilon: f64,
    /// Huynh-Feldt ε in Lecoutre's form, capped at 1 (the value used).
    pub hf_epsilon: f64,
    /// The same before the cap.
    pub hf_epsilon_uncapped: f64,
    /// `None` when the effect has one df: sphericity then holds trivially.
    pub sphericity: Option<Mauchly>,
}

/// The repeated-measures reading of a block.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct RepeatedDetail {
    /// The column naming the subjects.
    pub subject: String,
    /// Factors of the model that vary within subjects, and those constant
    /// within each subject.
    pub within: Vec<String>,
    pub between: Vec<String>,
    /// Subjects with data, and those complete (one observation at every
    /// combination of the within-subject factors' levels).
    pub subjects: usize,
    pub complete_subjects: usize,
    /// Every between-subject group has the same number of complete
    /// subjects (then weighting subjects or groups equally agrees).
    pub equal_groups: bool,
    /// Subjects left out of the univariate analysis (at most 100 listed).
    pub incomplete: Vec<String>,
    pub incomplete_count: usize,
    /// The within-subject tests, or why the univariate analysis was not
    /// possible.
    pub univariate: Result<Vec<WithinTest>, String>,
    /// The covariance structure the mixed model's tests use (`covariance`);
    /// `None` when the subject is a random term.
    pub covariance: Option<crate::outcome::covariance::CovarianceDetail>,
    /// What the profile figure draws (`plot: profile` or `subjects`).
    pub profile: Option<Profile>,
}

/// The means over time a profile figure draws: the model's estimated
/// marginal means at each level of the time factor, one series per level
/// of a between-subject factor, and, for `plot: subjects`, each subject's
/// observations.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Profile {
    /// The within-subject factor on the axis, and its levels.
    pub time: String,
    pub times: Vec<String>,
    /// The levels as numbers, when every level is one and they increase
    /// in level order: the axis then spaces them proportionally.
    pub positions: Option<Vec<f64>>,
    /// The between-subject factor whose levels are the lines (none: one
    /// line), and its levels.
    pub group: Option<String>,
    pub groups: Vec<String>,
    /// Per group, per time: (mean, lower, upper) at the block's confidence.
    pub means: Vec<Vec<(f64, f64, f64)>>,
    /// Per drawn subject: its group and its mean at each time (NaN where
    /// not observed); at most `PROFILE_SUBJECTS` subjects, in label order.
    pub subjects: Vec<(usize, Vec<f64>)>,
    /// Subjects in all (more than drawn when there are very many).
    pub subjects_total: usize,
}

/// Most subjects a profile figure draws as lines.
pub const PROFILE_SUBJECTS: usize = 300;
