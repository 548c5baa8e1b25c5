//! Yield against cadence: what each plan discovered of each population, against the plan's
//! revisit interval, with binomial (Wilson 95%) error bars.

use plotters::coord::combinators::BindKeyPoints;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::axes;
use crate::error::Result;
use crate::report::figure::{Figure, empty_note, render, titled};
use crate::report::style;
use crate::report::tables::CadenceRow;

/// The discovered fraction of each (plan, population) against the plan's cadence, points
/// labelled by plan and coloured by population.
pub fn yield_vs_cadence(rows: &[CadenceRow]) -> Result<Figure> {
    let title = "Yield against cadence";
    // Populations in order of first appearance, each once.
    let mut pops: Vec<&str> = Vec::new();
    for r in rows {
        if !pops.contains(&r.population.as_str()) {
            pops.push(&r.population);
        }
    }
    let caption = format!(
        "Discovered fraction of each population for each plan ({} plans), against the plan's \
         revisit interval: the median time between successive nights on which a field was \
         visited (days). Bars are 95% Wilson intervals. The fraction is the yield per object \
         injected; multiply by the population's size for a number.",
        rows.iter()
            .map(|r| r.plan.as_str())
            .collect::<std::collections::BTreeSet<_>>()
            .len()
    );
    render(
        "yield_cadence",
        title,
        &caption,
        (style::WIDTH, style::HEIGHT),
        |root| {
            let area = titled(root, title)?;
            if rows.is_empty() {
                return empty_note(&area, "no plans to compare");
            }
            // Revisit intervals run from hours-apart nights to a year: a logarithmic axis.
            let xs = rows.iter().map(|r| r.cadence_days.max(0.1));
            let (x0, x1) = xs.fold((f64::MAX, f64::MIN), |(a, b), x| (a.min(x), b.max(x)));
            let (x0, x1) = (x0 / 2.0, x1 * 2.0);
            let ymax = rows.iter().map(|r| r.wilson_hi).fold(1e-4, f64::max) * 1.25;
            let x = (x0..x1).log_scale().with_key_points(axes::log_ticks(x0, x1));
            let mut chart = axes::chart(&area, x, 0.0..ymax)?;
            axes::mesh(
                &mut chart,
                "revisit interval (days)",
                "discovered fraction (dimensionless)",
            )?;
            let mid = (x0 * x1).sqrt();
            // Labels point inwards so that they stay inside the plot.
            let lab = |x: f64| {
                let h = if x > mid { HPos::Right } else { HPos::Left };
                style::text(style::LABEL_PX - 1.0).pos(Pos::new(h, VPos::Bottom))
            };
            for (k, pop) in pops.iter().enumerate() {
                let c = style::series(k);
                let mine: Vec<&CadenceRow> = rows.iter().filter(|r| r.population == *pop).collect();
                chart.draw_series(mine.iter().map(|r| {
                    ErrorBar::new_vertical(r.cadence_days, r.wilson_lo, frac(r), r.wilson_hi, c.stroke_width(2), 8)
                }))?;
                chart
                    .draw_series(
                        mine.iter()
                            .map(|r| Circle::new((r.cadence_days, frac(r)), 5, c.filled())),
                    )?
                    .label(pop.to_string())
                    .legend(move |(x, y)| Circle::new((x + 11, y), 5, c.filled()));
                chart.draw_series(mine.iter().map(|r| {
                    Text::new(
                        format!("  {} ({}/{})  ", r.plan, r.n_discovered, r.n_objects),
                        (r.cadence_days, frac(r)),
                        lab(r.cadence_days),
                    )
                }))?;
            }
            axes::legend(&mut chart, SeriesLabelPosition::UpperRight)
        },
    )
}

/// The weighted discovered fraction.
fn frac(r: &CadenceRow) -> f64 {
    r.fraction
}
