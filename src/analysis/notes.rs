//! Notes a block emits, each with its kind from the moment it is written:
//! `acknowledge:` files notes by kind, never by their wording.

/// What a note is about. The acknowledgeable kinds are the keys of
/// `doc::block::NOTE_KINDS`; `Planned` notes (rows the document itself left
/// out) count as acknowledged without being listed, and `Other` notes can
/// never be acknowledged.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum NoteKind {
    Missing,
    Unbalanced,
    Variances,
    Normality,
    Outliers,
    Interaction,
    EmptyCells,
    SmallLevels,
    Summary,
    /// The test of equal slopes rejected.
    Slopes,
    /// A covariate differs among the groups, or a group's range leaves out
    /// the value means are adjusted to.
    Covariate,
    Planned,
    Other,
}

impl NoteKind {
    /// The key an author writes in `acknowledge:` (a key of `NOTE_KINDS`);
    /// `None` for the kinds that are not listed there.
    pub fn key(self) -> Option<&'static str> {
        Some(match self {
            NoteKind::Missing => "missing",
            NoteKind::Unbalanced => "unbalanced",
            NoteKind::Variances => "variances",
            NoteKind::Normality => "normality",
            NoteKind::Outliers => "outliers",
            NoteKind::Interaction => "interaction",
            NoteKind::EmptyCells => "empty-cells",
            NoteKind::SmallLevels => "small-levels",
            NoteKind::Summary => "summary",
            NoteKind::Slopes => "slopes",
            NoteKind::Covariate => "covariate",
            NoteKind::Planned | NoteKind::Other => return None,
        })
    }
}

/// One note: its kind and its text.
#[derive(Debug, Clone, PartialEq)]
pub struct Note {
    pub kind: NoteKind,
    pub text: String,
}

impl Note {
    pub fn new(kind: NoteKind, text: impl Into<String>) -> Self {
        Note {
            kind,
            text: text.into(),
        }
    }

    /// A note no `acknowledge:` key covers.
    pub fn other(text: impl Into<String>) -> Self {
        Note::new(NoteKind::Other, text)
    }
}

/// Notes of one kind, from texts written elsewhere (the statistics and the
/// data readers) whose kind the caller knows.
pub fn all_of(kind: NoteKind, texts: impl IntoIterator<Item = String>) -> Vec<Note> {
    texts.into_iter().map(|t| Note::new(kind, t)).collect()
}

/// Splits notes into those still to check and those the author acknowledged
/// (listed kinds, and planned exclusions always), keeping their order.
pub(crate) fn split_acknowledged(notes: Vec<Note>, kinds: &[String]) -> (Vec<String>, Vec<String>) {
    let (open, done): (Vec<Note>, Vec<Note>) = notes.into_iter().partition(|n| match n.kind {
        NoteKind::Planned => false,
        kind => kind.key().is_none_or(|key| !kinds.iter().any(|a| a == key)),
    });
    let texts = |notes: Vec<Note>| notes.into_iter().map(|n| n.text).collect();
    (texts(open), texts(done))
}

#[cfg(test)]
#[path = "notes_tests.rs"]
mod tests;
