use super::*;

#[test]
fn qq_ranks_keep_both_tails_and_stay_bounded() {
    assert_eq!(qq_ranks(5), vec![0, 1, 2, 3, 4]);
    let n = 1_000_003;
    let ranks = qq_ranks(n);
    assert_eq!(ranks.len(), QQ_POINTS);
    assert!(ranks.windows(2).all(|w| w[0] < w[1]));
    assert_eq!(&ranks[..3], &[0, 1, 2]);
    assert_eq!(&ranks[ranks.len() - 3..], &[n - 3, n - 2, n - 1]);
}

#[test]
fn strips_share_one_width_scale_and_skip_empty_bins() {
    let scale = Scale {
        d0: 0.0,
        d1: 40.0,
        p0: 300.0,
        p1: 0.0,
    };
    let a: Vec<f64> = (0..400).map(|i| (i % 40) as f64 + 0.5).collect(); // 10 per bin
    let b: Vec<f64> = vec![0.5; 30];
    assert_eq!(largest_bin(&[&a, &b], &scale), 30);
    let mut svg = Svg::new("t", 10.0, 10.0, "t", "t");
    binned_strip(&mut svg, &scale, 50.0, 20.0, &b, 30, "#000000");
    // One non-empty bin, one bar.
    assert_eq!(svg.out.matches("<rect").count(), 2); // background + bar
}

#[test]
fn density_grid_draws_only_occupied_cells() {
    let s = Scale {
        d0: 0.0,
        d1: 1.0,
        p0: 0.0,
        p1: 100.0,
    };
    let mut svg = Svg::new("t", 10.0, 10.0, "t", "t");
    density_grid(&mut svg, &s, &s, &[0.1, 0.1, 0.9], &[0.1, 0.1, 0.9]);
    assert_eq!(svg.out.matches("<rect").count(), 3); // background + two cells
}
