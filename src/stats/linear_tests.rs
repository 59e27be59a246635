//! Unit tests for `stats::linear`.

use super::*;

/// Montgomery, Design and Analysis of Experiments, 5th ed., Example 5-1:
/// battery life by material (3) and temperature (3), n = 4 (from memory,
/// METHODS 6.2E). Cells in order M1 (15, 70, 125), M2 (…), M3 (…).
fn battery() -> (Layout, Vec<f64>) {
    let cells: [[f64; 4]; 9] = [
        [130.0, 155.0, 74.0, 180.0],
        [34.0, 40.0, 80.0, 75.0],
        [20.0, 70.0, 82.0, 58.0],
        [150.0, 188.0, 159.0, 126.0],
        [136.0, 122.0, 106.0, 115.0],
        [25.0, 70.0, 58.0, 45.0],
        [138.0, 110.0, 168.0, 160.0],
        [174.0, 120.0, 150.0, 139.0],
        [96.0, 104.0, 82.0, 60.0],
    ];
    let mut rows = Vec::new();
    let mut y = Vec::new();
    for (c, values) in cells.iter().enumerate() {
        for v in values {
            rows.push(vec![c / 3, c % 3]);
            y.push(*v);
        }
    }
    (
        Layout {
            levels: vec![3, 3],
            rows,
        },
        y,
    )
}

#[test]
fn battery_life_table_for_every_type() {
    // Published (from memory): SS material 10,683.72 (2), temperature
    // 39,118.72 (2), interaction 9,613.78 (4), error 18,230.75 (27). Printed
    // to 2 decimals; balanced data make Types I, II and III agree.
    let (layout, y) = battery();
    let terms = vec![vec![0], vec![1], vec![0, 1]];
    let design = design_matrix(&layout, &terms);
    let ranges = term_columns(&terms, &layout.levels);
    for ss_type in [SsType::I, SsType::II, SsType::III] {
        let t = sums_of_squares(&design, &y, &terms, &ranges, ss_type);
        let want = [(2, 10683.72), (2, 39118.72), (4, 9613.78)];
        for (got, (df, ss)) in t.terms.iter().zip(want) {
            assert_eq!(got.df, df);
            assert!(
                (got.ss - ss).abs() < 0.006,
                "{ss_type:?}: {} vs {ss}",
                got.ss
            );
        }
        assert!((t.rss - 18230.75).abs() < 0.006);
        assert_eq!(y.len() - t.rank, 27);
    }
}

#[test]
fn aliased_columns_are_dropped() {
    // A column equal to the sum of two others adds nothing.
    let a = vec![1.0, 0.0, 1.0, 0.0];
    let b = vec![0.0, 1.0, 0.0, 1.0];
    let ab: Vec<f64> = a.iter().zip(&b).map(|(x, y)| x + y).collect();
    let f = fit(&[a, b, ab], &[1.0, 2.0, 3.0, 5.0]);
    assert_eq!(f.kept, vec![true, true, false]);
    assert_eq!(f.rank, 2);
}

#[test]
fn coefficients_and_covariance_of_a_line() {
    // y = 1 + 2x exactly: coefficients (1, 2); (XᵀX)⁻¹ for x = 0..3 is
    // [[0.7, -0.3], [-0.3, 0.2]] (hand computation, common practice).
    let x = vec![0.0, 1.0, 2.0, 3.0];
    let y: Vec<f64> = x.iter().map(|v| 1.0 + 2.0 * v).collect();
    let f = fit(&[vec![1.0; 4], x], &y);
    let b = f.coefficients();
    assert!((b[0] - 1.0).abs() < 1e-14 && (b[1] - 2.0).abs() < 1e-14);
    let c = f.unscaled_covariance();
    assert!(
        (c[0][0] - 0.7).abs() < 1e-14
            && (c[0][1] + 0.3).abs() < 1e-14
            && (c[1][1] - 0.2).abs() < 1e-14
    );
    assert!(f.rss < 1e-25);
}
