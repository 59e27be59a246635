//! Reading an HTML report's table cells and following their `data-key`s
//! into the results file (the rule is README's, "Outputs"). Shared by
//! tests/data_keys.rs and tests/docx.rs, which include it by path.

use serde_json::Value;

/// Numbers the tables print that the results file does not hold yet (each
/// computed from fields it does hold): Dunn's z (`diff` over `se`), a level's
/// mean rank, and a power curve point's total N (`n_per_group` times
/// `groups`). A key ending in one of these must still lead, through its
/// other segments, to an existing record.
const NOT_YET_IN_RESULTS: [&str; 3] = ["statistic", "mean_rank", "n_total"];

/// A body cell of a table: whether its column is numeric, its key and text.
#[derive(Debug)]
pub struct BodyCell {
    pub numeric: bool,
    pub key: Option<String>,
    pub text: String,
}

pub fn unescape(s: &str) -> String {
    s.replace("&lt;", "<")
        .replace("&gt;", ">")
        .replace("&quot;", "\"")
        .replace("&#x27;", "'")
        .replace("&amp;", "&")
}

/// The cells of every table body (`<tbody>` … `</tbody>`), header cells of a
/// row included.
pub fn body_cells(html: &str) -> Vec<BodyCell> {
    let mut cells = Vec::new();
    for body in html.split("<tbody>").skip(1) {
        let body = body.split("</tbody>").next().unwrap_or("");
        let mut rest = body;
        while let Some(start) = rest.find("<t") {
            rest = &rest[start..];
            let is_cell = rest.starts_with("<td") || rest.starts_with("<th");
            let Some(close) = rest.find('>') else { break };
            if !is_cell {
                rest = &rest[close + 1..];
                continue;
            }
            let tag = &rest[..close];
            let end = rest[close..].find("</t").map_or(rest.len(), |e| close + e);
            let text = unescape(&rest[close + 1..end]);
            let key = tag
                .split("data-key=\"")
                .nth(1)
                .and_then(|k| k.split('"').next())
                .map(unescape);
            cells.push(BodyCell {
                numeric: tag.contains("class=\"num\""),
                key,
                text,
            });
            rest = &rest[end..];
        }
    }
    cells
}

/// The name an array element is found by in a key.
fn element_name(element: &Value, factors: &[String]) -> Option<String> {
    if let Some(levels) = element.get("levels").and_then(Value::as_object) {
        let named: Vec<&str> = factors
            .iter()
            .filter_map(|f| levels.get(f).and_then(Value::as_str))
            .collect();
        return Some(named.join(" × "));
    }
    if let Some(term) = element.get("term").and_then(Value::as_str) {
        return Some(match element.get("within").and_then(Value::as_str) {
            Some(within) => format!("{term}@{within}"),
            None => term.to_string(),
        });
    }
    ["level", "id", "name", "kind"]
        .iter()
        .find_map(|f| element.get(*f).and_then(Value::as_str).map(str::to_string))
}

/// The element of `array` the start of `rest` names, and what follows it.
fn select<'v, 'k>(
    array: &'v [Value],
    rest: &'k str,
    factors: &[String],
) -> Option<(&'v Value, &'k str)> {
    let (head, tail) = rest.split_once('.').unwrap_or((rest, ""));
    // The longest name that the key continues with (names may hold dots,
    // and may start with digits: `0.6cwt`); else an index (pairs).
    let named = array
        .iter()
        .filter_map(|e| {
            let name = element_name(e, factors)?;
            let after = rest.strip_prefix(name.as_str())?;
            let after = if after.is_empty() {
                Some(after)
            } else {
                after.strip_prefix('.')
            }?;
            Some((name.len(), e, after))
        })
        .max_by_key(|(len, _, _)| *len)
        .map(|(_, e, after)| (e, after));
    named.or_else(|| {
        let i = head.parse::<usize>().ok()?;
        array.get(i).map(|v| (v, tail))
    })
}

/// The values the last segment names in `object`: a field, or a pair
/// printed together; `None` when it names neither.
fn field_values(object: &Value, field: &str) -> Option<Vec<Value>> {
    if let Some(v) = object.get(field) {
        return Some(vec![v.clone()]);
    }
    let pairs: &[(&str, &str)] = match field {
        "ci" => &[("ci_lower", "ci_upper"), ("lower", "upper")],
        "iqr" => &[("q1", "q3")],
        "df" => &[("df1", "df2")],
        _ => &[],
    };
    pairs
        .iter()
        .find_map(|(a, b)| Some(vec![object.get(*a)?.clone(), object.get(*b)?.clone()]))
}

/// Follows `key` through the results file to the values it names (none
/// for a number the file does not hold yet); `Err` says where it stopped.
pub fn resolve(results: &Value, key: &str) -> Result<Vec<Value>, String> {
    if let Some(rest) = key.strip_prefix("$.") {
        return walk(results, rest, &[]);
    }
    let blocks = results["blocks"].as_array().ok_or("no blocks")?;
    let (block, rest) = select(blocks, key, &[]).ok_or("no block with that id")?;
    let factors: Vec<String> = block["factors"]
        .as_array()
        .map(|f| {
            f.iter()
                .filter_map(|x| x.as_str().map(str::to_string))
                .collect()
        })
        .unwrap_or_default();
    walk(block, rest, &factors)
}

/// Follows the rest of a key from `here`.
fn walk(mut here: &Value, mut rest: &str, factors: &[String]) -> Result<Vec<Value>, String> {
    loop {
        match here {
            Value::Array(items) => {
                let (next, after) =
                    select(items, rest, factors).ok_or_else(|| format!("no element `{rest}`"))?;
                here = next;
                rest = after;
            }
            Value::Object(_) => {
                let (field, after) = rest.split_once('.').unwrap_or((rest, ""));
                if after.is_empty() {
                    return match field_values(here, field) {
                        Some(values) => Ok(values),
                        None if NOT_YET_IN_RESULTS.contains(&field) => Ok(Vec::new()),
                        None => Err(format!("no field `{field}`")),
                    };
                }
                here = here
                    .get(field)
                    .ok_or_else(|| format!("no field `{field}`"))?;
                rest = after;
            }
            _ => return Err(format!("`{rest}` goes below a plain value")),
        }
        if rest.is_empty() {
            return Ok(vec![here.clone()]);
        }
    }
}
