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
