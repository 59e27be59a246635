//! Diagnostics: an error or warning is a value with a place, a message and
//! hints, rendered like a compiler message.

use std::fmt;

/// Where a diagnostic points: a file (as the user named it), and a 1-based
/// line and column when known.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Place {
    pub file: String,
    pub line: Option<usize>,
    pub column: Option<usize>,
}

/// A user-facing error.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct Diagnostic {
    pub place: Option<Place>,
    pub message: String,
    /// The source line the place points at, shown under the message.
    pub snippet: Option<String>,
    pub hints: Vec<String>,
    /// Secondary places, e.g. the block that named a broken data file.
    pub notes: Vec<String>,
    /// Further errors of the same build, in document order after this one.
    pub also: Vec<Diagnostic>,
}

impl Diagnostic {
    pub fn new(message: impl Into<String>) -> Self {
        Diagnostic {
            place: None,
            message: message.into(),
            snippet: None,
            hints: Vec::new(),
            notes: Vec::new(),
            also: Vec::new(),
        }
    }

    /// One diagnostic carrying every error of a build (the first, with the
    /// others in `also`); `None` when there are none.
    pub fn several(errors: Vec<Diagnostic>) -> Option<Diagnostic> {
        let mut errors = errors.into_iter().flat_map(Diagnostic::each);
        let mut first = errors.next()?;
        first.also = errors.collect();
        Some(first)
    }

    /// This error and every further one, each on its own.
    pub fn each(mut self) -> Vec<Diagnostic> {
        let also = std::mem::take(&mut self.also);
        std::iter::once(self)
            .chain(also.into_iter().flat_map(Diagnostic::each))
            .collect()
    }

    /// How many errors this diagnostic carries.
    pub fn count(&self) -> usize {
        1 + self.also.iter().map(Diagnostic::count).sum::<usize>()
    }

    pub fn at(mut self, file: &str, line: Option<usize>, column: Option<usize>) -> Self {
        self.place = Some(Place {
            file: file.to_string(),
            line,
            column,
        });
        self
    }

    pub fn snippet(mut self, text: impl Into<String>) -> Self {
        let text: String = text.into();
        // A very long line (a minified file, a pasted blob) is cut to what
        // fits a terminal; the column still points into the kept part.
        const KEEP: usize = 160;
        self.snippet = Some(if text.chars().count() > KEEP {
            format!("{}…", text.chars().take(KEEP).collect::<String>())
        } else {
            text
        });
        self
    }

    pub fn hint(mut self, hint: impl Into<String>) -> Self {
        self.hints.push(hint.into());
        self
    }

    pub fn note(mut self, note: impl Into<String>) -> Self {
        self.notes.push(note.into());
        self
    }

    /// `file:line:col: error: message`, one line per error, for editors and
    /// CI logs.
    pub fn short(&self) -> String {
        let first = match &self.place {
            Some(p) => format!("{}: error: {}", place_text(p), self.message),
            None => format!("error: {}", self.message),
        };
        std::iter::once(first)
            .chain(self.also.iter().map(Diagnostic::short))
            .collect::<Vec<_>>()
            .join("\n")
    }

    fn write_one(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        writeln!(f, "error: {}", self.message)?;
        if let Some(p) = &self.place {
            let gutter = p.line.map(|l| l.to_string().len()).unwrap_or(1);
            let pad = " ".repeat(gutter);
            writeln!(f, "{pad}--> {}", place_text(p))?;
            if let (Some(line), Some(text)) = (p.line, &self.snippet) {
                writeln!(f, "{pad} |")?;
                writeln!(f, "{line} | {text}")?;
                if let Some(col) = p.column {
                    let offset: usize = text.chars().take(col.saturating_sub(1)).map(|_| 1).sum();
                    writeln!(f, "{pad} | {}^", " ".repeat(offset))?;
                } else {
                    writeln!(f, "{pad} |")?;
                }
            }
        }
        for h in &self.hints {
            writeln!(f, "  = hint: {h}")?;
        }
        for n in &self.notes {
            writeln!(f, "  = note: {n}")?;
        }
        Ok(())
    }
}

/// Sorts a document's errors by line and column; errors without a place
/// keep their order after the others.
pub fn in_document_order(errors: &mut [Diagnostic]) {
    errors.sort_by_key(|d| {
        d.place.as_ref().map_or((usize::MAX, usize::MAX), |p| {
            (p.line.unwrap_or(0), p.column.unwrap_or(0))
        })
    });
}

fn place_text(p: &Place) -> String {
    match (p.line, p.column) {
        (Some(l), Some(c)) => format!("{}:{l}:{c}", p.file),
        (Some(l), None) => format!("{}:{l}", p.file),
        _ => p.file.clone(),
    }
}

/// One error as a compiler shows it; several errors one after another with a
/// blank line between, then their count (`3 errors in report.md`).
impl fmt::Display for Diagnostic {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        self.write_one(f)?;
        if self.also.is_empty() {
            return Ok(());
        }
        for d in self.also.iter().flat_map(|d| d.clone().each()) {
            writeln!(f)?;
            d.write_one(f)?;
        }
        writeln!(f)?;
        match &self.place {
            Some(p) => writeln!(f, "{} errors in {}", self.count(), p.file),
            None => writeln!(f, "{} errors", self.count()),
        }
    }
}

impl std::error::Error for Diagnostic {}

/// The candidate closest to `word` by edit distance, if it is close enough to
/// be a plausible typo (at most a third of the word's length, and at least 1).
pub fn nearest<'a>(word: &str, candidates: impl IntoIterator<Item = &'a str>) -> Option<&'a str> {
    let limit = (word.chars().count() / 3).max(1);
    let w = word.to_lowercase();
    candidates
        .into_iter()
        .map(|c| {
            let lc = c.to_lowercase();
            // A plural or a truncation ("boxes", "compar") counts as one edit.
            let prefix =
                lc.len() >= 3 && w.len() >= 3 && (w.starts_with(&lc) || lc.starts_with(&w));
            let d = strsim::damerau_levenshtein(&w, &lc);
            (if prefix { d.min(1) } else { d }, c)
        })
        .filter(|(d, _)| *d <= limit)
        .min_by_key(|(d, _)| *d)
        .map(|(_, c)| c)
}

#[cfg(test)]
#[path = "diag_tests.rs"]
mod tests;
