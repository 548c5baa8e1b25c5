//! Injected versus discovered distributions of one quantity, and the discovered fraction in
//! bins of a quantity with binomial (Wilson 95%) error bars.

use plotters::coord::combinators::BindKeyPoints;
use plotters::coord::ranged1d::{AsRangedCoord, Ranged, ValueFormatter};
use plotters::prelude::*;

use super::axes;
use crate::error::Result;
use crate::report::figure::{Area, DrawResult, Figure, empty_note, render, titled};
use crate::report::stats::{Margin, finite_range, label, symbol};
use crate::report::style;
use crate::report::tables::{FractionBin, WeightedSample};
use crate::statistics::weighted_histogram;

/// Distances get a logarithmic axis when they span more than a factor of five (below that a
/// logarithmic axis has no round ticks to label).
pub fn is_log(quantity: &str, lo: f64, hi: f64) -> bool {
    matches!(quantity, "a_au" | "q_au" | "r_au") && lo > 0.0 && hi / lo > 5.0
}

/// Edges covering every value: 40 bins, logarithmic where `is_log` (which needs hi > 5 lo).
fn edges_for(quantity: &str, xs: &[f64]) -> Option<Vec<f64>> {
    let (lo, hi) = finite_range(xs)?;
    Some(Margin::for_axis(is_log(quantity, lo, hi), 1.02, (0.02, 0.5)).edges(lo, hi, 40))
}

/// Step histograms of the injected and the discovered values of `quantity` (counts on a
/// logarithmic axis so that a few discoveries stay visible beside many injected objects).
pub fn injected_vs_discovered(
    quantity: &str,
    injected: (&[f64], &[f64]),
    discovered: (&[f64], &[f64]),
    note: &str,
) -> Result<Figure> {
    let sym = symbol(quantity);
    let title = format!("Injected and discovered objects in {sym}");
    let total = |w: &[f64]| w.iter().sum::<f64>();
    let unit = injected.1.iter().chain(discovered.1).all(|w| *w == 1.0);
    let weighted = if unit {
        String::new()
    } else {
        format!(
            " Each object counts with its weight (total weight injected {:.4}, discovered {:.4}).",
            total(injected.1),
            total(discovered.1)
        )
    };
    let caption = format!(
        "Number of objects per bin of {} — injected (blue, {} objects) and discovered (orange, {}). \
         Counts on a logarithmic axis (an outline ends at its last bin's height: the axis has no \
         zero); bins without objects are left empty.{weighted} {note}",
        label(quantity),
        injected.0.len(),
        discovered.0.len()
    );
    let stem = format!("distribution_{quantity}");
    render(&stem, &title, &caption, (style::WIDTH, style::HEIGHT), |root| {
        let area = titled(root, &title)?;
        let Some(edges) = edges_for(quantity, injected.0) else {
            return empty_note(&area, "no objects");
        };
        let hists = [
            weighted_histogram(injected.0, injected.1, &edges),
            weighted_histogram(discovered.0, discovered.1, &edges),
        ];
        // Headroom of a factor 5 keeps the legend clear of the curves.
        let top = hists[0].iter().chain(&hists[1]).copied().fold(1.0, f64::max) * 5.0;
        // Below the smallest weighted count, so that a bin of one (light) object shows.
        let floor = hists[0]
            .iter()
            .chain(&hists[1])
            .copied()
            .filter(|c| *c > 0.0)
            .fold(FLOOR, f64::min)
            .min(FLOOR);
        let (lo, hi) = (edges[0], edges[edges.len() - 1]);
        if is_log(quantity, lo, hi) {
            draw_hists(
                &area,
                (lo..hi).log_scale().with_key_points(axes::log_ticks(lo, hi)),
                &edges,
                &hists,
                (floor, top),
                quantity,
            )
        } else {
            draw_hists(&area, lo..hi, &edges, &hists, (floor, top), quantity)
        }
    })
}

/// The bottom of the count axis: below one object, so that a bin of one has a visible height.
const FLOOR: f64 = 0.5;

fn draw_hists<X>(
    area: &Area,
    x: X,
    edges: &[f64],
    hists: &[Vec<f64>; 2],
    (floor, top): (f64, f64),
    quantity: &str,
) -> DrawResult
where
    X: AsRangedCoord<Value = f64>,
    X::CoordDescType: Ranged<ValueType = f64> + ValueFormatter<f64>,
{
    let y = (floor..top)
        .log_scale()
        .with_key_points(axes::log_ticks(floor.max(1e-6) * 2.0, top));
    let mut chart = axes::chart(area, x, y)?;
    axes::mesh(&mut chart, &label(quantity), "objects per bin")?;
    for (k, (h, name)) in hists.iter().zip(["injected", "discovered"]).enumerate() {
        let c = style::series(k);
        for (j, run) in axes::step_runs(edges, h, None).into_iter().enumerate() {
            let drawn = chart.draw_series(LineSeries::new(run, c.stroke_width(2)))?;
            if j == 0 {
                drawn.label(name).legend(axes::swatch(c, 2));
            }
        }
    }
    axes::legend(&mut chart, SeriesLabelPosition::UpperRight)
}

/// The discovered fraction per bin (weighted by the objects' weights) with 95% Wilson intervals
/// at the effective n; bins with no objects are left out rather than drawn as zero.
pub fn discovered_fraction(quantity: &str, bins: &[FractionBin]) -> Result<Figure> {
    let sym = symbol(quantity);
    let title = format!("Discovered fraction against {sym}");
    let (n, k): (u64, u64) = bins.iter().fold((0, 0), |(n, k), b| (n + b.tally.n, k + b.tally.k));
    let caption = format!(
        "Fraction of injected objects that were discovered, weighted by the objects' weights, in bins \
         of {} ({k} of {n} objects). Points at the bin centres; bars are 95% Wilson score intervals \
         (Wilson 1927) at Kish's effective number of objects (Kish 1965); horizontal \
         bars show the bin widths. Empty bins are omitted; bars that leave the plot are cut at \
         its top and marked with a triangle.",
        label(quantity)
    );
    let stem = format!("fraction_{quantity}");
    let used: Vec<&FractionBin> = bins.iter().filter(|b| b.n() > 0).collect();
    render(&stem, &title, &caption, (style::WIDTH, style::HEIGHT), |root| {
        let area = titled(root, &title)?;
        let (Some(first), Some(last)) = (used.first(), used.last()) else {
            return empty_note(&area, "no objects in any bin");
        };
        let top = nice_top(axis_top(&used));
        if is_log(quantity, first.lo, last.hi) {
            draw_fraction(
                &area,
                (first.lo..last.hi)
                    .log_scale()
                    .with_key_points(axes::log_ticks(first.lo, last.hi)),
                &used,
                top,
                quantity,
                true,
            )
        } else {
            draw_fraction(&area, first.lo..last.hi, &used, top, quantity, false)
        }
    })
}

/// The axis reaches the upper interval limits of the well-filled bins (20 or more objects)
/// and every point estimate, so that a few nearly empty bins cannot flatten the rest.
fn axis_top(bins: &[&FractionBin]) -> f64 {
    let full = bins.iter().filter(|b| b.n() >= 20).map(|b| b.proportion().upper);
    let points = bins.iter().map(|b| b.proportion().fraction);
    full.chain(points).fold(0.0, f64::max)
}

/// A round upper limit for a fraction axis: small fractions get a zoomed axis.
pub(crate) fn nice_top(x: f64) -> f64 {
    [0.001, 0.002, 0.005, 0.01, 0.02, 0.05, 0.1, 0.2, 0.5, 1.0]
        .into_iter()
        .find(|&t| t >= x * 1.05)
        .unwrap_or(1.0)
}

fn draw_fraction<X>(area: &Area, x: X, bins: &[&FractionBin], top: f64, quantity: &str, log: bool) -> DrawResult
where
    X: AsRangedCoord<Value = f64>,
    X::CoordDescType: Ranged<ValueType = f64> + ValueFormatter<f64>,
{
    let mut chart = axes::chart(area, x, 0.0..top)?;
    axes::mesh(&mut chart, &label(quantity), "discovered fraction (dimensionless)")?;
    let c = style::series(1);
    let centre = |b: &FractionBin| if log { (b.lo * b.hi).sqrt() } else { 0.5 * (b.lo + b.hi) };
    chart.draw_series(bins.iter().map(|b| {
        let p = b.proportion();
        ErrorBar::new_vertical(centre(b), p.lower, p.fraction, p.upper.min(top), c.stroke_width(2), 8)
    }))?;
    let cut = bins.iter().filter(|b| b.proportion().upper > top);
    chart.draw_series(cut.map(|b| TriangleMarker::new((centre(b), top), 7, c.filled())))?;
    chart.draw_series(bins.iter().map(|b| {
        let f = b.proportion().fraction;
        PathElement::new(vec![(b.lo, f), (b.hi, f)], c.mix(0.5).stroke_width(1))
    }))?;
    chart.draw_series(
        bins.iter()
            .map(|b| Circle::new((centre(b), b.proportion().fraction), 4, c.filled())),
    )?;
    Ok(())
}

/// The axis label of a circumstance of discovery.
fn discovery_label(quantity: &str) -> String {
    match quantity {
        "discovery_mag" => "magnitude at discovery (mag)".into(),
        "discovery_rate_arcsec_per_hr" => "rate of motion at discovery (arcsec/h)".into(),
        other => label(other),
    }
}

/// Histograms of a circumstance of discovery (`discovery_mag`, `discovery_rate_arcsec_per_hr`),
/// one step curve per survey, each discovery counted with its object's weight, with reference values (a survey's median depth, the rates its
/// search finds) drawn as dashed vertical lines where they fall near the data. Rates get a
/// logarithmic axis when they span more than a factor of five.
pub fn at_discovery(quantity: &str, per_survey: &[WeightedSample], marks: &[(String, f64)]) -> Result<Figure> {
    let what = discovery_label(quantity);
    let title = match quantity {
        "discovery_mag" => "Magnitude of the discoveries".to_string(),
        "discovery_rate_arcsec_per_hr" => "Rate of motion of the discoveries".to_string(),
        other => format!("Discoveries in {other}"),
    };
    let all: Vec<f64> = per_survey.iter().flat_map(|s| s.values.iter().copied()).collect();
    let is_rate = quantity.contains("rate");
    // Reference values are drawn when they lie near the data (within a factor of four for
    // rates, 1.5 mag for magnitudes), so that a far limit does not squash the histogram.
    let near = |v: f64| {
        finite_range(&all).is_some_and(|(lo, hi)| {
            if is_rate {
                v > 0.0 && v >= lo / 4.0 && v <= hi * 4.0
            } else {
                v >= lo - 1.5 && v <= hi + 1.5
            }
        })
    };
    let (shown, far): (Vec<&(String, f64)>, Vec<&(String, f64)>) = marks.iter().partition(|m| near(m.1));
    let extent: Vec<f64> = all.iter().copied().chain(shown.iter().map(|m| m.1)).collect();
    let log = is_rate && finite_range(&extent).is_some_and(|(lo, hi)| lo > 0.0 && hi / lo > 5.0);
    let edges = finite_range(&extent).map(|(lo, hi)| Margin::for_axis(log, 1.15, (0.04, 0.1)).edges(lo, hi, 30));
    let hists: Vec<Vec<f64>> = edges.as_ref().map_or(Vec::new(), |e| {
        per_survey
            .iter()
            .map(|s| weighted_histogram(&s.values, &s.weights, e))
            .collect()
    });
    let unit = per_survey.iter().all(|s| s.weights.iter().all(|w| *w == 1.0));
    let names: Vec<String> = per_survey
        .iter()
        .map(|s| match unit {
            true => format!("{} ({} discoveries)", s.name, s.values.len()),
            false => format!(
                "{} ({} discoveries, weight {:.4})",
                s.name,
                s.values.len(),
                s.weights.iter().sum::<f64>()
            ),
        })
        .collect();
    // Whole counts for the decades test: a bin's weight rounded up, so a light bin still counts.
    let rounded: Vec<u64> = hists.iter().flatten().map(|c| c.ceil() as u64).collect();
    let log_counts = axes::counts_need_log(&rounded);
    let caption = format!(
        "Number of discoveries per bin of {what}, as each was first found: {}.{}{} Bins \
         without discoveries are left empty.{}{}",
        if names.is_empty() {
            "none".into()
        } else {
            names.join("; ")
        },
        if shown.is_empty() {
            String::new()
        } else {
            format!(
                " Dashed lines: {}.",
                shown
                    .iter()
                    .map(|(n, v)| format!("{n} ({})", axes::tick((v * 100.0).round() / 100.0)))
                    .collect::<Vec<_>>()
                    .join("; ")
            )
        },
        if far.is_empty() {
            String::new()
        } else {
            format!(
                " Off the axis: {}.",
                far.iter()
                    .map(|(n, v)| format!("{n} ({})", axes::tick((v * 100.0).round() / 100.0)))
                    .collect::<Vec<_>>()
                    .join("; ")
            )
        },
        if log_counts {
            " Counts on a logarithmic axis: they span more than a factor of 30 (an outline ends \
             at its last bin's height: the axis has no zero)."
        } else {
            ""
        },
        if unit {
            ""
        } else {
            " Each discovery counts with its object's weight."
        }
    );
    let stem = quantity.to_string();
    render(&stem, &title, &caption, (style::WIDTH, style::HEIGHT), |root| {
        let area = titled(root, &title)?;
        let Some(edges) = edges.as_ref().filter(|_| !all.is_empty()) else {
            return empty_note(&area, "no discoveries");
        };
        let (lo, hi) = (edges[0], edges[edges.len() - 1]);
        let max = hists.iter().flatten().copied().fold(1.0, f64::max);
        // A logarithmic count axis needs more headroom for the legend, and a bottom below one.
        let (bottom, top) = if log_counts { (0.5, max * 6.0) } else { (0.0, max * 1.5) };
        let plot = AtDiscovery {
            edges,
            hists: &hists,
            names: &names,
            marks: &shown,
            x_desc: &what,
            bottom,
            top,
        };
        let log_x = || (lo..hi).log_scale().with_key_points(axes::log_ticks(lo, hi));
        let log_y = || (bottom..top).log_scale().with_key_points(axes::log_ticks(1.0, top));
        match (log, log_counts) {
            (true, true) => plot.draw(&area, log_x(), log_y()),
            (true, false) => plot.draw(&area, log_x(), bottom..top),
            (false, true) => plot.draw(&area, lo..hi, log_y()),
            (false, false) => plot.draw(&area, lo..hi, bottom..top),
        }
    })
}

struct AtDiscovery<'a> {
    edges: &'a [f64],
    hists: &'a [Vec<f64>],
    names: &'a [String],
    marks: &'a [&'a (String, f64)],
    x_desc: &'a str,
    /// The count axis: from `bottom` (0, or below one on a logarithmic axis) to `top`.
    bottom: f64,
    top: f64,
}

impl AtDiscovery<'_> {
    fn draw<X, Y>(&self, area: &Area, x: X, y: Y) -> DrawResult
    where
        X: AsRangedCoord<Value = f64>,
        X::CoordDescType: Ranged<ValueType = f64> + ValueFormatter<f64>,
        Y: AsRangedCoord<Value = f64>,
        Y::CoordDescType: Ranged<ValueType = f64> + ValueFormatter<f64>,
    {
        // Outlines close to zero on a linear count axis; a logarithmic one has no zero.
        let close = (self.bottom == 0.0).then_some(0.0);
        let mut chart = axes::chart(area, x, y)?;
        axes::mesh(&mut chart, self.x_desc, "discoveries per bin")?;
        for (k, (h, name)) in self.hists.iter().zip(self.names).enumerate() {
            let c = style::series(k);
            for (j, run) in axes::step_runs(self.edges, h, close).into_iter().enumerate() {
                let drawn = chart.draw_series(LineSeries::new(run, c.stroke_width(2)))?;
                if j == 0 {
                    drawn.label(name.as_str()).legend(axes::swatch(c, 2));
                }
            }
        }
        for (k, (name, v)) in self.marks.iter().map(|m| (&m.0, m.1)).enumerate() {
            let c = style::series(k + self.hists.len());
            chart
                .draw_series(DashedLineSeries::new(
                    vec![(v, self.bottom), (v, self.top)],
                    6,
                    4,
                    c.stroke_width(2),
                ))?
                .label(name.as_str())
                .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 8, y)], c.stroke_width(2)));
        }
        axes::legend(&mut chart, SeriesLabelPosition::UpperRight)
    }
}
