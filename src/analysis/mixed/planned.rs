//! Planned contrasts in a mixed model: each weighing of one factor's
//! estimated marginal means is a linear function lβ of the fixed effects,
//! tested with its own SE and df (Kenward-Roger or Satterthwaite, as the
//! model's tests), and the set jointly by the Wald F test with the same
//! method. `analysis::contrasts` does the rest, as for fixed effects.

use super::detail::whole_if_whole;
use super::families::{Estimating, Slice};
use crate::analysis::contrasts::{ContrastTests, Tested};
use crate::doc::block::DdfMethod;
use crate::outcome::covariates::FTest;

/// One fixed factor's marginal means as weight rows over the full design.
pub(super) struct MixedLevelMeans<'a> {
    pub estimating: &'a Estimating<'a>,
    pub factor: &'a str,
    pub labels: &'a [String],
    /// Per level, its mean's weights over the full design.
    rows: Vec<Vec<f64>>,
    pub method: DdfMethod,
}

impl<'a> MixedLevelMeans<'a> {
    pub fn new(estimating: &'a Estimating<'a>, f: usize, method: DdfMethod) -> Self {
        let slice = Slice {
            vary: vec![f],
            within: None,
        };
        MixedLevelMeans {
            estimating,
            factor: &estimating.model.factor_names[f],
            labels: &estimating.labels[f],
            rows: estimating.estimates(&slice).1,
            method,
        }
    }

    /// Σ wᵢ·(level i's weight row).
    fn combined(&self, w: &[f64]) -> Vec<f64> {
        let width = self.rows.first().map_or(0, Vec::len);
        (0..width)
            .map(|j| w.iter().zip(&self.rows).map(|(a, row)| a * row[j]).sum())
            .collect()
    }
}

impl ContrastTests for MixedLevelMeans<'_> {
    fn factor(&self) -> &str {
        self.factor
    }

    fn labels(&self) -> &[String] {
        self.labels
    }

    fn test(&self, w: &[f64]) -> Option<Tested> {
        let c = self.estimating.contrast(&self.combined(w))?;
        // The means are offsets from the data's origin: weights that do not
        // sum to zero carry it.
        let carried: f64 = w.iter().sum::<f64>() * self.estimating.origin;
        (c.se.is_finite() && c.se > 0.0).then(|| Tested {
            estimate: c.estimate + carried,
            se: c.se,
            df: whole_if_whole(c.df),
        })
    }

    /// By polarisation: ¼[var(a + b) − var(a − b)].
    fn covariance(&self, a: &[f64], b: &[f64]) -> f64 {
        let var = |sign: f64| {
            let l: Vec<f64> = a.iter().zip(b).map(|(x, y)| x + sign * y).collect();
            self.estimating
                .contrast(&self.combined(&l))
                .map_or(f64::NAN, |c| c.se * c.se)
        };
        0.25 * (var(1.0) - var(-1.0))
    }

    fn joint(&self, rows: &[Vec<f64>]) -> Option<FTest> {
        if rows.len() < 2 {
            return None;
        }
        let restricted: Vec<Vec<f64>> = rows
            .iter()
            .map(|w| self.estimating.design.restrict(&self.combined(w)).ok())
            .collect::<Option<_>>()?;
        let test = self
            .estimating
            .fit
            .wald(&restricted, self.estimating.ddf)
            .ok()?;
        Some(FTest {
            f: test.f,
            df1: test.df_num as f64,
            df2: whole_if_whole(test.df_den),
            p: test.p_value,
        })
    }

    fn own_df(&self) -> Option<DdfMethod> {
        Some(self.method)
    }
}
