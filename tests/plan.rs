//! The plan stage: every error of a document is reported in one build, in
//! document order, and a document with errors reads no data.

use sheaf::compile::{World, compile};
use sheaf::render::Format;
use std::cell::RefCell;
use std::io::Read;

/// Files in memory that record every read and every open for reading; a
/// probe (the plan's check that a file can be opened) reads nothing and is
/// recorded apart.
#[derive(Default)]
struct Recording {
    reads: RefCell<Vec<String>>,
    probes: RefCell<Vec<String>>,
}

const PLANTS: &str =
    "weight,group\n4.17,ctrl\n5.58,ctrl\n4.81,trt1\n4.17,trt1\n6.31,trt2\n5.12,trt2\n";

impl World for Recording {
    fn read(&self, path: &str) -> std::io::Result<Vec<u8>> {
        self.reads.borrow_mut().push(path.to_string());
        match path {
            "plants.csv" => Ok(PLANTS.as_bytes().to_vec()),
            _ => Err(std::io::ErrorKind::NotFound.into()),
        }
    }
    fn open(&self, path: &str) -> std::io::Result<(Box<dyn Read + Send>, u64)> {
        let bytes = self.read(path)?;
        let size = bytes.len() as u64;
        Ok((Box::new(std::io::Cursor::new(bytes)), size))
    }
    fn probe(&self, path: &str) -> std::io::Result<u64> {
        self.probes.borrow_mut().push(path.to_string());
        match path {
            "plants.csv" => Ok(PLANTS.len() as u64),
            _ => Err(std::io::ErrorKind::NotFound.into()),
        }
    }
    fn display(&self, path: &str) -> String {
        path.to_string()
    }
}

/// Five blocks: errors in the front matter (line 3), block 1 (an unknown
/// key, line 8), block 3 (a formula, line 21) and block 5 (an unknown
/// procedure, line 35); blocks 2 and 4 are good and would be computed first
/// if errors were found one block at a time.
const FOUR_ERRORS: &str = "---\ntitle: Trial\npaper: a5\n---\n# Trial\n\n```anova\ncolour: red\ndata: plants.csv\nmodel: weight ~ group\n```\n\n```anova\nid: second\ndata: plants.csv\nmodel: weight ~ group\n```\n\n```anova\nid: third\nmodel: weight ~ ~ group\ndata: plants.csv\n```\n\n```anova\nid: fourth\ndata: plants.csv\nmodel: weight ~ group\n```\n\n```anova\nid: fifth\ndata: plants.csv\nmodel: weight ~ group\ncompare: tukee\n```\n";

#[test]
fn errors_in_four_places_are_reported_together_in_document_order() {
    let world = Recording::default();
    let err = compile("report.md", FOUR_ERRORS.as_bytes(), &world, Format::Html)
        .expect_err("the document has errors");
    let each = err.clone().each();
    let at: Vec<(Option<usize>, &str)> = each
        .iter()
        .map(|d| (d.place.as_ref().and_then(|p| p.line), d.message.as_str()))
        .collect();
    assert_eq!(at.len(), 4, "{err}");
    assert_eq!(at[0], (Some(3), "unknown paper size `a5`"));
    assert_eq!(at[1], (Some(8), "unknown key `colour`"));
    assert_eq!(at[2], (Some(21), "expected a factor name"));
    assert_eq!(at[3], (Some(35), "unknown comparison procedure `tukee`"));
    assert!(
        world.reads.borrow().is_empty(),
        "data read: {:?}",
        world.reads.borrow()
    );

    // Each error with its place, in the compiler's format, then the count.
    let text = err.to_string();
    let places: Vec<&str> = text
        .lines()
        .filter_map(|l| l.trim_start().strip_prefix("--> "))
        .collect();
    assert_eq!(
        places,
        [
            "report.md:3:8",
            "report.md:8:1",
            "report.md:21:17",
            "report.md:35:10"
        ]
    );
    assert!(text.ends_with("\n4 errors in report.md\n"), "{text}");
    assert_eq!(err.short().lines().count(), 4, "{}", err.short());
}

#[test]
fn a_missing_data_file_stops_the_build_before_any_data_are_read() {
    let doc = "```anova\nid: first\ndata: plants.csv\nmodel: weight ~ group\n```\n\n```anova\nid: second\ndata: absent.csv\nmodel: weight ~ group\n```\n";
    let world = Recording::default();
    let err = compile("report.md", doc.as_bytes(), &world, Format::Html)
        .expect_err("a data file is missing");
    assert_eq!(err.count(), 1);
    assert_eq!(
        err.message,
        "cannot read data file `absent.csv`: no such file"
    );
    assert!(
        world.reads.borrow().is_empty(),
        "data read: {:?}",
        world.reads.borrow()
    );
    assert_eq!(*world.probes.borrow(), ["plants.csv", "absent.csv"]);
}

#[test]
fn one_error_prints_as_before_with_no_count() {
    let doc = "# T\n\n```anova\ndata: plants.csv\nmodel: weight ~ group\naplha: 0.05\n```\n";
    let err = compile(
        "report.md",
        doc.as_bytes(),
        &Recording::default(),
        Format::Html,
    )
    .expect_err("an unknown key");
    assert_eq!(
        err.to_string(),
        "error: unknown key `aplha`\n --> report.md:6:1\n  |\n6 | aplha: 0.05\n  | ^\n  = hint: did you mean `alpha`?\n"
    );
}

#[test]
fn a_good_document_reads_each_file_once_after_the_plan() {
    let doc = "```anova\nid: first\ndata: plants.csv\nmodel: weight ~ group\n```\n\nF = {{ first.f | fixed(2) }}.\n";
    let world = Recording::default();
    let built = compile("report.md", doc.as_bytes(), &world, Format::Html).expect("builds");
    assert_eq!(built.blocks, 1);
    assert_eq!(*world.probes.borrow(), ["plants.csv"]);
    assert_eq!(*world.reads.borrow(), ["plants.csv"]);
}

#[test]
fn errors_found_in_the_data_are_reported_for_every_block_at_once() {
    // Three blocks read the same file: the first and the third name a
    // column it does not have, the second is good. Both errors come from
    // one build, in document order.
    let doc = "```anova\nid: first\ndata: plants.csv\nmodel: height ~ group\n```\n\n```anova\nid: second\ndata: plants.csv\nmodel: weight ~ group\n```\n\n```anova\nid: third\ndata: plants.csv\nmodel: height ~ group\n```\n";
    let world = Recording::default();
    let err = compile("report.md", doc.as_bytes(), &world, Format::Html)
        .expect_err("two blocks name a missing column");
    let text = err.to_string();
    assert_eq!(err.count(), 2, "{text}");
    let first = text
        .find("the block `first`")
        .expect("the first block named");
    let third = text
        .find("the block `third`")
        .expect("the third block named");
    assert!(first < third, "{text}");
    assert!(!text.contains("the block `second`"), "{text}");
    assert!(err.message.contains("height"), "{err}");
}
