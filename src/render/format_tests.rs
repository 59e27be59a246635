//! Unit tests for `render::format`.

use super::*;

#[test]
fn p_values_follow_reporting_convention() {
    // Source: METHODS 4.2 (common practice): 3 decimals, never "0.000".
    assert_eq!(p_value(0.015910), "0.016");
    assert_eq!(p_value(0.0004), "< 0.001");
    assert_eq!(p_value(0.9996), "> 0.999");
    assert_eq!(p_phrase(0.0004), "p < 0.001");
    assert_eq!(p_phrase(0.5), "p = 0.500");
}

#[test]
fn rounding_uses_the_binary_value() {
    assert_eq!(fixed(2.675, 2), "2.67");
    assert_eq!(fixed(-0.0001, 2), "0.00");
    assert_eq!(fixed(f64::NAN, 2), NOT_AVAILABLE);
}

#[test]
fn statements_and_columns() {
    assert_eq!(
        f_statement(2.0, 27.0, 4.846088, 0.015910),
        "F(2, 27) = 4.85, p = 0.016"
    );
    // METHODS 4.1 prints the Dobson SS column as 3.766 / 10.492 / 14.258.
    assert_eq!(column_decimals(&[3.76634, 10.49209, 14.25843], 5), 3);
    assert_eq!(significant(0.0123456, 3), "0.0123");
}
