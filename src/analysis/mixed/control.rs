//! Dunnett's comparisons with a control from the mixed model (mixed-models
//! spec 4.2): each treatment's difference from the control with its own SE
//! and df. The joint critical value needs the comparisons to share one df
//! and to have the product correlation ρᵢⱼ = λᵢλⱼ (balanced data, one
//! stratum, or independent treatment means); otherwise the procedure is
//! refused with the reason, as the specification asks of this version.

use super::detail::whole_if_whole;
use super::families::{Estimating, Slice};
use crate::analysis::compare::{Declared, comparison_result};
use crate::outcome::linear::Family;
use crate::stats::compare::Method;
use crate::stats::dunnett::{Sides, ToControl, dunnett_general};

/// Agreement asked of the df and of the correlations with the product
/// form: the values come from the same fitted matrices and agree to
/// rounding (about 1e-12) when the structure holds; an unbalanced design
/// departs in the second or third digit.
const SAME: f64 = 1e-6;

impl Estimating<'_> {
    /// Each level of `slice` against `control`; `Err` with the reason when
    /// the comparisons do not share one df or lack the product correlation.
    pub fn dunnett_family(
        &self,
        term: &str,
        slice: &Slice,
        control: usize,
        sides: Sides,
    ) -> Result<Family, String> {
        let (estimates, weights) = self.estimates(slice);
        let k = estimates.len();
        let diff_of = |a: usize, b: usize| -> Option<(f64, f64)> {
            let d: Vec<f64> = weights[a]
                .iter()
                .zip(&weights[b])
                .map(|(x, y)| x - y)
                .collect();
            self.contrast(&d).map(|c| (c.se, whole_if_whole(c.df)))
        };
        let treatments: Vec<usize> = (0..k).filter(|&i| i != control).collect();
        let to_control: Vec<(f64, f64)> = treatments
            .iter()
            .map(|&i| diff_of(i, control).ok_or("a comparison with the control is not estimable"))
            .collect::<Result<_, _>>()?;
        let df = to_control[0].1;
        let (low, high) = to_control
            .iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), c| {
                (l.min(c.1), h.max(c.1))
            });
        if (high - low) > SAME * high {
            return Err(format!(
                "the comparisons with the control have different df ({} to {}), so no single joint critical value applies",
                crate::format::fixed(low, 1),
                crate::format::fixed(high, 1)
            ));
        }
        let lambdas = self.product_lambdas(&treatments, &to_control, &diff_of)?;
        let comparisons: Vec<ToControl> = treatments
            .iter()
            .zip(&to_control)
            .zip(&lambdas)
            .map(|((&i, &(se, _)), &lambda)| ToControl {
                level: i,
                diff: estimates[i].mean - estimates[control].mean,
                se,
                lambda,
            })
            .collect();
        let mut pairs = dunnett_general(&comparisons, control, df, self.alpha, sides);
        // Every pair of a mixed model carries its df (here the shared one).
        for p in &mut pairs.pairs {
            p.df = Some(df);
        }
        let declared = Declared {
            letters: Vec::new(),
            withheld: false,
            notes: vec![crate::outcome::procedure_note::ProcedureNote::MixedDunnett],
        };
        Ok(Family {
            term: term.to_string(),
            within: None,
            estimates,
            comparison: Some(comparison_result(
                Method::Dunnett,
                pairs,
                (self.alpha, df),
                declared,
                Some(control),
                sides,
            )),
        })
    }

    /// λᵢ with ρᵢⱼ = λᵢλⱼ, where ρᵢⱼ comes from the SEs of dᵢ, dⱼ and
    /// dᵢ − dⱼ: cov(dᵢ, dⱼ) = (SEᵢ² + SEⱼ² − SEᵢⱼ²)/2.
    fn product_lambdas(
        &self,
        treatments: &[usize],
        to_control: &[(f64, f64)],
        diff_of: &dyn Fn(usize, usize) -> Option<(f64, f64)>,
    ) -> Result<Vec<f64>, String> {
        let m = treatments.len();
        let mut rho = vec![vec![1.0; m]; m];
        for a in 0..m {
            for b in 0..a {
                let se_ab = diff_of(treatments[a], treatments[b])
                    .ok_or("a comparison between two treatments is not estimable")?
                    .0;
                let (sa, sb) = (to_control[a].0, to_control[b].0);
                let r = (sa * sa + sb * sb - se_ab * se_ab) / (2.0 * sa * sb);
                rho[a][b] = r;
                rho[b][a] = r;
            }
        }
        let lambdas: Vec<f64> = match m {
            1 => vec![std::f64::consts::FRAC_1_SQRT_2],
            2 => vec![rho[0][1].max(0.0).sqrt(); 2],
            _ => (0..m)
                .map(|i| {
                    let others: Vec<usize> = (0..m).filter(|&j| j != i).take(2).collect();
                    let (j, l) = (others[0], others[1]);
                    (rho[i][j] * rho[i][l] / rho[j][l]).max(0.0).sqrt()
                })
                .collect(),
        };
        let fits = (0..m).all(|a| {
            (0..a).all(|b| rho[a][b] > 0.0 && (lambdas[a] * lambdas[b] - rho[a][b]).abs() <= SAME)
        });
        if !fits {
            return Err("the comparisons with the control are not correlated in the product form Dunnett's critical value needs (the design is not balanced across the treatments)".into());
        }
        Ok(lambdas)
    }
}

/// The Dunnett family a block asks for: one treatment factor, its
/// `control` level, α in the range where the critical value is accurate.
pub(super) fn dunnett(
    errors: &crate::analysis::factorial::model::Errors<'_>,
    estimating: &Estimating<'_>,
    compared: &[usize],
) -> Result<Family, crate::diag::Diagnostic> {
    let (spec, model) = (errors.spec, estimating.model);
    let other = "use `compare: bonferroni` or `holm` against the control's pairs, or `tukey`";
    let [f] = compared else {
        return Err(errors.model(
            "`compare: dunnett` with random terms is for a model with one treatment factor".into(),
            other,
        ));
    };
    let labels = &estimating.labels[*f];
    let Some(c) = spec.control.as_ref() else {
        return Err(errors.model(
            "Dunnett's comparisons need `control`".into(),
            "add `control: <level>`",
        ));
    };
    let Some(control) = labels.iter().position(|l| *l == c.value) else {
        let d = errors.doc.error_at(
            c.line,
            Some(c.column),
            format!(
                "the control `{}` is not a level of `{}` with data",
                c.value, model.factor_names[*f]
            ),
        );
        return Err(
            match crate::diag::nearest(&c.value, labels.iter().map(String::as_str)) {
                Some(n) => d.hint(format!("did you mean `{n}`?")),
                None => d.hint(format!("the levels are {}", labels.join(", "))),
            },
        );
    };
    if estimating.alpha < crate::stats::dunnett::DUNNETT_MIN_ALPHA {
        return Err(errors.model(
            format!(
                "Dunnett's critical value is accurate only for alpha of at least {:e}",
                crate::stats::dunnett::DUNNETT_MIN_ALPHA
            ),
            "use a larger alpha, or `compare: tukey`",
        ));
    }
    let slice = Slice {
        vary: vec![*f],
        within: None,
    };
    estimating
        .dunnett_family(&model.factor_names[*f], &slice, control, spec.sides)
        .map_err(|reason| {
            errors.model(
                format!("Dunnett's comparisons cannot be made here: {reason}"),
                "use `compare: bonferroni` or `holm`, which need neither; each pair then keeps its own df",
            )
        })
}
