//! The equivalence figure draws the numbers its outcome holds: each
//! estimate and the margins, read back through the x axis's tick labels.

use super::*;

/// The specification's invented F.4 levels (control, A, B, C; five each).
const CSV: &str = "level,y\ncontrol,50.1\ncontrol,48.7\ncontrol,51.3\ncontrol,49.6\ncontrol,50.8\n\
A,50.9\nA,49.8\nA,51.7\nA,50.2\nA,51.1\nB,51.9\nB,53.1\nB,51.2\nB,52.5\nB,53.3\n\
C,48.1\nC,50.3\nC,47.7\nC,50.6\nC,48.3\n";

fn outcome() -> LinearOutcome {
    let text = "```anova\nid: e\ndata: d.csv\nmodel: y ~ level\ncontrol: control\nmargin: 2\nplot: equivalence\n```\n";
    let doc = crate::doc::parse_document("report.md", text.to_string()).expect("document");
    let block = &doc.blocks[0];
    let crate::doc::BlockSpec::Anova(spec) = &block.spec else {
        panic!("an anova block")
    };
    let request = crate::analysis::Request {
        doc: &doc,
        block,
        spec,
        data: crate::analysis::Data::Stream {
            path: "d.csv",
            reader: Box::new(CSV.as_bytes()),
            reopen: &|| Ok(Box::new(CSV.as_bytes())),
        },
        display_path: "d.csv",
    };
    crate::analysis::run_linear(request).expect("fits").0
}

fn attr(line: &str, name: &str) -> f64 {
    let start = line.find(&format!(" {name}=\"")).expect(name) + name.len() + 3;
    let end = start + line[start..].find('"').expect("closing quote");
    line[start..end].parse().expect("number")
}

/// Values at the x positions of the lines of `class`, through the ticks.
fn read_back(svg: &str, marks: impl Fn(&str) -> Option<f64>) -> Vec<f64> {
    let ticks: Vec<(f64, f64)> = svg
        .lines()
        .filter(|l| l.contains("class=\"xtick\""))
        .map(|l| {
            let label = &l[l.find('>').expect("tag") + 1..l.rfind("</").expect("end")];
            let value: f64 = label.replace('\u{2212}', "-").parse().expect("tick");
            (value, attr(l, "x"))
        })
        .collect();
    let ((v0, x0), (v1, x1)) = (ticks[0], ticks[ticks.len() - 1]);
    svg.lines()
        .filter_map(&marks)
        .map(|x| v0 + (x - x0) * (v1 - v0) / (x1 - x0))
        .collect()
}

#[test]
fn the_estimates_and_margins_are_drawn_where_the_outcome_puts_them() {
    let o = outcome();
    let (caption, svg) = equivalence_figure(&o, "e-equivalence", 1).expect("drawn");
    assert!(caption.contains("margins ±2"), "{caption}");
    // Means by hand: 50.74 − 50.1, 52.4 − 50.1, 49.0 − 50.1.
    let estimates = read_back(&svg, |l| {
        l.contains("class=\"estimate\"").then(|| attr(l, "cx"))
    });
    // Coordinates are written to 0.01 px over about 50 px per unit.
    for (got, want) in estimates.iter().zip([0.64, 2.3, -1.1]) {
        assert!((got - want).abs() < 1e-3, "estimate {got}, expected {want}");
    }
    assert_eq!(estimates.len(), 3);
    let margins = read_back(&svg, |l| {
        l.contains("stroke-dasharray=\"6 4\"")
            .then(|| attr(l, "x1"))
    });
    assert_eq!(margins.len(), 2);
    assert!((margins[0] + 2.0).abs() < 1e-3 && (margins[1] - 2.0).abs() < 1e-3);
}
