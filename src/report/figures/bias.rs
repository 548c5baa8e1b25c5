//! Bias maps: a value (usually the discovery probability) on a grid of two quantities, e.g.
//! (ϖ, Ω) with the mean anomaly redrawn, as a heat map with its colour bar.

use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use super::axes;
use crate::error::Result;
use crate::report::figure::{Area, DrawResult, Figure, empty_note, render, titled};
use crate::report::stats::{label, symbol};
use crate::report::style;
use crate::report::tables::HeatMap;

/// A heat map of `map`, linear colour scale from 0 to the largest value.
pub fn bias_map(map: &HeatMap) -> Result<Figure> {
    let (sx, sy) = (symbol(&map.x), symbol(&map.y));
    let who = map.id.map(|id| format!(" of object {id}")).unwrap_or_default();
    let title = format!("Bias map{who}: {sx} against {sy}");
    let max = map
        .cells
        .iter()
        .map(|c| c.value)
        .filter(|v| v.is_finite())
        .fold(0.0, f64::max);
    let caption = format!(
        "The {}{who} on a grid of {} and {}, {} cells; colour scale linear from 0 to the largest \
         value, {max:.3}. Where the map is pale the surveys could not have found such an orbit, \
         whatever the population holds.",
        map.value_label,
        label(&map.x),
        label(&map.y),
        map.cells.len()
    );
    let stem = match map.id {
        Some(id) => format!("bias_map_{}_{}_{id}", map.x, map.y),
        None => format!("bias_map_{}_{}", map.x, map.y),
    };
    render(&stem, &title, &caption, (style::WIDTH, style::HEIGHT + 40), |root| {
        let area = titled(root, &title)?;
        if map.cells.is_empty() {
            return empty_note(&area, "empty map");
        }
        let (plot, bar) = area.split_horizontally(area.dim_in_pixel().0 - 120);
        draw_cells(&plot, map, max)?;
        colour_bar(&bar, max, &map.value_label)
    })
}

fn draw_cells(area: &Area, map: &HeatMap, max: f64) -> DrawResult {
    let fold = |f: fn(&crate::report::tables::HeatCell) -> f64, init: f64, g: fn(f64, f64) -> f64| {
        map.cells.iter().map(f).fold(init, g)
    };
    let (x0, x1) = (
        fold(|c| c.x_min, f64::MAX, f64::min),
        fold(|c| c.x_max, f64::MIN, f64::max),
    );
    let (y0, y1) = (
        fold(|c| c.y_min, f64::MAX, f64::min),
        fold(|c| c.y_max, f64::MIN, f64::max),
    );
    let mut chart = axes::chart(area, x0..x1, y0..y1)?;
    let scale = if max > 0.0 { max } else { 1.0 };
    chart.draw_series(map.cells.iter().map(|c| {
        let colour = style::sequential(c.value / scale);
        Rectangle::new([(c.x_min, c.y_min), (c.x_max, c.y_max)], colour.filled())
    }))?;
    axes::mesh(&mut chart, &label(&map.x), &label(&map.y))
}

/// A vertical colour bar with five ticks from 0 to `max`.
pub(crate) fn colour_bar(area: &Area, max: f64, what: &str) -> DrawResult {
    let (_, h) = area.dim_in_pixel();
    let (top, bottom) = (20i32, h as i32 - 70);
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
    let tick = style::text(style::LABEL_PX - 1.0).pos(Pos::new(HPos::Left, VPos::Center));
    for k in 0..=4 {
        let t = k as f64 / 4.0;
        let y = bottom - ((bottom - top) as f64 * t) as i32;
        area.draw(&Text::new(format!("{:.3}", t * max), (40, y), tick.clone()))?;
    }
    let under = style::text(style::LABEL_PX - 2.0).pos(Pos::new(HPos::Left, VPos::Top));
    for (k, line) in wrap(what, 14).iter().enumerate() {
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
