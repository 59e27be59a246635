//! Compact letter display: the sharing guarantee on random significance
//! patterns (METHODS 6.8, property test; no published source needed).

// Index loops read most plainly for a symmetric matrix.
#![allow(clippy::needless_range_loop)]

use proptest::prelude::*;
use sheaf::stats::letters::compact_letters;

fn shares_letter(a: &str, b: &str) -> bool {
    a.chars().any(|c| b.contains(c))
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(3000))]

    #[test]
    fn levels_share_a_letter_exactly_when_not_different(
        k in 2usize..9,
        bits in proptest::collection::vec(any::<bool>(), 36),
        means in proptest::collection::vec(-100.0f64..100.0, 9),
    ) {
        let mut different = vec![vec![false; k]; k];
        let mut idx = 0;
        for i in 0..k {
            for j in (i + 1)..k {
                different[i][j] = bits[idx];
                different[j][i] = bits[idx];
                idx += 1;
            }
        }
        let letters = compact_letters(&means[..k], |i, j| different[i][j]);
        for i in 0..k {
            prop_assert!(!letters[i].is_empty(), "level {} has no letter", i);
            for j in (i + 1)..k {
                prop_assert_eq!(
                    shares_letter(&letters[i], &letters[j]),
                    !different[i][j],
                    "levels {} and {}: {:?} with pattern {:?}", i, j, letters, different
                );
            }
        }
    }

    #[test]
    fn the_highest_mean_gets_a(
        k in 2usize..9,
        bits in proptest::collection::vec(any::<bool>(), 36),
        means in proptest::collection::vec(-100.0f64..100.0, 9),
    ) {
        let mut idx = 0;
        let mut different = vec![vec![false; k]; k];
        for i in 0..k {
            for j in (i + 1)..k {
                different[i][j] = bits[idx];
                different[j][i] = bits[idx];
                idx += 1;
            }
        }
        let letters = compact_letters(&means[..k], |i, j| different[i][j]);
        let top = (0..k).max_by(|&a, &b| means[a].total_cmp(&means[b]).then(b.cmp(&a))).unwrap_or(0);
        prop_assert!(letters[top].contains('a'), "{:?} {:?}", letters, &means[..k]);
    }
}
