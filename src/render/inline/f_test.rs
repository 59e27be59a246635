//! An F test in prose: `f`, `df1`, `df2`, `p` and `statement`
//! ("F(2, 27) = 4.85, p = 0.016"), wherever a block reports one.

use crate::format::f_statement;
use serde::Serialize;

#[derive(Serialize)]
pub(super) struct FTestContext {
    f: f64,
    df1: f64,
    df2: f64,
    p: f64,
    pub(super) statement: String,
}

impl FTestContext {
    pub(super) fn new(df1: f64, df2: f64, f: f64, p: f64) -> FTestContext {
        FTestContext {
            f,
            df1,
            df2,
            p,
            statement: f_statement(df1, df2, f, p),
        }
    }

    /// The same test, its statement led by the test's name (`Welch's`).
    pub(super) fn named(mut self, name: &str) -> FTestContext {
        self.statement = format!("{name} {}", self.statement);
        self
    }
}
