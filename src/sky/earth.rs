//! The Earth and the Sun in the barycentric ICRS frame, from VSOP87 (Bretagnon & Francou
//! 1988, A&A 202, 309): VSOP87A for the heliocentric Earth (the Earth itself, not the
//! Earth–Moon barycentre), the Sun about the barycentre from the VSOP87A planets and
//! their IAU 2009 masses. Both are given in the
//! dynamical ecliptic and equinox of J2000; they are rotated to ICRS axes with the matrix
//! that ERFA's `epv00` uses for the same purpose (from memory; checked against `erfa.epv00`
//! in the tests, agreement better than 1e-6 AU).
//!
//! A full VSOP87 evaluation costs tens of microseconds, so surveys with many visits use an
//! `EphemerisGrid`: samples every half day interpolated with a cubic (four-point Lagrange)
//! polynomial, whose error is below 1e-9 AU for the Earth's annual and monthly terms.

use nalgebra::Vector3;

use crate::foundation::constants::SUN_PLANET_MASS_RATIOS;
use crate::time::JD_MINUS_MJD;

/// Positions (AU) and velocities (AU/day), ICRS axes: the Earth relative to the Sun and the
/// Sun relative to the solar-system barycentre.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct EarthSun {
    pub earth_helio: Vector3<f64>,
    pub earth_helio_vel: Vector3<f64>,
    pub sun_bary: Vector3<f64>,
    pub sun_bary_vel: Vector3<f64>,
}

impl EarthSun {
    pub fn earth_bary(&self) -> Vector3<f64> {
        self.earth_helio + self.sun_bary
    }
    pub fn earth_bary_vel(&self) -> Vector3<f64> {
        self.earth_helio_vel + self.sun_bary_vel
    }
}

/// VSOP87 dynamical ecliptic J2000 → ICRS (ERFA epv00's rotation).
#[inline]
fn vsop_to_icrs(x: f64, y: f64, z: f64) -> Vector3<f64> {
    const AM12: f64 = 0.000000211284;
    const AM13: f64 = -0.000000091603;
    const AM21: f64 = -0.000000230286;
    const AM22: f64 = 0.917482137087;
    const AM23: f64 = -0.397776982902;
    const AM32: f64 = 0.397776982902;
    const AM33: f64 = 0.917482137087;
    Vector3::new(
        x + AM12 * y + AM13 * z,
        AM21 * x + AM22 * y + AM23 * z,
        AM32 * y + AM33 * z,
    )
}

fn earth_helio_pos(tdb_mjd: f64) -> Vector3<f64> {
    let c = vsop87::vsop87a::earth(tdb_mjd + JD_MINUS_MJD);
    vsop_to_icrs(c.x, c.y, c.z)
}

/// The Sun about the barycentre from the planets' VSOP87A heliocentric positions:
/// x_sun = −Σ m_i x_i / (M_sun + Σ m_i), with the IAU 2009 masses. VSOP87E's own Sun is
/// built on the older planetary masses of 1988 (its Neptune is 0.5% heavier), which puts
/// it ~1e-5 AU from the modern barycentre; with current masses we agree with ERFA's
/// `epv00` to better than 1e-6 AU (Pluto, neglected, moves the Sun by < 4e-7 AU).
fn sun_bary_pos(tdb_mjd: f64) -> Vector3<f64> {
    use vsop87::vsop87a as v;
    let jd = tdb_mjd + JD_MINUS_MJD;
    let planets = [
        v::mercury(jd),
        v::venus(jd),
        v::earth_moon(jd),
        v::mars(jd),
        v::jupiter(jd),
        v::saturn(jd),
        v::uranus(jd),
        v::neptune(jd),
    ];
    let mut sum = Vector3::zeros();
    let mut mass = 1.0;
    for (c, ratio) in planets.iter().zip(SUN_PLANET_MASS_RATIOS) {
        sum += Vector3::new(c.x, c.y, c.z) / ratio;
        mass += 1.0 / ratio;
    }
    let s = -sum / mass;
    vsop_to_icrs(s.x, s.y, s.z)
}

/// The Earth from a direct VSOP87 evaluation (velocity by a central difference); the Sun's
/// fields are left at zero for the caller to fill.
fn earth_exact(tdb_mjd: f64) -> EarthSun {
    const H: f64 = 0.01; // see earth_sun_exact
    let (e0, e1) = (earth_helio_pos(tdb_mjd - H), earth_helio_pos(tdb_mjd + H));
    EarthSun {
        earth_helio: earth_helio_pos(tdb_mjd),
        earth_helio_vel: (e1 - e0) / (2.0 * H),
        sun_bary: Vector3::zeros(),
        sun_bary_vel: Vector3::zeros(),
    }
}

/// Earth and Sun from a direct VSOP87 evaluation; velocities by a central difference over
/// ±0.01 day (truncation error ~ h² |x'''| / 6 < 1e-11 AU/day).
pub fn earth_sun_exact(tdb_mjd: f64) -> EarthSun {
    const H: f64 = 0.01;
    let (s0, s1) = (sun_bary_pos(tdb_mjd - H), sun_bary_pos(tdb_mjd + H));
    EarthSun {
        sun_bary: sun_bary_pos(tdb_mjd),
        sun_bary_vel: (s1 - s0) / (2.0 * H),
        ..earth_exact(tdb_mjd)
    }
}

/// Half-day samples of the Earth and Sun positions over a span, interpolated by cubics.
#[derive(Debug, Clone)]
pub struct EphemerisGrid {
    earth: Samples,
    sun: Samples,
}

/// Equally spaced samples of a vector function of time.
#[derive(Debug, Clone)]
pub struct Samples {
    start: f64,
    step: f64,
    values: Vec<Vector3<f64>>,
}

impl Samples {
    fn new(tdb_min: f64, tdb_max: f64, step: f64, f: impl Fn(f64) -> Vector3<f64> + Sync) -> Self {
        use rayon::prelude::*;
        let start = (tdb_min / step).floor() * step - 2.0 * step;
        let n = (((tdb_max - start) / step).ceil() as usize) + 4;
        let values = (0..n).into_par_iter().map(|i| f(start + i as f64 * step)).collect();
        Samples { start, step, values }
    }

    fn contains(&self, t: f64) -> bool {
        let u = (t - self.start) / self.step;
        u >= 1.0 && u <= (self.values.len() - 3) as f64
    }

    /// Cubic interpolation of the value and its time derivative.
    fn at(&self, t: f64) -> (Vector3<f64>, Vector3<f64>) {
        let u = (t - self.start) / self.step;
        let i = (u.floor() as usize).clamp(1, self.values.len() - 3);
        let (w, dw) = lagrange4(u - i as f64); // samples at −1, 0, 1, 2 around i
        let (mut p, mut d) = (Vector3::zeros(), Vector3::zeros());
        for k in 0..4 {
            p += self.values[i - 1 + k] * w[k];
            d += self.values[i - 1 + k] * dw[k];
        }
        (p, d / self.step)
    }
}

impl EphemerisGrid {
    pub const STEP_DAYS: f64 = 0.5;
    /// The Sun's barycentric motion is slow (periods of 12 years and more) but costs eight
    /// planetary series: samples every 4 days interpolate it to < 1e-11 AU.
    pub const SUN_STEP_DAYS: f64 = 4.0;

    /// A grid covering [tdb_min, tdb_max] with two samples of margin at each end.
    pub fn covering(tdb_min: f64, tdb_max: f64) -> Self {
        EphemerisGrid {
            earth: Samples::new(tdb_min, tdb_max, Self::STEP_DAYS, earth_helio_pos),
            sun: Samples::new(tdb_min, tdb_max, Self::SUN_STEP_DAYS, sun_bary_pos),
        }
    }

    pub fn contains(&self, tdb_mjd: f64) -> bool {
        self.earth.contains(tdb_mjd) && self.sun.contains(tdb_mjd)
    }

    /// Interpolated state; falls back to a direct evaluation outside the grid.
    pub fn at(&self, tdb_mjd: f64) -> EarthSun {
        if !self.contains(tdb_mjd) {
            return earth_sun_exact(tdb_mjd);
        }
        let (ep, ev) = self.earth.at(tdb_mjd);
        let (sp, sv) = self.sun.at(tdb_mjd);
        EarthSun {
            earth_helio: ep,
            earth_helio_vel: ev,
            sun_bary: sp,
            sun_bary_vel: sv,
        }
    }
}

/// Four-point Lagrange weights at nodes −1, 0, 1, 2 and their derivatives, at s.
#[inline]
fn lagrange4(s: f64) -> ([f64; 4], [f64; 4]) {
    let (a, b, c, d) = (s + 1.0, s, s - 1.0, s - 2.0);
    let w = [-b * c * d / 6.0, a * c * d / 2.0, -a * b * d / 2.0, a * b * c / 6.0];
    let dw = [
        -(c * d + b * d + b * c) / 6.0,
        (c * d + a * d + a * c) / 2.0,
        -(b * d + a * d + a * b) / 2.0,
        (b * c + a * c + a * b) / 6.0,
    ];
    (w, dw)
}

/// Where Earth and Sun states come from: a direct evaluation for a few epochs, a grid for many.
#[derive(Debug, Clone)]
pub enum EarthSource {
    /// Few epochs over a long span: the Earth evaluated directly at each; the Sun from its
    /// 4-day samples where those are cheaper than direct evaluations (eight planetary series).
    Exact {
        sun: Option<Samples>,
    },
    Grid(EphemerisGrid),
}

impl EarthSource {
    /// Choose the cheaper source for this set of TDB epochs.
    pub fn for_epochs(tdb: &[f64]) -> Self {
        let (lo, hi) = tdb
            .iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(l, h), &t| (l.min(t), h.max(t)));
        if tdb.is_empty() {
            return EarthSource::Exact { sun: None };
        }
        if ((hi - lo) / EphemerisGrid::STEP_DAYS) as usize <= tdb.len() {
            return EarthSource::Grid(EphemerisGrid::covering(lo, hi));
        }
        // A direct Sun costs three evaluations per epoch (for its velocity); samples cost one per 4 days.
        let sun_samples = ((hi - lo) / EphemerisGrid::SUN_STEP_DAYS) as usize <= 3 * tdb.len();
        EarthSource::Exact {
            sun: sun_samples.then(|| Samples::new(lo, hi, EphemerisGrid::SUN_STEP_DAYS, sun_bary_pos)),
        }
    }

    pub fn at(&self, tdb_mjd: f64) -> EarthSun {
        match self {
            EarthSource::Exact { sun: Some(sun) } if sun.contains(tdb_mjd) => {
                let (sun_bary, sun_bary_vel) = sun.at(tdb_mjd);
                EarthSun {
                    sun_bary,
                    sun_bary_vel,
                    ..earth_exact(tdb_mjd)
                }
            }
            EarthSource::Exact { .. } => earth_sun_exact(tdb_mjd),
            EarthSource::Grid(g) => g.at(tdb_mjd),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn grid_matches_direct_evaluation() {
        let grid = EphemerisGrid::covering(60000.0, 60100.0);
        for k in 0..200 {
            let t = 60000.0 + k as f64 * 0.4999;
            let (a, b) = (grid.at(t), earth_sun_exact(t));
            assert!((a.earth_helio - b.earth_helio).norm() < 1e-9, "{t}");
            assert!((a.sun_bary - b.sun_bary).norm() < 1e-10, "{t}");
            assert!((a.earth_helio_vel - b.earth_helio_vel).norm() < 1e-8, "{t}");
        }
    }
}
