//! PNG versions of the charts: the SVG rasterised with resvg (pure Rust), with the
//! DejaVu Sans font shipped in the binary, so text renders the same on every machine
//! whatever fonts it has (the font's licence is in static/fonts/).

use resvg::{tiny_skia, usvg};
use std::sync::{Arc, LazyLock};

const SANS: &[u8] = include_bytes!("../../static/fonts/DejaVuSans.ttf");
const SANS_BOLD: &[u8] = include_bytes!("../../static/fonts/DejaVuSans-Bold.ttf");

/// The font database, built once: parsing the fonts on every chart would waste time.
static FONTS: LazyLock<Arc<usvg::fontdb::Database>> = LazyLock::new(|| {
    let mut db = usvg::fontdb::Database::new();
    db.load_font_data(SANS.to_vec());
    db.load_font_data(SANS_BOLD.to_vec());
    // The charts name the generic family `sans-serif`.
    db.set_sans_serif_family("DejaVu Sans");
    Arc::new(db)
});

/// Rasterise an SVG document to PNG at `scale` times its pixel size (2.0 for sharp
/// images on high-density screens and in reports).
///
/// Errors: a document that is not SVG, or a size of zero.
pub fn svg_to_png(svg: &str, scale: f32) -> Result<Vec<u8>, String> {
    let options = usvg::Options {
        fontdb: Arc::clone(&FONTS),
        ..usvg::Options::default()
    };
    let tree = usvg::Tree::from_str(svg, &options).map_err(|e| format!("not a chart: {e}"))?;
    let size = tree
        .size()
        .to_int_size()
        .scale_by(scale)
        .ok_or_else(|| "the chart has no size".to_string())?;
    let mut pixmap = tiny_skia::Pixmap::new(size.width(), size.height())
        .ok_or_else(|| "the chart has no size".to_string())?;
    pixmap.fill(tiny_skia::Color::WHITE);
    resvg::render(
        &tree,
        tiny_skia::Transform::from_scale(scale, scale),
        &mut pixmap.as_mut(),
    );
    pixmap
        .encode_png()
        .map_err(|e| format!("cannot encode PNG: {e}"))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Width and height from a PNG's IHDR chunk (bytes 16-23, big-endian).
    fn png_size(png: &[u8]) -> (u32, u32) {
        let be = |b: &[u8]| u32::from_be_bytes([b[0], b[1], b[2], b[3]]);
        (be(&png[16..20]), be(&png[20..24]))
    }

    const SVG: &str = r##"<svg width="200" height="100" viewBox="0 0 200 100" xmlns="http://www.w3.org/2000/svg">
        <rect x="10" y="10" width="50" height="50" fill="#1f6f78"/>
        <text x="80" y="50" font-family="sans-serif" font-size="20">Age (Ma)</text></svg>"##;

    #[test]
    fn a_chart_becomes_a_png_of_the_scaled_size() {
        let png = svg_to_png(SVG, 2.0).unwrap();
        assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n");
        assert_eq!(png_size(&png), (400, 200));
    }

    #[test]
    fn text_is_drawn_with_the_shipped_font() {
        // The same picture without its label must differ: the label's glyphs were drawn.
        let without_text = SVG.replace("Age (Ma)", "");
        assert_ne!(
            svg_to_png(SVG, 1.0).unwrap(),
            svg_to_png(&without_text, 1.0).unwrap()
        );
    }

    #[test]
    fn something_that_is_not_svg_is_refused() {
        assert!(svg_to_png("not a chart", 1.0).is_err());
    }
}
