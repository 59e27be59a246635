//! The results-file record of a block's equivalence tests (`margin`).

use super::finite;
use crate::outcome::equivalence::{EquivalenceDetail, EquivalenceRow};
use crate::outcome::linear::LinearOutcome;
use serde::Serialize;

#[derive(Serialize)]
pub struct EquivalenceRecord {
    pub control: String,
    /// "each" (a claim per level, Bonferroni) or "all" (intersection-union).
    pub claim: &'static str,
    /// The block's α.
    pub alpha: f64,
    /// Each one-sided test's level: α/m for separate claims, else α.
    pub comparison_alpha: f64,
    /// The intervals' coverage, 1 − 2·comparison_alpha.
    pub interval_level: f64,
    /// "pooled" (the ANOVA's MSE and df) or "welch".
    pub variance: &'static str,
    pub margins: MarginsRecord,
    /// The control's observed mean on the data's scale.
    pub control_mean: Option<f64>,
    /// Every level shown equivalent (what the claim `all` needs).
    pub all_equivalent: bool,
    /// The level of the two-sided difference tests (α/m).
    pub difference_alpha: f64,
    pub comparisons: Vec<ComparisonRecord>,
}

#[derive(Serialize)]
pub struct MarginsRecord {
    /// "units", "percent" or "ratio".
    pub kind: &'static str,
    /// As declared: in units, percent of the control mean, or ratio limits.
    pub lower: f64,
    pub upper: f64,
    /// The margins the tests use, on the scale of `difference` (units; the
    /// log of the ratio limits).
    pub on_analysis_scale: LimitsRecord,
}

#[derive(Serialize)]
pub struct LimitsRecord {
    pub lower: Option<f64>,
    pub upper: Option<f64>,
}

#[derive(Serialize)]
pub struct ComparisonRecord {
    pub level: String,
    pub control: String,
    /// Level minus control on the analysis scale (ln y for ratios).
    pub difference: Option<f64>,
    pub se: Option<f64>,
    pub df: Option<f64>,
    /// The interval at `interval_level`, on the analysis scale.
    pub lower: Option<f64>,
    pub upper: Option<f64>,
    pub t_lower: Option<f64>,
    pub t_upper: Option<f64>,
    pub p_lower: Option<f64>,
    pub p_upper: Option<f64>,
    /// p_TOST, the larger of the two.
    pub p: Option<f64>,
    pub equivalent: bool,
    /// Two-sided p of no difference, and whether it is below `difference_alpha`.
    pub p_difference: Option<f64>,
    pub different: bool,
    /// With ratio margins: the ratio of geometric means and its interval.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub ratio: Option<RatioRecord>,
}

#[derive(Serialize)]
pub struct RatioRecord {
    pub estimate: Option<f64>,
    pub lower: Option<f64>,
    pub upper: Option<f64>,
}

pub fn equivalence_record(o: &LinearOutcome, d: &EquivalenceDetail) -> EquivalenceRecord {
    EquivalenceRecord {
        control: d.control.clone(),
        claim: d.claim.key(),
        alpha: d.alpha,
        comparison_alpha: d.comparison_alpha,
        interval_level: d.level,
        variance: if d.welch { "welch" } else { "pooled" },
        margins: MarginsRecord {
            kind: d.margins.kind.key(),
            lower: d.margins.lower,
            upper: d.margins.upper,
            on_analysis_scale: LimitsRecord {
                lower: finite(d.lower),
                upper: finite(d.upper),
            },
        },
        control_mean: finite(d.control_mean),
        all_equivalent: d.all_equivalent(),
        difference_alpha: d.difference_alpha,
        comparisons: d.rows.iter().map(|r| row_record(o, d, r)).collect(),
    }
}

fn row_record(o: &LinearOutcome, d: &EquivalenceDetail, r: &EquivalenceRow) -> ComparisonRecord {
    let t = &r.tost;
    let ratio = o.transformation().filter(|_| d.ratio()).map(|x| {
        let s = r.shown(Some(x));
        RatioRecord {
            estimate: finite(s.estimate),
            lower: finite(s.lower),
            upper: finite(s.upper),
        }
    });
    ComparisonRecord {
        level: r.level.clone(),
        control: d.control.clone(),
        difference: finite(t.difference),
        se: finite(t.se),
        df: finite(t.df),
        lower: finite(t.lower),
        upper: finite(t.upper),
        t_lower: finite(t.t_lower),
        t_upper: finite(t.t_upper),
        p_lower: finite(t.p_lower),
        p_upper: finite(t.p_upper),
        p: finite(t.p),
        equivalent: t.equivalent,
        p_difference: finite(r.p_difference),
        different: r.different,
        ratio,
    }
}
