//! Crowded fields: the share of the sky hidden behind stars, fixed on the sky.
//!
//! Near the galactic plane stars cover part of every image, and a moving source that falls on
//! a star's image is lost. The loss belongs to the sky, not the camera: the sky is cut into
//! HEALPix cells (nested, order `cell_order`, default 16: cells of 3.2″, about a star's masked
//! image in arcsecond seeing, common practice, no source), each dead with probability d at
//! its position by a fixed hash of (cell, `seed`). A slow mover behind a star stays behind it
//! for every visit of a night; a fast one moves on. The dead fraction d comes from
//! * `cosecant`: d(b) = min(d_max, d_pole / sin|b|), b the galactic latitude: star counts to a
//!   given depth through a thin plane-parallel disc grow as cosec |b| (the plane-parallel
//!   slab, a textbook result, from memory); d_pole (`pole_dead_fraction`, default 0.01) and
//!   d_max (`max_dead_fraction`, default 0.6) are common practice, no source: set them from
//!   the survey's own masks;
//! * `healpix`: the user's table of live fraction per HEALPix cell (nested, order `order`):
//!   d = 1 − live_fraction, and cells the table leaves out are wholly live.

use crate::rng::splitmix64;
use crate::sky::frames::radec_to_galactic;
use crate::sky::healpix::cell_at;

/// Where the dead fraction comes from.
#[derive(Debug, Clone, PartialEq)]
pub enum DeadFraction {
    Cosecant {
        pole: f64,
        max: f64,
    },
    /// Live fraction per nested cell of `order`, sorted by cell.
    Table {
        order: u8,
        cells: Vec<(u64, f64)>,
    },
}

/// Stars hiding moving sources: the dead fraction and the fixed sky cells it kills.
#[derive(Debug, Clone, PartialEq)]
pub struct Crowding {
    pub dead: DeadFraction,
    pub cell_order: u8,
    pub seed: u64,
}

impl DeadFraction {
    /// The dead fraction at (ra, dec), radians.
    pub fn at(&self, ra: f64, dec: f64) -> f64 {
        match self {
            DeadFraction::Cosecant { pole, max } => {
                let (_, b) = radec_to_galactic(ra, dec);
                (pole / b.sin().abs()).min(*max)
            }
            DeadFraction::Table { order, cells } => {
                let h = cell_at(*order, ra, dec);
                cells
                    .binary_search_by_key(&h, |c| c.0)
                    .map_or(0.0, |k| 1.0 - cells[k].1)
            }
        }
    }
}

impl Crowding {
    /// Whether a star hides a source at (ra, dec), radians.
    pub fn hides(&self, ra: f64, dec: f64) -> bool {
        let c = cell_at(self.cell_order, ra, dec);
        let u = (splitmix64(self.seed ^ splitmix64(c)) >> 11) as f64 * (1.0 / 9_007_199_254_740_992.0);
        u < self.dead.at(ra, dec)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::sky::frames::{icrs_to_galactic_matrix, lon_lat, unit_vector};

    /// ICRS (ra, dec) of galactic (l, b), radians.
    fn from_galactic(l: f64, b: f64) -> (f64, f64) {
        lon_lat(&(icrs_to_galactic_matrix().transpose() * unit_vector(l, b)))
    }

    #[test]
    fn cosecant_law_and_its_cap() {
        let d = DeadFraction::Cosecant { pole: 0.01, max: 0.6 };
        let at = |b: f64| {
            let (ra, dec) = from_galactic(1.0, b.to_radians());
            d.at(ra, dec)
        };
        assert!((at(90.0) - 0.01).abs() < 1e-9);
        assert!((at(30.0) - 0.02).abs() < 1e-9, "sin 30° = 1/2");
        assert!((at(-30.0) - 0.02).abs() < 1e-9, "symmetric about the plane");
        assert_eq!(at(0.5), 0.6, "capped in the plane");
    }

    #[test]
    fn hidden_share_follows_the_dead_fraction() {
        // 20 000 positions in a 0.5° patch at b = 30° (d = 0.02 by the law, 0.0200–0.0203
        // across the patch): the hidden share within 4σ (σ = 0.001).
        let c = Crowding {
            dead: DeadFraction::Cosecant { pole: 0.01, max: 0.6 },
            cell_order: 16,
            seed: 3,
        };
        let hidden = (0..20_000)
            .filter(|k| {
                let (l, b) = (1.0 + (k % 200) as f64 * 0.0025, 30.0 + (k / 200) as f64 * 0.005);
                let (ra, dec) = from_galactic(l.to_radians(), b.to_radians());
                c.hides(ra, dec)
            })
            .count();
        assert!((hidden as f64 / 20_000.0 - 0.02).abs() < 0.004, "{hidden}");
    }
}
