//! Field footprints in the gnomonic (tangent-plane) projection about the visit centre.
//!
//! Standard coordinates (ξ toward east, η toward north) of a direction d about a centre c:
//! ξ = d·ê / d·c, η = d·n̂ / d·c (Calabretta & Greisen 2002, A&A 395, 1077, the TAN
//! projection), given here in degrees (× 180/π). The footprint is turned by `rotation_deg`,
//! the position angle (north through east) of its +y axis: x = ξ cos θ − η sin θ,
//! y = ξ sin θ + η cos θ. A gnomonic projection maps great circles to straight lines, so a
//! polygon in the tangent plane is a spherical polygon and containment is exact.

use nalgebra::Vector3;

use crate::foundation::units::DEG;

/// The one enum of footprints. Sizes are in degrees of the tangent plane.
#[derive(Debug, Clone, PartialEq)]
pub enum Footprint {
    /// All directions within `radius_deg` of the centre (a spherical cap).
    Circle { radius_deg: f64 },
    /// |x| ≤ width/2 and |y| ≤ height/2 in the turned tangent plane.
    Rectangle { width_deg: f64, height_deg: f64 },
    /// Detector polygons (x, y) in degrees of the focal plane; chip gaps are outside every polygon.
    Mosaic { chips: Vec<Vec<(f64, f64)>> },
}

/// Local east and north unit vectors at a centre (well defined at the poles too: the
/// east vector then follows the RA given).
fn east_north(ra: f64, dec: f64) -> (Vector3<f64>, Vector3<f64>) {
    let (sa, ca) = ra.sin_cos();
    let (sd, cd) = dec.sin_cos();
    (Vector3::new(-sa, ca, 0.0), Vector3::new(-sd * ca, -sd * sa, cd))
}

/// Focal-plane coordinates (x, y), degrees, of `dir` about a turned centre; `None` on the far hemisphere.
pub fn focal_plane(ra: f64, dec: f64, rotation_deg: f64, dir: &Vector3<f64>) -> Option<(f64, f64)> {
    let c = crate::sky::frames::unit_vector(ra, dec);
    let w = dir.dot(&c);
    if w <= 0.0 {
        return None;
    }
    let (e, n) = east_north(ra, dec);
    let (xi, eta) = (dir.dot(&e) / w / DEG, dir.dot(&n) / w / DEG);
    let (s, co) = (rotation_deg * DEG).sin_cos();
    Some((xi * co - eta * s, xi * s + eta * co))
}

/// The direction at focal-plane coordinates (x, y) degrees about a turned centre (inverse of `focal_plane`).
pub fn from_focal_plane(ra: f64, dec: f64, rotation_deg: f64, x: f64, y: f64) -> Vector3<f64> {
    let (s, co) = (rotation_deg * DEG).sin_cos();
    let (xi, eta) = ((x * co + y * s) * DEG, (-x * s + y * co) * DEG);
    let (e, n) = east_north(ra, dec);
    (crate::sky::frames::unit_vector(ra, dec) + e * xi + n * eta).normalize()
}

impl Footprint {
    /// Exact containment in the gnomonic tangent plane about the visit centre, turned by rotation_deg.
    pub fn contains(&self, center_ra_rad: f64, center_dec_rad: f64, rotation_deg: f64, dir: &Vector3<f64>) -> bool {
        if let Footprint::Circle { radius_deg } = self {
            let c = crate::sky::frames::unit_vector(center_ra_rad, center_dec_rad);
            return dir.dot(&c) >= (radius_deg * DEG).cos();
        }
        focal_plane(center_ra_rad, center_dec_rad, rotation_deg, dir).is_some_and(|(x, y)| self.contains_focal(x, y))
    }

    /// Containment of focal-plane position (x, y), degrees of the tangent plane (a circle by
    /// the angle atan ρ from the centre, ρ the tangent-plane radius in radians).
    pub fn contains_focal(&self, x: f64, y: f64) -> bool {
        match self {
            Footprint::Circle { radius_deg } => (x * DEG).hypot(y * DEG).atan() <= radius_deg * DEG,
            Footprint::Rectangle { width_deg, height_deg } => x.abs() <= 0.5 * width_deg && y.abs() <= 0.5 * height_deg,
            Footprint::Mosaic { chips } => chips.iter().any(|p| point_in_polygon(p, x, y)),
        }
    }

    /// HEALPix cells of `order` (ascending) whose centres lie inside the footprint at one
    /// pointing (centre in radians, rotation in degrees): the rule of every coverage count.
    pub fn healpix_cells(&self, order: u8, center_ra_rad: f64, center_dec_rad: f64, rotation_deg: f64) -> Vec<u64> {
        let r = self.bounding_radius_rad();
        crate::sky::healpix::cells_where(order, center_ra_rad, center_dec_rad, r, |u| {
            self.contains(center_ra_rad, center_dec_rad, rotation_deg, u)
        })
    }

    /// Angular radius (rad) of a circle about the centre that contains the whole footprint (for indexing).
    pub fn bounding_radius_rad(&self) -> f64 {
        match self {
            Footprint::Circle { radius_deg } => radius_deg * DEG,
            Footprint::Rectangle { width_deg, height_deg } => {
                (0.5 * width_deg * DEG).hypot(0.5 * height_deg * DEG).atan()
            }
            Footprint::Mosaic { chips } => {
                let r = chips
                    .iter()
                    .flatten()
                    .map(|&(x, y)| (x * DEG).hypot(y * DEG))
                    .fold(0.0, f64::max);
                r.atan()
            }
        }
    }

    /// Solid angle in square degrees (exact for every shape: the cap formula 2π(1 − cos r);
    /// the gnomonic rectangle 4 atan(AB/√(1 + A² + B²)); polygons as fans of spherical triangles).
    pub fn area_sq_deg(&self) -> f64 {
        let sr = match self {
            Footprint::Circle { radius_deg } => std::f64::consts::TAU * (1.0 - (radius_deg * DEG).cos()),
            Footprint::Rectangle { width_deg, height_deg } => {
                let (a, b) = (0.5 * width_deg * DEG, 0.5 * height_deg * DEG);
                4.0 * (a * b / (1.0 + a * a + b * b).sqrt()).atan()
            }
            Footprint::Mosaic { chips } => chips.iter().map(|p| polygon_solid_angle(p)).sum(),
        };
        sr / (DEG * DEG)
    }

    /// Check sizes and polygons; the message names the `[field]` key.
    pub fn problem(&self) -> Option<String> {
        let bad = |x: f64| !(x > 0.0 && x < 60.0);
        match self {
            Footprint::Circle { radius_deg } if bad(*radius_deg) => {
                Some(format!("field.radius_deg: expected a radius in (0, 60) degrees, found {radius_deg}"))
            }
            Footprint::Rectangle { width_deg, height_deg } if bad(*width_deg) || bad(*height_deg) => Some(format!(
                "field.width_deg/height_deg: expected sizes in (0, 60) degrees, found {width_deg} × {height_deg}"
            )),
            Footprint::Mosaic { chips } if chips.is_empty() => Some("field.chips: expected at least one polygon".into()),
            Footprint::Mosaic { chips } => chips.iter().enumerate().find_map(|(i, p)| {
                let far = p.iter().any(|&(x, y)| !(x.is_finite() && y.is_finite()) || x.hypot(y) > 60.0);
                (p.len() < 3 || far).then(|| {
                    format!("field.chips[{i}]: expected a polygon of at least 3 [x_deg, y_deg] corners within 60° of the centre")
                })
            }),
            _ => None,
        }
    }
}

/// Even–odd ray casting in the plane (points on an edge may fall either way).
fn point_in_polygon(poly: &[(f64, f64)], x: f64, y: f64) -> bool {
    if poly.len() < 3 {
        return false;
    }
    let mut inside = false;
    let mut j = poly.len() - 1;
    for i in 0..poly.len() {
        let ((xi, yi), (xj, yj)) = (poly[i], poly[j]);
        if (yi > y) != (yj > y) && x < (xj - xi) * (y - yi) / (yj - yi) + xi {
            inside = !inside;
        }
        j = i;
    }
    inside
}

/// Solid angle (sr) of a tangent-plane polygon about a centre at the pole: a fan of signed
/// spherical triangles (centre, p_i, p_i+1), each by the formula of Van Oosterom & Strackee
/// (1983, IEEE Trans. Biomed. Eng. 30, 125): tan(Ω/2) = a·(b×c) / (1 + a·b + b·c + c·a).
fn polygon_solid_angle(poly: &[(f64, f64)]) -> f64 {
    let lift = |&(x, y): &(f64, f64)| Vector3::new(x * DEG, y * DEG, 1.0).normalize();
    let o = Vector3::new(0.0, 0.0, 1.0);
    let total: f64 = (0..poly.len())
        .map(|i| {
            let (b, c) = (lift(&poly[i]), lift(&poly[(i + 1) % poly.len()]));
            let num = o.dot(&b.cross(&c));
            let den = 1.0 + o.dot(&b) + b.dot(&c) + c.dot(&o);
            2.0 * num.atan2(den)
        })
        .sum();
    total.abs()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn focal_plane_round_trip() {
        for &(ra, dec, rot) in &[(0.1, 0.2, 0.0), (6.2, -1.2, 33.0), (3.0, 1.5707963, 120.0)] {
            let d = from_focal_plane(ra, dec, rot, 0.7, -0.3);
            let (x, y) = focal_plane(ra, dec, rot, &d).unwrap();
            assert!((x - 0.7).abs() < 1e-9 && (y + 0.3).abs() < 1e-9);
        }
    }

    #[test]
    fn square_mosaic_equals_rectangle_area() {
        let sq = Footprint::Mosaic {
            chips: vec![vec![(-1.0, -0.5), (1.0, -0.5), (1.0, 0.5), (-1.0, 0.5)]],
        };
        let rect = Footprint::Rectangle {
            width_deg: 2.0,
            height_deg: 1.0,
        };
        assert!((sq.area_sq_deg() - rect.area_sq_deg()).abs() < 1e-9);
    }
}
