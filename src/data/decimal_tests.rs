//! Unit tests for `data::decimal`.

use super::*;

#[test]
fn reads_plain_decimals_exactly() {
    assert_eq!(
        parse_number("1000000000000.4"),
        Some(Number::Exact(Decimal {
            digits: 10_000_000_000_004,
            scale: 1
        }))
    );
    assert_eq!(
        parse_number("-0.25"),
        Some(Number::Exact(Decimal {
            digits: -25,
            scale: 2
        }))
    );
    assert_eq!(
        parse_number(".5"),
        Some(Number::Exact(Decimal {
            digits: 5,
            scale: 1
        }))
    );
    assert_eq!(parse_number("1.5e3"), Some(Number::Float(1500.0)));
    for bad in ["", "abc", "1.2.3", "--1", "1e", "inf", "NaN", "1,5"] {
        assert_eq!(parse_number(bad), None, "{bad}");
    }
}

#[test]
fn shifting_keeps_the_digits_a_float_would_lose() {
    let values: Vec<Number> = ["1000000000000.4", "1000000000000.3", "1000000000000.5"]
        .iter()
        .map(|s| parse_number(s).expect("number"))
        .collect();
    let (origin, offsets) = shift_column(&values);
    assert_eq!(origin, 1_000_000_000_000.4);
    assert_eq!(offsets, vec![0.0, -0.1, 0.1]);
}
