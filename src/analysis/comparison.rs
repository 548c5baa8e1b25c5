//! The model comparison's output product: file names, columns, writing and reading of
//! `models.*`, `marginals.*`, `detected.*` and `summary.json`, and the plain-language
//! conclusion. `seine compare-models` writes through it; `seine report` reads through it.

use std::path::{Path, PathBuf};

use super::compare::{Comparison, ModelScore};
use crate::error::{Error, Result};
use crate::io::out_dir::{OutDir, col};
use crate::io::table::{Columns, read_table};

pub const MODELS: &str = "models";
pub const MARGINALS: &str = "marginals";
pub const DETECTED: &str = "detected";

/// Δ ln L of each model to the best, and its model-sample error (0 for the best itself).
fn deltas(c: &Comparison) -> Vec<(f64, f64)> {
    let best = best_model(c);
    c.models
        .iter()
        .enumerate()
        .map(|(k, s)| {
            let b = &c.models[best];
            let err = if k == best {
                0.0
            } else {
                s.log_likelihood_error.hypot(b.log_likelihood_error)
            };
            (s.log_likelihood - b.log_likelihood, err)
        })
        .collect()
}

fn best_model(c: &Comparison) -> usize {
    (0..c.models.len())
        .max_by(|a, b| c.models[*a].log_likelihood.total_cmp(&c.models[*b].log_likelihood))
        .unwrap_or(0)
}

/// Write the three tables and `summary.json`; returns the paths written.
pub fn write(out: &OutDir, c: &Comparison) -> Result<Vec<PathBuf>> {
    let m = &c.models;
    let ext = |f: fn(&super::compare::Extended) -> f64| {
        m.iter()
            .map(|s| s.extended.as_ref().map_or(f64::NAN, f))
            .collect::<Vec<f64>>()
    };
    let num = |f: fn(&ModelScore) -> f64| m.iter().map(f).collect::<Vec<f64>>();
    let d = deltas(c);
    let models = out.write(
        MODELS,
        vec![
            col("model", m.iter().map(|s| s.name.clone()).collect::<Vec<String>>()),
            col("n_objects", m.iter().map(|s| s.n_objects as u64).collect::<Vec<u64>>()),
            col(
                "n_detected",
                m.iter().map(|s| s.n_detected as u64).collect::<Vec<u64>>(),
            ),
            col("detected_fraction", num(|s| s.detected.fraction)),
            col("detected_n_eff", num(|s| s.detected.n_eff)),
            col("detected_wilson_lo", num(|s| s.detected.lower)),
            col("detected_wilson_hi", num(|s| s.detected.upper)),
            col("log_likelihood", num(|s| s.log_likelihood)),
            col("log_likelihood_error", num(|s| s.log_likelihood_error)),
            col(
                "delta_log_likelihood_vs_best",
                d.iter().map(|x| x.0).collect::<Vec<f64>>(),
            ),
            col(
                "delta_log_likelihood_error",
                d.iter().map(|x| x.1).collect::<Vec<f64>>(),
            ),
            col("expected_detections", ext(|e| e.expected)),
            col("expected_detections_error", ext(|e| e.expected_error)),
            col("log_poisson", ext(|e| e.log_poisson)),
            col("log_likelihood_extended", ext(|e| e.log_likelihood)),
            col("log_likelihood_extended_error", ext(|e| e.log_likelihood_error)),
            col("gof_p", num(|s| s.gof_p)),
            col("gof_p_error", num(|s| s.gof_p_error)),
        ],
    )?;
    let rows: Vec<(&ModelScore, usize)> = m
        .iter()
        .flat_map(|s| (0..s.marginals.len()).map(move |k| (s, k)))
        .collect();
    let marg = |f: fn(&super::compare::MarginalTest) -> f64| {
        rows.iter().map(|(s, k)| f(&s.marginals[*k])).collect::<Vec<f64>>()
    };
    let marginals = out.write(
        MARGINALS,
        vec![
            col(
                "model",
                rows.iter().map(|(s, _)| s.name.clone()).collect::<Vec<String>>(),
            ),
            col(
                "observable",
                rows.iter()
                    .map(|(s, k)| s.marginals[*k].observable.to_string())
                    .collect::<Vec<String>>(),
            ),
            col(
                "test",
                rows.iter()
                    .map(|(s, k)| s.marginals[*k].statistic.name().to_string())
                    .collect::<Vec<String>>(),
            ),
            col("statistic", marg(|t| t.value)),
            col("p_value", marg(|t| t.p_value)),
            col("p_value_error", marg(|t| t.p_error)),
        ],
    )?;
    let pts: Vec<(&ModelScore, usize)> = m
        .iter()
        .flat_map(|s| (0..s.points.len()).map(move |i| (s, i)))
        .collect();
    let mut cols = vec![
        col(
            "model",
            pts.iter().map(|(s, _)| s.name.clone()).collect::<Vec<String>>(),
        ),
        col("id", pts.iter().map(|(s, i)| s.ids[*i]).collect::<Vec<i64>>()),
        col("weight", pts.iter().map(|(s, i)| s.weights[*i]).collect::<Vec<f64>>()),
    ];
    for (k, name) in c.space.iter().enumerate() {
        cols.push(col(
            name,
            pts.iter().map(|(s, i)| s.points[*i][k]).collect::<Vec<f64>>(),
        ));
    }
    let detected = out.write(DETECTED, cols)?;
    let summary = out.summary(summary_json(c), &conclusion(c))?;
    Ok(vec![models, marginals, detected, summary])
}

fn summary_json(c: &Comparison) -> serde_json::Value {
    let d = deltas(c);
    serde_json::json!({
        "command": "compare-models",
        "observed": c.n_observed,
        "space": c.space,
        "density": c.density,
        "frame": c.frame.name(),
        "bandwidth": {
            "rule": "one kernel for all models: covariance of the equal-weight mixture of their detected objects × h², h = n_observed^(-1/(d+4))",
            "factor": c.bandwidth_factor,
            "widths": c.space.iter().zip(&c.bandwidth).map(|(n, w)| serde_json::json!({"observable": n, "sigma": w, "unit": width_unit(n)})).collect::<Vec<_>>(),
        },
        "goodness_of_fit": "lower tail: p = (1 + #{ln L* ≤ ln L})/(1 + synthetic), synthetic catalogues resampled from each model's detected objects by weight, scored without their own objects",
        "models": c.models.iter().zip(&d).map(|(s, (delta, err))| serde_json::json!({
            "name": s.name, "objects": s.n_objects, "detected": s.n_detected,
            "detected_fraction": s.detected.fraction,
            "log_likelihood": s.log_likelihood, "log_likelihood_error": s.log_likelihood_error,
            "delta_log_likelihood_vs_best": delta, "delta_log_likelihood_error": err,
            "expected_detections": s.extended.map(|e| e.expected),
            "log_likelihood_extended": s.extended.map(|e| e.log_likelihood),
            "gof_p": s.gof_p, "gof_p_error": s.gof_p_error,
        })).collect::<Vec<_>>(),
    })
}

/// The unit of a kernel width: working units (ln for scale variables, degrees for angles).
fn width_unit(name: &str) -> &'static str {
    match name {
        "a_au" | "q_au" | "Q_au" => "natural log",
        "e" => "dimensionless",
        "h_mag" => "mag",
        _ => "deg",
    }
}

/// Δ ln L as a likelihood ratio; beyond f64 as a power of ten.
fn ratio(d: f64) -> String {
    if d.exp().is_finite() {
        format!("{:.3e}", d.exp())
    } else if d.is_finite() {
        format!("10^{:.0}", d / std::f64::consts::LN_10)
    } else {
        "unbounded: the other model gives the catalogue zero density".to_string()
    }
}

/// One plain paragraph with the numbers.
pub fn conclusion(c: &Comparison) -> String {
    let fits: Vec<String> = c
        .models
        .iter()
        .map(|s| {
            let mut t = format!(
                "{}: {} of {} detected ({:.3}% weighted), ln L = {:.2} ± {:.2}",
                s.name,
                s.n_detected,
                s.n_objects,
                100.0 * s.detected.fraction,
                s.log_likelihood,
                s.log_likelihood_error
            );
            if let Some(e) = s.extended {
                t += &format!(
                    ", {:.1} ± {:.1} discoveries expected, extended ln L = {:.2} ± {:.2}",
                    e.expected, e.expected_error, e.log_likelihood, e.log_likelihood_error
                );
            }
            t + &format!(", goodness of fit p = {:.3} ± {:.3}", s.gof_p, s.gof_p_error)
        })
        .collect();
    let mut s = format!(
        "seine compare-models: {} observed objects, {} density in ({}), {} elements.\n  {}.",
        c.n_observed,
        c.density,
        c.space.join(", "),
        c.frame.name(),
        fits.join(".\n  ")
    );
    if c.models.len() >= 2 {
        let mut order: Vec<&ModelScore> = c.models.iter().collect();
        order.sort_by(|a, b| b.log_likelihood.total_cmp(&a.log_likelihood));
        let d = order[0].log_likelihood - order[1].log_likelihood;
        let err = order[0].log_likelihood_error.hypot(order[1].log_likelihood_error);
        s += &if d > 2.0 * err || !err.is_finite() {
            format!(
                "\n  {} is favoured over {} by Δln L = {d:.2} ± {err:.2} (likelihood ratio {}).",
                order[0].name,
                order[1].name,
                ratio(d)
            )
        } else {
            format!(
                "\n  {} and {} are not distinguished: Δln L = {d:.2} is within twice its model-sample error \
                 ({err:.2}); simulate more objects to resolve it.",
                order[0].name, order[1].name
            )
        };
    }
    s += "\n  Goodness of fit: lower tail (a small p says the catalogue lies where the model's detected \
          objects are rare).";
    s
}

/// A row of `models.*` as the report shows it.
#[derive(Debug, Clone, PartialEq)]
pub struct ModelRow {
    pub model: String,
    pub n_objects: u64,
    pub n_detected: u64,
    pub log_likelihood: f64,
    pub log_likelihood_error: f64,
    pub delta: f64,
    pub delta_error: f64,
    pub gof_p: f64,
    pub gof_p_error: f64,
}

/// `models.parquet` (or `.csv`) in `dir`, when there is one.
pub fn find(dir: &Path) -> Option<PathBuf> {
    ["parquet", "csv"]
        .iter()
        .map(|e| dir.join(format!("{MODELS}.{e}")))
        .find(|p| p.is_file())
}

/// Read `models.*` as written above.
pub fn read_models(path: &Path) -> Result<Vec<ModelRow>> {
    let df = read_table(path)?;
    let c = Columns::new(&df, path);
    let names = c.str("model")?;
    let f = |n: &str| c.f64(n);
    let (n, k, ll, lle, d, de, p, pe) = (
        f("n_objects")?,
        f("n_detected")?,
        f("log_likelihood")?,
        f("log_likelihood_error")?,
        f("delta_log_likelihood_vs_best")?,
        f("delta_log_likelihood_error")?,
        f("gof_p")?,
        f("gof_p_error")?,
    );
    if names.is_empty() {
        return Err(Error::input(format!("{}: no model rows", path.display())));
    }
    Ok((0..names.len())
        .map(|i| ModelRow {
            model: names[i].clone(),
            n_objects: n[i] as u64,
            n_detected: k[i] as u64,
            log_likelihood: ll[i],
            log_likelihood_error: lle[i],
            delta: d[i],
            delta_error: de[i],
            gof_p: p[i],
            gof_p_error: pe[i],
        })
        .collect())
}
