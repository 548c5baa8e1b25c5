//! One object's orbit fit: the start, the least-squares fit with the prior its arc needs, and
//! the elements with their covariance.

use nalgebra::{Matrix6, Vector6};

use super::astrometry::Observation;
use super::chart::{Frame, GAMMA, GAMMA_DOT, Params};
use super::least_squares::{Solution, levenberg_marquardt};
use super::prior::{Prior, velocity_sigma};
use super::quality::Quality;
use super::start::start;
use crate::orbit::kepler::wrap_pi;
use crate::orbit::{Center, Elements};
use crate::sky::apparent::direction_from;

/// A fitted orbit.
#[derive(Debug, Clone, Copy)]
pub struct OrbitFit {
    /// Osculating elements at the first fitted detection's TDB epoch (none when `Failed`).
    pub elements: Option<Elements>,
    /// Covariance of (a_au, e, inc, node, argperi, mean_anomaly), angles in radians.
    pub covariance: Option<Matrix6<f64>>,
    /// χ² of the data alone (prior terms excluded).
    pub chi2: f64,
    pub n_obs: usize,
    pub arc_days: f64,
    pub quality: Quality,
    /// The prior the fit used (`None` for `failed`).
    pub prior: Prior,
    pub iterations: usize,
}

impl OrbitFit {
    /// 1σ of element k (a_au, e, inc, node, argperi, mean_anomaly; angles in radians).
    pub fn sigma(&self, k: usize) -> Option<f64> {
        self.covariance.map(|c| c[(k, k)].max(0.0).sqrt())
    }
}

/// Fit an orbit about `center` to observations in time order.
pub fn fit_orbit(obs: &[Observation], center: Center) -> OrbitFit {
    let n_obs = obs.len();
    let arc_days = match (obs.first(), obs.last()) {
        (Some(a), Some(b)) => b.tdb_mjd() - a.tdb_mjd(),
        _ => 0.0,
    };
    let failed = OrbitFit {
        elements: None,
        covariance: None,
        chi2: f64::NAN,
        n_obs,
        arc_days,
        quality: Quality::Failed,
        prior: Prior::None,
        iterations: 0,
    };
    if n_obs < 3 {
        return failed;
    }
    let frame = Frame::new(&obs[0], center);
    let first = start(&frame, obs);
    let single_night = obs.iter().all(|o| o.night == obs[0].night);
    let solve = |prior: Prior, from: &Params| {
        let s = levenberg_marquardt(|p, out| residuals(&frame, obs, prior, p, out), *from, first.sigma);
        s.map(|s| (prior, s))
    };
    let bound = |s: &Solution| frame.elements(&s.params).is_some();
    let (quality, solution) = if single_night {
        (Quality::SingleNight, solve(Prior::Velocity, &first.params))
    } else {
        match solve(Prior::None, &first.params) {
            Some((p, s)) if !needs_prior(&s) && bound(&s) => (Quality::unconstrained(arc_days), Some((p, s))),
            // From the fit without prior where there is one: it is near the valley's floor.
            free => {
                let from = free.map_or(first.params, |(_, s)| s.params);
                (Quality::ShortArc, short_arc(&from, &solve, &bound))
            }
        }
    };
    let Some((prior, s)) = solution else {
        return failed;
    };
    // The minimum is an unbound orbit even with the velocity prior: no elements to give.
    let Some(elements) = frame.elements(&s.params) else {
        return failed;
    };
    let prior_chi2: f64 = prior_chi2(&s, prior);
    if stalled(s.chi2 - prior_chi2, n_obs) {
        return failed;
    }
    OrbitFit {
        elements: Some(elements),
        covariance: element_covariance(&frame, &s, &elements),
        chi2: s.chi2 - prior_chi2,
        n_obs,
        arc_days,
        quality,
        prior,
        iterations: s.iterations,
    }
}

/// The fit of an arc whose data leave the radial rate free or whose best orbit is unbound: the
/// γ̇ prior, and the full velocity prior where the γ̇ prior still leaves the orbit unbound (the
/// tangential rates then need the prior's pull towards a bound speed too: a week's arc, or
/// an eccentric object near perihelion seen for a month).
fn short_arc<S, B>(from: &Params, solve: &S, bound: &B) -> Option<(Prior, Solution)>
where
    S: Fn(Prior, &Params) -> Option<(Prior, Solution)>,
    B: Fn(&Solution) -> bool,
{
    match solve(Prior::RadialRate, from) {
        Some((p, s)) if bound(&s) => Some((p, s)),
        radial => solve(Prior::Velocity, &radial.map_or(*from, |(_, s)| s.params)),
    }
}

/// The χ² of the prior's pseudo-observations at a solution.
fn prior_chi2(s: &Solution, prior: Prior) -> f64 {
    let w = velocity_sigma(s.params[GAMMA]);
    prior.indices().iter().map(|&i| (s.params[i] / w).powi(2)).sum()
}

/// Chance below which a fit's χ² says it stopped away from its minimum: 10⁻⁹.
const STALL_CHANCE: f64 = 1e-9;

/// Whether the data's χ² is too large for a fit that reached its minimum: beyond the 1 − 10⁻⁹
/// quantile of χ²(2n) (2n, not 2n − 6, so that a fit with a prior is never refused for its
/// few extra degrees of freedom). The model is the one that made the data, so a fit at its
/// minimum has χ² ≈ 2n − 6; a stall (Levenberg–Marquardt stuck against the bound-orbit wall
/// of the parameters, near a parabolic orbit, where no damped step lowers χ²) leaves χ² of
/// thousands, and such a fit gives no orbit (validation.md).
fn stalled(chi2: f64, n_obs: usize) -> bool {
    use statrs::distribution::{ChiSquared, ContinuousCDF};
    let Ok(d) = ChiSquared::new(2.0 * n_obs as f64) else {
        return false;
    };
    !(d.sf(chi2) >= STALL_CHANCE)
}

/// Whether the data alone leave γ̇ less constrained than the bound-orbit prior would.
fn needs_prior(s: &Solution) -> bool {
    s.covariance[(GAMMA_DOT, GAMMA_DOT)].sqrt() > velocity_sigma(s.params[GAMMA])
}

/// Whitened residuals of every observation (east, north) and the prior's pseudo-observations;
/// false when the parameters give no orbit (γ ≤ 0) or no finite position. Unbound trial orbits
/// are propagated too (universal variables), so Levenberg–Marquardt can cross e = 1.
fn residuals(frame: &Frame, obs: &[Observation], prior: Prior, p: &Params, out: &mut Vec<f64>) -> bool {
    out.clear();
    let Some(orbit) = frame.conic(p) else {
        return false;
    };
    let mut tau = f64::NAN;
    for o in obs {
        let (u, t) = direction_from(&orbit, &o.observer, tau);
        tau = t;
        let (x, y) = o.residual(&u);
        if !(x.is_finite() && y.is_finite()) {
            return false;
        }
        out.push(x);
        out.push(y);
    }
    let w = velocity_sigma(p[GAMMA]);
    out.extend(prior.indices().iter().map(|&i| p[i] / w));
    true
}

/// The elements' covariance G C Gᵀ, G = ∂elements/∂parameters by forward differences.
fn element_covariance(frame: &Frame, s: &Solution, at: &Elements) -> Option<Matrix6<f64>> {
    let base = element_vector(at);
    let mut g = Matrix6::zeros();
    for j in 0..6 {
        let mut h = s.steps[j];
        let mut q = s.params;
        q[j] += h;
        let el = frame.elements(&q).or_else(|| {
            h = -h;
            q[j] = s.params[j] + h;
            frame.elements(&q)
        })?;
        let d = element_vector(&el) - base;
        let d = Vector6::new(d[0], d[1], d[2], wrap_pi(d[3]), wrap_pi(d[4]), wrap_pi(d[5]));
        g.set_column(j, &(d / h));
    }
    Some(g * s.covariance * g.transpose())
}

fn element_vector(el: &Elements) -> Vector6<f64> {
    Vector6::from(el.to_array())
}
