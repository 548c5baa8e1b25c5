//! `seine compare-models`: which model population better explains the observed catalogue
//! once both are seen through the surveys.

use std::path::PathBuf;

use seine::analysis::compare::{ModelScore, points, score_model};
use seine::analysis::likelihood::DensityKind;
use seine::analysis::two_sample::KsMethod;
use seine::io::objects::ObjectTable;
use seine::{Error, Result};

use super::common::*;

#[derive(clap::Args, Debug)]
pub struct Args {
    /// Survey spec (TOML); repeat for several surveys (discovered by any).
    #[arg(long = "survey", required = true)]
    pub surveys: Vec<PathBuf>,
    /// The observed catalogue (objects table).
    #[arg(long)]
    pub observed: PathBuf,
    /// A model population NAME=OBJECTS (e.g. cloned simulation particles); repeat.
    #[arg(long = "model", required = true)]
    pub models: Vec<String>,
    /// Observable space, comma-separated: a_au, e, q_au, Q_au, inc_deg, node_deg, argperi_deg, varpi_deg, h_mag.
    #[arg(long, default_value = "a_au,q_au,inc_deg,varpi_deg")]
    pub space: String,
    /// Density of the detected model objects: kde (Gaussian kernels, Scott's rule) or binned.
    #[arg(long, default_value = "kde")]
    pub density: String,
    /// Binned density: equal-width bins per dimension over the range of all samples.
    #[arg(long, default_value_t = 8)]
    pub bins: usize,
    /// Binned density: pseudo-count added to every bin.
    #[arg(long, default_value_t = 0.5)]
    pub pseudo_count: f64,
    /// Synthetic catalogues per model for the goodness-of-fit p-value.
    #[arg(long, default_value_t = 1000)]
    pub synthetic: u64,
    #[command(flatten)]
    pub run: RunArgs,
}

pub fn run(a: Args) -> Result<()> {
    let space: Vec<String> = a.space.split(',').map(|s| s.trim().to_string()).collect();
    let mut prov = a.run.start()?;
    let surveys = load_surveys(&a.surveys, &mut prov)?;
    let observed = ObjectTable::read(&a.observed)?;
    prov.add_input(&a.observed)?;
    let obs = points(&observed, &(0..observed.len()).collect::<Vec<_>>(), &space)?;
    let mut models = Vec::new();
    for m in &a.models {
        let (name, path) = m
            .split_once('=')
            .ok_or_else(|| Error::input(format!("--model `{m}`: expected NAME=OBJECTS")))?;
        let path = PathBuf::from(path);
        models.push((name.to_string(), ObjectTable::read(&path)?));
        prov.add_input(&path)?;
    }
    let kind = density_kind(&a, &obs, &models, &space)?;
    let out = a.run.out_dir(prov)?;
    let scores = models
        .iter()
        .enumerate()
        .map(|(k, (name, t))| {
            score_model(
                name,
                t,
                &surveys,
                &obs,
                &space,
                &kind,
                a.synthetic,
                a.run.seed,
                k as u64,
            )
        })
        .collect::<Result<Vec<_>>>()?;
    let paths = write_tables(&out, &scores, &space)?;
    let conclusion = conclude(&scores, obs.len());
    let best = scores
        .iter()
        .map(|s| s.log_likelihood)
        .fold(f64::NEG_INFINITY, f64::max);
    let summary = out.summary(
        serde_json::json!({
            "command": "compare-models",
            "observed": obs.len(),
            "space": space,
            "density": a.density,
            "models": scores.iter().map(|s| serde_json::json!({
                "name": s.name, "objects": s.n_objects, "detected": s.n_detected,
                "log_likelihood": s.log_likelihood, "delta_log_likelihood_vs_best": s.log_likelihood - best,
                "gof_p": s.gof_p, "gof_p_error": s.gof_p_error,
            })).collect::<Vec<_>>(),
        }),
        &conclusion,
    )?;
    let mut written: Vec<&std::path::Path> = paths.iter().map(|p| p.as_path()).collect();
    written.push(&summary);
    a.run.report(&conclusion, &written);
    Ok(())
}

/// The density choice; bins span every sample so that all models share one grid.
fn density_kind(a: &Args, obs: &[Vec<f64>], models: &[(String, ObjectTable)], space: &[String]) -> Result<DensityKind> {
    match a.density.as_str() {
        "kde" => Ok(DensityKind::Kde),
        "binned" => {
            if a.bins == 0 || !(a.pseudo_count >= 0.0) {
                return Err(Error::input("--bins ≥ 1 and --pseudo-count ≥ 0 expected"));
            }
            let mut edges = Vec::new();
            for (d, name) in space.iter().enumerate() {
                let mut lo = obs.iter().map(|x| x[d]).fold(f64::INFINITY, f64::min);
                let mut hi = obs.iter().map(|x| x[d]).fold(f64::NEG_INFINITY, f64::max);
                for (_, t) in models {
                    for i in 0..t.len() {
                        let v = seine::analysis::compare::observable(t, i, name)?;
                        (lo, hi) = (lo.min(v), hi.max(v));
                    }
                }
                let hi = if hi > lo { hi } else { lo + 1.0 };
                edges.push(
                    (0..=a.bins)
                        .map(|k| lo + (hi - lo) * k as f64 / a.bins as f64)
                        .collect(),
                );
            }
            Ok(DensityKind::Binned {
                edges,
                pseudo: a.pseudo_count,
            })
        }
        other => Err(Error::input(format!("--density `{other}`: expected kde or binned"))),
    }
}

fn write_tables(out: &OutDir, scores: &[ModelScore], space: &[String]) -> Result<Vec<PathBuf>> {
    let best = scores
        .iter()
        .map(|s| s.log_likelihood)
        .fold(f64::NEG_INFINITY, f64::max);
    let models = out.write(
        "models",
        vec![
            col("model", scores.iter().map(|s| s.name.clone()).collect::<Vec<String>>()),
            col(
                "n_objects",
                scores.iter().map(|s| s.n_objects as u64).collect::<Vec<u64>>(),
            ),
            col(
                "n_detected",
                scores.iter().map(|s| s.n_detected as u64).collect::<Vec<u64>>(),
            ),
            col(
                "weighted_detected_fraction",
                scores
                    .iter()
                    .map(|s| s.weighted_detected_fraction)
                    .collect::<Vec<f64>>(),
            ),
            col(
                "log_likelihood",
                scores.iter().map(|s| s.log_likelihood).collect::<Vec<f64>>(),
            ),
            col(
                "delta_log_likelihood_vs_best",
                scores.iter().map(|s| s.log_likelihood - best).collect::<Vec<f64>>(),
            ),
            col("gof_p", scores.iter().map(|s| s.gof_p).collect::<Vec<f64>>()),
            col(
                "gof_p_error",
                scores.iter().map(|s| s.gof_p_error).collect::<Vec<f64>>(),
            ),
        ],
    )?;
    let m: Vec<(&ModelScore, usize)> = scores
        .iter()
        .flat_map(|s| (0..s.marginals.len()).map(move |d| (s, d)))
        .collect();
    let marginals = out.write(
        "marginals",
        vec![
            col("model", m.iter().map(|(s, _)| s.name.clone()).collect::<Vec<String>>()),
            col(
                "observable",
                m.iter()
                    .map(|(s, d)| s.marginals[*d].0.clone())
                    .collect::<Vec<String>>(),
            ),
            col(
                "ks_statistic",
                m.iter().map(|(s, d)| s.marginals[*d].1.statistic).collect::<Vec<f64>>(),
            ),
            col(
                "ks_p_value",
                m.iter().map(|(s, d)| s.marginals[*d].1.p_value).collect::<Vec<f64>>(),
            ),
            col(
                "ks_method",
                m.iter()
                    .map(|(s, d)| {
                        if s.marginals[*d].1.method == KsMethod::Exact {
                            "exact"
                        } else {
                            "asymptotic"
                        }
                        .to_string()
                    })
                    .collect::<Vec<String>>(),
            ),
            col(
                "ad_statistic",
                m.iter().map(|(s, d)| s.marginals[*d].2.statistic).collect::<Vec<f64>>(),
            ),
            col(
                "ad_significance",
                m.iter()
                    .map(|(s, d)| s.marginals[*d].2.significance)
                    .collect::<Vec<f64>>(),
            ),
        ],
    )?;
    let rows: Vec<(&ModelScore, usize)> = scores
        .iter()
        .flat_map(|s| (0..s.detected.len()).map(move |i| (s, i)))
        .collect();
    let mut cols = vec![
        col(
            "model",
            rows.iter().map(|(s, _)| s.name.clone()).collect::<Vec<String>>(),
        ),
        col("id", rows.iter().map(|(s, i)| s.detected_ids[*i]).collect::<Vec<i64>>()),
    ];
    for (d, name) in space.iter().enumerate() {
        cols.push(col(
            name,
            rows.iter().map(|(s, i)| s.detected[*i][d]).collect::<Vec<f64>>(),
        ));
    }
    let detected = out.write("detected", cols)?;
    Ok(vec![models, marginals, detected])
}

fn conclude(scores: &[ModelScore], n_obs: usize) -> String {
    let mut order: Vec<&ModelScore> = scores.iter().collect();
    order.sort_by(|a, b| b.log_likelihood.total_cmp(&a.log_likelihood));
    let fits: Vec<String> = scores
        .iter()
        .map(|s| {
            format!(
                "{}: {} of {} detected, ln L = {:.2}, goodness-of-fit p = {} ± {}",
                s.name,
                s.n_detected,
                s.n_objects,
                s.log_likelihood,
                pct(s.gof_p),
                pct(s.gof_p_error)
            )
        })
        .collect();
    let mut s = format!(
        "seine compare-models: {n_obs} observed objects.\n  {}.",
        fits.join(".\n  ")
    );
    if order.len() >= 2 {
        let d = order[0].log_likelihood - order[1].log_likelihood;
        // Beyond f64 (Δln L > 709) the ratio is written as a power of ten.
        let ratio = if d.exp().is_finite() {
            format!("{:.3e}", d.exp())
        } else if d.is_finite() {
            format!("10^{:.0}", d / std::f64::consts::LN_10)
        } else {
            "unbounded: the other model gives the catalogue zero density".to_string()
        };
        s += &format!(
            "\n  {} is favoured over {} by Δln L = {:.2} (likelihood ratio {ratio}).",
            order[0].name, order[1].name, d,
        );
    }
    s
}
