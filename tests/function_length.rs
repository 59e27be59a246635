//! No function of the crate (tests aside) is longer than 120 lines: a longer
//! one holds several steps that deserve names of their own. Read from the
//! source, with comments and string literals blanked so that a brace in a
//! message or a doc example does not count.

use std::path::{Path, PathBuf};

/// The most lines a function may span, from its `fn` line to its closing brace.
const MAX_LINES: usize = 120;

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

fn is_test_file(path: &Path) -> bool {
    let name = path.file_name().and_then(|n| n.to_str()).unwrap_or("");
    name == "tests.rs" || name.ends_with("_tests.rs")
}

/// The text with comments and the insides of string and char literals
/// replaced by spaces, line breaks kept, so that line numbers still hold.
fn blank_non_code(text: &str) -> String {
    let chars: Vec<char> = text.chars().collect();
    let mut out = String::with_capacity(text.len());
    let mut i = 0;
    let keep_lines = |c: char| if c == '\n' { '\n' } else { ' ' };
    while i < chars.len() {
        let c = chars[i];
        let next = chars.get(i + 1).copied();
        if c == '/' && next == Some('/') {
            while i < chars.len() && chars[i] != '\n' {
                out.push(' ');
                i += 1;
            }
        } else if c == '/' && next == Some('*') {
            while i < chars.len() && !(chars[i] == '*' && chars.get(i + 1) == Some(&'/')) {
                out.push(keep_lines(chars[i]));
                i += 1;
            }
            out.push_str("  ");
            i += 2;
        } else if c == 'r' && (next == Some('"') || next == Some('#')) && !prev_is_ident(&chars, i)
        {
            // A raw string r"…" or r#"…"#.
            let mut hashes = 0;
            let mut j = i + 1;
            while chars.get(j) == Some(&'#') {
                hashes += 1;
                j += 1;
            }
            if chars.get(j) != Some(&'"') {
                out.push(c);
                i += 1;
                continue;
            }
            let closing: String = std::iter::once('"')
                .chain(std::iter::repeat_n('#', hashes))
                .collect();
            let rest: String = chars[j + 1..].iter().collect();
            let end = rest
                .find(&closing)
                .map_or(rest.len(), |e| e + closing.len());
            for ch in chars[i..j + 1]
                .iter()
                .chain(rest[..end].chars().collect::<Vec<_>>().iter())
            {
                out.push(keep_lines(*ch));
            }
            i = j + 1 + rest[..end].chars().count();
        } else if c == '"' {
            out.push(' ');
            i += 1;
            while i < chars.len() && chars[i] != '"' {
                if chars[i] == '\\' {
                    out.push(' ');
                    i += 1;
                }
                if i < chars.len() {
                    out.push(keep_lines(chars[i]));
                    i += 1;
                }
            }
            out.push(' ');
            i += 1;
        } else if c == '\'' && is_char_literal(&chars, i) {
            out.push(' ');
            i += 1;
            while i < chars.len() && chars[i] != '\'' {
                if chars[i] == '\\' {
                    out.push(' ');
                    i += 1;
                }
                out.push(' ');
                i += 1;
            }
            out.push(' ');
            i += 1;
        } else {
            out.push(c);
            i += 1;
        }
    }
    out
}

fn prev_is_ident(chars: &[char], i: usize) -> bool {
    i > 0 && (chars[i - 1].is_alphanumeric() || chars[i - 1] == '_')
}

/// `'x'`, `'\n'`, `'\u{..}'` are char literals; `'a` in `&'a str` is a lifetime.
fn is_char_literal(chars: &[char], i: usize) -> bool {
    match chars.get(i + 1) {
        Some('\\') => true,
        Some(_) => chars.get(i + 2) == Some(&'\''),
        None => false,
    }
}

/// (name, first line, length in lines) of every function with a body,
/// leaving out `#[cfg(test)]` modules written inline.
fn functions(code: &str) -> Vec<(String, usize, usize)> {
    let lines: Vec<&str> = code.lines().collect();
    let mut found = Vec::new();
    let mut skip_until_depth: Option<i64> = None;
    let mut depth: i64 = 0;
    let mut open: Vec<(String, usize, i64)> = Vec::new();
    let mut pending_test_module = false;
    let mut pending_fn: Option<(String, usize)> = None;
    for (number, line) in lines.iter().enumerate() {
        let trimmed = line.trim_start();
        if trimmed.starts_with("#[cfg(test)]") {
            pending_test_module = true;
        }
        if let Some(at) = find_fn(trimmed) {
            pending_fn = Some((at, number + 1));
        }
        for c in line.chars() {
            match c {
                '{' => {
                    if pending_test_module && trimmed.contains("mod ") && skip_until_depth.is_none()
                    {
                        skip_until_depth = Some(depth);
                        pending_test_module = false;
                    }
                    if let Some((name, start)) = pending_fn.take() {
                        open.push((name, start, depth));
                    }
                    depth += 1;
                }
                '}' => {
                    depth -= 1;
                    if open.last().is_some_and(|(_, _, d)| *d == depth) {
                        let (name, start, _) = open.pop().expect("an open function");
                        if skip_until_depth.is_none() {
                            found.push((name, start, number + 2 - start));
                        }
                    }
                    if skip_until_depth == Some(depth) {
                        skip_until_depth = None;
                    }
                }
                // A declaration without a body (a trait method).
                ';' if pending_fn.is_some() && !line.contains('{') => pending_fn = None,
                _ => {}
            }
        }
        if trimmed.starts_with("mod ") && trimmed.ends_with(';') {
            pending_test_module = false;
        }
    }
    found
}

/// The name in a line that declares a function (`pub(crate) async fn name`).
fn find_fn(line: &str) -> Option<String> {
    let words: Vec<&str> = line.split_whitespace().collect();
    let at = words.iter().position(|w| *w == "fn")?;
    let before_ok = words[..at].iter().all(|w| {
        w.starts_with("pub") || matches!(*w, "const" | "async" | "unsafe" | "extern" | "default")
    });
    if !before_ok {
        return None;
    }
    let name: String = words
        .get(at + 1)?
        .chars()
        .take_while(|c| c.is_alphanumeric() || *c == '_')
        .collect();
    (!name.is_empty()).then_some(name)
}

#[test]
fn no_function_is_longer_than_the_limit() {
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let mut files = Vec::new();
    rust_files(&src, &mut files);
    files.sort();
    let mut long = Vec::new();
    for file in files.iter().filter(|f| !is_test_file(f)) {
        let code = blank_non_code(&std::fs::read_to_string(file).expect("readable source"));
        for (name, line, length) in functions(&code) {
            if length > MAX_LINES {
                let shown = file.strip_prefix(&src).unwrap_or(file).display();
                long.push(format!("src/{shown}:{line} {name}: {length} lines"));
            }
        }
    }
    assert!(
        long.is_empty(),
        "functions over {MAX_LINES} lines (split them into named steps):\n{}",
        long.join("\n")
    );
}

/// The reader itself, on a function of known length with braces in strings,
/// comments and char literals, a nested function and a test module.
#[test]
fn the_reader_measures_functions() {
    let text = "fn short() {\n    let s = \"}}}\"; // }\n    let c = '}';\n}\n\
                pub(crate) fn outer<'a>(x: &'a str) {\n    fn inner() {\n    }\n    let _ = x;\n}\n\
                #[cfg(test)]\nmod tests {\n    fn ignored() {\n    }\n}\n";
    let found = functions(&blank_non_code(text));
    assert_eq!(
        found,
        vec![
            ("short".to_string(), 1, 4),
            ("inner".to_string(), 6, 2),
            ("outer".to_string(), 5, 5),
        ]
    );
}
