//! The trait table of a block with several responses: one row per level
//! (a block of rows per factor in factorial models), one column per trait
//! with its mean and letters, and under them each trait's grand mean, CV,
//! SED, LSD, the significance of each term and the residual df. Then each
//! trait's own tables, under its name.

use super::keys::Keys;
use super::{Numbering, caption, cell, col, join_words, linear_view, shown_term, text, typeset};
use crate::format::{alpha_text, df_text, fixed};
use crate::outcome::linear::Role;
use crate::outcome::precision::{Sed, sed};
use crate::outcome::traits::{MARKS_LEGEND, Trait, TraitsOutcome, figure_stem, mark};
use crate::render::view::{BlockView, Cell, TableView};
use crate::stats::compare::Method;

/// The block's view: the trait table, then one part per trait (left out
/// when `show: none` and `checks: none` leave a trait nothing to print).
pub fn traits_view(t: &TraitsOutcome, next_table: &mut usize) -> BlockView {
    let table = trait_table(t, Numbering(next_table).next());
    let figures = figures_asked(t);
    let parts = t
        .traits
        .iter()
        .map(|x| {
            let mut part = linear_view(&x.outcome, next_table);
            let plots = &x.outcome.presentation.plots;
            part.heading = Some(plots.display(&x.response).to_string());
            // The part's figures are found by the stem their ids start with.
            part.id = figure_stem(&t.id, &x.response);
            part
        })
        .filter(|p| {
            figures || !(p.tables.is_empty() && p.notes.is_empty() && p.warnings.is_empty())
        })
        .collect();
    typeset(BlockView {
        id: t.id.clone(),
        tables: vec![table],
        parts,
        ..BlockView::default()
    })
}

/// Whether the block draws figures (each trait gets its own).
fn figures_asked(t: &TraitsOutcome) -> bool {
    t.traits
        .iter()
        .any(|x| !x.outcome.presentation.plots.kinds.is_empty())
}

/// What every column's cells share: the block's factors, α and procedure.
struct Layout<'a> {
    t: &'a TraitsOutcome,
    keys: Keys<'a>,
    /// Two label columns (factor, level) for factorial models.
    factorial: bool,
    alpha: f64,
    procedure: Option<Method>,
}

impl Layout<'_> {
    /// A footer row: its label (and, factorial, its factor or term) and a
    /// cell per trait.
    fn footer(&self, label: String, second: String, cells: impl Fn(&Trait) -> Cell) -> Vec<Cell> {
        let mut row = vec![text(label)];
        if self.factorial {
            row.push(text(second));
        }
        row.extend(self.t.traits.iter().map(cells));
        row
    }

    fn column_key(&self, x: &Trait, field: &str) -> String {
        self.keys
            .field(&format!("trait_table.columns.{}.{field}", x.response))
    }
}

fn trait_table(t: &TraitsOutcome, number: usize) -> TableView {
    let first = t.traits.first().map(|x| &x.outcome);
    let procedure = t
        .traits
        .iter()
        .flat_map(|x| x.row_families())
        .find_map(|f| f.comparison.as_ref())
        .map(|c| c.method);
    let layout = Layout {
        t,
        keys: Keys::new(&t.id),
        factorial: first.is_some_and(|o| !o.is_one_factor()),
        alpha: first.map_or(0.05, |o| o.alpha),
        procedure,
    };
    let plots = first.map(|o| &o.presentation.plots);
    let shown = |name: &str| plots.map_or(name.to_string(), |p| shown_term(p, name));
    let mut columns = if layout.factorial {
        vec![col("Factor", false), col("Level", false)]
    } else {
        let factor = t.rows().first().map_or(String::new(), |(f, _)| shown(f));
        vec![col(factor, false)]
    };
    columns.extend(t.traits.iter().map(|x| col(shown(&x.response), true)));
    let mut rows = level_rows(&layout, &shown);
    rows.extend(footer_rows(&layout, &shown));
    let traits: Vec<String> = t.traits.iter().map(|x| shown(&x.response)).collect();
    let factors: Vec<String> = t.rows().iter().fold(Vec::new(), |mut v, (f, _)| {
        if !v.contains(&shown(f)) {
            v.push(shown(f));
        }
        v
    });
    TableView {
        number,
        id: format!("{}-traits", t.id),
        caption: caption(number, &t.caption, || {
            format!(
                "Trait table: means of {} by {}, with their precision and tests.",
                join_words(&traits),
                join_words(&factors)
            )
        }),
        columns,
        rows,
        footnotes: footnotes(&layout, &shown),
    }
}

/// One row per level of each compared factor: "57.68 a" per trait, with †
/// where a significant interaction makes the factor's means an average.
fn level_rows(layout: &Layout, shown: &dyn Fn(&str) -> String) -> Vec<Vec<Cell>> {
    let mut rows = Vec::new();
    let mut previous: Option<String> = None;
    for (term, level) in layout.t.rows() {
        let mut row = Vec::new();
        if layout.factorial {
            let head = previous.as_deref() != Some(term.as_str());
            row.push(text(if head { shown(&term) } else { String::new() }));
        }
        row.push(text(level.clone()));
        for x in &layout.t.traits {
            row.push(mean_cell(layout, x, &term, &level));
        }
        previous = Some(term);
        rows.push(row);
    }
    rows
}

fn mean_cell(layout: &Layout, x: &Trait, term: &str, level: &str) -> Cell {
    let family = x.row_families().into_iter().find(|f| f.term == term);
    let Some((family, i)) =
        family.and_then(|f| Some((f, f.estimates.iter().position(|e| e.label == level)?)))
    else {
        return text("–");
    };
    let letters = family
        .comparison
        .as_ref()
        .and_then(|c| c.letters.get(i))
        .map_or(String::new(), |l| format!(" {l}"));
    let dagger = if x.factor_in_interaction(term) {
        " †"
    } else {
        ""
    };
    let d = x.outcome.presentation.decimals;
    cell(
        format!("{}{letters}{dagger}", fixed(family.estimates[i].mean, d)),
        layout.keys.field(&format!(
            "trait_table.factors.{term}.rows.{level}.cells.{}.mean",
            x.response
        )),
    )
}

/// A trait's SED or LSD of one factor's means: one value, or the range.
fn range_text(s: &Sed, lsd: bool, d: u32) -> String {
    let (lo, hi) = if lsd {
        (s.lsd_min, s.lsd_max)
    } else {
        (s.min, s.max)
    };
    if s.single() {
        fixed(lo, d + 1)
    } else {
        format!("{}–{}", fixed(lo, d + 1), fixed(hi, d + 1))
    }
}

fn footer_rows(layout: &Layout, shown: &dyn Fn(&str) -> String) -> Vec<Vec<Cell>> {
    let t = layout.t;
    let decimals = |x: &Trait| x.outcome.presentation.decimals;
    let mut rows = vec![
        layout.footer("Mean".into(), String::new(), |x| {
            x.outcome.grand_mean().map_or(text("–"), |m| {
                cell(fixed(m, decimals(x)), layout.column_key(x, "grand_mean"))
            })
        }),
        layout.footer("CV (%)".into(), String::new(), |x| {
            x.cv_shown().map_or(text("–"), |cv| {
                cell(fixed(cv, 1), layout.column_key(x, "cv_percent"))
            })
        }),
    ];
    let factors: Vec<String> = t.rows().into_iter().fold(Vec::new(), |mut v, (f, _)| {
        if !v.contains(&f) {
            v.push(f);
        }
        v
    });
    let lsd_label = format!("LSD (α = {})", alpha_text(layout.alpha));
    for (label, lsd) in [("SED".to_string(), false), (lsd_label, true)] {
        for f in &factors {
            rows.push(layout.footer(label.clone(), shown(f), |x| {
                let family = x.row_families().into_iter().find(|fam| &fam.term == f);
                match family.and_then(|fam| sed(fam.comparison.as_ref()?)) {
                    Some(s) => cell(
                        range_text(&s, lsd, decimals(x)),
                        layout.column_key(x, &format!("{}.{f}", if lsd { "lsd" } else { "sed" })),
                    ),
                    None => text("–"),
                }
            }));
        }
    }
    for term in t.tested_terms() {
        let label = if layout.factorial {
            "F test".to_string()
        } else {
            format!("F test ({})", shown(&term))
        };
        rows.push(layout.footer(label, shown(&term), |x| {
            x.tested_terms()
                .find(|tt| tt.name == term)
                .and_then(|tt| mark(tt.p))
                .map_or(text("–"), |m| {
                    cell(
                        m.to_string(),
                        layout.column_key(x, &format!("marks.{term}")),
                    )
                })
        }));
    }
    rows.push(layout.footer("Residual df".into(), String::new(), |x| {
        cell(
            df_text(x.outcome.residual().df),
            layout.column_key(x, "residual_df"),
        )
    }));
    rows
}

/// The footnotes: what a cell is and how letters read (within a column
/// only), the marks, the CV withheld, the LSD beside adjusted letters,
/// unequal replication, untested blocks and interactions.
fn footnotes(layout: &Layout, shown: &dyn Fn(&str) -> String) -> Vec<String> {
    let t = layout.t;
    let alpha = alpha_text(layout.alpha);
    let what = if layout.factorial {
        "estimated marginal mean"
    } else {
        "mean"
    };
    let mut notes = vec![match layout.procedure {
        Some(Method::Dunnett) => format!(
            "Each cell is a trait's {what}. Dunnett's procedure compares each level with the control only, so there are no letters; each trait's own tables give its comparisons."
        ),
        Some(m) => format!(
            "Each cell is a trait's {what} and its letters: means sharing a letter are not significantly different ({}, α = {alpha}); the letter a marks the highest mean. Letters compare the levels of one factor within one column (trait) only, never across columns.",
            m.title()
        ),
        None => format!(
            "Each cell is a trait's {what}; the block compares no pairs, so there are no letters."
        ),
    }];
    notes.push(format!(
        "Mean: the grand mean of the trait's observations. CV: the residual SD as a percentage of it. SED: standard error of a difference between two of a factor's means; LSD: t at α = {alpha} on the residual df times the SED. F test: each term's test on the trait's residual ({MARKS_LEGEND})."
    ));
    notes.extend(lsd_note(layout));
    let unequal = t.traits.iter().any(|x| {
        x.row_families()
            .iter()
            .filter_map(|f| sed(f.comparison.as_ref()?))
            .any(|s| !s.single())
    });
    if unequal {
        notes.push("Under unequal replication the SED and LSD differ by pair: the smallest and largest are shown.".into());
    }
    for x in t.traits.iter().filter(|x| !x.cv_meaningful()) {
        let computed = x.outcome.cv_percent().map_or(String::new(), |cv| {
            format!(" (computed, it would be {}%)", fixed(cv, 1))
        });
        notes.push(format!(
            "CV (%) is shown as – for {}: the trait has values of zero or below, and a CV means something only for a strictly positive, ratio-scale trait{computed}.",
            shown(&x.response)
        ));
    }
    let blocks = t
        .traits
        .first()
        .is_some_and(|x| x.outcome.factors.iter().any(|f| f.role == Role::Block));
    if blocks {
        notes.push("Blocking factors are not tested: blocks are not randomized, so an F test of them is not valid.".into());
    }
    for x in &t.traits {
        let terms: Vec<String> = x
            .significant_interactions()
            .iter()
            .map(|tt| shown(&tt.name))
            .collect();
        if !terms.is_empty() {
            notes.push(format!(
                "† For {}, {} is significant (α = {alpha}): the marked means average over the other factor's levels and can mislead; read the trait's cell means below.",
                shown(&x.response),
                join_words(&terms)
            ));
        }
    }
    notes
}

/// Letters from an adjusted procedure beside an unadjusted LSD (spec D.3):
/// a difference larger than the LSD can share a letter.
fn lsd_note(layout: &Layout) -> Option<String> {
    let m = layout
        .procedure
        .filter(|m| *m != Method::Lsd && *m != Method::Dunnett)?;
    Some(format!(
        "The letters come from {}, which allows for the number of comparisons; the LSD does not, so a difference larger than the LSD can still share a letter. Read the letters, not the LSD, for which means differ.",
        m.title()
    ))
}
