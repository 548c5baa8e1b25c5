//! Yield against cadence: what each plan discovered of each population against the plan's
//! revisit interval (above), and the same per hour of telescope time (below), so that plans
//! of unequal effort compare fairly; binomial (Wilson 95%) error bars.

use plotters::coord::combinators::BindKeyPoints;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::axes;
use crate::error::Result;
use crate::report::figure::{Area, DrawResult, Figure, empty_note, render, titled};
use crate::report::style;
use crate::report::tables::PlanYield;

/// One panel's quantity: a value and its 95% interval per row, or none (no effort known).
type Measure = fn(&PlanYield) -> Option<(f64, f64, f64)>;

/// The (weighted) discovered fraction and its Wilson interval.
fn fraction(r: &PlanYield) -> Option<(f64, f64, f64)> {
    Some((r.row.fraction, r.row.wilson_lo, r.row.wilson_hi))
}

/// Discoveries per 100 hours of the plan's time (the fraction times the objects injected),
/// with the fraction's interval carried over.
fn per_100_hours(r: &PlanYield) -> Option<(f64, f64, f64)> {
    let hours = r.effort.as_ref()?.hours;
    (hours > 0.0).then(|| {
        let (f, lo, hi) = fraction(r).expect("always");
        let scale = 100.0 * r.row.n_objects as f64 / hours;
        (f * scale, lo * scale, hi * scale)
    })
}

/// The discovered fraction of each (plan, population) against the plan's cadence, and the
/// discoveries per 100 hours of telescope time; points labelled by plan (beside the point,
/// clear of its error bar) and coloured by population.
pub fn yield_vs_cadence(rows: &[PlanYield]) -> Result<Figure> {
    let title = "Yield against cadence";
    let mut pops: Vec<&str> = Vec::new();
    for r in rows {
        if !pops.contains(&r.row.population.as_str()) {
            pops.push(&r.row.population);
        }
    }
    let with_effort = rows.iter().filter(|r| per_100_hours(r).is_some()).count();
    let open_shutter = rows
        .iter()
        .any(|r| r.effort.as_ref().is_some_and(|e| !e.telescope_time));
    let caption = format!(
        "Above: the discovered fraction of each population for each plan ({} plans), against the \
         plan's revisit interval, the median time between successive nights on which a field was \
         visited (days); the fraction is the yield per object injected. Below: the discoveries \
         per 100 hours of {} ({} of the plans have a known effort), the fair comparison of plans \
         that spend different time. Bars are 95% Wilson intervals; each plan's visits, hours and \
         area are in the table beside. Colours: the population, named in the legend.",
        rows.iter()
            .map(|r| r.row.plan.as_str())
            .collect::<std::collections::BTreeSet<_>>()
            .len(),
        if open_shutter {
            "telescope time (open-shutter time where marked † in the table)"
        } else {
            "telescope time"
        },
        with_effort
    );
    render(
        "yield_cadence",
        title,
        &caption,
        (style::WIDTH, 2 * style::HEIGHT - 60),
        |root| {
            let area = titled(root, title)?;
            if rows.is_empty() {
                return empty_note(&area, "no plans to compare");
            }
            let (x0, x1) = x_range(rows);
            let (upper, lower) = area.split_vertically(area.dim_in_pixel().1 / 2);
            let panel = Panel {
                rows,
                pops: &pops,
                x: (x0, x1),
            };
            panel.draw(&upper, fraction, "discovered fraction (dimensionless)")?;
            if with_effort == 0 {
                return empty_note(&lower, "no plan's effort is known (its survey spec was not found)");
            }
            panel.draw(&lower, per_100_hours, "discoveries per 100 h")
        },
    )
}

/// Revisit intervals run from hours-apart nights to a year: a logarithmic axis with room.
fn x_range(rows: &[PlanYield]) -> (f64, f64) {
    let (lo, hi) = rows
        .iter()
        .map(|r| r.row.cadence_days.max(0.1))
        .fold((f64::MAX, f64::MIN), |(a, b), x| (a.min(x), b.max(x)));
    (lo / 2.0, hi * 2.5)
}

struct Panel<'a> {
    rows: &'a [PlanYield],
    pops: &'a [&'a str],
    x: (f64, f64),
}

impl Panel<'_> {
    fn draw(&self, area: &Area, measure: Measure, y_desc: &str) -> DrawResult {
        let (x0, x1) = self.x;
        let ymax = self.rows.iter().filter_map(measure).map(|m| m.2).fold(1e-9, f64::max) * 1.3;
        let x = (x0..x1).log_scale().with_key_points(axes::log_ticks(x0, x1));
        let mut chart = axes::chart(area, x, 0.0..ymax)?;
        axes::mesh(&mut chart, "revisit interval (days)", y_desc)?;
        let mut items = Vec::new();
        for (k, pop) in self.pops.iter().enumerate() {
            let c = style::series(k);
            let mine: Vec<(&PlanYield, (f64, f64, f64))> = self
                .rows
                .iter()
                .filter(|r| r.row.population == *pop)
                .filter_map(|r| measure(r).map(|m| (r, m)))
                .collect();
            chart.draw_series(mine.iter().map(|(r, (v, lo, hi))| {
                ErrorBar::new_vertical(r.row.cadence_days, *lo, *v, *hi, c.stroke_width(2), 8)
            }))?;
            chart
                .draw_series(
                    mine.iter()
                        .map(|(r, (v, _, _))| Circle::new((r.row.cadence_days, *v), 5, c.filled())),
                )?
                .label(pop.to_string())
                .legend(move |(x, y)| Circle::new((x + 11, y), 5, c.filled()));
            items.extend(mine);
        }
        // Labels go beside their points where they cover no point, error bar or other label.
        let px = |x: f64, y: f64| chart.backend_coord(&(x, y));
        let obstacles: Vec<Rect> = items
            .iter()
            .flat_map(|(r, (v, lo, hi))| {
                let (x, y) = px(r.row.cadence_days, *v);
                let (top, bottom) = (px(r.row.cadence_days, *hi).1, px(r.row.cadence_days, *lo).1);
                [
                    Rect::new(x - 6, top - 1, x + 6, bottom + 1),
                    Rect::new(x - 7, y - 7, x + 7, y + 7),
                ]
            })
            .collect();
        let (xr, yr) = chart.plotting_area().get_pixel_range();
        let bounds = Rect::new(xr.start, yr.start, xr.end, yr.end);
        let mut placed: Vec<Rect> = Vec::new();
        let font = style::LABEL_PX - 2.0;
        let labels: Vec<(f64, f64, String, (i32, i32, HPos))> = items
            .iter()
            .map(|(r, (v, _, _))| {
                let text = format!("{} ({}/{})", r.row.plan, r.row.n_discovered, r.row.n_objects);
                let at = px(r.row.cadence_days, *v);
                let spot = place_label(at, text.chars().count(), font, &bounds, &obstacles, &mut placed);
                (r.row.cadence_days, *v, text, spot)
            })
            .collect();
        for (x, y, text, (dx, dy, h)) in labels {
            let style = style::text(font).pos(Pos::new(h, VPos::Center));
            chart.draw_series(std::iter::once(
                EmptyElement::at((x, y)) + Text::new(text, (dx, dy), style),
            ))?;
        }
        axes::legend(&mut chart, SeriesLabelPosition::UpperRight)
    }
}

/// A rectangle in pixels: (x0, y0) top left, (x1, y1) bottom right.
#[derive(Debug, Clone, Copy, PartialEq)]
struct Rect {
    x0: i32,
    y0: i32,
    x1: i32,
    y1: i32,
}

impl Rect {
    fn new(x0: i32, y0: i32, x1: i32, y1: i32) -> Rect {
        Rect { x0, y0, x1, y1 }
    }
    fn overlaps(&self, o: &Rect) -> bool {
        self.x0 < o.x1 && o.x0 < self.x1 && self.y0 < o.y1 && o.y0 < self.y1
    }
    fn inside(&self, o: &Rect) -> bool {
        self.x0 >= o.x0 && self.x1 <= o.x1 && self.y0 >= o.y0 && self.y1 <= o.y1
    }
}

/// Where a label of `chars` characters goes beside its point `at`: the first of right, left,
/// above and below (then the corners) that stays in `bounds` and covers no obstacle or
/// placed label; the first of them when none is free. Returns the offset from the point
/// and the anchor, and records the label's rectangle in `placed`.
fn place_label(
    at: (i32, i32),
    chars: usize,
    font_px: f64,
    bounds: &Rect,
    obstacles: &[Rect],
    placed: &mut Vec<Rect>,
) -> (i32, i32, HPos) {
    // A sans-serif character is about 0.5 em wide on average.
    let (w, h) = ((0.5 * font_px * chars as f64).ceil() as i32, font_px.ceil() as i32 + 2);
    let candidates = [
        (12, 0, HPos::Left),
        (-12, 0, HPos::Right),
        (8, -h, HPos::Left),
        (-8, -h, HPos::Right),
        (8, h, HPos::Left),
        (-8, h, HPos::Right),
        (10, -2 * h, HPos::Left),
        (-10, -2 * h, HPos::Right),
        (10, 2 * h, HPos::Left),
        (-10, 2 * h, HPos::Right),
    ];
    let rect = |(dx, dy, anchor): (i32, i32, HPos)| {
        let x = at.0 + dx;
        let (x0, x1) = match anchor {
            HPos::Right => (x - w, x),
            _ => (x, x + w),
        };
        Rect::new(x0, at.1 + dy - h / 2, x1, at.1 + dy + h / 2)
    };
    let free = candidates.iter().copied().find(|&c| {
        let r = rect(c);
        r.inside(bounds) && !obstacles.iter().chain(placed.iter()).any(|o| o.overlaps(&r))
    });
    let chosen = free.unwrap_or(candidates[if at.0 + w + 12 > bounds.x1 { 1 } else { 0 }]);
    placed.push(rect(chosen));
    chosen
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn labels_avoid_error_bars_and_each_other() {
        let bounds = Rect::new(0, 0, 600, 400);
        // A point with a long error bar and a second point just below the first's label.
        let bar = Rect::new(94, 100, 106, 300);
        let mut placed = Vec::new();
        let first = place_label((100, 200), 20, 14.0, &bounds, &[bar], &mut placed);
        assert_eq!((first.0, first.1), (12, 0));
        let second = place_label((100, 204), 20, 14.0, &bounds, &[bar], &mut placed);
        assert_ne!((second.0, second.1), (12, 0), "{:?}", (second.0, second.1));
        assert!(!placed[0].overlaps(&placed[1]));
        assert!(placed.iter().all(|r| !r.overlaps(&bar)));
        // Near the right edge a label goes to the left of its point.
        let mut placed = Vec::new();
        let edge = place_label((580, 50), 20, 14.0, &bounds, &[], &mut placed);
        assert!(matches!(edge.2, HPos::Right));
    }
}
