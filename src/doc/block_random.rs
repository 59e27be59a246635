//! The keys of a block with random terms: `random` (the unit structure, in
//! the model's notation) and `ddf` (how denominator degrees of freedom are
//! approximated), and their checks against the other keys. A random term
//! names units (blocks, whole plots, batches, animals), never a treatment.

use super::block::{DdfMethod, Located, Omnibus, SpecError, bad, one_of};
use super::block_keys::AnovaDraft;
use super::formula::{Formula, Term, parse_terms};
use super::keyvalue::Entry;

pub(super) fn read_random(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    // An empty list is a model without random terms: the fixed analysis.
    if e.value.trim().is_empty() {
        return Ok(());
    }
    let terms = parse_terms(&e.value).map_err(|x| SpecError {
        line: e.line,
        column: e.value_column + x.offset,
        message: x.message,
        hint: Some(x.hint),
    })?;
    d.random = Some((e.clone(), terms));
    Ok(())
}

/// `subject`: the column naming the unit measured repeatedly (an animal,
/// a plot harvested several times, a panellist). It is a random term of
/// its own, and asks for the repeated-measures reading of the design.
pub(super) fn read_subject(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    let hint = "name one column, the one that identifies each animal, plot or panellist";
    let terms = parse_terms(&e.value).map_err(|x| SpecError {
        line: e.line,
        column: e.value_column + x.offset,
        message: x.message,
        hint: Some(hint.into()),
    })?;
    match &terms[..] {
        [t] if t.factors.len() == 1 => {
            d.subject = Some((e.clone(), t.clone()));
            Ok(())
        }
        _ => Err(bad(
            e,
            format!("`subject` names one column, found `{}`", e.value.trim()),
            hint,
        )),
    }
}

/// A `subject` becomes the block's random term; with `random` as well it
/// is refused in this version (the unit structure would be ambiguous).
pub(super) fn subject_as_random(d: &mut AnovaDraft) -> Option<SpecError> {
    let (e, term) = d.subject.as_ref()?;
    if d.random.is_some() {
        return Some(bad(
            e,
            "`subject` and `random` together are not offered in this version".into(),
            "the subject is the random unit of a repeated-measures block: remove `random`",
        ));
    }
    d.random = Some((e.clone(), vec![term.clone()]));
    None
}

pub(super) fn read_ddf(e: &Entry, d: &mut AnovaDraft) -> Result<(), SpecError> {
    let choices: [(&[&str], DdfMethod); 2] = [
        (&["kenward-roger"], DdfMethod::KenwardRoger),
        (&["satterthwaite"], DdfMethod::Satterthwaite),
    ];
    let hint = "write `kenward-roger` (the default) or `satterthwaite`";
    d.ddf = Some((e.clone(), one_of(e, "ddf", &choices, hint)?));
    Ok(())
}

/// What the keys of a block with random terms must agree on; nothing when
/// the block has none (then `ddf` must be absent too).
pub(super) fn random_keys(d: &AnovaDraft, formula: &Formula, method: Omnibus) -> Vec<SpecError> {
    let Some((entry, terms)) = &d.random else {
        return d
            .ddf
            .iter()
            .map(|(e, _)| {
                bad(
                    e,
                    "`ddf` applies to models with random terms".into(),
                    "add `random: …` naming the units (blocks, whole plots), or remove `ddf`",
                )
            })
            .collect();
    };
    let mut errors = Vec::new();
    for t in terms {
        errors.extend(term_conflict(entry, t, formula, d));
    }
    let refuse = |what: String, why: &str| bad(entry, what, why);
    if method != Omnibus::Anova {
        errors.push(refuse(
            format!("`method: {}` has no version with random terms", method.key()),
            "a mixed model is fitted by REML with F tests; remove `method` (Welch's and rank tests, and their Games-Howell and Dunn comparisons, assume independent observations)",
        ));
    }
    if d.input.as_ref().is_some_and(|(_, summary)| *summary) {
        errors.push(refuse(
            "random terms need the observations, not summaries".into(),
            "remove `input: summary` and give the raw data",
        ));
    }
    if d.layout.as_ref().is_some_and(|(_, wide)| *wide) {
        errors.push(refuse(
            "random terms need the long layout (one row per observation, with the unit columns)"
                .into(),
            "remove `layout: wide` and give one column per factor",
        ));
    }
    errors
}

/// A random term that repeats the response, a fixed term or a declared
/// blocking factor.
fn term_conflict(
    entry: &Entry,
    term: &Term,
    formula: &Formula,
    d: &AnovaDraft,
) -> Option<SpecError> {
    let name = term.to_string();
    if term.factors.contains(&formula.response) {
        return Some(bad(
            entry,
            format!(
                "`{}` is the response and cannot be a random term",
                formula.response
            ),
            "random terms name the units the response was measured on",
        ));
    }
    if formula.terms.iter().any(|f| same_term(f, term)) {
        return Some(bad(
            entry,
            format!("`{name}` is both a fixed term of the model and a random term"),
            "a term is either fixed (in `model`) or random (in `random`): keep it in one of them",
        ));
    }
    let blocks = d.blocks.as_ref().map_or(&[][..], |b| &b.value[..]);
    if term.factors.len() == 1 && blocks.contains(&term.factors[0]) {
        return Some(bad(
            entry,
            format!("`{name}` is declared with `block` and as a random term"),
            "blocks are either fixed (`block:` with the factor in the model) or random (`random:` only)",
        ));
    }
    None
}

/// The same term whatever the order of its factors (`a:b` is `b:a`).
fn same_term(a: &Term, b: &Term) -> bool {
    a.factors.len() == b.factors.len() && a.factors.iter().all(|f| b.factors.contains(f))
}

/// The random terms as the spec keeps them.
pub(super) fn located_terms(d: &AnovaDraft) -> Option<Located<Vec<Term>>> {
    d.random.as_ref().map(|(e, terms)| Located {
        value: terms.clone(),
        line: e.line,
        column: e.value_column,
    })
}
