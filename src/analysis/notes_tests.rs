use super::*;
use crate::doc::block::NOTE_KINDS;

const ALL: [NoteKind; 13] = [
    NoteKind::Missing,
    NoteKind::Unbalanced,
    NoteKind::Variances,
    NoteKind::Normality,
    NoteKind::Outliers,
    NoteKind::Interaction,
    NoteKind::EmptyCells,
    NoteKind::SmallLevels,
    NoteKind::Summary,
    NoteKind::Slopes,
    NoteKind::Covariate,
    NoteKind::Planned,
    NoteKind::Other,
];

#[test]
fn the_acknowledgeable_kinds_are_exactly_the_documented_keys() {
    let keys: Vec<&str> = ALL.iter().filter_map(|k| k.key()).collect();
    let documented: Vec<&str> = NOTE_KINDS.iter().map(|(k, _)| *k).collect();
    assert_eq!(keys, documented);
}

#[test]
fn acknowledged_kinds_and_planned_notes_move_aside_in_order() {
    let notes = vec![
        Note::new(NoteKind::Variances, "spread"),
        Note::new(NoteKind::Planned, "where"),
        Note::other("other"),
        Note::new(NoteKind::Outliers, "line 7"),
        Note::new(NoteKind::Variances, "ratio"),
    ];
    let (open, done) = split_acknowledged(notes, &["variances".to_string()]);
    assert_eq!(open, ["other", "line 7"]);
    assert_eq!(done, ["spread", "where", "ratio"]);
}

#[test]
fn a_note_of_no_listed_kind_is_never_acknowledged() {
    // The kind, not the wording, decides: a text that reads like an
    // outlier note but was written as `Other` stays open.
    let notes = vec![Note::other("The observation on line 3 is beyond ±3")];
    let every: Vec<String> = NOTE_KINDS.iter().map(|(k, _)| k.to_string()).collect();
    let (open, done) = split_acknowledged(notes, &every);
    assert_eq!(open.len(), 1);
    assert!(done.is_empty());
}
