//! The warnings a block with covariates raises (specification A.4, A.6):
//! slopes that differ, a covariate that differs among the groups, and
//! adjusted means predicted outside a group's covariate range.

use crate::analysis::notes::{Note, NoteKind};
use crate::format::{f_statement, fixed};
use crate::outcome::covariates::CovariateDetail;

/// The notes, in the order a reader should weigh them.
pub(crate) fn notes(detail: &CovariateDetail, alpha: f64) -> Vec<Note> {
    let mut out = Vec::new();
    let groups = &detail.groups_of;
    if let Some(s) = detail.slopes.as_ref().filter(|s| s.test.p < alpha) {
        let t = &s.test;
        out.push(Note::new(
            NoteKind::Slopes,
            format!(
                "The slopes on the covariate differ among the levels of {groups} ({}): the adjusted comparison assumes parallel lines that the data do not support, so the difference between groups depends on the covariate's value. {}; read the adjusted means with that in mind.",
                f_statement(t.df1, t.df2, t.f, t.p),
                match &detail.separate {
                    Some(_) => "The separate slopes and the differences at stated covariate values are shown",
                    None => "The separate slopes are shown only for one covariate and at most 12 groups (for fixed effects, one factor without blocks)",
                }
            ),
        ));
    }
    for c in &detail.covariates {
        let b = &c.balance;
        if b.p < alpha {
            out.push(Note::new(
                NoteKind::Covariate,
                format!(
                    "`{}` differs among the levels of {groups} ({}). If the treatment could have changed it (measured after treatments began), adjusting for it removes part of the treatment effect; state in the report when it was measured.",
                    c.name,
                    f_statement(b.df1, b.df2, b.f, b.p)
                ),
            ));
        }
        let outside: Vec<&str> = c
            .groups
            .iter()
            .filter(|g| c.mean < g.min || c.mean > g.max)
            .map(|g| g.label.as_str())
            .collect();
        if !outside.is_empty() {
            out.push(Note::new(
                NoteKind::Covariate,
                format!(
                    "The means are adjusted to `{}` = {}, outside the range observed in {}: those adjusted means are predictions beyond the data.",
                    c.name,
                    fixed(c.mean, c.decimals + 2),
                    outside.join(", ")
                ),
            ));
        }
    }
    out
}
