//! Each fixed term's test from the mixed model (Wald F, Type III, with its
//! own denominator df), placed in the classical stratum it belongs to when
//! the design has a classical table, with that table's SS and MS; and the
//! strata themselves.

use crate::outcome::linear::{RESIDUAL, Stratum, TermTest};
use crate::stats::dist::f_isf;
use crate::stats::mixed::{Ddf, FixedDesign, FixedInference};
use crate::stats::strata::{StratumAnalysis, StratumId};

/// What the tests read.
pub(super) struct Tested<'a> {
    pub fit: &'a FixedInference,
    pub design: &'a FixedDesign,
    pub ddf: Ddf,
    pub alpha: f64,
    /// The classical analysis, when the design has one and REML reproduces it.
    pub classical: Option<&'a StratumAnalysis>,
    pub random_names: &'a [String],
}

impl Tested<'_> {
    /// The name of a classical stratum: its random term, or the residual.
    fn stratum_name(&self, id: StratumId) -> String {
        match id {
            StratumId::Random(i) => self.random_names[i].clone(),
            StratumId::Residual => RESIDUAL.to_string(),
        }
    }

    /// The classical strata (coarsest first, the residual last), or only
    /// the residual with the REML variance when there is no classical table.
    pub fn strata(&self, residual_variance: f64) -> Vec<Stratum> {
        match self.classical {
            Some(a) => a
                .strata
                .iter()
                .map(|s| Stratum {
                    name: self.stratum_name(s.id),
                    df: s.error.df as f64,
                    ss: s.error.ss,
                    ms: s.error.ms.unwrap_or(f64::NAN),
                })
                .collect(),
            None => vec![Stratum {
                name: RESIDUAL.to_string(),
                df: f64::NAN,
                ss: f64::NAN,
                ms: residual_variance,
            }],
        }
    }

    /// The test of fixed term `t` (named `name`, over `factors`); blocks
    /// (`tested` false) keep their classical SS only.
    pub fn term(&self, t: usize, name: &str, factors: &[usize], tested: bool) -> TermTest {
        let wald = self.fit.type3(self.design, t, self.ddf).ok();
        let (stratum, ss, ms) = match self.classical {
            Some(a) => {
                let id = a.term_strata[t];
                let index = a.strata.iter().position(|s| s.id == id);
                let line = a
                    .strata
                    .iter()
                    .flat_map(|s| &s.treatments)
                    .find(|l| l.term == t);
                (
                    index,
                    line.map_or(f64::NAN, |l| l.ss),
                    line.map_or(f64::NAN, |l| l.ms),
                )
            }
            None => (None, f64::NAN, f64::NAN),
        };
        let df = wald.map_or(0, |w| w.df_num);
        let df_den = wald.map_or(f64::NAN, |w| super::detail::whole_if_whole(w.df_den));
        let (f, p) = match wald.filter(|_| tested) {
            Some(w) => (w.f, w.p_value),
            None => (f64::NAN, f64::NAN),
        };
        TermTest {
            name: name.to_string(),
            factors: factors.to_vec(),
            df,
            ss,
            ms,
            f,
            p,
            critical_f: if tested {
                f_isf(self.alpha, df as f64, df_den)
            } else {
                f64::NAN
            },
            stratum,
            denominator_df: df_den,
            tested,
            effect: None,
        }
    }
}
