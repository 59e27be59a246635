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
fn rounding_is_half_away_from_zero_on_the_decimal_value() {
    // 1643.8 / 4 is exactly 410.95 in decimal; its double is 410.9499999….
    assert_eq!(fixed(1643.8 / 4.0, 1), "411.0");
    assert_eq!(fixed(1643.8 / 4.0, 2), "410.95");
    // 394.175 is stored a little above, 455.125 exactly: both round away.
    assert_eq!(fixed(394.175, 2), "394.18");
    assert_eq!(fixed(455.125, 2), "455.13");
    // 2.675 is stored as 2.67499999…; its decimal value is a tie.
    assert_eq!(fixed(2.675, 2), "2.68");
    assert_eq!(fixed(-0.125, 2), "-0.13");
    assert_eq!(fixed(0.5, 0), "1");
    assert_eq!(fixed(-2.5, 0), "-3");
    assert_eq!(fixed(0.045, 1), "0.0");
    assert_eq!(fixed(0.05, 1), "0.1");
    assert_eq!(fixed(0.0049, 2), "0.00");
    assert_eq!(fixed(0.005, 2), "0.01");
    assert_eq!(fixed(9.995, 2), "10.00");
    assert_eq!(fixed(99.96, 1), "100.0");
    assert_eq!(fixed(0.00005, 2), "0.00");
    assert_eq!(fixed(-0.0001, 2), "0.00");
    assert_eq!(fixed(f64::NAN, 2), NOT_AVAILABLE);
    // Noise in the last bits of a computed value does not decide a tie.
    assert_eq!(fixed(0.1 + 0.2, 1), "0.3");
    assert_eq!(fixed(1.0 - 0.955, 2), "0.05");
}

#[test]
fn rounding_agrees_with_decimal_arithmetic_on_exact_ties() {
    // k/1000 for k in 0..20000: each is a tie at two decimals when k ends in
    // 5; the expected text is made with integer arithmetic, half away from 0.
    for k in 0..20000i64 {
        let x = k as f64 / 1000.0;
        let hundredths = (k + 5) / 10; // half away from zero for k ≥ 0
        let expected = format!("{}.{:02}", hundredths / 100, hundredths % 100);
        assert_eq!(fixed(x, 2), expected, "k = {k}");
        if hundredths > 0 {
            assert_eq!(fixed(-x, 2), format!("-{expected}"), "k = -{k}");
        }
    }
}

#[test]
fn rounding_handles_extreme_magnitudes() {
    assert_eq!(fixed(1e20, 1), "100000000000000000000.0");
    assert_eq!(fixed(123456789012345678.0, 0), "123456789012346000");
    assert_eq!(fixed(1e-300, 3), "0.000");
    assert_eq!(fixed(f64::MAX, 0).len(), 309);
    assert_eq!(fixed(5e-324, 0), "0");
}

#[test]
fn counts_group_thousands() {
    assert_eq!(count(0), "0");
    assert_eq!(count(999), "999");
    assert_eq!(count(1000), "1,000");
    assert_eq!(count(260000), "260,000");
    assert_eq!(count(20_000_000), "20,000,000");
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
