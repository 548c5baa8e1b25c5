//! The live area of a field: where in the focal plane a source can be detected at all.
//!
//! Two kinds of loss, each fixed per survey:
//! * **Dead regions** in the focal plane (chip gaps as stripes, dead cells). They belong to
//!   the camera: they turn with the field (`rotation_deg`, through `footprint::focal_plane`)
//!   and move with a visit's dither (`dither_x_deg`, `dither_y_deg`). So a source that stays
//!   in a gap between two visits of one pointing is lost in both, and a slow mover seen three
//!   times at one pointing is found with the live fraction, not its cube.
//! * A **random loss** (`random_live_fraction`): each in-field event is kept with that
//!   probability, independently of every other event, for users who know only a fraction.
//!   It is the old per-visit coin flip and cubes over a triplet.
//!
//! A dither moves the dead regions, not the outline: the footprint stays at the listed
//! centre, so the visit index is untouched. Dithers are small steps meant to move the gaps;
//! larger offsets belong in the visits' `ra_deg`/`dec_deg`.

use crate::rng::splitmix64;

/// The focal-plane axis along which stripes repeat.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Axis {
    X,
    Y,
}

/// The one enum of dead-region patterns, in degrees of the focal plane (as `Footprint`).
#[derive(Debug, Clone, PartialEq)]
pub enum DeadRegion {
    /// Chip gaps: bands |c − offset − k·spacing| < width/2 for every integer k, with c the
    /// coordinate along `along` (each stripe is a band of constant c).
    Stripes {
        along: Axis,
        spacing_deg: f64,
        width_deg: f64,
        offset_deg: f64,
    },
    /// Dead cells: the focal plane cut into squares of `size_deg` (one corner at the
    /// centre); each is dead when a hash of (its indices, `seed`) falls below `fraction`, so
    /// the pattern is fixed per survey and a fraction `fraction` of the cells is dead on average.
    Cells { size_deg: f64, fraction: f64, seed: u64 },
}

impl DeadRegion {
    /// Whether focal-plane position (x, y), degrees, lies in this dead region.
    pub fn covers(&self, x: f64, y: f64) -> bool {
        match *self {
            DeadRegion::Stripes {
                along,
                spacing_deg,
                width_deg,
                offset_deg,
            } => {
                let c = if along == Axis::X { x } else { y } - offset_deg;
                (c - spacing_deg * (c / spacing_deg).round()).abs() < 0.5 * width_deg
            }
            DeadRegion::Cells {
                size_deg,
                fraction,
                seed,
            } => {
                let (i, j) = ((x / size_deg).floor() as i64, (y / size_deg).floor() as i64);
                let h = splitmix64(seed ^ splitmix64(i as u64 ^ splitmix64(j as u64).rotate_left(17)));
                ((h >> 11) as f64) * (1.0 / 9_007_199_254_740_992.0) < fraction
            }
        }
    }

    /// Check the sizes; the message names the `[[field.dead]]` entry.
    pub fn problem(&self, k: usize) -> Option<String> {
        let bad = |v: f64| !(v > 0.0 && v < 60.0);
        match *self {
            DeadRegion::Stripes {
                spacing_deg,
                width_deg,
                offset_deg,
                ..
            } => (bad(spacing_deg) || bad(width_deg) || width_deg >= spacing_deg || !offset_deg.is_finite()).then(|| {
                format!(
                    "field.dead[{k}]: expected 0 < width_deg < spacing_deg < 60 (degrees) and a finite offset_deg, found width {width_deg}, spacing {spacing_deg}, offset {offset_deg}"
                )
            }),
            DeadRegion::Cells { size_deg, fraction, .. } => (bad(size_deg) || !(0.0..1.0).contains(&fraction)).then(|| {
                format!(
                    "field.dead[{k}]: expected 0 < size_deg < 60 (degrees) and a dead fraction in [0, 1), found size {size_deg}, fraction {fraction}"
                )
            }),
        }
    }
}

/// Where and how often a field can detect: the dead regions and the random loss.
#[derive(Debug, Clone, PartialEq)]
pub struct LiveArea {
    pub dead: Vec<DeadRegion>,
    /// Probability that an in-field event outside every dead region is kept (independent draws).
    pub random_live_fraction: f64,
}

impl Default for LiveArea {
    fn default() -> Self {
        LiveArea {
            dead: Vec::new(),
            random_live_fraction: 1.0,
        }
    }
}

impl LiveArea {
    /// Whether focal-plane position (x, y), degrees, of a visit dithered by (dx, dy) is outside every dead region.
    pub fn is_live(&self, x: f64, y: f64, dither: (f64, f64)) -> bool {
        let (u, v) = (x - dither.0, y - dither.1);
        !self.dead.iter().any(|d| d.covers(u, v))
    }

    /// The mean live fraction over a footprint: the solid-angle-weighted fraction of its area
    /// outside every dead region (undithered), times the random live fraction. A midpoint
    /// rule on an n × n grid over the footprint's bounding square in the tangent plane, each
    /// point weighted by the gnomonic area element (1 + x² + y²)^(−3/2) (x, y in radians).
    pub fn mean_fraction(&self, footprint: &super::Footprint) -> f64 {
        if self.dead.is_empty() {
            return self.random_live_fraction;
        }
        const N: usize = 600;
        let half = footprint.bounding_radius_rad().tan();
        let step = 2.0 * half / N as f64;
        let (mut all, mut live) = (0.0, 0.0);
        for i in 0..N {
            let x = -half + (i as f64 + 0.5) * step;
            for j in 0..N {
                let y = -half + (j as f64 + 0.5) * step;
                let (xd, yd) = (x.to_degrees(), y.to_degrees());
                if !footprint.contains_focal(xd, yd) {
                    continue;
                }
                let w = (1.0 + x * x + y * y).powf(-1.5);
                all += w;
                if self.is_live(xd, yd, (0.0, 0.0)) {
                    live += w;
                }
            }
        }
        if all > 0.0 {
            self.random_live_fraction * live / all
        } else {
            self.random_live_fraction
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn stripes_are_bands_of_constant_coordinate() {
        let s = DeadRegion::Stripes {
            along: Axis::X,
            spacing_deg: 0.2,
            width_deg: 0.1,
            offset_deg: 0.0,
        };
        // Bands |x − 0.2k| < 0.05: x = 0 and 0.19 are dead, 0.1 and 0.06 live, at any y.
        for y in [-1.0, 0.0, 0.37] {
            assert!(s.covers(0.0, y) && s.covers(0.19, y) && s.covers(-0.21, y));
            assert!(!s.covers(0.1, y) && !s.covers(0.06, y) && !s.covers(-0.14, y));
        }
    }

    #[test]
    fn cells_are_fixed_and_dead_at_their_fraction() {
        let c = DeadRegion::Cells {
            size_deg: 0.01,
            fraction: 0.3,
            seed: 5,
        };
        // The same cell answers the same everywhere inside it.
        assert_eq!(c.covers(0.0012, 0.0034), c.covers(0.0088, 0.0091));
        // Over 200 × 200 cells the dead share is 0.3 within 4σ (σ = √(0.3·0.7/40000) ≈ 0.0023).
        let dead = (0..200)
            .flat_map(|i| (0..200).map(move |j| (i, j)))
            .filter(|&(i, j)| c.covers((i as f64 + 0.5) * 0.01 - 1.0, (j as f64 + 0.5) * 0.01 - 1.0))
            .count();
        assert!((dead as f64 / 40000.0 - 0.3).abs() < 4.0 * 0.0023, "{dead}");
    }
}
