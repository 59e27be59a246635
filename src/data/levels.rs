//! Checks on a factor's levels as found in the data: spellings that differ
//! only in case or spacing, and numbers that look like measurements rather
//! than treatment levels. Both are warnings: the analysis runs as the data
//! say, and the report says what looks wrong.

use super::decimal::parse_number;
use std::collections::BTreeMap;

/// A numeric factor with at least this many levels…
const MANY_LEVELS: usize = 6;
/// …and fewer than this many observations per level on average looks
/// like a measured covariate read as a factor.
const FEW_PER_LEVEL: usize = 3;

/// Warnings for the levels of `factor`: each level's name and its first
/// data line (0 when unknown), in order of appearance; `rows` is the number
/// of observations analysed.
pub fn level_warnings(factor: &str, levels: &[(&str, usize)], rows: usize) -> Vec<String> {
    let mut warnings = spelling_warnings(factor, levels);
    warnings.extend(numeric_warning(factor, levels, rows));
    warnings
}

fn where_first(line: usize) -> String {
    if line > 0 {
        format!(" (first on line {line})")
    } else {
        String::new()
    }
}

/// Levels equal after lowercasing and collapsing runs of white space.
fn spelling_warnings(factor: &str, levels: &[(&str, usize)]) -> Vec<String> {
    let mut by_key: BTreeMap<String, Vec<(&str, usize)>> = BTreeMap::new();
    let mut order: Vec<String> = Vec::new();
    for &(name, line) in levels {
        let key = name
            .split_whitespace()
            .collect::<Vec<_>>()
            .join(" ")
            .to_lowercase();
        let group = by_key.entry(key.clone()).or_default();
        if group.is_empty() {
            order.push(key);
        }
        group.push((name, line));
    }
    order
        .iter()
        .filter_map(|key| {
            let group = by_key.get(key)?;
            (group.len() > 1).then(|| {
                let spellings = group
                    .iter()
                    .map(|(n, l)| format!("`{n}`{}", where_first(*l)))
                    .collect::<Vec<_>>()
                    .join(" and ");
                format!(
                    "levels {spellings} of `{factor}` differ only in case or spacing and are analysed as different levels; if they name the same treatment, write them one way in the data file"
                )
            })
        })
        .collect()
}

/// A factor whose levels are all numbers, with many levels for the rows.
fn numeric_warning(factor: &str, levels: &[(&str, usize)], rows: usize) -> Option<String> {
    let k = levels.len();
    let numeric = levels.iter().all(|(n, _)| parse_number(n).is_some());
    (numeric && k >= MANY_LEVELS && rows < FEW_PER_LEVEL * k).then(|| {
        format!(
            "`{factor}` is used as a factor, but its values are all numbers and it has {k} distinct levels for {rows} observations: if it is a measurement (such as an initial weight) rather than a set of treatment levels, this analysis is not the one intended. If the numbers are treatment levels, list them with `levels:` to confirm; if it is a measured covariate, declare it with `covariate: {factor}` and write the model without it as a factor (`response ~ treatment`)"
        )
    })
}

#[cfg(test)]
mod tests {
    use super::level_warnings;

    #[test]
    fn case_and_spacing_variants_are_named_with_their_lines() {
        let w = level_warnings(
            "group",
            &[
                ("Control", 2),
                ("dose A", 3),
                ("control", 9),
                ("Dose  a", 11),
            ],
            12,
        );
        assert_eq!(w.len(), 2, "{w:?}");
        assert!(w[0].contains("`Control` (first on line 2) and `control` (first on line 9)"));
        assert!(w[1].contains("`dose A` (first on line 3) and `Dose  a` (first on line 11)"));
    }

    #[test]
    fn a_numeric_factor_with_many_levels_for_the_rows_is_flagged() {
        let weights: Vec<String> = (0..29).map(|i| format!("{}.{}", 20 + i, i % 10)).collect();
        let levels: Vec<(&str, usize)> = weights.iter().map(|w| (w.as_str(), 2)).collect();
        let w = level_warnings("initial_weight", &levels, 30);
        assert_eq!(w.len(), 1);
        assert!(w[0].contains("`initial_weight`") && w[0].contains("29 distinct levels for 30"));
        // Four doses with five plots each: a treatment factor, no warning.
        let doses = [("0", 2), ("0.5", 3), ("1", 4), ("2", 5)];
        assert!(level_warnings("dose", &doses, 20).is_empty());
        // Text levels never count as numeric.
        let names: Vec<String> = (0..10).map(|i| format!("plot{i}")).collect();
        let levels: Vec<(&str, usize)> = names.iter().map(|n| (n.as_str(), 1)).collect();
        assert!(level_warnings("plot", &levels, 10).is_empty());
    }
}
