//! Response transformations: the scale an analysis runs on and the way back
//! to the data's scale (linear-extensions spec C.1). Means and interval
//! limits are back-transformed endpoint by endpoint; SEs never are (the
//! interval is asymmetric on the data's scale).

use serde::{Deserialize, Serialize};

/// The function applied to each response value before the analysis.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum Transform {
    /// Natural logarithm of y + offset.
    Ln,
    /// Base-10 logarithm of y + offset.
    Log10,
    /// Square root of y + offset.
    Sqrt,
    /// ln(p / (1 − p)) of a proportion.
    Logit,
    /// asin(√p) in radians, of a proportion.
    Arcsine,
}

/// A transformation as a block declares it.
#[derive(Debug, Clone, Copy, PartialEq, Serialize, Deserialize)]
pub struct Declared {
    pub transform: Transform,
    /// Added to every value first (log and square root only); 0 when none.
    pub offset: f64,
    /// The values are percentages: divided by 100 before a proportion's
    /// transformation, and back-transformed means multiplied by 100.
    pub percent: bool,
}

impl Transform {
    /// The keyword `transform:` takes.
    pub fn keyword(self) -> &'static str {
        match self {
            Transform::Ln => "log",
            Transform::Log10 => "log10",
            Transform::Sqrt => "sqrt",
            Transform::Logit => "logit",
            Transform::Arcsine => "arcsine",
        }
    }

    /// Whether the values must be proportions (0..1, or 0..100 as percent).
    pub fn takes_proportions(self) -> bool {
        matches!(self, Transform::Logit | Transform::Arcsine)
    }

    /// Whether the transformation takes an offset.
    pub fn takes_offset(self) -> bool {
        matches!(self, Transform::Ln | Transform::Log10 | Transform::Sqrt)
    }
}

impl Declared {
    /// The value on the analysis scale, or `None` outside the domain.
    pub fn apply(&self, y: f64) -> Option<f64> {
        let x = if self.percent { y / 100.0 } else { y } + self.offset;
        let z = match self.transform {
            Transform::Ln if x > 0.0 => x.ln(),
            Transform::Log10 if x > 0.0 => x.log10(),
            Transform::Sqrt if x >= 0.0 => x.sqrt(),
            Transform::Logit if x > 0.0 && x < 1.0 => (x / (1.0 - x)).ln(),
            Transform::Arcsine if (0.0..=1.0).contains(&x) => x.sqrt().asin(),
            _ => return None,
        };
        z.is_finite().then_some(z)
    }

    /// A mean or an interval limit on the analysis scale, back on the data's
    /// scale. The square root's lower limits below zero count as zero (the
    /// root is never negative); the arcsine's are clipped to [0, π/2].
    pub fn back(&self, z: f64) -> f64 {
        let x = match self.transform {
            Transform::Ln => z.exp() - self.offset,
            Transform::Log10 => 10f64.powf(z) - self.offset,
            Transform::Sqrt => z.max(0.0).powi(2) - self.offset,
            Transform::Logit => 1.0 / (1.0 + (-z).exp()),
            Transform::Arcsine => z.clamp(0.0, std::f64::consts::FRAC_PI_2).sin().powi(2),
        };
        if self.percent { 100.0 * x } else { x }
    }

    /// A difference d of two means on the analysis scale as a ratio on the
    /// data's scale (ratio of geometric means for a log without offset, odds
    /// ratio for the logit); `None` where no ratio exists.
    pub fn ratio(&self, d: f64) -> Option<f64> {
        match self.transform {
            Transform::Ln if self.offset == 0.0 => Some(d.exp()),
            Transform::Log10 if self.offset == 0.0 => Some(10f64.powf(d)),
            Transform::Logit => Some(d.exp()),
            _ => None,
        }
    }

    /// Whether a back-transformed mean underflows to zero (e^m for m below
    /// about −745), which the report warns about.
    pub fn underflows(&self, z: f64) -> bool {
        match self.transform {
            Transform::Ln => z < -745.0,
            Transform::Log10 => z < -323.0,
            _ => false,
        }
    }
}

/// The Box-Cox profile of a linear model (Box & Cox 1964): the estimate of
/// λ, its likelihood-ratio interval and the conventional value it suggests.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct BoxCox {
    pub lambda: f64,
    /// ℓ(λ̂).
    pub log_likelihood: f64,
    /// The interval {λ : ℓ(λ̂) − ℓ(λ) ≤ χ²₁(level)/2}; a side is `None` when
    /// it lies beyond the search range.
    pub lower: Option<f64>,
    pub upper: Option<f64>,
    pub level: f64,
    /// ℓ at the conventional values −1, −0.5, 0, 0.5, 1, 2.
    pub profile: Vec<(f64, f64)>,
    /// `None` when 1 is inside the interval (no transformation indicated);
    /// otherwise the conventional value inside it closest to λ̂, if any.
    pub suggestion: Option<f64>,
    /// True when the estimate sits at the end of the search range.
    pub at_boundary: bool,
}

/// The conventional powers a Box-Cox suggestion chooses among.
pub const CONVENTIONAL: [f64; 6] = [-1.0, -0.5, 0.0, 0.5, 1.0, 2.0];

/// Where λ̂ is searched: [−3, 3] first, widened to this when the optimum is
/// at an end.
const WIDEST: f64 = 10.0;

/// z(λ) = (y^λ − 1)/λ (ln y at λ = 0) and its derivative in λ, computed
/// through expm1 so that small λ loses nothing to cancellation.
fn box_cox_value(ln_y: f64, lambda: f64) -> (f64, f64) {
    let u = lambda * ln_y;
    let e = u.exp_m1();
    let z = if lambda == 0.0 { ln_y } else { e / lambda };
    if u.abs() < 1e-2 {
        // dz/dλ = ln²y · Σₖ₌₂ (k − 1)uᵏ⁻²/k!: the closed form below loses
        // about 2ε/u to cancellation; the next term here is below 1e-18.
        let series = 0.5
            + u * (1.0 / 3.0
                + u * (1.0 / 8.0
                    + u * (1.0 / 30.0 + u * (1.0 / 144.0 + u * (1.0 / 840.0 + u / 5760.0)))));
        return (z, ln_y * ln_y * series);
    }
    let dz = (u * (e + 1.0) - e) / (lambda * lambda);
    (z, dz)
}

/// The profile of a model: `residuals(z)` returns the model's residuals for
/// the response z (the same design for every λ).
pub struct Profile<'a> {
    ln_y: Vec<f64>,
    sum_ln_y: f64,
    residuals: &'a dyn Fn(&[f64]) -> Vec<f64>,
}

impl<'a> Profile<'a> {
    /// `y` must be positive throughout.
    pub fn new(y: &[f64], residuals: &'a dyn Fn(&[f64]) -> Vec<f64>) -> Profile<'a> {
        let ln_y: Vec<f64> = y.iter().map(|v| v.ln()).collect();
        let sum_ln_y = super::sum::neumaier(ln_y.iter().copied());
        Profile {
            ln_y,
            sum_ln_y,
            residuals,
        }
    }

    /// ℓ(λ) and dℓ/dλ. SSE′ = 2 rᵀ(dz/dλ): the residual projection does
    /// not depend on λ.
    fn at(&self, lambda: f64) -> (f64, f64) {
        let (z, dz): (Vec<f64>, Vec<f64>) =
            self.ln_y.iter().map(|&l| box_cox_value(l, lambda)).unzip();
        let r = (self.residuals)(&z);
        let n = self.ln_y.len() as f64;
        let sse = super::sum::neumaier(r.iter().map(|v| v * v));
        let slope = super::sum::neumaier(r.iter().zip(&dz).map(|(a, b)| a * b));
        let value = -0.5 * n * (sse / n).ln() + (lambda - 1.0) * self.sum_ln_y;
        (value, -n * slope / sse + self.sum_ln_y)
    }

    pub fn log_likelihood(&self, lambda: f64) -> f64 {
        self.at(lambda).0
    }

    /// Maximises ℓ by the root of dℓ/dλ (Brent's bracketed root finder),
    /// then finds the interval's ends the same way.
    pub fn estimate(&self, level: f64) -> BoxCox {
        let slope = |l: f64| self.at(l).1;
        let mut range = 3.0;
        let (lambda, at_boundary) = loop {
            let (lo, hi) = (slope(-range), slope(range));
            if lo > 0.0 && hi < 0.0 {
                let root = super::roots::brent(slope, -range, range, 1e-13, 1e-13);
                break (root, false);
            }
            if range >= WIDEST {
                // The optimum lies beyond the widest range: report its end.
                break (if lo <= 0.0 { -range } else { range }, true);
            }
            range = WIDEST;
        };
        let top = self.log_likelihood(lambda);
        let drop = super::dist::chi2_isf(1.0 - level, 1.0) / 2.0;
        let below = |l: f64| self.log_likelihood(l) - (top - drop);
        let side = |direction: f64| -> Option<f64> {
            let mut step = 0.5;
            let mut inside = lambda;
            while step <= 2.0 * WIDEST {
                let probe = lambda + direction * step;
                if below(probe) < 0.0 {
                    return Some(super::roots::brent(below, inside, probe, 1e-13, 1e-13));
                }
                inside = probe;
                step *= 2.0;
            }
            None
        };
        let (lower, upper) = match at_boundary {
            true => (None, None),
            false => (side(-1.0), side(1.0)),
        };
        let inside = |v: f64| lower.is_none_or(|l| l <= v) && upper.is_none_or(|u| v <= u);
        let suggestion = if inside(1.0) && !at_boundary {
            None
        } else {
            CONVENTIONAL
                .iter()
                .copied()
                .filter(|&v| inside(v) && !at_boundary)
                .min_by(|a, b| (a - lambda).abs().total_cmp(&(b - lambda).abs()))
        };
        BoxCox {
            lambda,
            log_likelihood: top,
            lower,
            upper,
            level,
            profile: CONVENTIONAL
                .iter()
                .map(|&v| (v, self.log_likelihood(v)))
                .collect(),
            suggestion,
            at_boundary,
        }
    }
}

#[cfg(test)]
#[path = "transform_tests.rs"]
mod tests;
