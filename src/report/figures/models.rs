//! What `seine compare-models` found, as figures: the catalogue's distribution of each
//! observable over each model's detected distribution (weighted; angles on a circle), and each
//! model's goodness of fit (the ln L of synthetic catalogues, the catalogue's marked).

use plotters::coord::combinators::BindKeyPoints;
use plotters::coord::ranged1d::{AsRangedCoord, Ranged, ValueFormatter};
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::axes;
use super::distributions::is_log;
use super::rose::{self, Polar};
use crate::error::Result;
use crate::report::figure::{Area, DrawResult, Figure, empty_note, render, titled};
use crate::report::stats::{Margin, finite_range, histogram, label, lin_edges, symbol};
use crate::report::style;
use crate::report::tables::{FitNull, RoseBin, WeightedSample};
use crate::statistics::weighted_histogram;

/// Whether an observable is an angle (drawn on a circle).
pub fn is_angle(observable: &str) -> bool {
    matches!(observable, "varpi_deg" | "node_deg" | "argperi_deg")
}

/// Bins of the marginal figures: few, since a catalogue is often a few dozen objects.
const BINS: usize = 18;

/// The expected number per bin of `n` catalogue objects drawn from a weighted sample.
pub fn expected_counts(s: &WeightedSample, edges: &[f64], n: f64) -> Vec<f64> {
    let h = weighted_histogram(&s.values, &s.weights, edges);
    let total: f64 = s
        .values
        .iter()
        .zip(&s.weights)
        .filter(|(v, _)| v.is_finite())
        .map(|(_, w)| w)
        .sum();
    h.iter()
        .map(|x| if total > 0.0 { n * x / total } else { 0.0 })
        .collect()
}

/// The catalogue's distribution of `observable` against each model's detected distribution,
/// scaled to the catalogue's (weighted) size: a histogram with rug ticks for a line quantity,
/// wedges and closed curves on a circle for an angle.
pub fn marginal(observable: &str, catalogue: &WeightedSample, models: &[WeightedSample]) -> Result<Figure> {
    let sym = symbol(observable);
    let n: f64 = catalogue.weights.iter().sum();
    let names: Vec<String> = models
        .iter()
        .map(|m| format!("{} ({} detected objects)", m.name, m.values.len()))
        .collect();
    let title = format!("Catalogue and models in {sym}");
    let how = if is_angle(observable) {
        format!(
            "on a circle: 0° to the right, angles increasing counter-clockwise, {} bins of {}°; \
             orange wedges: the catalogue's objects per bin; closed curves: the number each \
             model expects per bin; radius ∝ √count, so areas are proportional to counts",
            BINS,
            360 / BINS
        )
    } else {
        format!(
            "in {BINS} bins{}; orange bars: the catalogue's objects per bin, with a tick on the \
             axis for each object; step curves: the number each model expects per bin",
            if is_log(observable, 1.0, 10.0) {
                " (logarithmic where the values span a factor above five)"
            } else {
                ""
            }
        )
    };
    let caption = format!(
        "The catalogue ({} objects, weighted by its weights: {n:.1}) against the distribution \
         of {} of each model's objects that the surveys detected — {} — with the models' \
         importance weights, scaled to the catalogue's size: {how}. Where the catalogue \
         departs from a model's curve, that model does not explain it once both are seen \
         through the same surveys (the marginal tests in the table give the p-values).",
        catalogue.values.len(),
        label(observable),
        names.join("; ")
    );
    let stem = format!("model_marginal_{observable}");
    let size = if is_angle(observable) {
        (style::SQUARE + 80, style::SQUARE + 40)
    } else {
        (style::WIDTH, style::HEIGHT)
    };
    render(&stem, &title, &caption, size, |root| {
        let area = titled(root, &title)?;
        let all: Vec<f64> = catalogue
            .values
            .iter()
            .chain(models.iter().flat_map(|m| &m.values))
            .copied()
            .collect();
        let Some((lo, hi)) = finite_range(&all) else {
            return empty_note(&area, "no objects");
        };
        if is_angle(observable) {
            return circular(&area, catalogue, models, n, &names);
        }
        let log = is_log(observable, lo, hi);
        let edges = Margin::for_axis(log, 1.02, (0.02, 1e-6)).edges(lo, hi, BINS);
        let plot = Linear {
            observable,
            edges: &edges,
            catalogue,
            models,
            names: &names,
            n,
        };
        let (a, b) = (edges[0], edges[BINS]);
        if log {
            plot.draw(&area, (a..b).log_scale().with_key_points(axes::log_ticks(a, b)))
        } else {
            plot.draw(&area, a..b)
        }
    })
}

struct Linear<'a> {
    observable: &'a str,
    edges: &'a [f64],
    catalogue: &'a WeightedSample,
    models: &'a [WeightedSample],
    names: &'a [String],
    n: f64,
}

impl Linear<'_> {
    fn draw<X>(&self, area: &Area, x: X) -> DrawResult
    where
        X: AsRangedCoord<Value = f64>,
        X::CoordDescType: Ranged<ValueType = f64> + ValueFormatter<f64>,
    {
        let cat = weighted_histogram(&self.catalogue.values, &self.catalogue.weights, self.edges);
        let curves: Vec<Vec<f64>> = self
            .models
            .iter()
            .map(|m| expected_counts(m, self.edges, self.n))
            .collect();
        let peak = cat.iter().chain(curves.iter().flatten()).copied().fold(0.0, f64::max);
        // Headroom for the legend; the rug of the catalogue's objects stands on the axis.
        let top = (peak * 1.45).max(1.0);
        let rug = top * 0.05;
        let mut chart = axes::chart(area, x, 0.0..top)?;
        axes::mesh(&mut chart, &label(self.observable), "objects per bin")?;
        let e = self.edges;
        let bar = style::series(1).mix(0.45);
        chart
            .draw_series(
                cat.iter()
                    .enumerate()
                    .filter(|(_, c)| **c > 0.0)
                    .map(|(k, c)| Rectangle::new([(e[k], 0.0), (e[k + 1], *c)], bar.filled())),
            )?
            .label(format!("catalogue ({} objects)", self.catalogue.values.len()))
            .legend(move |(x, y)| Rectangle::new([(x, y - 6), (x + 22, y + 6)], bar.filled()));
        let ink = style::series(1);
        chart.draw_series(
            self.catalogue
                .values
                .iter()
                .filter(|v| v.is_finite())
                .map(|v| PathElement::new(vec![(*v, 0.0), (*v, rug)], ink.stroke_width(2))),
        )?;
        for (k, (h, name)) in curves.iter().zip(self.names).enumerate() {
            let c = model_colour(k);
            for (j, run) in axes::step_runs(e, h, Some(0.0)).into_iter().enumerate() {
                let drawn = chart.draw_series(std::iter::once(PathElement::new(run, c.stroke_width(2))))?;
                if j == 0 {
                    drawn.label(name.as_str()).legend(axes::swatch(c, 2));
                }
            }
        }
        axes::legend(&mut chart, SeriesLabelPosition::UpperRight)
    }
}

/// Model curves take the series colours after the catalogue's orange.
fn model_colour(k: usize) -> RGBColor {
    style::series(if k == 0 { 0 } else { k + 1 })
}

/// The circular form: catalogue wedges, each model's expected counts as a closed curve.
fn circular(area: &Area, cat: &WeightedSample, models: &[WeightedSample], n: f64, names: &[String]) -> DrawResult {
    let edges = lin_edges(0.0, 360.0, BINS);
    let wrap = |s: &WeightedSample| WeightedSample {
        name: s.name.clone(),
        values: s.values.iter().map(|v| v.rem_euclid(360.0)).collect(),
        weights: s.weights.clone(),
    };
    let counts = weighted_histogram(&wrap(cat).values, &cat.weights, &edges);
    let bins: Vec<RoseBin> = (0..BINS)
        .map(|k| RoseBin {
            min_deg: edges[k],
            max_deg: edges[k + 1],
            observed: counts[k],
            null: None,
        })
        .collect();
    let curves: Vec<Vec<f64>> = models.iter().map(|m| expected_counts(&wrap(m), &edges, n)).collect();
    let bins_of_edges: Vec<(f64, f64)> = edges.windows(2).map(|e| (e[0], e[1])).collect();
    let top = counts
        .iter()
        .chain(curves.iter().flatten())
        .copied()
        .fold(1.0, f64::max);
    let r = rose::radius(top) * 1.2;
    let (w, h) = area.dim_in_pixel();
    let (plot, key) = area.split_vertically(h - 24 * (models.len() as u32 + 1) - 8);
    let (pw, ph) = plot.dim_in_pixel();
    let aspect = pw as f64 / ph as f64;
    let mut chart: Polar = ChartBuilder::on(&plot)
        .margin(8)
        .build_cartesian_2d(-r * aspect..r * aspect, -r..r)?;
    rose::draw_wedges(&mut chart, &bins)?;
    rose::draw_grid(&mut chart, top, r)?;
    for (k, h) in curves.iter().enumerate() {
        chart.draw_series(std::iter::once(PathElement::new(
            rose::closed_steps(&bins_of_edges, h),
            model_colour(k).stroke_width(2),
        )))?;
    }
    rose::draw_labels(&mut chart, top, r)?;
    let text = style::text(style::LABEL_PX - 2.0).pos(Pos::new(HPos::Left, VPos::Center));
    let c = style::series(1);
    let x = (w as i32 / 2 - 150).max(8);
    key.draw(&Rectangle::new([(x, 6), (x + 20, 18)], c.mix(0.55).filled()))?;
    key.draw(&Text::new(
        format!("catalogue ({} objects)", cat.values.len()),
        (x + 28, 12),
        text.clone(),
    ))?;
    for (k, name) in names.iter().enumerate() {
        let y = 12 + 24 * (k as i32 + 1);
        key.draw(&PathElement::new(
            vec![(x, y), (x + 20, y)],
            model_colour(k).stroke_width(2),
        ))?;
        key.draw(&Text::new(name.clone(), (x + 28, y), text.clone()))?;
    }
    Ok(())
}

/// Why the null has as many catalogues as it has: the number (`seine compare-models
/// --synthetic`) sets the smallest p the test can give, 1/(1 + N), and p's counting error,
/// √(p(1 − p)/N); a p at the floor is an upper bound.
pub fn catalogues_rationale(n: usize, p: f64) -> String {
    if n == 0 {
        return String::new();
    }
    let nf = n as f64;
    let floor = 1.0 / (1.0 + nf);
    let mut s = format!(
        "Why {n} catalogues (seine compare-models --synthetic, 1000 by default): their number sets \
         the smallest p the test can give, 1/(1 + {n}) = {}, and the counting part of p's error, \
         √(p(1 − p)/{n}) (the default of 1000 gives p = 0.05 to ± 0.007 and reaches 0.001, enough \
         to tell the usual 5% and 1% thresholds apart); the ± above adds the part from the \
         catalogue's own ln L error.",
        sig3(floor)
    );
    if p.is_finite() && p <= floor * 1.5 {
        s += &format!(
            " Here p is at that floor: no synthetic catalogue scores as low as the catalogue, so \
             the chance is only bounded, below about 3/{n} = {} at 95% confidence (the rule of \
             three: Hanley & Lippman-Hand 1983, JAMA 249, 1743); more catalogues would tell how \
             much smaller it is.",
            sig3(3.0 / nf)
        );
    } else if p.is_finite() {
        let counting = (p * (1.0 - p) / nf).sqrt();
        s += &format!(
            " At this p the counting error is {} ({:.0}% of p).",
            sig3(counting),
            100.0 * counting / p
        );
    }
    s
}

/// A small positive number to three significant digits ("0.000999", "0.0316").
fn sig3(x: f64) -> String {
    let decimals = (2.0 - x.abs().log10().floor()).clamp(0.0, 12.0) as usize;
    format!("{x:.decimals$}")
}

/// Bins of the goodness-of-fit histogram.
const NULL_BINS: usize = 40;

/// A model's goodness of fit: the histogram of ln L over its synthetic catalogues (each
/// resampled from its own detected objects and scored without them) and the catalogue's
/// ln L marked; when the catalogue's value lies far outside, an arrow at the edge says where.
pub fn goodness_of_fit(fit: &FitNull) -> Result<Figure> {
    let title = format!("Goodness of fit: model {}", fit.model);
    let caption = format!(
        "Grey bars: ln L of {} synthetic catalogues of the catalogue's size drawn by weight from \
         model {}'s detected objects, each scored under the model's density without its own \
         objects — what the model itself gives; fraction of catalogues per bin. Orange line: the \
         catalogue's ln L, {:.2} ± {:.2} (the error from the model's finite sample). Lower tail: \
         p = (1 + catalogues with ln L at or below the catalogue's) / (1 + catalogues) = \
         {}; a small p says the catalogue lies where the model's detected objects are rare. {}",
        fit.samples.len(),
        fit.model,
        fit.observed,
        fit.observed_error,
        crate::statistics::chance_with_error(fit.p, fit.p_error),
        catalogues_rationale(fit.samples.len(), fit.p)
    );
    let stem = format!("goodness_of_fit_{}", fit.model);
    render(&stem, &title, &caption, (style::WIDTH, style::HEIGHT), |root| {
        let area = titled(root, &title)?;
        let Some((lo, hi)) = finite_range(&fit.samples) else {
            return empty_note(&area, "no synthetic catalogues");
        };
        let span = (hi - lo).max(1e-6);
        // The catalogue's value widens the axis only when it is near the null: far outside,
        // the null would shrink to a spike, so an arrow at the edge points to it instead.
        let near = fit.observed.is_finite() && fit.observed > lo - span && fit.observed < hi + span;
        let (a, b) = if near {
            (lo.min(fit.observed), hi.max(fit.observed))
        } else {
            (lo, hi)
        };
        let edges = Margin::Share {
            share: 0.05,
            at_least: 1e-9,
        }
        .edges(a, b, NULL_BINS);
        let total = fit.samples.len().max(1) as f64;
        let dens: Vec<f64> = histogram(&fit.samples, &edges)
            .iter()
            .map(|c| *c as f64 / total)
            .collect();
        let peak = dens.iter().copied().fold(0.0, f64::max).max(1e-9);
        let top = peak * 1.5;
        let mut chart = axes::chart(&area, edges[0]..edges[NULL_BINS], 0.0..top)?;
        axes::mesh(
            &mut chart,
            "ln L of a catalogue (nats)",
            "fraction of synthetic catalogues",
        )?;
        chart
            .draw_series(
                dens.iter()
                    .enumerate()
                    .map(|(k, d)| Rectangle::new([(edges[k], 0.0), (edges[k + 1], *d)], style::BAND.filled())),
            )?
            .label("synthetic catalogues of the model")
            .legend(|(x, y)| Rectangle::new([(x, y - 6), (x + 22, y + 6)], style::BAND.filled()));
        let c = style::series(1);
        let obs = match fit.p.is_finite() {
            true => format!("catalogue, p = {:.3}", fit.p),
            false => "catalogue (p withheld)".to_string(),
        };
        if near {
            chart
                .draw_series(std::iter::once(PathElement::new(
                    vec![(fit.observed, 0.0), (fit.observed, peak * 1.1)],
                    c.stroke_width(3),
                )))?
                .label(obs)
                .legend(axes::swatch(c, 3));
        } else {
            let left = fit.observed < lo;
            let x = if left { edges[0] } else { edges[NULL_BINS] };
            let y = peak * 0.6;
            let side = if left { HPos::Left } else { HPos::Right };
            let arrow = if left {
                format!("◀ catalogue: ln L = {:.1}", fit.observed)
            } else {
                format!("catalogue: ln L = {:.1} ▶", fit.observed)
            };
            chart
                .draw_series(std::iter::once(Text::new(
                    arrow,
                    (x, y),
                    style::text(style::LABEL_PX).color(&c).pos(Pos::new(side, VPos::Center)),
                )))?
                .label(obs)
                .legend(axes::swatch(c, 3));
        }
        axes::legend(&mut chart, SeriesLabelPosition::UpperRight)
    })
}
