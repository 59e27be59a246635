//! A linear combination Σ c_s E_s of stratum error mean squares: the form of
//! every ANOVA variance-component estimate and every SED of a balanced
//! multi-stratum design, with its Satterthwaite (1946) df and χ² interval.

use crate::stats::dist::{chi2_sf, invert_upper_tail};
use crate::stats::special::ln_gamma;
use crate::stats::sum::neumaier;

/// Coefficients this small relative to the largest are rounding residue of
/// terms that cancel exactly (block totals of a balanced contrast).
const NEGLIGIBLE: f64 = 1e-12;

/// Σ c_s E_s with one coefficient per stratum of the table (table order).
#[derive(Debug, Clone, PartialEq)]
pub struct Combination {
    pub coefficients: Vec<f64>,
    /// The value Σ c_s E_s.
    pub value: f64,
    /// Satterthwaite df (Σ c_s E_s)² / Σ (c_s E_s)²/f_s; `None` when the
    /// value is zero.
    pub df: Option<f64>,
}

impl Combination {
    /// The combination of the given error mean squares (`None` for a stratum
    /// with no error df) and their df. `None` when a stratum without an
    /// error mean square is needed.
    pub(super) fn new(
        coefficients: Vec<f64>,
        ms: &[Option<f64>],
        df: &[usize],
    ) -> Option<Combination> {
        let largest = coefficients.iter().fold(0.0f64, |m, c| m.max(c.abs()));
        let coefficients: Vec<f64> = coefficients
            .into_iter()
            .map(|c| {
                if c.abs() <= NEGLIGIBLE * largest {
                    0.0
                } else {
                    c
                }
            })
            .collect();
        let mut terms = Vec::new();
        for (s, &c) in coefficients.iter().enumerate() {
            if c != 0.0 {
                terms.push((c * ms[s]?, df[s] as f64));
            }
        }
        let value = neumaier(terms.iter().map(|(v, _)| *v));
        let spread = neumaier(terms.iter().map(|(v, f)| v * v / f));
        let df = (value != 0.0 && spread > 0.0).then(|| value * value / spread);
        Some(Combination {
            coefficients,
            value,
            df,
        })
    }

    /// The χ² interval for a variance estimated by this combination at the
    /// given confidence: [ν̂v/χ²_{1−α/2, ν̂}, ν̂v/χ²_{α/2, ν̂}] (exact when a
    /// single mean square is used). `None` when the estimate is not positive.
    pub fn chi_square_interval(&self, confidence: f64) -> Option<(f64, f64)> {
        let df = self.df?;
        if self.value <= 0.0 || !(confidence > 0.0 && confidence < 1.0) {
            return None;
        }
        let alpha = 1.0 - confidence;
        let upper_quantile = chi2_isf(alpha / 2.0, df);
        let lower_quantile = chi2_isf(1.0 - alpha / 2.0, df);
        Some((
            df * self.value / upper_quantile,
            df * self.value / lower_quantile,
        ))
    }
}

/// χ² density.
fn chi2_pdf(x: f64, df: f64) -> f64 {
    if x <= 0.0 {
        return 0.0;
    }
    let k = df / 2.0;
    ((k - 1.0) * x.ln() - x / 2.0 - k * std::f64::consts::LN_2 - ln_gamma(k)).exp()
}

/// Upper-tail χ² quantile: x with P(X > x) = p. Started from the
/// Wilson-Hilferty approximation (common practice).
pub fn chi2_isf(p: f64, df: f64) -> f64 {
    let z = crate::stats::dist::normal_isf(p);
    let h = 2.0 / (9.0 * df);
    let start = (df * (1.0 - h + z * h.sqrt()).powi(3)).max(1e-3 * df);
    invert_upper_tail(p, start, |x| (chi2_sf(x, df), chi2_pdf(x, df)))
}
