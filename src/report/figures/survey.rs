//! The survey's own figures: the distribution of visit depths, and the detection efficiency
//! against magnitude minus depth (the model, with the fraction actually detected beside it).

use plotters::coord::combinators::BindKeyPoints;
use plotters::coord::ranged1d::{AsRangedCoord, Ranged, ValueFormatter};
use plotters::prelude::*;

use super::axes;
use crate::error::Result;
use crate::report::figure::{Area, DrawResult, Figure, empty_note, render, titled};
use crate::report::stats::{finite_range, histogram, lin_edges};
use crate::report::style;
use crate::report::tables::EfficiencyCurve;

/// Step histograms of visit depths, one per survey; counts on a logarithmic axis when they
/// span decades (a deep survey of few visits beside a wide one of many), empty bins as gaps.
pub fn depth_distribution(surveys: &[(String, Vec<f64>)]) -> Result<Figure> {
    let title = "Depth of the visits";
    let names: Vec<String> = surveys
        .iter()
        .map(|(n, d)| format!("{n} ({} visits)", d.len()))
        .collect();
    let all: Vec<f64> = surveys.iter().flat_map(|s| s.1.iter().copied()).collect();
    let width = bin_width(&all);
    let edges = finite_range(&all).map(|(lo, hi)| {
        let (lo, hi) = (
            (lo / width).floor() * width - 2.0 * width,
            (hi / width).ceil() * width + 2.0 * width,
        );
        lin_edges(lo, hi, ((hi - lo) / width).round().max(1.0) as usize)
    });
    let hists: Vec<Vec<u64>> = edges
        .as_ref()
        .map_or(Vec::new(), |e| surveys.iter().map(|s| histogram(&s.1, e)).collect());
    let all_counts: Vec<u64> = hists.iter().flatten().copied().collect();
    let log = axes::counts_need_log(&all_counts);
    let caption = format!(
        "Number of visits per {} mag bin of depth, the magnitude at which the detection \
         efficiency falls to half its peak: {}.{} Bins without visits are left empty.",
        axes::tick(width),
        names.join("; "),
        if log {
            " Counts on a logarithmic axis: they span more than a factor of 30 (an outline ends at \
             its last bin's height: the axis has no zero)."
        } else {
            ""
        }
    );
    render("depth", title, &caption, (style::WIDTH, style::HEIGHT), |root| {
        let area = titled(root, title)?;
        let Some(edges) = edges.as_ref() else {
            return empty_note(&area, "no visits");
        };
        let (lo, hi) = (edges[0], edges[edges.len() - 1]);
        let max = all_counts.iter().copied().max().unwrap_or(1).max(1) as f64;
        let y_desc = format!("visits per {} mag", axes::tick(width));
        let plot = DepthPlot {
            edges,
            hists: &hists,
            names: &names,
            y_desc: &y_desc,
        };
        if log {
            let (floor, top) = (0.5, max * 4.0);
            let y = (floor..top).log_scale().with_key_points(axes::log_ticks(1.0, top));
            plot.draw(&area, lo..hi, y, None)
        } else {
            plot.draw(&area, lo..hi, 0.0..max * 1.4, Some(0.0))
        }
    })
}

struct DepthPlot<'a> {
    edges: &'a [f64],
    hists: &'a [Vec<u64>],
    names: &'a [String],
    y_desc: &'a str,
}

impl DepthPlot<'_> {
    /// `close`: where the outlines' runs are closed (zero on a linear axis; None on a
    /// logarithmic one, which has no zero).
    fn draw<Y>(&self, area: &Area, x: std::ops::Range<f64>, y: Y, close: Option<f64>) -> DrawResult
    where
        Y: AsRangedCoord<Value = f64>,
        Y::CoordDescType: Ranged<ValueType = f64> + ValueFormatter<f64>,
    {
        // The legend goes to the side away from the tallest bin.
        let peak = self
            .hists
            .iter()
            .flat_map(|h| h.iter().enumerate())
            .max_by_key(|(_, c)| **c)
            .map_or(0, |(k, _)| k);
        let side = if peak < self.edges.len() / 2 {
            SeriesLabelPosition::UpperRight
        } else {
            SeriesLabelPosition::UpperLeft
        };
        let mut chart = axes::chart(area, x, y)?;
        axes::mesh(&mut chart, "depth, 50% efficiency (mag)", self.y_desc)?;
        for (k, (h, name)) in self.hists.iter().zip(self.names).enumerate() {
            let c = style::series(k);
            let counts: Vec<f64> = h.iter().map(|&c| c as f64).collect();
            let runs = axes::step_runs(self.edges, &counts, close);
            for (j, run) in runs.into_iter().enumerate() {
                let drawn = chart.draw_series(LineSeries::new(run, c.stroke_width(2)))?;
                if j == 0 {
                    drawn.label(name.as_str()).legend(axes::swatch(c, 2));
                }
            }
        }
        axes::legend(&mut chart, side)
    }
}

/// A round bin width giving about 30 bins over the range of depths (at least 0.01 mag).
fn bin_width(depths: &[f64]) -> f64 {
    let span = finite_range(depths).map_or(1.0, |(a, b)| b - a);
    [0.01, 0.02, 0.05, 0.1, 0.2, 0.5, 1.0]
        .into_iter()
        .find(|&w| span / w <= 30.0)
        .unwrap_or(1.0)
}

/// The efficiency model of each survey and the detected fraction of in-field events, against
/// m − depth: dashed, the efficiency η of a source on live detector; solid, η times the live
/// fraction of the footprint (what a source in the field gets); points with Wilson 95%
/// intervals, the simulated events inside the survey's rate window.
pub fn efficiency(curves: &[EfficiencyCurve]) -> Result<Figure> {
    let title = "Detection efficiency";
    let outside: Vec<String> = curves
        .iter()
        .filter(|c| c.outside_rates > 0)
        .map(|c| {
            format!(
                "{} events of {} moved outside its rates {}–{}″/h",
                c.outside_rates,
                c.survey,
                axes::tick(c.rate_window.0),
                axes::tick(c.rate_window.1)
            )
        })
        .collect();
    let caption = format!(
        "Probability that a source in the field is detected in one visit, against its magnitude \
         minus the visit's depth (mag). Dashed: each survey's efficiency model η for a source on \
         live detector that does not trail. Solid: η times the survey's live fraction of the \
         footprint ({}), the chance of a source anywhere in the field. Points, in the survey's \
         colour: the fraction of the simulated in-field events that were detected, per 0.1 mag, \
         with 95% Wilson intervals, counting only events whose rate of motion the search finds \
         (slower or faster ones are never detected{}). Points follow the solid line; fast movers \
         that lose signal to trailing sit to its right.",
        curves
            .iter()
            .map(|c| format!("{}: {}", c.survey, axes::tick(c.live_fraction)))
            .collect::<Vec<_>>()
            .join("; "),
        if outside.is_empty() {
            String::new()
        } else {
            format!(" and left out: {}", outside.join("; "))
        }
    );
    render("efficiency", title, &caption, (style::WIDTH, style::HEIGHT), |root| {
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
            chart.draw_series(DashedLineSeries::new(
                c.model.iter().copied(),
                6,
                4,
                col.mix(0.7).stroke_width(1),
            ))?;
            chart
                .draw_series(LineSeries::new(
                    c.model.iter().map(|&(x, p)| (x, p * c.live_fraction)),
                    col.stroke_width(2),
                ))?
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
