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
    assert_eq!(power_spec(&e, 1).unwrap_err().line, 5);
    let e = parse_entries("groups: 3\neffect: 0.4", 2).expect("entries");
    assert_eq!(power_spec(&e, 1).unwrap_err().line, 1);
}
