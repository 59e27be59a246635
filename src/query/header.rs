//! The line of a printed query that records how it was asked for, so that
//! a build can print the query again and tell whether the file is current.

use super::QueryOptions;
use super::dialect::{Engine, Source};

/// The marker that starts the recorded options.
const MARK: &str = "-- sheaf-query: ";

/// The options as one comment line; the source comes last because a path
/// may hold spaces.
pub fn options_line(o: &QueryOptions) -> String {
    format!(
        "{MARK}block={} scale={} origin={} {}",
        o.block,
        o.scale,
        o.origin.as_deref().unwrap_or("min"),
        o.source.header_text()
    )
}

/// The options recorded in a query's text; `None` when it has no such line
/// or the line does not read.
pub fn read_options(sql: &str) -> Option<QueryOptions> {
    // A file saved with other line endings or trailing spaces still reads.
    let line = sql.lines().find_map(|l| l.trim_end().strip_prefix(MARK))?;
    let mut rest = line;
    let mut field = |name: &str| -> Option<String> {
        let after = rest.strip_prefix(name)?.strip_prefix('=')?;
        let (value, tail) = after.split_once(' ').unwrap_or((after, ""));
        rest = tail;
        Some(value.to_string())
    };
    let block = field("block")?;
    let scale = field("scale")?.parse().ok()?;
    let origin = Some(field("origin")?).filter(|o| o != "min");
    let source = if let Some(name) = rest.strip_prefix("table=") {
        Source::Table(name.to_string())
    } else {
        let (engine, path) = rest.strip_prefix("parquet=")?.split_once(':')?;
        Source::Parquet {
            path: path.to_string(),
            engine: Engine::named(engine)?,
        }
    };
    Some(QueryOptions {
        block,
        source,
        scale,
        origin,
    })
}
