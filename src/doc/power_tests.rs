//! Unit tests for `doc::power`.

use super::*;
use crate::doc::keyvalue::parse_entries;

#[test]
fn effect_as_f_or_as_means() {
    let e = parse_entries("groups: 4\neffect: f = 0.25\npower: 0.8", 2).expect("entries");
    let s = power_spec(&e, 1).expect("spec");
    assert_eq!(s.effect, EffectInput::CohensF(0.25));
    assert_eq!(s.goal, PowerGoal::SampleSize { power: 0.8 });
    let e = parse_entries("effect: means = 20, 22, 23, 25 and sd = 3\nn: 10", 2).expect("entries");
    let s = power_spec(&e, 1).expect("spec");
    assert_eq!(s.groups, 4);
    // σ_m = √(((−2.5)² + (−0.5)² + 0.5² + 2.5²)/4) = √3.25; f = √3.25/3.
    assert!((s.effect.cohens_f() - 3.25f64.sqrt() / 3.0).abs() < 1e-15);
}

#[test]
fn both_goals_or_none_are_errors() {
    let e = parse_entries("groups: 3\neffect: 0.4\npower: 0.9\nn: 12", 2).expect("entries");
    assert_eq!(power_spec(&e, 1).unwrap_err()[0].line, 5);
    let e = parse_entries("groups: 3\neffect: 0.4", 2).expect("entries");
    assert_eq!(power_spec(&e, 1).unwrap_err()[0].line, 1);
}

#[test]
fn means_near_1e8_keep_their_exact_effect() {
    // Source: hand computation. Means 20.1, 22.3, 23.7, 25.2 average 22.825;
    // deviations −2.725, −0.525, 0.875, 2.375; σ_m² = 14.1075/4 = 3.526875;
    // f = √3.526875/3, unchanged by shifting every mean by 1e8. Parsed as
    // f64 the shifted means round by up to 7e-9 each, which moved f by about
    // 1e-9 relative; exact decimal deviations leave only rounding (1e-14).
    let shifted =
        "effect: means = 100000020.1, 100000022.3, 100000023.7, 100000025.2 and sd = 3\nn: 10";
    let e = parse_entries(shifted, 2).expect("entries");
    let s = power_spec(&e, 1).expect("spec");
    let exact = 3.526875f64.sqrt() / 3.0;
    let got = s.effect.cohens_f();
    assert!((got - exact).abs() < 1e-14 * exact, "{got} vs {exact}");
}
