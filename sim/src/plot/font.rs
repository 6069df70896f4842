//! The font every plot draws its text with, compiled into the program.
//!
//! DejaVu Sans 2.37 (`sim/fonts/DejaVuSans.ttf`; Bitstream Vera licence with the DejaVu
//! changes in the public domain, which allows redistribution — the licence text is in
//! `sim/fonts/LICENSE-DejaVu.txt`). plotters' `ab_glyph` feature draws with it, so neither
//! fontconfig nor any system font is needed to build or run.

use std::sync::Once;

use plotters::style::FontStyle;

/// The font file.
pub static DEJAVU_SANS: &[u8] = include_bytes!("../../fonts/DejaVuSans.ttf");

/// Register the font under the family names the plots use ("sans-serif" and "DejaVu Sans").
/// Idempotent; cheap after the first call.
pub fn register() {
    static ONCE: Once = Once::new();
    ONCE.call_once(|| {
        for family in ["sans-serif", "DejaVu Sans"] {
            for style in [FontStyle::Normal, FontStyle::Bold] {
                // The file is compiled in and parsed by a test; a failure would leave text
                // undrawn, and the drawing then reports its own error.
                let _ = plotters::style::register_font(family, style, DEJAVU_SANS);
            }
        }
    });
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_embedded_font_parses_and_measures_text() {
        assert!(
            plotters::style::register_font("test-family", FontStyle::Normal, DEJAVU_SANS).is_ok()
        );
        register();
        let f = plotters::style::FontDesc::new(
            plotters::style::FontFamily::SansSerif,
            12.0,
            FontStyle::Normal,
        );
        let (w, h) = f.box_size("clamp force").unwrap_or((0, 0));
        assert!(w > 30 && h > 5, "{w}×{h}");
    }
}
