//! The start of a fit: the linearized projection of AJ 120, 3323 (2000) solved by weighted
//! linear least squares, or an assumed-distance start when that fails.
//!
//! To first order, θx,k ≈ α + α̇ t_k − γ x_E,k and θy,k ≈ β + β̇ t_k − γ y_E,k, with t_k = t − t₀
//! and (x_E, y_E) the observer's displacement from the frame's origin: linear in
//! (α, β, γ, α̇, β̇); gravity and γ̇ are neglected (γ̇ = 0). The bound-orbit prior on α̇ and
//! β̇ (`prior`) makes a single night solvable, where α̇ and γ are otherwise degenerate; since it
//! depends on γ the solve is repeated three times.

use nalgebra::{Matrix5, Vector5};

use super::astrometry::Observation;
use super::chart::{Frame, GAMMA, Params};
use super::prior::velocity_sigma;

/// Distance of the assumed-distance start, AU (common practice, no source).
pub const ASSUMED_DISTANCE_AU: f64 = 40.0;

/// A start: parameters and rough 1σ uncertainties of each (for the first finite-difference steps).
#[derive(Debug, Clone, Copy)]
pub struct Start {
    pub params: Params,
    pub sigma: Params,
}

/// The linearized fit, or the assumed-distance start when it gives no distant object.
pub fn start(frame: &Frame, obs: &[Observation]) -> Start {
    linear_start(frame, obs).unwrap_or_else(|| assumed_distance_start(obs))
}

fn linear_start(frame: &Frame, obs: &[Observation]) -> Option<Start> {
    let mut gamma = 1.0 / ASSUMED_DISTANCE_AU;
    let mut solution = None;
    for _ in 0..3 {
        let (p, cov) = solve_linear(frame, obs, velocity_sigma(gamma))?;
        gamma = p[2];
        if !(gamma > 0.0 && gamma <= 1.0) {
            return None;
        }
        solution = Some((p, cov));
    }
    let (p, cov) = solution?;
    let s = velocity_sigma(p[2]);
    let params = Params::new(p[0], p[1], p[2], p[3], p[4], 0.0);
    let sd = |i: usize| cov[(i, i)].max(0.0).sqrt();
    Some(Start {
        params: bound_velocity(frame, params),
        sigma: Params::new(sd(0), sd(1), sd(2), sd(3), sd(4), s),
    })
}

/// Weighted normal equations of (α, β, γ, α̇, β̇) with the velocity prior of width `s`.
fn solve_linear(frame: &Frame, obs: &[Observation], s: f64) -> Option<(Vector5<f64>, Matrix5<f64>)> {
    let mut a = Matrix5::<f64>::zeros();
    let mut b = Vector5::<f64>::zeros();
    let mut add = |row: Vector5<f64>, value: f64, w: f64| {
        a += row * row.transpose() * w;
        b += row * (value * w);
    };
    for o in obs {
        let (tx, ty) = frame.project(&o.unit);
        let e = frame.components(&(o.observer.pos - frame.origin));
        let t = o.tdb_mjd() - frame.t0_tdb;
        let w = 1.0 / (o.sigma_rad * o.sigma_rad);
        add(Vector5::new(1.0, 0.0, -e.x, t, 0.0), tx, w);
        add(Vector5::new(0.0, 1.0, -e.y, 0.0, t), ty, w);
    }
    let wp = 1.0 / (s * s);
    add(Vector5::new(0.0, 0.0, 0.0, 1.0, 0.0), 0.0, wp);
    add(Vector5::new(0.0, 0.0, 0.0, 0.0, 1.0), 0.0, wp);
    let cov = a.try_inverse()?;
    Some((cov * b, cov))
}

/// The measured direction at the assumed distance, at rest: a start that is always bound.
fn assumed_distance_start(obs: &[Observation]) -> Start {
    let gamma = 1.0 / ASSUMED_DISTANCE_AU;
    let s = velocity_sigma(gamma);
    let sigma = obs.first().map_or(1e-6, |o| o.sigma_rad);
    Start {
        params: Params::new(0.0, 0.0, gamma, 0.0, 0.0, 0.0),
        sigma: Params::new(sigma, sigma, 0.3 * gamma, s, s, s),
    }
}

/// Shrink the tangential velocity to the circular speed if the start is not bound.
fn bound_velocity(frame: &Frame, mut p: Params) -> Params {
    if frame.elements(&p).is_none() && p[GAMMA] > 0.0 {
        let circular = velocity_sigma(p[GAMMA]) * 3f64.sqrt();
        let rate = p[3].hypot(p[4]);
        if rate > circular {
            p[3] *= circular / rate;
            p[4] *= circular / rate;
        }
    }
    p
}
