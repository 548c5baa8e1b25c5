//! A figure: its SVG text, a short title drawn on it, and the caption that goes beside it.
//! The caption is also stored in the SVG's `<desc>` (with the title in `<title>`), so a figure
//! copied out of the report still says what it shows.

use std::path::{Path, PathBuf};

use plotters::coord::Shift;
use plotters::prelude::*;

use super::style;
use crate::error::{Error, Result};
use crate::io::table::write_atomic;

pub type Area<'a> = DrawingArea<SVGBackend<'a>, Shift>;
pub type DrawResult = std::result::Result<(), Box<dyn std::error::Error>>;

#[derive(Debug, Clone)]
pub struct Figure {
    /// File stem: the SVG is written as `STEM.svg`.
    pub stem: String,
    pub title: String,
    pub caption: String,
    pub svg: String,
}

impl Figure {
    pub fn file_name(&self) -> String {
        format!("{}.svg", self.stem)
    }

    /// Write `DIR/STEM.svg` (atomically) and return its path.
    pub fn write(&self, dir: &Path) -> Result<PathBuf> {
        let path = dir.join(self.file_name());
        write_atomic(&path, self.svg.as_bytes())?;
        Ok(path)
    }
}

impl Figure {
    /// A figure written directly as SVG text (see `figures::svg`).
    pub fn from_svg(stem: &str, title: &str, caption: &str, svg: String) -> Figure {
        Figure {
            stem: stem.into(),
            title: title.into(),
            caption: caption.into(),
            svg: with_metadata(&svg, title, caption),
        }
    }
}

/// Draw a figure of `size` pixels: white paper, `draw` on the whole area, then the title and
/// caption into the SVG's metadata.
pub fn render(
    stem: &str,
    title: &str,
    caption: &str,
    size: (u32, u32),
    draw: impl FnOnce(&Area) -> DrawResult,
) -> Result<Figure> {
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, size).into_drawing_area();
        let drawn = root.fill(&style::PAPER).map_err(Into::into).and_then(|_| draw(&root));
        drawn
            .and_then(|_| root.present().map_err(Into::into))
            .map_err(|e| Error::io(format!("figure {stem}: {e}")))?;
    }
    Ok(Figure {
        stem: stem.into(),
        title: title.into(),
        caption: caption.into(),
        svg: with_metadata(&svg, title, caption),
    })
}

/// Insert `<title>` and `<desc>` right after the opening `<svg …>` tag.
fn with_metadata(svg: &str, title: &str, caption: &str) -> String {
    let Some(open) = svg.find("<svg").and_then(|i| svg[i..].find('>').map(|j| i + j + 1)) else {
        return svg.to_string();
    };
    format!(
        "{}\n<title>{}</title>\n<desc>{}</desc>{}",
        &svg[..open],
        xml_escape(title),
        xml_escape(caption),
        &svg[open..]
    )
}

pub fn xml_escape(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

/// The title line at the top of a figure; returns the area below it.
pub fn titled<'a>(root: &Area<'a>, title: &str) -> std::result::Result<Area<'a>, Box<dyn std::error::Error>> {
    Ok(root.titled(title, style::text(style::TITLE_PX))?)
}

/// A message in the middle of an otherwise empty plot (no data to show is still an answer).
pub fn empty_note(area: &Area, note: &str) -> DrawResult {
    let (w, h) = area.dim_in_pixel();
    let s = style::muted_text(style::AXIS_PX).pos(plotters::style::text_anchor::Pos::new(
        plotters::style::text_anchor::HPos::Center,
        plotters::style::text_anchor::VPos::Center,
    ));
    area.draw(&Text::new(note.to_string(), (w as i32 / 2, h as i32 / 2), s))?;
    Ok(())
}
