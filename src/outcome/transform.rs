//! A block analysed on a transformed scale (linear-extensions spec C), or
//! the Box-Cox profile of its model when the author asked for it. Every
//! estimate, SE, test and letter in the outcome is on the analysis scale;
//! this says how to take means and limits back to the data's scale.

use crate::stats::transform::{BoxCox, Declared, Transform};

/// The arithmetic means of one factor's levels on the data's scale (for
/// orientation beside the back-transformed means), in level order.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct ArithmeticMeans {
    pub factor: String,
    pub means: Vec<f64>,
}

/// A mean with its interval, back on the data's scale.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct BackTransformed {
    pub mean: f64,
    pub lower: f64,
    pub upper: f64,
}

/// The transformation of a block and what the report needs to undo it.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct TransformDetail {
    /// The transformation the analysis ran on; `None` when the block only
    /// asked for the Box-Cox profile.
    pub declared: Option<Declared>,
    /// Decimals for values on the data's scale.
    pub data_decimals: u32,
    /// Per treatment factor (one-factor and main-effect families).
    pub arithmetic: Vec<ArithmeticMeans>,
    /// Some back-transformed means underflowed to zero.
    pub underflow: bool,
    pub box_cox: Option<BoxCox>,
}

impl TransformDetail {
    /// The applied transformation, if any.
    pub fn applied(&self) -> Option<&Declared> {
        self.declared.as_ref()
    }

    /// A mean and its limits on the data's scale.
    pub fn back(t: &Declared, mean: f64, lower: f64, upper: f64) -> BackTransformed {
        BackTransformed {
            mean: t.back(mean),
            lower: t.back(lower),
            upper: t.back(upper),
        }
    }

    /// The arithmetic mean of `factor`'s level `i`, where known.
    pub fn arithmetic_mean(&self, factor: &str, i: usize) -> Option<f64> {
        self.arithmetic
            .iter()
            .find(|a| a.factor == factor)
            .and_then(|a| a.means.get(i).copied())
    }
}

/// Names the report uses for a transformation.
pub trait Wording {
    /// The scale in words: "natural-log", "square-root".
    fn scale(&self) -> &'static str;
    /// The response as analysed: `ln(weight)`, `√(count + 0.5)`.
    fn label(&self, response: &str) -> String;
    /// What a back-transformed mean is.
    fn back_name(&self) -> &'static str;
    /// What a back-transformed difference is, where one exists.
    fn ratio_name(&self) -> Option<&'static str>;
}

impl Wording for Declared {
    fn scale(&self) -> &'static str {
        match self.transform {
            Transform::Ln => "natural-log",
            Transform::Log10 => "base-10 log",
            Transform::Sqrt => "square-root",
            Transform::Logit => "logit",
            Transform::Arcsine => "arcsine-square-root",
        }
    }

    fn label(&self, response: &str) -> String {
        let inner = match (self.percent, self.offset) {
            (true, _) => format!("{response}/100"),
            (false, o) if o > 0.0 => format!("{response} + {}", crate::format::significant(o, 6)),
            _ => response.to_string(),
        };
        match self.transform {
            Transform::Ln => format!("ln({inner})"),
            Transform::Log10 => format!("log10({inner})"),
            Transform::Sqrt => format!("√({inner})"),
            Transform::Logit => format!("logit({inner})"),
            Transform::Arcsine => format!("arcsin √({inner})"),
        }
    }

    fn back_name(&self) -> &'static str {
        match (self.transform, self.offset > 0.0) {
            (Transform::Ln | Transform::Log10, false) => "geometric mean",
            (Transform::Ln | Transform::Log10, true) => "shifted geometric mean",
            (Transform::Sqrt, _) => "squared mean root",
            (Transform::Logit | Transform::Arcsine, _) => "back-transformed proportion",
        }
    }

    fn ratio_name(&self) -> Option<&'static str> {
        match self.transform {
            Transform::Ln | Transform::Log10 if self.offset == 0.0 => Some("ratio"),
            Transform::Logit => Some("odds ratio"),
            _ => None,
        }
    }
}

/// `Geometric means`, `Squared mean roots`, `Back-transformed proportions`:
/// a back-transformed mean's name as a plural heading.
pub fn plural_capitalised(name: &str) -> String {
    let plural = match name.strip_suffix("mean root") {
        Some(head) => format!("{head}mean roots"),
        None => format!("{name}s"),
    };
    let mut c = plural.chars();
    c.next().map_or(String::new(), |f| {
        f.to_uppercase().collect::<String>() + c.as_str()
    })
}

/// A difference on the analysis scale as a ratio on the data's scale, with
/// the procedure's limits taken through the same function.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct RatioEstimate {
    pub estimate: f64,
    pub lower: f64,
    pub upper: f64,
    /// 100 (ratio − 1), for a ratio of geometric means (not of odds).
    pub percent_change: Option<f64>,
}

impl RatioEstimate {
    /// The ratio of a contrast, where the transformation gives one; an
    /// open interval end (one-sided procedures) stays NaN.
    pub fn of(t: &Declared, c: &crate::outcome::linear::Contrast) -> Option<RatioEstimate> {
        let estimate = t.ratio(c.estimate)?;
        let limit = |x: f64| t.ratio(x).filter(|_| x.is_finite()).unwrap_or(f64::NAN);
        Some(RatioEstimate {
            estimate,
            lower: limit(c.lower),
            upper: limit(c.upper),
            percent_change: (t.ratio_name() == Some("ratio")).then_some(100.0 * (estimate - 1.0)),
        })
    }
}

impl crate::outcome::linear::LinearOutcome {
    /// The transformation this block's numbers are on, if any (none for a
    /// block that only asked for the Box-Cox profile).
    pub fn transformation(&self) -> Option<&Declared> {
        self.transform.as_deref().and_then(TransformDetail::applied)
    }
}
