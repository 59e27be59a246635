//! Output formats: each is one writer (one file) registered in `FORMATS`.
//! A writer turns the format-independent `Report` into the report's text
//! (or, for an archive format, its bytes) and says where figures go.

use super::report::Report;
use super::{docx, html, markdown, tex};
use crate::diag::Diagnostic;
use crate::doc::ImageFormat;
use crate::figure::Figure;

/// An output format of the report.
pub trait Writer: Sync {
    /// The format's name, file extension, help line and figure placement.
    fn about(&self) -> &'static About;
    /// A figure's file beside the report (name and bytes), or `None` where
    /// the report holds the figure itself (the default, for formats whose
    /// figures are inside the report).
    fn figure_file(&self, _stem: &str, _figure: &Figure, _images: ImageFormat) -> FigureFile {
        Ok(None)
    }
    /// How prose names a numbered table or figure (`kind` is `Table` or
    /// `Figure`): the number as text, unless the format numbers them itself.
    /// The text must start with `kind`.
    fn cross_reference(&self, kind: &str, number: usize, _id: &str) -> String {
        format!("{kind} {number}")
    }
    /// The report: text, or the bytes of an archive.
    fn write(&self, report: &Report) -> Result<Written, Diagnostic>;
    /// The parts a written report is compared by (`verify`): a text format
    /// is one part, named `""`; an archive its entries, in archive order.
    fn parts(&self, report: &[u8]) -> Result<Vec<(String, Vec<u8>)>, String> {
        Ok(vec![(String::new(), report.to_vec())])
    }
}

/// A figure's file beside the report (its name and bytes), `None` where
/// the report holds the figure, or why the figure could not be drawn.
pub type FigureFile = Result<Option<(String, Vec<u8>)>, String>;

/// What a format is called and how it holds its figures.
#[derive(Debug)]
pub struct About {
    /// The name `--to` takes and the results file records.
    pub name: &'static str,
    /// The report file's extension.
    pub extension: &'static str,
    /// One sentence for `--to`'s help.
    pub help: &'static str,
    /// Whether the report holds its figures (else they are files beside it).
    pub figures_inline: bool,
}

/// What a writer produces.
pub enum Written {
    /// A text report (HTML, Markdown, LaTeX): ends with one newline.
    Text(String),
    /// A binary report (an archive such as a docx), written as it is.
    Binary(Vec<u8>),
}

/// An output format: a handle on its registered writer.
#[derive(Clone, Copy)]
pub struct Format(&'static dyn Writer);

// The formats are named like the values of an enum, which is how call sites
// read them.
#[allow(non_upper_case_globals)]
impl Format {
    pub const Html: Format = Format(&html::Html);
    pub const Markdown: Format = Format(&markdown::Markdown);
    pub const Tex: Format = Format(&tex::Tex);
    pub const Docx: Format = Format(&docx::Docx);
}

/// Every output format, in the order `--to` lists them. A new format is a
/// writer in its own file and one line here.
pub const FORMATS: &[Format] = &[Format::Html, Format::Markdown, Format::Tex, Format::Docx];

impl Format {
    /// The format `--to` or a results file names.
    pub fn named(name: &str) -> Option<Format> {
        FORMATS.iter().copied().find(|f| f.name() == name)
    }

    pub fn name(self) -> &'static str {
        self.0.about().name
    }

    pub fn extension(self) -> &'static str {
        self.0.about().extension
    }

    pub fn writer(self) -> &'static dyn Writer {
        self.0
    }
}

impl PartialEq for Format {
    fn eq(&self, other: &Format) -> bool {
        self.name() == other.name()
    }
}

impl Eq for Format {}

impl std::fmt::Debug for Format {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(self.name())
    }
}
