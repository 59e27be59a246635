//! Orthonormal contrasts of the occasions: per within factor, and per
//! within-subject effect as their Kronecker product (spec 7.2).

use nalgebra::DMatrix;

/// The normalised Helmert contrasts of a factor with `levels` levels: an
/// orthonormal basis (levels × (levels − 1)) of the vectors orthogonal to 1.
/// Every test and epsilon is invariant to which orthonormal basis is used;
/// this one is exact to rounding and needs no factorisation.
pub(crate) fn helmert(levels: usize) -> DMatrix<f64> {
    DMatrix::from_fn(levels, levels - 1, |i, j| {
        let n = (j + 1) as f64;
        let scale = 1.0 / (n * (n + 1.0)).sqrt();
        match i.cmp(&(j + 1)) {
            std::cmp::Ordering::Less => scale,
            std::cmp::Ordering::Equal => -n * scale,
            std::cmp::Ordering::Greater => 0.0,
        }
    })
}

/// The unit-length constant vector (levels × 1): the factor averaged over.
fn average(levels: usize) -> DMatrix<f64> {
    DMatrix::from_element(levels, 1, 1.0 / (levels as f64).sqrt())
}

/// The k × p contrast matrix of the effect made of `factors` (indices into
/// `within`, increasing): the Kronecker product over all within factors, first
/// factor outermost (it varies slowest over the occasions), of the factor's
/// Helmert contrasts if it is in the effect and its averaging vector if not.
/// An empty `factors` gives the k × 1 between-subject score 1/√k.
pub(crate) fn effect_contrasts(within: &[usize], factors: &[usize]) -> DMatrix<f64> {
    let mut product = DMatrix::from_element(1, 1, 1.0);
    for (factor, &levels) in within.iter().enumerate() {
        let part = if factors.contains(&factor) {
            helmert(levels)
        } else {
            average(levels)
        };
        product = product.kronecker(&part);
    }
    product
}

/// Every within-subject effect: the non-empty subsets of the factors, main
/// effects first, then two-factor interactions, and so on; within one order
/// in lexicographic order of the factor indices.
pub(crate) fn within_effects(factors: usize) -> Vec<Vec<usize>> {
    let mut effects: Vec<Vec<usize>> = (1u64..(1u64 << factors))
        .map(|mask| (0..factors).filter(|f| mask >> f & 1 == 1).collect())
        .collect();
    effects.sort_by(|a, b| a.len().cmp(&b.len()).then_with(|| a.cmp(b)));
    effects
}
