//! Shared chart scaffolding: one margin, one set of label sizes, one grid, one legend style.
//! Generic over the axis kinds so linear and logarithmic axes share the same look.

use plotters::coord::Shift;
use plotters::coord::ranged1d::{AsRangedCoord, Ranged, ValueFormatter};
use plotters::prelude::*;

use crate::report::figure::DrawResult;
use crate::report::style;

pub type Chart<'a, 'b, X, Y> = ChartContext<'a, SVGBackend<'b>, Cartesian2d<X, Y>>;
type Built<'a, 'b, X, Y> = Chart<'a, 'b, <X as AsRangedCoord>::CoordDescType, <Y as AsRangedCoord>::CoordDescType>;

/// A Cartesian chart with room for tick labels and axis titles.
pub fn chart<'a, 'b, X: AsRangedCoord, Y: AsRangedCoord>(
    area: &'a DrawingArea<SVGBackend<'b>, Shift>,
    x: X,
    y: Y,
) -> std::result::Result<Built<'a, 'b, X, Y>, Box<dyn std::error::Error>> {
    Ok(ChartBuilder::on(area)
        .margin_top(10)
        .margin_right(24)
        .margin_left(10)
        .margin_bottom(6)
        .x_label_area_size(56)
        .y_label_area_size(78)
        .build_cartesian_2d(x, y)?)
}

/// Axis titles (with units), tick labels and a light grid.
pub fn mesh<X, Y>(chart: &mut Chart<'_, '_, X, Y>, x_desc: &str, y_desc: &str) -> DrawResult
where
    X: Ranged<ValueType = f64> + ValueFormatter<f64>,
    Y: Ranged<ValueType = f64> + ValueFormatter<f64>,
{
    chart
        .configure_mesh()
        .x_label_formatter(&|v| tick(*v))
        .y_label_formatter(&|v| tick(*v))
        .x_desc(x_desc)
        .y_desc(y_desc)
        .label_style(style::text(style::LABEL_PX))
        .axis_desc_style(style::text(style::AXIS_PX))
        .bold_line_style(style::GRID.stroke_width(1))
        .light_line_style(style::PAPER.stroke_width(0))
        .axis_style(style::MUTED.stroke_width(1))
        .x_labels(8)
        .y_labels(6)
        .draw()?;
    Ok(())
}

/// Ticks of a logarithmic axis at 1, 2 and 5 times the powers of ten inside [lo, hi]
/// (plotters labels only the powers of ten, too few over one or two decades).
pub fn log_ticks(lo: f64, hi: f64) -> Vec<f64> {
    let (a, b) = (lo.log10().floor() as i32, hi.log10().ceil() as i32);
    (a..=b)
        .flat_map(|p| [1.0, 2.0, 5.0].map(|m| m * 10f64.powi(p)))
        .filter(|&t| t >= lo && t <= hi)
        .collect()
}

/// A tick label: no trailing zeros ("100", "0.25"), thousands without decimals.
pub fn tick(v: f64) -> String {
    if v.abs() >= 1000.0 || v == v.round() {
        return format!("{v:.0}");
    }
    let s = format!("{v:.4}");
    s.trim_end_matches('0').trim_end_matches('.').to_string()
}

/// The legend box, top right, in the shared style.
pub fn legend<'a, 'b: 'a, X: Ranged, Y: Ranged>(
    chart: &mut Chart<'a, 'b, X, Y>,
    pos: SeriesLabelPosition,
) -> DrawResult {
    chart
        .configure_series_labels()
        .position(pos)
        .label_font(style::text(style::LABEL_PX))
        .background_style(style::PAPER.mix(0.9))
        .border_style(style::GRID)
        .margin(8)
        .draw()?;
    Ok(())
}

/// A short legend swatch for a line series.
pub fn swatch(c: RGBColor, width: u32) -> impl Fn((i32, i32)) -> PathElement<(i32, i32)> {
    move |(x, y)| PathElement::new(vec![(x, y), (x + 22, y)], c.stroke_width(width))
}

/// The corner points of a step curve over bins (for a histogram outline).
pub fn steps(edges: &[f64], heights: &[f64]) -> Vec<(f64, f64)> {
    let mut pts = Vec::with_capacity(2 * heights.len());
    for (k, &h) in heights.iter().enumerate() {
        pts.push((edges[k], h));
        pts.push((edges[k + 1], h));
    }
    pts
}
