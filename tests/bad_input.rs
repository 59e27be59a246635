//! Bad input: each broken document, data file or command line gives a clear
//! message at the right place, exits with the right code, and writes
//! nothing (an earlier report stays in place).

use std::path::Path;
use std::process::Command;

const PLANTS: &str =
    "weight,group\n4.17,ctrl\n5.58,ctrl\n4.81,trt1\n4.17,trt1\n6.31,trt2\n5.12,trt2\n";

fn doc_with(body: &str) -> String {
    format!("# Trial\n\n```anova\n{body}```\n")
}

const GOOD_BLOCK: &str = "id: growth\ndata: plants.csv\nmodel: weight ~ group\n";

struct Case {
    name: &'static str,
    document: String,
    files: Vec<(&'static str, Vec<u8>)>,
    /// Every string must appear in stderr.
    expect: Vec<&'static str>,
}

fn case(name: &'static str, document: String, expect: Vec<&'static str>) -> Case {
    Case {
        name,
        document,
        files: vec![("plants.csv", PLANTS.as_bytes().to_vec())],
        expect,
    }
}

fn with_data(mut c: Case, data: &[u8]) -> Case {
    c.files = vec![("plants.csv", data.to_vec())];
    c
}

fn run_case(c: &Case) {
    let dir = tempfile::tempdir().expect("temp dir");
    std::fs::write(dir.path().join("report.md"), &c.document).expect("write doc");
    for (name, bytes) in &c.files {
        std::fs::write(dir.path().join(name), bytes).expect("write data");
    }
    // An earlier good report that a failed build must leave alone.
    let out = dir.path().join("out");
    std::fs::create_dir(&out).expect("out");
    std::fs::write(out.join("report.html"), "EARLIER").expect("earlier");
    let output = Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .current_dir(dir.path())
        .args(["build", "report.md", "-o", "out"])
        .output()
        .expect("runs");
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert_eq!(
        output.status.code(),
        Some(1),
        "{}: exit code\n{stderr}",
        c.name
    );
    for want in &c.expect {
        assert!(
            stderr.contains(want),
            "{}: expected `{want}` in\n{stderr}",
            c.name
        );
    }
    assert!(!stderr.contains("panicked"), "{}: panic\n{stderr}", c.name);
    let names: Vec<String> = std::fs::read_dir(&out)
        .expect("out")
        .map(|e| e.expect("entry").file_name().to_string_lossy().into_owned())
        .collect();
    assert_eq!(
        names,
        vec!["report.html"],
        "{}: something was written",
        c.name
    );
    assert_eq!(
        std::fs::read_to_string(out.join("report.html")).expect("read"),
        "EARLIER",
        "{}",
        c.name
    );
}

fn cases() -> Vec<Case> {
    vec![
        case(
            "unknown key",
            doc_with(&format!("{GOOD_BLOCK}compar: tukey\n")),
            vec![
                "unknown key `compar`",
                "report.md:7:1",
                "did you mean `compare`?",
            ],
        ),
        case(
            "duplicate key",
            doc_with(&format!("{GOOD_BLOCK}alpha: 0.05\nalpha: 0.01\n")),
            vec![
                "`alpha` is given twice",
                "report.md:8:1",
                "first `alpha` is on line 7",
            ],
        ),
        case(
            "alpha out of range",
            doc_with(&format!("{GOOD_BLOCK}alpha: 1.5\n")),
            vec!["`alpha` must be a number between 0 and 1", "report.md:7:8"],
        ),
        case(
            "unknown procedure",
            doc_with(&format!("{GOOD_BLOCK}compare: tukee\n")),
            vec![
                "unknown comparison procedure `tukee`",
                "report.md:7",
                "did you mean `tukey`?",
            ],
        ),
        case(
            "no model",
            doc_with("data: plants.csv\n"),
            vec!["this anova block has no `model`", "report.md:3:1"],
        ),
        case(
            "formula without tilde",
            doc_with("data: plants.csv\nmodel: weight group\n"),
            vec!["expected `~` after the response", "report.md:5:15"],
        ),
        case(
            "line that is not key: value",
            doc_with("data plants.csv\n"),
            vec!["expected `key: value`", "report.md:4:1"],
        ),
        case(
            "missing data file",
            doc_with("data: nowhere.csv\nmodel: weight ~ group\n"),
            vec![
                "cannot read data file `nowhere.csv`: no such file",
                "report.md:4:7",
            ],
        ),
        case(
            "missing column",
            doc_with("data: plants.csv\nmodel: wieght ~ group\n"),
            vec![
                "no column named `wieght`",
                "plants.csv:1",
                "did you mean `weight`?",
                "read by the block",
            ],
        ),
        with_data(
            case(
                "text in the response",
                doc_with(GOOD_BLOCK),
                vec!["`weight` must be a number, found `heavy`", "plants.csv:3:1"],
            ),
            b"weight,group\n4.1,a\nheavy,a\n5.0,b\n",
        ),
        with_data(
            case(
                "unterminated quote",
                doc_with(GOOD_BLOCK),
                vec!["a quoted field is never closed", "plants.csv:3"],
            ),
            b"weight,group\n4.1,a\n\"5.0,b\n6.0,b\n",
        ),
        with_data(
            case(
                "empty data file",
                doc_with(GOOD_BLOCK),
                vec!["the file is empty", "plants.csv"],
            ),
            b"",
        ),
        with_data(
            case(
                "one level",
                doc_with(GOOD_BLOCK),
                vec![
                    "`group` needs two or more levels with data; only `a` has observations",
                    "report.md:6",
                ],
            ),
            b"weight,group\n4.1,a\n4.5,a\n",
        ),
        with_data(
            case(
                "ragged row",
                doc_with(GOOD_BLOCK),
                vec!["found 3 fields where the header has 2", "plants.csv:3"],
            ),
            b"weight,group\n4.1,a\n4,5,b\n",
        ),
        with_data(
            case(
                "invalid UTF-8",
                doc_with(GOOD_BLOCK),
                vec!["not valid UTF-8", "plants.csv:3"],
            ),
            b"weight,group\n4.1,a\n4.2,\xff\xfe\n",
        ),
        with_data(
            case(
                "infinity",
                doc_with(GOOD_BLOCK),
                vec!["`weight` must be a number, found `inf`", "infinite values"],
            ),
            b"weight,group\n4.1,a\ninf,b\n3,b\n",
        ),
        with_data(
            case(
                "semicolon file read as comma",
                doc_with(GOOD_BLOCK),
                vec!["single column", "delimiter: semicolon"],
            ),
            b"weight;group\n4,1;a\n",
        ),
        case(
            "undefined block in prose",
            format!("{}\nF was {{{{ grwth.f }}}}.\n", doc_with(GOOD_BLOCK)),
            vec![
                "`grwth` is not the id of an analysis block",
                "report.md:9:7",
                "did you mean `growth`?",
            ],
        ),
        case(
            "unknown field in prose",
            format!("{}\nF was {{{{ growth.fstat }}}}.\n", doc_with(GOOD_BLOCK)),
            vec![
                "names something the block `growth` does not have",
                "report.md:9:7",
            ],
        ),
        case(
            "unclosed expression",
            format!("{}\nF was {{{{ growth.f.\n", doc_with(GOOD_BLOCK)),
            vec!["`{{` is never closed", "report.md:9:7"],
        ),
        case(
            "bad filter argument",
            format!(
                "{}\nF was {{{{ growth.response | pvalue }}}}.\n",
                doc_with(GOOD_BLOCK)
            ),
            vec![
                "cannot evaluate",
                "`pvalue` expects a number",
                "report.md:9",
            ],
        ),
        case(
            "duplicate id",
            format!(
                "{}\n{}",
                doc_with(GOOD_BLOCK),
                doc_with(GOOD_BLOCK).replace("# Trial\n\n", "")
            ),
            vec!["the id `growth` is already used", "report.md:10"],
        ),
        case(
            "data is a folder",
            doc_with("data: .\nmodel: weight ~ group\n"),
            vec!["cannot read data file `.`", "folder"],
        ),
        case(
            "unknown front matter key",
            format!("---\ntitel: A\n---\n{}", doc_with(GOOD_BLOCK)),
            vec![
                "unknown front-matter key `titel`",
                "report.md:2:1",
                "did you mean `title`?",
            ],
        ),
        case(
            "unknown LaTeX output kind",
            format!("---\ntex: fragment\n---\n{}", doc_with(GOOD_BLOCK)),
            vec![
                "unknown LaTeX output `fragment`",
                "report.md:2",
                "`document`",
                "`body`",
            ],
        ),
        case(
            "unclosed front matter",
            format!("---\ntitle: A\n{}", doc_with(GOOD_BLOCK)),
            vec!["the front matter is never closed", "report.md:1"],
        ),
        case(
            "level not in data",
            doc_with(&format!("{GOOD_BLOCK}levels: ctrl, trt1, trt3\n")),
            vec![
                "level `trt3` does not occur in column `group`",
                "did you mean `trt1`?",
                // The caret points at the misspelt level, not the list's start.
                "report.md:7:21",
            ],
        ),
        case(
            "level missing from levels",
            doc_with(&format!("{GOOD_BLOCK}levels: ctrl, trt1\n")),
            vec![
                "level `trt2` occurs in the data but is not listed",
                "report.md:7",
            ],
        ),
        case(
            "factor missing from the data",
            doc_with("data: plants.csv\nmodel: weight ~ group * site\n"),
            vec!["no column named `site`", "plants.csv:1"],
        ),
        case(
            "nested block",
            "- item\n\n  ```anova\n  data: plants.csv\n  model: weight ~ group\n  ```\n"
                .to_string(),
            vec!["inside a list or quote", "report.md:3"],
        ),
        case(
            "protected without lsd",
            doc_with(&format!("{GOOD_BLOCK}protected: yes\n")),
            vec!["`protected` applies only to `compare: lsd`", "report.md:7"],
        ),
        case(
            "unknown table in show",
            doc_with(&format!("{GOOD_BLOCK}show: anova, mean\n")),
            vec!["unknown table `mean` in `show`", "did you mean `means`?"],
        ),
        case(
            "decimal comma with comma delimiter",
            doc_with(&format!("{GOOD_BLOCK}decimal: comma\n")),
            vec!["a decimal comma needs another field delimiter"],
        ),
        case(
            "bad id",
            doc_with("id: 3rd\ndata: plants.csv\nmodel: weight ~ group\n"),
            vec!["`3rd` is not a usable id", "report.md:4"],
        ),
        with_data(
            case(
                "two random terms grouping alike",
                // Each block holds one level of `group`, so `block:group`
                // groups the plots exactly as `block` does.
                doc_with(
                    "data: plants.csv\nmodel: weight ~ group\nrandom: block + block:group\n",
                ),
                vec![
                    "random terms 'block' and 'block:group' group the observations in the same way",
                    "report.md:6:9",
                ],
            ),
            b"weight,group,block\n4.17,ctrl,b1\n5.58,ctrl,b1\n4.81,trt1,b2\n4.17,trt1,b2\n6.31,ctrl,b3\n5.12,ctrl,b3\n4.4,trt1,b4\n4.9,trt1,b4\n",
        ),
        Case {
            name: "document not UTF-8",
            document: String::new(),
            files: vec![("report.md", b"# T\n\xff\n".to_vec())],
            expect: vec!["the document is not valid UTF-8", "report.md:2"],
        },
    ]
}

#[test]
fn every_bad_input_is_reported_at_its_place_and_writes_nothing() {
    let all = cases();
    assert!(all.len() >= 15);
    for c in &all {
        run_case(c);
    }
}

#[test]
fn usage_errors_exit_with_two() {
    let output = Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .args(["build", "report.md"])
        .output()
        .expect("runs");
    assert_eq!(output.status.code(), Some(2));
    let output = Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .args(["build", "x.md", "-o", "o", "--to", "pdf"])
        .output()
        .expect("runs");
    assert_eq!(output.status.code(), Some(2));
}

#[test]
fn a_missing_document_exits_with_one() {
    let dir = tempfile::tempdir().expect("temp dir");
    let output = Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .current_dir(dir.path())
        .args(["build", "absent.md", "-o", "out"])
        .output()
        .expect("runs");
    assert_eq!(output.status.code(), Some(1));
    assert!(String::from_utf8_lossy(&output.stderr).contains("cannot read absent.md"));
    assert!(!Path::new(&dir.path().join("out")).exists());
}

/// Every file in `dir` (not in sub-folders) with its bytes, sorted.
fn snapshot(dir: &Path) -> Vec<(String, Vec<u8>)> {
    let mut files: Vec<(String, Vec<u8>)> = std::fs::read_dir(dir)
        .expect("folder")
        .flatten()
        .filter(|e| e.path().is_file())
        .map(|e| {
            let bytes = std::fs::read(e.path()).expect("read");
            (e.file_name().to_string_lossy().into_owned(), bytes)
        })
        .collect();
    files.sort();
    files
}

#[test]
fn no_output_ever_replaces_an_input() {
    let block = "id: growth\ndata: DATA\nmodel: weight ~ group\nplot: box\n";
    // (what, data file name, output folder, format, the file named in the error)
    let cases = [
        ("the document itself", "plants.csv", ".", "md", "report.md"),
        (
            "the document, through ./",
            "plants.csv",
            "./",
            "md",
            "report.md",
        ),
        (
            "a data file named like the results file",
            "report.results.json",
            ".",
            "html",
            "report.results.json",
        ),
        (
            "a data file named like the manifest",
            "report.sha256",
            ".",
            "html",
            "report.sha256",
        ),
        (
            "a data file named like a figure",
            "report-growth-box.svg",
            ".",
            "md",
            "report-growth-box.svg",
        ),
        (
            "a data file named like the report",
            "report.html",
            ".",
            "html",
            "report.html",
        ),
        (
            "a data file in sheaf's own folder",
            ".sheaf-cache/plants.csv",
            ".",
            "html",
            "plants.csv",
        ),
    ];
    for (what, data, out, to, named) in cases {
        let dir = tempfile::tempdir().expect("temp dir");
        let p = dir.path();
        std::fs::create_dir_all(p.join(".sheaf-cache")).expect("cache");
        std::fs::write(p.join(data), PLANTS).expect("data");
        std::fs::write(p.join("report.md"), doc_with(&block.replace("DATA", data))).expect("doc");
        let before = snapshot(p);
        let output = Command::new(env!("CARGO_BIN_EXE_sheaf"))
            .current_dir(p)
            .args(["build", "report.md", "-o", out, "--to", to])
            .output()
            .expect("runs");
        let stderr = String::from_utf8_lossy(&output.stderr);
        assert_eq!(output.status.code(), Some(1), "{what}: {stderr}");
        assert!(
            stderr.contains("refusing to write") && stderr.contains(named),
            "{what}: {stderr}"
        );
        assert!(stderr.contains("nothing was written"), "{what}: {stderr}");
        assert_eq!(snapshot(p), before, "{what}: a file changed");
    }
    // A data file reached through a link at an output's name is refused too.
    #[cfg(unix)]
    {
        let dir = tempfile::tempdir().expect("temp dir");
        let p = dir.path();
        std::fs::create_dir(p.join("out")).expect("out");
        std::fs::write(p.join("plants.csv"), PLANTS).expect("data");
        std::os::unix::fs::symlink(p.join("plants.csv"), p.join("out/report.results.json"))
            .expect("link");
        std::fs::write(p.join("report.md"), doc_with(GOOD_BLOCK)).expect("doc");
        let output = Command::new(env!("CARGO_BIN_EXE_sheaf"))
            .current_dir(p)
            .args(["build", "report.md", "-o", "out"])
            .output()
            .expect("runs");
        assert_eq!(output.status.code(), Some(1));
        assert_eq!(
            std::fs::read_to_string(p.join("plants.csv")).expect("data"),
            PLANTS
        );
    }
    // The same folder without a clash builds (HTML beside its document).
    let dir = tempfile::tempdir().expect("temp dir");
    std::fs::write(dir.path().join("plants.csv"), PLANTS).expect("data");
    std::fs::write(dir.path().join("report.md"), doc_with(GOOD_BLOCK)).expect("doc");
    let output = Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .current_dir(dir.path())
        .args(["build", "report.md", "-o", "."])
        .output()
        .expect("runs");
    assert!(
        output.status.success(),
        "{}",
        String::from_utf8_lossy(&output.stderr)
    );
}

#[test]
fn watch_never_replaces_its_own_document() {
    use std::io::BufRead;
    let dir = tempfile::tempdir().expect("temp dir");
    let p = dir.path();
    std::fs::write(p.join("plants.csv"), PLANTS).expect("data");
    let doc = doc_with(GOOD_BLOCK);
    std::fs::write(p.join("report.md"), &doc).expect("doc");
    let mut child = Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .current_dir(p)
        .args(["watch", "report.md", "-o", ".", "--to", "md"])
        .stderr(std::process::Stdio::piped())
        .spawn()
        .expect("runs");
    let stderr = child.stderr.take().expect("stderr");
    // The first build's message; the watcher then waits for a change.
    let mut seen = String::new();
    for line in std::io::BufReader::new(stderr)
        .lines()
        .map_while(Result::ok)
    {
        seen.push_str(&line);
        seen.push('\n');
        if line.contains("waiting for a change") || line.contains("rebuilt") {
            break;
        }
    }
    let _ = child.kill();
    let _ = child.wait();
    assert!(seen.contains("refusing to write"), "{seen}");
    assert_eq!(
        std::fs::read_to_string(p.join("report.md")).expect("doc"),
        doc
    );
}

#[test]
fn robust_method_keys_are_checked() {
    let cases = vec![
        case(
            "unknown method",
            doc_with(&format!("{GOOD_BLOCK}method: welsh\n")),
            vec!["unknown method `welsh`", "report.md:7:9"],
        ),
        case(
            "procedure that does not fit the method",
            doc_with(&format!("{GOOD_BLOCK}method: welch\ncompare: tukey\n")),
            vec![
                "`compare: tukey` does not fit `method: welch`",
                "games-howell",
                "report.md:8",
            ],
        ),
        case(
            "dunnett without control",
            doc_with(&format!("{GOOD_BLOCK}compare: dunnett\n")),
            vec!["Dunnett's comparisons need a control level", "report.md:7"],
        ),
        case(
            "control not in data",
            doc_with(&format!("{GOOD_BLOCK}compare: dunnett\ncontrol: ctlr\n")),
            vec![
                "the control `ctlr` is not a level with data",
                "did you mean `ctrl`?",
                "report.md:8:10",
            ],
        ),
        case(
            "control without dunnett",
            doc_with(&format!("{GOOD_BLOCK}control: ctrl\n")),
            vec!["`control` applies only to `compare: dunnett`"],
        ),
        case(
            "bad sides",
            doc_with(&format!(
                "{GOOD_BLOCK}compare: dunnett\ncontrol: ctrl\nsides: 3\n"
            )),
            vec!["unknown `sides` value `3`", "report.md:9"],
        ),
        case(
            "adjust without dunn",
            doc_with(&format!("{GOOD_BLOCK}adjust: holm\n")),
            vec!["`adjust` applies only to `compare: dunn`"],
        ),
        case(
            "bad checks value",
            doc_with(&format!("{GOOD_BLOCK}checks: some\n")),
            vec!["unknown `checks` value `some`"],
        ),
        with_data(
            case(
                "welch with a single observation",
                doc_with(&format!("{GOOD_BLOCK}method: welch\n")),
                vec!["Welch's ANOVA is undefined: level `b`", "report.md:6"],
            ),
            b"weight,group\n4.1,a\n4.5,a\n5.0,b\n",
        ),
        with_data(
            case(
                "ranks on constant data",
                doc_with(&format!("{GOOD_BLOCK}method: ranks\n")),
                vec!["Kruskal-Wallis is undefined", "report.md:6"],
            ),
            b"weight,group\n4,a\n4,a\n4,b\n4,b\n",
        ),
    ];
    for c in &cases {
        run_case(c);
    }
}

#[test]
fn power_block_keys_are_checked() {
    let power = |body: &str| format!("# Plan\n\n```power\n{body}```\n");
    let cases = vec![
        case(
            "power: unknown key",
            power("groups: 4\neffect: 0.25\npowr: 0.8\n"),
            vec!["unknown key `powr`", "did you mean `power`?", "report.md:6"],
        ),
        case(
            "power: no effect",
            power("groups: 4\npower: 0.8\n"),
            vec!["this power block has no `effect`", "report.md:3"],
        ),
        case(
            "power: unreadable effect",
            power("groups: 4\neffect: medium\npower: 0.8\n"),
            vec!["cannot read the effect `medium`", "report.md:5"],
        ),
        case(
            "power: both goals",
            power("groups: 4\neffect: 0.25\npower: 0.8\nn: 10\n"),
            vec!["give `power` (to find n) or `n`", "report.md:7"],
        ),
        case(
            "power: means without sd",
            power("effect: means = 1, 2, 3\nn: 5\n"),
            vec!["the expected means need a common SD", "report.md:4"],
        ),
        case(
            "power: groups disagree with means",
            power("groups: 4\neffect: means = 1, 2, 3 and sd = 1\nn: 5\n"),
            vec!["`groups` is 4 but the effect lists 3 means"],
        ),
        case(
            "power: bad target",
            power("groups: 4\neffect: 0.25\npower: 80\n"),
            vec!["`power` must be a number between 0 and 1"],
        ),
    ];
    for c in &cases {
        run_case(c);
    }
}

#[test]
fn summary_input_is_checked() {
    let summary = |extra: &str| {
        doc_with(&format!(
            "data: plants.csv\nmodel: weight ~ group\ninput: summary\n{extra}"
        ))
    };
    let table = |text: &'static str| text.as_bytes();
    let cases = vec![
        with_data(
            case(
                "summary: missing sd column",
                summary(""),
                vec!["no column named `sd`", "plants.csv:1"],
            ),
            table("group,n,mean\na,3,1.0\nb,3,2.0\n"),
        ),
        with_data(
            case(
                "summary: fractional n",
                summary(""),
                vec![
                    "n must be a whole number of at least 1, found `2.5`",
                    "plants.csv:3",
                ],
            ),
            table("group,n,mean,sd\na,3,1.0,0.5\nb,2.5,2.0,0.4\n"),
        ),
        with_data(
            case(
                "summary: level twice",
                summary(""),
                vec!["level `a` appears twice", "plants.csv:3"],
            ),
            table("group,n,mean,sd\na,3,1.0,0.5\na,3,2.0,0.4\n"),
        ),
        with_data(
            case(
                "summary: negative sd",
                summary(""),
                vec!["a spread cannot be negative", "plants.csv:2"],
            ),
            table("group,n,mean,sd\na,3,1.0,-0.5\nb,3,2.0,0.4\n"),
        ),
        with_data(
            case(
                "summary: ranks",
                summary("method: ranks\n"),
                vec!["Kruskal-Wallis needs the raw observations"],
            ),
            table("group,n,mean,sd\na,3,1.0,0.5\nb,3,2.0,0.4\n"),
        ),
        case(
            "columns without summary",
            doc_with(&format!("{GOOD_BLOCK}columns: n = k\n")),
            vec!["`columns` applies only to `input: summary`"],
        ),
        case(
            "unknown input",
            doc_with(&format!("{GOOD_BLOCK}input: means\n")),
            vec!["unknown input `means`"],
        ),
    ];
    for c in &cases {
        run_case(c);
    }
}

#[test]
fn factorial_designs_are_checked() {
    let two = "y,a,b\n1,x,p\n2,x,p\n3,x,q\n4,x,q\n5,z,p\n6,z,p\n7,z,q\n9,z,q\n";
    let single = "y,a,b\n1,x,p\n3,x,q\n5,z,p\n8,z,q\n";
    let empty = "y,a,b\n1,x,p\n2,x,p\n3,x,q\n4,x,q\n5,z,p\n6,z,p\n7,z,q\n9,z,q\n9,w,p\n10,w,p\n";
    let doc = |extra: &str| doc_with(&format!("data: plants.csv\nmodel: y ~ a * b\n{extra}"));
    let cases = vec![
        with_data(
            case(
                "factorial: one observation per cell",
                doc(""),
                vec!["no residual degrees of freedom", "fit the additive model"],
            ),
            single.as_bytes(),
        ),
        with_data(
            case(
                "factorial: empty cell with Type III",
                doc(""),
                vec![
                    "Type III sums of squares are not estimable",
                    "a=w, b=q",
                    "ss: 2",
                ],
            ),
            empty.as_bytes(),
        ),
        with_data(
            case(
                "factorial: marginal means with an empty cell",
                doc("ss: 2\n"),
                vec!["marginal means cannot be estimated", "cells: yes"],
            ),
            empty.as_bytes(),
        ),
        with_data(
            case(
                "factorial: within a stranger",
                doc("within: c\n"),
                vec!["`c` is not a factor of the model", "report.md:6"],
            ),
            two.as_bytes(),
        ),
        with_data(
            case(
                "factorial: welch",
                doc("method: welch\n"),
                vec!["`method: welch` is for one-factor models"],
            ),
            two.as_bytes(),
        ),
        with_data(
            case(
                "factorial: dunnett",
                doc("compare: dunnett\ncontrol: x\n"),
                vec!["`compare: dunnett` is available for one-factor models only"],
            ),
            two.as_bytes(),
        ),
        with_data(
            case(
                "factorial: bad ss",
                doc("ss: 4\n"),
                vec!["unknown sums-of-squares type `4`"],
            ),
            two.as_bytes(),
        ),
        with_data(
            case(
                "factorial: cells without the interaction",
                doc_with("data: plants.csv\nmodel: y ~ a + b\ncells: yes\n"),
                vec!["`cells` compares cell means"],
            ),
            two.as_bytes(),
        ),
        case(
            "one-factor model with ss",
            doc_with(&format!("{GOOD_BLOCK}ss: 2\n")),
            vec!["`ss` applies to models with two or more factors"],
        ),
        with_data(
            case(
                "factorial: block not in model",
                doc("block: c\n"),
                vec!["`c` is not a factor of the model"],
            ),
            two.as_bytes(),
        ),
    ];
    for c in &cases {
        run_case(c);
    }
}

#[test]
fn plot_keys_are_checked() {
    let cases = vec![
        case(
            "unknown plot kind",
            doc_with(&format!("{GOOD_BLOCK}plot: boxes\n")),
            vec![
                "unknown plot kind `boxes`",
                "did you mean `box`?",
                "report.md:7",
            ],
        ),
        case(
            "interaction for one factor",
            doc_with(&format!("{GOOD_BLOCK}plot: interaction\n")),
            vec!["`plot: interaction` needs a model with two or more factors"],
        ),
        case(
            "reference not a number",
            doc_with(&format!("{GOOD_BLOCK}reference: zero\n")),
            vec!["`reference` must be a number"],
        ),
        with_data(
            case(
                "box plot from summaries",
                doc_with("data: plants.csv\nmodel: weight ~ group\ninput: summary\nplot: box\n"),
                vec!["`plot: box` needs the raw observations"],
            ),
            b"group,n,mean,sd\na,3,1.0,0.5\nb,3,2.0,0.4\n",
        ),
        case(
            "unknown figure number",
            format!(
                "{}\nSee {{{{ figure(\"growth-bx\") }}}}.\n",
                doc_with(&format!("{GOOD_BLOCK}plot: box\n"))
            ),
            vec![
                "no figure with the id `growth-bx`",
                "did you mean `growth-box`?",
            ],
        ),
        case(
            "png dpi without png",
            format!("---\ndpi: 300\n---\n{}", doc_with(GOOD_BLOCK)),
            vec!["`dpi` applies to `figures: png`"],
        ),
    ];
    for c in &cases {
        run_case(c);
    }
}

#[test]
fn row_rules_are_checked() {
    let cases = vec![
        case(
            "exclude without a reason",
            doc_with(&format!("{GOOD_BLOCK}exclude: 3\n")),
            vec!["`exclude` needs a reason", "report.md:7"],
        ),
        case(
            "exclude a line with no data",
            doc_with(&format!("{GOOD_BLOCK}exclude: 40: typo\n")),
            vec![
                "`exclude` names line 40, which holds no data row",
                "plants.csv:40",
            ],
        ),
        case(
            "where without an operator",
            doc_with(&format!("{GOOD_BLOCK}where: group is ctrl\n")),
            vec!["cannot read the condition `group is ctrl`"],
        ),
        case(
            "where on a missing column",
            doc_with(&format!("{GOOD_BLOCK}where: site == north\n")),
            vec!["no column named `site`", "plants.csv:1"],
        ),
        case(
            "labels without =",
            doc_with(&format!("{GOOD_BLOCK}labels: ctrl Control\n")),
            vec!["expected `level = label`"],
        ),
        case(
            "wide layout with two factors",
            doc_with("data: plants.csv\nmodel: weight ~ group * site\nlayout: wide\n"),
            vec!["`layout: wide` reads one factor"],
        ),
        case(
            "unknown layout",
            doc_with(&format!("{GOOD_BLOCK}layout: tall\n")),
            vec!["unknown layout `tall`"],
        ),
    ];
    for c in &cases {
        run_case(c);
    }
}

#[test]
fn hostile_and_extreme_inputs() {
    // 10,000 levels, two observations each: the ANOVA is computed,
    // comparisons are declined with a warning, and the build succeeds.
    let mut many = String::from("weight,group\n");
    for i in 0..10_000 {
        many.push_str(&format!("{}.5,L{i}\n{}.7,L{i}\n", i % 7, i % 5));
    }
    let dir = tempfile::tempdir().expect("temp dir");
    std::fs::write(dir.path().join("report.md"), doc_with(GOOD_BLOCK)).expect("doc");
    std::fs::write(dir.path().join("plants.csv"), &many).expect("data");
    let o = Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .current_dir(dir.path())
        .args(["build", "report.md", "-o", "out", "--to", "md"])
        .output()
        .expect("runs");
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(0), "{err}");
    assert!(
        err.contains("10000 levels would give 49995000 pairwise comparisons"),
        "{err}"
    );

    // NaN is a missing-value marker; the rows are counted, not analysed.
    let dir = tempfile::tempdir().expect("temp dir");
    std::fs::write(dir.path().join("report.md"), doc_with(GOOD_BLOCK)).expect("doc");
    std::fs::write(
        dir.path().join("plants.csv"),
        format!("{PLANTS}NaN,ctrl\nnan,trt1\n"),
    )
    .expect("data");
    let o = Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .current_dir(dir.path())
        .args(["build", "report.md", "-o", "out"])
        .output()
        .expect("runs");
    assert!(String::from_utf8_lossy(&o.stderr).contains(
        "2 rows of plants.csv were left out because a value was missing (lines 8 and 9)"
    ));

    let long_line = "x".repeat(2_000_000);
    let cases = vec![
        case(
            "a two-megabyte line in the document",
            doc_with(&format!("{GOOD_BLOCK}caption {long_line}\n")),
            vec!["expected `key: value`", "report.md:7"],
        ),
        with_data(
            case(
                "a two-megabyte field in the data",
                doc_with(GOOD_BLOCK),
                vec!["`weight` must be a number", "plants.csv:3"],
            ),
            format!("weight,group\n4.1,a\n{long_line},b\n").as_bytes(),
        ),
        case(
            "a block reading its own document",
            doc_with("data: report.md\nmodel: weight ~ group\n"),
            vec!["no column named `weight`", "the columns are `# Trial`"],
        ),
        with_data(
            case(
                "negative infinity in the data",
                doc_with(GOOD_BLOCK),
                vec!["found `-inf`", "infinite values"],
            ),
            b"weight,group\n4.1,a\n-inf,b\n3,b\n",
        ),
        with_data(
            case(
                "a header only",
                doc_with(GOOD_BLOCK),
                vec!["`group` needs two or more levels with data; no level has observations"],
            ),
            b"weight,group\n",
        ),
        with_data(
            case(
                "a NUL byte in the data",
                doc_with(GOOD_BLOCK),
                vec!["`weight` must be a number", "plants.csv:3"],
            ),
            b"weight,group\n4.1,a\n4\x00.2,b\n",
        ),
        case(
            "an empty document block",
            doc_with(""),
            vec!["this anova block has no `data`", "report.md:3"],
        ),
        case(
            "front matter that is not key: value",
            "---\njust text\n---\n".to_string(),
            vec!["expected `key: value`", "report.md:2"],
        ),
    ];
    for c in &cases {
        run_case(c);
    }
}

#[test]
fn models_that_would_explode_are_refused() {
    let cases = vec![case(
        "seven factors crossed",
        doc_with("data: plants.csv\nmodel: y ~ a*b*c*d*e*f*g\n"),
        vec![
            "`*` crosses 7 factors, which would give 127 terms",
            "report.md:5",
        ],
    )];
    for c in &cases {
        run_case(c);
    }
}

/// Builds `document` with `data` as plants.csv; the exit code and stderr.
fn build_with(document: &str, data: &[u8]) -> (Option<i32>, String) {
    let dir = tempfile::tempdir().expect("temp dir");
    std::fs::write(dir.path().join("report.md"), document).expect("doc");
    std::fs::write(dir.path().join("plants.csv"), data).expect("data");
    let o = Command::new(env!("CARGO_BIN_EXE_sheaf"))
        .current_dir(dir.path())
        .args(["build", "report.md", "-o", "out"])
        .output()
        .expect("runs");
    (
        o.status.code(),
        String::from_utf8_lossy(&o.stderr).into_owned(),
    )
}

#[test]
fn values_beyond_the_analysable_range_are_refused_where_they_stand() {
    let many_digits = format!("0.{}", "1234567890".repeat(30));
    let cases = vec![
        with_data(
            case(
                "magnitude 1e200",
                doc_with(GOOD_BLOCK),
                vec![
                    "`weight` = `1e200` cannot be analysed",
                    "beyond the range sheaf can analyse",
                    "plants.csv:2:1",
                ],
            ),
            b"weight,group\n1e200,a\n1e200,a\n2e200,b\n3e200,b\n",
        ),
        with_data(
            case(
                "magnitude 1e-250",
                doc_with(GOOD_BLOCK),
                vec!["beyond the range sheaf can analyse", "plants.csv:2:1"],
            ),
            b"weight,group\n1e-250,a\n2e-250,a\n3e-250,b\n4e-250,b\n",
        ),
        with_data(
            case(
                "a 301-digit integer",
                doc_with(GOOD_BLOCK),
                vec!["beyond the range sheaf can analyse", "plants.csv:2:1"],
            ),
            format!("weight,group\n1{},a\n2,a\n3,b\n4,b\n", "0".repeat(300)).as_bytes(),
        ),
        with_data(
            case(
                "three hundred significant digits",
                doc_with(GOOD_BLOCK),
                vec!["301 significant digits", "plants.csv:2:1"],
            ),
            format!("weight,group\n{many_digits}1,a\n{many_digits}2,a\n{many_digits}3,b\n{many_digits}4,b\n").as_bytes(),
        ),
        with_data(
            case(
                "summary n of 2^64 - 1",
                doc_with("data: plants.csv\nmodel: weight ~ group\ninput: summary\n"),
                vec![
                    "n = 18446744073709551615 is beyond the 1000000000000 observations",
                    "plants.csv:2:2",
                ],
            ),
            b"group,n,mean,sd\na,18446744073709551615,1.0,0.5\nb,3,2.0,0.5\n",
        ),
        with_data(
            case(
                "summary mean of 1e300",
                doc_with("data: plants.csv\nmodel: weight ~ group\ninput: summary\n"),
                vec!["the mean `1e300` cannot be analysed", "plants.csv:3:3"],
            ),
            b"group,n,mean,sd\na,3,1.0,0.5\nb,3,1e300,0.5\n",
        ),
    ];
    for c in &cases {
        run_case(c);
    }
}

#[test]
fn binary_files_are_named_for_what_they_are() {
    let cases: Vec<(&str, &[u8], &str)> = vec![
        (
            "parquet",
            b"PAR1\x15\x04\x15\x80\x01",
            "the file is a Parquet file, not CSV text",
        ),
        (
            "gzip",
            b"\x1f\x8b\x08\x00\x00\x00",
            "the file is gzip-compressed, not CSV text",
        ),
        (
            "zip",
            b"PK\x03\x04\x14\x00\x06\x00",
            "the file is a zip archive",
        ),
        (
            "pdf",
            b"%PDF-1.7\n%\xe2\xe3\n",
            "the file is a PDF document",
        ),
        (
            "sqlite",
            b"SQLite format 3\x00\x10\x00",
            "the file is an SQLite database",
        ),
        ("utf-16", b"\xff\xfew\x00e\x00", "the file is UTF-16 text"),
        (
            "nul in the header",
            b"weight\x00\x00,group\n1,a\n",
            "binary data (a NUL byte in the header)",
        ),
    ];
    for (name, bytes, want) in cases {
        let (code, err) = build_with(&doc_with(GOOD_BLOCK), bytes);
        assert_eq!(code, Some(1), "{name}: {err}");
        assert!(err.contains(want), "{name}: expected `{want}` in\n{err}");
        if name != "utf-16" {
            assert!(!err.contains("CSV UTF-8"), "{name}: {err}");
        }
    }
}

#[test]
fn a_wide_header_is_read_in_linear_time() {
    // 300,000 columns took minutes when each name was compared with every
    // earlier one; now the header is checked with a set. The build must
    // get as far as the missing column (no timing asserted).
    let mut header: Vec<String> = (0..300_000).map(|i| format!("c{i}")).collect();
    header.push("c17".into());
    let data = format!("{}\n", header.join(","));
    let (code, err) = build_with(&doc_with(GOOD_BLOCK), data.as_bytes());
    assert_eq!(code, Some(1), "{err}");
    assert!(err.contains("the header names column `c17` twice"), "{err}");
}

#[cfg(unix)]
#[test]
fn only_regular_files_are_read() {
    let dir = tempfile::tempdir().expect("temp dir");
    let fifo = dir.path().join("pipe.csv");
    let made = Command::new("mkfifo").arg(&fifo).status();
    let doc = |path: &str| doc_with(&format!("id: g\ndata: {path}\nmodel: weight ~ group\n"));
    let mut paths = vec!["/dev/zero".to_string()];
    if made.is_ok_and(|s| s.success()) {
        paths.push("pipe.csv".into());
    }
    for path in paths {
        std::fs::write(dir.path().join("report.md"), doc(&path)).expect("doc");
        let o = Command::new(env!("CARGO_BIN_EXE_sheaf"))
            .current_dir(dir.path())
            .args(["build", "report.md", "-o", "out"])
            .output()
            .expect("runs");
        let err = String::from_utf8_lossy(&o.stderr);
        assert_eq!(o.status.code(), Some(1), "{path}: {err}");
        assert!(
            err.contains("it is not a regular file (a pipe, socket or device)"),
            "{path}: {err}"
        );
    }
}

#[test]
fn suspicious_levels_are_warned_about() {
    // Case variants of one level.
    let data =
        b"weight,group\n4.1,Control\n4.3,Control\n5.2,trt\n5.0,trt\n4.2,control\n4.4,control\n";
    let (code, err) = build_with(&doc_with(GOOD_BLOCK), data);
    assert_eq!(code, Some(0), "{err}");
    assert!(
        err.contains("warning: report.md:3 (block `growth`): levels `Control` (first on line 2) and `control` (first on line 6) of `group` differ only in case or spacing"),
        "{err}"
    );
    // A measured covariate (initial weight) read as a factor: 10 distinct
    // numbers among 12 rows.
    let mut data = String::from("weight,group\n");
    for i in 0..12 {
        data.push_str(&format!("{}.{},{}\n", 40 + i % 5, i, 20 + i % 10));
    }
    let (code, err) = build_with(&doc_with(GOOD_BLOCK), data.as_bytes());
    assert_eq!(code, Some(0), "{err}");
    assert!(
        err.contains("`group` is used as a factor, but its values are all numbers and it has 10 distinct levels for 12 observations"),
        "{err}"
    );
}

#[test]
fn block_labels_reused_within_replicates_are_explained() {
    // Three replicates of three incomplete blocks of two plots, the blocks
    // numbered 1-3 afresh in each replicate (invented data).
    let layout = [
        [(1, 2), (3, 4), (5, 6)],
        [(1, 3), (2, 5), (4, 6)],
        [(1, 4), (2, 6), (3, 5)],
    ];
    let mut data = String::from("rep,iblock,trt,y\n");
    for (r, blocks) in layout.iter().enumerate() {
        for (b, (t1, t2)) in blocks.iter().enumerate() {
            for (k, t) in [t1, t2].iter().enumerate() {
                data.push_str(&format!(
                    "{},{},t{t},{}.{}\n",
                    r + 1,
                    b + 1,
                    10 + *t,
                    (r + b + k) % 10
                ));
            }
        }
    }
    let doc = "# Trial\n\n```anova\nid: ib\ndata: plants.csv\nmodel: y ~ rep + iblock + trt\nblock: rep, iblock\n```\n";
    let (code, err) = build_with(doc, data.as_bytes());
    assert_eq!(code, Some(0), "{err}");
    assert!(
        err.contains(
            "every level of `iblock` occurs in every level of `rep`, with several plots each"
        ) && err.contains("Write the nested term `rep:iblock`"),
        "{err}"
    );
    // With the nested term written, nothing to say.
    let doc = doc.replace("rep + iblock + trt", "rep + rep:iblock + trt");
    let (code, err) = build_with(&doc, data.as_bytes());
    assert_eq!(code, Some(0), "{err}");
    assert!(!err.contains("every level of `iblock`"), "{err}");
}

#[test]
fn partly_unreplicated_cells_are_described_as_they_are() {
    // 2 × 3 factorial, two plots per cell except one (invented data).
    let mut data = String::from("a,b,y\n");
    for a in 0..2 {
        for b in 0..3 {
            let plots = if (a, b) == (1, 2) { 1 } else { 2 };
            for k in 0..plots {
                data.push_str(&format!("a{a},b{b},{}.{}\n", 10 + a + b, 3 * k + a + b));
            }
        }
    }
    let doc = "# Trial\n\n```anova\nid: f\ndata: plants.csv\nmodel: y ~ a * b\n```\n";
    let (code, err) = build_with(doc, data.as_bytes());
    assert_eq!(code, Some(0), "{err}");
    assert!(
        err.contains("1 of the 6 treatment cells hold a single observation"),
        "{err}"
    );
    assert!(
        !err.contains("With one observation per treatment cell"),
        "{err}"
    );
}

/// Prose: unclosed fences, unbounded expressions, line ends, and the
/// document-side messages about levels, labels and `where`.
#[test]
fn prose_and_level_mistakes_are_reported_at_their_place() {
    let cases = vec![
        case(
            "an unclosed analysis block",
            format!("# Trial\n\n```anova\n{GOOD_BLOCK}\nThe results follow.\n"),
            vec![
                "the `anova` block opened here is never closed",
                "report.md:3:1",
                "end the block with a line holding only ```",
            ],
        ),
        case(
            "an unclosed code fence swallowing a block",
            format!("# Trial\n\n~~~python\nx = 1\n\n{}", doc_with(GOOD_BLOCK)),
            vec![
                "the code fence opened here is never closed",
                "report.md:3:1",
            ],
        ),
        case(
            "string repetition in prose",
            format!(
                "{}\nSee {{{{ \"x\" * 1000000000 }}}}.\n",
                doc_with(GOOD_BLOCK)
            ),
            vec![
                "needs more work than prose expressions may do",
                "report.md:9:5",
            ],
        ),
        case(
            "a huge format width in prose",
            format!(
                "{}\n{{{{ \"%999999999s\" | format(growth.f) }}}}\n",
                doc_with(GOOD_BLOCK)
            ),
            vec!["report.md:9:1"],
        ),
        case(
            "a long expression result",
            format!("{}\n{{{{ \"ab\" * 6000 }}}}\n", doc_with(GOOD_BLOCK)),
            vec![
                "gives 12000 bytes of text; an expression may give at most 10000",
                "report.md:9:1",
            ],
        ),
        case(
            "a level name with spaces in prose",
            format!(
                "{}\n{{{{ growth.groups.peat moss.mean }}}}\n",
                doc_with(GOOD_BLOCK)
            ),
            vec!["report.md:9:1", "growth.groups[\"peat moss\"].mean"],
        ),
        case(
            "an error after lone-CR line ends",
            format!("{}\n{{{{ growht.f }}}}\n", doc_with(GOOD_BLOCK)).replace('\n', "\r"),
            vec![
                "`growht` is not the id of an analysis block",
                "report.md:9:1",
                "did you mean `growth`?",
            ],
        ),
        case(
            "labels for a level that does not exist",
            doc_with(&format!(
                "{GOOD_BLOCK}labels: ctrl = Control, trt3 = Treatment 3\n"
            )),
            vec![
                "`labels` renames `trt3`, which is not a level with data",
                "report.md:7:25",
                "did you mean `trt1`?",
            ],
        ),
        case(
            "or in where",
            doc_with(&format!(
                "{GOOD_BLOCK}where: group == ctrl or group == trt1\n"
            )),
            vec![
                "`or` is not supported",
                "report.md:7",
                "`!=` joined by `and`",
            ],
        ),
    ];
    for c in &cases {
        run_case(c);
    }
}

/// Damaged Parquet files (cut short, bytes flipped throughout): an error or
/// a report, never a panic, and no panic message on stderr. The fixture is
/// tests/data/parquet/invented-nulls.parquet (see the README there).
#[test]
fn damaged_parquet_files_end_in_errors_not_panics() {
    let good = std::fs::read(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/parquet/invented-nulls.parquet"),
    )
    .expect("fixture");
    let doc = "# d\n\n```anova\ndata: d.parquet\nmodel: fill_g ~ head\n```\n";
    let run = |bytes: &[u8]| {
        let dir = tempfile::tempdir().expect("temp dir");
        std::fs::write(dir.path().join("report.md"), doc).expect("doc");
        std::fs::write(dir.path().join("d.parquet"), bytes).expect("data");
        let output = Command::new(env!("CARGO_BIN_EXE_sheaf"))
            .current_dir(dir.path())
            .args(["build", "report.md", "-o", "out"])
            .output()
            .expect("runs");
        (
            output.status.code(),
            String::from_utf8_lossy(&output.stderr).to_string(),
        )
    };
    let (code, err) = run(&good[..good.len() / 2]);
    assert_eq!(code, Some(1), "{err}");
    assert!(err.contains("cut short"), "{err}");
    for at in (4..good.len() - 8).step_by(good.len() / 40) {
        let mut bytes = good.clone();
        bytes[at] ^= 0xa5;
        let (code, err) = run(&bytes);
        assert!(
            matches!(code, Some(0 | 1)),
            "byte {at}: exit {code:?}\n{err}"
        );
        assert!(!err.contains("panicked"), "byte {at}:\n{err}");
    }
}
