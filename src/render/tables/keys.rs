//! The `data-key` of a table cell: the results-file field it shows, as a
//! path from the block (README, "Outputs"). Arrays are entered by name: a
//! term by `term`, a level or mean by `level`, a family by `term` (or
//! `term@within` for a slice), a cell by its levels joined by ` × `; a pair
//! by its index. A last segment `ci`, `iqr` or `df` names the two fields one
//! cell prints (`ci_lower`/`ci_upper` or `lower`/`upper`, `q1`/`q3`,
//! `df1`/`df2`).

use crate::outcome::linear::Family;

/// Key builder for one block.
pub struct Keys<'a> {
    id: &'a str,
}

impl<'a> Keys<'a> {
    pub fn new(id: &'a str) -> Self {
        Keys { id }
    }

    /// The block's id.
    pub fn block(&self) -> &str {
        self.id
    }

    /// Any field of the block: `growth.welch.f`.
    pub fn field(&self, path: &str) -> String {
        format!("{}.{path}", self.id)
    }

    /// A term of the ANOVA table: `warp.anova.terms.wool:tension.f`.
    pub fn term(&self, term: &str, q: &str) -> String {
        format!("{}.anova.terms.{term}.{q}", self.id)
    }

    /// A level of a one-factor design: `growth.groups.trt2.mean`.
    pub fn level(&self, level: &str, q: &str) -> String {
        format!("{}.groups.{level}.{q}", self.id)
    }

    /// A field of a comparison family: `warp.comparisons.tension@wool=A.letters`.
    pub fn family(&self, family: &Family, q: &str) -> String {
        match &family.within {
            Some(w) => format!("{}.comparisons.{}@{w}.{q}", self.id, family.term),
            None => format!("{}.comparisons.{}.{q}", self.id, family.term),
        }
    }

    /// An estimate of a family: `warp.comparisons.tension.means.L.se`.
    pub fn estimate(&self, family: &Family, label: &str, q: &str) -> String {
        self.family(family, &format!("means.{label}.{q}"))
    }

    /// A contrast of a family: `growth.comparisons.group.pairs.0.diff`.
    pub fn contrast(&self, family: &Family, i: usize, q: &str) -> String {
        self.family(family, &format!("pairs.{i}.{q}"))
    }

    /// A cell of the design by its label: `warp.cells.A × L.mean`.
    pub fn cell(&self, label: &str, q: &str) -> String {
        format!("{}.cells.{label}.{q}", self.id)
    }
}
