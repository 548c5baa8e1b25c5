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

/// Ticks of a logarithmic axis: at 1, 2 and 5 times the powers of ten inside [lo, hi] over
/// up to three decades (plotters labels only the powers of ten, too few there), at the
/// powers of ten alone over more.
pub fn log_ticks(lo: f64, hi: f64) -> Vec<f64> {
    let (a, b) = (lo.log10().floor() as i32, hi.log10().ceil() as i32);
    let steps: &[f64] = if hi / lo > 1e3 { &[1.0] } else { &[1.0, 2.0, 5.0] };
    (a..=b)
        .flat_map(|p| steps.iter().map(move |m| m * 10f64.powi(p)))
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

/// A histogram outline with gaps at empty bins: one step curve per run of non-empty bins,
/// so that an empty bin is drawn as nothing rather than as a line along (or below) the axis.
/// On a linear axis (`close: Some(0.0)`) each run is closed down to zero at both its ends, the
/// sides of a bar. A logarithmic axis has no zero, and a line down to its arbitrary bottom
/// would read as a count there: with `close: None` a run starts and ends at its bins' heights.
pub fn step_runs(edges: &[f64], counts: &[f64], close: Option<f64>) -> Vec<Vec<(f64, f64)>> {
    let mut runs: Vec<Vec<(f64, f64)>> = Vec::new();
    let mut open = false;
    for (k, &c) in counts.iter().enumerate() {
        if !(c > 0.0) {
            if let (true, Some(z)) = (open, close) {
                runs.last_mut().expect("open run").push((edges[k], z));
            }
            open = false;
            continue;
        }
        if !open {
            runs.push(close.map(|z| vec![(edges[k], z)]).unwrap_or_default());
            open = true;
        }
        let run = runs.last_mut().expect("open run");
        run.push((edges[k], c));
        run.push((edges[k + 1], c));
    }
    if let (true, Some(z)) = (open, close) {
        runs.last_mut().expect("open run").push((edges[counts.len()], z));
    }
    runs
}

/// Whether counts span enough decades to need a logarithmic axis: the largest over the
/// smallest non-zero count above 30.
pub fn counts_need_log(counts: &[u64]) -> bool {
    values_need_log(&counts.iter().map(|&c| c as f64).collect::<Vec<f64>>())
}

/// The same test for weighted counts or probabilities: the largest over the smallest positive
/// value above 30.
pub fn values_need_log(values: &[f64]) -> bool {
    let positive = values.iter().copied().filter(|&v| v > 0.0 && v.is_finite());
    let (lo, hi) = positive.fold((f64::INFINITY, 0.0f64), |(a, b), v| (a.min(v), b.max(v)));
    hi > 0.0 && hi / lo > 30.0
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn empty_bins_are_gaps() {
        let edges = [0.0, 1.0, 2.0, 3.0, 4.0];
        let runs = step_runs(&edges, &[2.0, 0.0, 3.0, 1.0], Some(0.0));
        assert_eq!(runs.len(), 2);
        assert_eq!(runs[0], vec![(0.0, 0.0), (0.0, 2.0), (1.0, 2.0), (1.0, 0.0)]);
        assert_eq!(runs[1].first(), Some(&(2.0, 0.0)));
        assert_eq!(runs[1].last(), Some(&(4.0, 0.0)));
        assert!(step_runs(&edges, &[0.0; 4], Some(0.0)).is_empty());
        // On a logarithmic axis a run neither starts nor ends at the axis.
        let open = step_runs(&edges, &[2.0, 0.0, 3.0, 1.0], None);
        assert_eq!(open[0], vec![(0.0, 2.0), (1.0, 2.0)]);
        assert_eq!(open[1], vec![(2.0, 3.0), (3.0, 3.0), (3.0, 1.0), (4.0, 1.0)]);
        assert!(counts_need_log(&[1, 0, 500]) && !counts_need_log(&[10, 0, 200]));
    }
}
