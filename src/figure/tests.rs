//! Unit tests for `figure`.

use super::*;

#[test]
fn the_bundled_font_measures_text() {
    let w = text_width("trt2", 12.0);
    assert!(w > 15.0 && w < 40.0, "{w}");
    assert!(text_width("WWWW", 12.0) > text_width("iiii", 12.0));
}

#[test]
fn ticks_are_round_and_cover_the_range() {
    assert_eq!(nice_ticks(3.59, 6.31, 5), vec![3.0, 4.0, 5.0, 6.0, 7.0]);
    assert_eq!(
        nice_ticks(3.59, 4.31, 5),
        vec![3.4, 3.6, 3.8, 4.0, 4.2, 4.4]
    );
    let t = nice_ticks(0.0, 97.0, 5);
    assert_eq!((t[0], *t.last().expect("ticks")), (0.0, 100.0));
    assert_eq!(tick_label(4.5, 0.5), "4.5");
}

#[test]
fn scales_invert() {
    let s = Scale {
        d0: 0.0,
        d1: 10.0,
        p0: 300.0,
        p1: 20.0,
    };
    assert!((s.unmap(s.map(3.7)) - 3.7).abs() < 1e-12);
}

#[test]
fn figure_texts_are_cut_to_a_bounded_length() {
    assert_eq!(figure_text("short"), "short");
    let exact: String = "é".repeat(FIGURE_TEXT_CHARS);
    assert_eq!(figure_text(&exact), exact.as_str());
    let long: String = "ü".repeat(1_000_000);
    let shown = figure_text(&long);
    assert_eq!(shown.chars().count(), FIGURE_TEXT_CHARS);
    assert!(shown.ends_with('…'));
    // Measuring and drawing use the cut text, so layout sees what is drawn.
    assert_eq!(text_width(&long, 11.0), text_width(&shown, 11.0));
    let mut svg = Svg::new("t", 10.0, 10.0, "t", "t");
    svg.text(0.0, 0.0, &long, "start", 11.0, None, "xtick");
    assert!(svg.out.len() < 1000);
}
