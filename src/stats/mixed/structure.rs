//! Covariance structures over the occasions of a repeated factor
//! (mixed-models spec 2.1, 2.3.1, 7.4): Σ(ψ) over the k occasions, its
//! first derivatives and, for AR(1), its second derivatives. Parameters are
//! on the variance-covariance scale, where CS and UN are linear in ψ.

use nalgebra::DMatrix;

/// The covariance of one subject's observations over the occasions.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Structure {
    /// Σ = σ²ₛJ + σ²I with ψ = (σ²ₛ, σ²). The common covariance σ²ₛ may be
    /// negative as long as Σ is positive definite (σ² + kσ²ₛ > 0; spec
    /// 2.3.1), unlike a random subject intercept.
    CompoundSymmetry,
    /// Σⱼₗ = σ²ρ^|tⱼ − tₗ| with ψ = (σ², ρ), |ρ| < 1. When some time
    /// difference is not a whole number, ρ^d needs ρ > 0, and 0 < ρ < 1 is
    /// required.
    Autoregressive,
    /// Σ free and positive definite: ψ = the σⱼₗ, j ≤ l, in the order
    /// (1,1), (1,2), (2,2), (1,3), … (k(k + 1)/2 parameters).
    Unstructured,
}

impl Structure {
    /// Number of covariance parameters over `occasions` occasions.
    pub fn parameter_count(self, occasions: usize) -> usize {
        match self {
            Self::CompoundSymmetry | Self::Autoregressive => 2,
            Self::Unstructured => occasions * (occasions + 1) / 2,
        }
    }

    /// The structure's name, for messages.
    pub fn name(self) -> &'static str {
        match self {
            Self::CompoundSymmetry => "compound symmetry",
            Self::Autoregressive => "first-order autoregressive",
            Self::Unstructured => "unstructured",
        }
    }
}

/// A structure over k occasions at given times.
#[derive(Debug, Clone)]
pub(crate) struct Pattern {
    pub structure: Structure,
    pub k: usize,
    /// |tⱼ − tₗ| for every pair of occasions.
    lag: DMatrix<f64>,
    /// Every lag is a whole number, so ρ^d is defined for ρ < 0.
    whole_lags: bool,
    /// The (j, l) of each unstructured parameter.
    pairs: Vec<(usize, usize)>,
}

/// ρ^e·c, 0 when the coefficient c is 0 (so 0·0⁻¹ never arises).
fn power(rho: f64, e: f64, c: f64, whole: bool) -> f64 {
    if c == 0.0 {
        0.0
    } else if whole {
        c * rho.powi(e as i32)
    } else {
        c * rho.powf(e)
    }
}

impl Pattern {
    /// `times` holds one finite time per occasion, all distinct.
    pub fn new(structure: Structure, times: &[f64]) -> Self {
        let k = times.len();
        let lag = DMatrix::from_fn(k, k, |j, l| (times[j] - times[l]).abs());
        let whole_lags = lag.iter().all(|d| d.fract() == 0.0 && *d < 1e9);
        let pairs = (0..k).flat_map(|l| (0..=l).map(move |j| (j, l))).collect();
        Self {
            structure,
            k,
            lag,
            whole_lags,
            pairs,
        }
    }

    pub fn n_params(&self) -> usize {
        self.structure.parameter_count(self.k)
    }

    /// The (j, l) of unstructured parameter i.
    pub fn pair(&self, i: usize) -> (usize, usize) {
        self.pairs[i]
    }

    pub fn param_name(&self, i: usize) -> String {
        match (self.structure, i) {
            (Structure::CompoundSymmetry, 0) => "common covariance".into(),
            (Structure::CompoundSymmetry, _) => "residual variance".into(),
            (Structure::Autoregressive, 0) => "variance".into(),
            (Structure::Autoregressive, _) => "correlation".into(),
            (Structure::Unstructured, _) => {
                let (j, l) = self.pairs[i];
                if j == l {
                    format!("variance at occasion {}", j + 1)
                } else {
                    format!("covariance of occasions {} and {}", j + 1, l + 1)
                }
            }
        }
    }

    /// True for a parameter that may take either sign.
    pub fn signed(&self, i: usize) -> bool {
        match self.structure {
            Structure::CompoundSymmetry => i == 0,
            Structure::Autoregressive => i == 1 && self.whole_lags,
            Structure::Unstructured => self.pairs[i].0 != self.pairs[i].1,
        }
    }

    /// True for a parameter that scales with the overall variance.
    pub fn scales(&self, i: usize) -> bool {
        !(self.structure == Structure::Autoregressive && i == 1)
    }

    /// V is linear in ψ (no second derivatives).
    pub fn linear(&self) -> bool {
        self.structure != Structure::Autoregressive
    }

    /// ψ is in the parameter space: Σ positive definite (and |ρ| < 1).
    pub fn admissible(&self, psi: &[f64]) -> bool {
        if psi.len() != self.n_params() || psi.iter().any(|v| !v.is_finite()) {
            return false;
        }
        match self.structure {
            Structure::CompoundSymmetry => psi[1] > 0.0 && psi[1] + self.k as f64 * psi[0] > 0.0,
            Structure::Autoregressive => {
                let low = if self.whole_lags { -1.0 } else { 0.0 };
                psi[0] > 0.0 && psi[1] > low && psi[1] < 1.0
            }
            Structure::Unstructured => self.sigma(psi).cholesky().is_some(),
        }
    }

    /// Starting points before the scale is profiled (spec 2.3.2, 2.3.7):
    /// covariances equal to the variance for CS, ρ = 0.5 and then ρ = 0
    /// for AR(1), the identity for UN.
    pub fn starts(&self) -> Vec<Vec<f64>> {
        match self.structure {
            Structure::CompoundSymmetry => vec![vec![1.0, 1.0]],
            Structure::Autoregressive if self.whole_lags => vec![vec![1.0, 0.5], vec![1.0, 0.0]],
            Structure::Autoregressive => vec![vec![1.0, 0.5]],
            Structure::Unstructured => vec![
                self.pairs
                    .iter()
                    .map(|(j, l)| if j == l { 1.0 } else { 0.0 })
                    .collect(),
            ],
        }
    }

    /// Σ(ψ) over all k occasions.
    pub fn sigma(&self, psi: &[f64]) -> DMatrix<f64> {
        let k = self.k;
        match self.structure {
            Structure::CompoundSymmetry => {
                DMatrix::from_fn(k, k, |j, l| psi[0] + if j == l { psi[1] } else { 0.0 })
            }
            Structure::Autoregressive => DMatrix::from_fn(k, k, |j, l| {
                power(psi[1], self.lag[(j, l)], psi[0], self.whole_lags)
            }),
            Structure::Unstructured => {
                let mut s = DMatrix::zeros(k, k);
                for (&(j, l), v) in self.pairs.iter().zip(psi) {
                    s[(j, l)] = *v;
                    s[(l, j)] = *v;
                }
                s
            }
        }
    }

    /// ∂Σ/∂ψₐ.
    pub fn first(&self, psi: &[f64], a: usize) -> DMatrix<f64> {
        let k = self.k;
        match (self.structure, a) {
            (Structure::CompoundSymmetry, 0) => DMatrix::from_element(k, k, 1.0),
            (Structure::CompoundSymmetry, _) => DMatrix::identity(k, k),
            (Structure::Autoregressive, 0) => DMatrix::from_fn(k, k, |j, l| {
                power(psi[1], self.lag[(j, l)], 1.0, self.whole_lags)
            }),
            (Structure::Autoregressive, _) => DMatrix::from_fn(k, k, |j, l| {
                let d = self.lag[(j, l)];
                power(psi[1], d - 1.0, psi[0] * d, self.whole_lags)
            }),
            (Structure::Unstructured, _) => {
                let (j, l) = self.pairs[a];
                let mut e = DMatrix::zeros(k, k);
                e[(j, l)] = 1.0;
                e[(l, j)] = 1.0;
                e
            }
        }
    }

    /// ∂²Σ/∂ψₐ∂ψ_b, `None` where it is 0 (always, but for AR(1)).
    pub fn second(&self, psi: &[f64], a: usize, b: usize) -> Option<DMatrix<f64>> {
        if self.structure != Structure::Autoregressive || a + b == 0 {
            return None;
        }
        let k = self.k;
        let whole = self.whole_lags;
        Some(if a + b == 1 {
            DMatrix::from_fn(k, k, |j, l| {
                let d = self.lag[(j, l)];
                power(psi[1], d - 1.0, d, whole)
            })
        } else {
            DMatrix::from_fn(k, k, |j, l| {
                let d = self.lag[(j, l)];
                power(psi[1], d - 2.0, psi[0] * d * (d - 1.0), whole)
            })
        })
    }
}

#[cfg(test)]
#[path = "structure_tests.rs"]
mod tests;
