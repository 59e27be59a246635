//! A block's `where` conditions as SQL, keeping the rows sheaf keeps.

use super::dialect::{identifier, literal};
use crate::data::Filter;
use crate::data::decimal::parse_number;
use crate::diag::Diagnostic;

/// One condition on the source rows (alias `t`). sheaf compares numbers
/// when the value is a number and text otherwise; an empty cell then fails
/// `==` and `<`-style tests and passes `!=`, which NULL-aware SQL spells out.
pub fn condition(f: &Filter) -> Result<String, Diagnostic> {
    let column = format!("t.{}", identifier(&f.column)?);
    match parse_number(&f.value).map(|n| n.to_f64()) {
        Some(v) if v.is_finite() => {
            let test = format!("CAST({column} AS DOUBLE) {} {v:?}", sql_operator(&f.op));
            Ok(if f.op == "!=" {
                format!("({column} IS NULL OR {test})")
            } else {
                test
            })
        }
        _ => text_condition(f, &column),
    }
}

fn text_condition(f: &Filter, column: &str) -> Result<String, Diagnostic> {
    let value = literal(&f.value, "the `where` value")?;
    let cell = format!("COALESCE(TRIM(CAST({column} AS STRING)), '')");
    match f.op.as_str() {
        "==" | "!=" => Ok(format!("{cell} {} {value}", sql_operator(&f.op))),
        _ => Err(Diagnostic::new(format!(
            "`where: {} {} {}` orders text, which sheaf does not do",
            f.column, f.op, f.value
        ))
        .hint("compare text with `==` or `!=`, or numbers with <, <=, > and >=")),
    }
}

fn sql_operator(op: &str) -> &str {
    match op {
        "==" => "=",
        "!=" => "<>",
        other => other,
    }
}
