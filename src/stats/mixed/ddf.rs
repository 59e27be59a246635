//! Denominator degrees of freedom for Wald tests of fixed effects:
//! Kenward-Roger (1997) and Satterthwaite (1946; Giesbrecht & Burns 1985;
//! Fai & Cornelius 1996), mixed-models spec 3.2-3.3. Parameters on the
//! boundary are left out of ψ (spec 2.5): the caller passes only the free
//! parameters' matrices.

use nalgebra::DMatrix;

use crate::stats::dist;

/// Which information matrix gives the covariance of ψ̂ for Satterthwaite.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Information {
    /// Observed information (the Hessian of the REML criterion); the default.
    #[default]
    Observed,
    /// Expected information; single-contrast df then equal Kenward-Roger's.
    Expected,
}

/// The denominator-df method requested.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Ddf {
    /// Kenward-Roger: Φ inflated to Φ_A, F scaled by λ, df m (the default).
    #[default]
    KenwardRoger,
    /// Satterthwaite with the given information.
    Satterthwaite(Information),
}

/// The method that produced the df, with the fallbacks spec 3.2-3.3 name.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum DfMethod {
    KenwardRoger,
    Satterthwaite(Information),
    /// Kenward-Roger's moment match failed (ℓρ ≤ 1, or 1 − c₂B or 1 − c₃B
    /// ≤ 0): Satterthwaite with expected information was used instead.
    SatterthwaiteAfterKenwardRoger,
    /// Several rows whose combined Satterthwaite df is undefined (E ≤ ℓ):
    /// the smallest single-row df was used.
    SatterthwaiteSmallest(Information),
}

/// The information a df computation needs, over the free parameters.
#[derive(Debug, Clone)]
pub(crate) struct DfInputs {
    pub phi: DMatrix<f64>,
    pub phi_adjusted: DMatrix<f64>,
    pub p: Vec<DMatrix<f64>>,
    /// Asymptotic covariance of ψ̂ from the expected information (KR's W).
    pub cov_expected: DMatrix<f64>,
    /// The same from the observed information.
    pub cov_observed: DMatrix<f64>,
}

/// Φ_A = Φ + 2Φ[Σᵢⱼ Wᵢⱼ(Qᵢⱼ − PᵢΦPⱼ)]Φ (Rᵢⱼ = 0: V is linear in ψ).
pub(crate) fn adjusted_phi(
    phi: &DMatrix<f64>,
    p: &[DMatrix<f64>],
    q: &[Vec<DMatrix<f64>>],
    w: &DMatrix<f64>,
) -> DMatrix<f64> {
    let dim = phi.nrows();
    let mut inner = DMatrix::zeros(dim, dim);
    for i in 0..p.len() {
        for j in 0..p.len() {
            inner += (&q[i][j] - &p[i] * phi * &p[j]) * w[(i, j)];
        }
    }
    let lambda = phi * inner * phi;
    let sym = (&lambda + lambda.transpose()) * 0.5;
    phi + sym * 2.0
}

/// A test of Lβ = 0 after the df are fixed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct WaldTest {
    /// The F statistic as referred to F(ℓ, df): λ·F_Wald(Φ_A) under KR,
    /// F_Wald(Φ) under Satterthwaite.
    pub f: f64,
    /// ℓ, the number of rows.
    pub df_num: usize,
    pub df_den: f64,
    pub p_value: f64,
    /// KR's scale λ (1 under Satterthwaite).
    pub lambda: f64,
    pub method: DfMethod,
}

/// One linear function lβ with its SE and df.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ContrastTest {
    pub estimate: f64,
    /// √(lΦ_Al') under KR, √(lΦl') under Satterthwaite.
    pub se: f64,
    pub df: f64,
    pub t: f64,
    pub p_value: f64,
    pub method: DfMethod,
}

fn quad(l: &[f64], m: &DMatrix<f64>) -> f64 {
    let v = nalgebra::DVector::from_column_slice(l);
    v.dot(&(m * &v))
}

/// gᵢ = ∂(lΦl')/∂ψᵢ = −lΦPᵢΦl'.
fn gradient_of_variance(inputs: &DfInputs, l: &[f64]) -> nalgebra::DVector<f64> {
    let v = nalgebra::DVector::from_column_slice(l);
    let phil = &inputs.phi * &v;
    nalgebra::DVector::from_iterator(
        inputs.p.len(),
        inputs.p.iter().map(|p| -phil.dot(&(p * &phil))),
    )
}

/// Satterthwaite df of one contrast: 2v²/(g'Ag).
pub(crate) fn satterthwaite_single(inputs: &DfInputs, l: &[f64], information: Information) -> f64 {
    let a = match information {
        Information::Observed => &inputs.cov_observed,
        Information::Expected => &inputs.cov_expected,
    };
    let v = quad(l, &inputs.phi);
    let g = gradient_of_variance(inputs, l);
    let denom = g.dot(&(a * &g));
    if denom > 0.0 {
        2.0 * v * v / denom
    } else {
        f64::INFINITY
    }
}

/// A single contrast under the chosen method.
pub(crate) fn contrast(inputs: &DfInputs, beta: &[f64], l: &[f64], ddf: Ddf) -> ContrastTest {
    let estimate: f64 = l.iter().zip(beta).map(|(a, b)| a * b).sum();
    let (var, df, method) = match ddf {
        // With ℓ = 1, KR's λ = 1 and m = the expected-information df.
        Ddf::KenwardRoger => (
            quad(l, &inputs.phi_adjusted),
            satterthwaite_single(inputs, l, Information::Expected),
            DfMethod::KenwardRoger,
        ),
        Ddf::Satterthwaite(info) => (
            quad(l, &inputs.phi),
            satterthwaite_single(inputs, l, info),
            DfMethod::Satterthwaite(info),
        ),
    };
    let se = var.max(0.0).sqrt();
    let t = estimate / se;
    let p_value = (2.0 * dist::t_sf(t.abs(), df)).min(1.0);
    ContrastTest {
        estimate,
        se,
        df,
        t,
        p_value,
        method,
    }
}

/// (Lβ)'(LML')⁻¹(Lβ)/ℓ, or `None` when LML' is not positive definite.
pub(crate) fn wald_f(l: &DMatrix<f64>, beta: &[f64], m: &DMatrix<f64>) -> Option<f64> {
    let lb = l * nalgebra::DVector::from_column_slice(beta);
    let lml = l * m * l.transpose();
    let chol = lml.cholesky()?;
    Some(lb.dot(&chol.solve(&lb)) / l.nrows() as f64)
}

fn f_p_value(f: f64, d1: f64, d2: f64) -> f64 {
    if d2.is_infinite() {
        dist::chi2_sf(f * d1, d1)
    } else {
        dist::f_sf(f, d1, d2)
    }
}

/// Satterthwaite for ℓ rows (spec 3.2): per eigen-direction of LΦL', then
/// combined through E = Σ νₘ/(νₘ − 2) over νₘ > 2.
pub(crate) fn satterthwaite(
    inputs: &DfInputs,
    beta: &[f64],
    l: &DMatrix<f64>,
    information: Information,
) -> Option<WaldTest> {
    let f = wald_f(l, beta, &inputs.phi)?;
    let rows = l.nrows();
    let eig = (l * &inputs.phi * l.transpose()).symmetric_eigen();
    let nus: Vec<f64> = (0..rows)
        .map(|m| {
            let lm = eig.eigenvectors.column(m).transpose() * l;
            satterthwaite_single(inputs, lm.as_slice(), information)
        })
        .collect();
    let (df, method) = if rows == 1 {
        (nus[0], DfMethod::Satterthwaite(information))
    } else {
        let e: f64 = nus
            .iter()
            .filter(|nu| **nu > 2.0)
            .map(|nu| {
                if nu.is_infinite() {
                    1.0
                } else {
                    nu / (nu - 2.0)
                }
            })
            .sum();
        if e > rows as f64 {
            (
                2.0 * e / (e - rows as f64),
                DfMethod::Satterthwaite(information),
            )
        } else {
            (
                nus.iter().copied().fold(f64::INFINITY, f64::min),
                DfMethod::SatterthwaiteSmallest(information),
            )
        }
    };
    Some(WaldTest {
        f,
        df_num: rows,
        df_den: df,
        p_value: f_p_value(f, rows as f64, df),
        lambda: 1.0,
        method,
    })
}

/// Kenward-Roger (spec 3.3); on a failed moment match, Satterthwaite with
/// expected information, flagged.
pub(crate) fn kenward_roger(inputs: &DfInputs, beta: &[f64], l: &DMatrix<f64>) -> Option<WaldTest> {
    let ell = l.nrows() as f64;
    let phi = &inputs.phi;
    let lpl = l * phi * l.transpose();
    let theta = l.transpose() * lpl.cholesky()?.inverse() * l;
    let m: Vec<DMatrix<f64>> = inputs.p.iter().map(|p| &theta * phi * p * phi).collect();
    let w = &inputs.cov_expected;
    let (mut a1, mut a2) = (0.0, 0.0);
    for i in 0..m.len() {
        for j in 0..m.len() {
            a1 += w[(i, j)] * m[i].trace() * m[j].trace();
            a2 += w[(i, j)] * (&m[i] * &m[j]).trace();
        }
    }
    let f_wald = wald_f(l, beta, &inputs.phi_adjusted)?;
    let (df, lambda) = match moment_match(ell, a1, a2) {
        Some(v) => v,
        None => {
            let mut fallback = satterthwaite(inputs, beta, l, Information::Expected)?;
            fallback.method = DfMethod::SatterthwaiteAfterKenwardRoger;
            return Some(fallback);
        }
    };
    let f = lambda * f_wald;
    Some(WaldTest {
        f,
        df_num: l.nrows(),
        df_den: df,
        p_value: f_p_value(f, ell, df),
        lambda,
        method: DfMethod::KenwardRoger,
    })
}

/// (m, λ) from A₁, A₂; `None` where the match is undefined.
fn moment_match(ell: f64, a1: f64, a2: f64) -> Option<(f64, f64)> {
    if a2 <= 0.0 {
        // The contrast does not involve ψ: no estimation error to allow for.
        return Some((f64::INFINITY, 1.0));
    }
    let b = (a1 + 6.0 * a2) / (2.0 * ell);
    let g = ((ell + 1.0) * a1 - (ell + 4.0) * a2) / ((ell + 2.0) * a2);
    let den = 3.0 * ell + 2.0 * (1.0 - g);
    let (c1, c2, c3) = (g / den, (ell - g) / den, (ell + 2.0 - g) / den);
    let e_star = 1.0 / (1.0 - a2 / ell);
    if !(1.0 - c2 * b > 0.0 && 1.0 - c3 * b > 0.0 && e_star > 0.0) {
        return None;
    }
    let v_star = (2.0 / ell) * (1.0 + c1 * b) / ((1.0 - c2 * b).powi(2) * (1.0 - c3 * b));
    let rho = v_star / (2.0 * e_star * e_star);
    if !crate::stats::is_positive(ell * rho - 1.0) {
        return None;
    }
    let m = 4.0 + (ell + 2.0) / (ell * rho - 1.0);
    Some((m, m / (e_star * (m - 2.0))))
}

#[cfg(test)]
#[path = "ddf_tests.rs"]
mod tests;
