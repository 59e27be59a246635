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
    assert!(
        String::from_utf8_lossy(&o.stderr).contains(
            "2 rows of plants.csv were left out because a value was missing (lines 8, 9)"
        )
    );

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
