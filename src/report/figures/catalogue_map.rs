//! The map of the whole catalogue: every object's bias map added with its weight, so that
//! each cell holds the weighted number of catalogue objects the surveys would have found had
//! all their orbits had that (ϖ, Ω); the objects' own (ϖ, Ω) are marked on it. Where the
//! marks crowd onto the dark cells, the surveys' own bias may be all the clustering there is.

use super::bias::{Scale, draw_cells, draw_scale};
use crate::error::Result;
use crate::report::figure::{Figure, empty_note, render, titled};
use crate::report::stats::{label, symbol};
use crate::report::style;
use crate::report::tables::{HeatMap, MappedObject};

/// How the maps were added: how many, their total weight, and whether the weights are the
/// catalogue's (from `map_objects.*`) or taken as 1.
#[derive(Debug, Clone, PartialEq)]
pub struct Summed {
    pub maps: usize,
    pub total_weight: f64,
    pub weights_known: bool,
}

/// The summed map `sum` (see `HeatMap::weighted_sum`) with the objects `marks` as crosses.
pub fn catalogue_map(sum: &HeatMap, marks: &[MappedObject], how: &Summed, source: &str) -> Result<Figure> {
    let (sx, sy) = (symbol(&sum.x), symbol(&sum.y));
    let title = format!("Bias map of the whole catalogue: {sx} against {sy}");
    let scale = Scale::of(&sum.cells);
    let weights = if how.weights_known {
        format!("each with the object's weight (total weight {:.3})", how.total_weight)
    } else {
        "each with weight 1 (the objects' weights were not found beside the maps)".into()
    };
    let marked = if marks.is_empty() {
        "The objects' own angles were not found beside the maps (map_objects.*), so they are not marked.".to_string()
    } else {
        format!(
            "Crosses: the {} objects' own {sx} and {sy}. Where they sit on the dark cells, the \
             surveys' footprint and cadence alone would have put them there; the cluster test \
             weighs this for every object.",
            marks.len()
        )
    };
    let caption = format!(
        "The {} objects' bias maps added, {weights}, on the grid of {} and {}: each cell holds \
         Σ w × P(discovered), the weighted number of these objects the surveys would have \
         discovered had every one of their orbits had the cell's {sx} and {sy} (a, e, i and H \
         kept, the mean anomaly redrawn). {} {marked} From {source}.",
        how.maps,
        label(&sum.x),
        label(&sum.y),
        match &scale {
            Scale::Continuous { max } => format!("Colour scale linear from 0 to the largest value, {max:.3} objects."),
            Scale::Discrete { values, .. } => format!(
                "The sum takes only {} distinct values (maps of few trials per cell), each drawn in \
                 its own colour.",
                values.len()
            ),
        }
    );
    let stem = format!("bias_map_{}_{}_catalogue", sum.x, sum.y);
    let points: Vec<(f64, f64)> = marks.iter().map(|m| (m.x_deg, m.node_deg)).collect();
    render(&stem, &title, &caption, (style::WIDTH, style::HEIGHT + 40), |root| {
        let area = titled(root, &title)?;
        if sum.cells.is_empty() {
            return empty_note(&area, "empty map");
        }
        let (plot, bar) = area.split_horizontally(area.dim_in_pixel().0 - 150);
        draw_cells(&plot, sum, &scale, &points)?;
        draw_scale(&bar, &scale, "weighted sum of discovery probabilities (objects)", None)
    })
}
