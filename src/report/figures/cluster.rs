//! The clustering test's null distribution: a histogram of the statistic over the bias-aware
//! Monte Carlo catalogs, the naive null (uniform angles) as an outline when given, the observed
//! value marked, and the p-values (bias-aware and naive) stated.

use plotters::prelude::*;

use super::axes;
use crate::error::Result;
use crate::report::figure::{Figure, empty_note, render, titled};
use crate::report::stats::{Margin, finite_range, histogram, lin_edges};
use crate::report::style;
use crate::report::tables::NullTest;

fn p_text(p: Option<f64>) -> String {
    p.map_or("not given".into(), |p| format!("{p:.3}"))
}

/// A statistic of `seine cluster-test` in words; other names as they are.
pub fn stat_label(name: &str) -> String {
    let (what, angle) = match name.split_once('_') {
        Some(("rayleigh", a)) => ("Rayleigh R/n", a),
        Some(("kuiper", a)) => ("Kuiper V", a),
        _ => ("", ""),
    };
    let sym = match angle {
        "varpi" => "ϖ",
        "node" => "Ω",
        "argperi" => "ω",
        _ => "",
    };
    match (what, sym, name) {
        (_, _, "global") => "global: −log₁₀ of the smallest p-value".into(),
        (_, _, "pole_and_perihelion") => "poles and perihelia together (Fisher's −2 Σ ln p)".into(),
        (_, _, "mean_pole") => "length of the mean orbital pole".into(),
        (_, _, "mean_perihelion") => "length of the mean perihelion direction".into(),
        ("", _, _) | (_, "", _) => name.into(),
        (w, s, _) => format!("{w} of {s}"),
    }
}

/// Bins of the histograms.
const BINS: usize = 40;

/// The null histogram of one statistic with its observed value as a vertical line.
pub fn null_distribution(test: &NullTest) -> Result<Figure> {
    let label = stat_label(&test.statistic);
    let title = format!("Cluster test: {label}");
    let naive = if test.naive_samples.is_empty() {
        String::new()
    } else {
        format!(
            " Blue outline: the naive null, {} catalogs of uniformly distributed angles (no survey \
             bias).",
            test.naive_samples.len()
        )
    };
    let caption = format!(
        "Distribution of the statistic {label} ({}, dimensionless; larger means more clustered) \
         over {} synthetic catalogs in which every object keeps its a, e, i and H and draws its \
         angles from its own bias map, i.e. isotropic angles seen through the same surveys (the \
         bias-aware null; grey bars), as the fraction of catalogs per bin.{naive} Orange line: the \
         observed catalog's value, {:.4}. Bias-aware p-value, (1 + catalogs at least as large) / \
         (1 + catalogs): {}; naive p-value, without the surveys' bias: {}.",
        test.statistic,
        test.samples.len(),
        test.observed,
        p_text(test.p_value),
        p_text(test.p_value_naive)
    );
    let stem = format!("cluster_null_{}", test.statistic);
    render(&stem, &title, &caption, (style::WIDTH, style::HEIGHT), |root| {
        let area = titled(root, &title)?;
        let Some((lo, hi)) = finite_range(&test.samples) else {
            return empty_note(&area, "no null samples");
        };
        let (lo, hi) = finite_range(&test.naive_samples).map_or((lo, hi), |(a, b)| (lo.min(a), hi.max(b)));
        let (lo, hi) = (lo.min(test.observed), hi.max(test.observed));
        let (start, end) = Margin::Share {
            share: 0.05,
            at_least: 1e-9,
        }
        .widen(lo, hi);
        // The statistics are lengths and distances, never negative: the axis starts at 0 then.
        let start = if lo >= 0.0 { start.max(0.0) } else { start };
        let edges = lin_edges(start, end, BINS);
        let fractions = |xs: &[f64]| -> Vec<f64> {
            let n = xs.len().max(1) as f64;
            histogram(xs, &edges).iter().map(|&c| c as f64 / n).collect()
        };
        let (dens, naive) = (fractions(&test.samples), fractions(&test.naive_samples));
        let peak = dens.iter().chain(&naive).copied().fold(0.0, f64::max).max(1e-9);
        // Headroom above the tallest bin keeps the legend clear of the bars.
        let top = peak * 1.55;
        let mut chart = axes::chart(&area, edges[0]..edges[BINS], 0.0..top)?;
        axes::mesh(
            &mut chart,
            &format!("{label} (dimensionless)"),
            "fraction of null catalogs",
        )?;
        chart
            .draw_series(
                dens.iter()
                    .enumerate()
                    .map(|(k, &d)| Rectangle::new([(edges[k], 0.0), (edges[k + 1], d)], style::BAND.filled())),
            )?
            .label("bias-aware null (bias maps)")
            .legend(|(x, y)| Rectangle::new([(x, y - 6), (x + 22, y + 6)], style::BAND.filled()));
        if !test.naive_samples.is_empty() {
            let c = style::series(0);
            for (j, run) in axes::step_runs(&edges, &naive, Some(0.0)).into_iter().enumerate() {
                let drawn = chart.draw_series(std::iter::once(PathElement::new(run, c.stroke_width(2))))?;
                if j == 0 {
                    drawn.label("naive null (uniform angles)").legend(axes::swatch(c, 2));
                }
            }
        }
        let c = style::series(1);
        chart
            .draw_series(std::iter::once(PathElement::new(
                vec![(test.observed, 0.0), (test.observed, peak * 1.08)],
                c.stroke_width(3),
            )))?
            .label(format!("observed, p = {}", p_text(test.p_value)))
            .legend(axes::swatch(c, 3));
        // The legend goes to the side whose bars, outline and observed line are lower.
        let obs_bin = ((test.observed - edges[0]) / (edges[BINS] - edges[0]) * BINS as f64) as usize;
        let height = |k: usize| {
            let line = if k == obs_bin.min(BINS - 1) { peak * 1.08 } else { 0.0 };
            dens[k].max(naive.get(k).copied().unwrap_or(0.0)).max(line)
        };
        let side = |ks: std::ops::Range<usize>| ks.map(height).fold(0.0, f64::max);
        let pos = if side(0..BINS * 2 / 5) < side(BINS * 3 / 5..BINS) {
            SeriesLabelPosition::UpperLeft
        } else {
            SeriesLabelPosition::UpperRight
        };
        axes::legend(&mut chart, pos)
    })
}
