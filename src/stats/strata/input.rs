//! What the stratum analysis is given.

use crate::stats::linear::{Layout, TermFactors};

/// The data of a multi-stratum analysis, all per observation.
#[derive(Debug, Clone, Copy)]
pub struct StrataInput<'a> {
    /// The response, decimal-shifted by the caller (every SS is invariant).
    pub y: &'a [f64],
    /// The value subtracted from the response: grand mean = shift + mean(y).
    pub shift: f64,
    /// The treatment factors: their numbers of levels and each observation's
    /// level of each.
    pub treatments: &'a Layout,
    /// The fixed model's terms over the treatment factors, in model order.
    pub terms: &'a [TermFactors],
    /// The random (stratum-defining) terms, one "factor" per term: each
    /// observation's unit of each (nested terms such as block:variety formed
    /// by the caller from label combinations).
    pub random: &'a Layout,
}

impl StrataInput<'_> {
    pub fn len(&self) -> usize {
        self.y.len()
    }

    pub fn is_empty(&self) -> bool {
        self.y.is_empty()
    }
}
