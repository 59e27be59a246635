use super::*;

#[test]
fn keeps_the_most_extreme_and_counts_all() {
    let mut e = Extremes::new(3);
    for (i, x) in [1.0, 9.0, 3.0, 7.0, 2.0, 8.0, 7.0].iter().enumerate() {
        e.offer(*x, i);
    }
    assert_eq!(e.total(), 7);
    // 9.0 (index 1), 8.0 (index 5), then the first 7.0 (index 3) before the second.
    assert_eq!(e.into_most_extreme_first(), vec![1, 5, 3]);
}

#[test]
fn fewer_than_capacity_keeps_everything_in_extremity_order() {
    let mut e = Extremes::new(10);
    e.offer(-1.0, "a");
    e.offer(4.0, "b");
    e.offer(4.0, "c");
    assert_eq!(e.total(), 3);
    assert_eq!(e.into_most_extreme_first(), vec!["b", "c", "a"]);
}

#[test]
fn matches_a_full_sort_on_many_items() {
    // A deterministic scramble of 0..5000; the kept set must equal the top of
    // a full sort (ties cannot occur: the values are distinct).
    let values: Vec<f64> = (0..5000u64).map(|i| ((i * 7919) % 5000) as f64).collect();
    let mut e = Extremes::new(25);
    for (i, v) in values.iter().enumerate() {
        e.offer(*v, i);
    }
    let mut order: Vec<usize> = (0..values.len()).collect();
    order.sort_by(|a, b| values[*b].total_cmp(&values[*a]));
    assert_eq!(e.into_most_extreme_first(), order[..25].to_vec());
}

#[test]
fn zero_capacity_only_counts() {
    let mut e = Extremes::new(0);
    e.offer(1.0, ());
    assert_eq!(e.total(), 1);
    assert!(e.into_most_extreme_first().is_empty());
}
