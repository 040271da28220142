//! One drawing, three formats: the SVG as drawn, a PNG rendered from it (resvg), a PDF converted
//! from it (svg2pdf), both with the DejaVu fonts shipped in the binary, so that every machine
//! draws the same letters. With no font loaded the renderers drop every text silently: the
//! faces are loaded here and the sans-serif family set to them.

use super::FigureError;
use std::sync::{Arc, OnceLock};

/// A figure file format.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum FigureFormat {
    /// The drawing itself (the default).
    Svg,
    /// A raster image.
    Png,
    /// A vector page.
    Pdf,
}

impl FigureFormat {
    /// The file extension.
    pub fn extension(self) -> &'static str {
        match self {
            FigureFormat::Svg => "svg",
            FigureFormat::Png => "png",
            FigureFormat::Pdf => "pdf",
        }
    }

    /// Parses "svg", "png", "pdf" (any case).
    pub fn parse(text: &str) -> Option<Self> {
        match text.trim().to_ascii_lowercase().as_str() {
            "svg" => Some(FigureFormat::Svg),
            "png" => Some(FigureFormat::Png),
            "pdf" => Some(FigureFormat::Pdf),
            _ => None,
        }
    }
}

/// PNG resolution: 300 dpi at the drawing's print size, where one SVG pixel is 1/96 inch (the
/// CSS pixel), so a 900 px figure is 9.4 in wide and 2 812 px in the PNG.
pub const PNG_DPI: f64 = 300.0;

/// The font database: DejaVu Sans and Sans Bold, loaded once.
fn fonts() -> Arc<resvg::usvg::fontdb::Database> {
    static FONTS: OnceLock<Arc<resvg::usvg::fontdb::Database>> = OnceLock::new();
    FONTS
        .get_or_init(|| {
            let mut db = resvg::usvg::fontdb::Database::new();
            db.load_font_data(dejavu::sans::regular().to_vec());
            db.load_font_data(dejavu::sans::bold().to_vec());
            db.set_sans_serif_family("DejaVu Sans");
            Arc::new(db)
        })
        .clone()
}

fn tree(svg: &str) -> Result<resvg::usvg::Tree, FigureError> {
    let options = resvg::usvg::Options { fontdb: fonts(), ..resvg::usvg::Options::default() };
    resvg::usvg::Tree::from_str(svg, &options).map_err(|e| FigureError(format!("the SVG could not be read: {e}")))
}

/// The SVG rendered to PNG at [`PNG_DPI`], its resolution recorded in the file (pHYs).
pub fn to_png(svg: &str) -> Result<Vec<u8>, FigureError> {
    let tree = tree(svg)?;
    let scale = (PNG_DPI / 96.0) as f32;
    let size = tree.size().to_int_size().scale_by(scale).ok_or_else(|| FigureError("the figure is empty".into()))?;
    let mut pixmap = resvg::tiny_skia::Pixmap::new(size.width(), size.height())
        .ok_or_else(|| FigureError("the figure is too large to render".into()))?;
    pixmap.fill(resvg::tiny_skia::Color::WHITE);
    resvg::render(&tree, resvg::tiny_skia::Transform::from_scale(scale, scale), &mut pixmap.as_mut());
    let png = pixmap.encode_png().map_err(|e| FigureError(format!("PNG: {e}")))?;
    Ok(with_resolution(png, PNG_DPI))
}

/// The SVG as a one-page PDF, the page the drawing's size at 96 px to the inch.
pub fn to_pdf(svg: &str) -> Result<Vec<u8>, FigureError> {
    let tree = tree(svg)?;
    let page = svg2pdf::PageOptions { dpi: 96.0 };
    svg2pdf::to_pdf(&tree, svg2pdf::ConversionOptions::default(), page).map_err(|e| FigureError(format!("PDF: {e}")))
}

/// Inserts a pHYs chunk (pixels per metre) after the PNG's IHDR, so that viewers and word
/// processors read the resolution (PNG specification 1.2, 11.3.5.3).
fn with_resolution(png: Vec<u8>, dpi: f64) -> Vec<u8> {
    // Signature (8) + IHDR chunk (4 length + 4 type + 13 data + 4 CRC).
    const IHDR_END: usize = 8 + 25;
    if png.len() < IHDR_END {
        return png;
    }
    let per_metre = (dpi / 0.0254).round() as u32;
    let mut data = Vec::with_capacity(9);
    data.extend(per_metre.to_be_bytes());
    data.extend(per_metre.to_be_bytes());
    data.push(1); // unit: metre
    let mut chunk = Vec::with_capacity(21);
    chunk.extend((data.len() as u32).to_be_bytes());
    let typed: Vec<u8> = b"pHYs".iter().copied().chain(data.iter().copied()).collect();
    chunk.extend(&typed);
    chunk.extend(crc32(&typed).to_be_bytes());
    let mut out = Vec::with_capacity(png.len() + chunk.len());
    out.extend(&png[..IHDR_END]);
    out.extend(chunk);
    out.extend(&png[IHDR_END..]);
    out
}

/// CRC-32 (ISO-HDLC, the PNG chunk checksum).
fn crc32(bytes: &[u8]) -> u32 {
    let mut crc = 0xffff_ffffu32;
    for &b in bytes {
        crc ^= u32::from(b);
        for _ in 0..8 {
            crc = if crc & 1 != 0 { (crc >> 1) ^ 0xedb8_8320 } else { crc >> 1 };
        }
    }
    !crc
}

#[cfg(test)]
mod tests {
    use super::crc32;

    #[test]
    fn the_chunk_checksum_is_crc32() {
        // The CRC-32 check value of "123456789" (ISO-HDLC): 0xCBF43926.
        assert_eq!(crc32(b"123456789"), 0xcbf4_3926);
    }
}
