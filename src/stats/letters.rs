//! Compact letter display by insert-and-absorb with the sweep step
//! (Piepho 2004, *J. Comput. Graph. Stat.* 13:456–466).
//!
//! Guarantee: two levels share a letter exactly when the procedure did not
//! declare them different. "a" goes to the column holding the highest mean.

/// Letters for each level (in the input order of `means`).
///
/// `different(i, j)` says whether levels i and j were declared different.
pub fn compact_letters(means: &[f64], different: impl Fn(usize, usize) -> bool) -> Vec<String> {
    let k = means.len();
    if k == 0 {
        return Vec::new();
    }
    let mut columns: Vec<Vec<bool>> = vec![vec![true; k]];
    for i in 0..k {
        for j in (i + 1)..k {
            if !different(i, j) {
                continue;
            }
            // Insert: split every column that holds both i and j.
            let mut next = Vec::with_capacity(columns.len() + 1);
            for col in columns {
                if col[i] && col[j] {
                    let mut without_i = col.clone();
                    without_i[i] = false;
                    let mut without_j = col;
                    without_j[j] = false;
                    next.push(without_i);
                    next.push(without_j);
                } else {
                    next.push(col);
                }
            }
            columns = absorb(next);
        }
    }
    sweep(&mut columns, &different);
    columns = absorb(columns);
    label(means, columns)
}

/// Drops empty columns, duplicates, and columns contained in another column.
fn absorb(columns: Vec<Vec<bool>>) -> Vec<Vec<bool>> {
    let subset = |a: &[bool], b: &[bool]| a.iter().zip(b).all(|(x, y)| !*x || *y);
    let mut kept: Vec<Vec<bool>> = Vec::with_capacity(columns.len());
    for (idx, col) in columns.iter().enumerate() {
        if !col.iter().any(|x| *x) {
            continue;
        }
        let redundant = columns.iter().enumerate().any(|(other_idx, other)| {
            other_idx != idx && subset(col, other) && (col != other || other_idx < idx)
        });
        if !redundant {
            kept.push(col.clone());
        }
    }
    kept
}

/// Piepho's sweep: remove a level from a column when each of its partners in
/// that column (all non-different from it, by construction) also shares
/// another column with it, and the level keeps at least one other letter.
fn sweep(columns: &mut [Vec<bool>], different: &impl Fn(usize, usize) -> bool) {
    let k = columns.first().map_or(0, Vec::len);
    for c in 0..columns.len() {
        for i in 0..k {
            if !columns[c][i] {
                continue;
            }
            let elsewhere =
                |j: usize| (0..columns.len()).any(|o| o != c && columns[o][i] && columns[o][j]);
            let has_other_column = (0..columns.len()).any(|o| o != c && columns[o][i]);
            let partners_covered = (0..k).filter(|&j| j != i && columns[c][j]).all(|j| {
                debug_assert!(!different(i.min(j), i.max(j)));
                elsewhere(j)
            });
            if has_other_column && partners_covered {
                columns[c][i] = false;
            }
        }
    }
}

/// Orders columns by the highest-ranked mean they contain and names them.
fn label(means: &[f64], mut columns: Vec<Vec<bool>>) -> Vec<String> {
    let k = means.len();
    // Rank levels by mean, descending; ties keep input order.
    let mut order: Vec<usize> = (0..k).collect();
    order.sort_by(|&a, &b| means[b].total_cmp(&means[a]).then(a.cmp(&b)));
    let key = |col: &Vec<bool>| order.iter().map(|&lvl| !col[lvl]).collect::<Vec<bool>>();
    columns.sort_by_key(key);
    let mut letters = vec![String::new(); k];
    for (c, col) in columns.iter().enumerate() {
        let name = letter_name(c);
        for (lvl, member) in col.iter().enumerate() {
            if *member {
                letters[lvl].push_str(&name);
            }
        }
    }
    letters
}

/// a–z, then A–Z, then two-letter codes aa, ab, …
pub fn letter_name(index: usize) -> String {
    const LOWER: &[u8] = b"abcdefghijklmnopqrstuvwxyz";
    const UPPER: &[u8] = b"ABCDEFGHIJKLMNOPQRSTUVWXYZ";
    match index {
        0..=25 => (LOWER[index] as char).to_string(),
        26..=51 => (UPPER[index - 26] as char).to_string(),
        _ => {
            let i = index - 52;
            format!("{}{}", LOWER[(i / 26) % 26] as char, LOWER[i % 26] as char)
        }
    }
}

/// Number of distinct letter columns used.
pub fn letter_count(letters: &[String]) -> usize {
    let mut seen: Vec<char> = letters.iter().flat_map(|s| s.chars()).collect();
    seen.sort_unstable();
    seen.dedup();
    seen.len()
}

#[cfg(test)]
#[path = "letters_tests.rs"]
mod tests;
