//! The LaTeX output (`--to tex`): every string from the document and the
//! data is escaped, the demo compiles with pdflatex without errors or tables
//! wider than the page, and the body-only fragment compiles inside a
//! document that loads the packages its opening comment lists. Where
//! pdflatex is not installed the compiling tests say so and pass.

use sheaf::compile::{Built, DiskWorld, compile};
use sheaf::render::Format;
use std::path::{Path, PathBuf};
use std::process::Command;

fn build_in(dir: &Path, document: &str) -> Built {
    let bytes = std::fs::read(dir.join(document)).expect("document");
    compile(
        document,
        &bytes,
        &DiskWorld {
            base: dir.to_path_buf(),
        },
        Format::Tex,
    )
    .unwrap_or_else(|d| panic!("{} failed to build:\n{d}", dir.display()))
}

/// Writes the report and its figures into `out`.
fn write_outputs(built: &Built, out: &Path) -> PathBuf {
    for (name, bytes) in &built.files {
        std::fs::write(out.join(name), bytes).expect("figure");
    }
    let report = out.join(&built.report_name);
    std::fs::write(&report, &built.report).expect("report");
    report
}

fn installed(program: &str) -> bool {
    Command::new(program)
        .arg("--version")
        .output()
        .is_ok_and(|o| o.status.success())
}

/// Runs pdflatex twice (the second run resolves `\ref`s) and returns the
/// log of the second run; `None` (with a message) where pdflatex is missing.
fn pdflatex(tex: &Path) -> Option<String> {
    if !installed("pdflatex") {
        eprintln!("skipped: pdflatex is not on PATH, so the LaTeX output was not compiled");
        return None;
    }
    let dir = tex.parent().expect("folder");
    for _ in 0..2 {
        let run = Command::new("pdflatex")
            .current_dir(dir)
            .args(["-interaction=nonstopmode", "-halt-on-error"])
            .arg(tex.file_name().expect("name"))
            .output()
            .expect("pdflatex runs");
        let log = std::fs::read_to_string(tex.with_extension("log")).unwrap_or_default();
        assert!(
            run.status.success(),
            "pdflatex failed on {}:\n{}",
            tex.display(),
            errors(&log).join("\n")
        );
    }
    Some(std::fs::read_to_string(tex.with_extension("log")).expect("log"))
}

/// The error lines (`! …`) of a pdflatex log, with the line after each.
fn errors(log: &str) -> Vec<String> {
    let lines: Vec<&str> = log.lines().collect();
    lines
        .iter()
        .enumerate()
        .filter(|(_, l)| l.starts_with('!'))
        .map(|(i, l)| format!("{l} {}", lines.get(i + 1).unwrap_or(&"")))
        .collect()
}

/// Every "Overfull \hbox (Xpt too wide)" in a log, with its width.
fn overfull_boxes(log: &str) -> Vec<(f64, String)> {
    log.lines()
        .filter_map(|l| {
            let rest = l.strip_prefix("Overfull \\hbox (")?;
            let pt: f64 = rest.split("pt too wide").next()?.parse().ok()?;
            Some((pt, l.to_string()))
        })
        .collect()
}

/// The PDF's text, where pdftotext is installed.
fn pdf_text(pdf: &Path) -> Option<String> {
    let run = Command::new("pdftotext").arg(pdf).arg("-").output().ok()?;
    run.status
        .success()
        .then(|| String::from_utf8_lossy(&run.stdout).into_owned())
}

const SPECIAL_DATA: &str = "\
mix & {1},amount_%
\"a_b\",1.0
\"a_b\",1.4
\"a_b\",1.2
\"50% & $5\",2.1
\"50% & $5\",2.5
\"50% & $5\",2.2
\"x^2 ~ {y}\",3.3
\"x^2 ~ {y}\",3.1
\"x^2 ~ {y}\",3.6
\"back\\slash [1]\",2.6
\"back\\slash [1]\",2.9
\"back\\slash [1]\",2.7
\"Größe α--β\",1.9
\"Größe α--β\",2.0
\"Größe α--β\",1.7
";

const SPECIAL_DOCUMENT: &str = "\
---
title: Costs of 5% & $3 for no.#4_a {x} ~ ^
author: Ana Łópez & Co_
---

## Section with 100% & #1 {x}

Prose with 5% & $3 for item #4, {braces}, ~tilde^, under_score, a back\\slash,
`code_with_underscores & {x}`, *emphasis*, **strong**, a [link](https://example.org/a_b?x=1&y=50%25#top)
and Größe with α. See {{ table(\"odd_one-anova\") }}.

- first item [with brackets]
- second item

```anova
id: odd_one
data: odd.csv
model: `amount_%` ~ `mix & {1}`
compare: lsd
protected: no
caption: \"Caption with 50% & $1 and #2_x {y} ~z ^w\"
```
";

/// Writes the document and data with every character LaTeX treats
/// specially into a fresh folder.
fn special_study() -> tempfile::TempDir {
    let dir = tempfile::tempdir().expect("temp dir");
    std::fs::write(dir.path().join("odd.csv"), SPECIAL_DATA).expect("data");
    std::fs::write(dir.path().join("report.md"), SPECIAL_DOCUMENT).expect("document");
    dir
}

#[test]
fn every_special_character_is_escaped_in_names_captions_and_prose() {
    let dir = special_study();
    let built = build_in(dir.path(), "report.md");
    let tex = String::from_utf8(built.report.clone()).expect("utf-8");
    for escaped in [
        // Title and author.
        r"\title{Costs of 5\% \& \$3 for no.\#4\_a \{x\} \textasciitilde{} \textasciicircum{}}",
        r"\author{Ana Łópez \& Co\_}",
        // A heading and prose.
        r"\section{Section with 100\% \& \#1 \{x\}}",
        r"5\% \& \$3 for item \#4, \{braces\}, \textasciitilde{}tilde\textasciicircum{}, under\_score, a back\textbackslash{}slash",
        r"\texttt{code\_\allowbreak{}with\_\allowbreak{}underscores \& \{x\}}",
        r"\emph{emphasis}",
        r"\textbf{strong}",
        r"\href{https://example.org/a_b?x=1&y=50\%25\#top}{link}",
        r"Größe with \ensuremath{\alpha}",
        r"See Table~\ref{tab:odd_one-anova}",
        r"\item{} first item {[}with brackets{]}",
        // A caption, with its label.
        r"\caption{Caption with 50\% \& \$1 and \#2\_x \{y\} \textasciitilde{}z \textasciicircum{}w}\label{tab:odd_one-anova}",
        // Level names in table cells.
        r"a\_b",
        r"50\% \& \$5",
        r"x\textasciicircum{}2 \textasciitilde{} \{y\}",
        r"back\textbackslash{}slash {[}1{]}",
        r"Größe \ensuremath{\alpha}-{}-\ensuremath{\beta}",
        // A column name.
        r"mix \& \{1\}",
    ] {
        assert!(tex.contains(escaped), "missing `{escaped}` in:\n{tex}");
    }
    // No raw special character from the data reached a table row.
    for raw in ["50% &", "x^2", "{y}", "a_b &", "back\\slash"] {
        assert!(!tex.contains(raw), "unescaped `{raw}` in:\n{tex}");
    }
    let Some(log) = pdflatex(&write_outputs(&built, dir.path())) else {
        return;
    };
    assert!(errors(&log).is_empty(), "{:?}", errors(&log));
    // The characters come out of the PDF as they were written.
    let Some(text) = pdf_text(&dir.path().join("report.pdf")) else {
        eprintln!("skipped: pdftotext is not on PATH, so the PDF's text was not read");
        return;
    };
    for shown in [
        "5% & $3 for item #4",
        "{braces}",
        "under_score",
        "a_b",
        "50% & $5",
        "Größe",
    ] {
        assert!(
            text.contains(shown),
            "`{shown}` not in the PDF's text:\n{text}"
        );
    }
}

#[test]
fn body_only_output_is_a_fragment_that_compiles_inside_a_document() {
    let dir = special_study();
    let document = SPECIAL_DOCUMENT.replace("author:", "tex: body\nauthor:");
    std::fs::write(dir.path().join("report.md"), document).expect("document");
    let built = build_in(dir.path(), "report.md");
    let tex = String::from_utf8(built.report.clone()).expect("utf-8");
    for whole_document_only in [
        "\\documentclass",
        "\\begin{document}",
        "\\end{document}",
        "\\maketitle",
        "\\usepackage",
    ] {
        assert!(
            !tex.lines().any(|l| l.starts_with(whole_document_only)),
            "a fragment holds `{whole_document_only}`:\n{tex}"
        );
    }
    assert!(tex.starts_with("% The body of a report written by sheaf"));
    // The packages the opening comment lists, as a preamble.
    let packages: Vec<&str> = tex
        .lines()
        .take_while(|l| l.starts_with('%'))
        .filter_map(|l| {
            l.trim_start_matches('%')
                .trim()
                .strip_prefix("\\usepackage")
                .map(|_| l.trim_start_matches('%').trim())
        })
        .collect();
    assert_eq!(packages.len(), 5, "{tex}");
    write_outputs(&built, dir.path());
    let thesis = format!(
        "\\documentclass{{report}}\n{}\n\\begin{{document}}\n\\chapter{{Results}}\n\\input{{report.tex}}\n\\end{{document}}\n",
        packages.join("\n")
    );
    std::fs::write(dir.path().join("thesis.tex"), thesis).expect("thesis");
    if let Some(log) = pdflatex(&dir.path().join("thesis.tex")) {
        assert!(errors(&log).is_empty(), "{:?}", errors(&log));
        // The reference from the prose found its table: chapter 1's first.
        let text = pdf_text(&dir.path().join("thesis.pdf")).unwrap_or_default();
        assert!(text.is_empty() || text.contains("See Table 1.1"), "{text}");
    }
}

#[test]
fn the_demo_compiles_without_errors_or_tables_wider_than_the_page() {
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/substrate-trial");
    let built = build_in(&demo, "report.md");
    let out = tempfile::tempdir().expect("temp dir");
    let report = write_outputs(&built, out.path());
    let started = std::time::Instant::now();
    let Some(log) = pdflatex(&report) else {
        return;
    };
    eprintln!(
        "pdflatex, two runs: {:.2} s",
        started.elapsed().as_secs_f64()
    );
    assert!(errors(&log).is_empty(), "{:?}", errors(&log));
    // A few points over (a long name in typewriter type at a line's end)
    // cannot be seen; a table running into the margin would be far wider.
    let wide: Vec<String> = overfull_boxes(&log)
        .into_iter()
        .filter(|(pt, _)| *pt > 10.0)
        .map(|(_, l)| l)
        .collect();
    assert!(wide.is_empty(), "{wide:?}");
    assert!(
        !log.contains("Float too large"),
        "a float runs off its page"
    );
    let Ok(info) = Command::new("pdfinfo")
        .arg(out.path().join("report.pdf"))
        .output()
    else {
        eprintln!("skipped: pdfinfo is not on PATH, so the page count was not checked");
        return;
    };
    let info = String::from_utf8_lossy(&info.stdout);
    let pages: usize = info
        .lines()
        .find_map(|l| l.strip_prefix("Pages:"))
        .and_then(|n| n.trim().parse().ok())
        .expect("pdfinfo prints the page count");
    eprintln!("{pages} pages");
    // Nine blocks with 40-odd tables and seven figures: well over three pages.
    assert!(pages > 3, "{pages} pages");
}

#[test]
fn two_builds_are_byte_identical() {
    let demo = Path::new(env!("CARGO_MANIFEST_DIR")).join("examples/substrate-trial");
    let (a, b) = (build_in(&demo, "report.md"), build_in(&demo, "report.md"));
    assert_eq!(a.report, b.report);
    assert_eq!(a.files, b.files);
}

const PROSE_DOCUMENT: &str = "\
# Prose of every kind

A [safe link](https://example.org/x%20y) and an [unsafe one](javascript:alert(1)),
an ![image](picture.svg), ~~struck words~~, a hard break\\
and <b>raw HTML</b>, <mail@example.org>.

> A quotation with `code`.

1. one
   - two
     1. three
        - four
          - five, deeper than LaTeX nests lists
2. back

A paragraph between the lists.

5. a list starting at five

```python
def f(x):
    return x ** 2  # {braces} & 50%
*starred line
[bracketed line]
```

| Name | Value |
|:-----|------:|
| a_b  | 1.5   |
| *c*  | 10%   |
| \\*d | 2     |

---

### A subsection

#### A subsubsection

##### A paragraph heading
";

#[test]
fn prose_of_every_kind_is_written_and_compiles() {
    let dir = tempfile::tempdir().expect("temp dir");
    std::fs::write(dir.path().join("report.md"), PROSE_DOCUMENT).expect("document");
    let built = build_in(dir.path(), "report.md");
    let tex = String::from_utf8(built.report.clone()).expect("utf-8");
    for written in [
        r"\href{https://example.org/x\%20y}{safe link}",
        // A target that could run script is shown as its text.
        "and an unsafe one,",
        r"\emph{image}",
        r"\textless{}b\textgreater{}raw HTML\textless{}/b\textgreater{}",
        r"\href{mailto:mail@example.org}{mail@example.org}",
        r"\begin{quote}",
        r"\setcounter{enumi}{4}",
        r"\par\textbullet{} five, deeper than LaTeX nests lists",
        r"~~~~return x ** 2 ~\# \{braces\} \& 50\%\mbox{}\newline",
        // A line starting with `*` or `[` is not read as an argument.
        r"\newline
*starred line",
        r"\begin{tabular}{lr}",
        r"{}a\_b & 1.5 \\",
        r"{}\emph{c} & 10\% \\",
        r"{}*d & 2 \\",
        r"\subsection{A subsection}",
        r"\subsubsection{A subsubsection}",
        r"\paragraph{A paragraph heading}",
    ] {
        assert!(tex.contains(written), "missing `{written}` in:\n{tex}");
    }
    assert!(!tex.contains("javascript"), "{tex}");
    if let Some(log) = pdflatex(&write_outputs(&built, dir.path())) {
        assert!(errors(&log).is_empty(), "{:?}", errors(&log));
    }
}

#[test]
fn a_table_longer_than_a_page_continues_in_further_floats() {
    // 24 levels give 276 pairs: seven floats of at most 40 rows.
    let dir = tempfile::tempdir().expect("temp dir");
    let mut data = String::from("y,g\n");
    for level in 0..24 {
        for (r, noise) in [0.3, -0.2, 0.1, -0.4].iter().enumerate() {
            let y = 10.0 + f64::from(level) * 0.3 + noise + r as f64 * 0.05;
            data.push_str(&format!("{y:.2},level_{level:02}\n"));
        }
    }
    std::fs::write(dir.path().join("d.csv"), data).expect("data");
    let document =
        "## Many levels\n\n```anova\nid: big\ndata: d.csv\nmodel: y ~ g\ncompare: tukey\n```\n";
    std::fs::write(dir.path().join("report.md"), document).expect("document");
    let built = build_in(dir.path(), "report.md");
    let tex = String::from_utf8(built.report.clone()).expect("utf-8");
    assert_eq!(
        tex.matches(r"Table~\ref{tab:big-pairs} (continued)")
            .count(),
        6,
        "{tex}"
    );
    if let Some(log) = pdflatex(&write_outputs(&built, dir.path())) {
        assert!(errors(&log).is_empty(), "{:?}", errors(&log));
        assert!(
            !log.contains("Float too large"),
            "a float runs off its page"
        );
    }
}
