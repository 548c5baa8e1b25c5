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
//! The null samples are kept: every synthetic catalogue's statistics under both nulls (for the
//! histogram of the null distribution), and per angular bin of ϖ, Ω and ω the distribution of
//! the bias-aware catalogues' counts, summarized by its 5th, 50th and 95th percentiles (the
//! band of the rose diagrams).
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

/// The statistics that have one value per catalogue (all but the joint one).
pub const N_SAMPLED: usize = 8;

/// Angular bins of the rose counts unless told otherwise: 20° wide.
pub const DEFAULT_ROSE_BINS: usize = 18;

/// The angles of the rose counts, in this order (names with their units, as in tables).
pub const ROSE_QUANTITIES: [&str; 3] = ["varpi_deg", "node_deg", "argperi_deg"];

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

/// The statistics of one synthetic catalogue, `STAT_NAMES[..N_SAMPLED]` order.
#[derive(Debug, Clone, PartialEq)]
pub struct NullSample {
    pub trial: u64,
    /// Angles drawn from the objects' bias maps.
    pub bias_aware: [f64; N_SAMPLED],
    /// Uniform angles (no survey bias).
    pub naive: [f64; N_SAMPLED],
}

/// One angular bin of a rose: the catalogue's count and the percentiles of the counts of the
/// bias-aware synthetic catalogues (the smallest count whose cumulative fraction of
/// catalogues reaches 5%, 50%, 95%).
#[derive(Debug, Clone, PartialEq)]
pub struct RoseCount {
    /// One of `ROSE_QUANTITIES`.
    pub quantity: &'static str,
    pub lo_deg: f64,
    pub hi_deg: f64,
    pub observed: u64,
    pub null_lo: u64,
    pub null_median: u64,
    pub null_hi: u64,
}

/// The whole test.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct ClusterTest {
    pub n_objects: usize,
    pub trials: u64,
    /// Objects whose bias map had no discovery at all; they are drawn uniformly.
    pub unconstrained_ids: Vec<i64>,
    pub results: Vec<StatResult>,
    /// Every synthetic catalogue's statistics, in trial order (tables, not the summary).
    #[serde(skip)]
    pub null_samples: Vec<NullSample>,
    /// Rose counts of ϖ, Ω and ω with the bias-aware band (tables, not the summary).
    #[serde(skip)]
    pub rose: Vec<RoseCount>,
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

/// Run the test on a catalogue's angles with one bias map per object (same order), with
/// `DEFAULT_ROSE_BINS` rose bins.
pub fn cluster_test(cat: &Angles, maps: &[BiasMap], trials: u64, seed: u64) -> Result<ClusterTest> {
    cluster_test_binned(cat, maps, trials, seed, DEFAULT_ROSE_BINS)
}

/// The test with `rose_bins` equal angular bins over 0–360° for the rose counts.
pub fn cluster_test_binned(
    cat: &Angles,
    maps: &[BiasMap],
    trials: u64,
    seed: u64,
    rose_bins: usize,
) -> Result<ClusterTest> {
    let n = cat.ids.len();
    if n < 2 || maps.len() != n {
        return Err(Error::input(format!(
            "the clustering test needs at least two objects and one bias map per object ({n} objects, {} maps)",
            maps.len()
        )));
    }
    check_options(trials, rose_bins)?;
    let obs = Stats::of(&cat.inc, &cat.node, &cat.argperi);
    let samplers: Vec<Option<MapSampler>> = maps.iter().map(BiasMap::sampler).collect();
    let axes: Vec<MapAxes> = maps.iter().map(|m| m.grid.axes).collect();
    let tally_len = ROSE_QUANTITIES.len() * rose_bins * (n + 1);
    let (mut null_samples, tally) = (0..trials)
        .into_par_iter()
        .map(|t| one_trial(cat, &samplers, &axes, t, seed, rose_bins))
        .fold(
            || (Vec::new(), vec![0u64; tally_len]),
            |(mut samples, mut tally), (sample, counts)| {
                samples.push(sample);
                // tally[(q·bins + k)·(n + 1) + c]: catalogues with count c in bin k of angle q.
                for (qk, c) in counts.into_iter().enumerate() {
                    tally[qk * (n + 1) + c as usize] += 1;
                }
                (samples, tally)
            },
        )
        .reduce(
            || (Vec::new(), vec![0u64; tally_len]),
            |(mut sa, ta), (sb, tb)| {
                sa.extend(sb);
                (sa, ta.iter().zip(&tb).map(|(a, b)| a + b).collect())
            },
        );
    null_samples.sort_by_key(|s| s.trial);
    let (mut bias, mut naive) = ([0u64; 9], [0u64; 9]);
    for s in &null_samples {
        for (k, hit) in reaching(&s.bias_aware, &obs).into_iter().enumerate() {
            bias[k] += u64::from(hit);
        }
        for (k, hit) in reaching(&s.naive, &obs).into_iter().enumerate() {
            naive[k] += u64::from(hit);
        }
    }
    let unconstrained_ids = (0..n).filter(|j| samplers[*j].is_none()).map(|j| cat.ids[j]).collect();
    let results = summarize(&obs, n, trials, &bias, &naive);
    let rose = rose_counts(cat, rose_bins, &tally, trials);
    Ok(ClusterTest {
        n_objects: n,
        trials,
        unconstrained_ids,
        results,
        null_samples,
        rose,
    })
}

/// The test's own options: at least one trial, 1 to 360 rose bins.
pub fn check_options(trials: u64, rose_bins: usize) -> Result<()> {
    if trials == 0 {
        return Err(Error::input("--trials: expected at least 1"));
    }
    if !(1..=360).contains(&rose_bins) {
        return Err(Error::input(format!(
            "--rose-bins {rose_bins}: expected 1 to 360 angular bins"
        )));
    }
    Ok(())
}

/// Which statistics of a synthetic catalogue reach the observed ones; the joint one when
/// pole and perihelion both do.
fn reaching(values: &[f64; N_SAMPLED], obs: &Stats) -> [bool; 9] {
    let o = obs.values();
    let mut out = [false; 9];
    for k in 0..N_SAMPLED {
        out[k] = values[k] >= o[k];
    }
    out[8] = out[6] && out[7];
    out
}

/// The bin of an angle (radians) among `bins` equal bins over [0, 2π).
fn bin_of(angle: f64, bins: usize) -> usize {
    ((angle.rem_euclid(TAU) / TAU * bins as f64) as usize).min(bins - 1)
}

/// Counts per bin of ϖ, Ω and ω (`ROSE_QUANTITIES` order, `bins` each).
fn angle_counts(node: &[f64], argperi: &[f64], bins: usize) -> Vec<u32> {
    let mut counts = vec![0u32; ROSE_QUANTITIES.len() * bins];
    for (n, w) in node.iter().zip(argperi) {
        counts[bin_of(n + w, bins)] += 1;
        counts[bins + bin_of(*n, bins)] += 1;
        counts[2 * bins + bin_of(*w, bins)] += 1;
    }
    counts
}

/// The smallest count whose cumulative fraction of catalogues reaches q.
fn count_quantile(tally: &[u64], trials: u64, q: f64) -> u64 {
    let mut cum = 0u64;
    for (c, t) in tally.iter().enumerate() {
        cum += t;
        if cum as f64 >= q * trials as f64 {
            return c as u64;
        }
    }
    tally.len().saturating_sub(1) as u64
}

fn rose_counts(cat: &Angles, bins: usize, tally: &[u64], trials: u64) -> Vec<RoseCount> {
    let n = cat.ids.len();
    let observed = angle_counts(&cat.node, &cat.argperi, bins);
    let width = 360.0 / bins as f64;
    (0..ROSE_QUANTITIES.len() * bins)
        .map(|qk| {
            let t = &tally[qk * (n + 1)..(qk + 1) * (n + 1)];
            let k = qk % bins;
            RoseCount {
                quantity: ROSE_QUANTITIES[qk / bins],
                lo_deg: k as f64 * width,
                hi_deg: (k + 1) as f64 * width,
                observed: u64::from(observed[qk]),
                null_lo: count_quantile(t, trials, 0.05),
                null_median: count_quantile(t, trials, 0.5),
                null_hi: count_quantile(t, trials, 0.95),
            }
        })
        .collect()
}

/// One synthetic catalogue under each null: its statistics, and the rose counts of its
/// bias-aware angles.
fn one_trial(
    cat: &Angles,
    samplers: &[Option<MapSampler>],
    axes: &[MapAxes],
    t: u64,
    seed: u64,
    rose_bins: usize,
) -> (NullSample, Vec<u32>) {
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
    let first = |v: [f64; 9]| -> [f64; N_SAMPLED] { std::array::from_fn(|k| v[k]) };
    let sample = NullSample {
        trial: t,
        bias_aware: first(Stats::of(&cat.inc, &bn, &bw).values()),
        naive: first(Stats::of(&cat.inc, &un, &uw).values()),
    };
    (sample, angle_counts(&bn, &bw, rose_bins))
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
