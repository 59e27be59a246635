//! Timing of the REML core on invented split-plots: 50 blocks × 10
//! whole-plot levels (500 whole plots) × 8 subplot levels × 5 samples
//! (20,000 rows); the layout of `bench/mixed.sh` (100 blocks × 5 × 4 × 10,
//! 20,000 rows, q = 600, p = 20); and larger numbers of whole plots up to
//! the limit on random-effect levels.
//!
//! Prints one line per measurement: `name seconds rows random_levels iterations`.
//! The data are invented (a fixed linear congruential sequence).

use std::time::Instant;

use sheaf::stats::linear::Layout;
use sheaf::stats::mixed::{self, Ddf, FixedDesign, RandomTerm};

/// A deterministic pseudo-random sequence in (−0.5, 0.5).
struct Lcg(u64);

impl Lcg {
    fn next(&mut self) -> f64 {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (self.0 >> 11) as f64 / (1u64 << 53) as f64 - 0.5
    }
    /// Roughly normal: a sum of four uniforms.
    fn noise(&mut self) -> f64 {
        (0..4).map(|_| self.next()).sum::<f64>()
    }
}

fn split_plot(
    blocks: usize,
    a: usize,
    b: usize,
    reps: usize,
) -> (Vec<f64>, FixedDesign, Vec<RandomTerm>) {
    let mut lcg = Lcg(20_261_204);
    let block_effects: Vec<f64> = (0..blocks).map(|_| 3.0 * lcg.noise()).collect();
    let (mut y, mut rows, mut block, mut plot) = (Vec::new(), Vec::new(), Vec::new(), Vec::new());
    for (bl, block_effect) in block_effects.iter().enumerate() {
        for i in 0..a {
            let plot_effect = 2.0 * lcg.noise();
            for j in 0..b {
                for _ in 0..reps {
                    y.push(
                        50.0 + i as f64 * 0.3
                            + j as f64 * 0.5
                            + block_effect
                            + plot_effect
                            + lcg.noise(),
                    );
                    rows.push(vec![i, j]);
                    block.push(bl);
                    plot.push(bl * a + i);
                }
            }
        }
    }
    let design = FixedDesign::new(
        &Layout {
            levels: vec![a, b],
            rows,
        },
        &[vec![0], vec![1], vec![0, 1]],
    );
    let random = vec![
        RandomTerm {
            name: "block".into(),
            levels: blocks,
            level_of: block,
        },
        RandomTerm {
            name: "block:A".into(),
            levels: blocks * a,
            level_of: plot,
        },
    ];
    (y, design, random)
}

fn time(name: &str, blocks: usize, a: usize, b: usize, reps: usize) {
    let (y, design, random) = split_plot(blocks, a, b, reps);
    let start = Instant::now();
    let fit = match mixed::fit(&y, &design, &random) {
        Ok(f) => f,
        Err(e) => {
            println!("{name} failed: {e}");
            return;
        }
    };
    let fitted = start.elapsed().as_secs_f64();
    let tests: f64 = (0..3)
        .map(|t| {
            fit.fixed
                .type3(&design, t, Ddf::KenwardRoger)
                .map_or(f64::NAN, |w| w.f)
        })
        .sum();
    let total = start.elapsed().as_secs_f64();
    let q = blocks + blocks * a;
    println!(
        "{name} fit {fitted:.3} fit+3 KR tests {total:.3} rows {} random_levels {q} iterations {} (F sum {tests:.4})",
        y.len(),
        fit.statistics.iterations
    );
}

/// Profile intervals re-fit the model some forty times per component.
fn time_profiles(name: &str, blocks: usize, a: usize, b: usize, reps: usize) {
    let (y, design, random) = split_plot(blocks, a, b, reps);
    let Ok(fit) = mixed::fit(&y, &design, &random) else {
        println!("{name} failed");
        return;
    };
    let start = Instant::now();
    let intervals = fit.profile_intervals(0.95);
    let seconds = start.elapsed().as_secs_f64();
    println!(
        "{name} profile intervals {seconds:.3} rows {} ok {}",
        y.len(),
        intervals.is_ok()
    );
}

fn main() {
    time_profiles("split_plot_2000_profiles", 50, 10, 4, 1);
    time("split_plot_20000", 50, 10, 8, 5);
    time("split_plot_20000_p20", 100, 5, 4, 10);
    time("split_plot_q1100", 100, 10, 4, 2);
    time("split_plot_q1500_limit", 100, 14, 4, 2);
}
