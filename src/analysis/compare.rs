//! Comparing model populations with an observed catalogue: forward-model each model through
//! the surveys, build its detected distribution in an observable space, and score the
//! catalogue by log-likelihood (kernel density or bins), the likelihood ratio between models,
//! a goodness-of-fit p-value per model, and two-sample KS and Anderson–Darling tests on the
//! marginals.
//!
//! Goodness of fit: the fraction of same-size synthetic catalogues, drawn from the model's
//! detected density itself (a smoothed bootstrap), whose log-likelihood under that density is
//! below the observed one. Drawing from the density rather than re-using the detected points
//! keeps a synthetic point from scoring its own kernel. Synthetic catalogue t of model m draws
//! from `run_stream(seed ^ splitmix64(m), Analysis, t)`.

use std::f64::consts::TAU;

use rayon::prelude::*;

use super::likelihood::{Density, DensityKind};
use super::two_sample::{AndersonDarling, Ks, anderson_ksamp, ks_two_sample};
use crate::engine::{Candidates, PreparedSurvey, Record, observe_object};
use crate::error::{Error, Result};
use crate::io::objects::ObjectTable;
use crate::rng::{Purpose, object_stream, run_stream, splitmix64};

/// Observable quantities the space can be built from.
pub const OBSERVABLES: [&str; 9] = [
    "a_au",
    "e",
    "q_au",
    "Q_au",
    "inc_deg",
    "node_deg",
    "argperi_deg",
    "varpi_deg",
    "h_mag",
];

/// Value of an observable for row i of a table.
pub fn observable(t: &ObjectTable, i: usize, name: &str) -> Result<f64> {
    let el = &t.elements[i];
    Ok(match name {
        "a_au" => el.a_au,
        "e" => el.e,
        "q_au" => el.q_au(),
        "Q_au" => el.aphelion_au(),
        "inc_deg" => el.inc.to_degrees(),
        "node_deg" => el.node.to_degrees(),
        "argperi_deg" => el.argperi.to_degrees(),
        "varpi_deg" => (el.node + el.argperi).rem_euclid(TAU).to_degrees(),
        "h_mag" => t.h_mag[i],
        other => {
            return Err(Error::input(format!(
                "--space: unknown observable `{other}`; expected one of {}",
                OBSERVABLES.join(", ")
            )));
        }
    })
}

/// Points of rows `rows` in the space.
pub fn points(t: &ObjectTable, rows: &[usize], space: &[String]) -> Result<Vec<Vec<f64>>> {
    rows.iter()
        .map(|&i| space.iter().map(|n| observable(t, i, n)).collect())
        .collect()
}

/// Rows of a model population that the surveys discover (engine, `Observe` streams).
pub fn detected_rows(t: &ObjectTable, surveys: &[PreparedSurvey], seed: u64) -> Vec<usize> {
    let found: Vec<bool> = (0..t.len())
        .into_par_iter()
        .map_init(Vec::new, |scratch, i| {
            let rng = object_stream(seed, t.ids[i], Purpose::Observe);
            let modes = (Candidates::Indexed, Record::UntilDiscovery);
            observe_object(t, i, surveys, modes, rng, scratch).discovered()
        })
        .collect();
    (0..t.len()).filter(|i| found[*i]).collect()
}

/// Goodness of fit: the fraction of `synthetic` same-size catalogues drawn from the density
/// whose log-likelihood is below the observed one (catalogue t from
/// `run_stream(stream_seed, Analysis, t)`); NaN without synthetic catalogues.
pub fn gof_p(density: &Density, observed: &[Vec<f64>], synthetic: u64, stream_seed: u64) -> f64 {
    if synthetic == 0 {
        return f64::NAN;
    }
    let ll = density.log_likelihood(observed);
    let below = (0..synthetic)
        .into_par_iter()
        .filter(|t| {
            let mut rng = run_stream(stream_seed, Purpose::Analysis, *t);
            let cat: Vec<Vec<f64>> = (0..observed.len()).map(|_| density.sample(&mut rng)).collect();
            density.log_likelihood(&cat) < ll
        })
        .count();
    below as f64 / synthetic as f64
}

/// One model's score.
#[derive(Debug, Clone, PartialEq)]
pub struct ModelScore {
    pub name: String,
    pub n_objects: usize,
    pub n_detected: usize,
    pub weighted_detected_fraction: f64,
    pub log_likelihood: f64,
    pub gof_p: f64,
    pub gof_p_error: f64,
    /// Per observable: KS and Anderson–Darling of the observed vs the detected marginal.
    pub marginals: Vec<(String, Ks, AndersonDarling)>,
    /// The detected points (for tables and figures).
    pub detected: Vec<Vec<f64>>,
    pub detected_ids: Vec<i64>,
}

/// Score one model against the observed points.
#[allow(clippy::too_many_arguments)]
pub fn score_model(
    name: &str,
    model: &ObjectTable,
    surveys: &[PreparedSurvey],
    observed: &[Vec<f64>],
    space: &[String],
    kind: &DensityKind,
    synthetic: u64,
    seed: u64,
    model_index: u64,
) -> Result<ModelScore> {
    let rows = detected_rows(model, surveys, seed);
    if rows.len() < 2 {
        return Err(Error::input(format!(
            "model `{name}`: only {} of {} objects detected; a detected distribution needs at least two",
            rows.len(),
            model.len()
        )));
    }
    let pts = points(model, &rows, space)?;
    let w: Vec<f64> = rows.iter().map(|&i| model.weight[i]).collect();
    let density = Density::fit(kind, &pts, &w).map_err(|e| Error::input(format!("model `{name}`: {e}")))?;
    let ll = density.log_likelihood(observed);
    let p = gof_p(&density, observed, synthetic, seed ^ splitmix64(model_index));
    let marginals = (0..space.len())
        .map(|d| {
            let o: Vec<f64> = observed.iter().map(|x| x[d]).collect();
            let m: Vec<f64> = pts.iter().map(|x| x[d]).collect();
            (space[d].clone(), ks_two_sample(&o, &m), anderson_ksamp(&[&o, &m]))
        })
        .collect();
    let total_w: f64 = model.weight.iter().sum();
    Ok(ModelScore {
        name: name.into(),
        n_objects: model.len(),
        n_detected: rows.len(),
        weighted_detected_fraction: w.iter().sum::<f64>() / total_w,
        log_likelihood: ll,
        gof_p: p,
        gof_p_error: (p * (1.0 - p) / synthetic.max(1) as f64).sqrt(),
        marginals,
        detected: pts,
        detected_ids: rows.iter().map(|&i| model.ids[i]).collect(),
    })
}
