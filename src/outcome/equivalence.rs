//! Equivalence of each level with the control by two one-sided tests
//! (linear-extensions spec F): the margins as declared and on the
//! analysis scale, the claim and its level, and one test per level.

use crate::doc::block_equivalence::{Claim, MarginKind, Margins};
use crate::stats::equivalence::Tost;

/// One level against the control.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct EquivalenceRow {
    pub level: String,
    /// The two one-sided tests, on the analysis scale (ln y for ratios),
    /// with the interval at `EquivalenceDetail::level`.
    pub tost: Tost,
    /// Two-sided p of the test of no difference, same SE and df.
    pub p_difference: f64,
    /// That test is significant at `EquivalenceDetail::difference_alpha`.
    pub different: bool,
}

/// The equivalence tests of a block.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct EquivalenceDetail {
    pub margins: Margins,
    /// θ_L and θ_U on the analysis scale: units; the percentage of the
    /// control's mean; or the log of the ratio limits.
    pub lower: f64,
    pub upper: f64,
    pub claim: Claim,
    /// The block's α (familywise for separate claims).
    pub alpha: f64,
    /// The one-sided level of each test: α/m for separate claims, α for one.
    pub comparison_alpha: f64,
    /// The intervals' coverage, 1 − 2·`comparison_alpha`.
    pub level: f64,
    /// Each pair's own variances and Satterthwaite df (`method: welch`).
    pub welch: bool,
    pub control: String,
    /// The control's observed mean on the data's scale (what a percentage
    /// margin is taken of).
    pub control_mean: f64,
    /// The level of the two-sided difference tests: α/m over m levels.
    pub difference_alpha: f64,
    pub rows: Vec<EquivalenceRow>,
}

impl EquivalenceDetail {
    /// Every level shown equivalent (the claim `all` rests on this).
    pub fn all_equivalent(&self) -> bool {
        !self.rows.is_empty() && self.rows.iter().all(|r| r.tost.equivalent)
    }

    /// Whether estimates are ratios of geometric means.
    pub fn ratio(&self) -> bool {
        self.margins.kind == MarginKind::Ratio
    }
}

impl EquivalenceDetail {
    /// The margins in words as declared: `±2`, `-1.5 to 2`, `±3 % of the
    /// control mean`, `ratio 0.80 to 1.25` (ASCII minus; the report
    /// typesets it).
    pub fn margin_words(&self) -> String {
        let m = &self.margins;
        let w = |i: usize, x: f64| {
            m.written
                .get(i)
                .filter(|_| m.written.len() == 2)
                .cloned()
                .unwrap_or_else(|| crate::format::significant(x, 4))
        };
        match (m.kind, m.symmetric()) {
            (MarginKind::Units, true) => format!("±{}", m.written[0]),
            (MarginKind::Percent, true) => {
                format!(
                    "±{} % of the control mean",
                    m.written[0].trim_start_matches('+')
                )
            }
            (MarginKind::Units, false) => format!("{} to {}", w(0, m.lower), w(1, m.upper)),
            (MarginKind::Percent, false) => format!(
                "{} % to {} % of the control mean",
                w(0, m.lower),
                w(1, m.upper)
            ),
            (MarginKind::Ratio, _) => format!("ratio {} to {}", w(0, m.lower), w(1, m.upper)),
        }
    }

    /// The margins on the difference's scale for a percentage (units), or
    /// as declared otherwise (units, ratio limits): what the table prints.
    pub fn shown_margins(&self) -> (f64, f64) {
        match self.margins.kind {
            MarginKind::Percent => (self.lower, self.upper),
            _ => (self.margins.lower, self.margins.upper),
        }
    }
}

/// A comparison as the report shows it: the difference, or with ratio
/// margins the ratio of geometric means, with the interval.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Shown {
    pub estimate: f64,
    pub lower: f64,
    pub upper: f64,
}

impl EquivalenceRow {
    /// The estimate and interval on the data's terms: a ratio through the
    /// log transformation `t` when there is one, else the difference.
    pub fn shown(&self, t: Option<&crate::stats::transform::Declared>) -> Shown {
        let back = |x: f64| t.and_then(|t| t.ratio(x)).unwrap_or(x);
        Shown {
            estimate: back(self.tost.difference),
            lower: back(self.tost.lower),
            upper: back(self.tost.upper),
        }
    }
}

/// A level such as α/3 in words: four significant digits without trailing
/// zeros (`0.01667`, `0.05`).
pub fn alpha_words(x: f64) -> String {
    let s = crate::format::significant(x, 4);
    match s.contains('.') {
        true => s.trim_end_matches('0').trim_end_matches('.').to_string(),
        false => s,
    }
}
