//! The R-side model over subjects: y = Xβ + e, e independent between
//! subjects and, within subject i, cov(eᵢ) = Σᵢ(ψ), the rows and columns of
//! Σ(ψ) at the occasions the subject has (mixed-models spec 2.1, 7.4, 7.5).
//! V is block diagonal, so everything is computed per subject (nᵢ×nᵢ
//! blocks) and summed over subjects as p×p pieces; no N×N matrix is formed.
//!
//! With Sᵢ = Σᵢ⁻¹, Aᵢ = SᵢXᵢ, eᵢ = Sᵢ(yᵢ − Xᵢβ̂) = (Πy)ᵢ and Dₐᵢ the
//! subject's block of Vₐ = ∂V/∂ψₐ, Π = diag(Sᵢ) − AΦA' gives
//! tr(ΠVₐ) = Σᵢ tr(SᵢDₐᵢ) + tr(ΦPₐ),
//! tr(ΠVₐΠV_b) = Σᵢ tr(SᵢDₐᵢSᵢD_bᵢ) − tr(ΦQₐ_b) − tr(ΦQ_bₐ) + tr(ΦPₐΦP_b),
//! y'ΠVₐΠV_bΠy = Σᵢ (Dₐᵢeᵢ)'Sᵢ(D_bᵢeᵢ) − uₐ'Φu_b with uₐ = Σᵢ Aᵢ'Dₐᵢeᵢ,
//! and tr(ΠVₐ_b) = Σᵢ tr(SᵢDₐ_bᵢ) − tr(ΦRₐ_b) for AR(1)'s second derivatives.

use std::f64::consts::PI;

use nalgebra::{Cholesky, DMatrix, DVector, Dyn};

use super::design::FixedDesign;
use super::error::MixedError;
use super::model::{CovarianceModel, Derivatives, FixedEffects};
use super::repeated_layout::SubjectRows;
use super::structure::{Pattern, Structure};

/// The covariance structure over the subjects' observations.
#[derive(Debug, Clone)]
pub(crate) struct SubjectBlocks {
    pub pattern: Pattern,
    blocks: Vec<Block>,
    n: usize,
    p: usize,
    ln_det_xtx: f64,
}

/// One p×p matrix per pair of parameters.
pub(crate) type PairMatrices = Vec<Vec<DMatrix<f64>>>;

/// One subject's data, rows in occasion order.
#[derive(Debug, Clone)]
struct Block {
    occasions: Vec<usize>,
    x: DMatrix<f64>,
    y: DVector<f64>,
}

/// The model solved at one ψ.
struct Solved {
    chol: Vec<Cholesky<f64, Dyn>>,
    /// Aᵢ = Σᵢ⁻¹Xᵢ.
    a: Vec<DMatrix<f64>>,
    /// eᵢ = Σᵢ⁻¹rᵢ.
    e: Vec<DVector<f64>>,
    phi: DMatrix<f64>,
    beta: DVector<f64>,
    ln_det_v: f64,
    ln_det_xvx: f64,
    /// r'V⁻¹r = y'Πy.
    rss: f64,
}

/// One subject's blocks of the Vₐ and the products the sums need.
struct BlockTerms {
    s: DMatrix<f64>,
    /// Dₐ, SDₐ, DₐA and SDₐA for each listed parameter.
    d: Vec<DMatrix<f64>>,
    g: Vec<DMatrix<f64>>,
    h: Vec<DMatrix<f64>>,
    w: Vec<DMatrix<f64>>,
}

/// Sums over subjects for the derivatives of d.
struct Sums {
    tr_sd: Vec<f64>,
    e_d_e: Vec<f64>,
    p: Vec<DMatrix<f64>>,
    u: Vec<DVector<f64>>,
    tr_gg: DMatrix<f64>,
    /// tr(ΦQₐ_b).
    tr_phi_q: DMatrix<f64>,
    d_s_d: DMatrix<f64>,
    /// tr(ΠVₐ_b) − y'ΠVₐ_bΠy.
    second: DMatrix<f64>,
}

fn singular(what: &'static str) -> MixedError {
    MixedError::Singular { what }
}

fn ln_det(chol: &Cholesky<f64, Dyn>) -> f64 {
    2.0 * chol.l().diagonal().iter().map(|v| v.ln()).sum::<f64>()
}

/// Σₖₗ aₖₗbₖₗ.
fn inner(a: &DMatrix<f64>, b: &DMatrix<f64>) -> f64 {
    a.iter().zip(b.iter()).map(|(x, y)| x * y).sum()
}

/// The matrices as the columns of one matrix (each read column-major).
fn columns_of<R, C, S>(mats: &[nalgebra::Matrix<f64, R, C, S>]) -> DMatrix<f64>
where
    R: nalgebra::Dim,
    C: nalgebra::Dim,
    S: nalgebra::RawStorage<f64, R, C> + nalgebra::IsContiguous,
{
    let len = mats.first().map_or(0, |m| m.len());
    DMatrix::from_iterator(
        len,
        mats.len(),
        mats.iter().flat_map(|m| m.as_slice().iter().copied()),
    )
}

/// Matrices of equal shape side by side, [M₁ … M_K].
fn side_by_side(mats: &[DMatrix<f64>]) -> DMatrix<f64> {
    let rows = mats.first().map_or(0, |m| m.nrows());
    let cols = mats.iter().map(|m| m.ncols()).sum();
    DMatrix::from_iterator(rows, cols, mats.iter().flat_map(|m| m.iter().copied()))
}

impl SubjectBlocks {
    pub fn new(
        y: &[f64],
        fixed: &FixedDesign,
        subjects: &[SubjectRows],
        pattern: Pattern,
    ) -> Result<Self, MixedError> {
        let p = fixed.rank();
        let blocks: Vec<Block> = subjects
            .iter()
            .map(|s| Block {
                occasions: s.occasions.clone(),
                x: DMatrix::from_fn(s.rows.len(), p, |r, c| fixed.columns[c][s.rows[r]]),
                y: DVector::from_fn(s.rows.len(), |r, _| y[s.rows[r]]),
            })
            .collect();
        let mut xtx = DMatrix::zeros(p, p);
        for b in &blocks {
            xtx += b.x.transpose() * &b.x;
        }
        let ln_det_xtx = ln_det(&xtx.cholesky().ok_or(singular("X'X"))?);
        let n = blocks.iter().map(|b| b.y.len()).sum();
        Ok(Self {
            pattern,
            blocks,
            n,
            p,
            ln_det_xtx,
        })
    }

    pub fn subjects(&self) -> usize {
        self.blocks.len()
    }

    fn restrict(m: &DMatrix<f64>, occ: &[usize]) -> DMatrix<f64> {
        DMatrix::from_fn(occ.len(), occ.len(), |r, c| m[(occ[r], occ[c])])
    }

    fn solve(&self, psi: &[f64]) -> Result<Solved, MixedError> {
        if !self.pattern.admissible(psi) {
            return Err(singular("the covariance at this parameter value"));
        }
        let sigma = self.pattern.sigma(psi);
        let p = self.p;
        let (mut xvx, mut xvy) = (DMatrix::zeros(p, p), DVector::zeros(p));
        let (mut chol, mut a) = (Vec::new(), Vec::new());
        let mut ln_det_v = 0.0;
        for b in &self.blocks {
            let c = Self::restrict(&sigma, &b.occasions)
                .cholesky()
                .ok_or(singular("a subject's covariance"))?;
            ln_det_v += ln_det(&c);
            let ai = c.solve(&b.x);
            xvx += b.x.transpose() * &ai;
            xvy += ai.transpose() * &b.y;
            chol.push(c);
            a.push(ai);
        }
        let cx = xvx.cholesky().ok_or(singular("X'V⁻¹X"))?;
        let beta = cx.solve(&xvy);
        let mut rss = 0.0;
        let mut e = Vec::new();
        for (b, c) in self.blocks.iter().zip(&chol) {
            let r = &b.y - &b.x * &beta;
            let ei = c.solve(&r);
            rss += r.dot(&ei);
            e.push(ei);
        }
        Ok(Solved {
            chol,
            a,
            e,
            phi: cx.inverse(),
            beta,
            ln_det_v,
            ln_det_xvx: ln_det(&cx),
            rss,
        })
    }

    /// The starting points of the structure, each with σ² profiled; UN
    /// starts from the moments of the OLS residuals instead of Σ = I.
    pub fn starts(&self) -> Result<Vec<Vec<f64>>, MixedError> {
        let mut starts = self.pattern.starts();
        if self.pattern.structure == Structure::Unstructured {
            starts = vec![self.residual_moments()?];
        }
        starts.iter().map(|s| self.profile_scale(s)).collect()
    }

    /// UN start: Σⱼₗ = the mean of rⱼrₗ over the subjects observed at both
    /// occasions (r the OLS residuals), the off-diagonal part shrunk by
    /// powers of 0.9 until Σ is positive definite (pairwise moments need
    /// not be); Σ = I when nothing works.
    fn residual_moments(&self) -> Result<Vec<f64>, MixedError> {
        let (k, p) = (self.pattern.k, self.p);
        let (mut xtx, mut xty) = (DMatrix::zeros(p, p), DVector::zeros(p));
        for b in &self.blocks {
            xtx += b.x.transpose() * &b.x;
            xty += b.x.transpose() * &b.y;
        }
        let beta = xtx.cholesky().ok_or(singular("X'X"))?.solve(&xty);
        let (mut sum, mut count) = (DMatrix::<f64>::zeros(k, k), DMatrix::<f64>::zeros(k, k));
        for b in &self.blocks {
            let r = &b.y - &b.x * &beta;
            for (u, &j) in b.occasions.iter().enumerate() {
                for (v, &l) in b.occasions.iter().enumerate() {
                    sum[(j, l)] += r[u] * r[v];
                    count[(j, l)] += 1.0;
                }
            }
        }
        let moments = sum.zip_map(&count, |s, c| if c > 0.0 { s / c } else { 0.0 });
        let mut shrink = 1.0;
        for _ in 0..60 {
            let psi: Vec<f64> = (0..self.pattern.n_params())
                .map(|i| {
                    let (j, l) = self.pattern.pair(i);
                    moments[(j, l)] * if j == l { 1.0 } else { shrink }
                })
                .collect();
            if self.pattern.admissible(&psi) {
                return Ok(psi);
            }
            shrink *= 0.9;
        }
        Ok(self.pattern.starts().swap_remove(0))
    }

    fn block_terms(&self, psi: &[f64], i: usize, solved: &Solved, params: &[usize]) -> BlockTerms {
        let occ = &self.blocks[i].occasions;
        let s = solved.chol[i].inverse();
        let a = &solved.a[i];
        let d: Vec<DMatrix<f64>> = params
            .iter()
            .map(|&k| Self::restrict(&self.pattern.first(psi, k), occ))
            .collect();
        let g: Vec<DMatrix<f64>> = d.iter().map(|dk| &s * dk).collect();
        let h = d.iter().map(|dk| dk * a).collect();
        let w = g.iter().map(|gk| gk * a).collect();
        BlockTerms { s, d, g, h, w }
    }

    fn sums(&self, psi: &[f64], solved: &Solved) -> Sums {
        let (np, p) = (self.pattern.n_params(), self.p);
        let all: Vec<usize> = (0..np).collect();
        let mut out = Sums {
            tr_sd: vec![0.0; np],
            e_d_e: vec![0.0; np],
            p: vec![DMatrix::zeros(p, p); np],
            u: vec![DVector::zeros(p); np],
            tr_gg: DMatrix::zeros(np, np),
            tr_phi_q: DMatrix::zeros(np, np),
            d_s_d: DMatrix::zeros(np, np),
            second: DMatrix::zeros(np, np),
        };
        for i in 0..self.blocks.len() {
            let t = self.block_terms(psi, i, solved, &all);
            let (a, e) = (&solved.a[i], &solved.e[i]);
            let de: Vec<DVector<f64>> = t.d.iter().map(|d| d * e).collect();
            let ge: Vec<DVector<f64>> = t.g.iter().map(|g| g * e).collect();
            let hphi: Vec<DMatrix<f64>> = t.h.iter().map(|h| h * &solved.phi).collect();
            let g_t: Vec<DMatrix<f64>> = t.g.iter().map(|g| g.transpose()).collect();
            for (k, (g, (h, dek))) in t.g.iter().zip(t.h.iter().zip(&de)).enumerate() {
                out.tr_sd[k] += g.trace();
                out.e_d_e[k] += e.dot(dek);
                out.p[k] -= a.transpose() * h;
                out.u[k] += h.transpose() * e;
            }
            // Each pairwise sum of products is one matrix product of the
            // terms laid out as columns: tr(ΦQₐ_b) = ⟨HₐΦ, W_b⟩,
            // tr(GₐG_b) = ⟨Gₐ, G_b'⟩, (Dₐe)'(G_be).
            out.tr_phi_q += columns_of(&hphi).transpose() * columns_of(&t.w);
            out.tr_gg += columns_of(&t.g).transpose() * columns_of(&g_t);
            out.d_s_d += columns_of(&de).transpose() * columns_of(&ge);
            self.add_second(psi, i, solved, &t, &mut out.second);
        }
        out
    }

    /// Adds one subject's tr(SDₐ_b) − tr(ΦA'Dₐ_bA) − e'Dₐ_be.
    fn add_second(
        &self,
        psi: &[f64],
        i: usize,
        solved: &Solved,
        t: &BlockTerms,
        second: &mut DMatrix<f64>,
    ) {
        let np = self.pattern.n_params();
        let occ = &self.blocks[i].occasions;
        let (a, e) = (&solved.a[i], &solved.e[i]);
        for k in 0..np {
            for l in 0..np {
                if let Some(full) = self.pattern.second(psi, k, l) {
                    let dkl = Self::restrict(&full, occ);
                    let r = a.transpose() * &dkl * a;
                    second[(k, l)] +=
                        inner(&t.s, &dkl) - inner(&solved.phi, &r) - e.dot(&(&dkl * e));
                }
            }
        }
    }

    /// β̂, Φ, the Pₐ and Qₐ_b over `free`, and the Rₐ_b = X'V⁻¹Vₐ_bV⁻¹X
    /// (all zero for a linear structure).
    pub fn kr_matrices(
        &self,
        psi: &[f64],
        free: &[usize],
    ) -> Result<(FixedEffects, PairMatrices), MixedError> {
        let solved = self.solve(psi)?;
        let (nf, p) = (free.len(), self.p);
        let mut pm = vec![DMatrix::zeros(p, p); nf];
        // All Qₐ_b at once: [H₁ … H_K]'[W₁ … W_K], K·p square.
        let mut q_all = DMatrix::zeros(nf * p, nf * p);
        let mut r = vec![vec![DMatrix::zeros(p, p); nf]; nf];
        for i in 0..self.blocks.len() {
            let t = self.block_terms(psi, i, &solved, free);
            let a = &solved.a[i];
            q_all.gemm(
                1.0,
                &side_by_side(&t.h).transpose(),
                &side_by_side(&t.w),
                1.0,
            );
            for k in 0..nf {
                pm[k] -= a.transpose() * &t.h[k];
                for l in 0..nf {
                    if let Some(full) = self.pattern.second(psi, free[k], free[l]) {
                        let dkl = Self::restrict(&full, &self.blocks[i].occasions);
                        r[k][l] += a.transpose() * dkl * a;
                    }
                }
            }
        }
        let q = (0..nf)
            .map(|k| {
                (0..nf)
                    .map(|l| q_all.view((k * p, l * p), (p, p)).clone_owned())
                    .collect()
            })
            .collect();
        let fe = FixedEffects {
            beta: solved.beta.iter().copied().collect(),
            phi: solved.phi,
            p: pm,
            q,
        };
        Ok((fe, r))
    }
}

impl CovarianceModel for SubjectBlocks {
    fn n_params(&self) -> usize {
        self.pattern.n_params()
    }

    fn param_name(&self, i: usize) -> String {
        self.pattern.param_name(i)
    }

    fn may_be_zero(&self, _i: usize) -> bool {
        false
    }

    fn signed(&self, i: usize) -> bool {
        self.pattern.signed(i)
    }

    fn criterion(&self, psi: &[f64]) -> Result<f64, MixedError> {
        let s = self.solve(psi)?;
        let df = (self.n - self.p) as f64;
        Ok(df * (2.0 * PI).ln() + s.ln_det_v + s.ln_det_xvx - self.ln_det_xtx + s.rss)
    }

    fn profile_scale(&self, psi: &[f64]) -> Result<Vec<f64>, MixedError> {
        let s = self.solve(psi)?;
        let c = s.rss / (self.n - self.p) as f64;
        if !crate::stats::is_positive(c) {
            return Err(singular("the residual variance (a perfect fit)"));
        }
        Ok(psi
            .iter()
            .enumerate()
            .map(|(i, v)| if self.pattern.scales(i) { v * c } else { *v })
            .collect())
    }

    fn start(&self) -> Result<Vec<f64>, MixedError> {
        Ok(self.starts()?.swap_remove(0))
    }

    fn derivatives(&self, psi: &[f64]) -> Result<Derivatives, MixedError> {
        let solved = self.solve(psi)?;
        let s = self.sums(psi, &solved);
        let np = self.pattern.n_params();
        let phi = &solved.phi;
        let gradient = (0..np)
            .map(|k| s.tr_sd[k] + inner(phi, &s.p[k]) - s.e_d_e[k])
            .collect();
        let phi_p: Vec<DMatrix<f64>> = s.p.iter().map(|pk| phi * pk).collect();
        let expected = DMatrix::from_fn(np, np, |k, l| {
            s.tr_gg[(k, l)] - s.tr_phi_q[(k, l)] - s.tr_phi_q[(l, k)]
                + inner(&phi_p[k], &phi_p[l].transpose())
        });
        let cross = DMatrix::from_fn(np, np, |k, l| {
            s.d_s_d[(k, l)] - s.u[k].dot(&(phi * &s.u[l]))
        });
        let hessian = -&expected + cross * 2.0 + &s.second;
        Ok(Derivatives {
            gradient,
            expected,
            hessian,
        })
    }

    fn fixed_effects(&self, psi: &[f64], free: &[usize]) -> Result<FixedEffects, MixedError> {
        Ok(self.kr_matrices(psi, free)?.0)
    }

    fn ln_det_xtx(&self) -> f64 {
        self.ln_det_xtx
    }

    fn sizes(&self) -> (usize, usize) {
        (self.n, self.p)
    }
}

#[cfg(test)]
#[path = "subjects_tests.rs"]
pub(crate) mod tests;
