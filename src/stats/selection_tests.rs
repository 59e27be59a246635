use super::*;

/// The order statistics a full sort gives (the reference: `total_cmp`
/// order, as the in-memory selection uses).
fn sorted_at(values: &[f64], ranks: &[usize]) -> Vec<f64> {
    let mut v = values.to_vec();
    v.sort_by(f64::total_cmp);
    ranks.iter().map(|&r| v[r]).collect()
}

/// Runs a selection to the end over groups held in memory, handing each
/// group's values in runs of `run` values; returns the values and passes.
fn select(
    groups: &[Vec<f64>],
    ranks: &[Vec<usize>],
    grid: &dyn Fn(&[f64]) -> (f64, f64),
    run: usize,
    budgets: (usize, usize),
) -> (Vec<Vec<f64>>, usize) {
    let spec: Vec<(usize, Vec<usize>, (f64, f64))> = groups
        .iter()
        .zip(ranks)
        .map(|(g, r)| (g.len(), r.clone(), grid(g)))
        .collect();
    let mut s = Selection::with_budgets(&spec, budgets.0, budgets.1);
    while !s.done() {
        s.begin_pass();
        for (i, g) in groups.iter().enumerate() {
            for part in g.chunks(run.max(1)) {
                s.visit(i, part);
            }
        }
        s.end_pass().expect("the same values every pass");
        assert!(s.passes() < 40, "the selection must finish");
    }
    let found = ranks
        .iter()
        .enumerate()
        .map(|(i, r)| s.values(i, r))
        .collect();
    (found, s.passes())
}

const DEFAULT: (usize, usize) = (BUCKET_BUDGET, COLLECT_BUDGET);

fn mean_sd(g: &[f64]) -> (f64, f64) {
    let n = g.len() as f64;
    let m = g.iter().sum::<f64>() / n;
    (m - 3.0, m + 3.0)
}

fn same_bits(a: &[f64], b: &[f64]) -> bool {
    a.len() == b.len() && a.iter().zip(b).all(|(x, y)| x.to_bits() == y.to_bits())
}

/// A deterministic scramble (no clock, no random crate).
fn scramble(i: u64) -> f64 {
    let x = i
        .wrapping_mul(6_364_136_223_846_793_005)
        .wrapping_add(1_442_695_040_888_963_407);
    (x >> 11) as f64 / (1u64 << 53) as f64
}

fn every_rank(n: usize) -> Vec<usize> {
    (0..n).collect()
}

#[test]
fn small_groups_every_rank_against_a_sort() {
    let groups: Vec<Vec<f64>> = vec![
        vec![3.0],                            // one value
        vec![2.0, -1.0],                      // even n
        vec![5.0, 5.0, 5.0, 5.0],             // all equal
        vec![-0.5, -2.25, -0.5, -7.0, -0.25], // negative, ties, odd n
        vec![0.0, -0.0, 1.0, -0.0],           // signed zeros are ordered as total_cmp orders them
    ];
    let ranks: Vec<Vec<usize>> = groups.iter().map(|g| every_rank(g.len())).collect();
    let (found, _) = select(&groups, &ranks, &mean_sd, 2, DEFAULT);
    for (g, (f, r)) in groups.iter().zip(found.iter().zip(&ranks)) {
        assert!(same_bits(f, &sorted_at(g, r)), "{g:?}: {f:?}");
    }
}

#[test]
fn large_groups_are_counted_then_collected() {
    // 50,000 continuous values (no ties) and 60,000 values on a 0.001 grid
    // (many ties): medians and quartile ranks as type 7 asks for them.
    let a: Vec<f64> = (0..50_000)
        .map(|i| 100.0 + 7.0 * (scramble(i) - 0.5))
        .collect();
    let b: Vec<f64> = (0..60_000)
        .map(|i| ((scramble(i + 99) * 2400.0).floor() - 1200.0) / 1000.0)
        .collect();
    let groups = vec![a, b];
    let ranks: Vec<Vec<usize>> = groups
        .iter()
        .map(|g| {
            let last = g.len() - 1;
            vec![
                0,
                last / 4,
                last / 4 + 1,
                last / 2,
                last / 2 + 1,
                3 * last / 4,
                last,
            ]
        })
        .collect();
    let (found, passes) = select(&groups, &ranks, &mean_sd, 4096, DEFAULT);
    for (g, (f, r)) in groups.iter().zip(found.iter().zip(&ranks)) {
        assert!(same_bits(f, &sorted_at(g, r)));
    }
    // Counting narrows 50,000 values to a few per bucket; the next pass collects.
    assert!(passes <= 3, "{passes} passes");
}

#[test]
fn a_bad_first_range_and_extreme_values_still_finish_exactly() {
    // The first buckets miss every value (the range is far away); values span
    // from -1e300 to 1e300 with subnormals and an infinity-free spread.
    let g: Vec<f64> = (0..20_000)
        .map(|i| {
            let u = scramble(i);
            match i % 5 {
                0 => (u - 0.5) * 1e300,
                1 => (u - 0.5) * 1e-310,
                2 => u,
                3 => -u * 1e10,
                _ => (i % 7) as f64,
            }
        })
        .collect();
    let ranks = vec![vec![0, 1, 4_999, 5_000, 9_999, 10_000, 14_999, 19_999]];
    let (found, _) = select(
        std::slice::from_ref(&g),
        &ranks,
        &|_| (1e6, 2e6),
        1000,
        DEFAULT,
    );
    assert!(same_bits(&found[0], &sorted_at(&g, &ranks[0])));
}

#[test]
fn many_groups_stay_within_the_bucket_budget() {
    // More counted windows than the budget allows at once: some wait for a
    // later pass, and every answer is still exact.
    let groups: Vec<Vec<f64>> = (0..12u64)
        .map(|k| {
            (0..(COLLECT_AT_MOST as u64 + 1))
                .map(|i| scramble(k * 10_007 + i))
                .collect()
        })
        .collect();
    let ranks: Vec<Vec<usize>> = groups.iter().map(|g| vec![g.len() / 2]).collect();
    // Room for three counted windows and one collected window per pass.
    let budgets = (3 * MIN_BUCKETS, COLLECT_AT_MOST);
    let (found, passes) = select(&groups, &ranks, &mean_sd, 1 << 20, budgets);
    assert!(passes >= 4, "{passes} passes: windows must have waited");
    for (g, (f, r)) in groups.iter().zip(found.iter().zip(&ranks)) {
        assert!(same_bits(f, &sorted_at(g, r)));
    }
}

#[test]
fn a_changed_count_is_an_error() {
    let mut s = Selection::new(&[(3, vec![1], (0.0, 1.0))]);
    s.begin_pass();
    s.visit(0, &[1.0, 2.0]);
    assert_eq!(s.end_pass(), Err(SelectionError::Changed));
}

/// The first pass's record of a group read whole: a small group's values
/// in the order seen; a large group's buckets, which partition its values
/// in value order, each with the exact offsets from its first value (the
/// reference here is a plain recount over the values).
#[test]
fn the_first_pass_records_groups_read_whole() {
    let small: Vec<f64> = (0..50).map(|i| scramble(i) * 10.0).collect();
    let large: Vec<f64> = (0..20_000)
        .map(|i| (scramble(i + 99) * 400.0).round() / 100.0)
        .collect();
    let spec = vec![
        (small.len(), vec![25], (0.0, 10.0)),
        (large.len(), vec![10_000], (0.0, 4.0)),
    ];
    let mut s = Selection::new(&spec);
    s.begin_pass();
    s.visit(0, &small);
    for part in large.chunks(777) {
        s.visit(1, part);
    }
    s.end_pass().expect("one pass");
    match s.whole(0) {
        Some(Whole::Values(v)) => assert!(same_bits(v, &small)),
        other => panic!("small group: {other:?}"),
    }
    let Some(Whole::Buckets(buckets)) = s.whole(1) else {
        panic!("large group: {:?}", s.whole(1));
    };
    let occupied: Vec<&Bucket> = buckets.iter().filter(|b| b.count > 0).collect();
    assert_eq!(
        occupied.iter().map(|b| b.count).sum::<u64>(),
        large.len() as u64
    );
    for pair in occupied.windows(2) {
        assert!(pair[0].high < pair[1].low, "buckets in value order");
    }
    for b in occupied {
        let inside: Vec<f64> = large
            .iter()
            .copied()
            .filter(|&v| v >= b.low && v <= b.high)
            .collect();
        assert_eq!(inside.len() as u64, b.count);
        assert_eq!(inside[0].to_bits(), b.first.to_bits());
        // Values on a 0.01 grid, four hundred steps over 4,096 buckets: one
        // value each, so every offset is exactly zero.
        assert!(b.single_valued());
        assert_eq!(b.offsets[0].value(), 0.0);
        assert_eq!(b.offsets[1].value(), 0.0);
    }
    assert!(s.done(), "one-valued buckets answer at once");
}
