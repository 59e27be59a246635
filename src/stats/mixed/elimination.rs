//! The random term with the most levels eliminated in closed form, the
//! others by a dense Cholesky (Woodbury identity, mixed-models spec 2.2).
//!
//! A term's indicator columns are disjoint, so Z₁'Z₁ = diag(n) and
//! H₁ = I + θ₁²Z₁Z₁' has H₁⁻¹ = I − Z₁·diag(θ₁²e)·Z₁' with
//! eₖ = 1/(1 + θ₁²nₖ). The other columns R = [Z₂ X y] (m of them) then see
//! G = R'H₁⁻¹R = R'R − (Z₁'R)'·diag(θ₁²e)·(Z₁'R) at O(q₁m²); the other
//! terms follow from A₂ = Λ₂G₂₂Λ₂ + I = L₂L₂' (O(q₂³)):
//! R'H⁻¹R = G − K'K with K = L₂⁻¹Λ₂G₂·, and ln|H| = Σₖ ln(1 + θ₁²nₖ) +
//! ln|A₂| (determinant lemma). The Z₁ rows need Z₁'H₁⁻¹Z₁ = diag(n∘e) and
//! Z₁'H₁⁻¹R = diag(e)·Z₁'R = B, giving Z₁'H⁻¹R = B − J'K and
//! Z₁'H⁻¹Z₁ = diag(n∘e) − J'J with J = L₂⁻¹Λ₂B₂'. The dense work is thus
//! O(q₁m² + q₂³) for the criterion instead of O((q + p)³), and O(q₁²q₂)
//! more when every block of W'H⁻¹W is wanted.

use std::ops::Range;

use nalgebra::DMatrix;

use super::crossprod::CrossProducts;
use super::error::MixedError;

/// The cross-products split into the leading term's columns and the rest.
#[derive(Debug, Clone)]
pub(crate) struct Elimination {
    /// Columns of W of the term with the most levels (the first such).
    lead: Range<usize>,
    /// The other columns of W in their order: random, then X, then y.
    rest: Vec<usize>,
    /// Number of random columns among `rest`.
    q_rest: usize,
    /// nₖ, the observations at each level of the leading term.
    counts: Vec<f64>,
    /// Z₁'R.
    lead_rest: DMatrix<f64>,
    /// R'R.
    rest_rest: DMatrix<f64>,
}

/// The factorisation at one Λ.
pub(crate) struct Factor {
    /// ln|H|, H = I + ZΛ²Z'.
    pub ln_det_h: f64,
    /// eₖ = 1/(1 + θ₁²nₖ).
    e: Vec<f64>,
    /// θ₁, the leading term's relative SD.
    theta_lead: f64,
    /// G = R'H₁⁻¹R.
    g: DMatrix<f64>,
    /// θ of the random columns among R.
    lambda_rest: Vec<f64>,
    /// L₂, the lower Cholesky factor of A₂.
    l2: DMatrix<f64>,
    /// K = L₂⁻¹Λ₂G₂· over all of R.
    k: DMatrix<f64>,
}

/// A'B through the blocked matrix product (`tr_mul` computes one dot
/// product per entry, several times slower at these sizes).
fn cross(a: &DMatrix<f64>, b: &DMatrix<f64>) -> DMatrix<f64> {
    a.transpose() * b
}

fn singular() -> MixedError {
    MixedError::Singular {
        what: "the random-effects system",
    }
}

impl Elimination {
    pub fn new(cp: &CrossProducts) -> Self {
        let lead = cp
            .blocks
            .iter()
            .cloned()
            .reduce(|best, b| if b.len() > best.len() { b } else { best })
            .unwrap_or(0..0);
        let dim = cp.ww.ncols();
        let rest: Vec<usize> = (0..dim).filter(|c| !lead.contains(c)).collect();
        let counts = lead.clone().map(|k| cp.ww[(k, k)]).collect();
        let lead_rest = DMatrix::from_fn(lead.len(), rest.len(), |r, c| {
            cp.ww[(lead.start + r, rest[c])]
        });
        let rest_rest = DMatrix::from_fn(rest.len(), rest.len(), |r, c| cp.ww[(rest[r], rest[c])]);
        Self {
            q_rest: cp.q - lead.len(),
            lead,
            rest,
            counts,
            lead_rest,
            rest_rest,
        }
    }

    /// Factorises H at the relative SDs `lambda` of every random column.
    pub fn factor(&self, lambda: &[f64]) -> Result<Factor, MixedError> {
        let theta2 = self.lead.clone().next().map_or(0.0, |k| lambda[k].powi(2));
        let e: Vec<f64> = self
            .counts
            .iter()
            .map(|n| 1.0 / (1.0 + theta2 * n))
            .collect();
        let ln_det_lead: f64 = self.counts.iter().map(|n| (theta2 * n).ln_1p()).sum();
        let mut scaled = self.lead_rest.clone();
        for (r, ek) in e.iter().enumerate() {
            scaled.row_mut(r).scale_mut((theta2 * ek).sqrt());
        }
        let g = &self.rest_rest - cross(&scaled, &scaled);
        let q2 = self.q_rest;
        let lambda_rest: Vec<f64> = self.rest[..q2].iter().map(|&c| lambda[c]).collect();
        let a2 = DMatrix::from_fn(q2, q2, |r, c| {
            lambda_rest[r] * g[(r, c)] * lambda_rest[c] + if r == c { 1.0 } else { 0.0 }
        });
        let l2 = a2.cholesky().ok_or_else(singular)?.unpack();
        let ln_det_h = ln_det_lead + 2.0 * l2.diagonal().iter().map(|v| v.ln()).sum::<f64>();
        let b = DMatrix::from_fn(q2, g.ncols(), |r, c| lambda_rest[r] * g[(r, c)]);
        let k = l2.solve_lower_triangular(&b).ok_or_else(singular)?;
        Ok(Factor {
            ln_det_h,
            e,
            theta_lead: theta2.sqrt(),
            g,
            lambda_rest,
            l2,
            k,
        })
    }

    /// Index among the other columns of X's first column.
    pub fn first_fixed(&self) -> usize {
        self.q_rest
    }

    /// W'H⁻¹W over the other columns from `first` on (X and y when
    /// `first` = [`Self::first_fixed`]).
    pub fn corner(&self, f: &Factor, first: usize) -> DMatrix<f64> {
        let width = f.g.ncols() - first;
        let k = f.k.columns(first, width).clone_owned();
        f.g.view((first, first), (width, width)) - cross(&k, &k)
    }

    /// A⁻¹ = (ΛZ'ZΛ + I)⁻¹ over the random columns, in W's order, by the
    /// partitioned inverse: with A₁₁ = diag(1/e) and the Schur complement
    /// A₂ = L₂L₂' of the factorisation, M = L₂⁻¹A₂₁A₁₁⁻¹ gives
    /// A⁻¹ = [diag(e) + M'M, −M'L₂⁻¹; −L₂⁻ᵀM, L₂⁻ᵀL₂⁻¹]. Every block is a sum
    /// of positive terms or a product, so small entries of A⁻¹ (a level
    /// with many observations) keep their relative accuracy, and the work
    /// is O(q₂³ + q₁²q₂) instead of the O(q³) of a dense inverse.
    pub fn random_inverse(&self, f: &Factor) -> Result<DMatrix<f64>, MixedError> {
        let (q1, q2) = (self.lead.len(), self.q_rest);
        // A₂₁A₁₁⁻¹ = Λ₂Z₂'Z₁θ₁·diag(e), q₂ × q₁.
        let a21_a11 = DMatrix::from_fn(q2, q1, |r, c| {
            f.lambda_rest[r] * self.lead_rest[(c, r)] * f.theta_lead * f.e[c]
        });
        let m = f.l2.solve_lower_triangular(&a21_a11).ok_or_else(singular)?;
        let l2_inv =
            f.l2.solve_lower_triangular(&DMatrix::identity(q2, q2))
                .ok_or_else(singular)?;
        let mut lead_block = cross(&m, &m);
        for (r, ek) in f.e.iter().enumerate() {
            lead_block[(r, r)] += ek;
        }
        let cross_block = -cross(&l2_inv, &m);
        let rest_block = cross(&l2_inv, &l2_inv);
        let q = q1 + q2;
        let s = self.lead.start;
        let mut out = DMatrix::zeros(q, q);
        for c in 0..q1 {
            for r in 0..q1 {
                out[(s + r, s + c)] = lead_block[(r, c)];
            }
        }
        for (c, &wc) in self.rest[..q2].iter().enumerate() {
            for r in 0..q1 {
                out[(wc, s + r)] = cross_block[(c, r)];
                out[(s + r, wc)] = cross_block[(c, r)];
            }
            for (r, &wr) in self.rest[..q2].iter().enumerate() {
                out[(wr, wc)] = rest_block[(r, c)];
            }
        }
        Ok(out)
    }

    /// W'H⁻¹W over all of W, in W's column order.
    pub fn full(&self, f: &Factor) -> Result<DMatrix<f64>, MixedError> {
        let (q1, q2, m) = (self.lead.len(), self.q_rest, self.rest.len());
        let mut b = self.lead_rest.clone();
        for (r, ek) in f.e.iter().enumerate() {
            b.row_mut(r).scale_mut(*ek);
        }
        let b2t = DMatrix::from_fn(q2, q1, |r, c| f.lambda_rest[r] * b[(c, r)]);
        let j = f.l2.solve_lower_triangular(&b2t).ok_or_else(singular)?;
        let rest_block = &f.g - cross(&f.k, &f.k);
        let cross_block = b - cross(&j, &f.k);
        let mut lead_block = -cross(&j, &j);
        for (r, (n, ek)) in self.counts.iter().zip(&f.e).enumerate() {
            lead_block[(r, r)] += n * ek;
        }
        let dim = q1 + m;
        let mut out = DMatrix::zeros(dim, dim);
        let s = self.lead.start;
        for c in 0..q1 {
            for r in 0..q1 {
                out[(s + r, s + c)] = lead_block[(r, c)];
            }
        }
        for (c, &wc) in self.rest.iter().enumerate() {
            for r in 0..q1 {
                out[(s + r, wc)] = cross_block[(r, c)];
                out[(wc, s + r)] = cross_block[(r, c)];
            }
            for (r, &wr) in self.rest.iter().enumerate() {
                out[(wr, wc)] = rest_block[(r, c)];
            }
        }
        Ok(out)
    }
}

#[cfg(test)]
#[path = "elimination_tests.rs"]
mod tests;
