//! The multi-stratum ANOVA table: each stratum's treatment lines, tested
//! against that stratum's error, and its error line; the total.
//!
//! Each stratum's SS is the squared length of the response projected on the
//! stratum (unit means minus the projections on the strata above), and each
//! treatment term's SS that of its effects by inclusion-exclusion of marginal
//! means. For a recognised layout (orthogonal block structure, treatments
//! fully crossed with equal replication) these equal the sequential
//! least-squares SS in stratum order of spec 5.1 (METHODS 3.3, Type I), which
//! the property tests check against `stats::linear`; they cost O(N) per
//! stratum and term where the QR of the full design costs O(N·p²) (over a
//! second for 20,000 rows and 500 whole plots).

use super::partition::Partition;
use super::reason::StratumId;
use super::unit_structure::UnitStructure;
use crate::stats::dist::f_sf;
use crate::stats::linear::{Layout, TermFactors, term_width};
use crate::stats::sum::neumaier;

/// A treatment term's line, tested against its stratum's error.
#[derive(Debug, Clone, PartialEq)]
pub struct TreatmentLine {
    /// Index of the fixed term (model order).
    pub term: usize,
    pub df: usize,
    pub ss: f64,
    pub ms: f64,
    /// MS / stratum error MS; `None` when the error has no df or no variation.
    pub f: Option<f64>,
    pub p: Option<f64>,
}

/// A stratum's error line (for a stratum without treatments, such as blocks,
/// the line of the stratum itself, printed without F).
#[derive(Debug, Clone, PartialEq)]
pub struct ErrorLine {
    pub df: usize,
    pub ss: f64,
    /// SS/df; `None` with no df.
    pub ms: Option<f64>,
}

/// One stratum of the table.
#[derive(Debug, Clone, PartialEq)]
pub struct Stratum {
    pub id: StratumId,
    /// Number of units (observations for the residual).
    pub units: usize,
    /// Observations per unit.
    pub unit_size: usize,
    pub treatments: Vec<TreatmentLine>,
    pub error: ErrorLine,
    /// 100·√E / grand mean, in percent; `None` without an error MS or when
    /// the grand mean is not positive.
    pub cv_percent: Option<f64>,
    /// Expected error mean square: the coefficient of each variance component
    /// (random terms in the caller's order, then the residual).
    pub expected_mean_square: Vec<f64>,
}

/// The total line.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Total {
    pub df: usize,
    pub ss: f64,
}

/// The response centred and projected on each stratum (table order).
fn stratum_projections(structure: &UnitStructure, centred: &[f64]) -> Vec<Vec<f64>> {
    let mut projections: Vec<Vec<f64>> = Vec::with_capacity(structure.partitions.len());
    for (g, units) in structure.partitions.iter().enumerate() {
        let mut own = units.unit_means(centred);
        for (h, above) in projections.iter().enumerate() {
            if structure.above[g][h] {
                own.iter_mut().zip(above).for_each(|(v, a)| *v -= a);
            }
        }
        projections.push(own);
    }
    projections
}

/// The effects of a term at each observation, Σ over subsets S of its
/// factors of (−1)^{|T|−|S|} × the mean of the centred response over the
/// level combinations of S: the projection on the term's effect space of a
/// fully crossed layout with equal replication.
fn term_effects(treatments: &Layout, term: &[usize], centred: &[f64]) -> Vec<f64> {
    let mut effects = vec![0.0; centred.len()];
    for mask in 1usize..(1 << term.len()) {
        let subset: Vec<usize> = (0..term.len())
            .filter(|i| mask >> i & 1 == 1)
            .map(|i| term[i])
            .collect();
        let sign = if (term.len() - subset.len()).is_multiple_of(2) {
            1.0
        } else {
            -1.0
        };
        let cells = Partition::new(
            treatments
                .rows
                .iter()
                .map(|row| {
                    subset
                        .iter()
                        .fold(0, |acc, &f| acc * treatments.levels[f] + row[f])
                })
                .collect(),
        );
        let means = cells.unit_means(centred);
        effects
            .iter_mut()
            .zip(&means)
            .for_each(|(e, m)| *e += sign * m);
    }
    // The empty subset: the mean of the centred response, zero.
    effects
}

/// Expected mean square of each stratum in the components: σ² plus k_R σ²_R
/// for every random term R whose units lie within the stratum's units.
fn expected_mean_squares(structure: &UnitStructure, random_count: usize) -> Vec<Vec<f64>> {
    let s = structure.partitions.len();
    (0..s)
        .map(|g| {
            let mut coefficients = vec![0.0; random_count + 1];
            for r in 0..s {
                if let StratumId::Random(term) = structure.ids[r]
                    && (r == g || structure.above[r][g])
                {
                    coefficients[term] = structure.unit_size[r] as f64;
                }
            }
            coefficients[random_count] = 1.0;
            coefficients
        })
        .collect()
}

/// The table's strata and total.
pub(super) fn stratum_table(
    structure: &UnitStructure,
    y: &[f64],
    grand_mean: f64,
    treatments: &Layout,
    terms: &[TermFactors],
    term_strata: &[usize],
) -> (Vec<Stratum>, Total) {
    let mean = neumaier(y.iter().copied()) / y.len() as f64;
    let centred: Vec<f64> = y.iter().map(|v| v - mean).collect();
    let projections = stratum_projections(structure, &centred);
    let term_ss: Vec<(usize, f64)> = terms
        .iter()
        .map(|t| {
            let effects = term_effects(treatments, t, &centred);
            let df = term_width(t, &treatments.levels);
            (df, neumaier(effects.iter().map(|v| v * v)))
        })
        .collect();
    let random_count = structure.ids.len() - 1;
    let ems = expected_mean_squares(structure, random_count);
    let mut strata = Vec::new();
    for (g, projection) in projections.iter().enumerate() {
        let stratum_ss = neumaier(projection.iter().map(|v| v * v));
        let mut lines: Vec<TreatmentLine> = (0..terms.len())
            .filter(|&t| term_strata[t] == g && term_ss[t].0 > 0)
            .map(|t| TreatmentLine {
                term: t,
                df: term_ss[t].0,
                ss: term_ss[t].1,
                ms: term_ss[t].1 / term_ss[t].0 as f64,
                f: None,
                p: None,
            })
            .collect();
        let df = structure.df[g].saturating_sub(lines.iter().map(|l| l.df).sum());
        let ss = (stratum_ss - neumaier(lines.iter().map(|l| l.ss))).max(0.0);
        let ms = (df > 0).then(|| ss / df as f64);
        for line in &mut lines {
            if let Some(error) = ms.filter(|e| *e > 0.0) {
                let f = line.ms / error;
                line.f = Some(f);
                line.p = Some(f_sf(f, line.df as f64, df as f64));
            }
        }
        strata.push(Stratum {
            id: structure.ids[g],
            units: structure.partitions[g].present(),
            unit_size: structure.unit_size[g],
            treatments: lines,
            error: ErrorLine { df, ss, ms },
            cv_percent: ms
                .filter(|_| grand_mean > 0.0)
                .map(|e| 100.0 * e.sqrt() / grand_mean),
            expected_mean_square: ems[g].clone(),
        });
    }
    let total = Total {
        df: y.len() - 1,
        ss: neumaier(centred.iter().map(|v| v * v)),
    };
    (strata, total)
}
