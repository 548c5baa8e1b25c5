//! Measured positions: a detection's true astrometric direction displaced by a Gaussian error
//! in the tangent plane, and the residual of a predicted direction about a measured one.
//!
//! The measured direction is u' = (u + ξ ê + η n̂)/|…|, ξ, η ~ N(0, σ²) independently: the point
//! (ξ, η) of the gnomonic plane about the true direction u (circular Gaussian centroid errors,
//! common practice, no source). Residuals are the gnomonic coordinates of a predicted direction
//! about the measured one, in units of σ.

use nalgebra::Vector3;
use rand::RngExt;
use rand_distr::StandardNormal;

use crate::sky::observer::ObserverState;

/// One measured position of an object, with everything a fit needs about it.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Observation {
    /// Where the observer was (barycentric ICRS) and when (TDB).
    pub observer: ObserverState,
    /// The night of the visit (the survey's own count from local noon).
    pub night: i64,
    /// Measured direction (unit vector, ICRS) and the east and north unit vectors there.
    pub unit: Vector3<f64>,
    pub east: Vector3<f64>,
    pub north: Vector3<f64>,
    /// 1σ error per coordinate, radians.
    pub sigma_rad: f64,
}

/// East and north unit vectors at a direction (north undefined exactly at a pole: then the
/// ICRS y axis stands in, which is as good a tangent basis as any).
pub fn tangent_basis(u: &Vector3<f64>) -> (Vector3<f64>, Vector3<f64>) {
    let east = Vector3::new(-u.y, u.x, 0.0);
    let east = if east.norm() > 1e-15 {
        east.normalize()
    } else {
        Vector3::new(0.0, 1.0, 0.0)
    };
    (east, u.cross(&east))
}

impl Observation {
    /// An observation measured exactly at `unit` (a real measurement, or a test's truth).
    pub fn at(observer: ObserverState, night: i64, unit: Vector3<f64>, sigma_rad: f64) -> Self {
        let unit = unit.normalize();
        let (east, north) = tangent_basis(&unit);
        Observation {
            observer,
            night,
            unit,
            east,
            north,
            sigma_rad,
        }
    }

    /// The true direction `truth` measured with error σ, drawing two normals from `rng`.
    pub fn measured<R: rand::Rng>(
        observer: ObserverState,
        night: i64,
        truth: &Vector3<f64>,
        sigma_rad: f64,
        rng: &mut R,
    ) -> Self {
        let (east, north) = tangent_basis(truth);
        let xi: f64 = rng.sample(StandardNormal);
        let eta: f64 = rng.sample(StandardNormal);
        Self::at(
            observer,
            night,
            truth + (east * xi + north * eta) * sigma_rad,
            sigma_rad,
        )
    }

    /// The residual (predicted − measured) of a predicted direction, east and north, in σ.
    #[inline]
    pub fn residual(&self, predicted: &Vector3<f64>) -> (f64, f64) {
        let along = predicted.dot(&self.unit);
        (
            predicted.dot(&self.east) / along / self.sigma_rad,
            predicted.dot(&self.north) / along / self.sigma_rad,
        )
    }

    pub fn tdb_mjd(&self) -> f64 {
        self.observer.tdb_mjd
    }
}
