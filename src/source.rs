//! Source text positions: byte offsets to 1-based lines and columns.

/// Maps byte offsets in a text to 1-based (line, column), columns counted in
/// characters. The one place where positions are converted.
#[derive(Debug, Clone)]
pub struct LineIndex {
    starts: Vec<usize>,
}

impl LineIndex {
    pub fn new(text: &str) -> Self {
        let mut starts = vec![0];
        starts.extend(text.match_indices('\n').map(|(i, _)| i + 1));
        LineIndex { starts }
    }

    /// 1-based line containing `offset`.
    pub fn line(&self, offset: usize) -> usize {
        match self.starts.binary_search(&offset) {
            Ok(i) => i + 1,
            Err(i) => i,
        }
    }

    /// 1-based (line, column) of `offset` in `text`.
    pub fn line_col(&self, text: &str, offset: usize) -> (usize, usize) {
        let line = self.line(offset);
        let start = self.starts[line - 1];
        let col = text.get(start..offset).map_or(1, |s| s.chars().count() + 1);
        (line, col)
    }

    /// The text of a 1-based line, without its line ending.
    pub fn line_text<'a>(&self, text: &'a str, line: usize) -> &'a str {
        let Some(&start) = self.starts.get(line.wrapping_sub(1)) else {
            return "";
        };
        let end = self.starts.get(line).map_or(text.len(), |e| e - 1);
        text.get(start..end).unwrap_or("").trim_end_matches('\r')
    }
}

#[cfg(test)]
#[path = "source_tests.rs"]
mod tests;
