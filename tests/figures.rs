//! Figures: deterministic bytes, real PNG pixels with real text, every
//! letter and level label present, and marks at the right positions.

use sheaf::compile::{Built, DiskWorld, compile};
use sheaf::render::Format;
use std::path::Path;

fn build(format: Format, front: &str) -> Built {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/cases/figures");
    let doc = std::fs::read_to_string(dir.join("report.md")).expect("doc");
    let doc = format!("{front}{doc}");
    compile(
        "report.md",
        doc.as_bytes(),
        &DiskWorld { base: dir },
        format,
    )
    .unwrap_or_else(|d| panic!("{d}"))
}

fn file<'a>(b: &'a Built, suffix: &str) -> &'a [u8] {
    &b.files
        .iter()
        .find(|(n, _)| n.ends_with(suffix))
        .unwrap_or_else(|| panic!("no {suffix}"))
        .1
}

#[test]
fn same_inputs_give_identical_svg_and_png() {
    let (a, b) = (build(Format::Markdown, ""), build(Format::Markdown, ""));
    assert_eq!(a.files, b.files);
    let front = "---\nfigures: png\ndpi: 150\n---\n";
    let (a, b) = (
        build(Format::Markdown, front),
        build(Format::Markdown, front),
    );
    assert_eq!(a.files, b.files);
    assert!(a.files.iter().all(|(n, _)| n.ends_with(".png")));
}

/// Decodes a PNG and returns (width, height, RGBA pixels).
fn decode(bytes: &[u8]) -> (u32, u32, Vec<u8>) {
    let pixmap = resvg::tiny_skia::Pixmap::decode_png(bytes).expect("a valid PNG");
    (pixmap.width(), pixmap.height(), pixmap.data().to_vec())
}

fn dark_pixels(rgba: &[u8]) -> usize {
    rgba.chunks(4)
        .filter(|p| u32::from(p[0]) + u32::from(p[1]) + u32::from(p[2]) < 3 * 128)
        .count()
}

#[test]
fn png_has_the_stated_size_and_really_contains_text() {
    let built = build(Format::Markdown, "---\nfigures: png\ndpi: 192\n---\n");
    let (w, h, rgba) = decode(file(&built, "growth-box.png"));
    // 480 × 320 SVG units at 192 dpi (2 pixels per unit at the 96-dpi base).
    assert_eq!((w, h), (960, 640));
    let dark = dark_pixels(&rgba);
    assert!(
        dark > 2000,
        "the figure is nearly blank: {dark} dark pixels"
    );
    // The same figure without its text must lose many dark pixels: proof that
    // the bundled font was found and the labels drawn.
    let svg = String::from_utf8(
        build(Format::Markdown, "")
            .files
            .iter()
            .find(|(n, _)| n.ends_with("growth-box.svg"))
            .expect("svg")
            .1
            .clone(),
    )
    .expect("utf-8");
    let no_text: String = svg
        .lines()
        .filter(|l| !l.starts_with("<text"))
        .collect::<Vec<_>>()
        .join("\n");
    let (_, _, bare) = decode(&sheaf::figure::png(&no_text, 192).expect("renders"));
    assert!(
        dark > dark_pixels(&bare) + 1000,
        "text adds {} dark pixels",
        dark - dark_pixels(&bare)
    );
}

fn texts(svg: &str, class: &str) -> Vec<(f64, String)> {
    svg.lines()
        .filter(|l| l.starts_with("<text") && l.contains(&format!("class=\"{class}\"")))
        .map(|l| {
            let y: f64 = attr(l, "y").parse().expect("y");
            let content = l
                .split('>')
                .nth(1)
                .and_then(|t| t.split('<').next())
                .unwrap_or("")
                .to_string();
            (y, content)
        })
        .collect()
}

fn attr<'a>(line: &'a str, name: &str) -> &'a str {
    let key = format!(" {name}=\"");
    let start = line.find(&key).expect("attribute") + key.len();
    &line[start..start + line[start..].find('"').expect("closing quote")]
}

#[test]
fn letters_and_level_labels_are_in_the_svg() {
    let built = build(Format::Markdown, "");
    let svg = String::from_utf8(file(&built, "growth-box.svg").to_vec()).expect("utf-8");
    let labels: Vec<String> = texts(&svg, "xtick").into_iter().map(|(_, t)| t).collect();
    assert_eq!(labels, vec!["ctrl", "trt1", "trt2"]);
    // Letters (METHODS 6.4): ctrl ab, trt1 b, trt2 a.
    let letters: Vec<String> = texts(&svg, "letters").into_iter().map(|(_, t)| t).collect();
    assert_eq!(letters, vec!["ab", "b", "a"]);
    assert!(svg.contains("<title id=\"growth-box-title\">Figure 1."));
    assert!(svg.contains("<desc id=\"growth-box-desc\">"));
    assert!(
        !svg.contains("/work/") && !svg.contains("/tmp/"),
        "no machine paths in figures"
    );
    let inter = String::from_utf8(file(&built, "warp-interaction.svg").to_vec()).expect("utf-8");
    let legend: Vec<String> = texts(&inter, "legend")
        .into_iter()
        .map(|(_, t)| t)
        .collect();
    assert_eq!(legend, vec!["L", "M", "H"]);
}

#[test]
fn mean_markers_sit_at_the_level_means() {
    // Source: METHODS 6.1 (Dobson): means 5.032, 4.661, 5.526.
    let built = build(Format::Markdown, "");
    let svg = String::from_utf8(file(&built, "growth-means.svg").to_vec()).expect("utf-8");
    // The y axis from its tick labels: two ticks fix the linear map.
    let ticks: Vec<(f64, f64)> = texts(&svg, "ytick")
        .into_iter()
        .map(|(y, t)| (y - 4.0, t.parse::<f64>().expect("tick value")))
        .collect();
    let ((p0, v0), (p1, v1)) = (ticks[0], ticks[ticks.len() - 1]);
    let per_pixel = (v1 - v0) / (p1 - p0);
    let value_at = |p: f64| v0 + (p - p0) * per_pixel;
    let markers: Vec<f64> = svg
        .lines()
        .filter(|l| l.starts_with("<circle") && l.contains("class=\"mean\""))
        .map(|l| attr(l, "cy").parse().expect("cy"))
        .collect();
    assert_eq!(markers.len(), 3);
    for (cy, mean) in markers.iter().zip([5.032, 4.661, 5.526]) {
        // Within half a pixel, as the issue asks.
        assert!(
            (value_at(*cy) - mean).abs() <= 0.5 * per_pixel.abs(),
            "marker at {} for mean {mean}",
            value_at(*cy)
        );
    }
}

#[test]
fn html_inlines_svg_and_results_record_figures() {
    let built = build(Format::Html, "");
    let html = String::from_utf8(built.report.clone()).expect("utf-8");
    assert_eq!(html.matches("<svg xmlns").count(), 6);
    assert!(built.files.is_empty());
    let r: serde_json::Value = serde_json::from_slice(&built.results).expect("json");
    let figs = r["blocks"][0]["figures"].as_array().expect("figures");
    assert_eq!(figs.len(), 5);
    assert_eq!(figs[0]["id"], "growth-box");
    assert_eq!(figs[0]["kind"], "box");
    assert!(figs[0]["file"].is_null());
    assert_eq!(figs[0]["sha256"].as_str().expect("hash").len(), 64);
    let md = build(Format::Markdown, "");
    let r: serde_json::Value = serde_json::from_slice(&md.results).expect("json");
    assert_eq!(
        r["blocks"][0]["figures"][0]["file"],
        "report-growth-box.svg"
    );
}

/// Builds `doc` as Markdown with one data file beside it in a temporary
/// folder: the built files, or the error's text.
fn build_with(doc: &str, (name, data): (&str, &str)) -> Result<Built, String> {
    let dir = tempfile::tempdir().expect("temp dir");
    std::fs::write(dir.path().join(name), data).expect("data");
    compile(
        "report.md",
        doc.as_bytes(),
        &DiskWorld {
            base: dir.path().to_path_buf(),
        },
        Format::Markdown,
    )
    .map_err(|d| d.to_string())
}

/// sleepstudy (tests/data/open, complete and balanced, Days saturated): the
/// mixed model's mean at each day is the day's observed mean, computed
/// here by plain sums. The profile's markers sit there (half a pixel), and
/// `plot: subjects` adds one faint line per subject (18).
#[test]
fn profile_markers_sit_at_the_day_means_with_a_line_per_subject() {
    let csv = std::fs::read_to_string(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/open/sleepstudy.csv"),
    )
    .expect("data");
    let doc = "# Sleep\n\n```anova\nid: sleep\ndata: sleep.csv\nmodel: Reaction ~ Days\nsubject: Subject\ncompare: none\nplot: profile, subjects\n```\n";
    let built = build_with(doc, ("sleep.csv", &csv)).unwrap_or_else(|d| panic!("{d}"));
    let mut sums = [(0.0, 0usize); 10];
    for line in csv.lines().skip(1).filter(|l| !l.trim().is_empty()) {
        let f: Vec<&str> = line.split(',').collect();
        let day: usize = f[1].parse().unwrap();
        sums[day].0 += f[0].parse::<f64>().unwrap();
        sums[day].1 += 1;
    }
    let svg = String::from_utf8(file(&built, "sleep-profile.svg").to_vec()).expect("utf-8");
    let ticks: Vec<(f64, f64)> = texts(&svg, "ytick")
        .into_iter()
        .map(|(y, t)| (y - 4.0, t.parse::<f64>().expect("tick value")))
        .collect();
    let ((p0, v0), (p1, v1)) = (ticks[0], ticks[ticks.len() - 1]);
    let per_pixel = (v1 - v0) / (p1 - p0);
    let markers: Vec<f64> = svg
        .lines()
        .filter(|l| l.starts_with("<circle") && l.contains("class=\"mean\""))
        .map(|l| attr(l, "cy").parse().expect("cy"))
        .collect();
    assert_eq!(markers.len(), 10);
    for (cy, (sum, n)) in markers.iter().zip(sums) {
        let mean = sum / n as f64;
        let at = v0 + (cy - p0) * per_pixel;
        assert!((at - mean).abs() <= 0.5 * per_pixel.abs(), "{at} vs {mean}");
    }
    assert!(
        !svg.contains("stroke-opacity"),
        "the plain profile has no subject lines"
    );
    let traced = String::from_utf8(file(&built, "sleep-subjects.svg").to_vec()).expect("utf-8");
    assert_eq!(traced.matches("stroke-opacity").count(), 18);
}

#[test]
fn a_profile_needs_a_subject() {
    let doc = "# T\n\n```anova\ndata: d.csv\nmodel: y ~ g * t\nplot: profile\n```\n";
    let err = build_with(doc, ("d.csv", "g,t,y\na,1,1\n"))
        .map(|_| ())
        .unwrap_err();
    assert!(
        err.contains("`plot: profile` draws repeated measures"),
        "{err}"
    );
}

/// Times named by numbers stand in proportion on the profile's axis: weeks
/// 0, 1, 2 and 4 (invented data, 5 animals) give tick gaps of 1 : 1 : 2.
#[test]
fn profile_times_are_spaced_in_proportion() {
    let mut csv = String::from("animal,week,w\n");
    for a in 0u32..5 {
        for (k, week) in [0u32, 1, 2, 4].into_iter().enumerate() {
            let wobble = f64::from((a + k as u32) % 3) * 0.4;
            let w = 10.0 + 2.0 * f64::from(week) + f64::from(a) * 0.7 + wobble;
            csv.push_str(&format!("a{a},{week},{w:.1}\n"));
        }
    }
    let doc = "# T\n\n```anova\nid: g\ndata: d.csv\nmodel: w ~ week\nsubject: animal\ncompare: none\nplot: profile\n```\n";
    let built = build_with(doc, ("d.csv", &csv)).unwrap_or_else(|d| panic!("{d}"));
    let svg = String::from_utf8(file(&built, "g-profile.svg").to_vec()).expect("utf-8");
    let xs: Vec<f64> = svg
        .lines()
        .filter(|l| l.starts_with("<text") && l.contains("class=\"xtick\""))
        .map(|l| attr(l, "x").parse().expect("x"))
        .collect();
    assert_eq!(xs.len(), 4);
    let (g1, g2, g3) = (xs[1] - xs[0], xs[2] - xs[1], xs[3] - xs[2]);
    // Coordinates are printed to 0.01 px.
    assert!(
        (g1 - g2).abs() < 0.02 && (g3 - 2.0 * g1).abs() < 0.03,
        "{xs:?}"
    );
    assert!(svg.contains("spaced in proportion to its values"));
}
