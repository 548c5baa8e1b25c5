//! The visit index: visits grouped in time blocks, and inside each block sorted by
//! declination, with the observer's state precomputed once per visit.
//!
//! Candidate selection for one object in one block: the object's direction at the block's
//! node time t_b is computed once (geocentric, light time from the previous node). Its
//! direction at any visit time t in the block is within ω_max |t − t_b| of that, where
//! ω_max = (v_object,max + v_observer,max) / Δ_min bounds the angular rate. A visit is a
//! candidate when its centre lies within R_fp + ω_max |t − t_b| + parallax + ε of the
//! node direction, with R_fp the footprint's bounding radius. This is a strict superset
//! of the visits whose footprint contains the object, so the index changes no decision.

use nalgebra::Vector3;
use rayon::prelude::*;

use crate::orbit::constants::C_AU_PER_DAY;
use crate::orbit::{Center, Orbit};
use crate::sky::earth::EarthSource;
use crate::sky::observer::ObserverState;
use crate::survey::Survey;

/// Block length in days: short enough that a 30 AU object moves < 0.15° from its node,
/// long enough that node positions cost little next to the in-field work.
pub const BLOCK_DAYS: f64 = 8.0;
/// Largest geocentric offset of a site, AU (equatorial radius + 10 km).
const SITE_OFFSET_AU: f64 = 6400.0 / crate::orbit::constants::AU_KM;
/// Observer speed bound, AU/day: Earth at perihelion (0.0175) + site rotation + Sun (≤ 2e-5).
const OBSERVER_SPEED: f64 = 0.0175 + 2.8e-4 + 2.0e-5;
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

/// One time block: its node time, the geocentre then, and its visits by declination.
#[derive(Debug, Clone)]
pub struct Block {
    pub node_tdb: f64,
    pub half_span: f64,
    pub node_observer: ObserverState,
    /// Visit indices sorted by declination, with the declinations (radians) beside them.
    pub by_dec: Vec<usize>,
    pub dec: Vec<f64>,
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
        let ra_rad = v.ra_deg.iter().map(|d| d.to_radians()).collect();
        let dec_rad: Vec<f64> = v.dec_deg.iter().map(|d| d.to_radians()).collect();
        let blocks = make_blocks(&v.tdb_mjd, &dec_rad, &source);
        let bounding_radius = survey.footprint.bounding_radius_rad();
        PreparedSurvey {
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
        let el = &orbit.elements;
        let q = el.q_au();
        let mut v_obj = (el.center.gm() * (1.0 + el.e) / q).sqrt();
        if el.center == Center::Heliocentric {
            v_obj += 2.0e-5; // the Sun's barycentric speed
        }
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
                out.extend(b.by_dec.iter().copied()); // too close to bound: test everything
            } else {
                let omega = v_max / delta_min;
                let slack = self.bounding_radius + (SITE_OFFSET_AU + lt_error) / delta_min + EPSILON;
                self.select_in_block(b, &(d / delta), omega, slack, out);
            }
            out[start..].sort_unstable();
        }
    }

    fn select_in_block(&self, b: &Block, dir: &Vector3<f64>, omega: f64, slack: f64, out: &mut Vec<usize>) {
        let r_max = slack + omega * b.half_span;
        if r_max >= std::f64::consts::PI {
            out.extend(b.by_dec.iter().copied());
            return;
        }
        let dec0 = dir.z.clamp(-1.0, 1.0).asin();
        let lo = b.dec.partition_point(|&d| d < dec0 - r_max);
        let hi = b.dec.partition_point(|&d| d <= dec0 + r_max);
        for &i in &b.by_dec[lo..hi] {
            let r = slack + omega * (self.observers[i].tdb_mjd - b.node_tdb).abs();
            if r >= std::f64::consts::PI || self.survey.visits.center[i].dot(dir) >= r.cos() {
                out.push(i);
            }
        }
    }
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
fn make_blocks(tdb: &[f64], dec: &[f64], source: &EarthSource) -> Vec<Block> {
    let mut blocks = Vec::new();
    let mut start = 0;
    while start < tdb.len() {
        let mut end = start;
        while end < tdb.len() && tdb[end] - tdb[start] < BLOCK_DAYS {
            end += 1;
        }
        let (t0, t1) = (tdb[start], tdb[end - 1]);
        let node = 0.5 * (t0 + t1);
        let mut by_dec: Vec<usize> = (start..end).collect();
        by_dec.sort_by(|&a, &b| dec[a].total_cmp(&dec[b]));
        let decs = by_dec.iter().map(|&i| dec[i]).collect();
        blocks.push(Block {
            node_tdb: node,
            half_span: 0.5 * (t1 - t0),
            node_observer: ObserverState::new(&source.at(node), None, node, node),
            by_dec,
            dec: decs,
        });
        start = end;
    }
    blocks
}
