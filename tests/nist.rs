//! NIST StRD one-way ANOVA: all eleven datasets, log relative error (LRE) of
//! every certified SS, MS and F.
//!
//! Source: NIST/ITL Statistical Reference Datasets, Analysis of Variance
//! (SiRstv, SmLs01-09, AtmWtAg); data and certified values copied into
//! tests/data/nist/ (see SOURCE.md there). LRE = −log10(|x − c| / |c|)
//! (McCullough 1998, Am. Stat. 52:358-366), capped at 15 when exact.

use serde_json::Value;
use sheaf::data::{CsvFormat, Table, factor_response};
use sheaf::stats::oneway::{GroupSummary, one_way, total_sum_of_squares};

fn lre(got: f64, certified: f64) -> f64 {
    if got == certified {
        return 15.0;
    }
    let rel = ((got - certified) / certified).abs();
    (-rel.log10()).min(15.0)
}

#[test]
fn every_certified_value_has_lre_of_at_least_nine() {
    let certified: Value = serde_json::from_str(include_str!("data/nist/certified.json"))
        .expect("certified.json parses");
    let datasets = certified["datasets"].as_object().expect("datasets");
    let mut names: Vec<&String> = datasets.keys().collect();
    names.sort();
    assert_eq!(names.len(), 11, "all eleven StRD ANOVA datasets");
    println!(
        "{:<8} {:>7} {:>7} {:>7} {:>7} {:>7} {:>7}",
        "dataset", "SSB", "SSW", "MSB", "MSW", "F", "R2"
    );
    let mut worst = f64::INFINITY;
    for name in names {
        let entry = &datasets[name];
        let c = |key: &str| -> f64 {
            entry["certified"][key]
                .as_str()
                .expect("digit string")
                .parse()
                .expect("number")
        };
        let path = format!(
            "{}/tests/data/nist/{}",
            env!("CARGO_MANIFEST_DIR"),
            entry["csv"].as_str().expect("csv")
        );
        let bytes = std::fs::read(&path).expect("dataset file");
        let format = CsvFormat::default();
        let table = Table::parse(&bytes, &format).expect("table");
        let data = factor_response(&table, "value", "group", &format).expect("columns");
        let groups: Vec<GroupSummary> = data
            .levels
            .iter()
            .map(|l| GroupSummary::from_values(&l.offsets))
            .collect();
        let sst = total_sum_of_squares(data.levels.iter().map(|l| l.offsets.as_slice()));
        let t = one_way(&groups, 0.05, Some(sst)).expect("anova");
        assert_eq!(t.df_between as f64, c("between_df"), "{name}");
        assert_eq!(t.df_within as f64, c("within_df"), "{name}");
        let row = [
            lre(t.ss_between, c("between_ss")),
            lre(t.ss_within, c("within_ss")),
            lre(t.ms_between, c("between_ms")),
            lre(t.ms_within, c("within_ms")),
            lre(t.f, c("f_statistic")),
            lre(t.r_squared, c("r_squared")),
        ];
        println!(
            "{:<8} {:>7.1} {:>7.1} {:>7.1} {:>7.1} {:>7.1} {:>7.1}",
            name, row[0], row[1], row[2], row[3], row[4], row[5]
        );
        assert!(t.warnings.is_empty(), "{name}: {:?}", t.warnings);
        for v in &row[..5] {
            worst = worst.min(*v);
            assert!(*v >= 9.0, "{name}: LRE {v:.1} below 9 ({row:?})");
        }
    }
    println!("lowest LRE over SS, MS and F: {worst:.1}");
}
