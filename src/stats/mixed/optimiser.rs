//! The REML optimiser (mixed-models spec 2.3): Fisher scoring on ψ, then
//! Newton with the observed information once the relative step is small,
//! step halving with variances projected onto ψ ≥ 0, an active set for
//! variances held at 0, and the overall scale σ² profiled after every
//! accepted step (which can only lower d).
//!
//! Convergence (spec 2.3.4), all three at once, tested after each step:
//! |Δd| ≤ 1e-10·(1 + |d|); maxᵢ |Δψᵢ|/max(|ψᵢ|, |ψᵢ + Δψᵢ|) ≤ 1e-10 (a
//! parameter that stays at 0 counts 0); and on the free parameters
//! maxᵢ |∂d/∂ψᵢ|·|ψᵢ| ≤ 1e-6. At most 200 iterations; a Newton step that
//! leaves ψ exactly in place ends the search early with the same answer,
//! since every later iteration would repeat it.

use nalgebra::DMatrix;

use super::error::MixedError;
use super::model::{CovarianceModel, Derivatives};

/// Iteration cap (spec 2.3.4).
pub(crate) const MAX_ITERATIONS: usize = 200;
/// Relative step below which Newton replaces Fisher scoring.
const NEWTON_SWITCH: f64 = 1e-6;
/// Scoring iterations after which Newton is used regardless.
const NEWTON_AFTER: usize = 30;
const TOL_CRITERION: f64 = 1e-10;
const TOL_STEP: f64 = 1e-10;
const TOL_SCALED_GRADIENT: f64 = 1e-6;
/// Rounding allowed when a step is accepted: d may rise by this relative.
const ROUNDING: f64 = 1e-12;
const MAX_HALVINGS: usize = 60;

/// The REML estimate and how it was reached.
#[derive(Debug, Clone)]
pub(crate) struct Optimum {
    pub psi: Vec<f64>,
    pub criterion: f64,
    pub iterations: usize,
    pub max_scaled_gradient: f64,
    pub derivatives: Derivatives,
    /// Parameters neither held nor at 0 with the score pointing outwards.
    pub free: Vec<usize>,
}

/// Minimises d from `start`; parameters with `held[i]` stay at their start.
pub(crate) fn minimise(
    model: &dyn CovarianceModel,
    start: Vec<f64>,
    held: &[bool],
) -> Result<Optimum, MixedError> {
    let mut psi = start;
    let mut d = model.criterion(&psi)?;
    let mut newton = false;
    let mut last_move: Option<(f64, f64)> = None;
    let mut iteration = 0;
    loop {
        let der = model.derivatives(&psi)?;
        let free = free_parameters(model, &psi, &der.gradient, held);
        let scaled = free
            .iter()
            .map(|&i| (der.gradient[i] * psi[i]).abs())
            .fold(0.0, f64::max);
        let settled = scaled <= TOL_SCALED_GRADIENT;
        let moved_little = last_move
            .is_some_and(|(dd, step)| dd <= TOL_CRITERION * (1.0 + d.abs()) && step <= TOL_STEP);
        let converged = free.is_empty() || (settled && moved_little);
        let fail = || MixedError::NotConverged {
            iterations: iteration,
            criterion: d,
            gradient: der.gradient.clone(),
        };
        if !converged && iteration == MAX_ITERATIONS {
            return Err(fail());
        }
        let use_newton = newton || iteration >= NEWTON_AFTER;
        let found = match converged {
            true => None,
            false => descend(model, (&psi, d), &der, &free, use_newton)?,
        };
        let Some((candidate, d_new)) = found else {
            // Converged, or no decrease is possible at working precision
            // (an optimum only where the scaled gradient has settled).
            if converged || settled {
                return Ok(Optimum {
                    psi,
                    criterion: d,
                    iterations: iteration,
                    max_scaled_gradient: scaled,
                    derivatives: der,
                    free,
                });
            }
            return Err(fail());
        };
        let (candidate, d_new) = if held.iter().any(|h| *h) {
            (candidate, d_new)
        } else {
            rescaled(model, candidate, d_new)
        };
        // A step that left ψ exactly where it was, taken with Newton already
        // on, would be taken again at every iteration up to the cap (the
        // next one starts from the same ψ with the same direction): stop
        // now with the answer the cap would give.
        if candidate == psi && use_newton && !settled {
            return Err(fail());
        }
        let step = relative_step(&psi, &candidate);
        newton |= step < NEWTON_SWITCH;
        last_move = Some(((d - d_new).abs(), step));
        psi = candidate;
        d = d_new;
        iteration += 1;
    }
}

/// The accepted point of a step from `psi` (criterion `d`) and its
/// criterion, or `None` when no step lowers d.
fn descend(
    model: &dyn CovarianceModel,
    (psi, d): (&[f64], f64),
    der: &Derivatives,
    free: &[usize],
    newton: bool,
) -> Result<Option<(Vec<f64>, f64)>, MixedError> {
    let direction = step_direction(der, free, newton)?;
    let found = line_search(model, psi, d, &direction)?;
    if found.as_ref().is_none_or(|(c, _)| c == psi) {
        // The projected step left ψ in place (a variance at 0 whose score
        // points inwards while the step points outwards): a diagonally
        // scaled gradient step descends in every free coordinate.
        let fallback = line_search(model, psi, d, &scaled_gradient_step(der, free))?;
        if fallback.as_ref().is_some_and(|(c, _)| c != psi) {
            return Ok(fallback);
        }
    }
    Ok(found)
}

/// Indices of the parameters the step may move.
fn free_parameters(
    model: &dyn CovarianceModel,
    psi: &[f64],
    gradient: &[f64],
    held: &[bool],
) -> Vec<usize> {
    (0..psi.len())
        .filter(|&i| {
            let held_at_zero = model.may_be_zero(i) && psi[i] == 0.0 && gradient[i] >= 0.0;
            !held[i] && !held_at_zero
        })
        .collect()
}

/// −M⁻¹∇d on the free parameters (M: observed Hessian for Newton when it is
/// positive definite there, else the expected one), zero elsewhere.
fn step_direction(der: &Derivatives, free: &[usize], newton: bool) -> Result<Vec<f64>, MixedError> {
    let pick =
        |m: &DMatrix<f64>| DMatrix::from_fn(free.len(), free.len(), |r, c| m[(free[r], free[c])]);
    let g = nalgebra::DVector::from_iterator(free.len(), free.iter().map(|&i| der.gradient[i]));
    let newton_chol = if newton {
        pick(&der.hessian).cholesky()
    } else {
        None
    };
    let chol = match newton_chol {
        Some(c) => c,
        None => pick(&der.expected)
            .cholesky()
            .ok_or(MixedError::NotIdentified {
                smallest: 0.0,
                largest: der.expected.amax(),
            })?,
    };
    let step = chol.solve(&g);
    let mut out = vec![0.0; der.gradient.len()];
    for (k, &i) in free.iter().enumerate() {
        out[i] = -step[k];
    }
    Ok(out)
}

/// −∇dᵢ/E[∂²d/∂ψᵢ²] on the free parameters, zero elsewhere.
fn scaled_gradient_step(der: &Derivatives, free: &[usize]) -> Vec<f64> {
    let mut out = vec![0.0; der.gradient.len()];
    for &i in free {
        let curvature = der.expected[(i, i)];
        if curvature > 0.0 {
            out[i] = -der.gradient[i] / curvature;
        }
    }
    out
}

/// Halves the step until d does not rise beyond rounding. Variances are
/// projected onto ψ ≥ 0 (so a bound is reached exactly and the other
/// parameters still move); a positive-only parameter is kept above 0 by
/// starting from at most half the distance to 0.
fn line_search(
    model: &dyn CovarianceModel,
    psi: &[f64],
    d: f64,
    direction: &[f64],
) -> Result<Option<(Vec<f64>, f64)>, MixedError> {
    let mut t = 1.0f64;
    for (i, (&v, &s)) in psi.iter().zip(direction).enumerate() {
        if !model.may_be_zero(i) && !model.signed(i) && s < 0.0 && v + t * s <= 0.0 {
            t = 0.5 * v / -s;
        }
    }
    for _ in 0..MAX_HALVINGS {
        let candidate: Vec<f64> = psi
            .iter()
            .zip(direction)
            .enumerate()
            .map(|(i, (v, s))| {
                let c = v + t * s;
                if model.may_be_zero(i) { c.max(0.0) } else { c }
            })
            .collect();
        if let Ok(d_new) = model.criterion(&candidate)
            && d_new <= d + ROUNDING * d.abs()
        {
            return Ok(Some((candidate, d_new)));
        }
        t *= 0.5;
    }
    Ok(None)
}

/// The candidate with σ² profiled, when that lowers d.
fn rescaled(model: &dyn CovarianceModel, candidate: Vec<f64>, d: f64) -> (Vec<f64>, f64) {
    match model.profile_scale(&candidate) {
        Ok(p) => match model.criterion(&p) {
            Ok(dp) if dp <= d => (p, dp),
            _ => (candidate, d),
        },
        Err(_) => (candidate, d),
    }
}

/// Largest relative change of a parameter.
pub(crate) fn relative_step(old: &[f64], new: &[f64]) -> f64 {
    old.iter()
        .zip(new)
        .map(|(a, b)| {
            let scale = a.abs().max(b.abs());
            if scale == 0.0 {
                0.0
            } else {
                (a - b).abs() / scale
            }
        })
        .fold(0.0, f64::max)
}
