//! The dose-response tests of a block (linear-extensions specification E):
//! each procedure's steps against the control and the NOEC and LOEC it
//! gives. Doses are in increasing order; the control is not a dose.

use crate::stats::dose::Direction;

/// A procedure that reads the NOEC and LOEC, in the order the report gives them.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum DoseMethod {
    Williams,
    Jonckheere,
    Ordinal,
    /// Dunnett's many-to-one comparisons (`compare: dunnett`), read for the NOEC.
    Dunnett,
    Steel,
}

impl DoseMethod {
    /// The name in the results file and in prose paths.
    pub fn key(self) -> &'static str {
        match self {
            DoseMethod::Williams => "williams",
            DoseMethod::Jonckheere => "jonckheere",
            DoseMethod::Ordinal => "ordinal",
            DoseMethod::Dunnett => "dunnett",
            DoseMethod::Steel => "steel",
        }
    }

    /// The name in captions and sentences.
    pub fn title(self) -> &'static str {
        match self {
            DoseMethod::Williams => "Williams' test",
            DoseMethod::Jonckheere => "Jonckheere-Terpstra step-down",
            DoseMethod::Ordinal => "ordinal linear-trend step-down",
            DoseMethod::Dunnett => "Dunnett's test",
            DoseMethod::Steel => "Steel's test",
        }
    }

    /// Step-down procedures stop at the first dose without an effect;
    /// many-to-one procedures test every dose.
    pub fn steps_down(self) -> bool {
        !matches!(self, DoseMethod::Dunnett | DoseMethod::Steel)
    }
}

/// A dose, with the data at it.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct DoseLevel {
    pub level: String,
    pub dose: f64,
    pub n: usize,
    pub mean: f64,
}

/// Where a p-value comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum PSource {
    /// Exact null distribution (continuous data: no ties between groups).
    Exact,
    /// Normal approximation.
    Normal,
    /// Student's t or the procedure's own t-type distribution.
    T,
}

impl PSource {
    pub fn key(self) -> &'static str {
        match self {
            PSource::Exact => "exact",
            PSource::Normal => "normal",
            PSource::T => "t",
        }
    }
}

/// One dose's line in a procedure's table. For step-down trend tests the
/// line of dose j is the test on the control and doses 1…j.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct DoseStep {
    /// Index into `DoseDetail::doses`.
    pub dose: usize,
    /// Williams' t̄, J in the tested direction, the contrast's t, Steel's
    /// U in the tested direction, or Dunnett's t.
    pub statistic: f64,
    /// The standardised statistic of the rank tests.
    pub z: Option<f64>,
    /// Williams' restricted (amalgamated) mean.
    pub restricted_mean: Option<f64>,
    pub critical: Option<f64>,
    pub df: Option<f64>,
    pub p: f64,
    pub p_source: PSource,
    /// False for doses below a step-down procedure's stop.
    pub tested: bool,
    pub significant: bool,
}

/// One procedure's result.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct DoseTest {
    pub method: DoseMethod,
    /// Lowest dose first.
    pub steps: Vec<DoseStep>,
    /// The lowest dose with an effect; `None` when no dose has one.
    pub loec: Option<usize>,
    /// Why a p is not exact where an exact one exists (ties, size).
    #[serde(default)]
    pub approximation: Option<String>,
    /// Williams: the critical values come from the exact distribution for
    /// unequal dose replication, which no published table covers.
    #[serde(default)]
    pub unequal_replication: bool,
}

/// The NOEC as a procedure's LOEC implies it.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Noec {
    /// A tested dose.
    Dose(usize),
    /// The lowest tested dose already has an effect.
    BelowLowest,
    /// No dose has an effect: the NOEC is at least the highest tested dose.
    AtLeastHighest,
}

impl DoseTest {
    pub fn noec(&self) -> Noec {
        match self.loec {
            None => Noec::AtLeastHighest,
            Some(0) => Noec::BelowLowest,
            Some(l) => Noec::Dose(l - 1),
        }
    }
}

/// A dose below which the response moved against the tested direction.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Reversal {
    pub dose: usize,
    pub t: f64,
    pub df: f64,
    /// One-sided p in the direction opposite to the one tested.
    pub p: f64,
}

#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct DoseDetail {
    pub factor: String,
    pub control: String,
    pub control_n: usize,
    pub control_mean: f64,
    pub direction: Direction,
    pub alpha: f64,
    /// Where the doses came from: "names" or "given".
    pub doses_from: String,
    pub doses: Vec<DoseLevel>,
    pub tests: Vec<DoseTest>,
    /// Doses that differ from the control in the untested direction: the
    /// step-down tests assume a monotone response.
    pub reversals: Vec<Reversal>,
    /// The one-way ANOVA's error mean square and df (Williams, ordinal).
    pub mse: f64,
    pub df: f64,
}

impl DoseDetail {
    /// Whether the procedures disagree about the LOEC.
    pub fn disagree(&self) -> bool {
        self.tests.windows(2).any(|w| w[0].loec != w[1].loec)
    }
}
