//! Property tests of `stats::strata` on randomly generated balanced layouts
//! (spec 9.6): split-plot, strip-plot, split-split-plot, subsampling in a CRD
//! and in an RCBD, and an RCBD with random blocks. No outside reference is
//! needed: the checks are identities (SS and df add up, the components
//! reproduce the expected mean squares),
//! agreement with the sequential least-squares route of spec 5.1 computed by
//! `stats::linear`, the textbook SED formulas of spec 5.4 (Cochran & Cox 1957,
//! Gomez & Gomez 1984, as the spec gives them), and invariance to row order.

use proptest::prelude::*;

use super::*;
use crate::stats::linear::{
    Layout, SsType, TermFactors, design_matrix, sums_of_squares, term_columns,
};

/// Sums of a few dozen values of size ≤ 1e4: rounding stays far below this.
const TOL: f64 = 1e-9;

fn close(a: f64, b: f64) -> bool {
    (a - b).abs() <= TOL * a.abs().max(b.abs()).max(1.0)
}

/// A layout generated as the full grid of `dims` (first index slowest):
/// each treatment factor is one grid position, each random term the
/// combination of several positions.
#[derive(Debug, Clone)]
struct Design {
    dims: Vec<usize>,
    treatments: Vec<usize>,
    random: Vec<Vec<usize>>,
}

fn grid(dims: &[usize]) -> Vec<Vec<usize>> {
    let mut all = vec![Vec::new()];
    for &d in dims {
        all = all
            .into_iter()
            .flat_map(|t: Vec<usize>| {
                (0..d).map(move |i| {
                    let mut next = t.clone();
                    next.push(i);
                    next
                })
            })
            .collect();
    }
    all
}

impl Design {
    fn size(&self) -> usize {
        self.dims.iter().product()
    }

    fn layouts(&self) -> (Layout, Layout, Vec<TermFactors>) {
        let cells = grid(&self.dims);
        let treatments = Layout {
            levels: self.treatments.iter().map(|&p| self.dims[p]).collect(),
            rows: cells
                .iter()
                .map(|c| self.treatments.iter().map(|&p| c[p]).collect())
                .collect(),
        };
        let unit = |c: &[usize], positions: &[usize]| {
            positions
                .iter()
                .fold(0, |acc, &p| acc * self.dims[p] + c[p])
        };
        let random = Layout {
            levels: self
                .random
                .iter()
                .map(|ps| ps.iter().map(|&p| self.dims[p]).product())
                .collect(),
            rows: cells
                .iter()
                .map(|c| self.random.iter().map(|ps| unit(c, ps)).collect())
                .collect(),
        };
        // The full factorial model, terms by order then position.
        let k = self.treatments.len();
        let mut terms: Vec<TermFactors> = (1usize..1 << k)
            .map(|m| (0..k).filter(|i| m >> i & 1 == 1).collect())
            .collect();
        terms.sort_by_key(|t: &TermFactors| (t.len(), t.clone()));
        (treatments, random, terms)
    }
}

fn analysed(design: &Design, y: &[f64]) -> StratumAnalysis {
    let (treatments, random, terms) = design.layouts();
    analyse(&StrataInput {
        y,
        shift: 0.0,
        treatments: &treatments,
        terms: &terms,
        random: &random,
    })
    .expect("a generated balanced layout is recognised")
}

/// Designs of spec 5.2 with 2-4 levels per factor and their responses.
fn designs() -> impl Strategy<Value = (Design, Vec<f64>)> {
    let shapes = prop_oneof![
        // split-plot: blocks, A on whole plots, S on subplots
        (2usize..5, 2usize..5, 2usize..5).prop_map(|(r, a, b)| Design {
            dims: vec![r, a, b],
            treatments: vec![1, 2],
            random: vec![vec![0], vec![0, 1]],
        }),
        // strip-plot: A in rows, C in columns of each block
        (2usize..5, 2usize..5, 2usize..5).prop_map(|(r, a, c)| Design {
            dims: vec![r, a, c],
            treatments: vec![1, 2],
            random: vec![vec![0], vec![0, 1], vec![0, 2]],
        }),
        // split-split-plot
        (2usize..4, 2usize..4, 2usize..4, 2usize..4).prop_map(|(r, a, b, c)| Design {
            dims: vec![r, a, b, c],
            treatments: vec![1, 2, 3],
            random: vec![vec![0], vec![0, 1], vec![0, 1, 2]],
        }),
        // subsampling in a CRD: t treatments, r units each, s samples
        (2usize..5, 2usize..5, 2usize..4).prop_map(|(t, r, s)| Design {
            dims: vec![t, r, s],
            treatments: vec![0],
            random: vec![vec![0, 1]],
        }),
        // subsampling in an RCBD (also workers × machines with
        // worker:machine random and replicate scores, as Machines)
        (2usize..5, 2usize..5, 2usize..4).prop_map(|(r, t, s)| Design {
            dims: vec![r, t, s],
            treatments: vec![1],
            random: vec![vec![0], vec![0, 1]],
        }),
        // RCBD with random blocks
        (2usize..6, 2usize..6).prop_map(|(r, t)| Design {
            dims: vec![r, t],
            treatments: vec![1],
            random: vec![vec![0]],
        }),
    ];
    shapes.prop_flat_map(|d| {
        let n = d.size();
        (Just(d), prop::collection::vec(-100.0f64..100.0, n))
    })
}

/// The sequential least-squares route of spec 5.1: the treatment terms of
/// each stratum, then the stratum's own random term as one factor, stratum by
/// stratum, by `stats::linear` on the combined layout.
fn sequential_route(design: &Design, y: &[f64], a: &StratumAnalysis) -> Vec<(usize, f64)> {
    let (treatments, random, terms) = design.layouts();
    let k = treatments.levels.len();
    let combined = Layout {
        levels: treatments
            .levels
            .iter()
            .chain(&random.levels)
            .copied()
            .collect(),
        rows: treatments
            .rows
            .iter()
            .zip(&random.rows)
            .map(|(t, r)| t.iter().chain(r).copied().collect())
            .collect(),
    };
    let mut order: Vec<TermFactors> = Vec::new();
    for stratum in &a.strata {
        order.extend(stratum.treatments.iter().map(|l| terms[l.term].clone()));
        if let StratumId::Random(r) = stratum.id {
            order.push(vec![k + r]);
        }
    }
    let design_columns = design_matrix(&combined, &order);
    let ranges = term_columns(&order, &combined.levels);
    let table = sums_of_squares(&design_columns, y, &order, &ranges, SsType::I);
    let mut lines: Vec<(usize, f64)> = table.terms.iter().map(|t| (t.df, t.ss)).collect();
    lines.push((y.len() - table.rank, table.rss));
    lines
}

fn table_lines(a: &StratumAnalysis) -> Vec<(usize, f64)> {
    let mut lines = Vec::new();
    for s in &a.strata {
        lines.extend(s.treatments.iter().map(|l| (l.df, l.ss)));
        lines.push((s.error.df, s.error.ss));
    }
    lines
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 48, .. ProptestConfig::default() })]

    #[test]
    fn strata_add_up_and_match_sequential_least_squares((design, y) in designs()) {
        let a = analysed(&design, &y);
        let lines = table_lines(&a);
        let ss: f64 = lines.iter().map(|l| l.1).sum();
        let df: usize = lines.iter().map(|l| l.0).sum();
        prop_assert!(close(ss, a.total.ss), "SS {ss} vs total {}", a.total.ss);
        prop_assert_eq!(df, y.len() - 1);
        let sequential = sequential_route(&design, &y, &a);
        prop_assert_eq!(sequential.len(), lines.len());
        for (mine, theirs) in lines.iter().zip(&sequential) {
            prop_assert_eq!(mine.0, theirs.0);
            prop_assert!(close(mine.1, theirs.1), "SS {} vs sequential {}", mine.1, theirs.1);
        }
    }

    #[test]
    fn components_reproduce_the_expected_mean_squares((design, y) in designs()) {
        let a = analysed(&design, &y);
        for (g, stratum) in a.strata.iter().enumerate() {
            // Σ_R EMS_g[R]·(Σ_s c_{R,s} E_s) must be E_g itself.
            let mut total = vec![0.0; a.strata.len()];
            for (coefficient, component) in stratum.expected_mean_square.iter().zip(&a.components) {
                let estimate = component.estimate.as_ref().expect("every stratum has error df here");
                for (t, c) in total.iter_mut().zip(&estimate.coefficients) {
                    *t += coefficient * c;
                }
            }
            for (s, t) in total.iter().enumerate() {
                let want = if s == g { 1.0 } else { 0.0 };
                prop_assert!((t - want).abs() < 1e-12, "stratum {g}: {total:?}");
            }
        }
    }

    #[test]
    fn row_order_changes_nothing((design, y) in designs(), seed in any::<u64>()) {
        let a = analysed(&design, &y);
        let (treatments, random, terms) = design.layouts();
        // A deterministic shuffle from the seed (Fisher-Yates, xorshift).
        let mut order: Vec<usize> = (0..y.len()).collect();
        let mut state = seed | 1;
        for i in (1..order.len()).rev() {
            state ^= state << 13;
            state ^= state >> 7;
            state ^= state << 17;
            order.swap(i, (state % (i as u64 + 1)) as usize);
        }
        let permute = |l: &Layout| Layout { levels: l.levels.clone(), rows: order.iter().map(|&i| l.rows[i].clone()).collect() };
        let y2: Vec<f64> = order.iter().map(|&i| y[i]).collect();
        let (t2, r2) = (permute(&treatments), permute(&random));
        let b = analyse(&StrataInput { y: &y2, shift: 0.0, treatments: &t2, terms: &terms, random: &r2 }).expect("recognised");
        for (x, z) in table_lines(&a).iter().zip(&table_lines(&b)) {
            prop_assert_eq!(x.0, z.0);
            prop_assert!(close(x.1, z.1));
        }
        for (x, z) in a.components.iter().zip(&b.components) {
            prop_assert!(close(x.estimate.as_ref().unwrap().value, z.estimate.as_ref().unwrap().value));
        }
        for (x, z) in a.comparisons(0.05).iter().zip(&b.comparisons(0.05)) {
            prop_assert_eq!(&x.kind, &z.kind);
            prop_assert!(close(x.sed, z.sed));
        }
    }

    #[test]
    fn seds_follow_the_textbook_formulas((design, y) in designs()) {
        let a = analysed(&design, &y);
        let e: Vec<f64> = a.strata.iter().map(|s| s.error.ms.unwrap()).collect();
        let d = &design.dims;
        let sed = |term: usize, differing: &[usize]| {
            let kind = a.comparison_kinds().into_iter().find(|k| k.term == term && k.differing == differing).unwrap();
            a.comparison(&kind, 0.05).unwrap().sed
        };
        let f = |x: f64| x.sqrt();
        match (design.treatments.len(), design.random.len()) {
            // split-plot: strata B, B:A, residual; terms A, S, A:S
            (2, 2) => {
                let (r, aa, b) = (d[0] as f64, d[1] as f64, d[2] as f64);
                prop_assert!(close(sed(0, &[0]), f(2.0 * e[1] / (r * b))));
                prop_assert!(close(sed(1, &[1]), f(2.0 * e[2] / (r * aa))));
                prop_assert!(close(sed(2, &[1]), f(2.0 * e[2] / r)));
                let combined = 2.0 * ((b - 1.0) * e[2] + e[1]) / (r * b);
                prop_assert!(close(sed(2, &[0]), f(combined)));
                prop_assert!(close(sed(2, &[0, 1]), f(combined)));
            }
            // strip-plot: strata B, B:A, B:C (fewer units first), residual
            (2, 3) => {
                let (r, aa, c) = (d[0] as f64, d[1] as f64, d[2] as f64);
                let ids: Vec<StratumId> = a.strata.iter().map(|s| s.id).collect();
                let at = |id| ids.iter().position(|x| *x == id).unwrap();
                let (ea, eb, ec) = (e[at(StratumId::Random(1))], e[at(StratumId::Random(2))], e[3]);
                prop_assert!(close(sed(0, &[0]), f(2.0 * ea / (r * c))));
                prop_assert!(close(sed(1, &[1]), f(2.0 * eb / (r * aa))));
                prop_assert!(close(sed(2, &[0]), f(2.0 * ((c - 1.0) * ec + ea) / (r * c))));
                prop_assert!(close(sed(2, &[1]), f(2.0 * ((aa - 1.0) * ec + eb) / (r * aa))));
                let both = 2.0 * (aa * ea + c * eb + (aa * c - aa - c) * ec) / (r * aa * c);
                prop_assert!(close(sed(2, &[0, 1]), f(both)));
            }
            // split-split-plot: terms A, S, C, A:S, A:C, S:C, A:S:C
            (3, 3) => {
                let (r, aa, b, c) = (d[0] as f64, d[1] as f64, d[2] as f64, d[3] as f64);
                let (ea, eb, ec) = (e[1], e[2], e[3]);
                prop_assert!(close(sed(0, &[0]), f(2.0 * ea / (r * b * c))));
                prop_assert!(close(sed(1, &[1]), f(2.0 * eb / (r * aa * c))));
                prop_assert!(close(sed(2, &[2]), f(2.0 * ec / (r * aa * b))));
                prop_assert!(close(sed(3, &[1]), f(2.0 * eb / (r * c))));
                prop_assert!(close(sed(3, &[0]), f(2.0 * ((b - 1.0) * eb + ea) / (r * b * c))));
                prop_assert!(close(sed(4, &[2]), f(2.0 * ec / (r * b))));
                prop_assert!(close(sed(4, &[0]), f(2.0 * ((c - 1.0) * ec + ea) / (r * b * c))));
                prop_assert!(close(sed(5, &[2]), f(2.0 * ec / (r * aa))));
                prop_assert!(close(sed(5, &[1]), f(2.0 * ((c - 1.0) * ec + eb) / (r * aa * c))));
                prop_assert!(close(sed(6, &[2]), f(2.0 * ec / r)));
                prop_assert!(close(sed(6, &[1]), f(2.0 * ((c - 1.0) * ec + eb) / (r * c))));
                let three = 2.0 * (b * (c - 1.0) * ec + (b - 1.0) * eb + ea) / (r * b * c);
                prop_assert!(close(sed(6, &[0]), f(three)));
            }
            // RCBD with random blocks: two treatment means √(2E/r)
            (1, 1) if design.dims.len() == 2 => {
                prop_assert!(close(sed(0, &[0]), f(2.0 * e[1] / d[0] as f64)));
                prop_assert_eq!(a.strata[1].treatments.len(), 1);
            }
            // subsampling (CRD or RCBD): the experimental error, never the sampling error
            (1, _) => {
                let (r, s) = if design.random.len() == 1 { (d[1], d[2]) } else { (d[0], d[2]) };
                let experimental = e[a.strata.len() - 2];
                prop_assert!(close(sed(0, &[0]), f(2.0 * experimental / (r * s) as f64)));
                let line = &a.strata[a.strata.len() - 2].treatments[0];
                prop_assert!(close(line.f.unwrap(), line.ms / experimental));
            }
            _ => unreachable!("no other shape is generated"),
        }
    }
}

/// Arbitrary small layouts, mostly unbalanced, some with missing responses.
fn arbitrary_layouts() -> impl Strategy<Value = (Layout, Layout, Vec<f64>)> {
    (
        2usize..30,
        prop::collection::vec(1usize..4, 0..3),
        prop::collection::vec(1usize..7, 0..3),
    )
        .prop_flat_map(|(n, treatment_levels, random_levels)| {
            let row = |levels: Vec<usize>| levels.into_iter().map(|l| 0..l).collect::<Vec<_>>();
            (
                prop::collection::vec(row(treatment_levels.clone()), n),
                prop::collection::vec(row(random_levels.clone()), n),
                prop::collection::vec(prop_oneof![9 => -10.0f64..10.0, 1 => Just(f64::NAN)], n),
                Just((treatment_levels, random_levels)),
            )
                .prop_map(|(t, r, y, (tl, rl))| {
                    (
                        Layout {
                            levels: tl,
                            rows: t,
                        },
                        Layout {
                            levels: rl,
                            rows: r,
                        },
                        y,
                    )
                })
        })
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 256, .. ProptestConfig::default() })]

    /// Any layout gives a table or reasons, never a panic; a table always adds up.
    #[test]
    fn any_layout_gives_a_table_or_reasons((treatments, random, y) in arbitrary_layouts()) {
        let k = treatments.levels.len();
        let terms: Vec<TermFactors> = (1usize..1 << k).map(|m| (0..k).filter(|i| m >> i & 1 == 1).collect()).collect();
        let input = StrataInput { y: &y, shift: 0.0, treatments: &treatments, terms: &terms, random: &random };
        match analyse(&input) {
            Ok(a) => {
                let lines = table_lines(&a);
                prop_assert_eq!(lines.iter().map(|l| l.0).sum::<usize>(), y.len() - 1);
                prop_assert!(close(lines.iter().map(|l| l.1).sum(), a.total.ss));
                let _ = a.comparisons(0.05);
                for t in 0..terms.len() {
                    let _ = a.mean_error(t, SeBasis::Stratum);
                }
            }
            Err(reasons) => prop_assert!(!reasons.is_empty()),
        }
    }
}
