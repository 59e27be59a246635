use super::*;

fn big(text: &str) -> BigInt {
    text.parse().unwrap_or_default()
}

fn ratio(a: &str, b: &str) -> f64 {
    let b: BigInt = big(b);
    ratio_to_f64(&big(a), b.magnitude())
}

/// Expected values are Python's `float(fractions.Fraction(a, b))`, which is
/// correctly rounded; each is an exact f64 literal, so equality is the test.
#[test]
fn ratios_round_once_to_nearest() {
    assert_eq!(ratio("1", "3"), 0.3333333333333333);
    assert_eq!(ratio("2", "3"), 0.6666666666666666);
    assert_eq!(ratio("-5", "9"), -0.5555555555555556);
    assert_eq!(
        ratio("99999999999999999999999999999999999999", "7000000000000"),
        1.4285714285714285e25
    );
    assert_eq!(
        ratio(
            "123456789012345678901234567890123456789",
            "300000000000000000000"
        ),
        4.1152263004115226e17
    );
    assert_eq!(ratio("1", "1000000000000000000000000000000"), 1e-30);
    // Ties go to even: 2^53 + 1 lies halfway between two f64s.
    assert_eq!(ratio("9007199254740993", "1"), 9007199254740992.0);
    // Above the tie: 2^54 + 3 rounds up.
    assert_eq!(ratio("18014398509481987", "1"), 1.8014398509481988e16);
    assert_eq!(ratio("0", "7"), 0.0);
}

#[test]
fn parses_wide_decimals_exactly() {
    let d = WideDecimal::parse("-12345678901234567890123456789.012345678", false).unwrap();
    assert_eq!(d.scale, 9);
    assert_eq!(d.digits, big("-12345678901234567890123456789012345678"));
    assert_eq!(WideDecimal::parse("1,5", true).unwrap().scale, 1);
    assert_eq!(WideDecimal::parse("1e5", false), Err(WideError::NotDecimal));
    assert_eq!(WideDecimal::parse("", false), Err(WideError::NotDecimal));
    assert_eq!(
        WideDecimal::parse("1.2.3", false),
        Err(WideError::NotDecimal)
    );
    assert_eq!(
        WideDecimal::parse(&"9".repeat(39), false),
        Err(WideError::TooLong(39))
    );
    assert_eq!(
        WideDecimal::parse("2.5000", false)
            .unwrap()
            .significant_decimals(),
        1
    );
    assert!(
        WideDecimal::parse("2.5000", false)
            .unwrap()
            .same_value(&WideDecimal::parse("2.5", false).unwrap())
    );
}

/// 0.1, 0.2 and 0.4 summed in decimal arithmetic (Python `decimal`): sum
/// 0.7, squares 0.21; mean 7/30 and SS 0.21 − 0.49/3 = 0.14/3, the values
/// Python's `float(Fraction(...))` gives.
#[test]
fn cell_moments_are_exact_then_rounded() {
    let sum = WideDecimal::parse("0.7", false).unwrap();
    let squares = WideDecimal::parse("0.21", false).unwrap();
    let (mean, ss) = cell_moments(3, &sum, &squares).unwrap();
    assert_eq!(mean.to_f64(), 0.23333333333333334);
    assert_eq!(ss, 0.04666666666666667);
    // Squares smaller than sum²/n cannot come from real values.
    let low = WideDecimal::parse("0.16", false).unwrap();
    assert!(cell_moments(3, &sum, &low).is_none());
}
