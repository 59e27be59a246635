//! The one-factor comparison family: the procedure `compare:` names, with
//! its notes and letters.

use super::sample::Sample;
use super::{Alternatives, Engine};
use crate::analysis::MAX_COMPARED_LEVELS;
use crate::analysis::compare::{Declared, comparison_result, has_letters, letters, protect};
use crate::analysis::notes::Note;
use crate::diag::Diagnostic;
use crate::doc::block::Omnibus;
use crate::outcome::linear::{Comparison, LevelSummary};
use crate::outcome::procedure_note::ProcedureNote;
use crate::stats::compare::{LevelMean, Method, Pairwise, pairwise};
use crate::stats::dunnett::{DUNNETT_MIN_ALPHA, dunnett};
use crate::stats::letters::letter_count;
use crate::stats::oneway::{GroupSummary, OneWay};
use crate::stats::ranks::dunn;
use crate::stats::welch::games_howell;

impl Engine<'_> {
    /// The comparisons `compare:` asks for, unless the error term or the
    /// number of levels rules them out (said in a note).
    pub(super) fn comparison(
        &self,
        sample: &Sample,
        levels: &[LevelSummary],
        table: &OneWay,
        alternatives: &Alternatives,
        notes: &mut Vec<Note>,
    ) -> Result<Option<Comparison>, Diagnostic> {
        let Some(method) = self.spec.compare else {
            return Ok(None);
        };
        let pooled_ok = table.df_within > 0 && table.ms_within > 0.0;
        if self.spec.method == Omnibus::Anova && !pooled_ok {
            notes.push(Note::other("pairwise comparisons need an error term with variation and degrees of freedom; none are reported"));
            return Ok(None);
        }
        let k = levels.len();
        if k > MAX_COMPARED_LEVELS {
            notes.push(Note::other(format!(
                "{k} levels would give {} pairwise comparisons; sheaf compares at most {MAX_COMPARED_LEVELS} levels. Group the levels, or use `compare: none`.",
                k * (k - 1) / 2
            )));
            return Ok(None);
        }
        let (mut family, control) = self.family(method, sample, levels, table, alternatives)?;
        let (withheld, procedure) = self.procedure_notes(method, &mut family, table.p, k);
        // Rank methods order letters by mean rank, the others by mean.
        let letters = if !has_letters(method) {
            Vec::new()
        } else if let (Method::Dunn, Some(kw)) = (method, &alternatives.kruskal) {
            letters(&family.pairs, &kw.mean_ranks)
        } else {
            let means: Vec<f64> = levels.iter().map(|l| l.mean).collect();
            letters(&family.pairs, &means)
        };
        if letter_count(&letters) > 26 {
            notes.push(Note::other("more than 26 letter groups: the letter display has become hard to read; consult the pairwise table"));
        }
        let declared = Declared {
            letters,
            withheld,
            notes: procedure,
        };
        Ok(Some(comparison_result(
            method,
            family,
            (self.alpha, table.df_within as f64),
            declared,
            control,
            self.spec.sides,
        )))
    }

    /// Runs the procedure; Dunnett's also returns its control level.
    fn family(
        &self,
        method: Method,
        sample: &Sample,
        levels: &[LevelSummary],
        table: &OneWay,
        alternatives: &Alternatives,
    ) -> Result<(Pairwise, Option<usize>), Diagnostic> {
        let (spec, alpha) = (self.spec, self.alpha);
        let nu = table.df_within as f64;
        let summaries = &sample.summaries;
        Ok(match method {
            Method::GamesHowell => (games_howell(summaries, alpha), None),
            Method::Dunn => match &alternatives.kruskal {
                Some(kw) => (dunn(kw, alpha, spec.adjust), None),
                None => {
                    return Err(self.doc.error_at(
                        spec.model.line,
                        None,
                        "internal error: Dunn's test without a ranking",
                    ));
                }
            },
            Method::Dunnett => {
                let control = self.dunnett_control(levels)?;
                let pairs: Vec<(usize, f64)> = summaries.iter().map(|s| (s.n, s.mean)).collect();
                let family = dunnett(&pairs, control, table.ms_within, nu, alpha, spec.sides);
                (family, Some(control))
            }
            _ => {
                let means: Vec<LevelMean> = summaries
                    .iter()
                    .map(|&GroupSummary { n, mean, .. }| LevelMean { n, mean })
                    .collect();
                (pairwise(&means, table.ms_within, nu, alpha, method), None)
            }
        })
    }

    /// The level `control` names, checked, and α within the range where
    /// Dunnett's critical value is accurate.
    fn dunnett_control(&self, levels: &[LevelSummary]) -> Result<usize, Diagnostic> {
        let (spec, alpha) = (self.spec, self.alpha);
        let Some(c) = spec.control.as_ref() else {
            return Err(self.doc.error_at(
                spec.model.line,
                None,
                "Dunnett's comparisons need `control`",
            ));
        };
        let Some(control) = levels.iter().position(|l| l.name == c.value) else {
            let found: Vec<&str> = levels.iter().map(|l| l.name.as_str()).collect();
            let d = self.doc.error_at(
                c.line,
                Some(c.column),
                format!("the control `{}` is not a level with data", c.value),
            );
            return Err(
                match crate::diag::nearest(&c.value, found.iter().copied()) {
                    Some(n) => d.hint(format!("did you mean `{n}`?")),
                    None => d.hint(format!("the levels are {}", found.join(", "))),
                },
            );
        };
        if alpha < DUNNETT_MIN_ALPHA {
            return Err(self.doc
                .error_at(
                    c.line,
                    Some(c.column),
                    format!("Dunnett's critical value is accurate only for alpha of at least {DUNNETT_MIN_ALPHA:e}; alpha here is {alpha:e}"),
                )
                .hint("its tail is found as 1 − cdf, which cannot resolve a smaller alpha: use a larger alpha, or `compare: tukey`, whose tail is computed directly down to 1e-300"));
        }
        Ok(control)
    }

    /// Fisher's protection where it applies, and what the report says about
    /// the procedure; returns whether the declarations were withheld.
    fn procedure_notes(
        &self,
        method: Method,
        family: &mut Pairwise,
        p: f64,
        k: usize,
    ) -> (bool, Vec<ProcedureNote>) {
        let (spec, alpha) = (self.spec, self.alpha);
        let mut notes = Vec::new();
        let mut withheld = false;
        match method {
            Method::Lsd => {
                if !spec.protected {
                    notes.push(ProcedureNote::Unprotected {
                        several_tests: false,
                    });
                } else if protect(&mut family.pairs, p, alpha) {
                    withheld = true;
                    notes.push(ProcedureNote::ProtectionWithheld { term: None, alpha });
                } else {
                    notes.push(ProcedureNote::ProtectionPassed { alpha });
                }
                if k >= 4 {
                    notes.push(ProcedureNote::LsdManyLevels);
                }
            }
            Method::Holm => notes.push(ProcedureNote::Holm),
            Method::Scheffe => notes.push(ProcedureNote::Scheffe),
            Method::Dunn => notes.push(ProcedureNote::Dunn {
                adjust: spec.adjust,
            }),
            Method::GamesHowell => notes.push(ProcedureNote::GamesHowell),
            Method::Dunnett => notes.push(ProcedureNote::Dunnett { sides: spec.sides }),
            _ => {}
        }
        (withheld, notes)
    }
}
