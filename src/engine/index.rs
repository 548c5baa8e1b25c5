//! The visit index: visits grouped in time blocks, and inside each block in a tree of nested
//! caps of their field centres (`caps.rs`), with the observer's state precomputed once per
//! visit.
//!
//! Candidate selection for one object in one block: the object's direction at the block's
//! node time t_b is computed once (geocentric, light time from the previous node), from the
//! object's coarse track (`track.rs`: no Kepler solve per block, with a bound on its error).
//! Its direction at any visit time t in the block is within ω_max |t − t_b| of that, where
//! ω_max = (v_object,max + v_observer,max) / Δ_min bounds the angular rate. A visit is a
//! candidate when its centre lies within R_fp + ω_max |t − t_b| + (parallax + track and
//! light-time errors) / Δ_min + ε of the node direction, with R_fp the footprint's bounding
//! radius; a cone that does not reach the block's cap is done with one dot product, and
//! otherwise the tree hands over only the visits of the caps it reaches. The same bound from
//! the last node worked out rules out most later blocks before their own node is computed
//! (`Walk::unreachable`). This is a strict superset of the visits whose footprint contains the
//! object, so the index changes no decision. Candidates come block by block (`Walk`), so that
//! a caller that has its verdict stops without querying the rest of the survey.

use nalgebra::Vector3;
use rayon::prelude::*;

use super::caps::{CapTree, Cone};
use super::motion::{BLOCK_DAYS, OBSERVER_SPEED, speed_bound};
use super::reach::Reach;
use super::track::Track;
use crate::foundation::constants::C_AU_PER_DAY;
use crate::orbit::{Center, Orbit};
use crate::sky::earth::EarthSource;
use crate::sky::observer::ObserverState;
use crate::survey::Survey;
use crate::time::{MjdTdb, MjdUtc};

/// Largest geocentric offset of a site, AU (equatorial radius + 10 km).
const SITE_OFFSET_AU: f64 = 6400.0 / crate::foundation::constants::AU_KM;
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
    caps: CapTree,
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
                    MjdUtc(v.utc_mjd[i]),
                    MjdTdb(v.tdb_mjd[i]),
                )
            })
            .collect();
        let ra_rad: Vec<f64> = v.ra_deg.iter().map(|d| d.to_radians()).collect();
        let dec_rad: Vec<f64> = v.dec_deg.iter().map(|d| d.to_radians()).collect();
        let bounding_radius = survey.footprint.bounding_radius_rad();
        let blocks = make_blocks(&survey, &source);
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

    /// An object's walk through this survey's visits: candidate visits block by block, in
    /// time order, so that a caller that has what it needs stops without the rest.
    pub fn walk<'a>(&'a self, orbit: &'a Orbit, mode: Candidates) -> Walk<'a> {
        let v_obj = speed_bound(&orbit.elements);
        Walk {
            ps: self,
            mode,
            track: Track::new(orbit),
            next: 0,
            tau: f64::NAN,
            v_obj,
            v_max: v_obj + OBSERVER_SPEED,
            last: None,
        }
    }
}

/// One object's candidates in one survey, block by block (`PreparedSurvey::walk`).
#[derive(Debug, Clone)]
pub struct Walk<'a> {
    ps: &'a PreparedSurvey,
    mode: Candidates,
    track: Track<'a>,
    /// The next block to query.
    next: usize,
    /// Light time at the previous node, days (NaN before the first).
    tau: f64,
    v_obj: f64,
    v_max: f64,
    /// The last node worked out, from which later blocks are first ruled out (`Walk::unreachable`).
    last: Option<Node>,
}

/// An object's direction at one block's node, as the index worked it out: where its line of
/// sight can be at any later time follows from the same motion bound as within a block.
#[derive(Debug, Clone, Copy)]
struct Node {
    dir: Vector3<f64>,
    tdb: f64,
    delta: f64,
    position_error: f64,
}

/// The cone that holds every field centre whose footprint can contain the object within `span`
/// days of a node at distance `delta` (AU) known to `position_error` (AU): (slack, ω, r_max),
/// with the slack the footprint's bounding radius plus the position error as an angle and ω the
/// bound on the angular rate; None when the object may come too close for a bound.
#[inline]
fn cone_radii(delta: f64, position_error: f64, span: f64, v_max: f64, bounding_radius: f64) -> Option<(f64, f64, f64)> {
    let delta_min = delta - v_max * span - position_error;
    if delta_min <= 0.05 {
        return None;
    }
    let omega = v_max / delta_min;
    let slack = bounding_radius + position_error / delta_min + EPSILON;
    Some((slack, omega, slack + omega * span))
}

impl Walk<'_> {
    /// The epoch of the walk's first anchor and the object's exact position then (about the
    /// centre of its elements, ICRS axes, AU; `Track::anchor_near` of the first block's node,
    /// NaN without blocks): the one Kepler solve the walk and the reach test share.
    pub fn first_anchor(&mut self) -> (f64, Vector3<f64>) {
        let first_node = self.ps.blocks.first().map_or(f64::NAN, |b| b.node_tdb);
        self.track.anchor_near(first_node)
    }

    /// Replace `out` with the candidate visits of the next block that has any, in visit
    /// (time) order; false when the survey is done.
    pub fn next_block(&mut self, out: &mut Vec<usize>) -> bool {
        out.clear();
        self.next_block_onto(out)
    }

    /// As `next_block`, but append to `out` (what it holds stays in front).
    pub fn next_block_onto(&mut self, out: &mut Vec<usize>) -> bool {
        let start = out.len();
        let blocks = &self.ps.blocks;
        while out.len() == start && self.next < blocks.len() {
            let b = &blocks[self.next];
            self.next += 1;
            match self.mode {
                Candidates::All => out.extend(b.visits.clone()),
                Candidates::Indexed => {
                    self.block_candidates(b, out);
                    out[start..].sort_unstable();
                }
            }
        }
        out.len() > start
    }

    fn block_candidates(&mut self, b: &Block, out: &mut Vec<usize>) {
        if self.unreachable(b) {
            return;
        }
        let obs = &b.node_observer;
        if self.tau.is_nan() {
            self.tau = converged_light_time(&mut self.track, obs);
        }
        let (d, track_error) = node_vector(&mut self.track, obs, self.tau);
        let delta = d.norm();
        // The node uses the previous node's light time: the direction error is at most
        // v_obj |τ_new − τ_used| (to first order), which goes into the slack, as does the
        // track's own error (and the light-time error it makes).
        let tau_new = delta / C_AU_PER_DAY;
        let lt_error = 1.01 * self.v_obj * ((tau_new - self.tau).abs() + track_error / C_AU_PER_DAY);
        self.tau = tau_new;
        let position_error = SITE_OFFSET_AU + lt_error + track_error;
        let dir = d / delta;
        self.last = Some(Node {
            dir,
            tdb: b.node_tdb,
            delta,
            position_error,
        });
        let Some((slack, omega, r_max)) =
            cone_radii(delta, position_error, b.half_span, self.v_max, self.ps.bounding_radius)
        else {
            out.extend(b.visits.clone()); // too close to bound: test everything
            return;
        };
        let cone = Cone {
            dir: &dir,
            slack,
            omega,
            r_max,
        };
        b.caps.select(&cone, out);
    }

    /// Whether block `b` provably holds no candidate, from the last node worked out: every
    /// visit of `b` is within (node gap + half span) days of that node, so the object's line
    /// of sight then lies within the cone `cone_radii` gives for that span, and a block whose
    /// cap that cone surely misses (without a cosine: `CapTree::surely_misses`) has no field
    /// that can contain the object. Most blocks of a survey that sweeps the sky are far from
    /// an object and are passed over this way, with no node position.
    #[inline]
    fn unreachable(&self, b: &Block) -> bool {
        let Some(n) = &self.last else {
            return false;
        };
        let span = (b.node_tdb - n.tdb).abs() + b.half_span;
        cone_radii(n.delta, n.position_error, span, self.v_max, self.ps.bounding_radius)
            .is_some_and(|(_, _, r)| b.caps.surely_misses(&n.dir, r))
    }
}

/// Observer-to-object vector at the node for a given light time, from the track, and the
/// bound on its error, AU.
#[inline]
fn node_vector(track: &mut Track, obs: &ObserverState, tau: f64) -> (Vector3<f64>, f64) {
    let (p, error) = track.position(obs.tdb_mjd - tau);
    let pos = match track.center() {
        Center::Heliocentric => p + obs.sun_pos - obs.sun_vel * tau,
        Center::Barycentric => p,
    };
    (pos - obs.pos, error)
}

/// Light time at the first node, iterated until it changes by < 1e-9 day.
fn converged_light_time(track: &mut Track, obs: &ObserverState) -> f64 {
    let mut tau = 0.0;
    for _ in 0..10 {
        let next = node_vector(track, obs, tau).0.norm() / C_AU_PER_DAY;
        let done = (next - tau).abs() < 1e-9;
        tau = next;
        if done {
            break;
        }
    }
    tau
}

/// Group visits (sorted by time) into blocks of at most BLOCK_DAYS.
fn make_blocks(survey: &Survey, source: &EarthSource) -> Vec<Block> {
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
                node_observer: ObserverState::geocentre(&source.at(node), MjdTdb(node)),
                caps: CapTree::new(range.clone(), node, tdb, &v.center),
                visits: range,
            }
        })
        .collect()
}
