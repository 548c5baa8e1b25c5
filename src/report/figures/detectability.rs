//! What `seine detectability` found: each catalogue object's chance of discovery with its
//! interval against its orbit and size, and a population's selection function as heat maps
//! over pairs of (a, q, i, H).

use plotters::coord::combinators::BindKeyPoints;
use plotters::coord::ranged1d::{AsRangedCoord, Ranged, ValueFormatter};
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::axes;
use super::bias::colour_bar;
use super::distributions::{is_log, nice_top};
use crate::error::Result;
use crate::report::figure::{Area, DrawResult, Figure, empty_note, render, titled};
use crate::report::stats::{Margin, finite_range, label, symbol};
use crate::report::style;
use crate::report::tables::{ObjectChance, SelectionCell};

/// The value of a detectability row's quantity.
fn value_of(r: &ObjectChance, quantity: &str) -> f64 {
    match quantity {
        "a_au" => r.a_au,
        "q_au" => r.q_au,
        "inc_deg" => r.inc_deg,
        _ => r.h_mag,
    }
}

/// Each object's chance of discovery against `quantity` (a_au, q_au, inc_deg or h_mag), with
/// its 95% Wilson interval over the trials; a logarithmic axis when the chances span more
/// than a decade, objects never discovered drawn as upper limits.
pub fn chances(quantity: &str, rows: &[ObjectChance], trials_note: &str) -> Result<Figure> {
    let sym = symbol(quantity);
    let title = format!("Chance of discovery of each object against {sym}");
    let axis = ChanceAxis::of(rows);
    let caption = format!(
        "Each catalogue object's chance of discovery by the surveys ({} objects), against its \
         {}: the fraction of its trials (its a, e, i and H kept; {trials_note}) in which it was \
         discovered. Bars: 95% Wilson score intervals (Wilson 1927) over the trials{}. In a \
         likelihood fit that conditions on the orbits, an object counts with the inverse of its \
         chance: the objects low in this plot carry the most weight and the most noise.",
        rows.len(),
        label(quantity),
        match axis {
            ChanceAxis::Log { .. } => {
                "; chances on a logarithmic axis; an object never discovered in its trials is \
                 drawn as a downward triangle at the upper end of its interval (an upper limit)"
            }
            ChanceAxis::Linear { .. } => "",
        }
    );
    let stem = format!("chance_{quantity}");
    let xs: Vec<f64> = rows.iter().map(|r| value_of(r, quantity)).collect();
    render(&stem, &title, &caption, (style::WIDTH, style::HEIGHT), |root| {
        let area = titled(root, &title)?;
        let Some((lo, hi)) = finite_range(&xs) else {
            return empty_note(&area, "no objects");
        };
        let margin = Margin::for_axis(is_log(quantity, lo, hi), 1.1, (0.05, 0.2));
        let (x0, x1) = margin.widen(lo, hi);
        let plot = Chances { rows, quantity, axis };
        match (is_log(quantity, lo, hi), axis) {
            (true, ChanceAxis::Log { floor, top }) => plot.draw(
                &area,
                (x0..x1).log_scale().with_key_points(axes::log_ticks(x0, x1)),
                (floor..top).log_scale().with_key_points(axes::log_ticks(floor, top)),
            ),
            (true, ChanceAxis::Linear { top }) => plot.draw(
                &area,
                (x0..x1).log_scale().with_key_points(axes::log_ticks(x0, x1)),
                0.0..top,
            ),
            (false, ChanceAxis::Log { floor, top }) => plot.draw(
                &area,
                x0..x1,
                (floor..top).log_scale().with_key_points(axes::log_ticks(floor, top)),
            ),
            (false, ChanceAxis::Linear { top }) => plot.draw(&area, x0..x1, 0.0..top),
        }
    })
}

/// The chance axis: linear from 0, or logarithmic from below the smallest interval.
#[derive(Debug, Clone, Copy)]
enum ChanceAxis {
    Linear { top: f64 },
    Log { floor: f64, top: f64 },
}

impl ChanceAxis {
    fn of(rows: &[ObjectChance]) -> Self {
        let top = nice_top(rows.iter().map(|r| r.discovered.upper).fold(0.0, f64::max));
        let found: Vec<f64> = rows
            .iter()
            .map(|r| r.discovered.fraction)
            .filter(|p| *p > 0.0)
            .collect();
        let (lo, hi) = finite_range(&found).unwrap_or((1.0, 1.0));
        if hi / lo <= 10.0 && found.len() == rows.len() {
            return ChanceAxis::Linear { top };
        }
        // Below the smallest positive end of any interval, at a power of ten.
        let smallest = rows
            .iter()
            .flat_map(|r| [r.discovered.lower, r.discovered.upper])
            .filter(|p| *p > 0.0)
            .fold(lo, f64::min);
        let floor = 10f64.powf((smallest * 0.8).log10().floor());
        ChanceAxis::Log {
            floor,
            top: top.max(floor * 10.0),
        }
    }
}

struct Chances<'a> {
    rows: &'a [ObjectChance],
    quantity: &'a str,
    axis: ChanceAxis,
}

impl Chances<'_> {
    fn draw<X, Y>(&self, area: &Area, x: X, y: Y) -> DrawResult
    where
        X: AsRangedCoord<Value = f64>,
        X::CoordDescType: Ranged<ValueType = f64> + ValueFormatter<f64>,
        Y: AsRangedCoord<Value = f64>,
        Y::CoordDescType: Ranged<ValueType = f64> + ValueFormatter<f64>,
    {
        let (floor, top) = match self.axis {
            ChanceAxis::Linear { top } => (0.0, top),
            ChanceAxis::Log { floor, top } => (floor, top),
        };
        let clip = |p: f64| p.clamp(floor, top);
        let mut chart = axes::chart(area, x, y)?;
        axes::mesh(&mut chart, &label(self.quantity), "chance of discovery (dimensionless)")?;
        let c = style::series(0);
        let at = |r: &ObjectChance| value_of(r, self.quantity);
        let (found, never): (Vec<&ObjectChance>, Vec<&ObjectChance>) = self
            .rows
            .iter()
            .partition(|r| r.discovered.k > 0 || matches!(self.axis, ChanceAxis::Linear { .. }));
        chart.draw_series(found.iter().map(|r| {
            let p = &r.discovered;
            ErrorBar::new_vertical(
                at(r),
                clip(p.lower),
                clip(p.fraction),
                clip(p.upper),
                c.stroke_width(1),
                6,
            )
        }))?;
        let cut = found.iter().filter(|r| r.discovered.upper > top);
        chart.draw_series(cut.map(|r| TriangleMarker::new((at(r), top), 6, c.filled())))?;
        chart.draw_series(
            found
                .iter()
                .map(|r| Circle::new((at(r), clip(r.discovered.fraction)), 4, c.filled())),
        )?;
        // Never discovered: a bar from the axis to the interval's upper end, capped by a
        // downward triangle (an upper limit).
        chart.draw_series(never.iter().map(|r| {
            PathElement::new(
                vec![(at(r), floor), (at(r), clip(r.discovered.upper))],
                c.stroke_width(1),
            )
        }))?;
        chart.draw_series(never.iter().map(|r| {
            EmptyElement::at((at(r), clip(r.discovered.upper)))
                + Polygon::new(vec![(-5, -3), (5, -3), (0, 6)], c.filled())
        }))?;
        Ok(())
    }
}

/// A column or row of the selection map: one interval of a quantity.
fn interval_text(lo: f64, hi: f64) -> String {
    format!("{}–{}", axes::tick(lo), axes::tick(hi))
}

/// A fraction in a cell: a percentage with the digits a small fraction needs.
fn percent(f: f64) -> String {
    if !f.is_finite() {
        "–".into()
    } else if f == 0.0 {
        "0".into()
    } else if f >= 0.1 {
        format!("{:.0}%", 100.0 * f)
    } else if f >= 0.01 {
        format!("{:.1}%", 100.0 * f)
    } else {
        format!("{:.2}%", 100.0 * f)
    }
}

/// The selection function on (x, y): one cell per pair of the grid's intervals that holds
/// population objects, coloured by the weighted discovered fraction, with the fraction and
/// the number of objects written in it. Intervals are drawn at equal widths (the grid's cells
/// span decades in a) and named under their columns and beside their rows.
pub fn selection_map(x: &str, y: &str, cells: &[SelectionCell], population: &str) -> Result<Figure> {
    let (sx, sy) = (symbol(x), symbol(y));
    let title = format!("Selection function over {sx} and {sy}");
    let max = cells
        .iter()
        .map(|c| c.proportion().fraction)
        .filter(|v| v.is_finite())
        .fold(0.0, f64::max);
    let (n, k) = cells.iter().fold((0, 0), |(n, k), c| (n + c.tally.n, k + c.tally.k));
    let caption = format!(
        "The fraction of the population's objects that the surveys discovered ({population}: {k} \
         of {n} objects), in cells of {} and {}: the selection function P(discovered | cell) \
         averaged over the population's own distribution in the other two of a, q, i and H. \
         Fractions are weighted by the objects' weights; each cell gives the fraction and its \
         number of objects n (the 95% Wilson intervals at the effective n are in \
         selection_function.*). Cells are drawn at equal widths, labelled with their \
         intervals; blank cells hold no objects. Colour scale linear from 0 to the largest \
         fraction, {}.",
        label(x),
        label(y),
        percent(max)
    );
    let stem = format!("selection_{x}_{y}");
    let cols = intervals(cells.iter().map(|c| c.edges[0]));
    let rows = intervals(cells.iter().map(|c| c.edges[1]));
    render(&stem, &title, &caption, (style::WIDTH, style::HEIGHT + 60), |root| {
        let area = titled(root, &title)?;
        if cells.is_empty() {
            return empty_note(&area, "no population objects in the grid");
        }
        let (plot, bar) = area.split_horizontally(area.dim_in_pixel().0 - 120);
        draw_grid_cells(&plot, cells, &cols, &rows, max, (x, y))?;
        let digits = if max >= 0.1 {
            0
        } else if max >= 0.01 {
            1
        } else {
            2
        };
        colour_bar(&bar, max, "discovered fraction (%)", &|v| {
            format!("{:.*}%", digits, 100.0 * v)
        })
    })
}

/// The distinct intervals, in order.
fn intervals(edges: impl Iterator<Item = (f64, f64)>) -> Vec<(f64, f64)> {
    let mut v: Vec<(f64, f64)> = edges.collect();
    v.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.total_cmp(&b.1)));
    v.dedup();
    v
}

fn draw_grid_cells(
    area: &Area,
    cells: &[SelectionCell],
    cols: &[(f64, f64)],
    rows: &[(f64, f64)],
    max: f64,
    names: (&str, &str),
) -> DrawResult {
    let (w, h) = area.dim_in_pixel();
    let (left, right, top, bottom) = (112i32, w as i32 - 8, 8i32, h as i32 - 70);
    let cw = (right - left) as f64 / cols.len() as f64;
    let rh = (bottom - top) as f64 / rows.len() as f64;
    let px = |i: usize| left + (cw * i as f64).round() as i32;
    let py = |j: usize| bottom - (rh * j as f64).round() as i32;
    let scale = if max > 0.0 { max } else { 1.0 };
    let big = style::text(style::LABEL_PX - 1.0).pos(Pos::new(HPos::Center, VPos::Center));
    let small = style::text(style::LABEL_PX - 4.0).pos(Pos::new(HPos::Center, VPos::Center));
    for c in cells {
        let (Some(i), Some(j)) = (
            cols.iter().position(|e| *e == c.edges[0]),
            rows.iter().position(|e| *e == c.edges[1]),
        ) else {
            continue;
        };
        let f = c.proportion().fraction;
        let t = f / scale;
        area.draw(&Rectangle::new(
            [(px(i), py(j + 1)), (px(i + 1), py(j))],
            style::sequential(t).filled(),
        ))?;
        area.draw(&Rectangle::new(
            [(px(i), py(j + 1)), (px(i + 1), py(j))],
            style::PAPER.stroke_width(1),
        ))?;
        let ink = if t > 0.55 { style::PAPER } else { style::INK };
        let (cx, cy) = ((px(i) + px(i + 1)) / 2, (py(j) + py(j + 1)) / 2);
        if cw >= 40.0 && rh >= 30.0 {
            area.draw(&Text::new(percent(f), (cx, cy - 8), big.clone().color(&ink)))?;
            area.draw(&Text::new(
                format!("n={}", c.tally.n),
                (cx, cy + 9),
                small.clone().color(&ink),
            ))?;
        } else if cw >= 30.0 && rh >= 14.0 {
            area.draw(&Text::new(percent(f), (cx, cy), small.clone().color(&ink)))?;
        }
    }
    area.draw(&Rectangle::new(
        [(left, top), (right, bottom)],
        style::MUTED.stroke_width(1),
    ))?;
    let tick = style::text(style::LABEL_PX - 3.0);
    for (i, (lo, hi)) in cols.iter().enumerate() {
        let at = ((px(i) + px(i + 1)) / 2, bottom + 6);
        let s = tick.clone().pos(Pos::new(HPos::Center, VPos::Top));
        area.draw(&Text::new(interval_text(*lo, *hi), at, s))?;
    }
    for (j, (lo, hi)) in rows.iter().enumerate() {
        let at = (left - 6, (py(j) + py(j + 1)) / 2);
        let s = tick.clone().pos(Pos::new(HPos::Right, VPos::Center));
        area.draw(&Text::new(interval_text(*lo, *hi), at, s))?;
    }
    let axis = style::text(style::AXIS_PX);
    area.draw(&Text::new(
        label(names.0),
        ((left + right) / 2, bottom + 40),
        axis.clone().pos(Pos::new(HPos::Center, VPos::Top)),
    ))?;
    area.draw(&Text::new(
        label(names.1),
        (14, (top + bottom) / 2),
        axis.transform(FontTransform::Rotate270)
            .pos(Pos::new(HPos::Center, VPos::Center)),
    ))?;
    Ok(())
}
