//! Bias maps: a value (usually the discovery probability) on a grid of two quantities, e.g.
//! (ϖ, Ω) with the mean anomaly redrawn, as a heat map. A map of few distinct values (cells
//! of a handful of trials each, where every value is k of n) is drawn with a discrete scale,
//! one swatch per value, so that no one reads a smooth gradient into a coarse count.

use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::axes;
use crate::error::Result;
use crate::report::figure::{Area, DrawResult, Figure, empty_note, render, titled};
use crate::report::stats::{label, symbol};
use crate::report::style;
use crate::report::tables::{HeatCell, HeatMap};

/// A map with at most this many distinct values is drawn with a discrete scale.
pub const MAX_DISCRETE: usize = 8;

/// How the values of a map are coloured.
#[derive(Debug, Clone, PartialEq)]
pub enum Scale {
    /// Linear from 0 to `max`, with a colour bar.
    Continuous { max: f64 },
    /// One colour per distinct value (ascending), with a key of the values.
    Discrete { values: Vec<f64>, max: f64 },
}

impl Scale {
    /// Discrete when the finite values are few, else continuous.
    pub fn of(cells: &[HeatCell]) -> Scale {
        let max = cells
            .iter()
            .map(|c| c.value)
            .filter(|v| v.is_finite())
            .fold(0.0, f64::max);
        let mut values: Vec<f64> = cells.iter().map(|c| c.value).filter(|v| v.is_finite()).collect();
        values.sort_by(f64::total_cmp);
        // Values that differ only by rounding (k/n computed twice) are one value.
        values.dedup_by(|a, b| (*a - *b).abs() <= 1e-12 * b.abs().max(1e-300));
        if values.len() <= MAX_DISCRETE {
            Scale::Discrete { values, max }
        } else {
            Scale::Continuous { max }
        }
    }

    /// The largest value: the top of the colour scale.
    pub fn max(&self) -> f64 {
        match self {
            Scale::Continuous { max } | Scale::Discrete { max, .. } => *max,
        }
    }

    /// The colour of a value.
    fn colour(&self, v: f64) -> RGBColor {
        let m = self.max();
        style::sequential(if m > 0.0 { v / m } else { 0.0 })
    }
}

/// The trials behind a map's cells: (fewest, most), when known.
fn trial_range(map: &HeatMap) -> Option<(u64, u64)> {
    let t: Vec<u64> = map.cells.iter().filter_map(|c| c.trials).collect();
    Some((*t.iter().min()?, *t.iter().max()?))
}

/// A value of a discrete key: as k/n when every cell has n trials, else as a number.
fn value_text(v: f64, trials: Option<(u64, u64)>) -> String {
    match trials {
        Some((n, m)) if n == m && n > 0 => format!("{}/{n} = {v:.3}", (v * n as f64).round() as u64),
        _ => format!("{v:.3}"),
    }
}

/// A heat map of `map`: a discrete scale when its values are few (see `Scale::of`), else
/// linear from 0 to the largest value.
pub fn bias_map(map: &HeatMap) -> Result<Figure> {
    let (sx, sy) = (symbol(&map.x), symbol(&map.y));
    let who = map.id.map(|id| format!(" of object {id}")).unwrap_or_default();
    let title = format!("Bias map{who}: {sx} against {sy}");
    let scale = Scale::of(&map.cells);
    let trials = trial_range(map);
    let per_cell = match trials {
        Some((a, b)) if a == b => format!(" Each cell holds {a} trials."),
        Some((a, b)) => format!(" Cells hold {a} to {b} trials."),
        None => String::new(),
    };
    let how = match &scale {
        Scale::Discrete { values, .. } => format!(
            "The map takes only {} distinct values, each drawn in its own colour (the key lists \
             them): a cell's value is the fraction of its few trials that were discovered, so \
             neighbouring cells differ by whole trials, not by the surveys' bias.",
            values.len()
        ),
        Scale::Continuous { max } => format!("Colour scale linear from 0 to the largest value, {max:.3}."),
    };
    let caption = format!(
        "The {} (dimensionless){who} on a grid of {} and {}, {} cells.{per_cell} {how} Where the \
         map is pale the surveys could not have found such an orbit, whatever the population holds.",
        map.value_label,
        label(&map.x),
        label(&map.y),
        map.cells.len()
    );
    let stem = match map.id {
        Some(id) => format!("bias_map_{}_{}_{id}", map.x, map.y),
        None => format!("bias_map_{}_{}", map.x, map.y),
    };
    let what = format!("{} (dimensionless)", map.value_label);
    render(&stem, &title, &caption, (style::WIDTH, style::HEIGHT + 40), |root| {
        let area = titled(root, &title)?;
        if map.cells.is_empty() {
            return empty_note(&area, "empty map");
        }
        let (plot, bar) = area.split_horizontally(area.dim_in_pixel().0 - 150);
        draw_cells(&plot, map, &scale, &[])?;
        draw_scale(&bar, &scale, &what, trials)
    })
}

/// The key of a map's colours: the colour bar of a continuous scale, or the swatches of a
/// discrete one; `what` names the value with its unit.
pub(crate) fn draw_scale(area: &Area, scale: &Scale, what: &str, trials: Option<(u64, u64)>) -> DrawResult {
    match scale {
        Scale::Continuous { max } => colour_bar(area, *max, what, &|v| format!("{v:.3}")),
        Scale::Discrete { values, .. } => discrete_key(area, values, scale, what, trials),
    }
}

/// The cells of `map` in the colours of `scale`, with `marks` (x, y) drawn over them as
/// crosses.
pub(crate) fn draw_cells(area: &Area, map: &HeatMap, scale: &Scale, marks: &[(f64, f64)]) -> DrawResult {
    let fold = |f: fn(&HeatCell) -> f64, init: f64, g: fn(f64, f64) -> f64| map.cells.iter().map(f).fold(init, g);
    let (x0, x1) = (
        fold(|c| c.x_min, f64::MAX, f64::min),
        fold(|c| c.x_max, f64::MIN, f64::max),
    );
    let (y0, y1) = (
        fold(|c| c.y_min, f64::MAX, f64::min),
        fold(|c| c.y_max, f64::MIN, f64::max),
    );
    let mut chart = axes::chart(area, x0..x1, y0..y1)?;
    chart.draw_series(
        map.cells
            .iter()
            .map(|c| Rectangle::new([(c.x_min, c.y_min), (c.x_max, c.y_max)], scale.colour(c.value).filled())),
    )?;
    axes::mesh(&mut chart, &label(&map.x), &label(&map.y))?;
    // A white halo under each dark cross keeps it legible on dark and pale cells alike.
    for (width, colour) in [(5, style::PAPER), (2, style::series(1))] {
        chart.draw_series(
            marks
                .iter()
                .map(|&(x, y)| Cross::new((x, y), 6, colour.stroke_width(width))),
        )?;
    }
    Ok(())
}

/// A key of a discrete scale: one swatch per value, from the top, under the value's name.
fn discrete_key(area: &Area, values: &[f64], scale: &Scale, what: &str, trials: Option<(u64, u64)>) -> DrawResult {
    let text = style::text(style::LABEL_PX - 2.0).pos(Pos::new(HPos::Left, VPos::Center));
    let under = style::text(style::LABEL_PX - 2.0).pos(Pos::new(HPos::Left, VPos::Top));
    let mut y = 14;
    for line in wrap(what, 18) {
        area.draw(&Text::new(line, (4, y), under.clone()))?;
        y += 17;
    }
    y += 10;
    for v in values {
        area.draw(&Rectangle::new([(6, y - 8), (26, y + 8)], scale.colour(*v).filled()))?;
        area.draw(&Rectangle::new([(6, y - 8), (26, y + 8)], style::MUTED.stroke_width(1)))?;
        area.draw(&Text::new(value_text(*v, trials), (32, y), text.clone()))?;
        y += 24;
    }
    Ok(())
}

/// A vertical colour bar with five ticks from 0 to `max`, each written by `tick`, and what
/// the colour is (with its unit) under it.
pub(crate) fn colour_bar(area: &Area, max: f64, what: &str, tick: &dyn Fn(f64) -> String) -> DrawResult {
    let (_, h) = area.dim_in_pixel();
    let (top, bottom) = (20i32, h as i32 - 90);
    let steps = 60;
    for k in 0..steps {
        let t0 = k as f64 / steps as f64;
        let y = |t: f64| bottom - ((bottom - top) as f64 * t) as i32;
        let c = style::sequential(t0 + 0.5 / steps as f64);
        area.draw(&Rectangle::new(
            [(10, y(t0 + 1.0 / steps as f64)), (34, y(t0))],
            c.filled(),
        ))?;
    }
    area.draw(&Rectangle::new([(10, top), (34, bottom)], style::MUTED.stroke_width(1)))?;
    let style_tick = style::text(style::LABEL_PX - 1.0).pos(Pos::new(HPos::Left, VPos::Center));
    for k in 0..=4 {
        let t = k as f64 / 4.0;
        let y = bottom - ((bottom - top) as f64 * t) as i32;
        area.draw(&Text::new(tick(t * max), (40, y), style_tick.clone()))?;
    }
    let under = style::text(style::LABEL_PX - 2.0).pos(Pos::new(HPos::Left, VPos::Top));
    for (k, line) in wrap(what, 18).iter().enumerate() {
        area.draw(&Text::new(
            line.clone(),
            (4, bottom + 10 + 17 * k as i32),
            under.clone(),
        ))?;
    }
    Ok(())
}

/// Greedy word wrap to lines of at most `width` characters.
pub fn wrap(s: &str, width: usize) -> Vec<String> {
    let mut lines: Vec<String> = Vec::new();
    for word in s.split_whitespace() {
        match lines.last_mut() {
            Some(l) if l.chars().count() + 1 + word.chars().count() <= width => {
                l.push(' ');
                l.push_str(word);
            }
            _ => lines.push(word.to_string()),
        }
    }
    lines
}
