//! Unit tests for `source`.

use super::*;

#[test]
fn lines_and_columns_are_one_based() {
    let text = "ab\ncdé\n\nx";
    let idx = LineIndex::new(text);
    assert_eq!(idx.line_col(text, 0), (1, 1));
    assert_eq!(idx.line_col(text, 3), (2, 1));
    assert_eq!(idx.line_col(text, 7), (2, 4));
    assert_eq!(idx.line_col(text, 9), (4, 1));
    assert_eq!(idx.line_text(text, 2), "cdé");
    assert_eq!(idx.line_text(text, 3), "");
}
