//! Astrometric positions with light time, and rates of motion.
//!
//! The astrometric direction is the geometric vector from the observer at the epoch t to
//! the object at the time of emission t − τ, τ = |Δ|/c iterated to convergence, in ICRS.
//! No aberration or light deflection is applied: pointing centres of surveys are astrometric
//! (catalogue-referenced) positions, so these are the positions to compare with them.
//!
//! For heliocentric orbits the object's barycentric position at t − τ is its heliocentric
//! position plus the Sun's barycentric position at t − τ, taken to first order in τ from
//! the Sun's state at t (the Sun moves < 1e-5 AU/day: the second-order term is < 1e-9 AU).

use nalgebra::Vector3;

use super::frames::lon_lat;
use super::observer::ObserverState;
use crate::orbit::constants::C_AU_PER_DAY;
use crate::orbit::{Center, Orbit};

const RAD_PER_DAY_TO_ARCSEC_PER_HR: f64 = 206_264.806_247_096_36 / 24.0;

/// Everything an observation of one object at one instant needs.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Apparent {
    /// Unit vector from the observer to the object (ICRS).
    pub unit: Vector3<f64>,
    pub ra: f64,
    pub dec: f64,
    pub delta_au: f64,
    pub r_au: f64,
    /// Sun–object–observer angle, radians.
    pub phase: f64,
    /// Sun–observer–object angle, radians.
    pub elongation: f64,
    /// Sky motion, radians per day, along RA (times cos Dec) and Dec.
    pub rate_ra_cosdec: f64,
    pub rate_dec: f64,
    pub light_time_days: f64,
}

impl Apparent {
    /// Total rate of motion, arcsec per hour.
    pub fn rate_arcsec_per_hr(&self) -> f64 {
        self.rate_ra_cosdec.hypot(self.rate_dec) * RAD_PER_DAY_TO_ARCSEC_PER_HR
    }
    /// Position angle of the motion, degrees east of north in [0, 360).
    pub fn rate_pa_deg(&self) -> f64 {
        self.rate_ra_cosdec.atan2(self.rate_dec).to_degrees().rem_euclid(360.0)
    }
}

/// The object's barycentric state at the emission time t − τ and the Sun's position then.
#[inline]
fn emitted(orbit: &Orbit, obs: &ObserverState, tau: f64) -> (Vector3<f64>, Vector3<f64>, Vector3<f64>) {
    let (p, v) = orbit.state(obs.tdb_mjd - tau);
    let sun = obs.sun_pos - obs.sun_vel * tau;
    match orbit.center() {
        Center::Heliocentric => (p + sun, v + obs.sun_vel, sun),
        Center::Barycentric => (p, v, sun),
    }
}

/// Light-time iteration: returns (Δ vector, object position, object velocity, Sun position, τ).
#[inline]
fn solve_light_time(
    orbit: &Orbit,
    obs: &ObserverState,
) -> (Vector3<f64>, Vector3<f64>, Vector3<f64>, Vector3<f64>, f64) {
    let mut tau = 0.0;
    let mut out = emitted(orbit, obs, tau);
    for _ in 0..8 {
        let d = out.0 - obs.pos;
        let next = d.norm() / C_AU_PER_DAY;
        // Each pass shrinks the error by ~v_radial/c ≈ 1e-5: a change below 1e-9 day leaves < 1e-14 day.
        let converged = (next - tau).abs() < 1e-9;
        tau = next;
        out = emitted(orbit, obs, tau);
        if converged {
            break;
        }
    }
    (out.0 - obs.pos, out.0, out.1, out.2, tau)
}

/// The unit vector from the observer to the object, light-time corrected (fast path).
#[inline]
pub fn direction(orbit: &Orbit, obs: &ObserverState) -> Vector3<f64> {
    solve_light_time(orbit, obs).0.normalize()
}

/// The full astrometric observation of an object from an observer.
pub fn observe(orbit: &Orbit, obs: &ObserverState) -> Apparent {
    let (d, p, v, sun, tau) = solve_light_time(orbit, obs);
    let delta = d.norm();
    let unit = d / delta;
    let (ra, dec) = lon_lat(&unit);
    let to_sun_from_obj = sun - p;
    let r = to_sun_from_obj.norm();
    let phase = super::frames::separation(&to_sun_from_obj, &(-d));
    let elongation = super::frames::separation(&(obs.sun_pos - obs.pos), &d);
    // Rate: d(unit)/dt = (v_rel − unit (unit · v_rel)) / Δ.
    let v_rel = v - obs.vel;
    let du = (v_rel - unit * unit.dot(&v_rel)) / delta;
    let (sa, ca) = ra.sin_cos();
    let (sd, cd) = dec.sin_cos();
    let east = Vector3::new(-sa, ca, 0.0);
    let north = Vector3::new(-sd * ca, -sd * sa, cd);
    Apparent {
        unit,
        ra,
        dec,
        delta_au: delta,
        r_au: r,
        phase,
        elongation,
        rate_ra_cosdec: du.dot(&east),
        rate_dec: du.dot(&north),
        light_time_days: tau,
    }
}
