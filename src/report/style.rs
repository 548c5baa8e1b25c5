//! The report's one visual style: sizes, fonts, the palette and the sequential colour scale.
//! Every figure takes its look from here so that the figures read as one set.

use plotters::style::{Color, IntoFont};
use plotters::style::{RGBColor, ShapeStyle, TextStyle};

/// Figure size in SVG pixels; the page scales them down on narrow screens.
pub const WIDTH: u32 = 700;
pub const HEIGHT: u32 = 440;
/// Square figures (maps of angles, rose diagrams).
pub const SQUARE: u32 = 500;

pub const FONT: &str = "sans-serif";
pub const LABEL_PX: f64 = 16.0;
pub const AXIS_PX: f64 = 17.0;
pub const TITLE_PX: f64 = 20.0;

pub const INK: RGBColor = RGBColor(0x22, 0x22, 0x22);
pub const MUTED: RGBColor = RGBColor(0x6b, 0x6b, 0x6b);
pub const GRID: RGBColor = RGBColor(0xe3, 0xe3, 0xe3);
pub const PAPER: RGBColor = RGBColor(0xff, 0xff, 0xff);

/// Series colours, in order of use: injected/first, discovered/second, then others.
/// Chosen to stay distinct for the common colour-vision deficiencies (blue/orange first).
pub const SERIES: [RGBColor; 5] = [
    RGBColor(0x2b, 0x6c, 0x9e),
    RGBColor(0xd0, 0x64, 0x2a),
    RGBColor(0x3a, 0x8a, 0x50),
    RGBColor(0x7a, 0x4d, 0x9a),
    RGBColor(0x8a, 0x6d, 0x3b),
];

/// The null band of the analyses (the "what bias alone gives" region).
pub const BAND: RGBColor = RGBColor(0xb8, 0xc4, 0xcc);

pub fn series(k: usize) -> RGBColor {
    SERIES[k % SERIES.len()]
}

pub fn line(c: RGBColor, width: u32) -> ShapeStyle {
    c.stroke_width(width)
}

pub fn text(px: f64) -> TextStyle<'static> {
    (FONT, px).into_font().color(&INK)
}

pub fn muted_text(px: f64) -> TextStyle<'static> {
    (FONT, px).into_font().color(&MUTED)
}

/// Anchors of the sequential scale: pale sand to deep blue, monotonic in lightness so that
/// the order of the values survives greyscale printing.
const SCALE: [(f64, (u8, u8, u8)); 5] = [
    (0.0, (0xf6, 0xf1, 0xd8)),
    (0.25, (0xb4, 0xdc, 0xb4)),
    (0.5, (0x4f, 0xb0, 0x9f)),
    (0.75, (0x26, 0x72, 0x94)),
    (1.0, (0x1c, 0x2d, 0x5a)),
];

/// The sequential colour at `t` in [0, 1] (clamped), linear between the anchors.
pub fn sequential(t: f64) -> RGBColor {
    let t = if t.is_finite() { t.clamp(0.0, 1.0) } else { 0.0 };
    let k = SCALE
        .iter()
        .position(|(x, _)| *x >= t)
        .unwrap_or(SCALE.len() - 1)
        .max(1);
    let ((x0, c0), (x1, c1)) = (SCALE[k - 1], SCALE[k]);
    let u = (t - x0) / (x1 - x0);
    let mix = |a: u8, b: u8| (a as f64 + (b as f64 - a as f64) * u).round() as u8;
    RGBColor(mix(c0.0, c1.0), mix(c0.1, c1.1), mix(c0.2, c1.2))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sequential_scale_darkens_monotonically() {
        let lum = |c: RGBColor| 0.2126 * c.0 as f64 + 0.7152 * c.1 as f64 + 0.0722 * c.2 as f64;
        let l: Vec<f64> = (0..=20).map(|i| lum(sequential(i as f64 / 20.0))).collect();
        assert!(l.windows(2).all(|w| w[1] <= w[0] + 1e-9), "{l:?}");
    }
}
