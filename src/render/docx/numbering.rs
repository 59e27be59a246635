//! `word/numbering.xml`: one bulleted and one numbered list definition;
//! every bulleted list shares one instance, and every numbered list gets
//! its own (so that it starts again, at the number the Markdown gives).

/// Lists nest at most nine levels in WordprocessingML; deeper items stay
/// at the ninth.
pub(super) const MAX_LEVEL: usize = 8;

/// Indent per level, in twentieths of a point (a quarter inch).
pub(super) const LEVEL_INDENT: usize = 360;

/// The instance every bulleted list uses.
pub(super) const BULLETS: usize = 1;

/// The list instances of a document, in the order they were opened.
#[derive(Default)]
pub(super) struct Numbering {
    /// The first number of each numbered list, whose instance is its index
    /// plus 2 (1 is the bullets').
    starts: Vec<u64>,
}

impl Numbering {
    /// A new numbered list starting at `start`; its instance id.
    pub(super) fn numbered(&mut self, start: u64) -> usize {
        self.starts.push(start);
        self.starts.len() + 1
    }

    /// The numbering part.
    pub(super) fn xml(&self) -> String {
        let mut out = String::from(
            "<?xml version=\"1.0\" encoding=\"UTF-8\" standalone=\"yes\"?>\n<w:numbering xmlns:w=\"http://schemas.openxmlformats.org/wordprocessingml/2006/main\">\n",
        );
        out.push_str(&abstract_list(0, |level| {
            let bullet = ["\u{2022}", "\u{2013}", "\u{25E6}"][level % 3];
            ("bullet", bullet.to_string())
        }));
        out.push_str(&abstract_list(1, |level| {
            let format = ["decimal", "lowerLetter", "lowerRoman"][level % 3];
            (format, format!("%{}.", level + 1))
        }));
        out.push_str(&format!(
            "<w:num w:numId=\"{BULLETS}\"><w:abstractNumId w:val=\"0\"/></w:num>\n"
        ));
        for (k, start) in self.starts.iter().enumerate() {
            out.push_str(&format!(
                "<w:num w:numId=\"{}\"><w:abstractNumId w:val=\"1\"/><w:lvlOverride w:ilvl=\"0\"><w:startOverride w:val=\"{start}\"/></w:lvlOverride></w:num>\n",
                k + 2
            ));
        }
        out.push_str("</w:numbering>\n");
        out
    }
}

/// A list definition of nine levels, each with its number format and text.
fn abstract_list(id: usize, level_text: impl Fn(usize) -> (&'static str, String)) -> String {
    let mut out = format!(
        "<w:abstractNum w:abstractNumId=\"{id}\"><w:multiLevelType w:val=\"hybridMultilevel\"/>"
    );
    for level in 0..=MAX_LEVEL {
        let (format, text) = level_text(level);
        let left = LEVEL_INDENT * (level + 1);
        out.push_str(&format!(
            "<w:lvl w:ilvl=\"{level}\"><w:start w:val=\"1\"/><w:numFmt w:val=\"{format}\"/><w:lvlText w:val=\"{text}\"/><w:lvlJc w:val=\"left\"/><w:pPr><w:ind w:left=\"{left}\" w:hanging=\"{LEVEL_INDENT}\"/></w:pPr></w:lvl>"
        ));
    }
    out.push_str("</w:abstractNum>\n");
    out
}
