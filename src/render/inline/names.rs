//! The names a block's namespace holds, read from the namespace itself, for
//! the hint of an expression that names something the block does not have.

use minijinja::value::{Value, ValueKind};

/// How many keys of a map the hint spells out before it says how many more.
const KEYS_SHOWN: usize = 12;

/// One step of a path: `.name`, `["name"]` or `[0]`.
fn path_keys(rest: &str) -> Vec<Value> {
    let mut keys = Vec::new();
    let mut s = rest.trim_start();
    loop {
        if let Some(r) = s.strip_prefix('.') {
            let r = r.trim_start();
            let end = r
                .find(|c: char| !(c.is_ascii_alphanumeric() || c == '_'))
                .unwrap_or(r.len());
            if end == 0 {
                break;
            }
            keys.push(Value::from(&r[..end]));
            s = r[end..].trim_start();
        } else if let Some(r) = s.strip_prefix('[') {
            let Some(close) = r.find(']') else { break };
            let inner = r[..close].trim();
            let quoted = inner.len() >= 2
                && ((inner.starts_with('"') && inner.ends_with('"'))
                    || (inner.starts_with('\'') && inner.ends_with('\'')));
            if let Ok(i) = inner.parse::<i64>() {
                keys.push(Value::from(i));
            } else if quoted {
                keys.push(Value::from(&inner[1..inner.len() - 1]));
            } else {
                break;
            }
            s = r[close + 1..].trim_start();
        } else {
            break;
        }
    }
    keys
}

/// A map's keys or a list's length, as the next step of a name is written.
fn shape(v: &Value) -> Option<String> {
    match v.kind() {
        ValueKind::Map => {
            let keys: Vec<String> = v.try_iter().ok()?.map(|k| k.to_string()).collect();
            if keys.is_empty() {
                return Some(" (empty)".to_string());
            }
            let mut shown = keys[..keys.len().min(KEYS_SHOWN)].join("|");
            if keys.len() > KEYS_SHOWN {
                shown.push_str(&format!("| and {} more", keys.len() - KEYS_SHOWN));
            }
            Some(format!(".<{shown}>"))
        }
        ValueKind::Seq => match v.len() {
            Some(0) | None => Some(" (empty)".to_string()),
            Some(1) => Some("[0]".to_string()),
            Some(n) => Some(format!("[0 to {}]", n - 1)),
        },
        _ => None,
    }
}

/// The names `node` holds, each with the shape of what it holds:
/// `f`, `terms.<wool|tension>`, `pairs[0 to 2]`.
pub(super) fn names(node: &Value) -> Vec<String> {
    let Ok(keys) = node.try_iter() else {
        return Vec::new();
    };
    keys.map(|k| {
        let child = node.get_item(&k).unwrap_or_default();
        format!("{k}{}", shape(&child).unwrap_or_default())
    })
    .collect()
}

/// The hint for `source`, which names something under the block `head`:
/// the names at the deepest part of its path that exists.
pub(super) fn hint(block: &Value, head: &str, source: &str) -> String {
    let rest = source
        .find(head)
        .map_or("", |at| &source[at + head.len()..]);
    let mut node = block.clone();
    let mut shown = head.to_string();
    for key in path_keys(rest) {
        let next = node.get_item(&key).unwrap_or_default();
        if !matches!(next.kind(), ValueKind::Map | ValueKind::Seq) {
            break;
        }
        match key.as_str() {
            Some(k) if k.chars().all(|c| c.is_ascii_alphanumeric() || c == '_') => {
                shown.push_str(&format!(".{k}"));
            }
            Some(k) => shown.push_str(&format!("[\"{k}\"]")),
            None => shown.push_str(&format!("[{key}]")),
        }
        node = next;
    }
    match node.kind() {
        ValueKind::Seq => format!("`{shown}` is a list{}", shape(&node).unwrap_or_default()),
        _ => format!("`{shown}` has {}", names(&node).join(", ")),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn paths_read_dots_brackets_and_indices() {
        let keys = path_keys(r#".groups["peat moss"].mean | fixed(2)"#);
        let want: Vec<Value> = vec!["groups".into(), "peat moss".into(), "mean".into()];
        assert_eq!(keys, want);
        assert_eq!(
            path_keys(".pairs[1].p"),
            vec![Value::from("pairs"), Value::from(1), Value::from("p")]
        );
        assert!(path_keys(" + 1").is_empty());
    }
}
