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
    let exact = |s: &str| match parse_number(s) {
        Some(Number::Exact(d)) => d,
        other => panic!("{s}: {other:?}"),
    };
    let origin = exact("1000000000000.4");
    let offsets: Vec<Option<f64>> = ["1000000000000.4", "1000000000000.3", "1000000000000.5"]
        .iter()
        .map(|s| exact(s).minus(origin))
        .collect();
    assert_eq!(origin.to_f64(), 1_000_000_000_000.4);
    assert_eq!(offsets, vec![Some(0.0), Some(-0.1), Some(0.1)]);
}

#[test]
fn the_plain_reader_agrees_with_the_general_one() {
    for text in [
        "0",
        "-0",
        "+7",
        "12.5",
        "-0.001",
        "007.50",
        ".5",
        "5.",
        "123456789012345678",
        "-99.999999999999999",
        "1000000000000.4",
    ] {
        assert_eq!(parse_plain(text, false), parse_number(text), "{text}");
    }
    // Refused here, decided by the general reader.
    for text in ["1e3", ".", "", "-", "1.2.3", "12a", "1234567890123456789"] {
        assert_eq!(parse_plain(text, false), None, "{text}");
    }
    assert_eq!(parse_plain("4,25", true), parse_number("4.25"));
    assert_eq!(parse_plain("4,25", false), None);
}

#[test]
fn the_division_fast_path_rounds_like_the_parser() {
    // Rust's parser is correctly rounded (common practice: IEEE 754 and
    // Clinger 1990), so both routes must give the same bits.
    for (digits, scale) in [
        (1i128, 1u32),
        (3, 1),
        (123456789, 4),
        (-7, 22),
        (9007199254740992, 3),
    ] {
        let d = Decimal { digits, scale };
        let parsed: f64 = format!("{digits}e-{scale}").parse().expect("number");
        assert_eq!(d.to_f64().to_bits(), parsed.to_bits(), "{digits}e-{scale}");
    }
}
