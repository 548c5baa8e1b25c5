//! A small SVG writer with sub-pixel coordinates, for the figures whose curves plotters
//! would round to whole pixels (the sky maps: parallels must be smooth, neighbouring cells
//! must meet without seams). Colours, fonts and sizes come from `style.rs`, as for every
//! other figure.

use std::fmt::Write;

use plotters::style::RGBColor;

use crate::report::figure::xml_escape;
use crate::report::style;

/// An SVG document being written, `width` × `height` pixels on white paper.
pub struct Svg {
    body: String,
    width: u32,
    height: u32,
}

/// Horizontal anchor of a text.
#[derive(Debug, Clone, Copy)]
pub enum Anchor {
    Start,
    Middle,
    End,
}

impl Anchor {
    fn attr(self) -> &'static str {
        match self {
            Anchor::Start => "start",
            Anchor::Middle => "middle",
            Anchor::End => "end",
        }
    }
}

pub fn rgb(c: RGBColor) -> String {
    format!("#{:02x}{:02x}{:02x}", c.0, c.1, c.2)
}

/// Points as an SVG path: `M x y L x y …` to 0.01 px.
pub fn path_data(points: &[(f64, f64)], closed: bool) -> String {
    let mut d = String::with_capacity(points.len() * 16);
    for (k, (x, y)) in points.iter().enumerate() {
        let _ = write!(d, "{}{x:.2} {y:.2}", if k == 0 { "M" } else { "L" });
    }
    if closed {
        d.push('Z');
    }
    d
}

impl Svg {
    pub fn new(width: u32, height: u32) -> Svg {
        let mut s = Svg {
            body: String::new(),
            width,
            height,
        };
        s.rect((0.0, 0.0), (width as f64, height as f64), &rgb(style::PAPER), None);
        s
    }

    /// Raw markup (a group, a definition).
    pub fn raw(&mut self, markup: &str) {
        self.body.push_str(markup);
        self.body.push('\n');
    }

    pub fn rect(&mut self, (x, y): (f64, f64), (w, h): (f64, f64), fill: &str, stroke: Option<&str>) {
        let stroke = stroke.map_or(String::new(), |s| format!(" stroke=\"{s}\" stroke-width=\"1\""));
        self.raw(&format!(
            "<rect x=\"{x:.2}\" y=\"{y:.2}\" width=\"{w:.2}\" height=\"{h:.2}\" fill=\"{fill}\"{stroke}/>"
        ));
    }

    /// A filled polygon; `seal` strokes its edge in its own colour so that neighbouring
    /// polygons meet without the hairline gaps anti-aliasing leaves between them.
    pub fn polygon(&mut self, points: &[(f64, f64)], fill: &str, seal: bool) {
        let stroke = if seal {
            format!(" stroke=\"{fill}\" stroke-width=\"1\" stroke-linejoin=\"round\"")
        } else {
            String::new()
        };
        self.raw(&format!(
            "<path d=\"{}\" fill=\"{fill}\"{stroke}/>",
            path_data(points, true)
        ));
    }

    /// An open polyline.
    pub fn line(&mut self, points: &[(f64, f64)], stroke: &str, width: f64, dash: Option<&str>) {
        let dash = dash.map_or(String::new(), |d| format!(" stroke-dasharray=\"{d}\""));
        self.raw(&format!(
            "<path d=\"{}\" fill=\"none\" stroke=\"{stroke}\" stroke-width=\"{width}\"{dash} stroke-linejoin=\"round\"/>",
            path_data(points, false)
        ));
    }

    pub fn circle(&mut self, (x, y): (f64, f64), r: f64, fill: &str, stroke: Option<(&str, f64)>) {
        let stroke = stroke.map_or(String::new(), |(c, w)| format!(" stroke=\"{c}\" stroke-width=\"{w}\""));
        self.raw(&format!(
            "<circle cx=\"{x:.2}\" cy=\"{y:.2}\" r=\"{r}\" fill=\"{fill}\"{stroke}/>"
        ));
    }

    /// Text at (x, y): `y` is the middle of the line; `halo` draws a white outline under the
    /// letters so that labels stay legible over lines and cells.
    pub fn text(&mut self, (x, y): (f64, f64), text: &str, px: f64, anchor: Anchor, color: RGBColor, halo: bool) {
        let halo = if halo {
            format!(
                " paint-order=\"stroke\" stroke=\"{}\" stroke-width=\"3\" stroke-linejoin=\"round\"",
                rgb(style::PAPER)
            )
        } else {
            String::new()
        };
        self.raw(&format!(
            "<text x=\"{x:.2}\" y=\"{y:.2}\" font-family=\"{}\" font-size=\"{px}\" fill=\"{}\" text-anchor=\"{}\" dominant-baseline=\"middle\"{halo}>{}</text>",
            style::FONT,
            rgb(color),
            anchor.attr(),
            xml_escape(text)
        ));
    }

    /// The finished document.
    pub fn finish(self) -> String {
        format!(
            "<svg width=\"{w}\" height=\"{h}\" viewBox=\"0 0 {w} {h}\" xmlns=\"http://www.w3.org/2000/svg\">\n{}</svg>\n",
            self.body,
            w = self.width,
            h = self.height
        )
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn paths_keep_sub_pixel_coordinates() {
        assert_eq!(path_data(&[(1.234, 5.0), (2.0, 6.789)], true), "M1.23 5.00L2.00 6.79Z");
    }
}
