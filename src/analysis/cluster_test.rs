//! The bias-aware clustering test of a catalogue's orbital angles.
//!
//! Statistics: the mean resultant length R/n (Rayleigh) and Kuiper's V of ϖ, Ω and ω; the
//! lengths of the mean orbital pole and of the mean perihelion direction (unit vectors).
//! Null hypothesis: the angles are isotropic and the catalogue is what these surveys would
//! find. Its p-values come from synthetic catalogues in which each object keeps a, e, i, H
//! and draws (ϖ, Ω) from its own bias map (AJ 157, 62, 2019, for the combined clustering
//! of poles and perihelia; the maps as in AJ 154, 65, 2017): p = (1 + #{T_syn ≥ T_obs}) /
//! (1 + N) (Davison & Hinkley 1997, *Bootstrap Methods*, eq. 4.11; from memory), with Monte
//! Carlo error √(p(1 − p)/N). Beside it the naive p-value, which ignores the bias: Rayleigh
//! (Zar's approximation) and Kuiper analytically, the 3-D statistics by Monte Carlo with
//! uniform angles.
//!
//! Streams: object `id` in synthetic catalogue t draws from
//! `object_stream(seed ^ splitmix64(t), id, Analysis)`: first its (ϖ, Ω) from the bias map
//! (three uniforms), then its uniform angles for the naive null (two uniforms).

use std::f64::consts::TAU;

use rand::RngExt;
use rayon::prelude::*;

use super::bias_map::{BiasMap, MapAxes, MapSampler};
use super::circular::{self, MeanVector};
use crate::error::{Error, Result};
use crate::io::objects::ObjectTable;
use crate::rng::{Purpose, object_stream, splitmix64};

/// The names of the statistics, in the order of `Stats::values`.
pub const STAT_NAMES: [&str; 9] = [
    "rayleigh_varpi",
    "rayleigh_node",
    "rayleigh_argperi",
    "kuiper_varpi",
    "kuiper_node",
    "kuiper_argperi",
    "mean_pole",
    "mean_perihelion",
    "pole_and_perihelion",
];

/// Clustering statistics of one catalogue's angles.
#[derive(Debug, Clone, PartialEq)]
pub struct Stats {
    pub varpi: (f64, f64),
    pub node: (f64, f64),
    pub argperi: (f64, f64),
    pub kuiper: [f64; 3],
    pub pole: MeanVector,
    pub perihelion: MeanVector,
}

impl Stats {
    /// From inclinations, nodes and arguments of perihelion (radians).
    pub fn of(inc: &[f64], node: &[f64], argperi: &[f64]) -> Self {
        let varpi: Vec<f64> = node.iter().zip(argperi).map(|(n, w)| (n + w).rem_euclid(TAU)).collect();
        let poles: Vec<_> = inc.iter().zip(node).map(|(i, n)| circular::pole(*i, *n)).collect();
        let peris: Vec<_> = (0..inc.len())
            .map(|j| circular::perihelion(inc[j], node[j], argperi[j]))
            .collect();
        Stats {
            varpi: circular::mean_direction(&varpi),
            node: circular::mean_direction(node),
            argperi: circular::mean_direction(argperi),
            kuiper: [
                circular::kuiper_v(&varpi),
                circular::kuiper_v(node),
                circular::kuiper_v(argperi),
            ],
            pole: circular::mean_vector(&poles),
            perihelion: circular::mean_vector(&peris),
        }
    }

    /// The statistics in `STAT_NAMES` order; larger means more clustered. The joint one
    /// carries no single value (NaN): it is the event "pole and perihelion both at least as
    /// concentrated as observed".
    pub fn values(&self) -> [f64; 9] {
        [
            self.varpi.1,
            self.node.1,
            self.argperi.1,
            self.kuiper[0],
            self.kuiper[1],
            self.kuiper[2],
            self.pole.length,
            self.perihelion.length,
            f64::NAN,
        ]
    }

    /// Which statistics of a synthetic catalogue reach the observed ones.
    fn at_least(&self, obs: &Stats) -> [bool; 9] {
        let (s, o) = (self.values(), obs.values());
        let mut out = [false; 9];
        for k in 0..8 {
            out[k] = s[k] >= o[k];
        }
        out[8] = out[6] && out[7];
        out
    }
}

/// One statistic's result.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct StatResult {
    pub statistic: String,
    pub observed: f64,
    /// Mean direction: the angle for the circular statistics, the ecliptic longitude for the
    /// 3-D ones (degrees); NaN where there is none.
    pub direction_lon_deg: f64,
    pub direction_lat_deg: f64,
    pub p_bias_aware: f64,
    pub p_bias_aware_error: f64,
    pub p_naive: f64,
    pub p_naive_method: String,
    pub p_naive_monte_carlo: f64,
}

/// The whole test.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct ClusterTest {
    pub n_objects: usize,
    pub trials: u64,
    /// Objects whose bias map had no discovery at all; they are drawn uniformly.
    pub unconstrained_ids: Vec<i64>,
    pub results: Vec<StatResult>,
}

/// Angles of a catalogue, radians.
pub struct Angles {
    pub ids: Vec<i64>,
    pub inc: Vec<f64>,
    pub node: Vec<f64>,
    pub argperi: Vec<f64>,
}

impl Angles {
    pub fn of(t: &ObjectTable) -> Self {
        Angles {
            ids: t.ids.clone(),
            inc: t.elements.iter().map(|e| e.inc).collect(),
            node: t.elements.iter().map(|e| e.node).collect(),
            argperi: t.elements.iter().map(|e| e.argperi).collect(),
        }
    }
}

/// Run the test on a catalogue's angles with one bias map per object (same order).
pub fn cluster_test(cat: &Angles, maps: &[BiasMap], trials: u64, seed: u64) -> Result<ClusterTest> {
    let n = cat.ids.len();
    if n < 2 || maps.len() != n {
        return Err(Error::input(format!(
            "the clustering test needs at least two objects and one bias map per object ({n} objects, {} maps)",
            maps.len()
        )));
    }
    if trials == 0 {
        return Err(Error::input("--trials: expected at least 1"));
    }
    let obs = Stats::of(&cat.inc, &cat.node, &cat.argperi);
    let samplers: Vec<Option<MapSampler>> = maps.iter().map(BiasMap::sampler).collect();
    let axes: Vec<MapAxes> = maps.iter().map(|m| m.grid.axes).collect();
    let (bias, naive) = (0..trials)
        .into_par_iter()
        .map(|t| one_trial(cat, &samplers, &axes, &obs, t, seed))
        .reduce(|| ([0u64; 9], [0u64; 9]), |a, b| (add(a.0, b.0), add(a.1, b.1)));
    let unconstrained_ids = (0..n).filter(|j| samplers[*j].is_none()).map(|j| cat.ids[j]).collect();
    let results = summarize(&obs, n, trials, &bias, &naive);
    Ok(ClusterTest {
        n_objects: n,
        trials,
        unconstrained_ids,
        results,
    })
}

fn add(a: [u64; 9], b: [u64; 9]) -> [u64; 9] {
    std::array::from_fn(|k| a[k] + b[k])
}

/// One synthetic catalogue under each null: which statistics reach the observed ones.
fn one_trial(
    cat: &Angles,
    samplers: &[Option<MapSampler>],
    axes: &[MapAxes],
    obs: &Stats,
    t: u64,
    seed: u64,
) -> ([u64; 9], [u64; 9]) {
    let n = cat.ids.len();
    let (mut bn, mut bw, mut un, mut uw) = (vec![0.0; n], vec![0.0; n], vec![0.0; n], vec![0.0; n]);
    let trial_seed = seed ^ splitmix64(t);
    for j in 0..n {
        let mut rng = object_stream(trial_seed, cat.ids[j], Purpose::Analysis);
        let (x, node) = match &samplers[j] {
            Some(s) => s.sample(&mut rng),
            None => (rng.random::<f64>() * TAU, rng.random::<f64>() * TAU),
        };
        bn[j] = node;
        bw[j] = axes[j].argperi(x, node);
        un[j] = rng.random::<f64>() * TAU;
        uw[j] = rng.random::<f64>() * TAU;
    }
    let b = Stats::of(&cat.inc, &bn, &bw).at_least(obs);
    let u = Stats::of(&cat.inc, &un, &uw).at_least(obs);
    (b.map(u64::from), u.map(u64::from))
}

fn summarize(obs: &Stats, n: usize, trials: u64, bias: &[u64; 9], naive: &[u64; 9]) -> Vec<StatResult> {
    let mc = |c: u64| (1 + c) as f64 / (1 + trials) as f64;
    let values = obs.values();
    let dirs = [
        (obs.varpi.0, f64::NAN),
        (obs.node.0, f64::NAN),
        (obs.argperi.0, f64::NAN),
        (obs.varpi.0, f64::NAN),
        (obs.node.0, f64::NAN),
        (obs.argperi.0, f64::NAN),
        (obs.pole.lon, obs.pole.lat),
        (obs.perihelion.lon, obs.perihelion.lat),
        (f64::NAN, f64::NAN),
    ];
    (0..9)
        .map(|k| {
            let p = mc(bias[k]);
            let (p_naive, method) = match k {
                0..=2 => (circular::rayleigh_p(n, values[k] * n as f64), "rayleigh (Zar)"),
                3..=5 => (circular::kuiper_p(values[k], n), "kuiper"),
                _ => (mc(naive[k]), "monte carlo, uniform angles"),
            };
            StatResult {
                statistic: STAT_NAMES[k].into(),
                observed: values[k],
                direction_lon_deg: dirs[k].0.to_degrees(),
                direction_lat_deg: dirs[k].1.to_degrees(),
                p_bias_aware: p,
                p_bias_aware_error: (p * (1.0 - p) / trials as f64).sqrt(),
                p_naive,
                p_naive_method: method.into(),
                p_naive_monte_carlo: mc(naive[k]),
            }
        })
        .collect()
}
