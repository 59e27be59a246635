//! The front matter's keys: one table, each key with the handler that reads
//! it, so the hint for an unknown key lists exactly the keys accepted.

use super::block::{SpecError, bad, one_of, parse_alpha, parse_compare, parse_decimals};
use super::keytable::KeyTable;
use super::keyvalue::Entry;
use super::{Document, FrontMatter, ImageFormat, Paper};
use crate::diag::Diagnostic;

/// The front matter as its entries give it; `dpi` is applied once
/// `figures` is known.
#[derive(Debug, Default)]
pub struct FrontDraft {
    front: FrontMatter,
    dpi: Option<(Entry, u32)>,
}

/// Every key the front matter accepts, in the order hints list them.
pub const FRONT_MATTER: KeyTable<FrontDraft> = KeyTable {
    section: "the front matter",
    unknown: "unknown front-matter key",
    keys: &[
        ("title", |e, d| {
            d.front.title = Some(e.value.clone());
            Ok(())
        }),
        ("author", |e, d| {
            d.front.author = Some(e.value.clone());
            Ok(())
        }),
        ("date", |e, d| {
            d.front.date = Some(e.value.clone());
            Ok(())
        }),
        ("alpha", |e, d| {
            d.front.alpha = parse_alpha(e)?;
            Ok(())
        }),
        ("decimals", |e, d| {
            d.front.decimals = Some(parse_decimals(e)?);
            Ok(())
        }),
        ("compare", |e, d| {
            d.front.compare = parse_compare(e)?;
            Ok(())
        }),
        ("figures", read_figures),
        ("dpi", read_dpi),
        ("paper", read_paper),
        ("contents", read_contents),
        ("tex", read_tex),
    ],
};

fn read_figures(e: &Entry, d: &mut FrontDraft) -> Result<(), SpecError> {
    let choices: [(&[&str], ImageFormat); 2] = [
        (&["svg"], ImageFormat::Svg),
        (&["png"], ImageFormat::Png { dpi: 150 }),
    ];
    let hint = "write `svg` (the default) or `png`";
    d.front.figures = one_of(e, "figure format", &choices, hint)?;
    Ok(())
}

fn read_dpi(e: &Entry, d: &mut FrontDraft) -> Result<(), SpecError> {
    match e.value.trim().parse::<u32>() {
        Ok(dpi) if (72..=600).contains(&dpi) => {
            d.dpi = Some((e.clone(), dpi));
            Ok(())
        }
        _ => Err(bad(
            e,
            format!(
                "`dpi` must be a whole number from 72 to 600, found `{}`",
                e.value
            ),
            "for example `dpi: 300` for print",
        )),
    }
}

fn read_paper(e: &Entry, d: &mut FrontDraft) -> Result<(), SpecError> {
    let choices: [(&[&str], Paper); 2] = [(&["a4"], Paper::A4), (&["letter"], Paper::Letter)];
    let hint = "write `a4` (the default) or `letter`";
    d.front.paper = one_of(e, "paper size", &choices, hint)?;
    Ok(())
}

fn read_contents(e: &Entry, d: &mut FrontDraft) -> Result<(), SpecError> {
    d.front.contents = match e.value.to_ascii_lowercase().as_str() {
        "yes" => true,
        "no" => false,
        _ => {
            return Err(bad(
                e,
                format!("`contents` takes `yes` or `no`, found `{}`", e.value),
                "`contents: yes` adds a table of contents and lists of tables and figures",
            ));
        }
    };
    Ok(())
}

fn read_tex(e: &Entry, d: &mut FrontDraft) -> Result<(), SpecError> {
    let choices: [(&[&str], bool); 2] = [(&["document"], false), (&["body"], true)];
    let hint = "write `document` (the default: a whole LaTeX document) or `body` (a fragment for `\\input`)";
    d.front.tex_body_only = one_of(e, "LaTeX output", &choices, hint)?;
    Ok(())
}

/// Reads the front matter; every problem is returned, and each key that
/// could not be read keeps its default.
pub(super) fn front_matter(doc: &Document, entries: &[Entry]) -> (FrontMatter, Vec<Diagnostic>) {
    let mut d = FrontDraft::default();
    let mut errors = FRONT_MATTER.apply(entries, &mut d);
    if let Some((e, dpi)) = d.dpi.take() {
        match d.front.figures {
            ImageFormat::Png { .. } => d.front.figures = ImageFormat::Png { dpi },
            ImageFormat::Svg => errors.push(SpecError {
                line: e.line,
                column: e.key_column,
                message: "`dpi` applies to `figures: png`".into(),
                hint: Some("add `figures: png`, or remove `dpi`".into()),
            }),
        }
    }
    let diagnostics = errors.into_iter().map(|e| doc.spec_error(e)).collect();
    (d.front, diagnostics)
}
