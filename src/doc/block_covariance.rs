//! The `covariance` key of a repeated-measures block: the structure of the
//! errors over the repeated factor for the mixed model, and whether the
//! structures are compared by AIC and BIC. Without it the subject is a
//! random term (compound symmetry with a correlation that cannot be
//! negative).

use super::block::{Located, SpecError, bad};
use super::block_keys::AnovaDraft;
use super::keyvalue::Entry;

/// The covariance of one subject's errors over the occasions.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub enum CovarianceStructure {
    /// Equal variances, equal covariances.
    CompoundSymmetry,
    /// Covariances decaying with the time between occasions.
    Autoregressive,
    /// Every variance and covariance free.
    Unstructured,
}

impl CovarianceStructure {
    /// Every structure, in the order a comparison lists them.
    pub const ALL: [Self; 3] = [
        Self::CompoundSymmetry,
        Self::Autoregressive,
        Self::Unstructured,
    ];

    /// The structure's name in a sentence.
    pub fn name(self) -> &'static str {
        match self {
            Self::CompoundSymmetry => "compound symmetry",
            Self::Autoregressive => "first-order autoregressive",
            Self::Unstructured => "unstructured",
        }
    }

    /// The name used in the block key and the results file.
    pub fn key(self) -> &'static str {
        match self {
            Self::CompoundSymmetry => "compound-symmetry",
            Self::Autoregressive => "autoregressive",
            Self::Unstructured => "unstructured",
        }
    }
}

/// What `covariance` asks for.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Covariance {
    /// The structure the tests and comparisons use.
    pub structure: CovarianceStructure,
    /// Fit every structure and report AIC and BIC.
    pub compare: bool,
}

const HINT: &str = "write `compound-symmetry`, `autoregressive` or `unstructured`, optionally followed by `, compare`; or `compare` alone (the tests then use compound symmetry)";

/// Reads `covariance: <structure>`, `covariance: compare` or both,
/// separated by a comma.
pub(super) fn read_covariance(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    let mut structure = None;
    let mut compare = false;
    for word in e.value.split(',').map(|w| w.trim().to_ascii_lowercase()) {
        let named = CovarianceStructure::ALL
            .into_iter()
            .find(|s| s.key() == word);
        match (named, word.as_str()) {
            (Some(s), _) if structure.is_none() => structure = Some(s),
            (Some(_), _) => {
                return Err(bad(
                    e,
                    "`covariance` names one structure for the tests".into(),
                    "keep one structure; add `compare` to see how the others fit",
                ));
            }
            (None, "compare") => compare = true,
            _ => {
                return Err(bad(
                    e,
                    format!("unknown covariance structure `{word}`"),
                    HINT,
                ));
            }
        }
    }
    let covariance = Covariance {
        structure: structure.unwrap_or(CovarianceStructure::CompoundSymmetry),
        compare,
    };
    d.covariance = Some((e.clone(), covariance));
    Ok(())
}

/// `covariance` needs `subject`: a structure is over one subject's
/// occasions.
pub(super) fn covariance_keys(d: &AnovaDraft) -> Option<SpecError> {
    let (e, _) = d.covariance.as_ref()?;
    d.subject.is_none().then(|| {
        bad(
            e,
            "`covariance` applies to repeated measures".into(),
            "add `subject: <column>` naming the animal, plot or panellist measured repeatedly, or remove `covariance`",
        )
    })
}

/// The key as the block's specification keeps it.
pub(super) fn located_covariance(d: &AnovaDraft) -> Option<Located<Covariance>> {
    d.covariance.as_ref().map(|(e, c)| Located {
        value: *c,
        line: e.line,
        column: e.value_column,
    })
}
