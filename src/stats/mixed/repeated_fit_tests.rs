//! Tests of the repeated-measures fit on invented data.

use super::*;
use crate::stats::mixed::Information;
use crate::stats::mixed::subjects::tests::invented;

/// Single-row KR: λ = 1 and m equals the expected-information
/// Satterthwaite df (spec 3.3, 9.6 item 2), for each structure.
#[test]
fn single_row_kenward_roger_is_expected_satterthwaite() {
    for structure in [
        Structure::CompoundSymmetry,
        Structure::Autoregressive,
        Structure::Unstructured,
    ] {
        let m = invented(structure);
        let opt = best_optimum(&m).unwrap();
        let (with_r, _, beta) = df_inputs(&m, &opt.psi, &opt.derivatives).unwrap();
        let mut l = vec![0.0; beta.len()];
        l[1] = 1.0;
        let lm = DMatrix::from_row_slice(1, l.len(), &l);
        let kr = ddf::kenward_roger(&with_r, &beta, &lm).unwrap();
        let sat = ddf::satterthwaite_single(&with_r, &l, Information::Expected);
        assert!((kr.lambda - 1.0).abs() < 1e-12, "{structure:?} {kr:?}");
        assert!(
            (kr.df_den - sat).abs() <= 1e-9 * sat,
            "{structure:?}: {kr:?} vs {sat}"
        );
    }
}
