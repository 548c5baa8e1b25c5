//! Comparing model populations with an observed catalogue (`seine compare-models`): each model
//! runs through the surveys, its detected objects give a density in the observable space (one
//! bandwidth for all models), and the catalogue is scored by ln L with its model-sample error
//! (Poisson bootstrap), the extended likelihood where a model's size is known, a calibrated
//! goodness of fit and marginal tests whose p-values come from synthetic catalogues resampled
//! from the model's own detected objects (leave-the-catalogue-out). Derivations in methods.md,
//! "Model comparison".
//!
//! Streams (all `Analysis`, seeded by the run seed and the model's index m): synthetic catalogue
//! t of model m from `run_stream(seed ^ splitmix64(2m + 1), Analysis, t)`; the bootstrap
//! multiplicities of model object `id` from `object_stream(seed ^ splitmix64(2m + 2), id,
//! Analysis)`.

use rand::RngExt;
use rand_pcg::Pcg64;
use rayon::prelude::*;

use super::likelihood::{At, Bandwidth, Estimator, Grid, Kernel, ModelDensity, Sums};
use super::marginals::{Statistic, WeightedEcdf};
use super::model_sample::{Detected, Model};
use super::space::{Coordinate, Space};
use super::trial_selection::TrialSelection;
use crate::engine::PreparedSurvey;
use crate::error::{Error, Result};
use crate::orbit::Center;
use crate::population::objects::ObjectTable;
use crate::population::recenter::recenter_table;
use crate::rng::{Purpose, object_stream, run_stream, splitmix64};
use crate::statistics::kish_n_of;

/// The density choice of a comparison.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum DensityChoice {
    /// Kernels shaped by the space, one bandwidth for all models.
    Kernel,
    /// Equal-width bins per working coordinate with a prior worth `prior_objects` objects.
    Binned { bins: usize, prior_objects: f64 },
}

/// Everything a comparison needs besides the surveys.
#[derive(Debug, Clone)]
pub struct CompareOptions {
    pub observed: ObjectTable,
    pub models: Vec<Model>,
    pub space: Space,
    pub density: DensityChoice,
    pub synthetic: u64,
    pub bootstrap: u64,
    pub seed: u64,
    /// Convert every table to this frame; None refuses mixed frames.
    pub frame: Option<Center>,
    /// What a model object must pass to enter the catalogue: the catalogue's own selection.
    pub selection: TrialSelection,
}

/// Most bootstrap replicates and synthetic catalogues a run takes.
pub const MAX_REPLICATES: u64 = 1_000_000;

impl CompareOptions {
    /// Every check of the options, before any work.
    pub fn validate(&self) -> Result<()> {
        if self.models.is_empty() {
            return Err(Error::input("--model: expected at least one model NAME=OBJECTS"));
        }
        let mut names = std::collections::HashSet::new();
        for m in &self.models {
            if m.name.trim().is_empty() {
                return Err(Error::input(
                    "--model: a model needs a name (NAME=OBJECTS, NAME not empty)",
                ));
            }
            if !names.insert(m.name.as_str()) {
                return Err(Error::input(format!(
                    "--model: the name `{}` is given twice; each model needs its own name",
                    m.name
                )));
            }
            if let Some(n) = m.population_size.filter(|n| !(*n > 0.0 && n.is_finite())) {
                return Err(Error::input(format!(
                    "--population-size {}={n}: expected a positive number of objects",
                    m.name
                )));
            }
        }
        if !(1..=MAX_REPLICATES).contains(&self.synthetic) {
            return Err(Error::input(format!(
                "--synthetic {}: expected 1 to {MAX_REPLICATES} synthetic catalogues (the goodness-of-fit \
                 p-value is (1 + count)/(1 + synthetic))",
                self.synthetic
            )));
        }
        if !(2..=MAX_REPLICATES).contains(&self.bootstrap) {
            return Err(Error::input(format!(
                "--bootstrap {}: expected 2 to {MAX_REPLICATES} replicates",
                self.bootstrap
            )));
        }
        if let DensityChoice::Binned { bins, prior_objects } = self.density {
            let cells = (bins as f64).powi(self.space.dim() as i32);
            if bins == 0 || cells > 1e8 {
                return Err(Error::input(format!(
                    "--bins {bins}: expected 1 or more, with at most 10^8 cells in all ({} dimensions)",
                    self.space.dim()
                )));
            }
            if !(prior_objects >= 0.0 && prior_objects.is_finite()) {
                return Err(Error::input(format!(
                    "--prior-objects {prior_objects}: expected a number ≥ 0"
                )));
            }
        }
        if self.observed.is_empty() {
            return Err(Error::input("--observed: the catalogue has no objects"));
        }
        Ok(())
    }

    /// Bring the catalogue and the models to one frame: refuse mixed frames unless `frame`
    /// says which to convert to. The catalogue is converted here; a model's objects are
    /// converted a chunk at a time as they are read (`Detected::selected_in`), since a model
    /// is never held whole.
    pub fn align_frames(&mut self) -> Result<Center> {
        if let Some(to) = self.frame {
            recenter_table(&mut self.observed, to, "--observed")?;
            return Ok(to);
        }
        let mut frames = vec![("--observed".to_string(), self.observed.center())];
        frames.extend(
            self.models
                .iter()
                .map(|m| (format!("model `{}`", m.name), m.objects.center())),
        );
        let first = frames[0].1;
        if let Some((what, f)) = frames.iter().find(|(_, f)| f.is_none() || *f != first) {
            let say = |f: &Option<Center>| f.map_or("mixed heliocentric and barycentric", |c| c.name());
            return Err(Error::input(format!(
                "{what} has {} elements but --observed has {}: the elements must share a frame \
                 (at a = 500 AU they differ by several per cent in a); give --frame heliocentric or \
                 --frame barycentric to convert every table",
                say(f),
                say(&first)
            )));
        }
        Ok(first.unwrap_or_default())
    }
}

/// Rows of a population that the surveys discover (engine, `Observe` streams, as `observe`).
pub fn detected_rows(t: &ObjectTable, surveys: &[PreparedSurvey], seed: u64) -> Vec<usize> {
    let entering = TrialSelection::Discovered.entering(t, surveys, seed);
    entering.into_iter().map(|(i, _)| i).collect()
}

/// The estimator shared by every model: the kernel with one bandwidth, or one grid.
pub fn shared_estimator(
    space: &Space,
    density: DensityChoice,
    catalogue: &[Vec<f64>],
    n_catalogue: f64,
    detected: &[Detected],
) -> Result<Estimator> {
    let coords = space.coordinates();
    match density {
        DensityChoice::Kernel => {
            let samples: Vec<(&[Vec<f64>], &[f64])> = detected
                .iter()
                .map(|d| (d.points.as_slice(), d.weights.as_slice()))
                .collect();
            let bw = Bandwidth::shared(&coords, &samples, n_catalogue)?;
            Ok(Estimator::Kernel(Kernel::new(&coords, &bw)?))
        }
        DensityChoice::Binned { bins, prior_objects } => {
            let mut values: Vec<&[Vec<f64>]> = vec![catalogue];
            values.extend(detected.iter().map(|d| d.points.as_slice()));
            Ok(Estimator::Binned(Grid::new(&coords, bins, &values, prior_objects)?))
        }
    }
}

/// One marginal test of one model.
#[derive(Debug, Clone, PartialEq)]
pub struct MarginalTest {
    pub observable: &'static str,
    pub statistic: Statistic,
    pub value: f64,
    pub p_value: f64,
    pub p_error: f64,
}

/// One model's score.
#[derive(Debug, Clone, PartialEq)]
pub struct ModelScore {
    pub name: String,
    pub n_objects: usize,
    pub n_detected: usize,
    /// The weighted detected fraction of the model's objects.
    pub detected: crate::statistics::Proportion,
    pub log_likelihood: f64,
    /// Model-sample error of ln L (Poisson bootstrap).
    pub log_likelihood_error: f64,
    /// With a population size: ν, its error, the Poisson term and the extended ln L with its error.
    pub extended: Option<Extended>,
    pub gof_p: f64,
    pub gof_p_error: f64,
    /// ln L of each synthetic catalogue: the goodness of fit's null distribution.
    pub null_log_likelihood: Vec<f64>,
    pub marginals: Vec<MarginalTest>,
    /// The detected objects (observables in the space's order) and their ids and weights.
    pub points: Vec<Vec<f64>>,
    pub ids: Vec<i64>,
    pub weights: Vec<f64>,
}

#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Extended {
    pub expected: f64,
    pub expected_error: f64,
    pub log_poisson: f64,
    pub log_likelihood: f64,
    pub log_likelihood_error: f64,
}

/// Score one model (index `m` among the models) against the catalogue points.
pub fn score_model(
    m: usize,
    model: &Model,
    det: &Detected,
    estimator: &Estimator,
    catalogue: &[Vec<f64>],
    opts: &CompareOptions,
) -> Result<ModelScore> {
    let density = ModelDensity::new(estimator, &det.points, &det.weights)
        .map_err(|e| Error::input(format!("model `{}`: {e}", model.name)))?;
    let at: Vec<At> = catalogue.iter().map(|x| density.at(x)).collect();
    let ll: f64 = at.iter().map(|a| density.pdf_from_sums(a, density.sums(a)).ln()).sum();
    let boot = bootstrap(m, det, &density, &at, opts);
    let nu = |f: f64| model.population_size.map(|n| n * f);
    let extended = nu(det.fraction.w_hit / det.fraction.w).map(|expected| {
        let n = catalogue.len() as f64;
        let log_poisson = n * expected.ln() - expected - statrs::function::gamma::ln_gamma(n + 1.0);
        let ext: Vec<f64> = boot
            .iter()
            .map(|(l, f)| {
                let e = nu(*f).unwrap_or(f64::NAN);
                l + n * e.ln() - e
            })
            .collect();
        Extended {
            expected,
            expected_error: std_dev(&boot.iter().filter_map(|(_, f)| nu(*f)).collect::<Vec<_>>()),
            log_poisson,
            log_likelihood: ll + log_poisson,
            log_likelihood_error: std_dev(&ext),
        }
    });
    let ll_error = std_dev(&boot.iter().map(|b| b.0).collect::<Vec<_>>());
    let syn = synthetic_catalogues(m, det, &density, catalogue.len(), opts);
    let (gof_p, gof_p_error) = lower_tail_p(ll, &syn.log_likelihood, ll_error);
    let marginals = marginal_tests(&opts.space, det, catalogue, &syn);
    Ok(ModelScore {
        name: model.name.clone(),
        n_objects: det.n_objects,
        n_detected: det.rows.len(),
        detected: det.fraction.proportion(),
        log_likelihood: ll,
        log_likelihood_error: ll_error,
        extended,
        gof_p,
        gof_p_error,
        null_log_likelihood: syn.log_likelihood.clone(),
        marginals,
        points: det.points.clone(),
        ids: det.ids.clone(),
        weights: det.weights.clone(),
    })
}

fn std_dev(x: &[f64]) -> f64 {
    let n = x.len() as f64;
    if n < 2.0 {
        return f64::NAN;
    }
    let mean = x.iter().sum::<f64>() / n;
    (x.iter().map(|v| (v - mean).powi(2)).sum::<f64>() / (n - 1.0)).sqrt()
}

/// A Poisson(1) count by inversion.
fn poisson1(rng: &mut Pcg64) -> u8 {
    let u: f64 = rng.random();
    let (mut k, mut p) = (0u8, (-1.0f64).exp());
    let mut cdf = p;
    while u > cdf && k < 30 {
        k += 1;
        p /= k as f64;
        cdf += p;
    }
    k
}

/// Per bootstrap replicate: (ln L, weighted detected fraction) with Poisson(1) multiplicities of
/// every model object.
fn bootstrap(m: usize, det: &Detected, density: &ModelDensity, at: &[At], opts: &CompareOptions) -> Vec<(f64, f64)> {
    let b = opts.bootstrap as usize;
    let seed = opts.seed ^ splitmix64(2 * m as u64 + 2);
    let mult = |id: i64| -> Vec<u8> {
        let mut rng = object_stream(seed, id, Purpose::Analysis);
        (0..b).map(|_| poisson1(&mut rng)).collect()
    };
    // The detected objects' multiplicities, row-major (object, replicate).
    let det_mult: Vec<u8> = det.ids.par_iter().flat_map_iter(|&id| mult(id)).collect();
    let (mut w_det, mut w2_det) = (vec![0.0; b], vec![0.0; b]);
    // Σ m w over all objects, for ν; only the extended likelihood needs it (and keeps them).
    let w_all = match &det.population {
        Some(everyone) => population_sums(everyone, b, mult),
        None => vec![f64::NAN; b],
    };
    for (j, w) in det.weights.iter().enumerate() {
        for r in 0..b {
            let k = det_mult[j * b + r] as f64;
            w_det[r] += k * w;
            w2_det[r] += k * w * w;
        }
    }
    let per_point: Vec<Vec<f64>> = at
        .par_iter()
        .map(|a| {
            let mut s = vec![0.0; b];
            for (j, w) in det.weights.iter().enumerate() {
                let k = density.kernel(a, j);
                if k == 0.0 {
                    continue;
                }
                let wk = w * k;
                for (r, acc) in s.iter_mut().enumerate() {
                    *acc += det_mult[j * b + r] as f64 * wk;
                }
            }
            (0..b)
                .map(|r| {
                    let sums = Sums {
                        s: s[r],
                        w: w_det[r],
                        w2: w2_det[r],
                    };
                    density.pdf_from_sums(a, sums).ln()
                })
                .collect()
        })
        .collect();
    (0..b)
        .map(|r| (per_point.iter().map(|p| p[r]).sum(), w_det[r] / w_all[r]))
        .collect()
}

/// Σᵢ mᵢ⁽ʳ⁾ wᵢ over every object of a model, per replicate r: summed in blocks of a fixed size,
/// and the blocks in order, so that the sums do not depend on how the threads share the work.
fn population_sums(everyone: &[(i64, f64)], b: usize, mult: impl Fn(i64) -> Vec<u8> + Sync) -> Vec<f64> {
    let blocks: Vec<Vec<f64>> = everyone
        .par_chunks(4096)
        .map(|block| {
            let mut acc = vec![0.0; b];
            for (id, w) in block {
                for (r, k) in mult(*id).into_iter().enumerate() {
                    acc[r] += k as f64 * w;
                }
            }
            acc
        })
        .collect();
    blocks.iter().fold(vec![0.0; b], |mut sum, block| {
        sum.iter_mut().zip(block).for_each(|(s, x)| *s += x);
        sum
    })
}

/// The synthetic catalogues of a model: their ln L and marginal statistics.
struct Synthetic {
    log_likelihood: Vec<f64>,
    /// [catalogue][dimension] → the pair of statistics.
    marginals: Vec<Vec<[f64; 2]>>,
}

/// `synthetic` catalogues of n detected model objects drawn by weight, each scored under the
/// model's density and ECDFs without the catalogue's own objects.
fn synthetic_catalogues(
    m: usize,
    det: &Detected,
    density: &ModelDensity,
    n: usize,
    opts: &CompareOptions,
) -> Synthetic {
    let seed = opts.seed ^ splitmix64(2 * m as u64 + 1);
    let mut cumulative = Vec::with_capacity(det.weights.len());
    let mut acc = 0.0;
    for w in &det.weights {
        acc += w;
        cumulative.push(acc);
    }
    let picks: Vec<Vec<usize>> = (0..opts.synthetic)
        .into_par_iter()
        .map(|t| {
            let mut rng = run_stream(seed, Purpose::Analysis, t);
            (0..n)
                .map(|_| {
                    let u = rng.random::<f64>() * acc;
                    cumulative.partition_point(|c| *c <= u).min(cumulative.len() - 1)
                })
                .collect()
        })
        .collect();
    // Full kernel sums at every model object a catalogue uses, computed once.
    let mut used: Vec<usize> = picks.iter().flatten().copied().collect();
    used.sort_unstable();
    used.dedup();
    let mut full = vec![f64::NAN; det.weights.len()];
    let sums: Vec<f64> = used
        .par_iter()
        .map(|&j| density.sums(&density.at(&det.points[j])).s)
        .collect();
    for (j, s) in used.iter().zip(sums) {
        full[*j] = s;
    }
    let ecdfs: Vec<WeightedEcdf> = (0..opts.space.dim())
        .map(|d| {
            let v: Vec<f64> = det.points.iter().map(|p| p[d]).collect();
            WeightedEcdf::new(&v, &det.weights, opts.space.coordinates()[d] == Coordinate::Angle)
        })
        .collect();
    let scored: Vec<(f64, Vec<[f64; 2]>)> = picks
        .par_iter()
        .map(|pick| {
            let mut distinct = pick.clone();
            distinct.sort_unstable();
            distinct.dedup();
            let (dw, dw2): (f64, f64) = distinct
                .iter()
                .map(|j| det.weights[*j])
                .fold((0.0, 0.0), |(a, b), w| (a + w, b + w * w));
            let ll = pick
                .iter()
                .map(|&j| {
                    let at = density.at(&det.points[j]);
                    let own: f64 = distinct.iter().map(|&k| det.weights[k] * density.kernel(&at, k)).sum();
                    let sums = Sums {
                        s: full[j] - own,
                        w: density.total.w - dw,
                        w2: density.total.w2 - dw2,
                    };
                    density.pdf_from_sums(&at, sums).ln()
                })
                .sum();
            let marg = ecdfs
                .iter()
                .enumerate()
                .map(|(d, e)| {
                    let values: Vec<f64> = pick.iter().map(|&j| det.points[j][d]).collect();
                    let removed: Vec<(f64, f64)> =
                        distinct.iter().map(|&k| (det.points[k][d], det.weights[k])).collect();
                    e.statistics(&values, &removed)
                })
                .collect();
            (ll, marg)
        })
        .collect();
    Synthetic {
        log_likelihood: scored.iter().map(|s| s.0).collect(),
        marginals: scored.into_iter().map(|s| s.1).collect(),
    }
}

/// p = (1 + #{T* ≤ T})/(1 + N) and its error: the synthetic count's binomial error combined with
/// the model-sample error of T through the null density at T (methods.md).
pub fn lower_tail_p(t_obs: f64, null: &[f64], t_error: f64) -> (f64, f64) {
    let n = null.len() as f64;
    let below = null.iter().filter(|t| **t <= t_obs).count() as f64;
    let p = (1.0 + below) / (1.0 + n);
    let counting = p * (1.0 - p) / n;
    let slope = null_density(null, t_obs) * t_error;
    (
        p,
        (counting + if slope.is_finite() { slope * slope } else { 0.0 }).sqrt(),
    )
}

/// A Gaussian kernel density of finite samples at x, Silverman's rule (Silverman 1986, eq. 3.31).
fn null_density(samples: &[f64], x: f64) -> f64 {
    use crate::statistics::{QuantileRule::InverseEcdf, quantile_sorted};
    let mut v: Vec<f64> = samples.iter().copied().filter(|s| s.is_finite()).collect();
    if v.len() < 2 || !x.is_finite() {
        return 0.0;
    }
    v.sort_by(f64::total_cmp);
    let n = v.len() as f64;
    let sd = std_dev(&v);
    let iqr = quantile_sorted(&v, 0.75, InverseEcdf) - quantile_sorted(&v, 0.25, InverseEcdf);
    let scale = if iqr > 0.0 { sd.min(iqr / 1.34) } else { sd };
    let h = 0.9 * scale * n.powf(-0.2);
    if !(h > 0.0) {
        return 0.0;
    }
    v.iter().map(|s| (-0.5 * ((x - s) / h).powi(2)).exp()).sum::<f64>() / (n * h * (std::f64::consts::TAU).sqrt())
}

/// The marginal statistics of the catalogue against the model's ECDFs, with Monte Carlo p-values.
fn marginal_tests(space: &Space, det: &Detected, catalogue: &[Vec<f64>], syn: &Synthetic) -> Vec<MarginalTest> {
    let n_syn = syn.marginals.len() as f64;
    let mut out = Vec::new();
    for (d, obs) in space.observables.iter().enumerate() {
        let angle = obs.coordinate() == Coordinate::Angle;
        let v: Vec<f64> = det.points.iter().map(|p| p[d]).collect();
        let ecdf = WeightedEcdf::new(&v, &det.weights, angle);
        let cat: Vec<f64> = catalogue.iter().map(|x| x[d]).collect();
        let observed = ecdf.statistics(&cat, &[]);
        for (k, statistic) in Statistic::pair(angle).into_iter().enumerate() {
            let above = syn.marginals.iter().filter(|s| s[d][k] >= observed[k]).count() as f64;
            let p = (1.0 + above) / (1.0 + n_syn);
            out.push(MarginalTest {
                observable: obs.name(),
                statistic,
                value: observed[k],
                p_value: p,
                p_error: (p * (1.0 - p) / n_syn).sqrt(),
            });
        }
    }
    out
}

/// The result of a comparison.
#[derive(Debug, Clone, PartialEq)]
pub struct Comparison {
    pub n_observed: usize,
    pub space: Vec<&'static str>,
    pub density: &'static str,
    pub frame: Center,
    /// Scott's factor h, and the kernel's per-coordinate widths (σ in working units; for angles
    /// 1/√κ in degrees), for the record.
    pub bandwidth_factor: f64,
    pub bandwidth: Vec<f64>,
    pub models: Vec<ModelScore>,
    /// The catalogue in the space (observables in the space's order), its ids and weights.
    pub catalogue: Vec<Vec<f64>>,
    pub catalogue_ids: Vec<i64>,
    pub catalogue_weights: Vec<f64>,
    /// What the models' objects went through to count as detected (`TrialSelection::key`).
    pub selection: String,
}

/// Run a comparison: frames aligned, every model through the surveys, scored.
pub fn compare_models(surveys: &[PreparedSurvey], mut opts: CompareOptions) -> Result<Comparison> {
    opts.validate()?;
    let frame = opts.align_frames()?;
    let all: Vec<usize> = (0..opts.observed.len()).collect();
    let catalogue = opts.space.points(&opts.observed, &all);
    let n_catalogue = kish_n_of(&opts.observed.weight);
    let detected = opts
        .models
        .iter()
        .map(|m| Detected::selected_in(m, &opts.space, surveys, opts.seed, &opts.selection, opts.frame))
        .collect::<Result<Vec<_>>>()?;
    let estimator = shared_estimator(&opts.space, opts.density, &catalogue, n_catalogue, &detected)?;
    let models = opts
        .models
        .iter()
        .zip(&detected)
        .enumerate()
        .map(|(m, (model, det))| score_model(m, model, det, &estimator, &catalogue, &opts))
        .collect::<Result<Vec<_>>>()?;
    let (factor, widths) = match &estimator {
        Estimator::Kernel(k) => (k.bandwidth.factor, kernel_widths(&opts.space, &k.bandwidth)),
        Estimator::Binned(_) => (f64::NAN, Vec::new()),
    };
    Ok(Comparison {
        n_observed: catalogue.len(),
        space: opts.space.names(),
        density: estimator.name(),
        frame,
        bandwidth_factor: factor,
        bandwidth: widths,
        models,
        catalogue_ids: opts.observed.ids.clone(),
        catalogue_weights: opts.observed.weight.clone(),
        catalogue,
        selection: opts.selection.key(),
    })
}

fn kernel_widths(space: &Space, bw: &Bandwidth) -> Vec<f64> {
    let (mut lin, mut ang) = (0, 0);
    space
        .coordinates()
        .iter()
        .map(|c| {
            if *c == Coordinate::Angle {
                ang += 1;
                (1.0 / bw.kappa[ang - 1].sqrt()).to_degrees()
            } else {
                lin += 1;
                bw.covariance[(lin - 1, lin - 1)].sqrt()
            }
        })
        .collect()
}
