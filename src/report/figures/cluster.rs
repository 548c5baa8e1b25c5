//! The clustering test's null distribution: a histogram of the statistic over the Monte Carlo
//! catalogs, with the observed value marked and the p-value (bias-aware and naive) stated.

use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::axes;
use crate::error::Result;
use crate::report::figure::{Figure, empty_note, render, titled};
use crate::report::stats::{finite_range, histogram, lin_edges};
use crate::report::style;
use crate::report::tables::NullTest;

fn p_text(p: Option<f64>) -> String {
    p.map_or("not given".into(), |p| format!("{p:.3}"))
}

/// The null histogram of one statistic with its observed value as a vertical line.
pub fn null_distribution(test: &NullTest) -> Result<Figure> {
    let title = format!("Cluster test: {}", test.statistic);
    let caption = format!(
        "Distribution of the statistic {} (dimensionless) over {} synthetic catalogs whose angles \
         are drawn isotropically and seen through the same surveys (the bias-aware null), as the \
         fraction of catalogs per bin. Orange line: the observed catalog's value, {:.4}. \
         Bias-aware p-value (fraction of null catalogs at least as extreme): {}; naive p-value, \
         without the survey's bias: {}.",
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
        let (lo, hi) = (lo.min(test.observed), hi.max(test.observed));
        let pad = ((hi - lo) * 0.05).max(1e-9);
        let edges = lin_edges(lo - pad, hi + pad, 40);
        let n = test.samples.len() as f64;
        let dens: Vec<f64> = histogram(&test.samples, &edges).iter().map(|&c| c as f64 / n).collect();
        let top = dens.iter().copied().fold(0.0, f64::max) * 1.2;
        let mut chart = axes::chart(&area, edges[0]..edges[40], 0.0..top.max(1e-9))?;
        axes::mesh(
            &mut chart,
            &format!("{} (dimensionless)", test.statistic),
            "fraction of null catalogs",
        )?;
        chart.draw_series(
            dens.iter()
                .enumerate()
                .map(|(k, &d)| Rectangle::new([(edges[k], 0.0), (edges[k + 1], d)], style::BAND.filled())),
        )?;
        let c = style::series(1);
        chart.draw_series(std::iter::once(PathElement::new(
            vec![(test.observed, 0.0), (test.observed, top * 0.92)],
            c.stroke_width(3),
        )))?;
        // The label leans inwards so that it stays inside the plot at either end.
        let h = if test.observed > 0.5 * (edges[0] + edges[40]) {
            HPos::Right
        } else {
            HPos::Left
        };
        let s = style::text(style::LABEL_PX).pos(Pos::new(h, VPos::Bottom));
        chart.draw_series(std::iter::once(Text::new(
            format!(" observed, p = {} ", p_text(test.p_value)),
            (test.observed, top * 0.93),
            s,
        )))?;
        Ok(())
    })
}
