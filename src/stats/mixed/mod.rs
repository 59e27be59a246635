//! Linear mixed models with independent random terms, fitted by REML
//! (mixed-models spec sections 2-4, 6.2).
//!
//! y = Xβ + Σⱼ Zⱼuⱼ + e with uⱼ ~ N(0, σ²ⱼI) and e ~ N(0, σ²I); the fixed
//! part is a [`FixedDesign`] (sum-to-zero coding from `stats::linear`,
//! aliased columns dropped by its QR), each random term a level index per
//! observation ([`RandomTerm`]; nested terms come from label combinations).
//!
//! **Computation.** Only the cross-products of W = [Z X y] are formed
//! (Henderson's mixed-model equations with the Woodbury identity, spec 2.2),
//! so after one pass over the rows the cost depends on q + p, not on N; no
//! N×N matrix is ever built, the Kenward-Roger and Satterthwaite matrices
//! included. The random term with the most levels (q₁ of them) is
//! eliminated in closed form, since its Z'Z is diagonal, and the other
//! q₂ = q − q₁ random columns by a dense Cholesky (`elimination`): the
//! criterion costs O(q₁(q₂ + p)² + q₂³), the derivatives O(q²(q₂ + p))
//! more, instead of O((q + p)³). q is limited to [`MAX_RANDOM_LEVELS`] and
//! p to [`MAX_FIXED_COLUMNS`] (an error names the sizes beyond that).
//!
//! **Parameters and optimiser.** ψ = (σ²₁, …, σ²_J, σ²) on the
//! variance scale (V linear in ψ, so KR's second-derivative terms vanish);
//! the relative SDs θⱼ = σⱼ/σ ≥ 0 reach 0 exactly. Start: θ = 1 with σ²
//! profiled. Fisher scoring, then Newton with the observed information once
//! the relative step is below 1e-6 (or after 30 iterations), step halving
//! with variances projected onto ψ ≥ 0 (a bound is reached exactly), an
//! active set holding a variance at 0 while its score points outwards, a
//! diagonally scaled gradient step when the projected step cannot move, and
//! σ² re-profiled after each step. Convergence: |Δd| ≤ 1e-10·(1 + |d|)
//! and max relative step ≤ 1e-10 and max |∂d/∂ψᵢ|·|ψᵢ| ≤ 1e-6 on the free
//! parameters, within 200 iterations; otherwise an `Err` with the last
//! criterion and gradient. Then the observed information on the free
//! parameters, scaled by the expected information's diagonal, must be
//! positive definite (eigenvalue ratio above 1e-8).
//!
//! **Sizes measured** (`cargo bench --bench mixed_reml`, release build, one
//! core of a shared development machine under a load of about five, two
//! runs): an invented split-plot with 20,000 rows, 50 blocks and 500 whole
//! plots (q = 550, p = 80) fits with its three KR tests in 0.11-0.15 s
//! (0.82-1.09 s by the dense method before the elimination, same runs); the
//! layout of `bench/mixed.sh` (q = 600, p = 20) in 0.09-0.10 s; q = 1100 in
//! 0.34-0.40 s; q = 1500, the limit, in 0.62-0.71 s (13.0 s before). A
//! layout whose levels are spread over several large crossed terms gains
//! less: their q₂ columns still take a dense Cholesky, which is why the
//! limit stays where it is. Profile intervals re-fit the model about forty
//! times per component: 5.6 s for the three SDs at q = 550 (44-48 s before;
//! milliseconds on the check datasets), so a caller should offer them for
//! small q only.
//! Everything is sequential with a fixed order of operations: no thread
//! count, clock or hash order enters.
//!
//! **Criterion.** d = −2ℓ_R in the coding-invariant form (with −ln|X'X|)
//! and as fitted (without); AIC = d + 2k and BIC = d + k·ln(N − p) with k
//! the number of variance parameters (residual included) and the invariant
//! d (differences are the same under either form).
//!
//! **Tests.** Wald F for Lβ = 0 with Kenward-Roger (default) or
//! Satterthwaite df, the latter with observed (default) or expected
//! information; Type III rows from a term's columns; single contrasts
//! (EMMs, differences) with SE and df. Components at 0 are left out of ψ
//! for the df.
//!
//! **Linear algebra.** nalgebra 0.34 (Cholesky, triangular solves,
//! symmetric eigen): pure Rust, single-threaded, so results do not depend
//! on the machine's thread count; 0.35 needs a newer Rust than the
//! project's minimum (1.88). Its matrix products pick SIMD kernels by CPU
//! at run time, so the last bits may differ between processors, never
//! between runs.
//!
//! **Extending.** The optimiser, the df code and the profiles see the
//! model only through `model::CovarianceModel` (ψ, d, its derivatives, Φ,
//! Pᵢ, Qᵢⱼ); R-side structures per subject are further implementations.
//!
//! **Repeated measures** ([`fit_repeated`]): y = Xβ + e with e independent
//! between subjects and cov(e) = Σ(ψ) within a subject, restricted to the
//! occasions it has (compound symmetry, AR(1), unstructured; spec 7.4,
//! 7.5), computed per subject block, never as an N×N matrix.

mod chi_square_interval;
mod components;
mod crossprod;
mod ddf;
mod design;
mod elimination;
mod error;
mod fit;
mod fit_statistics;
mod inference;
mod model;
mod normalised;
mod optimiser;
mod prediction;
mod profile;
mod repeated_fit;
mod repeated_layout;
mod structure;
mod subjects;

pub use ddf::{ContrastTest, Ddf, DfMethod, Information, WaldTest};
pub use design::{FixedDesign, RandomTerm};
pub use error::MixedError;
pub use fit::{MAX_FIXED_COLUMNS, MAX_RANDOM_LEVELS, MixedFit, VarianceComponent, fit};
pub use fit_statistics::FitStatistics;
pub use inference::FixedInference;
pub use normalised::StructuredResiduals;
pub use prediction::{PredictedTerm, Predictions};
pub use profile::SdInterval;
pub use repeated_fit::{CovarianceParameter, MAX_KR_ENTRIES, RepeatedFit, fit_repeated};
pub use repeated_layout::{MAX_OCCASIONS, RepeatedLayout};
pub use structure::Structure;
