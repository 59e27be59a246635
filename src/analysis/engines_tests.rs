//! The engines end to end on small invented data: which notes each raises,
//! and of which kind (`acknowledge:` moves a kind aside, never a wording).

use super::run_on_csv;
use crate::doc::parse_document;

/// The warnings and acknowledged notes of the first block of `document`,
/// run on `csv` (invented data) as `d.csv`.
fn notes_of(document: &str, csv: &str) -> (Vec<String>, Vec<String>) {
    let doc = parse_document("t.md", document.to_string()).expect("document parses");
    let analysis = run_on_csv(&doc, &doc.blocks[0], csv).expect("an anova block");
    let (r, _) = analysis.expect("runs");
    (r.warnings, r.acknowledged)
}

#[test]
fn small_levels_acknowledged_leave_the_missing_error_term_in_view() {
    // Every level has one observation: each level's own note is of the
    // small-levels kind, but that F cannot be computed at all is not a note
    // an author can acknowledge away.
    let doc = "```anova\nid: t\ndata: d.csv\nmodel: y ~ g\ncompare: none\nacknowledge: small-levels\n```\n";
    let (open, done) = notes_of(doc, "g,y\na,1\nb,2\nc,4\n");
    assert!(
        open.iter()
            .any(|w| w.starts_with("no residual degrees of freedom")),
        "{open:?}"
    );
    assert_eq!(
        done.iter()
            .filter(|w| w.contains("has a single observation"))
            .count(),
        3,
        "{done:?}"
    );
}

#[test]
fn planned_exclusions_are_acknowledged_and_missing_values_are_not() {
    let doc = "```anova\nid: t\ndata: d.csv\nmodel: y ~ g\nexclude: 3: tray dropped\n```\n";
    let csv = "g,y\na,1\na,2\na,3\nb,4\nb,\nb,6\nb,7\n";
    let (open, done) = notes_of(doc, csv);
    assert!(
        done.iter().any(|w| w.contains("by the document (")),
        "{done:?}"
    );
    assert!(
        open.iter()
            .any(|w| w.contains("because a value was missing")),
        "{open:?}"
    );
}

/// Two treatments in eight blocks numbered 1 to 8 (invented): 16 rows for
/// eight numeric levels, which for a treatment factor reads like a
/// measurement.
fn numbered_blocks() -> String {
    let mut csv = String::from("trt,block,y\n");
    for b in 1..=8 {
        csv.push_str(&format!("A,{b},{}\nB,{b},{}\n", 10 + b, 13 + 2 * b % 5));
    }
    csv
}

#[test]
fn numbered_blocks_are_not_taken_for_measurements() {
    let numeric = "`block` is used as a factor";
    let as_blocks =
        "```anova\nid: t\ndata: d.csv\nmodel: y ~ trt + block\nblock: block\ncompare: none\n```\n";
    let (open, _) = notes_of(as_blocks, &numbered_blocks());
    assert!(!open.iter().any(|w| w.starts_with(numeric)), "{open:?}");
    // The same factor as a treatment is held to the check.
    let as_treatment = "```anova\nid: t\ndata: d.csv\nmodel: y ~ trt + block\ncompare: none\n```\n";
    let (open, _) = notes_of(as_treatment, &numbered_blocks());
    assert!(open.iter().any(|w| w.starts_with(numeric)), "{open:?}");
}

#[test]
fn an_interaction_note_is_acknowledged_by_its_kind() {
    // A crossing interaction (invented): A's effect reverses with B.
    let mut csv = String::from("a,b,y\n");
    for (a, b, base) in [
        ("p", "u", 10.0),
        ("p", "v", 20.0),
        ("q", "u", 20.0),
        ("q", "v", 10.0),
    ] {
        for k in 0..3 {
            csv.push_str(&format!("{a},{b},{}\n", base + f64::from(k) * 0.5));
        }
    }
    let plain = "```anova\nid: t\ndata: d.csv\nmodel: y ~ a * b\ncompare: tukey\n```\n";
    let (open, _) = notes_of(plain, &csv);
    let interaction = |w: &String| w.contains("interaction is significant");
    assert!(open.iter().any(interaction), "{open:?}");
    let acked = "```anova\nid: t\ndata: d.csv\nmodel: y ~ a * b\ncompare: tukey\nacknowledge: interaction\n```\n";
    let (open, done) = notes_of(acked, &csv);
    assert!(!open.iter().any(interaction), "{open:?}");
    assert!(done.iter().any(interaction), "{done:?}");
}
