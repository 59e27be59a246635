//! Unit tests for `stats::roots`.

#[test]
fn finds_square_root_of_two() {
    let r = super::brent(|x| x * x - 2.0, 0.0, 2.0, 0.0, 1e-15);
    assert!((r - std::f64::consts::SQRT_2).abs() < 1e-14);
}
