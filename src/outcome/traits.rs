//! Several responses (traits) analysed one by one with the same model and
//! comparison procedure, and what the trait table reads from them: each
//! trait's grand mean, whether its CV has a meaning, the rows (the levels
//! of each compared factor), and the significance marks of the model terms.
//! The per-trait analyses are ordinary linear outcomes, untouched.

use super::linear::{Family, LinearOutcome, Role, TermTest};

/// One trait's analysis.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct Trait {
    /// The response column.
    pub response: String,
    pub outcome: LinearOutcome,
    /// The smallest observation analysed: a CV is shown only for a trait
    /// whose every value is above zero (ratio scale).
    pub minimum: f64,
}

/// A block with several responses.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct TraitsOutcome {
    pub id: String,
    pub line: usize,
    pub data: String,
    /// In the order the model names them.
    pub traits: Vec<Trait>,
    /// The block's `caption`, for the trait table.
    pub caption: Option<String>,
    /// Every trait's warnings, each opened by the trait's column name.
    pub warnings: Vec<String>,
}

/// The id a trait's own analysis carries: its tables' data keys then read
/// `block.traits.<response>.…`, the trait's record in the results file.
pub fn trait_id(block: &str, response: &str) -> String {
    format!("{block}.traits.{response}")
}

/// What a trait's figure ids start with, followed by `-`: `weights-Prewt`
/// (no dots, which LaTeX file names would need escaped).
pub fn figure_stem(block: &str, response: &str) -> String {
    format!("{block}-{response}")
}

/// The conventional significance marks of an F test's p-value.
pub fn mark(p: f64) -> Option<&'static str> {
    if !p.is_finite() {
        None
    } else if p < 0.001 {
        Some("***")
    } else if p < 0.01 {
        Some("**")
    } else if p < 0.05 {
        Some("*")
    } else {
        Some("ns")
    }
}

/// The marks' meaning, as the trait table's footnote prints it.
pub const MARKS_LEGEND: &str = "ns: p ≥ 0.05; *: p < 0.05; **: p < 0.01; ***: p < 0.001";

impl Trait {
    /// Whether the trait's CV is meaningful: every value above zero.
    pub fn cv_meaningful(&self) -> bool {
        self.minimum > 0.0
    }

    /// The CV as the table shows it: `None` where it has no meaning.
    pub fn cv_shown(&self) -> Option<f64> {
        self.outcome.cv_percent().filter(|_| self.cv_meaningful())
    }

    /// The families whose levels make the table's rows: each treatment
    /// factor's marginal means (the one factor's levels in a one-way model).
    pub fn row_families(&self) -> Vec<&Family> {
        let o = &self.outcome;
        o.factors
            .iter()
            .filter(|f| f.role == Role::Treatment)
            .filter_map(|f| o.main_family(&f.name))
            .collect()
    }

    /// The tested terms, in model order.
    pub fn tested_terms(&self) -> impl Iterator<Item = &TermTest> {
        self.outcome.terms.iter().filter(|t| t.tested)
    }

    /// Interactions significant at the block's α: they make the rows of
    /// the factors they involve misleading (an average over the others).
    pub fn significant_interactions(&self) -> Vec<&TermTest> {
        self.tested_terms()
            .filter(|t| t.factors.len() > 1 && t.p < self.outcome.alpha)
            .collect()
    }

    /// Whether a factor's rows average over a significant interaction.
    pub fn factor_in_interaction(&self, factor: &str) -> bool {
        self.significant_interactions()
            .iter()
            .any(|t| t.name.split(':').any(|f| f == factor))
    }
}

impl TraitsOutcome {
    /// The rows of the trait table: (factor, level label) in the first
    /// trait's design order, then any level only a later trait has (a
    /// level whose values are all missing in one trait is absent there).
    pub fn rows(&self) -> Vec<(String, String)> {
        let mut rows: Vec<(String, String)> = Vec::new();
        for t in &self.traits {
            for f in t.row_families() {
                for e in &f.estimates {
                    let row = (f.term.clone(), e.label.clone());
                    if !rows.contains(&row) {
                        rows.push(row);
                    }
                }
            }
        }
        rows
    }

    /// The terms with a significance row: every tested term of any trait,
    /// in model order.
    pub fn tested_terms(&self) -> Vec<String> {
        let mut terms: Vec<String> = Vec::new();
        for t in &self.traits {
            for term in t.tested_terms() {
                if !terms.contains(&term.name) {
                    terms.push(term.name.clone());
                }
            }
        }
        terms
    }
}
