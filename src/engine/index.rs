//! The visit index: visits grouped in time blocks, and inside each block in declination
//! stripes sorted by right ascension (`stripes.rs`), with the observer's state precomputed
//! once per visit.
//!
//! Candidate selection for one object in one block: the object's direction at the block's
//! node time t_b is computed once (geocentric, light time from the previous node). Its
//! direction at any visit time t in the block is within ω_max |t − t_b| of that, where
//! ω_max = (v_object,max + v_observer,max) / Δ_min bounds the angular rate. A visit is a
//! candidate when its centre lies within R_fp + ω_max |t − t_b| + parallax + ε of the
//! node direction, with R_fp the footprint's bounding radius; the stripes hand over only
//! the visits in the box around that cone. This is a strict superset
//! of the visits whose footprint contains the object, so the index changes no decision.

use nalgebra::Vector3;
use rayon::prelude::*;

use super::reach::Reach;
use super::stripes::{Cone, Stripes};
use crate::orbit::constants::C_AU_PER_DAY;
use crate::orbit::{Center, Elements, Orbit};
use crate::sky::earth::EarthSource;
use crate::sky::observer::ObserverState;
use crate::survey::Survey;

/// Block length in days: short enough that a 30 AU object moves < 0.15° from its node,
/// long enough that node positions cost little next to the in-field work.
pub const BLOCK_DAYS: f64 = 8.0;
/// Largest geocentric offset of a site, AU (equatorial radius + 10 km).
const SITE_OFFSET_AU: f64 = 6400.0 / crate::orbit::constants::AU_KM;
/// Observer speed bound, AU/day: Earth at perihelion (0.0175) + site rotation + Sun (≤ 2e-5).
pub(crate) const OBSERVER_SPEED: f64 = 0.0175 + 2.8e-4 + 2.0e-5;
/// Angular slack for rounding and the node's light-time approximation, radians (0.2″).
const EPSILON: f64 = 1e-6;

/// How the engine picks the visits to test exactly.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Candidates {
    /// Through the time-block and declination index (the default).
    #[default]
    Indexed,
    /// Every visit (brute force; for verification).
    All,
}

/// One time block: its node time, the geocentre then, and its visits (a contiguous range
/// of the time-sorted visits) by declination stripe and right ascension.
#[derive(Debug, Clone)]
pub struct Block {
    pub node_tdb: f64,
    pub half_span: f64,
    pub node_observer: ObserverState,
    pub visits: std::ops::Range<usize>,
    stripes: Stripes,
}

/// A survey ready for the engine: per-visit observer states and the index.
#[derive(Debug, Clone)]
pub struct PreparedSurvey {
    pub survey: Survey,
    pub observers: Vec<ObserverState>,
    pub ra_rad: Vec<f64>,
    pub dec_rad: Vec<f64>,
    pub blocks: Vec<Block>,
    pub bounding_radius: f64,
    pub reach: Reach,
}

impl PreparedSurvey {
    pub fn new(survey: Survey) -> Self {
        let v = &survey.visits;
        let source = EarthSource::for_epochs(&v.tdb_mjd);
        let observers: Vec<ObserverState> = (0..v.len())
            .into_par_iter()
            .map(|i| {
                ObserverState::new(
                    &source.at(v.tdb_mjd[i]),
                    survey.site.as_ref(),
                    v.utc_mjd[i],
                    v.tdb_mjd[i],
                )
            })
            .collect();
        let ra_rad: Vec<f64> = v.ra_deg.iter().map(|d| d.to_radians()).collect();
        let dec_rad: Vec<f64> = v.dec_deg.iter().map(|d| d.to_radians()).collect();
        let bounding_radius = survey.footprint.bounding_radius_rad();
        let blocks = make_blocks(&survey, &ra_rad, &dec_rad, &source, stripe_height(bounding_radius));
        let reach = Reach::new(&survey);
        PreparedSurvey {
            reach,
            survey,
            observers,
            ra_rad,
            dec_rad,
            blocks,
            bounding_radius,
        }
    }

    pub fn len(&self) -> usize {
        self.observers.len()
    }

    pub fn is_empty(&self) -> bool {
        self.observers.is_empty()
    }

    /// Candidate visits for one object, in visit (time) order, appended to `out`.
    pub fn candidates(&self, orbit: &Orbit, mode: Candidates, out: &mut Vec<usize>) {
        out.clear();
        match mode {
            Candidates::All => out.extend(0..self.len()),
            Candidates::Indexed => self.indexed_candidates(orbit, out),
        }
    }

    fn indexed_candidates(&self, orbit: &Orbit, out: &mut Vec<usize>) {
        let v_obj = speed_bound(&orbit.elements);
        let v_max = v_obj + OBSERVER_SPEED;
        let mut tau = f64::NAN;
        for b in &self.blocks {
            let obs = &b.node_observer;
            if tau.is_nan() {
                tau = converged_light_time(orbit, obs);
            }
            let d = node_vector(orbit, obs, tau);
            let delta = d.norm();
            // The node uses the previous node's light time: the direction error is at most
            // v_obj |τ_new − τ_used| (to first order), which goes into the slack.
            let tau_new = delta / C_AU_PER_DAY;
            let lt_error = 1.01 * v_obj * (tau_new - tau).abs();
            tau = tau_new;
            let delta_min = delta - v_max * b.half_span - SITE_OFFSET_AU - lt_error;
            let start = out.len();
            if delta_min <= 0.05 {
                out.extend(b.visits.clone()); // too close to bound: test everything
                continue;
            }
            let omega = v_max / delta_min;
            let slack = self.bounding_radius + (SITE_OFFSET_AU + lt_error) / delta_min + EPSILON;
            let cone = Cone {
                dir: &(d / delta),
                slack,
                omega,
                r_max: slack + omega * b.half_span,
            };
            b.stripes.select(&cone, out);
            out[start..].sort_unstable();
        }
    }
}

/// The largest speed an object can have about the barycentre, AU/day: its speed at
/// perihelion, √(GM (1 + e) / q) (vis-viva, the largest on the orbit), plus the Sun's
/// barycentric speed for heliocentric elements.
pub(crate) fn speed_bound(el: &Elements) -> f64 {
    let v_q = (el.center.gm() * (1.0 + el.e) / el.q_au()).sqrt();
    match el.center {
        Center::Heliocentric => v_q + 2.0e-5,
        Center::Barycentric => v_q,
    }
}

/// Stripes about as tall as the footprint, so that a query meets two or three of them.
fn stripe_height(bounding_radius: f64) -> f64 {
    bounding_radius.clamp(0.5f64.to_radians(), 10f64.to_radians())
}

/// Observer-to-object vector at the node for a given light time.
#[inline]
fn node_vector(orbit: &Orbit, obs: &ObserverState, tau: f64) -> Vector3<f64> {
    let (p, _) = orbit.state(obs.tdb_mjd - tau);
    let pos = match orbit.center() {
        Center::Heliocentric => p + obs.sun_pos - obs.sun_vel * tau,
        Center::Barycentric => p,
    };
    pos - obs.pos
}

/// Light time at the first node, iterated until it changes by < 1e-9 day.
fn converged_light_time(orbit: &Orbit, obs: &ObserverState) -> f64 {
    let mut tau = 0.0;
    for _ in 0..10 {
        let next = node_vector(orbit, obs, tau).norm() / C_AU_PER_DAY;
        let done = (next - tau).abs() < 1e-9;
        tau = next;
        if done {
            break;
        }
    }
    tau
}

/// Group visits (sorted by time) into blocks of at most BLOCK_DAYS.
fn make_blocks(survey: &Survey, ra: &[f64], dec: &[f64], source: &EarthSource, height: f64) -> Vec<Block> {
    let v = &survey.visits;
    let tdb = &v.tdb_mjd;
    let mut bounds = Vec::new();
    let mut start = 0;
    while start < tdb.len() {
        let mut end = start;
        while end < tdb.len() && tdb[end] - tdb[start] < BLOCK_DAYS {
            end += 1;
        }
        bounds.push(start..end);
        start = end;
    }
    bounds
        .into_par_iter()
        .map(|range| {
            let (t0, t1) = (tdb[range.start], tdb[range.end - 1]);
            let node = 0.5 * (t0 + t1);
            Block {
                node_tdb: node,
                half_span: 0.5 * (t1 - t0),
                node_observer: ObserverState::new(&source.at(node), None, node, node),
                stripes: Stripes::new(height, range.clone(), node, tdb, ra, dec, &v.center),
                visits: range,
            }
        })
        .collect()
}
