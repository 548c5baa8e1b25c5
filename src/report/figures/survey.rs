//! The survey's own figures: the distribution of visit depths, and the detection efficiency
//! against magnitude minus depth (the model, with the fraction actually detected beside it).

use plotters::prelude::*;

use super::axes;
use crate::error::Result;
use crate::report::figure::{Figure, empty_note, render, titled};
use crate::report::stats::{finite_range, histogram, lin_edges};
use crate::report::style;
use crate::report::tables::EfficiencyCurve;

/// Step histograms of visit depths (0.1 mag bins), one per survey.
pub fn depth_distribution(surveys: &[(String, Vec<f64>)]) -> Result<Figure> {
    let title = "Depth of the visits";
    let names: Vec<String> = surveys
        .iter()
        .map(|(n, d)| format!("{n} ({} visits)", d.len()))
        .collect();
    let all: Vec<f64> = surveys.iter().flat_map(|s| s.1.iter().copied()).collect();
    let width = bin_width(&all);
    let caption = format!(
        "Number of visits per {} mag bin of depth, the magnitude at which the detection \
         efficiency falls to half its peak: {}.",
        axes::tick(width),
        names.join("; ")
    );
    render("depth", title, &caption, (style::WIDTH, style::HEIGHT), |root| {
        let area = titled(root, title)?;
        let Some((lo, hi)) = finite_range(&all) else {
            return empty_note(&area, "no visits");
        };
        let (lo, hi) = (
            (lo / width).floor() * width - 2.0 * width,
            (hi / width).ceil() * width + 2.0 * width,
        );
        let edges = lin_edges(lo, hi, ((hi - lo) / width).round().max(1.0) as usize);
        let hists: Vec<Vec<u64>> = surveys.iter().map(|s| histogram(&s.1, &edges)).collect();
        // Headroom for the legend, which goes to the side away from the tallest bin.
        let top = hists.iter().flatten().copied().max().unwrap_or(1) as f64 * 1.4;
        let peak = hists
            .iter()
            .flat_map(|h| h.iter().enumerate())
            .max_by_key(|(_, c)| **c)
            .map_or(0, |(k, _)| k);
        let side = if peak < edges.len() / 2 {
            SeriesLabelPosition::UpperRight
        } else {
            SeriesLabelPosition::UpperLeft
        };
        let mut chart = axes::chart(&area, lo..hi, 0.0..top)?;
        axes::mesh(
            &mut chart,
            "depth, 50% efficiency (mag)",
            &format!("visits per {} mag", axes::tick(width)),
        )?;
        for (k, (h, name)) in hists.iter().zip(&names).enumerate() {
            let heights: Vec<f64> = h.iter().map(|&c| c as f64).collect();
            let c = style::series(k);
            chart
                .draw_series(LineSeries::new(axes::steps(&edges, &heights), c.stroke_width(2)))?
                .label(name.as_str())
                .legend(axes::swatch(c, 2));
        }
        axes::legend(&mut chart, side)
    })
}

/// A round bin width giving about 30 bins over the range of depths (at least 0.01 mag).
fn bin_width(depths: &[f64]) -> f64 {
    let span = finite_range(depths).map_or(1.0, |(a, b)| b - a);
    [0.01, 0.02, 0.05, 0.1, 0.2, 0.5, 1.0]
        .into_iter()
        .find(|&w| span / w <= 30.0)
        .unwrap_or(1.0)
}

/// The efficiency model of each survey (lines) and the detected fraction of in-field events
/// (points with Wilson 95% intervals), against m − depth.
pub fn efficiency(curves: &[EfficiencyCurve]) -> Result<Figure> {
    let title = "Detection efficiency";
    let caption = "Probability that a source in the field is detected in one visit, against its \
                   magnitude minus the visit's depth (mag). Lines: each survey's efficiency model for a \
                   source that does not trail. Points, in the survey's colour: the fraction of the simulated in-field events \
                   that were detected, per 0.1 mag, with 95% Wilson intervals; they sit to the right of \
                   the line where fast movers lose signal to trailing, and the live fraction lowers them.";
    render("efficiency", title, caption, (style::WIDTH, style::HEIGHT), |root| {
        let area = titled(root, title)?;
        if curves.is_empty() {
            return empty_note(&area, "no survey spec found");
        }
        let mut chart = axes::chart(&area, -2.0..2.0, 0.0..1.05)?;
        axes::mesh(
            &mut chart,
            "magnitude − depth (mag)",
            "detection probability (dimensionless)",
        )?;
        for (k, c) in curves.iter().enumerate() {
            let col = style::series(k);
            chart
                .draw_series(LineSeries::new(c.model.iter().copied(), col.stroke_width(2)))?
                .label(c.survey.as_str())
                .legend(axes::swatch(col, 2));
            let pts: Vec<_> = c
                .measured
                .iter()
                .filter(|b| b.n() > 0 && b.lo >= -2.0 && b.hi <= 2.0)
                .collect();
            chart.draw_series(pts.iter().map(|b| {
                let p = b.proportion();
                ErrorBar::new_vertical(
                    0.5 * (b.lo + b.hi),
                    p.lower,
                    p.fraction,
                    p.upper,
                    col.mix(0.8).stroke_width(1),
                    5,
                )
            }))?;
            chart.draw_series(
                pts.iter()
                    .map(|b| Circle::new((0.5 * (b.lo + b.hi), b.proportion().fraction), 3, col.filled())),
            )?;
        }
        axes::legend(&mut chart, SeriesLabelPosition::UpperRight)
    })
}
