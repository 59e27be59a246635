//! ANOVA estimates of the variance components from the expected mean squares
//! (spec 5.3): each stratum's error MS estimates σ² + Σ k_R σ²_R over the
//! random terms R whose units lie within the stratum's units, a triangular
//! system solved from the residual upwards; each estimate is then a
//! combination Σ c_s E_s of stratum mean squares.

use super::combination::Combination;
use super::reason::StratumId;
use super::unit_structure::UnitStructure;

/// One variance component's ANOVA estimate.
#[derive(Debug, Clone, PartialEq)]
pub struct VarianceComponent {
    /// The random term (or the residual) whose variance this is.
    pub id: StratumId,
    /// Σ c_s E_s with its Satterthwaite df; `None` when a stratum it needs
    /// has no error df (the component cannot be estimated).
    pub estimate: Option<Combination>,
    /// The estimate is below zero (kept as computed; consistent with a zero
    /// component).
    pub negative: bool,
}

impl VarianceComponent {
    /// The χ² interval at the given confidence (exact for the residual of a
    /// balanced design, Satterthwaite's otherwise; spec 6.2). `None` when the
    /// estimate is missing or not positive.
    pub fn interval(&self, confidence: f64) -> Option<(f64, f64)> {
        self.estimate.as_ref()?.chi_square_interval(confidence)
    }
}

/// Coefficients over the strata (table order) of the component of each
/// stratum's own term (the residual's σ² for the last stratum).
pub(super) fn component_coefficients(structure: &UnitStructure) -> Vec<Vec<f64>> {
    let s = structure.partitions.len();
    let residual = s - 1;
    let mut coefficients = vec![Vec::new(); s];
    let mut unit = vec![0.0; s];
    unit[residual] = 1.0;
    coefficients[residual] = unit;
    // Finer strata come later in table order: solve from the bottom up.
    for g in (0..residual).rev() {
        let mut c = vec![0.0; s];
        c[g] += 1.0;
        c[residual] -= 1.0;
        for (r, below) in coefficients.iter().enumerate().take(residual).skip(g + 1) {
            if structure.above[r][g] {
                let k = structure.unit_size[r] as f64;
                c.iter_mut().zip(below).for_each(|(a, b)| *a -= k * b);
            }
        }
        let k = structure.unit_size[g] as f64;
        coefficients[g] = c.into_iter().map(|v| v / k).collect();
    }
    coefficients
}

/// The components in the caller's order: random terms, then the residual.
pub(super) fn variance_components(
    structure: &UnitStructure,
    coefficients: &[Vec<f64>],
    ms: &[Option<f64>],
    df: &[usize],
) -> Vec<VarianceComponent> {
    let mut order: Vec<usize> = (0..structure.ids.len()).collect();
    order.sort_by_key(|&g| structure.ids[g]);
    order
        .into_iter()
        .map(|g| {
            let estimate = Combination::new(coefficients[g].clone(), ms, df);
            let negative = estimate.as_ref().is_some_and(|e| e.value < 0.0);
            VarianceComponent {
                id: structure.ids[g],
                estimate,
                negative,
            }
        })
        .collect()
}
