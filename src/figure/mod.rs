//! Figures stage: deterministic SVG drawn by sheaf itself, text measured
//! with the bundled DejaVu Sans, and PNG rendered by resvg with that same
//! font, so that every machine produces the same bytes.
//!
//! Colours follow the Okabe & Ito (2008) colour-blind-safe palette
//! ("Color Universal Design"), and series also differ by marker shape, so
//! figures stay readable in greyscale and in print.

pub mod dense;
mod dose;
mod equivalence;
pub mod linear;
pub mod plots;
mod trend;

use crate::escape::xml_escape;
use crate::outcome::BlockResult;
use crate::outcome::traits::figure_stem;
use ab_glyph::{Font, FontRef, PxScale, ScaleFont};
use std::fmt::Write as _;
use std::sync::OnceLock;

/// DejaVu Sans (Bitstream Vera licence; see assets/fonts/DejaVuSans-LICENSE.txt).
pub static FONT_BYTES: &[u8] = include_bytes!("../../assets/fonts/DejaVuSans.ttf");
/// The family name the SVG asks for; PNG rendering maps it to the bundled font.
pub const FONT_FAMILY: &str = "DejaVu Sans";

/// Okabe-Ito palette without black (which is kept for axes and text).
pub const PALETTE: [&str; 7] = [
    "#0072B2", "#E69F00", "#009E73", "#D55E00", "#CC79A7", "#56B4E9", "#F0E442",
];

/// A figure and, for Markdown output, the file it is written to.
#[derive(Debug, Clone)]
pub struct PlacedFigure {
    pub figure: Figure,
    pub file: Option<String>,
}

/// A drawn figure.
#[derive(Debug, Clone, PartialEq)]
pub struct Figure {
    /// Document-wide id, e.g. `growth-box`.
    pub id: String,
    /// The kind as written in `plot`.
    pub kind: &'static str,
    pub number: usize,
    pub caption: String,
    pub svg: String,
}

fn font() -> &'static FontRef<'static> {
    static FONT: OnceLock<Option<FontRef<'static>>> = OnceLock::new();
    // The bundled font is a valid TrueType file (checked by a test), so this
    // only fails if the binary itself is corrupt.
    FONT.get_or_init(|| FontRef::try_from_slice(FONT_BYTES).ok())
        .as_ref()
        .unwrap_or_else(|| unreachable_font())
}

#[cold]
fn unreachable_font() -> ! {
    // A corrupt binary cannot draw anything; stop rather than mis-measure.
    std::process::abort()
}

/// The most characters of one text a figure draws; longer texts (level names
/// can be anything a data file holds) end in "…". Tables keep the full text.
/// Laying out text costs more than linear time in its length in the PNG
/// renderer (a 100,000-character name took a minute), and no axis can show
/// more than this anyway.
pub const FIGURE_TEXT_CHARS: usize = 60;

/// `text` as a figure draws it: whole, or cut to [`FIGURE_TEXT_CHARS`] with
/// a closing ellipsis.
pub fn figure_text(text: &str) -> std::borrow::Cow<'_, str> {
    match text.char_indices().nth(FIGURE_TEXT_CHARS) {
        None => std::borrow::Cow::Borrowed(text),
        Some(_) => {
            let cut = text
                .char_indices()
                .nth(FIGURE_TEXT_CHARS - 1)
                .map_or(text.len(), |(i, _)| i);
            std::borrow::Cow::Owned(format!("{}…", &text[..cut]))
        }
    }
}

/// Width in pixels of `text` at `size` px in the bundled font, as a figure
/// draws it (see [`figure_text`]).
pub fn text_width(text: &str, size: f32) -> f32 {
    let f = font().as_scaled(PxScale::from(size));
    let mut width = 0.0;
    let mut last = None;
    for c in figure_text(text).chars() {
        let g = f.glyph_id(c);
        if let Some(prev) = last {
            width += f.kern(prev, g);
        }
        width += f.h_advance(g);
        last = Some(g);
    }
    width
}

/// Fixed two-decimal coordinates: short, and identical on every platform.
pub fn c(v: f64) -> String {
    let s = format!("{v:.2}");
    if s == "-0.00" { "0.00".into() } else { s }
}

/// Round tick values covering [lo, hi]: steps of 1, 2 or 5 × 10ᵏ.
pub fn nice_ticks(lo: f64, hi: f64, target: usize) -> Vec<f64> {
    let (lo, hi) = if hi > lo {
        (lo, hi)
    } else {
        (lo - 1.0, hi + 1.0)
    };
    let raw = (hi - lo) / target.max(2) as f64;
    let exponent = raw.log10().floor() as i32;
    let magnitude = 10f64.powi(exponent);
    let mantissa = [1.0, 2.0, 5.0, 10.0]
        .into_iter()
        .find(|m| m * magnitude >= raw)
        .unwrap_or(10.0);
    let step = mantissa * magnitude;
    let start = (lo / step).floor() as i64;
    let end = (hi / step).ceil() as i64;
    // i·m / 10^|e| rounds once, so 17 × 0.2 prints as 3.4, not 3.4000000000000004.
    let at = |i: i64| {
        if exponent < 0 {
            i as f64 * mantissa / 10f64.powi(-exponent)
        } else {
            i as f64 * step
        }
    };
    (start..=end).map(at).collect()
}

/// Tick labels with just enough decimals for the step.
pub fn tick_label(v: f64, step: f64) -> String {
    let decimals = if step >= 1.0 {
        0
    } else {
        (-step.log10().floor()) as u32
    };
    crate::format::fixed(v, decimals)
}

/// A linear map from data values to pixels.
#[derive(Debug, Clone, Copy)]
pub struct Scale {
    pub d0: f64,
    pub d1: f64,
    pub p0: f64,
    pub p1: f64,
}

impl Scale {
    /// From the first to the last tick, onto pixels `p0` to `p1`.
    pub fn spanning(ticks: &[f64], p0: f64, p1: f64) -> Scale {
        Scale {
            d0: ticks.first().copied().unwrap_or(0.0),
            d1: ticks.last().copied().unwrap_or(1.0),
            p0,
            p1,
        }
    }

    pub fn map(&self, v: f64) -> f64 {
        self.p0 + (v - self.d0) / (self.d1 - self.d0) * (self.p1 - self.p0)
    }

    /// The data value at a pixel (the inverse map), for tests.
    pub fn unmap(&self, p: f64) -> f64 {
        self.d0 + (p - self.p0) / (self.p1 - self.p0) * (self.d1 - self.d0)
    }
}

/// A small SVG writer: the document skeleton, with escaping in one place.
pub struct Svg {
    pub out: String,
}

// Drawing primitives take their coordinates and style flat, as SVG does.
#[allow(clippy::too_many_arguments)]
impl Svg {
    pub fn new(id: &str, width: f64, height: f64, title: &str, desc: &str) -> Self {
        let mut out = String::new();
        let _ = write!(
            out,
            "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{w}\" height=\"{h}\" viewBox=\"0 0 {w} {h}\" role=\"img\" aria-labelledby=\"{id}-title {id}-desc\" font-family=\"{FONT_FAMILY}, sans-serif\" font-size=\"12\">\n<title id=\"{id}-title\">{}</title>\n<desc id=\"{id}-desc\">{}</desc>\n<rect width=\"{w}\" height=\"{h}\" fill=\"#ffffff\"/>\n",
            xml_escape(title),
            xml_escape(desc),
            w = c(width),
            h = c(height),
            id = xml_escape(id)
        );
        Svg { out }
    }

    pub fn line(
        &mut self,
        x1: f64,
        y1: f64,
        x2: f64,
        y2: f64,
        stroke: &str,
        width: f64,
        dash: Option<&str>,
    ) {
        let dash = dash.map_or(String::new(), |d| format!(" stroke-dasharray=\"{d}\""));
        let _ = writeln!(
            self.out,
            "<line x1=\"{}\" y1=\"{}\" x2=\"{}\" y2=\"{}\" stroke=\"{stroke}\" stroke-width=\"{}\"{dash}/>",
            c(x1),
            c(y1),
            c(x2),
            c(y2),
            c(width)
        );
    }

    pub fn rect(&mut self, x: f64, y: f64, w: f64, h: f64, fill: &str, stroke: &str) {
        let _ = writeln!(
            self.out,
            "<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" fill=\"{fill}\" stroke=\"{stroke}\" stroke-width=\"1.00\"/>",
            c(x),
            c(y),
            c(w),
            c(h)
        );
    }

    /// A marker: circle, square, triangle or diamond by `shape` index.
    pub fn marker(
        &mut self,
        x: f64,
        y: f64,
        r: f64,
        shape: usize,
        fill: &str,
        stroke: &str,
        class: &str,
    ) {
        let attrs =
            format!("fill=\"{fill}\" stroke=\"{stroke}\" stroke-width=\"1.00\" class=\"{class}\"");
        let _ = match shape % 4 {
            0 => writeln!(
                self.out,
                "<circle cx=\"{}\" cy=\"{}\" r=\"{}\" {attrs}/>",
                c(x),
                c(y),
                c(r)
            ),
            1 => writeln!(
                self.out,
                "<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" {attrs}/>",
                c(x - r),
                c(y - r),
                c(2.0 * r),
                c(2.0 * r)
            ),
            2 => writeln!(
                self.out,
                "<polygon points=\"{},{} {},{} {},{}\" {attrs}/>",
                c(x),
                c(y - 1.2 * r),
                c(x - 1.1 * r),
                c(y + 0.8 * r),
                c(x + 1.1 * r),
                c(y + 0.8 * r)
            ),
            _ => writeln!(
                self.out,
                "<polygon points=\"{},{} {},{} {},{} {},{}\" {attrs}/>",
                c(x),
                c(y - 1.3 * r),
                c(x + 1.3 * r),
                c(y),
                c(x),
                c(y + 1.3 * r),
                c(x - 1.3 * r),
                c(y)
            ),
        };
    }

    pub fn polyline(&mut self, points: &[(f64, f64)], stroke: &str, width: f64) {
        self.polyline_with(points, stroke, width, "");
    }

    /// A thin, translucent line behind the main marks (one subject's
    /// observations under the means).
    pub fn faint_polyline(&mut self, points: &[(f64, f64)], stroke: &str) {
        self.polyline_with(points, stroke, 0.8, " stroke-opacity=\"0.35\"");
    }

    fn polyline_with(&mut self, points: &[(f64, f64)], stroke: &str, width: f64, extra: &str) {
        let pts: Vec<String> = points
            .iter()
            .map(|(x, y)| format!("{},{}", c(*x), c(*y)))
            .collect();
        let _ = writeln!(
            self.out,
            "<polyline points=\"{}\" fill=\"none\" stroke=\"{stroke}\" stroke-width=\"{}\"{extra}/>",
            pts.join(" "),
            c(width)
        );
    }

    /// Text; `anchor` is start, middle or end; `rotate` in degrees about the anchor.
    pub fn text(
        &mut self,
        x: f64,
        y: f64,
        text: &str,
        anchor: &str,
        size: f64,
        rotate: Option<f64>,
        class: &str,
    ) {
        let transform = rotate.map_or(String::new(), |a| {
            format!(" transform=\"rotate({} {} {})\"", c(a), c(x), c(y))
        });
        let _ = writeln!(
            self.out,
            "<text x=\"{}\" y=\"{}\" text-anchor=\"{anchor}\" font-size=\"{}\" fill=\"#1d1d1f\" class=\"{class}\"{transform}>{}</text>",
            c(x),
            c(y),
            c(size),
            xml_escape(&figure_text(text))
        );
    }

    pub fn finish(mut self) -> String {
        self.out.push_str("</svg>\n");
        self.out
    }
}

/// Renders an SVG to PNG at `dpi` (96 dpi = 1 pixel per SVG unit), with the
/// bundled font as the only font and `sans-serif` mapped to it.
pub fn png(svg: &str, dpi: u32) -> Result<Vec<u8>, String> {
    let mut options = resvg::usvg::Options::default();
    let db = options.fontdb_mut();
    db.load_font_data(FONT_BYTES.to_vec());
    db.set_sans_serif_family(FONT_FAMILY);
    let tree = resvg::usvg::Tree::from_str(svg, &options).map_err(|e| e.to_string())?;
    let scale = dpi as f32 / 96.0;
    let size = tree
        .size()
        .to_int_size()
        .scale_by(scale)
        .ok_or("figure too small")?;
    let mut pixmap =
        resvg::tiny_skia::Pixmap::new(size.width(), size.height()).ok_or("figure too large")?;
    resvg::render(
        &tree,
        resvg::tiny_skia::Transform::from_scale(scale, scale),
        &mut pixmap.as_mut(),
    );
    pixmap.encode_png().map_err(|e| e.to_string())
}

/// Draws every figure the blocks ask for, numbering them through the document.
pub fn draw_all(results: &[BlockResult]) -> Vec<Vec<Figure>> {
    let mut number = 1;
    results
        .iter()
        .map(|r| match r {
            BlockResult::Power(p) => plots::power_figures(p, &mut number),
            BlockResult::Linear(o) => linear::linear_figures(o, &mut number),
            BlockResult::Traits(t) => t
                .traits
                .iter()
                .flat_map(|x| {
                    let name = figure_stem(&t.id, &x.response);
                    linear::linear_figures_named(&x.outcome, &name, &mut number)
                })
                .collect(),
        })
        .collect()
}

#[cfg(test)]
#[path = "tests.rs"]
mod tests;
