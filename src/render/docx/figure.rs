//! Figures: the PNG (drawn at the front matter's `dpi`) as an inline
//! picture at its natural size, scaled down to the text width and to half
//! the text height, with the SVG beside it for word processors that show
//! SVG (the PNG stays as their fallback), and the caption below.

use super::package::Relations;
use super::xml::{Props, numbered_caption, paragraph};
use crate::escape::ooxml_escape;
use crate::render::view::FigureView;

/// English Metric Units per twentieth of a point and per pixel at 96 dpi.
const EMU_PER_TWIP: u64 = 635;
const EMU_PER_PIXEL: u64 = 9525;

/// The extension that marks an SVG picture (ECMA-376 extension list).
const SVG_EXTENSION: &str = "{96DAC541-7B7A-43D3-8B79-37D633B846F1}";

/// A PNG's width and height in pixels, from its header chunk.
fn png_size(png: &[u8]) -> Option<(u64, u64)> {
    let ihdr = png.get(16..24)?;
    let width = u32::from_be_bytes(ihdr[..4].try_into().ok()?);
    let height = u32::from_be_bytes(ihdr[4..].try_into().ok()?);
    (width > 0 && height > 0).then_some((u64::from(width), u64::from(height)))
}

/// The picture's size in EMU: drawn at 96 pixels per inch (`dpi` pixels in
/// the PNG make one inch), no wider than the text and no taller than half
/// of it, proportions kept.
fn extent(png: &[u8], dpi: u32, text_area: (u32, u32)) -> (u64, u64) {
    let (width, height) = png_size(png).unwrap_or((1, 1));
    let dpi = u64::from(dpi.max(1));
    let (mut cx, mut cy) = (
        width * 96 * EMU_PER_PIXEL / dpi,
        height * 96 * EMU_PER_PIXEL / dpi,
    );
    let max_x = u64::from(text_area.0) * EMU_PER_TWIP;
    let max_y = u64::from(text_area.1) * EMU_PER_TWIP / 2;
    if cx > max_x {
        cy = cy * max_x / cx;
        cx = max_x;
    }
    if cy > max_y {
        cx = cx * max_y / cy;
        cy = max_y;
    }
    (cx, cy)
}

/// The figure's paragraphs: the picture, then its caption. `number` is the
/// picture's id in the document (unique, from 1).
pub(super) fn figure(
    view: &FigureView,
    png: Vec<u8>,
    dpi: u32,
    number: usize,
    text_area: (u32, u32),
    relations: &mut Relations,
) -> String {
    let (cx, cy) = extent(&png, dpi, text_area);
    let stem = format!("figure-{number}");
    let png_id = relations.image(&format!("{stem}.png"), png);
    let svg = view.svg.as_ref().map(|svg| {
        let id = relations.image(&format!("{stem}.svg"), svg.clone().into_bytes());
        format!(
            r#"<a:extLst><a:ext uri="{SVG_EXTENSION}"><asvg:svgBlip xmlns:asvg="http://schemas.microsoft.com/office/drawing/2016/SVG/main" r:embed="{id}"/></a:ext></a:extLst>"#
        )
    });
    let description = ooxml_escape(&view.caption);
    let picture = format!(
        r#"<w:r><w:drawing><wp:inline distT="0" distB="0" distL="0" distR="0"><wp:extent cx="{cx}" cy="{cy}"/><wp:docPr id="{number}" name="{stem}" descr="{description}"/><wp:cNvGraphicFramePr><a:graphicFrameLocks xmlns:a="http://schemas.openxmlformats.org/drawingml/2006/main" noChangeAspect="1"/></wp:cNvGraphicFramePr><a:graphic xmlns:a="http://schemas.openxmlformats.org/drawingml/2006/main"><a:graphicData uri="http://schemas.openxmlformats.org/drawingml/2006/picture"><pic:pic xmlns:pic="http://schemas.openxmlformats.org/drawingml/2006/picture"><pic:nvPicPr><pic:cNvPr id="{number}" name="{stem}.png" descr="{description}"/><pic:cNvPicPr/></pic:nvPicPr><pic:blipFill><a:blip r:embed="{png_id}">{}</a:blip><a:stretch><a:fillRect/></a:stretch></pic:blipFill><pic:spPr><a:xfrm><a:off x="0" y="0"/><a:ext cx="{cx}" cy="{cy}"/></a:xfrm><a:prstGeom prst="rect"><a:avLst/></a:prstGeom></pic:spPr></pic:pic></a:graphicData></a:graphic></wp:inline></w:drawing></w:r>"#,
        svg.unwrap_or_default()
    );
    let mut out = paragraph(&Props::styled("Figure"), &picture);
    out.push_str(&paragraph(
        &Props::styled("FigureCaption"),
        &numbered_caption(&view.caption, "Figure"),
    ));
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn pictures_keep_their_proportions_within_the_text() {
        // A PNG header claiming 1200 × 600 pixels at 150 dpi: 8 × 4 inches.
        let mut png = vec![0u8; 24];
        png[16..20].copy_from_slice(&1200u32.to_be_bytes());
        png[20..24].copy_from_slice(&600u32.to_be_bytes());
        let (cx, cy) = extent(&png, 150, (20_000, 20_000));
        assert_eq!((cx, cy), (8 * 914_400, 4 * 914_400));
        // On a text area 9072 twips wide (A4 less 25 mm margins) it is
        // scaled to that width, half as tall.
        let (cx, cy) = extent(&png, 150, (9072, 13_998));
        assert_eq!(cx, 9072 * 635);
        assert_eq!(cy, cx / 2);
    }
}
