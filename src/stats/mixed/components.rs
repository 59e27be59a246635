//! Independent random terms plus a residual: V = Σⱼ σ²ⱼ ZⱼZⱼ' + σ²I, with
//! ψ = (σ²₁, …, σ²_J, σ²). Everything is computed from the cross-products
//! W'W of W = [Z X y] through the Woodbury identity
//! H⁻¹ = I − ZΛ(ΛZ'ZΛ + I)⁻¹ΛZ' with V = σ²H and Λ = diag(θ), θⱼ = σⱼ/σ
//! (mixed-models spec 2.2, last paragraph), so no N×N matrix is formed.
//! Products with the residual's Vᵢ = I are reduced to the random terms'
//! with V⁻¹·I·V⁻¹ = (V⁻¹ − V⁻¹ZDZ'V⁻¹)/σ², D = diag(σ²ⱼ).

use std::f64::consts::PI;

use nalgebra::DMatrix;

use super::crossprod::CrossProducts;
use super::elimination::Elimination;
use super::error::MixedError;
use super::model::{CovarianceModel, Derivatives, FixedEffects};

/// Variance components of independent random terms.
#[derive(Debug, Clone)]
pub(crate) struct VarianceComponents {
    pub cp: CrossProducts,
    pub names: Vec<String>,
    elimination: Elimination,
    /// The random term of each of the q random-effect columns.
    term_of: Vec<usize>,
}

/// The pieces of the criterion at one ψ.
struct Reduced {
    sigma2: f64,
    ln_det_h: f64,
    ln_det_xhx: f64,
    /// y'Π_H y, the penalised residual sum of squares.
    rss: f64,
}

impl VarianceComponents {
    pub fn new(cp: CrossProducts, names: Vec<String>) -> Self {
        let mut term_of = vec![0; cp.q];
        for (t, b) in cp.blocks.iter().enumerate() {
            for k in b.clone() {
                term_of[k] = t;
            }
        }
        let elimination = Elimination::new(&cp);
        Self {
            cp,
            names,
            term_of,
            elimination,
        }
    }

    fn n_terms(&self) -> usize {
        self.cp.blocks.len()
    }

    /// σ² and the relative SDs θ of every random column; `Err` off the
    /// admissible set (a negative variance, σ² ≤ 0, a NaN).
    fn relative(&self, psi: &[f64]) -> Result<(f64, Vec<f64>), MixedError> {
        let j = self.n_terms();
        let sigma2 = psi[j];
        let bad = MixedError::Singular {
            what: "the covariance at this parameter value",
        };
        if !(sigma2 > 0.0 && sigma2.is_finite())
            || psi[..j].iter().any(|v| !(*v >= 0.0 && v.is_finite()))
        {
            return Err(bad);
        }
        let lambda = self
            .term_of
            .iter()
            .map(|&t| (psi[t] / sigma2).sqrt())
            .collect();
        Ok((sigma2, lambda))
    }

    fn reduced(&self, psi: &[f64]) -> Result<Reduced, MixedError> {
        let (sigma2, lambda) = self.relative(psi)?;
        let factor = self.elimination.factor(&lambda)?;
        let g = self
            .elimination
            .corner(&factor, self.elimination.first_fixed());
        let p = self.cp.p;
        let gxx = g.view((0, 0), (p, p)).clone_owned();
        let gxy = g.view((0, p), (p, 1)).clone_owned();
        let cx = gxx
            .cholesky()
            .ok_or(MixedError::Singular { what: "X'V⁻¹X" })?;
        let ln_det_xhx = 2.0 * cx.l().diagonal().iter().map(|v| v.ln()).sum::<f64>();
        let fitted = gxy.dot(&cx.solve(&gxy));
        let rss = (g[(p, p)] - fitted).max(0.0);
        Ok(Reduced {
            sigma2,
            ln_det_h: factor.ln_det_h,
            ln_det_xhx,
            rss,
        })
    }

    /// A⁻¹ = (ΛZ'ZΛ + I)⁻¹ at ψ, Λ the random columns' relative SDs.
    pub fn random_inverse(&self, psi: &[f64]) -> Result<DMatrix<f64>, MixedError> {
        let (_, lambda) = self.relative(psi)?;
        let factor = self.elimination.factor(&lambda)?;
        self.elimination.random_inverse(&factor)
    }

    /// M = W'V⁻¹W over all of W.
    fn inverse_all(&self, psi: &[f64]) -> Result<(f64, DMatrix<f64>), MixedError> {
        let (sigma2, lambda) = self.relative(psi)?;
        let factor = self.elimination.factor(&lambda)?;
        let mut m = self.elimination.full(&factor)?;
        m.unscale_mut(sigma2);
        Ok((sigma2, m))
    }

    /// Φ = (X'V⁻¹X)⁻¹ from M.
    fn phi(&self, m: &DMatrix<f64>) -> Result<DMatrix<f64>, MixedError> {
        let (q, p) = (self.cp.q, self.cp.p);
        m.view((q, q), (p, p))
            .clone_owned()
            .cholesky()
            .map(|c| c.inverse())
            .ok_or(MixedError::Singular { what: "X'V⁻¹X" })
    }

    /// σ²ⱼ of every random column, 0 at the response (the weights D).
    fn weights(&self, psi: &[f64], extra: usize) -> Vec<f64> {
        let mut d: Vec<f64> = self.term_of.iter().map(|&t| psi[t]).collect();
        d.extend(std::iter::repeat_n(0.0, extra));
        d
    }
}

/// (A − A_Z·D·B_Z)/σ²: a product F'V⁻¹·I·V⁻¹G reduced to the random terms,
/// given A = F'V⁻¹G and the Z-parts A_Z = F'V⁻¹Z, B_Z = Z'V⁻¹G.
fn through_identity(
    a: &DMatrix<f64>,
    a_z: &DMatrix<f64>,
    d: &[f64],
    b_z: &DMatrix<f64>,
    sigma2: f64,
) -> DMatrix<f64> {
    let mut scaled = a_z.clone();
    for (c, w) in d.iter().enumerate() {
        scaled.column_mut(c).scale_mut(*w);
    }
    (a - scaled * b_z) / sigma2
}

/// The diagonal and the response column of T = (S − S·D·S)/σ² (the
/// products through the residual's Vᵢ = I) for a symmetric S, at O(dim²)
/// instead of forming T.
fn through_identity_parts(
    s: &DMatrix<f64>,
    d: &[f64],
    yi: usize,
    sigma2: f64,
) -> (Vec<f64>, Vec<f64>) {
    let y = s.column(yi);
    s.column_iter()
        .enumerate()
        .map(|(k, col)| {
            let (mut diag, mut resp) = (0.0, 0.0);
            for ((v, w), vy) in col.iter().zip(d).zip(y.iter()) {
                diag += w * v * v;
                resp += w * v * vy;
            }
            ((col[k] - diag) / sigma2, (col[yi] - resp) / sigma2)
        })
        .unzip()
}

impl CovarianceModel for VarianceComponents {
    fn n_params(&self) -> usize {
        self.n_terms() + 1
    }

    fn param_name(&self, i: usize) -> String {
        self.names
            .get(i)
            .cloned()
            .unwrap_or_else(|| "residual".into())
    }

    fn may_be_zero(&self, i: usize) -> bool {
        i < self.n_terms()
    }

    fn criterion(&self, psi: &[f64]) -> Result<f64, MixedError> {
        let r = self.reduced(psi)?;
        let df = (self.cp.n - self.cp.p) as f64;
        Ok(
            df * (2.0 * PI * r.sigma2).ln() + r.ln_det_h + r.ln_det_xhx - self.cp.ln_det_xtx
                + r.rss / r.sigma2,
        )
    }

    fn profile_scale(&self, psi: &[f64]) -> Result<Vec<f64>, MixedError> {
        let r = self.reduced(psi)?;
        let sigma2_hat = r.rss / (self.cp.n - self.cp.p) as f64;
        if !crate::stats::is_positive(sigma2_hat) {
            return Err(MixedError::Singular {
                what: "the residual variance (a perfect fit)",
            });
        }
        Ok(psi.iter().map(|v| v * sigma2_hat / r.sigma2).collect())
    }

    fn start(&self) -> Result<Vec<f64>, MixedError> {
        self.profile_scale(&vec![1.0; self.n_params()])
    }

    fn derivatives(&self, psi: &[f64]) -> Result<Derivatives, MixedError> {
        let (sigma2, m) = self.inverse_all(psi)?;
        let phi = self.phi(&m)?;
        let (q, p, y) = (self.cp.q, self.cp.p, self.cp.y_index());
        // S = W'ΠW on Z ∪ y (ΠX = 0), with y last.
        let of = |k: usize| if k < q { k } else { y };
        let mx = DMatrix::from_fn(q + 1, p, |r, c| m[(of(r), q + c)]);
        let mut s = DMatrix::from_fn(q + 1, q + 1, |r, c| m[(of(r), of(c))]);
        drop(m);
        s.gemm(-1.0, &(&mx * &phi), &mx.transpose(), 1.0);
        let d = self.weights(psi, 1);
        let yi = q;
        let (t_diag, t_y) = through_identity_parts(&s, &d, yi, sigma2);
        let n_free = (self.cp.n - p) as f64;
        let tr_pi = (n_free - (0..q).map(|k| d[k] * s[(k, k)]).sum::<f64>()) / sigma2;
        let tr_pi2 = (tr_pi - (0..q).map(|k| d[k] * t_diag[k]).sum::<f64>()) / sigma2;
        let y_pi3_y = (t_y[yi] - (0..q).map(|k| d[k] * s[(yi, k)] * t_y[k]).sum::<f64>()) / sigma2;
        let j = self.n_terms();
        let np = j + 1;
        let blocks = &self.cp.blocks;
        let mut gradient = vec![0.0; np];
        let mut expected = DMatrix::zeros(np, np);
        let mut cross = DMatrix::zeros(np, np); // y'ΠVᵢΠVⱼΠy
        for a in 0..j {
            let ba = blocks[a].clone();
            gradient[a] = ba.clone().map(|k| s[(k, k)] - s[(k, yi)].powi(2)).sum();
            expected[(a, j)] = ba.clone().map(|k| t_diag[k]).sum();
            cross[(a, j)] = ba.clone().map(|k| s[(yi, k)] * t_y[k]).sum();
            for b in 0..=a {
                let (mut e, mut c) = (0.0, 0.0);
                for k in ba.clone() {
                    for l in blocks[b].clone() {
                        e += s[(k, l)].powi(2);
                        c += s[(yi, k)] * s[(k, l)] * s[(l, yi)];
                    }
                }
                expected[(a, b)] = e;
                cross[(a, b)] = c;
            }
        }
        gradient[j] = tr_pi - t_y[yi];
        expected[(j, j)] = tr_pi2;
        cross[(j, j)] = y_pi3_y;
        // Row j was filled above the diagonal, the random pairs below it.
        for a in 0..j {
            expected[(j, a)] = expected[(a, j)];
            cross[(j, a)] = cross[(a, j)];
        }
        expected.fill_upper_triangle_with_lower_triangle();
        cross.fill_upper_triangle_with_lower_triangle();
        let hessian = -&expected + cross * 2.0;
        Ok(Derivatives {
            gradient,
            expected,
            hessian,
        })
    }

    fn fixed_effects(&self, psi: &[f64], free: &[usize]) -> Result<FixedEffects, MixedError> {
        let (sigma2, m) = self.inverse_all(psi)?;
        let phi = self.phi(&m)?;
        let (q, p, y) = (self.cp.q, self.cp.p, self.cp.y_index());
        let mut beta: Vec<f64> = (&phi * m.view((q, y), (p, 1))).iter().copied().collect();
        if let Some(b0) = beta.first_mut() {
            // y was centred only when the first column is the intercept, so
            // its mean returns there (y_mean is 0 otherwise).
            *b0 += self.cp.y_mean;
        }
        let mzx = m.view((0, 0), (q + p, q + p)).clone_owned();
        let dz = self.weights(psi, 0);
        let j = self.n_terms();
        let x_rows = mzx.rows(q, p).clone_owned();
        let z_cols_of = |a: &DMatrix<f64>| a.columns(0, q).clone_owned();
        let m_z = mzx.rows(0, q).clone_owned();
        // Lᵢ = X'V⁻¹VᵢV⁻¹[Z X] for each free parameter.
        let left: Vec<DMatrix<f64>> = free
            .iter()
            .map(|&i| {
                if i < j {
                    let b = self.cp.blocks[i].clone();
                    x_rows.columns(b.start, b.len()) * mzx.rows(b.start, b.len())
                } else {
                    through_identity(&x_rows, &z_cols_of(&x_rows), &dz, &m_z, sigma2)
                }
            })
            .collect();
        let pm: Vec<DMatrix<f64>> = left.iter().map(|l| -l.columns(q, p)).collect();
        let m_zx = mzx.view((0, q), (q, p)).clone_owned();
        let qm = left
            .iter()
            .map(|l| {
                free.iter()
                    .map(|&k| {
                        if k < j {
                            let b = self.cp.blocks[k].clone();
                            l.columns(b.start, b.len()) * mzx.view((b.start, q), (b.len(), p))
                        } else {
                            through_identity(
                                &l.columns(q, p).clone_owned(),
                                &l.columns(0, q).clone_owned(),
                                &dz,
                                &m_zx,
                                sigma2,
                            )
                        }
                    })
                    .collect()
            })
            .collect();
        Ok(FixedEffects {
            beta,
            phi,
            p: pm,
            q: qm,
        })
    }

    fn ln_det_xtx(&self) -> f64 {
        self.cp.ln_det_xtx
    }

    fn sizes(&self) -> (usize, usize) {
        (self.cp.n, self.cp.p)
    }
}

#[cfg(test)]
#[path = "components_tests.rs"]
pub(crate) mod tests;
