//! Timing of the studentized-range cdf and a 100-level Tukey-Kramer table.
//!
//! Run by `bench/studentized_range.sh`, which times scipy on the same grid in
//! the same run and prints the ratio. Prints one line per measurement:
//! `name seconds_per_item items`.

use std::hint::black_box;
use std::time::Instant;

use sheaf::stats::compare::{LevelMean, Method, pairwise};
use sheaf::stats::ptukey::{ptukey_cdf, ptukey_sf};

/// The grid the script also gives scipy: q, k, ν as a practitioner meets them.
fn grid() -> Vec<(f64, usize, f64)> {
    let mut points = Vec::new();
    for &k in &[2usize, 3, 5, 10, 20, 50, 100] {
        for &df in &[3.0, 10.0, 30.0, 120.0, 1000.0] {
            for &q in &[1.0, 2.5, 4.0, 6.0] {
                points.push((q, k, df));
            }
        }
    }
    points
}

fn main() {
    let points = grid();
    // Warm up once, then time enough rounds for a stable figure.
    let mut sink = 0.0;
    for &(q, k, df) in &points {
        sink += ptukey_cdf(q, k, df);
    }
    let rounds = 5;
    let start = Instant::now();
    for _ in 0..rounds {
        for &(q, k, df) in &points {
            sink += ptukey_cdf(black_box(q), black_box(k), black_box(df));
        }
    }
    let evaluations = rounds * points.len();
    let per_eval = start.elapsed().as_secs_f64() / evaluations as f64;
    println!("ptukey_cdf {per_eval:.3e} {evaluations}");

    // Upper tails below 0.01, each computed directly (never as 1 − cdf):
    // Tukey p-values of clearly different means, as split-plot reports
    // meet them (k = 3..12, ν from 5 to ∞, p from about 1e-3 to 1e-15).
    let tails: Vec<(f64, usize, f64)> = [3usize, 4, 6, 12]
        .iter()
        .flat_map(|&k| {
            [5.0, 10.0, 30.23, 45.0, f64::INFINITY]
                .into_iter()
                .flat_map(move |df| [6.0, 9.0, 14.0].map(|q| (q, k, df)))
        })
        .collect();
    let start = Instant::now();
    for &(q, k, df) in &tails {
        sink += ptukey_sf(black_box(q), black_box(k), black_box(df));
    }
    let per_tail = start.elapsed().as_secs_f64() / tails.len() as f64;
    println!("ptukey_sf_tail {per_tail:.3e} {}", tails.len());

    // A 100-level one-way layout with unequal n: 4,950 Tukey-Kramer pairs.
    let levels: Vec<LevelMean> = (0..100)
        .map(|i| LevelMean {
            n: 4 + i % 5,
            mean: 10.0 + 0.03 * i as f64,
        })
        .collect();
    let start = Instant::now();
    let table = pairwise(black_box(&levels), 0.8, 500.0, 0.05, Method::Tukey);
    let elapsed = start.elapsed().as_secs_f64();
    println!("tukey_table_100 {elapsed:.3e} {}", table.pairs.len());
    black_box(sink);
}
