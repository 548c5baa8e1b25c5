//! The parameters of a fit: angular position, angular rates and inverse distance in a fixed
//! frame about the first measured direction (the parametrization of AJ 120, 3323, 2000), and
//! their one-to-one map to the state and to osculating elements at the reference epoch.
//!
//! Frame: ẑ the measured direction of the reference observation, x̂ east and ŷ north there
//! (ICRS), origin the observer's barycentric position o₀ at its epoch t₀ (TDB). Parameters
//! p = (α, β, γ, α̇, β̇, γ̇): barycentric position r = o₀ + (α x̂ + β ŷ + ẑ)/γ and velocity
//! v = (α̇ x̂ + β̇ ŷ + γ̇ ẑ)/γ at t₀.

use nalgebra::{Vector3, Vector6};

use super::astrometry::Observation;
use crate::orbit::{Center, Conic, Elements, Orbit};
use crate::sky::frames::icrs_to_ecliptic;

/// (α, β, γ, α̇, β̇, γ̇), radians, AU⁻¹ and per day.
pub type Params = Vector6<f64>;
pub const GAMMA: usize = 2;
pub const GAMMA_DOT: usize = 5;

/// The fixed frame of one fit.
#[derive(Debug, Clone, Copy)]
pub struct Frame {
    pub t0_tdb: f64,
    pub origin: Vector3<f64>,
    pub x: Vector3<f64>,
    pub y: Vector3<f64>,
    pub z: Vector3<f64>,
    /// The Sun's barycentric state at t₀ (for heliocentric elements).
    pub sun_pos: Vector3<f64>,
    pub sun_vel: Vector3<f64>,
    pub center: Center,
}

impl Frame {
    /// The frame about a reference observation, for elements relative to `center`.
    pub fn new(reference: &Observation, center: Center) -> Self {
        let o = &reference.observer;
        Frame {
            t0_tdb: o.tdb_mjd,
            origin: o.pos,
            x: reference.east,
            y: reference.north,
            z: reference.unit,
            sun_pos: o.sun_pos,
            sun_vel: o.sun_vel,
            center,
        }
    }

    /// Components of an ICRS vector along the frame's axes.
    #[inline]
    pub fn components(&self, v: &Vector3<f64>) -> Vector3<f64> {
        Vector3::new(v.dot(&self.x), v.dot(&self.y), v.dot(&self.z))
    }

    /// Gnomonic coordinates (θx, θy) of a direction.
    #[inline]
    pub fn project(&self, u: &Vector3<f64>) -> (f64, f64) {
        let c = self.components(u);
        (c.x / c.z, c.y / c.z)
    }

    /// Barycentric position and velocity (ICRS) at t₀; none when γ ≤ 0.
    pub fn state(&self, p: &Params) -> Option<(Vector3<f64>, Vector3<f64>)> {
        let g = p[GAMMA];
        if !(g > 0.0 && p.iter().all(|x| x.is_finite())) {
            return None;
        }
        let r = self.origin + (self.x * p[0] + self.y * p[1] + self.z) / g;
        let v = (self.x * p[3] + self.y * p[4] + self.z * p[5]) / g;
        Some((r, v))
    }

    /// The state relative to the elements' centre, ICRS axes.
    fn relative_state(&self, p: &Params) -> Option<(Vector3<f64>, Vector3<f64>)> {
        let (r, v) = self.state(p)?;
        Some(match self.center {
            Center::Heliocentric => (r - self.sun_pos, v - self.sun_vel),
            Center::Barycentric => (r, v),
        })
    }

    /// The two-body orbit of the parameters, bound or not (ICRS axes): what the fit's model
    /// propagates, so that its iterations may cross the bound-orbit wall; none when γ ≤ 0.
    pub fn conic(&self, p: &Params) -> Option<Conic> {
        let (r, v) = self.relative_state(p)?;
        Some(Conic::new(r, v, self.t0_tdb, self.center))
    }

    /// Osculating elements (ecliptic J2000, epoch t₀); none unless the state is a bound orbit.
    pub fn elements(&self, p: &Params) -> Option<Elements> {
        let (r, v) = self.relative_state(p)?;
        if v.norm_squared() >= 2.0 * self.center.gm() / r.norm() {
            return None;
        }
        let el = Elements::from_state(&icrs_to_ecliptic(&r), &icrs_to_ecliptic(&v), self.t0_tdb, self.center);
        el.problem().is_none().then_some(el)
    }

    /// The parameters of a known orbit (tests and truth comparisons).
    pub fn params_of(&self, orbit: &Orbit) -> Params {
        let (mut r, mut v) = orbit.state(self.t0_tdb);
        if self.center == Center::Heliocentric && orbit.center() == Center::Heliocentric {
            r += self.sun_pos;
            v += self.sun_vel;
        }
        let d = self.components(&(r - self.origin));
        let w = self.components(&v);
        let g = 1.0 / d.z;
        Params::new(d.x * g, d.y * g, g, w.x * g, w.y * g, w.z * g)
    }
}

/// Osculating elements of an orbit at another epoch (two-body), ecliptic J2000: the truth a
/// fit at that epoch is compared with.
pub fn elements_at(orbit: &Orbit, tdb_mjd: f64) -> Elements {
    let (r, v) = orbit.state(tdb_mjd);
    Elements::from_state(&icrs_to_ecliptic(&r), &icrs_to_ecliptic(&v), tdb_mjd, orbit.center())
}
