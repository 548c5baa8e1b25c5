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
use crate::foundation::constants::C_AU_PER_DAY;
use crate::orbit::{Center, TwoBody};

pub(crate) const RAD_PER_DAY_TO_ARCSEC_PER_HR: f64 = 206_264.806_247_096_36 / 24.0;

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
fn emitted<T: TwoBody>(orbit: &T, obs: &ObserverState, tau: f64) -> (Vector3<f64>, Vector3<f64>, Vector3<f64>) {
    let (p, v) = orbit.state(obs.tdb_mjd - tau);
    let sun = obs.sun_pos - obs.sun_vel * tau;
    match orbit.center() {
        Center::Heliocentric => (p + sun, v + obs.sun_vel, sun),
        Center::Barycentric => (p, v, sun),
    }
}

/// Light time by Newton's method on f(τ) = |x(t − τ) − o| − c τ, whose derivative is
/// −(u·v + c). The first guess is `tau_guess` when finite (the light time of a nearby epoch)
/// or |x(t) − o|/c from one extra position. After the Kepler solve at the guess, Newton steps
/// carry the position along the velocity while the step is under 0.01 day (the neglected
/// ½ a Δτ² is < 2e-8 AU for perihelia beyond 1 AU and < 2e-11 AU beyond 30 AU) and solve
/// Kepler's equation again otherwise. One or two Kepler solves per position.
/// Returns (Δ vector, object position, object velocity, Sun position, τ).
#[inline]
fn solve_light_time<T: TwoBody>(
    orbit: &T,
    obs: &ObserverState,
    tau_guess: f64,
) -> (Vector3<f64>, Vector3<f64>, Vector3<f64>, Vector3<f64>, f64) {
    let mut tau = if tau_guess.is_finite() {
        tau_guess
    } else {
        (emitted(orbit, obs, 0.0).0 - obs.pos).norm() / C_AU_PER_DAY
    };
    let (mut p, mut v, mut sun) = emitted(orbit, obs, tau);
    for _ in 0..4 {
        let d = p - obs.pos;
        let delta = d.norm();
        let step = (delta - C_AU_PER_DAY * tau) / (C_AU_PER_DAY + d.dot(&v) / delta);
        tau += step;
        if step.abs() > 0.01 {
            (p, v, sun) = emitted(orbit, obs, tau);
            continue;
        }
        p -= v * step;
        sun -= obs.sun_vel * step;
        if step.abs() < 1e-12 {
            break;
        }
    }
    (p - obs.pos, p, v, sun, tau)
}

/// The unit vector from the observer to the object, light-time corrected (fast path).
#[inline]
pub fn direction<T: TwoBody>(orbit: &T, obs: &ObserverState) -> Vector3<f64> {
    direction_from(orbit, obs, f64::NAN).0
}

/// The unit vector and the light time, starting from a guess of the light time (NaN: none).
#[inline]
pub fn direction_from<T: TwoBody>(orbit: &T, obs: &ObserverState, tau_guess: f64) -> (Vector3<f64>, f64) {
    let (d, _, _, _, tau) = solve_light_time(orbit, obs, tau_guess);
    (d.normalize(), tau)
}

/// The full astrometric observation of an object from an observer.
pub fn observe<T: TwoBody>(orbit: &T, obs: &ObserverState) -> Apparent {
    observe_from(orbit, obs, f64::NAN)
}

/// The full observation, starting from a guess of the light time (NaN: none).
pub fn observe_from<T: TwoBody>(orbit: &T, obs: &ObserverState, tau_guess: f64) -> Apparent {
    let (d, p, v, sun, tau) = solve_light_time(orbit, obs, tau_guess);
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
