//! The bias-aware clustering test of a catalogue's orbital angles.
//!
//! Statistics, per sample (the whole catalogue, and each cut in a or q if asked): the mean
//! resultant length R/n (Rayleigh) and Kuiper's V of ϖ, Ω and ω; the lengths of the mean
//! orbital pole and of the mean perihelion direction; Fisher's combination of the pole and
//! perihelion p-values (`pole_and_perihelion`). Over the whole family, the most significant
//! p-value (`global`, the look-elsewhere p-value), reported first.
//!
//! Null hypothesis: the angles are isotropic and the catalogue is what these surveys would
//! find. Every object keeps a, e, i, H and draws (ϖ, Ω) from its own bias map (AJ 157, 62,
//! 2019; the maps as in AJ 154, 65, 2017); the test is valid conditionally on those elements.
//! All p-values, combined and global included, are pooled Monte Carlo p-values on one set of
//! synthetic catalogues (`pooled_p.rs`); their errors come from bootstrap replicas of the maps,
//! so they cover the maps' noise as well as the catalogues'. Derivation: methods.md.
//!
//! Beside them the naive p-values, which ignore the bias: Rayleigh (Zar's approximation) and
//! Kuiper analytically, the others by the same pooled Monte Carlo with uniform angles.
//!
//! Streams: object `id` in synthetic catalogue t of replica r draws from
//! `object_stream(seed ^ splitmix64(t) ^ k_r, id, Analysis)` (`catalogue_seed`): first its
//! (ϖ, Ω) from the map (`MapSampler`), then its uniform angles for the naive null (two
//! uniforms).
//! Replica r ≥ 1 resamples the map of object `id` from `object_stream(seed ^ splitmix64(r), id,
//! Clone)`.

use std::f64::consts::TAU;

use rand::RngExt;
use rayon::prelude::*;

use super::bias_map::{BiasMap, MapAxes, MapSampler};
use super::circular::{self, MeanVector};
use super::pooled_p::{fisher, min_p_statistic, upper_ranks};
use crate::error::{Error, Result};
use crate::population::objects::ObjectTable;
use crate::rng::{Purpose, object_stream, splitmix64};
use crate::statistics::QuantileSample;

/// The statistics with one value per sample, in the order of `Stats::values`.
pub const STAT_NAMES: [&str; N_MARGINAL] = [
    "rayleigh_varpi",
    "rayleigh_node",
    "rayleigh_argperi",
    "kuiper_varpi",
    "kuiper_node",
    "kuiper_argperi",
    "mean_pole",
    "mean_perihelion",
];

pub const N_MARGINAL: usize = 8;

/// Fisher's combination of the pole and perihelion p-values of a sample.
pub const COMBINED: &str = "pole_and_perihelion";

/// The most significant p-value of the whole family, −log₁₀ min p.
pub const GLOBAL: &str = "global";

/// Indices of the mean pole and mean perihelion in `STAT_NAMES`.
const POLE: usize = 6;
const PERIHELION: usize = 7;

/// Angular bins of the rose counts unless told otherwise: 20° wide.
pub const DEFAULT_ROSE_BINS: usize = 18;

/// Synthetic catalogues and bootstrap replicas of the maps unless told otherwise.
pub const DEFAULT_TRIALS: u64 = 10_000;
pub const DEFAULT_REPLICAS: u32 = 20;

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

    /// The statistics in `STAT_NAMES` order; larger means more clustered.
    pub fn values(&self) -> [f64; N_MARGINAL] {
        [
            self.varpi.1,
            self.node.1,
            self.argperi.1,
            self.kuiper[0],
            self.kuiper[1],
            self.kuiper[2],
            self.pole.length,
            self.perihelion.length,
        ]
    }
}

/// A sub-sample of the catalogue chosen by its fixed elements: a ≥ a_min or q ≥ q_min.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Cut {
    AMin(f64),
    QMin(f64),
}

impl Cut {
    /// The sample's label in tables and text.
    pub fn label(&self) -> String {
        match self {
            Cut::AMin(a) => format!("a >= {a} au"),
            Cut::QMin(q) => format!("q >= {q} au"),
        }
    }

    /// The suffix of the sample's statistic names.
    fn suffix(&self) -> String {
        match self {
            Cut::AMin(a) => format!("_a{a}"),
            Cut::QMin(q) => format!("_q{q}"),
        }
    }

    fn keeps(&self, a_au: f64, q_au: f64) -> bool {
        match *self {
            Cut::AMin(a) => a_au >= a,
            Cut::QMin(q) => q_au >= q,
        }
    }
}

/// The test's options.
#[derive(Debug, Clone, PartialEq)]
pub struct TestOptions {
    /// Synthetic catalogues N.
    pub trials: u64,
    pub seed: u64,
    pub rose_bins: usize,
    /// Bootstrap replicas of the maps for the errors (0: no error is estimated, NaN).
    pub replicas: u32,
    /// Sub-samples tested beside the whole catalogue.
    pub cuts: Vec<Cut>,
}

impl Default for TestOptions {
    fn default() -> Self {
        TestOptions {
            trials: DEFAULT_TRIALS,
            seed: 1,
            rose_bins: DEFAULT_ROSE_BINS,
            replicas: DEFAULT_REPLICAS,
            cuts: Vec::new(),
        }
    }
}

impl TestOptions {
    /// The test's own options: at least one trial, 1 to 360 rose bins, finite positive cuts.
    pub fn check(&self) -> Result<()> {
        if self.trials == 0 {
            return Err(Error::input("--trials: expected at least 1"));
        }
        if !(1..=360).contains(&self.rose_bins) {
            return Err(Error::input(format!(
                "--rose-bins {}: expected 1 to 360 angular bins",
                self.rose_bins
            )));
        }
        for c in &self.cuts {
            let (opt, v) = match c {
                Cut::AMin(v) => ("--cut-a-min", v),
                Cut::QMin(v) => ("--cut-q-min", v),
            };
            if !(v.is_finite() && *v > 0.0) {
                return Err(Error::input(format!("{opt} {v}: expected a distance in au above 0")));
            }
        }
        Ok(())
    }
}

/// One reported statistic's result.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct StatResult {
    pub statistic: String,
    /// "all", or the cut's label.
    pub sample: String,
    pub n_objects: usize,
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

/// Every synthetic catalogue's statistics, statistic by statistic in the order of
/// `ClusterTest::results`, each row the observed catalogue's value then the N synthetic ones
/// in trial order: what the pooled ranks are computed from, kept for `cluster_null.*`
/// (8 bytes per statistic and catalogue, bias-aware and naive).
#[derive(Debug, Clone, PartialEq, Default)]
pub struct NullValues {
    /// Angles drawn from the objects' bias maps.
    pub bias_aware: Vec<Vec<f64>>,
    /// Uniform angles (no survey bias).
    pub naive: Vec<Vec<f64>>,
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
    /// The catalogue's objects in the bin, each counted with its weight (a count when every
    /// weight is 1), and the 5th, 50th and 95th percentiles of that weighted count over the
    /// synthetic catalogues (every object keeping its weight).
    pub observed: f64,
    pub null_lo: f64,
    pub null_median: f64,
    pub null_hi: f64,
}

/// The whole test.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct ClusterTest {
    pub n_objects: usize,
    pub trials: u64,
    pub replicas: u32,
    /// `global` first, then per sample its eight statistics and `pole_and_perihelion`.
    pub results: Vec<StatResult>,
    /// Every synthetic catalogue's statistics (tables, not the summary).
    #[serde(skip)]
    pub null_values: NullValues,
    /// Rose counts of ϖ, Ω and ω with the bias-aware band (tables, not the summary).
    #[serde(skip)]
    pub rose: Vec<RoseCount>,
}

impl ClusterTest {
    /// Blank the bias-aware chances (NaN, written as empty cells): for a selection outside the
    /// one whose calibration is shown (`commands::cluster_test::uncalibrated_selection`). The
    /// statistics, the null samples and the chances without bias correction stay.
    pub fn withhold_bias_aware_chances(&mut self) {
        for r in &mut self.results {
            r.p_bias_aware = f64::NAN;
            r.p_bias_aware_error = f64::NAN;
        }
    }

    /// The result of a statistic by name.
    pub fn result(&self, statistic: &str) -> Option<&StatResult> {
        self.results.iter().find(|r| r.statistic == statistic)
    }
}

/// Angles of a catalogue (radians), the fixed elements the cuts use, and the objects' weights
/// (the rose counts each object with its weight).
pub struct Angles {
    pub ids: Vec<i64>,
    pub weight: Vec<f64>,
    pub a_au: Vec<f64>,
    pub q_au: Vec<f64>,
    pub inc: Vec<f64>,
    pub node: Vec<f64>,
    pub argperi: Vec<f64>,
}

impl Angles {
    pub fn of(t: &ObjectTable) -> Self {
        Angles {
            ids: t.ids.clone(),
            weight: t.weight.clone(),
            a_au: t.elements.iter().map(|e| e.a_au).collect(),
            q_au: t.elements.iter().map(|e| e.q_au()).collect(),
            inc: t.elements.iter().map(|e| e.inc_rad).collect(),
            node: t.elements.iter().map(|e| e.node_rad).collect(),
            argperi: t.elements.iter().map(|e| e.argperi_rad).collect(),
        }
    }

    /// The objects at `rows`, in that order.
    pub fn select(&self, rows: &[usize]) -> Angles {
        let pick = |v: &[f64]| rows.iter().map(|r| v[*r]).collect::<Vec<f64>>();
        Angles {
            ids: rows.iter().map(|r| self.ids[*r]).collect(),
            weight: pick(&self.weight),
            a_au: pick(&self.a_au),
            q_au: pick(&self.q_au),
            inc: pick(&self.inc),
            node: pick(&self.node),
            argperi: pick(&self.argperi),
        }
    }
}

/// A sample of the family: its name suffix, label and rows.
struct Sample {
    suffix: String,
    label: String,
    rows: Vec<usize>,
}

fn samples_of(cat: &Angles, cuts: &[Cut]) -> Result<Vec<Sample>> {
    let mut out = vec![Sample {
        suffix: String::new(),
        label: "all".into(),
        rows: (0..cat.ids.len()).collect(),
    }];
    for c in cuts {
        let rows: Vec<usize> = (0..cat.ids.len())
            .filter(|j| c.keeps(cat.a_au[*j], cat.q_au[*j]))
            .collect();
        if rows.len() < 2 {
            return Err(Error::input(format!(
                "cut {}: keeps {} of the catalogue's {} objects; the clustering test needs at least two",
                c.label(),
                rows.len(),
                cat.ids.len()
            )));
        }
        out.push(Sample {
            suffix: c.suffix(),
            label: c.label(),
            rows,
        });
    }
    Ok(out)
}

/// The eight statistics of every sample, sample after sample.
fn family_values(inc: &[f64], node: &[f64], argperi: &[f64], samples: &[Sample]) -> Vec<f64> {
    let mut out = Vec::with_capacity(samples.len() * N_MARGINAL);
    for s in samples {
        let v = if s.rows.len() == inc.len() {
            Stats::of(inc, node, argperi).values()
        } else {
            let pick = |x: &[f64]| s.rows.iter().map(|r| x[*r]).collect::<Vec<f64>>();
            Stats::of(&pick(inc), &pick(node), &pick(argperi)).values()
        };
        out.extend(v);
    }
    out
}

/// Every reported statistic's value for every catalogue (index 0 the observed one), and the
/// observed catalogue's pooled p-value, rows in the order of `ClusterTest::results`.
struct Family {
    values: Vec<Vec<f64>>,
    p: Vec<f64>,
}

/// Rank the catalogues' statistics against each other, combine, and rank again. `synthetic`
/// holds the catalogues' marginal statistics one catalogue after another (`observed.len()`
/// each). The ranks of a statistic are folded into the combinations as soon as they are
/// made, so only the values are kept.
fn calibrate(observed: &[f64], synthetic: &[f64], n_samples: usize) -> Family {
    let k_all = observed.len();
    let column = |k: usize| -> Vec<f64> {
        std::iter::once(observed[k])
            .chain(synthetic.chunks_exact(k_all).map(|v| v[k]))
            .collect()
    };
    let n_cat = synthetic.len() / k_all + 1;
    let (mut values, mut p) = (vec![Vec::new()], vec![f64::NAN]);
    // The smallest p-value of every catalogue over the family so far (for `global`).
    let mut min_p = vec![1.0_f64; n_cat];
    let mut rank = |v: Vec<f64>, values: &mut Vec<Vec<f64>>, p: &mut Vec<f64>| -> Vec<f64> {
        let ranks = upper_ranks(&v);
        min_p.iter_mut().zip(&ranks).for_each(|(m, r)| *m = m.min(*r));
        p.push(ranks[0]);
        values.push(v);
        ranks
    };
    for s in 0..n_samples {
        let k0 = s * N_MARGINAL;
        let mut pole_and_perihelion = (Vec::new(), Vec::new());
        for k in k0..k0 + N_MARGINAL {
            let ranks = rank(column(k), &mut values, &mut p);
            match k - k0 {
                POLE => pole_and_perihelion.0 = ranks,
                PERIHELION => pole_and_perihelion.1 = ranks,
                _ => {}
            }
        }
        let (pole, perihelion) = pole_and_perihelion;
        let combined: Vec<f64> = (0..n_cat).map(|c| fisher(&[pole[c], perihelion[c]])).collect();
        rank(combined, &mut values, &mut p);
    }
    // min_p_statistic of each catalogue's p-values, from their running minimum (the minimum
    // does not depend on the order it is taken in).
    let global: Vec<f64> = min_p.iter().map(|m| min_p_statistic(&[*m])).collect();
    p[0] = upper_ranks(&global)[0];
    values[0] = global;
    Family { values, p }
}

/// The synthetic catalogues of one replica: each catalogue's eight statistics per sample, one
/// catalogue after another, and for the built maps (replica 0) the naive ones and the rose
/// counts' samples too.
struct Draws {
    bias: Vec<f64>,
    naive: Vec<f64>,
    rose: Vec<QuantileSample>,
}

struct Setup<'a> {
    cat: &'a Angles,
    axes: Vec<MapAxes>,
    samples: Vec<Sample>,
    opt: &'a TestOptions,
}

/// Run the test on a catalogue's angles with one bias map per object (same order). `tick` is
/// called once per replica (a progress bar). Every map must hold a discovery: an object the
/// surveys never found on its map has no null distribution, and drawing it uniformly would
/// make the test anti-conservative.
pub fn cluster_test(
    cat: &Angles,
    maps: &[BiasMap],
    opt: &TestOptions,
    tick: &(dyn Fn() + Sync),
) -> Result<ClusterTest> {
    let n = cat.ids.len();
    if n < 2 || maps.len() != n {
        return Err(Error::input(format!(
            "the clustering test needs at least two objects and one bias map per object ({n} objects, {} maps)",
            maps.len()
        )));
    }
    opt.check()?;
    let empty: Vec<i64> = maps
        .iter()
        .filter(|m| m.total_discoveries() == 0)
        .map(|m| m.id)
        .collect();
    if !empty.is_empty() {
        return Err(Error::input(format!(
            "the bias maps of ids {empty:?} hold no discovery: the surveys never found these objects \
             at any angle tried, so the test has no null distribution for them (raise the map's trial \
             cap, or drop them)"
        )));
    }
    let setup = Setup {
        cat,
        axes: maps.iter().map(|m| m.grid.axes).collect(),
        samples: samples_of(cat, &opt.cuts)?,
        opt,
    };
    let observed = family_values(&cat.inc, &cat.node, &cat.argperi, &setup.samples);
    let samplers: Vec<MapSampler> = maps.iter().map(|m| m.sampler().expect("checked above")).collect();
    let main = draw(&setup, &samplers, 0, true);
    let bias = calibrate(&observed, &main.bias, setup.samples.len());
    let naive = calibrate(&observed, &main.naive, setup.samples.len());
    let rose = rose_counts(cat, opt.rose_bins, &main.rose);
    drop(main);
    tick();
    let replica_p: Vec<Vec<f64>> = (1..=opt.replicas)
        .map(|r| {
            let resampled: Vec<MapSampler> = maps
                .iter()
                .map(|m| {
                    let mut rng = object_stream(opt.seed ^ splitmix64(u64::from(r)), m.id, Purpose::Clone);
                    // A replica map can lose every discovery of a very thin map: keep the built one.
                    m.resampled(&mut rng)
                        .sampler()
                        .unwrap_or_else(|| m.sampler().expect("checked above"))
                })
                .collect();
            let d = draw(&setup, &resampled, r, false);
            let f = calibrate(&observed, &d.bias, setup.samples.len());
            tick();
            f.p
        })
        .collect();
    let results = summarize(&setup, &observed, &bias, &naive, &replica_p);
    Ok(ClusterTest {
        n_objects: n,
        trials: opt.trials,
        replicas: opt.replicas,
        results,
        null_values: NullValues {
            bias_aware: bias.values,
            naive: naive.values,
        },
        rose,
    })
}

/// The seed of synthetic catalogue t of replica r (r = 0: the built maps).
fn catalogue_seed(seed: u64, t: u64, r: u32) -> u64 {
    let key = if r == 0 {
        0
    } else {
        splitmix64(u64::from(r) ^ 0xB007_57AB_B007_57AB)
    };
    seed ^ splitmix64(t) ^ key
}

/// Synthetic catalogues drawn and reduced a block at a time (common practice, no source).
const CATALOGUES_PER_BLOCK: usize = 1024;

/// The synthetic catalogues of replica r, in parallel: each block of catalogues writes its
/// statistics into its place and counts its rose bins; nothing is held per catalogue beyond
/// its statistics.
fn draw(setup: &Setup, samplers: &[MapSampler], r: u32, with_naive: bool) -> Draws {
    let k_all = setup.samples.len() * N_MARGINAL;
    let trials = setup.opt.trials as usize;
    let mut bias = vec![0.0; trials * k_all];
    let mut naive = vec![0.0; if with_naive { trials * k_all } else { 0 }];
    let block = CATALOGUES_PER_BLOCK * k_all;
    let mut naive_blocks: Vec<&mut [f64]> = naive.chunks_mut(block).collect();
    naive_blocks.resize_with(bias.len().div_ceil(block), Default::default);
    let bins = ROSE_QUANTITIES.len() * setup.opt.rose_bins;
    let rose = bias
        .par_chunks_mut(block)
        .zip(naive_blocks.into_par_iter())
        .enumerate()
        .map(|(b, (bias, naive))| {
            let mut rose = vec![QuantileSample::default(); if with_naive { bins } else { 0 }];
            for (i, values) in bias.chunks_exact_mut(k_all).enumerate() {
                let t = (b * CATALOGUES_PER_BLOCK + i) as u64;
                let (bv, nv, counts) = one_catalogue(setup, samplers, catalogue_seed(setup.opt.seed, t, r), with_naive);
                values.copy_from_slice(&bv);
                if with_naive {
                    naive[i * k_all..(i + 1) * k_all].copy_from_slice(&nv);
                    rose.iter_mut().zip(counts).for_each(|(s, c)| s.push(c));
                }
            }
            rose
        })
        .reduce(Vec::new, |mut a, b| {
            if a.is_empty() {
                return b;
            }
            a.iter_mut().zip(b).for_each(|(s, o)| s.absorb(o));
            a
        });
    Draws { bias, naive, rose }
}

/// One synthetic catalogue: its statistics from the maps and, if asked, from uniform angles,
/// with the rose counts of its map-drawn angles.
fn one_catalogue(
    setup: &Setup,
    samplers: &[MapSampler],
    trial_seed: u64,
    with_naive: bool,
) -> (Vec<f64>, Vec<f64>, Vec<f64>) {
    let cat = setup.cat;
    let n = cat.ids.len();
    let (mut bn, mut bw, mut un, mut uw) = (vec![0.0; n], vec![0.0; n], vec![0.0; n], vec![0.0; n]);
    for j in 0..n {
        let mut rng = object_stream(trial_seed, cat.ids[j], Purpose::Analysis);
        let (x, node) = samplers[j].sample(&mut rng);
        bn[j] = node;
        bw[j] = setup.axes[j].argperi(x, node);
        if with_naive {
            un[j] = rng.random::<f64>() * TAU;
            uw[j] = rng.random::<f64>() * TAU;
        }
    }
    let bias = family_values(&cat.inc, &bn, &bw, &setup.samples);
    if !with_naive {
        return (bias, Vec::new(), Vec::new());
    }
    let naive = family_values(&cat.inc, &un, &uw, &setup.samples);
    (bias, naive, angle_counts(&bn, &bw, &cat.weight, setup.opt.rose_bins))
}

/// The rows of the results: `global`, then per sample its statistics and the combination.
fn summarize(
    setup: &Setup,
    observed: &[f64],
    bias: &Family,
    naive: &Family,
    replica_p: &[Vec<f64>],
) -> Vec<StatResult> {
    let trials = setup.opt.trials;
    let cat = setup.cat;
    let error = |row: usize, p: f64| -> f64 {
        if replica_p.len() < 2 {
            return f64::NAN;
        }
        let v: Vec<f64> = replica_p.iter().map(|x| x[row]).collect();
        let mean = v.iter().sum::<f64>() / v.len() as f64;
        let sd = (v.iter().map(|x| (x - mean).powi(2)).sum::<f64>() / (v.len() - 1) as f64).sqrt();
        sd.max((p * (1.0 - p) / trials as f64).sqrt())
    };
    let row = |k: usize, statistic: String, sample: &Sample, dir: (f64, f64), naive_p: (f64, &str)| {
        let p = bias.p[k];
        StatResult {
            statistic,
            sample: sample.label.clone(),
            n_objects: sample.rows.len(),
            observed: bias.values[k][0],
            direction_lon_deg: dir.0.to_degrees(),
            direction_lat_deg: dir.1.to_degrees(),
            p_bias_aware: p,
            p_bias_aware_error: error(k, p),
            p_naive: naive_p.0,
            p_naive_method: naive_p.1.into(),
            p_naive_monte_carlo: naive.p[k],
        }
    };
    let none = (f64::NAN, f64::NAN);
    let mc = "monte carlo, uniform angles";
    let mut out = vec![row(0, GLOBAL.into(), &setup.samples[0], none, (naive.p[0], mc))];
    for (s, sample) in setup.samples.iter().enumerate() {
        let sub = cat.select(&sample.rows);
        let st = Stats::of(&sub.inc, &sub.node, &sub.argperi);
        let dirs = [
            (st.varpi.0, f64::NAN),
            (st.node.0, f64::NAN),
            (st.argperi.0, f64::NAN),
            (st.varpi.0, f64::NAN),
            (st.node.0, f64::NAN),
            (st.argperi.0, f64::NAN),
            (st.pole.lon, st.pole.lat),
            (st.perihelion.lon, st.perihelion.lat),
        ];
        let n = sample.rows.len();
        let base = 1 + s * (N_MARGINAL + 1);
        for k in 0..N_MARGINAL {
            let value = observed[s * N_MARGINAL + k];
            let naive_p = match k {
                0..=2 => (circular::rayleigh_p(n, value * n as f64), "rayleigh (Zar)"),
                3..=5 => (circular::kuiper_p(value, n), "kuiper"),
                _ => (naive.p[base + k], mc),
            };
            out.push(row(
                base + k,
                format!("{}{}", STAT_NAMES[k], sample.suffix),
                sample,
                dirs[k],
                naive_p,
            ));
        }
        let k = base + N_MARGINAL;
        out.push(row(
            k,
            format!("{COMBINED}{}", sample.suffix),
            sample,
            none,
            (naive.p[k], mc),
        ));
    }
    out
}

/// The bin of an angle (radians) among `bins` equal bins over [0, 2π).
fn bin_of(angle: f64, bins: usize) -> usize {
    ((angle.rem_euclid(TAU) / TAU * bins as f64) as usize).min(bins - 1)
}

/// Weighted counts per bin of ϖ, Ω and ω (`ROSE_QUANTITIES` order, `bins` each): each object
/// adds its weight (1 each: plain counts).
fn angle_counts(node: &[f64], argperi: &[f64], weight: &[f64], bins: usize) -> Vec<f64> {
    let mut counts = vec![0.0; ROSE_QUANTITIES.len() * bins];
    for ((n, w), wt) in node.iter().zip(argperi).zip(weight) {
        counts[bin_of(n + w, bins)] += wt;
        counts[bins + bin_of(*n, bins)] += wt;
        counts[2 * bins + bin_of(*w, bins)] += wt;
    }
    counts
}

/// The rose counts of the catalogue with the band of the synthetic catalogues' counts
/// (`counts`: per bin of `angle_counts`, the synthetic catalogues' counts of their map-drawn
/// angles, with the catalogue's weights). The band's bounds are the inverse-ECDF quantiles
/// over the catalogues (for unit weights: the smallest count whose cumulative fraction of
/// catalogues reaches q).
fn rose_counts(cat: &Angles, bins: usize, counts: &[QuantileSample]) -> Vec<RoseCount> {
    let observed = angle_counts(&cat.node, &cat.argperi, &cat.weight, bins);
    let width = 360.0 / bins as f64;
    (0..ROSE_QUANTITIES.len() * bins)
        .map(|qk| {
            let k = qk % bins;
            let q = |p: f64| counts[qk].inverse_ecdf(p);
            RoseCount {
                quantity: ROSE_QUANTITIES[qk / bins],
                lo_deg: k as f64 * width,
                hi_deg: (k + 1) as f64 * width,
                observed: observed[qk],
                null_lo: q(0.05),
                null_median: q(0.5),
                null_hi: q(0.95),
            }
        })
        .collect()
}
