//! Mauchly's test of sphericity and the epsilon corrections (spec 7.2-7.3)
//! for one within-subject effect with p ≥ 2 contrasts.

use nalgebra::DMatrix;

use crate::stats::dist::chi2_sf;
use crate::stats::sum::neumaier;

/// Below this share of unexplained variance a contrast counts as a linear
/// combination of the others (about 1e4 times the rounding of the SSCP).
const SINGULAR_SHARE: f64 = 1e-12;

/// Mauchly's (1940) test on M = C'SC, S the pooled residual covariance.
#[derive(Debug, Clone, PartialEq)]
pub struct MauchlyTest {
    /// W = |M| / (tr M / p)^p, in (0, 1].
    pub w: f64,
    /// χ² = −ν·ρ·ln W, ρ = 1 − (2p² + p + 2)/(6pν).
    pub chi_sq: f64,
    /// p(p + 1)/2 − 1.
    pub df: usize,
    /// P(χ²_df > χ²): the usual first-order p-value.
    pub p: f64,
    /// The p-value with Anderson's second-order term ω₂ (2003, §10.7, from
    /// memory; formula of spec 7.2): p + ω₂·[P(χ²_{df+4} > χ²) − p]. A
    /// refinement for small ν; other software may print a variant of it, so
    /// it is kept apart from `p`.
    pub p_second_order: f64,
}

/// The sphericity corrections of one effect (spec 7.3).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Epsilons {
    /// Greenhouse-Geisser (Box 1954): (tr M)² / (p·tr M²), in [1/p, 1].
    pub gg: f64,
    /// Huynh-Feldt with Lecoutre's (1991) numerator,
    /// ((ν + 1)·p·ε̂ − 2) / (p·(ν − p·ε̂)), as computed (may exceed 1).
    pub hf_uncapped: f64,
    /// `hf_uncapped` capped at 1: the value used for the corrected p.
    pub hf: f64,
    /// Huynh and Feldt's (1976) original (N·p·ε̂ − 2) / (p·(ν − p·ε̂)),
    /// uncapped; wrong when there are between-subject terms (N ≠ ν + 1) and
    /// given only for comparison.
    pub hf_original: f64,
    /// The lower bound 1/p.
    pub lower_bound: f64,
}

impl Epsilons {
    /// Sphericity holds exactly (one contrast): every epsilon is 1.
    pub(crate) fn one() -> Self {
        Epsilons {
            gg: 1.0,
            hf_uncapped: 1.0,
            hf: 1.0,
            hf_original: 1.0,
            lower_bound: 1.0,
        }
    }
}

/// Mauchly's test and the epsilons from the error SSCP (p × p, p ≥ 2) on ν
/// residual df (ν > p) with N subjects; None when M is not
/// positive definite to working precision.
pub(crate) fn sphericity(
    error: &DMatrix<f64>,
    residual_df: usize,
    subjects: usize,
) -> Option<(MauchlyTest, Epsilons)> {
    let nu = residual_df as f64;
    let p = error.nrows() as f64;
    let m = error / nu;
    let trace = neumaier(m.diagonal().iter().copied());
    let trace_sq = neumaier(m.iter().map(|x| x * x));
    let cholesky = m.clone().cholesky()?;
    // L_ii² / M_ii is the share of contrast i's variance that the earlier
    // contrasts do not explain; near zero, M is singular to working precision
    // and W would be rounding noise.
    let unexplained = (0..m.nrows()).map(|i| cholesky.l()[(i, i)].powi(2) / m[(i, i)]);
    if unexplained.fold(f64::INFINITY, f64::min) < SINGULAR_SHARE {
        return None;
    }
    let ln_det = 2.0 * neumaier(cholesky.l().diagonal().iter().map(|d| d.ln()));
    let ln_w = ln_det - p * (trace / p).ln();
    let rho = 1.0 - (2.0 * p * p + p + 2.0) / (6.0 * p * nu);
    let chi_sq = (-nu * rho * ln_w).max(0.0);
    let df = error.nrows() * (error.nrows() + 1) / 2 - 1;
    let p_first = chi2_sf(chi_sq, df as f64);
    let omega = (p + 2.0) * (p - 1.0) * (p - 2.0) * (2.0 * p.powi(3) + 6.0 * p * p + 3.0 * p + 2.0)
        / (288.0 * p * p * nu * nu * rho * rho);
    let p_second = p_first + omega * (chi2_sf(chi_sq, df as f64 + 4.0) - p_first);
    let test = MauchlyTest {
        w: ln_w.exp(),
        chi_sq,
        df,
        p: p_first,
        p_second_order: p_second,
    };
    let gg = trace * trace / (p * trace_sq);
    let huynh_feldt = |numerator_n: f64| (numerator_n * p * gg - 2.0) / (p * (nu - p * gg));
    let hf_uncapped = huynh_feldt(nu + 1.0);
    let epsilons = Epsilons {
        gg,
        hf_uncapped,
        hf: hf_uncapped.min(1.0),
        hf_original: huynh_feldt(subjects as f64),
        lower_bound: 1.0 / p,
    };
    Some((test, epsilons))
}
