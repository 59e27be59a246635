//! The layering of the crate, read from its own source: every module path a
//! file names (`crate::x::…`, `use crate::{x, …}`, `sheaf::x` in the binary)
//! is an import of the top-level module `x`. The rules are those of
//! DEVELOPERS.md: support code and `stats` at the bottom, then the document,
//! the data, the outcome, the engines, the projections and the writers, with
//! the driver and the commands on top. A back edge fails here.

use std::collections::{BTreeMap, BTreeSet};
use std::path::{Path, PathBuf};

/// Every module's layer: a module may import only modules of lower layers
/// (or of its own layer when the two do not import each other).
const LAYERS: &[(&str, u32)] = &[
    // Support code below everything.
    ("diag", 0),
    ("source", 0),
    ("world", 0),
    ("provenance", 0),
    ("format", 0),
    ("escape", 0),
    ("stats", 0),
    ("cache", 1),
    // The document and its data.
    ("data", 2),
    ("doc", 3),
    // The plan: every check that needs no data, before any data are read.
    ("plan", 4),
    // The SQL that computes a block's cell summaries on another engine.
    ("query", 4),
    // The outcome hub, then the engines that produce it.
    ("outcome", 5),
    ("analysis", 6),
    // Projections of the outcome.
    ("figure", 7),
    ("results", 7),
    ("render", 8),
    // The driver and the commands.
    ("compile", 9),
    ("output", 10),
    ("fuzzing", 10),
    ("scaffold", 10),
    ("verify", 11),
    ("validate", 11),
    ("watch", 12),
    ("main", 13),
];

/// Modules that may import nothing else of the crate.
const SELF_CONTAINED: &[&str] = &["stats", "diag", "source", "format", "escape", "provenance"];

/// Forbidden imports named by the design, beyond the layer order: (importer,
/// imported, why).
const FORBIDDEN: &[(&str, &str, &str)] = &[
    ("doc", "render", "the document stage renders nothing"),
    ("doc", "figure", "the document stage draws nothing"),
    ("doc", "results", "the document stage writes no results"),
    (
        "doc",
        "analysis",
        "the document is read before any analysis",
    ),
    ("plan", "render", "the plan stage renders nothing"),
    ("plan", "figure", "the plan stage draws nothing"),
    ("plan", "results", "the plan stage writes no results"),
    ("plan", "output", "the plan stage writes nothing"),
    ("plan", "analysis", "the plan is made before any analysis"),
    ("analysis", "render", "engines produce outcomes, not views"),
    (
        "analysis",
        "figure",
        "engines produce outcomes, not figures",
    ),
    (
        "analysis",
        "results",
        "engines produce outcomes, not the results file",
    ),
    ("analysis", "output", "engines write nothing"),
    ("outcome", "analysis", "the outcome names no engine"),
    (
        "render",
        "analysis",
        "writers read the outcome, not an engine",
    ),
    (
        "results",
        "analysis",
        "the results file reads the outcome, not an engine",
    ),
    (
        "figure",
        "analysis",
        "figures read the outcome, not an engine",
    ),
];

fn rust_files(dir: &Path, out: &mut Vec<PathBuf>) {
    for entry in std::fs::read_dir(dir).expect("source folder") {
        let path = entry.expect("entry").path();
        if path.is_dir() {
            rust_files(&path, out);
        } else if path.extension().is_some_and(|e| e == "rs") {
            out.push(path);
        }
    }
}

/// The top-level module a source file belongs to (`src/render/view.rs` →
/// `render`, `src/main.rs` → `main`); `None` for the crate root and tests.
fn module_of(src: &Path, file: &Path) -> Option<String> {
    let relative = file.strip_prefix(src).ok()?;
    let name = relative.file_name()?.to_str()?;
    if name == "tests.rs" || name.ends_with("_tests.rs") || name == "lib.rs" {
        return None;
    }
    let first = relative.components().next()?.as_os_str().to_str()?;
    Some(first.trim_end_matches(".rs").to_string())
}

/// The code of a file without comments and string literals, so that a path
/// in a doc comment or a message is not taken for an import.
fn code_only(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    let mut chars = text.chars().peekable();
    while let Some(c) = chars.next() {
        match c {
            '/' if chars.peek() == Some(&'/') => {
                for n in chars.by_ref() {
                    if n == '\n' {
                        out.push('\n');
                        break;
                    }
                }
            }
            '"' => {
                let mut escaped = false;
                for n in chars.by_ref() {
                    match n {
                        '\\' if !escaped => escaped = true,
                        '"' if !escaped => break,
                        _ => escaped = false,
                    }
                }
                out.push_str("\"\"");
            }
            // A char literal such as '"' must not open a string.
            '\'' => {
                let rest: String = chars.clone().take(3).collect();
                if rest.starts_with("\\") || rest.chars().nth(1) == Some('\'') {
                    for n in chars.by_ref() {
                        if n == '\'' && !out.ends_with('\\') {
                            break;
                        }
                        out.push(' ');
                    }
                } else {
                    out.push(c);
                }
            }
            _ => out.push(c),
        }
    }
    out
}

fn identifier_at(text: &str) -> String {
    text.chars()
        .take_while(|c| c.is_ascii_alphanumeric() || *c == '_')
        .collect()
}

/// The top-level modules a file's code names through `root::`.
fn imports(code: &str, root: &str) -> BTreeSet<String> {
    let mut found = BTreeSet::new();
    let pattern = format!("{root}::");
    let mut rest = code;
    while let Some(at) = rest.find(&pattern) {
        let before = rest[..at].chars().next_back();
        rest = &rest[at + pattern.len()..];
        if before.is_some_and(|c| c.is_ascii_alphanumeric() || c == '_') {
            continue;
        }
        if let Some(group) = rest.strip_prefix('{') {
            // `use crate::{a::b, c}`: the first name of each item at depth one.
            let mut depth = 0;
            let mut item_start = true;
            for (i, c) in group.char_indices() {
                match c {
                    '{' => depth += 1,
                    '}' if depth == 0 => break,
                    '}' => depth -= 1,
                    ',' if depth == 0 => item_start = true,
                    c if item_start && (c.is_ascii_alphabetic() || c == '_') => {
                        found.insert(identifier_at(&group[i..]));
                        item_start = false;
                    }
                    _ => {}
                }
            }
        } else {
            found.insert(identifier_at(rest));
        }
    }
    found
}

/// module → the modules it imports, over every non-test file of `src`.
fn import_graph() -> BTreeMap<String, BTreeSet<String>> {
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let mut files = Vec::new();
    rust_files(&src, &mut files);
    let known: BTreeSet<&str> = LAYERS.iter().map(|(m, _)| *m).collect();
    let mut graph: BTreeMap<String, BTreeSet<String>> = BTreeMap::new();
    for file in files {
        let Some(module) = module_of(&src, &file) else {
            continue;
        };
        assert!(
            known.contains(module.as_str()),
            "{}: module `{module}` has no layer; add it to LAYERS in tests/architecture.rs",
            file.display()
        );
        let code = code_only(&std::fs::read_to_string(&file).expect("readable source"));
        let root = if module == "main" { "sheaf" } else { "crate" };
        let edges = graph.entry(module.clone()).or_default();
        for target in imports(&code, root) {
            if target != module && known.contains(target.as_str()) {
                edges.insert(target);
            }
        }
    }
    graph
}

fn layer(module: &str) -> u32 {
    LAYERS
        .iter()
        .find(|(m, _)| *m == module)
        .map(|(_, l)| *l)
        .expect("every module has a layer")
}

#[test]
fn every_import_points_down() {
    let graph = import_graph();
    let mut back_edges = Vec::new();
    for (from, targets) in &graph {
        for to in targets {
            if layer(to) > layer(from) {
                back_edges.push(format!(
                    "{from} (layer {}) imports {to} (layer {})",
                    layer(from),
                    layer(to)
                ));
            }
        }
    }
    assert!(
        back_edges.is_empty(),
        "imports that point up:\n{}",
        back_edges.join("\n")
    );
}

#[test]
fn no_module_cycle() {
    let graph = import_graph();
    // Depth-first search with colours: a grey node reached again closes a cycle.
    fn visit<'a>(
        node: &'a str,
        graph: &'a BTreeMap<String, BTreeSet<String>>,
        state: &mut BTreeMap<&'a str, u8>,
        path: &mut Vec<&'a str>,
    ) -> Option<Vec<String>> {
        match state.get(node) {
            Some(1) => {
                let start = path.iter().position(|n| *n == node).unwrap_or(0);
                let mut cycle: Vec<String> = path[start..].iter().map(|s| s.to_string()).collect();
                cycle.push(node.to_string());
                return Some(cycle);
            }
            Some(2) => return None,
            _ => {}
        }
        state.insert(node, 1);
        path.push(node);
        for next in graph.get(node).into_iter().flatten() {
            if let Some(cycle) = visit(next, graph, state, path) {
                return Some(cycle);
            }
        }
        path.pop();
        state.insert(node, 2);
        None
    }
    let mut state = BTreeMap::new();
    for node in graph.keys() {
        let mut path = Vec::new();
        if let Some(cycle) = visit(node, &graph, &mut state, &mut path) {
            panic!("import cycle: {}", cycle.join(" → "));
        }
    }
}

#[test]
fn self_contained_modules_import_nothing_of_the_crate() {
    let graph = import_graph();
    for module in SELF_CONTAINED {
        let targets = graph.get(*module).cloned().unwrap_or_default();
        assert!(
            targets.is_empty(),
            "{module} must import nothing else of the crate, but imports {targets:?}"
        );
    }
}

#[test]
fn forbidden_imports_are_absent() {
    let graph = import_graph();
    let broken: Vec<String> = FORBIDDEN
        .iter()
        .filter(|(from, to, _)| graph.get(*from).is_some_and(|t| t.contains(*to)))
        .map(|(from, to, why)| format!("{from} imports {to}: {why}"))
        .collect();
    assert!(broken.is_empty(), "{}", broken.join("\n"));
}

/// The reader itself: a back edge written in each form it must see.
#[test]
fn the_reader_sees_every_form_of_import() {
    let code = code_only(
        "use crate::{alpha::x, beta};\nuse crate::gamma::{y, z};\nfn f() { crate::delta::g(); }\n\
         // crate::comment::no\nlet s = \"crate::string::no\";\nlet c = '\"'; crate::epsilon::h();",
    );
    let found = imports(&code, "crate");
    let expected: BTreeSet<String> = ["alpha", "beta", "gamma", "delta", "epsilon"]
        .iter()
        .map(|s| s.to_string())
        .collect();
    assert_eq!(found, expected);
}

/// Projections and writers read the one outcome type, never an engine's own
/// result: a third engine (mixed models) then needs no new projection.
#[test]
fn projections_read_only_the_outcome() {
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let mut files = Vec::new();
    for place in ["render", "figure"] {
        rust_files(&src.join(place), &mut files);
    }
    files.push(src.join("results.rs"));
    let mut found = Vec::new();
    for file in files {
        if module_of(&src, &file).is_none() {
            continue;
        }
        let code = code_only(&std::fs::read_to_string(&file).expect("readable source"));
        for name in ["AnovaResult", "FactorialResult"] {
            if code.contains(name) {
                found.push(format!("{} names {name}", file.display()));
            }
        }
    }
    assert!(found.is_empty(), "{}", found.join("\n"));
}
