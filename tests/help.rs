//! The command-line help: every subcommand says what it does in one line and
//! points to the README's section on the document syntax; every positional
//! argument and option has a description; `--confine` is offered only where
//! it means something (commands that read a document's data).

use std::process::Command;

const SUBCOMMANDS: [&str; 5] = ["build", "verify", "watch", "new", "validate"];

fn help(args: &[&str]) -> String {
    let out = Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .args(args)
        .output()
        .expect("runs");
    assert!(out.status.success(), "{args:?}");
    String::from_utf8(out.stdout).expect("utf-8")
}

/// The entries of the "Arguments:" and "Options:" sections as (name,
/// description). An entry's description is on its line after two spaces or
/// more, or on the indented line below it (clap's long layout).
fn entries(text: &str) -> Vec<(String, String)> {
    let mut found = Vec::new();
    let mut in_list = false;
    let lines: Vec<&str> = text.lines().collect();
    for (i, line) in lines.iter().enumerate() {
        if line.trim().is_empty() {
            continue;
        }
        if !line.starts_with(' ') {
            in_list = matches!(*line, "Arguments:" | "Options:");
            continue;
        }
        let item = line.trim_start();
        let indent = line.len() - item.len();
        if !in_list || indent > 6 || !(item.starts_with('-') || item.starts_with('<')) {
            continue;
        }
        let (name, description) = match item.split_once("  ") {
            Some((name, rest)) => (name.trim(), rest.trim().to_string()),
            None => (
                item,
                lines
                    .get(i + 1)
                    .filter(|next| next.len() - next.trim_start().len() > indent + 2)
                    .map_or(String::new(), |next| next.trim().to_string()),
            ),
        };
        found.push((name.to_string(), description));
    }
    found
}

#[test]
fn every_argument_and_option_is_described() {
    for sub in SUBCOMMANDS {
        for flag in ["-h", "--help"] {
            let text = help(&[sub, flag]);
            let list = entries(&text);
            assert!(
                list.iter().any(|(n, _)| n.contains("--help")),
                "{sub} {flag}:\n{text}"
            );
            for (name, description) in &list {
                assert!(
                    description.chars().any(char::is_alphabetic),
                    "`sheaf {sub} {flag}`: {name} has no description:\n{text}"
                );
            }
        }
    }
    // The document and -o of build, verify and watch in particular.
    for sub in ["build", "verify", "watch"] {
        let names: Vec<String> = entries(&help(&[sub, "-h"]))
            .into_iter()
            .map(|e| e.0)
            .collect();
        assert!(names.iter().any(|n| n == "<DOCUMENT>"), "{sub}: {names:?}");
        assert!(
            names.iter().any(|n| n.starts_with("-o, --out")),
            "{sub}: {names:?}"
        );
    }
}

#[test]
fn each_subcommand_says_what_it_does_and_where_the_syntax_is() {
    for sub in SUBCOMMANDS {
        let text = help(&[sub, "--help"]);
        let first = text.lines().next().unwrap_or("");
        assert!(
            first.len() > 20 && !first.starts_with("Usage"),
            "`sheaf {sub} --help` opens with what it does: {first:?}"
        );
        assert!(
            text.contains("README.md, section \"A document\""),
            "`sheaf {sub} --help` points to the syntax:\n{text}"
        );
    }
    // The section named exists.
    let readme =
        std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/README.md")).expect("README");
    assert!(readme.lines().any(|l| l == "## A document"));
}

#[test]
fn confine_is_offered_only_where_it_applies() {
    for sub in ["build", "verify", "watch"] {
        assert!(help(&[sub, "-h"]).contains("--confine"), "{sub}");
    }
    for args in [&["new", "-h"][..], &["validate", "-h"], &["-h"]] {
        assert!(!help(args).contains("--confine"), "{args:?}");
    }
}
