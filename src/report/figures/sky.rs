//! The sky coverage map: visits per point of the sky in ecliptic coordinates, in the
//! Hammer–Aitoff equal-area projection (Hammer 1892; formulae in Snyder 1993, "Flattening the
//! Earth", and Calabretta & Greisen 2002, A&A 395, 1077, §5.6.2 "AIT"), centred on ecliptic
//! longitude 180° with longitude increasing to the left, as the sky is seen from inside.

use std::collections::HashMap;
use std::f64::consts::{PI, SQRT_2};

use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};

use crate::error::Result;
use crate::orbit::constants::DEG;
use crate::report::figure::{Area, DrawResult, Figure, render, titled};
use crate::report::style;
use crate::sky::frames::{radec_to_ecliptic, unit_vector};
use crate::survey::Survey;

/// HEALPix order of the map's cells (0.84 deg², about 0.9° across).
pub const MAP_ORDER: u8 = 6;
const CENTRE_LON: f64 = PI;

/// Hammer–Aitoff (x, y) of an ecliptic longitude and latitude (radians); x ∈ [−2√2, 2√2],
/// y ∈ [−√2, √2], longitude increasing to the left of the centre.
pub fn hammer(lon: f64, lat: f64) -> (f64, f64) {
    let l = (lon - CENTRE_LON + PI).rem_euclid(2.0 * PI) - PI;
    let d = (1.0 + lat.cos() * (l / 2.0).cos()).sqrt();
    (-2.0 * SQRT_2 * lat.cos() * (l / 2.0).sin() / d, SQRT_2 * lat.sin() / d)
}

/// Longitude relative to the map centre, in (−π, π].
fn rel_lon(lon: f64) -> f64 {
    (lon - CENTRE_LON + PI).rem_euclid(2.0 * PI) - PI
}

/// Visits per HEALPix cell of `MAP_ORDER`: a visit counts for a cell when the cell's centre
/// lies inside the visit's footprint (the same rule as the coverage report).
pub fn visit_cells(survey: &Survey) -> Vec<(u64, u64)> {
    let v = &survey.visits;
    let r = survey.footprint.bounding_radius_rad() + 0.02;
    let mut counts: HashMap<u64, u64> = HashMap::new();
    for i in 0..v.len() {
        let (ra, dec) = (v.ra_deg[i] * DEG, v.dec_deg[i] * DEG);
        for &h in cdshealpix::nested::cone_coverage_approx_flat(MAP_ORDER, ra, dec, r).iter() {
            let (lon, lat) = cdshealpix::nested::center(MAP_ORDER, h);
            if survey
                .footprint
                .contains(ra, dec, v.rotation_deg[i], &unit_vector(lon, lat))
            {
                *counts.entry(h).or_default() += 1;
            }
        }
    }
    let mut cells: Vec<(u64, u64)> = counts.into_iter().collect();
    cells.sort_unstable();
    cells
}

/// Class edges for visit counts: 1, 2–3, 4–7, … (powers of two up to the maximum).
fn classes(max: u64) -> Vec<u64> {
    let mut e = vec![1u64];
    while *e.last().unwrap() <= max {
        e.push(e.last().unwrap() * 2);
    }
    e
}

fn class_label(lo: u64, hi: u64) -> String {
    if hi - lo == 1 {
        lo.to_string()
    } else {
        format!("{lo}–{}", hi - 1)
    }
}

/// The coverage map of `cells` (HEALPix order `MAP_ORDER`, nested, ICRS), with discovery
/// positions (RA, Dec in degrees) marked.
pub fn coverage_map(survey: &str, cells: &[(u64, u64)], discoveries: &[(f64, f64)]) -> Result<Figure> {
    let title = format!("Sky coverage: {survey}");
    let area_sq_deg = cells.len() as f64 * 41252.96 / cdshealpix::nested::n_hash(MAP_ORDER) as f64;
    let caption = format!(
        "Number of visits covering each point of the sky, in ecliptic coordinates (J2000), \
         Hammer–Aitoff equal-area projection centred on ecliptic longitude λ = 180°, λ increasing \
         to the left; the horizontal line through the centre is the ecliptic (β = 0°). Graticule \
         every 60° in λ (deg) and 30° in β (deg). Cells are HEALPix order {MAP_ORDER} (0.84 deg²); \
         {area_sq_deg:.0} deg² covered at least once. {} Visit counts in classes that double.",
        if discoveries.is_empty() {
            String::new()
        } else {
            format!(
                "Orange dots: the {} discoveries, where they were first found.",
                discoveries.len()
            )
        }
    );
    render(
        "sky_coverage",
        &title,
        &caption,
        (style::WIDTH, style::HEIGHT + 20),
        |root| {
            let area = titled(root, &title)?;
            let (map, key) = area.split_vertically(area.dim_in_pixel().1 - 64);
            let edges = classes(cells.iter().map(|c| c.1).max().unwrap_or(1));
            draw_map(&map, cells, &edges, discoveries)?;
            draw_key(&key, &edges)
        },
    )
}

fn class_colour(edges: &[u64], n: u64) -> RGBColor {
    let k = edges.partition_point(|&e| e <= n).saturating_sub(1);
    let m = (edges.len() - 1).max(1);
    style::sequential(0.15 + 0.85 * k as f64 / (m - 1).max(1) as f64)
}

fn draw_map(area: &Area, cells: &[(u64, u64)], edges: &[u64], discoveries: &[(f64, f64)]) -> DrawResult {
    let mut chart = ChartBuilder::on(area)
        .margin(8)
        .margin_left(34)
        .build_cartesian_2d(-2.0 * SQRT_2 - 0.02..2.0 * SQRT_2 + 0.02, -SQRT_2 - 0.02..SQRT_2 + 0.02)?;
    chart.draw_series(std::iter::once(Polygon::new(outline(), style::PAPER.filled())))?;
    chart.draw_series(
        cells
            .iter()
            .filter_map(|&(h, n)| cell_polygon(h).map(|pts| Polygon::new(pts, class_colour(edges, n).filled()))),
    )?;
    draw_graticule(&mut chart)?;
    // A white ring keeps the dots visible on the darkest cells.
    let at = |&(ra, dec): &(f64, f64)| {
        let (lon, lat) = radec_to_ecliptic(ra * DEG, dec * DEG);
        hammer(lon, lat)
    };
    chart.draw_series(discoveries.iter().map(|p| Circle::new(at(p), 5, style::PAPER.filled())))?;
    chart.draw_series(
        discoveries
            .iter()
            .map(|p| Circle::new(at(p), 3, style::series(1).filled())),
    )?;
    Ok(())
}

/// A cell's corners in the projection; cells cut by the map's edge (λ = 0°) are skipped, a
/// sliver of 0.9° at the boundary.
fn cell_polygon(h: u64) -> Option<Vec<(f64, f64)>> {
    let ecl: Vec<(f64, f64)> = cdshealpix::nested::vertices(MAP_ORDER, h)
        .iter()
        .map(|&(ra, dec)| radec_to_ecliptic(ra, dec))
        .collect();
    let rel: Vec<f64> = ecl.iter().map(|&(l, _)| rel_lon(l)).collect();
    let (lo, hi) = rel.iter().fold((f64::MAX, f64::MIN), |(a, b), &x| (a.min(x), b.max(x)));
    let near_pole = ecl.iter().any(|&(_, b)| b.abs() > 88.0 * DEG);
    (hi - lo < PI || near_pole).then(|| ecl.iter().map(|&(l, b)| hammer(l, b)).collect())
}

fn outline() -> Vec<(f64, f64)> {
    let right = (0..=90).map(|k| hammer(CENTRE_LON - PI + 1e-9, -PI / 2.0 + PI * k as f64 / 90.0));
    let left = (0..=90).map(|k| hammer(CENTRE_LON + PI - 1e-9, PI / 2.0 - PI * k as f64 / 90.0));
    right.chain(left).collect()
}

type MapChart<'a, 'b> =
    super::axes::Chart<'a, 'b, plotters::coord::types::RangedCoordf64, plotters::coord::types::RangedCoordf64>;

fn draw_graticule(chart: &mut MapChart) -> DrawResult {
    let grid = style::MUTED.mix(0.45).stroke_width(1);
    for k in 0..6 {
        let lon = (k as f64 * 60.0) * DEG;
        let pts: Vec<(f64, f64)> = (0..=90)
            .map(|j| hammer(lon, -PI / 2.0 + PI * j as f64 / 90.0))
            .collect();
        chart.draw_series(std::iter::once(PathElement::new(pts, grid)))?;
    }
    for lat in [-60.0, -30.0, 0.0, 30.0, 60.0] {
        let w = if lat == 0.0 {
            style::INK.mix(0.7).stroke_width(1)
        } else {
            grid
        };
        let pts: Vec<(f64, f64)> = (0..=180)
            .map(|j| hammer(CENTRE_LON - PI + 1e-9 + 2.0 * PI * (j as f64 / 180.0), lat * DEG))
            .collect();
        chart.draw_series(std::iter::once(PathElement::new(pts, w)))?;
    }
    chart.draw_series(std::iter::once(PathElement::new(
        outline(),
        style::MUTED.stroke_width(1),
    )))?;
    // Longitudes are labelled at β = −45°, away from the ecliptic band most surveys cover.
    let lon_style = style::muted_text(style::LABEL_PX - 1.0).pos(Pos::new(HPos::Center, VPos::Center));
    for k in 0..6 {
        let lon = k as f64 * 60.0;
        let (x, y) = hammer(lon * DEG + 1e-9, -45.0 * DEG);
        chart.draw_series(std::iter::once(Text::new(
            format!("{lon:.0}°"),
            (x, y),
            lon_style.clone(),
        )))?;
    }
    let lat_style = style::text(style::LABEL_PX - 1.0).pos(Pos::new(HPos::Right, VPos::Center));
    for lat in [-60.0, -30.0, 0.0, 30.0, 60.0] {
        let (x, y) = hammer(CENTRE_LON + PI - 1e-9, lat * DEG);
        chart.draw_series(std::iter::once(Text::new(
            format!("{lat:+.0}°"),
            (x - 0.04, y),
            lat_style.clone(),
        )))?;
    }
    Ok(())
}

/// The colour key: one box per class, with the class's visit counts under it.
fn draw_key(area: &Area, edges: &[u64]) -> DrawResult {
    let n = edges.len() - 1;
    let (w, _) = area.dim_in_pixel();
    let bw = (44u32).min((w - 300) / n.max(1) as u32) as i32;
    let x0 = (w as i32 - bw * n as i32) / 2 + 90;
    let head = style::text(style::LABEL_PX).pos(Pos::new(HPos::Right, VPos::Center));
    area.draw(&Text::new("visits per point:", (x0 - 12, 16), head))?;
    let lab = style::text(style::LABEL_PX - 2.0).pos(Pos::new(HPos::Center, VPos::Top));
    for k in 0..n {
        let x = x0 + k as i32 * bw;
        let c = class_colour(edges, edges[k]);
        area.draw(&Rectangle::new([(x, 6), (x + bw - 2, 26)], c.filled()))?;
        area.draw(&Text::new(
            class_label(edges[k], edges[k + 1]),
            (x + bw / 2, 31),
            lab.clone(),
        ))?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hammer_maps_the_centre_and_edges() {
        let (x, y) = hammer(PI, 0.0);
        assert!(x.abs() < 1e-12 && y.abs() < 1e-12);
        // The edge of the map at β = 0 is x = ±2√2; the poles are y = ±√2.
        assert!((hammer(PI + PI - 1e-9, 0.0).0 + 2.0 * SQRT_2).abs() < 1e-6);
        assert!((hammer(0.3, PI / 2.0).1 - SQRT_2).abs() < 1e-12);
    }

    #[test]
    fn hammer_is_equal_area() {
        // Equal areas on the sky map to equal areas on the map: compare two small cells
        // at β = 0 and β = 60°, with the Jacobian taken numerically.
        let jac = |l: f64, b: f64| {
            let h = 1e-6;
            let (x1, y1) = hammer(l + h, b);
            let (x2, y2) = hammer(l, b + h);
            let (x0, y0) = hammer(l, b);
            ((x1 - x0) * (y2 - y0) - (x2 - x0) * (y1 - y0)).abs() / (h * h * b.cos())
        };
        assert!(
            (jac(2.0, 0.0) - jac(1.0, 1.0)).abs() < 1e-4,
            "{} {}",
            jac(2.0, 0.0),
            jac(1.0, 1.0)
        );
    }

    #[test]
    fn visit_classes_double() {
        assert_eq!(classes(5), vec![1, 2, 4, 8]);
        assert_eq!(class_label(4, 8), "4–7");
    }
}
