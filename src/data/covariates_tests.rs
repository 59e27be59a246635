use super::split_covariates;
use crate::data::{CsvFormat, factorial_response, read_table};

fn read(csv: &str) -> crate::data::FactorialRows {
    let format = CsvFormat::default();
    let table = read_table("d.csv", csv.as_bytes(), &format, None, None).expect("csv");
    factorial_response(&table, "y", &["g", "x"], &format).expect("columns")
}

#[test]
fn covariate_values_are_exact_offsets_and_cells_merge_over_the_factors() {
    // Large offsets keep their digits: 1000000000000.4 − 1000000000000.1 is
    // 0.3 exactly before the final rounding.
    let data = read("g,x,y\na,1000000000000.1,1\nb,1000000000000.4,2\na,1000000000000.2,3\nb,,4\n");
    let (data, cov) = split_covariates(data, &["x"], false).expect("numbers");
    assert_eq!(
        data.layout.levels,
        vec![vec!["a".to_string(), "b".to_string()]]
    );
    assert_eq!(data.layout.cells, vec![vec![0], vec![1]]);
    assert_eq!(data.cell_of, vec![0, 1, 0]);
    assert_eq!(cov.origins, vec![1000000000000.1]);
    let expected = [0.0, 0.3, 0.1];
    for (v, e) in cov.values[0].iter().zip(expected) {
        assert!((v - e).abs() < 1e-15, "{v} vs {e}");
    }
    assert_eq!(cov.decimals, vec![1]);
    // The row with no covariate is left out and recorded.
    assert!(
        data.excluded
            .iter()
            .any(|e| e.line == 5 && e.reason.contains("`x`"))
    );
}

#[test]
fn a_covariate_that_is_not_a_number_names_its_line() {
    let data = read("g,x,y\na,1.5,1\nb,heavy,2\na,2.5,3\nb,3,4\n");
    let e = split_covariates(data, &["x"], false).expect_err("text");
    assert_eq!(e.line, Some(3));
    assert!(
        e.message.contains("`x`") && e.message.contains("`heavy`"),
        "{}",
        e.message
    );
    assert!(e.hint.is_some());
}

#[test]
fn a_decimal_comma_is_read_where_the_file_uses_one() {
    let data = read("g,x,y\na,\"1,5\",1\nb,\"2,25\",2\n");
    let (_, cov) = split_covariates(data, &["x"], true).expect("numbers");
    assert_eq!(cov.values[0], vec![0.0, 0.75]);
    assert_eq!(cov.decimals, vec![2]);
}
