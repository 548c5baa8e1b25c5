//! The sky coverage maps: visits per point of the sky in ecliptic coordinates.
//!
//! The whole sky is drawn in the Hammer–Aitoff equal-area projection (Hammer 1892; formulae in
//! Snyder 1993, "Flattening the Earth", and Calabretta & Greisen 2002, A&A 395, 1077, §5.6.2
//! "AIT"), centred on ecliptic longitude 180° with longitude increasing to the left, as the sky
//! is seen from inside. A coverage much smaller than the sky (a box under `ZOOM_MAX_DEG` on a
//! side) also gets a zoomed map: the plate carrée projection about the box's centre, with
//! longitudes scaled by cos β there (equal scales at the centre), at finer cells.
//!
//! The maps are written with `svg.rs` (sub-pixel coordinates): parallels are smooth curves
//! drawn once, cells are sealed so that neighbours meet without seams, and discoveries are
//! open rings that leave the coverage under them visible.

use std::collections::HashMap;
use std::f64::consts::{FRAC_PI_2, PI, SQRT_2};

use super::svg::{Anchor, Svg, rgb};
use crate::error::Result;
use crate::foundation::units::DEG;
use crate::report::figure::Figure;
use crate::report::style;
use crate::sky::frames::radec_to_ecliptic;
use crate::sky::healpix::{area_sq_deg, cell_size_rad};
use crate::survey::Survey;

/// HEALPix order of the whole-sky map's cells (0.84 deg², about 0.9° across).
pub const MAP_ORDER: u8 = 6;
/// A coverage whose bounding box is under this on both sides also gets a zoomed map.
pub const ZOOM_MAX_DEG: f64 = 45.0;
const CENTRE_LON: f64 = PI;

/// Hammer–Aitoff (x, y) of an ecliptic longitude and latitude (radians); x ∈ [−2√2, 2√2],
/// y ∈ [−√2, √2], longitude increasing to the left of the centre.
pub fn hammer(lon: f64, lat: f64) -> (f64, f64) {
    hammer_rel(rel_lon(lon), lat)
}

/// Hammer–Aitoff of a longitude relative to the map centre, in [−π, π].
fn hammer_rel(l: f64, lat: f64) -> (f64, f64) {
    let d = (1.0 + lat.cos() * (l / 2.0).cos()).sqrt();
    (-2.0 * SQRT_2 * lat.cos() * (l / 2.0).sin() / d, SQRT_2 * lat.sin() / d)
}

/// Longitude relative to the map centre, in (−π, π].
pub(crate) fn rel_lon(lon: f64) -> f64 {
    (lon - CENTRE_LON + PI).rem_euclid(2.0 * PI) - PI
}

/// Visits per HEALPix cell of `order` (nested, ICRS), over all `surveys`: a visit counts for
/// a cell when the cell's centre lies inside the visit's footprint (the rule of the coverage
/// report). Repeated pointings (same centre and rotation to 0.01″) are worked out once.
pub fn visit_cells(surveys: &[&Survey], order: u8) -> Vec<(u64, u64)> {
    let mut counts: HashMap<u64, u64> = HashMap::new();
    for survey in surveys {
        let v = &survey.visits;
        let key = |x: f64| (x * 360_000.0).round() as i64;
        let mut pointings: HashMap<(i64, i64, i64), (usize, u64)> = HashMap::new();
        for i in 0..v.len() {
            let k = (key(v.ra_deg[i]), key(v.dec_deg[i]), key(v.rotation_deg[i]));
            pointings.entry(k).or_insert((i, 0)).1 += 1;
        }
        for &(i, repeats) in pointings.values() {
            let (ra, dec) = (v.ra_deg[i] * DEG, v.dec_deg[i] * DEG);
            for h in survey.footprint.healpix_cells(order, ra, dec, v.rotation_deg[i]) {
                *counts.entry(h).or_default() += repeats;
            }
        }
    }
    let mut cells: Vec<(u64, u64)> = counts.into_iter().collect();
    cells.sort_unstable();
    cells
}

/// The sky area covered at least once by `surveys`, deg², counted as `seine plan`'s coverage
/// report counts it (cells of `survey::coverage::HEALPIX_ORDER` whose centres lie in a field),
/// so that the report and the plan quote one number for one survey. The maps' coarser cells,
/// drawn by the same rule, add up to a slightly different area at the coverage's edges.
pub fn covered_sq_deg(surveys: &[&Survey]) -> f64 {
    let order = crate::survey::coverage::HEALPIX_ORDER;
    area_sq_deg(visit_cells(surveys, order).len(), order)
}

/// What a map's caption says of the area: the covered area as the coverage report measures
/// it, and what the map's own cells add up to when that differs.
fn area_sentence(covered_sq_deg: f64, cells: usize, order: u8) -> String {
    let fine = crate::survey::coverage::HEALPIX_ORDER;
    let drawn = area_sq_deg(cells, order);
    let mut s = format!(
        "{covered_sq_deg:.0} deg² covered at least once (counted on HEALPix order-{fine} cells of \
         {:.3} deg² whose centres lie in a field, as seine plan's coverage report counts it)",
        crate::sky::healpix::cell_area_sq_deg(fine)
    );
    if order != fine {
        s += &format!("; the map's cells, drawn by the same rule, add up to {drawn:.0} deg²");
    }
    s
}

/// The maps of one coverage: the whole sky, and a zoom when the coverage is small. `label`
/// says what is covered (a survey's name, or a run's surveys); `stem` names the files.
pub fn maps(stem: &str, label: &str, surveys: &[&Survey], discoveries: &[(f64, f64)]) -> Result<Vec<Figure>> {
    let cells = visit_cells(surveys, MAP_ORDER);
    let covered = covered_sq_deg(surveys);
    let mut out = vec![coverage_map(stem, label, &cells, covered, discoveries)?];
    if let Some(b) = ZoomBox::around(&cells, MAP_ORDER) {
        let order = b.order(surveys);
        let fine = visit_cells(surveys, order);
        out.push(zoomed_map(
            &format!("{stem}_zoom"),
            label,
            &b,
            order,
            &fine,
            covered,
            discoveries,
        )?);
    }
    Ok(out)
}

/// Class edges for visit counts: 1, 2–3, 4–7, … (powers of two up to the maximum).
fn classes(max: u64) -> Vec<u64> {
    let mut e = vec![1u64];
    while *e.last().unwrap() <= max {
        e.push(e.last().unwrap() * 2);
    }
    e
}

fn class_colour(edges: &[u64], n: u64) -> String {
    let k = edges.partition_point(|&e| e <= n).saturating_sub(1);
    let m = (edges.len() - 1).max(1);
    rgb(style::sequential(0.15 + 0.85 * k as f64 / (m - 1).max(1) as f64))
}

fn discoveries_sentence(discoveries: &[(f64, f64)]) -> String {
    match discoveries.len() {
        0 => String::new(),
        n => format!(
            " Orange rings: where the {n} discovered objects were when first found (open, so \
             that the coverage under them stays visible)."
        ),
    }
}

pub(crate) const MAP_W: u32 = style::WIDTH;
const MAP_H: u32 = 430;
const KEY_H: f64 = 60.0;
const TITLE_H: f64 = 40.0;

/// The whole-sky coverage map of `cells` (HEALPix order `MAP_ORDER`, nested, ICRS), with
/// discovery positions (RA, Dec in degrees) marked; `covered_sq_deg` is the coverage's area as
/// `covered_sq_deg` measures it.
pub fn coverage_map(
    stem: &str,
    label: &str,
    cells: &[(u64, u64)],
    covered_sq_deg: f64,
    discoveries: &[(f64, f64)],
) -> Result<Figure> {
    let title = format!("Sky coverage: {label}");
    let caption = format!(
        "Number of visits covering each point of the sky, in ecliptic coordinates (J2000), \
         Hammer–Aitoff equal-area projection centred on ecliptic longitude λ = 180°, λ increasing \
         to the left; the map's edge is λ = 0°, the darker line through the centre the ecliptic \
         (β = 0°). Meridians every 60° in λ (deg), parallels every 30° in β (deg), each labelled \
         at its line. Cells are HEALPix order {MAP_ORDER} (0.84 deg²), each shaded when its \
         centre lies in a field; {}. Visit counts in classes that double (1, 2–3, 4–7, …; the \
         key marks the classes' bounds).{}",
        area_sentence(covered_sq_deg, cells.len(), MAP_ORDER),
        discoveries_sentence(discoveries)
    );
    let mut svg = map_paper(&title, MAP_H);
    let edges = classes(cells.iter().map(|c| c.1).max().unwrap_or(1));
    let frame = HammerFrame::fitting(MAP_W as f64, MAP_H as f64 - KEY_H - TITLE_H, TITLE_H);
    frame.draw_cells(&mut svg, cells, &edges);
    frame.draw_graticule(&mut svg);
    draw_rings(&mut svg, discoveries, |ra, dec| {
        let (lon, lat) = radec_to_ecliptic(ra * DEG, dec * DEG);
        Some(frame.px(rel_lon(lon), lat))
    });
    draw_key(&mut svg, &edges, MAP_H as f64 - KEY_H, !discoveries.is_empty());
    Ok(Figure::from_svg(stem, &title, &caption, svg.finish()))
}

/// A map's paper, `height` pixels high, with its title.
pub(crate) fn map_paper(title: &str, height: u32) -> Svg {
    let mut svg = Svg::new(MAP_W, height);
    svg.text(
        (MAP_W as f64 / 2.0, 20.0),
        title,
        style::TITLE_PX,
        Anchor::Middle,
        style::INK,
        false,
    );
    svg
}

/// Pixel placement of the Hammer–Aitoff ellipse: centre and scale (pixels per unit of x, y).
pub(crate) struct HammerFrame {
    cx: f64,
    cy: f64,
    scale: f64,
}

impl HammerFrame {
    /// The largest ellipse that fits `width` × `height` below `top`, with room for labels.
    pub(crate) fn fitting(width: f64, height: f64, top: f64) -> HammerFrame {
        let scale = ((width - 76.0) / (4.0 * SQRT_2)).min((height - 16.0) / (2.0 * SQRT_2));
        HammerFrame {
            cx: width / 2.0 + 22.0,
            cy: top + height / 2.0,
            scale,
        }
    }

    /// Pixel position of a longitude relative to the centre (`rel_lon`) and a latitude, radians.
    pub(crate) fn px(&self, rel: f64, lat: f64) -> (f64, f64) {
        let (x, y) = hammer_rel(rel, lat);
        (self.cx + self.scale * x, self.cy - self.scale * y)
    }

    fn draw_cells(&self, svg: &mut Svg, cells: &[(u64, u64)], edges: &[u64]) {
        for &(h, n) in cells {
            let colour = class_colour(edges, n);
            for pts in cell_pieces(MAP_ORDER, h) {
                let px: Vec<(f64, f64)> = pts.iter().map(|&(l, b)| self.px(l, b)).collect();
                svg.polygon(&px, &colour, true);
            }
        }
    }

    /// Parallels (each once, edge to edge), meridians, the outline and their labels.
    pub(crate) fn draw_graticule(&self, svg: &mut Svg) {
        let grid = rgb(style::MUTED);
        let edge = PI - 1e-9;
        let parallel = |lat: f64| -> Vec<(f64, f64)> {
            (0..=240)
                .map(|j| self.px(edge - 2.0 * edge * j as f64 / 240.0, lat * DEG))
                .collect()
        };
        for lat in [-60.0, -30.0, 30.0, 60.0] {
            svg.line(&parallel(lat), &grid, 0.8, None);
        }
        svg.line(&parallel(0.0), &rgb(style::INK), 1.0, None);
        for lon in [60.0, 120.0, 180.0, 240.0, 300.0] {
            let rel = rel_lon(lon * DEG);
            let pts: Vec<(f64, f64)> = (0..=180)
                .map(|j| self.px(rel, -FRAC_PI_2 + PI * j as f64 / 180.0))
                .collect();
            svg.line(&pts, &grid, 0.8, None);
        }
        let outline: Vec<(f64, f64)> = (0..=360)
            .map(|j| {
                let t = j as f64 / 360.0 * 2.0 * PI;
                (
                    self.cx + self.scale * 2.0 * SQRT_2 * t.cos(),
                    self.cy - self.scale * SQRT_2 * t.sin(),
                )
            })
            .collect();
        svg.line(&outline, &rgb(style::MUTED), 1.2, None);
        // β labels just outside the left edge, at the height of their parallels.
        for lat in [-60.0, -30.0, 0.0, 30.0, 60.0] {
            let (x, y) = self.px(edge, lat * DEG);
            let text = degrees(lat, true);
            svg.text(
                (x - 6.0, y),
                &text,
                style::LABEL_PX - 1.0,
                Anchor::End,
                style::INK,
                false,
            );
        }
        // λ labels on their meridians at β = −45°, away from the ecliptic band most surveys
        // cover, with a halo over any cells.
        for lon in [60.0, 120.0, 180.0, 240.0, 300.0] {
            let p = self.px(rel_lon(lon * DEG), -45.0 * DEG);
            svg.text(
                p,
                &format!("{lon:.0}°"),
                style::LABEL_PX - 1.0,
                Anchor::Middle,
                style::MUTED,
                true,
            );
        }
    }
}

/// A cell's corners as (longitude relative to the centre, latitude), with points along its
/// edges when it is larger than the coverage maps' cells, so that large cells bend with the
/// projection. A cell cut by the map's edge (λ = 0°) is drawn as two pieces, one hugging each
/// side of the edge.
pub(crate) fn cell_pieces(order: u8, h: u64) -> Vec<Vec<(f64, f64)>> {
    let corners: Vec<(f64, f64)> = if order >= MAP_ORDER {
        cdshealpix::nested::vertices(order, h).to_vec()
    } else {
        let per_side = 1u32 << (MAP_ORDER - order).min(4);
        cdshealpix::nested::path_along_cell_edge(order, h, &cdshealpix::compass_point::Cardinal::S, false, per_side)
            .to_vec()
    };
    let ecl: Vec<(f64, f64)> = corners
        .iter()
        .map(|&(ra, dec)| radec_to_ecliptic(ra, dec))
        .map(|(l, b)| (rel_lon(l), b))
        .collect();
    let (lo, hi) = ecl
        .iter()
        .fold((f64::MAX, f64::MIN), |(a, b), &(x, _)| (a.min(x), b.max(x)));
    let near_pole = ecl.iter().any(|&(_, b)| b.abs() > 88.0 * DEG);
    if hi - lo < PI || near_pole {
        return vec![ecl];
    }
    let edge = PI - 1e-9;
    let left = ecl.iter().map(|&(l, b)| (if l < 0.0 { edge } else { l }, b)).collect();
    let right = ecl.iter().map(|&(l, b)| (if l > 0.0 { -edge } else { l }, b)).collect();
    vec![left, right]
}

/// Open rings at the discoveries; `at` gives a ring's pixel position, or `None` off the map.
fn draw_rings(svg: &mut Svg, discoveries: &[(f64, f64)], at: impl Fn(f64, f64) -> Option<(f64, f64)>) {
    let c = rgb(style::series(1));
    for &(ra, dec) in discoveries {
        if let Some(p) = at(ra, dec) {
            svg.circle(p, 3.2, "none", Some((&c, 1.4)));
        }
    }
}

/// The colour key: one box per class with the class bounds at the boxes' edges (a class
/// holds its lower bound and the counts up to the next), and the ring of a discovery when
/// there are any.
fn draw_key(svg: &mut Svg, edges: &[u64], top: f64, rings: bool) {
    let n = edges.len() - 1;
    let bw = 48f64.min(430.0 / n.max(1) as f64);
    let (head, tail) = (136.0, if rings { 96.0 } else { 0.0 });
    let x0 = (MAP_W as f64 - (head + bw * n as f64 + tail)) / 2.0 + head;
    let y = top + 18.0;
    svg.text(
        (x0 - 12.0, y),
        "visits per point:",
        style::LABEL_PX,
        Anchor::End,
        style::INK,
        false,
    );
    for k in 0..n {
        let x = x0 + k as f64 * bw;
        svg.rect((x, y - 10.0), (bw - 1.0, 20.0), &class_colour(edges, edges[k]), None);
    }
    for (k, e) in edges.iter().enumerate() {
        let x = x0 + k as f64 * bw - 0.5;
        svg.line(&[(x, y + 10.0), (x, y + 14.0)], &rgb(style::MUTED), 1.0, None);
        svg.text(
            (x, y + 23.0),
            &e.to_string(),
            style::LABEL_PX - 3.0,
            Anchor::Middle,
            style::INK,
            false,
        );
    }
    if rings {
        let x = x0 + n as f64 * bw + 24.0;
        svg.circle((x, y), 3.2, "none", Some((&rgb(style::series(1)), 1.4)));
        svg.text(
            (x + 9.0, y),
            "discovery",
            style::LABEL_PX - 2.0,
            Anchor::Start,
            style::INK,
            false,
        );
    }
}

/// Degrees with a true minus sign ("−30°", "0°", "+30°" when `signed`).
fn degrees(x: f64, signed: bool) -> String {
    let t = tick(x.abs());
    match (x < 0.0, signed && x > 0.0) {
        (true, _) => format!("−{t}°"),
        (false, true) => format!("+{t}°"),
        _ => format!("{t}°"),
    }
}

/// The box of a small coverage in ecliptic longitude and latitude, degrees.
#[derive(Debug, Clone, PartialEq)]
pub struct ZoomBox {
    /// Centre longitude; the box spans `lon_half` either side of it.
    pub lon_deg: f64,
    pub lon_half_deg: f64,
    pub lat_min_deg: f64,
    pub lat_max_deg: f64,
}

impl ZoomBox {
    /// The box around the covered cells, with a margin, when it is under `ZOOM_MAX_DEG` on
    /// both sides; `None` for a coverage that needs the whole sky (or is empty).
    pub fn around(cells: &[(u64, u64)], order: u8) -> Option<ZoomBox> {
        let pts: Vec<(f64, f64)> = cells
            .iter()
            .map(|&(h, _)| {
                let (ra, dec) = cdshealpix::nested::center(order, h);
                let (l, b) = radec_to_ecliptic(ra, dec);
                (l / DEG, b / DEG)
            })
            .collect();
        let (b0, b1) = pts
            .iter()
            .fold((f64::MAX, f64::MIN), |(a, c), &(_, b)| (a.min(b), c.max(b)));
        if pts.is_empty() || b1 - b0 > ZOOM_MAX_DEG || b0.abs().max(b1.abs()) > 75.0 {
            return None;
        }
        // The longitudes' smallest enclosing arc: the circle less its largest empty gap.
        let mut lons: Vec<f64> = pts.iter().map(|p| p.0.rem_euclid(360.0)).collect();
        lons.sort_by(f64::total_cmp);
        let n = lons.len();
        let (gap, after) = (0..n)
            .map(|k| {
                let next = if k + 1 < n { lons[k + 1] } else { lons[0] + 360.0 };
                (next - lons[k], k)
            })
            .max_by(|a, b| a.0.total_cmp(&b.0))?;
        let span = 360.0 - gap;
        let cos_b = (0.5 * (b0 + b1) * DEG).cos();
        if span * cos_b > ZOOM_MAX_DEG {
            return None;
        }
        let start = lons[(after + 1) % n];
        let margin = 0.12 * span.max(b1 - b0).max(1.0) + 0.6;
        Some(ZoomBox {
            lon_deg: (start + span / 2.0).rem_euclid(360.0),
            lon_half_deg: span / 2.0 + margin / cos_b,
            lat_min_deg: b0 - margin,
            lat_max_deg: b1 + margin,
        })
    }

    /// A HEALPix order whose cells are about 1/300 of the box, coarser where the visits would
    /// make the count too long (at most ~3·10⁷ cell tests).
    fn order(&self, surveys: &[&Survey]) -> u8 {
        let side = (self.lat_max_deg - self.lat_min_deg).max(2.0 * self.lon_half_deg * self.cos_centre());
        let mut order = MAP_ORDER;
        while order < 11 && cell_size_rad(order + 1) / DEG > side / 300.0 {
            order += 1;
        }
        let tests = |o: u8| -> f64 {
            surveys
                .iter()
                .map(|s| {
                    let r = s.footprint.bounding_radius_rad();
                    s.visits.len() as f64 * (PI * r * r / cell_size_rad(o).powi(2) + 8.0)
                })
                .sum()
        };
        while order > MAP_ORDER && tests(order) > 3e7 {
            order -= 1;
        }
        order
    }

    fn cos_centre(&self) -> f64 {
        (0.5 * (self.lat_min_deg + self.lat_max_deg) * DEG).cos()
    }
}

/// The zoomed map: the plate carrée about the box's centre, λ increasing to the left.
pub fn zoomed_map(
    stem: &str,
    label: &str,
    b: &ZoomBox,
    order: u8,
    cells: &[(u64, u64)],
    covered_sq_deg: f64,
    discoveries: &[(f64, f64)],
) -> Result<Figure> {
    let title = format!("Sky coverage, zoomed: {label}");
    let cell_deg = cell_size_rad(order) / DEG;
    let caption = format!(
        "The coverage of the map above, zoomed: visits covering each point, in ecliptic \
         longitude λ (deg, increasing to the left) and latitude β (deg), plate carrée with λ \
         scaled by cos β at the centre (β = {:.1}°) so that both axes have one scale there. \
         Cells are HEALPix order {order} ({:.2}° across); {}. Visit counts in classes that \
         double (the key marks the classes' bounds).{}",
        0.5 * (b.lat_min_deg + b.lat_max_deg),
        cell_deg,
        area_sentence(covered_sq_deg, cells.len(), order),
        discoveries_sentence(discoveries)
    );
    let mut svg = map_paper(&title, MAP_H);
    let frame = PlateFrame::fitting(b, MAP_W as f64, MAP_H as f64 - KEY_H - TITLE_H, TITLE_H);
    let edges = classes(cells.iter().map(|c| c.1).max().unwrap_or(1));
    svg.raw(&format!(
        "<clipPath id=\"{stem}_clip\"><rect x=\"{:.2}\" y=\"{:.2}\" width=\"{:.2}\" height=\"{:.2}\"/></clipPath>",
        frame.x0, frame.y0, frame.w, frame.h
    ));
    svg.raw(&format!("<g clip-path=\"url(#{stem}_clip)\">"));
    for &(h, n) in cells {
        let colour = class_colour(&edges, n);
        let pts: Vec<(f64, f64)> = cdshealpix::nested::vertices(order, h)
            .iter()
            .map(|&(ra, dec)| {
                let (l, bb) = radec_to_ecliptic(ra, dec);
                frame.px(l / DEG, bb / DEG)
            })
            .collect();
        svg.polygon(&pts, &colour, true);
    }
    draw_rings(&mut svg, discoveries, |ra, dec| {
        let (l, bb) = radec_to_ecliptic(ra * DEG, dec * DEG);
        Some(frame.px(l / DEG, bb / DEG))
    });
    svg.raw("</g>");
    frame.draw_axes(&mut svg);
    draw_key(&mut svg, &edges, MAP_H as f64 - KEY_H, !discoveries.is_empty());
    Ok(Figure::from_svg(stem, &title, &caption, svg.finish()))
}

/// Pixel placement of the zoomed map's box.
struct PlateFrame {
    b: ZoomBox,
    cos_b: f64,
    x0: f64,
    y0: f64,
    w: f64,
    h: f64,
    scale: f64,
}

impl PlateFrame {
    fn fitting(b: &ZoomBox, width: f64, height: f64, top: f64) -> PlateFrame {
        let cos_b = b.cos_centre();
        let (span_x, span_y) = (2.0 * b.lon_half_deg * cos_b, b.lat_max_deg - b.lat_min_deg);
        let (room_w, room_h) = (width - 150.0, height - 50.0);
        let scale = (room_w / span_x).min(room_h / span_y);
        let (w, h) = (span_x * scale, span_y * scale);
        PlateFrame {
            b: b.clone(),
            cos_b,
            x0: 80.0 + (room_w - w) / 2.0,
            y0: top + 6.0 + (room_h - h) / 2.0,
            w,
            h,
            scale,
        }
    }

    /// Pixel position of ecliptic (λ, β) in degrees.
    fn px(&self, lon_deg: f64, lat_deg: f64) -> (f64, f64) {
        let dl = (lon_deg - self.b.lon_deg + 180.0).rem_euclid(360.0) - 180.0;
        (
            self.x0 + self.w / 2.0 - dl * self.cos_b * self.scale,
            self.y0 + (self.b.lat_max_deg - lat_deg) * self.scale,
        )
    }

    /// The frame, a light grid at round steps, and the tick labels in degrees.
    fn draw_axes(&self, svg: &mut Svg) {
        let grid = rgb(style::GRID);
        let ink = rgb(style::MUTED);
        let (x1, y1) = (self.x0 + self.w, self.y0 + self.h);
        let step_b = nice_step(self.b.lat_max_deg - self.b.lat_min_deg);
        let mut beta = (self.b.lat_min_deg / step_b).ceil() * step_b;
        while beta <= self.b.lat_max_deg {
            let y = self.px(self.b.lon_deg, beta).1;
            svg.line(&[(self.x0, y), (x1, y)], &grid, 1.0, None);
            svg.text(
                (self.x0 - 6.0, y),
                &degrees(beta, false),
                style::LABEL_PX - 1.0,
                Anchor::End,
                style::INK,
                false,
            );
            beta += step_b;
        }
        let step_l = nice_step(2.0 * self.b.lon_half_deg);
        let lo = self.b.lon_deg - self.b.lon_half_deg;
        let mut lam = (lo / step_l).ceil() * step_l;
        while lam <= self.b.lon_deg + self.b.lon_half_deg {
            let x = self.px(lam, self.b.lat_min_deg).0;
            svg.line(&[(x, self.y0), (x, y1)], &grid, 1.0, None);
            svg.text(
                (x, y1 + 14.0),
                &degrees(lam.rem_euclid(360.0), false),
                style::LABEL_PX - 1.0,
                Anchor::Middle,
                style::INK,
                false,
            );
            lam += step_l;
        }
        svg.rect((self.x0, self.y0), (self.w, self.h), "none", Some(&ink));
        svg.text(
            (self.x0 + self.w / 2.0, y1 + 36.0),
            "ecliptic longitude λ (deg)",
            style::AXIS_PX,
            Anchor::Middle,
            style::INK,
            false,
        );
        svg.raw(&format!(
            "<text x=\"0\" y=\"0\" transform=\"translate({:.2} {:.2}) rotate(-90)\" font-family=\"{}\" font-size=\"{}\" fill=\"{}\" text-anchor=\"middle\">ecliptic latitude β (deg)</text>",
            self.x0 - 52.0,
            self.y0 + self.h / 2.0,
            style::FONT,
            style::AXIS_PX,
            rgb(style::INK)
        ));
    }
}

/// A round grid step giving 3 to 8 lines over `span` degrees.
fn nice_step(span: f64) -> f64 {
    [0.1, 0.2, 0.5, 1.0, 2.0, 5.0, 10.0, 15.0, 30.0]
        .into_iter()
        .find(|s| span / s <= 8.0)
        .unwrap_or(30.0)
}

fn tick(x: f64) -> String {
    super::axes::tick((x * 1e6).round() / 1e6)
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
        assert_eq!(degrees(-30.0, true), "−30°");
        assert_eq!(degrees(30.0, true), "+30°");
        assert_eq!(degrees(0.0, true), "0°");
    }

    #[test]
    fn cells_cut_by_the_edge_are_drawn_on_both_sides() {
        // Cells whose centres lie at ecliptic λ ≈ 0 straddle the map's edge.
        let cut = (0..cdshealpix::nested::n_hash(MAP_ORDER))
            .find(|&h| {
                let (ra, dec) = cdshealpix::nested::center(MAP_ORDER, h);
                let (l, b) = radec_to_ecliptic(ra, dec);
                l.min(2.0 * PI - l) < 0.2 * DEG && b.abs() < 0.5
            })
            .expect("a cell on λ = 0 near the ecliptic");
        let pieces = cell_pieces(MAP_ORDER, cut);
        assert_eq!(pieces.len(), 2);
        assert!(pieces[0].iter().all(|p| p.0 >= 0.0) && pieces[1].iter().all(|p| p.0 <= 0.0));
    }

    #[test]
    fn zoom_box_wraps_round_longitude_zero() {
        // Cells on both sides of λ = 0 (a small field there): a narrow box centred near 0,
        // not one spanning the whole sky.
        let cells: Vec<(u64, u64)> = (0..cdshealpix::nested::n_hash(MAP_ORDER))
            .filter(|&h| {
                let (ra, dec) = cdshealpix::nested::center(MAP_ORDER, h);
                let (l, b) = radec_to_ecliptic(ra, dec);
                (l / DEG).min(360.0 - l / DEG) < 3.0 && (b / DEG).abs() < 2.0
            })
            .map(|h| (h, 1))
            .collect();
        let b = ZoomBox::around(&cells, MAP_ORDER).expect("small coverage");
        assert!(b.lon_half_deg < 6.0, "{b:?}");
        assert!(b.lon_deg.min(360.0 - b.lon_deg) < 1.0, "{b:?}");
        // A band all round the sky needs no zoom.
        let band: Vec<(u64, u64)> = (0..cdshealpix::nested::n_hash(MAP_ORDER))
            .filter(|&h| {
                let (ra, dec) = cdshealpix::nested::center(MAP_ORDER, h);
                (radec_to_ecliptic(ra, dec).1 / DEG).abs() < 2.0
            })
            .map(|h| (h, 1))
            .collect();
        assert_eq!(ZoomBox::around(&band, MAP_ORDER), None);
    }
}
