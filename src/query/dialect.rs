//! The SQL spellings sheaf's cell queries use: the part of SQL that DuckDB,
//! Apache DataFusion and Apache Spark SQL read alike, and the one clause
//! (reading a Parquet path) where they differ.

use crate::diag::Diagnostic;

/// An engine, named only where the FROM clause of a Parquet path needs it.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Engine {
    DuckDb,
    DataFusion,
    Spark,
}

impl Engine {
    pub const ALL: [Engine; 3] = [Engine::DuckDb, Engine::DataFusion, Engine::Spark];

    /// The engine's name on the command line and in a query's header.
    pub fn key(self) -> &'static str {
        match self {
            Engine::DuckDb => "duckdb",
            Engine::DataFusion => "datafusion",
            Engine::Spark => "spark",
        }
    }

    pub fn named(name: &str) -> Option<Engine> {
        Engine::ALL.into_iter().find(|e| e.key() == name)
    }
}

/// Where the query reads the raw rows.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum Source {
    /// A table or view the engine knows by name (`db.rows` allowed).
    Table(String),
    /// A Parquet file or folder, read by the named engine's own spelling.
    Parquet { path: String, engine: Engine },
}

impl Source {
    /// The FROM clause's table expression, aliased `t`: the only text of a
    /// query that depends on the engine.
    pub fn from_clause(&self) -> Result<String, Diagnostic> {
        match self {
            Source::Table(name) => Ok(format!("{} AS t", table_name(name)?)),
            Source::Parquet { path, engine } => {
                let path = literal(path, "the Parquet path")?;
                Ok(match engine {
                    // Both read a quoted path as a table.
                    Engine::DuckDb | Engine::DataFusion => format!("{path} AS t"),
                    // Spark names a file by its format, the path in backticks.
                    Engine::Spark => format!("parquet.`{}` AS t", &path[1..path.len() - 1]),
                })
            }
        }
    }

    /// The source as a query's header records it (`table=…`, `parquet=…`).
    pub fn header_text(&self) -> String {
        match self {
            Source::Table(name) => format!("table={name}"),
            Source::Parquet { path, engine } => format!("parquet={}:{path}", engine.key()),
        }
    }
}

/// A table name as written: letters, digits and `_`, dot-separated parts.
fn table_name(name: &str) -> Result<String, Diagnostic> {
    let part_ok = |p: &str| {
        p.chars()
            .next()
            .is_some_and(|c| c.is_ascii_alphabetic() || c == '_')
            && p.chars().all(|c| c.is_ascii_alphanumeric() || c == '_')
    };
    if name.split('.').all(part_ok) {
        Ok(name.to_string())
    } else {
        Err(Diagnostic::new(format!("`{name}` is not a plain table name"))
            .hint("give a name of letters, digits and `_` (with `.` between catalog, schema and table), or define a view under such a name"))
    }
}

/// An identifier in backticks, which all three engines read as a name.
pub fn identifier(name: &str) -> Result<String, Diagnostic> {
    if name.contains('`') || name.contains('\n') {
        return Err(Diagnostic::new(format!(
            "the column name `{name}` cannot be written in the query"
        ))
        .hint("rename the column without backticks or line breaks"));
    }
    Ok(format!("`{name}`"))
}

/// Text in single quotes. A quote or backslash inside is refused: the
/// engines escape them in different ways (a doubled quote, a backslash).
pub fn literal(text: &str, what: &str) -> Result<String, Diagnostic> {
    if text.contains(['\'', '\\', '\n']) {
        return Err(Diagnostic::new(format!(
            "{what} `{text}` holds a quote, backslash or line break, which the engines escape differently"
        ))
        .hint("choose a value without them"));
    }
    Ok(format!("'{text}'"))
}
