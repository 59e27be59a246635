//! Choosing rows and naming levels: wide layout, `where`, `exclude`, `labels`.
//! Every row left out is recorded with its line and reason.

use serde_json::Value;
use sheaf::compile::{World, compile};
use sheaf::render::Format;

struct Memory(Vec<(&'static str, String)>);

impl World for Memory {
    fn read(&self, path: &str) -> std::io::Result<Vec<u8>> {
        self.0
            .iter()
            .find(|(p, _)| *p == path)
            .map(|(_, t)| t.as_bytes().to_vec())
            .ok_or_else(|| std::io::Error::from(std::io::ErrorKind::NotFound))
    }
    fn display(&self, path: &str) -> String {
        path.to_string()
    }
}

const PLANTS: &str = include_str!("data/open/PlantGrowth.csv");

fn results(block: &str, data: String) -> Value {
    let doc = format!("```anova\nid: t\ndata: d.csv\n{block}```\n");
    let built = compile(
        "report.md",
        doc.as_bytes(),
        &Memory(vec![("d.csv", data)]),
        Format::Markdown,
    )
    .unwrap_or_else(|d| panic!("{d}"));
    serde_json::from_slice(&built.results).expect("json")
}

#[test]
fn a_wide_table_gives_the_same_analysis_as_the_long_one() {
    let long = results("model: weight ~ group\n", PLANTS.to_string());
    // The same data, one column per level, ten rows.
    let rows: Vec<(&str, &str)> = PLANTS
        .lines()
        .skip(1)
        .filter_map(|l| l.split_once(','))
        .collect();
    let column = |g: &str| {
        rows.iter()
            .filter(|(_, lv)| *lv == g)
            .map(|(w, _)| *w)
            .collect::<Vec<_>>()
    };
    let (c, t1, t2) = (column("ctrl"), column("trt1"), column("trt2"));
    let mut wide = String::from("ctrl,trt1,trt2\n");
    for i in 0..10 {
        wide.push_str(&format!("{},{},{}\n", c[i], t1[i], t2[i]));
    }
    let w = results("model: weight ~ group\nlayout: wide\n", wide);
    assert_eq!(w["blocks"][0]["anova"], long["blocks"][0]["anova"]);
    assert_eq!(w["blocks"][0]["groups"][2]["level"], "trt2");
}

#[test]
fn where_and_exclude_leave_rows_out_with_their_reasons() {
    let r = results(
        "model: weight ~ group\nwhere: weight > 4\nexclude: 2, 13: seedlings mislabelled\n",
        PLANTS.to_string(),
    );
    let b = &r["blocks"][0];
    let excluded = b["excluded"].as_array().expect("excluded");
    // The weights at or below 4, counted from the file itself.
    let low = PLANTS
        .lines()
        .skip(1)
        .filter(|l| {
            l.split(',')
                .next()
                .and_then(|w| w.parse::<f64>().ok())
                .is_some_and(|w| w <= 4.0)
        })
        .count();
    assert_eq!(excluded.len(), low + 2);
    assert_eq!(b["n"], 30 - low - 2);
    assert!(
        excluded
            .iter()
            .any(|e| e["line"] == 2 && e["reason"] == "excluded: seedlings mislabelled")
    );
    assert!(
        excluded
            .iter()
            .any(|e| e["reason"] == "fails `where: weight > 4`")
    );
    // Planned exclusions are acknowledged by themselves: listed, not boxed.
    let text = b["acknowledged"].to_string();
    assert!(!b["warnings"].to_string().contains("seedlings mislabelled"));
    assert!(
        text.contains(
            "left out by the document (excluded: seedlings mislabelled) (lines 2 and 13)"
        ),
        "{text}"
    );
}

#[test]
fn labels_rename_levels_everywhere() {
    let r = results(
        "model: weight ~ group\nlabels: ctrl = Control, trt1 = Treatment 1\n",
        PLANTS.to_string(),
    );
    let groups: Vec<&str> = r["blocks"][0]["groups"]
        .as_array()
        .expect("groups")
        .iter()
        .map(|g| g["level"].as_str().expect("level"))
        .collect();
    assert_eq!(groups, vec!["Control", "Treatment 1", "trt2"]);
    assert!(
        r["blocks"][0]["comparisons"][0]["letters"]
            .get("Control")
            .is_some()
    );
}
