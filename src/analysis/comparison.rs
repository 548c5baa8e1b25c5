//! The model comparison's output product: file names, columns, writing and reading of
//! `models.*`, `marginals.*`, `detected.*` (each model's detected objects in the space, with
//! weights), `catalogue.*` (the catalogue in the space), `goodness_of_fit.*` (ln L of every
//! synthetic catalogue) and `summary.json`, and the plain-language conclusion. `seine compare-models` writes through it; `seine report` reads through it.

use std::path::{Path, PathBuf};

use super::compare::{Comparison, ModelScore};
use crate::error::{Error, Result};
use crate::io::out_dir::{OutDir, col, find_table, finite_or_empty};
use crate::io::table::{Columns, read_table};

pub const MODELS: &str = "models";
pub const MARGINALS: &str = "marginals";
pub const DETECTED: &str = "detected";
pub const CATALOGUE: &str = "catalogue";
pub const GOODNESS_OF_FIT: &str = "goodness_of_fit";

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
            col("gof_p", finite_or_empty(num(|s| s.gof_p))),
            col("gof_p_error", finite_or_empty(num(|s| s.gof_p_error))),
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
            col("p_value", finite_or_empty(marg(|t| t.p_value))),
            col("p_value_error", finite_or_empty(marg(|t| t.p_error))),
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
    let mut cols = vec![
        col("id", c.catalogue_ids.clone()),
        col("weight", c.catalogue_weights.clone()),
    ];
    for (k, name) in c.space.iter().enumerate() {
        cols.push(col(name, c.catalogue.iter().map(|x| x[k]).collect::<Vec<f64>>()));
    }
    let catalogue = out.write(CATALOGUE, cols)?;
    let nulls: Vec<(&ModelScore, f64)> = m
        .iter()
        .flat_map(|s| s.null_log_likelihood.iter().map(move |l| (s, *l)))
        .collect();
    let gof = out.write(
        GOODNESS_OF_FIT,
        vec![
            col(
                "model",
                nulls.iter().map(|(s, _)| s.name.clone()).collect::<Vec<String>>(),
            ),
            col(
                "synthetic_log_likelihood",
                nulls.iter().map(|n| n.1).collect::<Vec<f64>>(),
            ),
        ],
    )?;
    let summary = out.summary(summary_json(c), &conclusion(c))?;
    Ok(vec![models, marginals, detected, catalogue, gof, summary])
}

fn summary_json(c: &Comparison) -> serde_json::Value {
    let d = deltas(c);
    serde_json::json!({
        "command": "compare-models",
        "observed": c.n_observed,
        "space": c.space,
        "density": c.density,
        "frame": c.frame.name(),
        "selection": c.selection,
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
            if s.gof_p.is_finite() {
                t + &format!(", goodness of fit p = {:.3} ± {:.3}", s.gof_p, s.gof_p_error)
            } else {
                t + ", goodness of fit withheld"
            }
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
    find_table(dir, MODELS)
}

/// Read `models.*` as written above.
pub fn read_models(path: &Path) -> Result<Vec<ModelRow>> {
    let df = read_table(path)?;
    let c = Columns::new(&df, path);
    let names = c.str("model")?;
    let f = |n: &str| c.f64(n);
    let (p, pe) = (withheld_as_nan(&c, "gof_p")?, withheld_as_nan(&c, "gof_p_error")?);
    let (n, k, ll, lle, d, de) = (
        f("n_objects")?,
        f("n_detected")?,
        f("log_likelihood")?,
        f("log_likelihood_error")?,
        f("delta_log_likelihood_vs_best")?,
        f("delta_log_likelihood_error")?,
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

/// A row of `marginals.*`: one model's one-sample test of one observable.
#[derive(Debug, Clone, PartialEq)]
pub struct MarginalRow {
    pub model: String,
    pub observable: String,
    pub test: String,
    pub statistic: f64,
    pub p_value: f64,
    pub p_value_error: f64,
}

/// Points in the comparison's space: the catalogue, or one model's detected objects.
#[derive(Debug, Clone, PartialEq)]
pub struct Sample {
    /// The model's name; empty for the catalogue.
    pub model: String,
    pub ids: Vec<i64>,
    pub weights: Vec<f64>,
    /// One column per observable, in the order of `Read::space`.
    pub columns: Vec<Vec<f64>>,
}

/// A comparison directory as written above: the tables a report needs. `catalogue` and
/// `null` are None for a directory written before those files existed.
#[derive(Debug, Clone, PartialEq)]
pub struct Read {
    pub models: Vec<ModelRow>,
    pub marginals: Vec<MarginalRow>,
    /// The observables of the space (column names, units in the names).
    pub space: Vec<String>,
    pub detected: Vec<Sample>,
    pub catalogue: Option<Sample>,
    /// Each model's synthetic-catalogue ln L, in the order of `models`.
    pub null: Option<Vec<(String, Vec<f64>)>>,
}

/// Read the comparison written into `dir` (its `models.*` must exist).
pub fn read(dir: &Path) -> Result<Read> {
    let missing = |stem: &str| Error::input(format!("{}: no {stem}.parquet or {stem}.csv", dir.display()));
    let models = read_models(&find(dir).ok_or_else(|| missing(MODELS))?)?;
    let marginals = read_marginals(&find_table(dir, MARGINALS).ok_or_else(|| missing(MARGINALS))?)?;
    let (space, detected) = read_samples(&find_table(dir, DETECTED).ok_or_else(|| missing(DETECTED))?, true)?;
    let catalogue = match find_table(dir, CATALOGUE) {
        Some(p) => {
            let (names, mut cat) = read_samples(&p, false)?;
            if names != space {
                return Err(Error::input(format!(
                    "{}: observables {} differ from those of the detected objects ({})",
                    p.display(),
                    names.join(", "),
                    space.join(", ")
                )));
            }
            cat.pop()
        }
        None => None,
    };
    let null = find_table(dir, GOODNESS_OF_FIT)
        .map(|p| read_null(&p, &models))
        .transpose()?;
    for s in &detected {
        if !models.iter().any(|m| m.model == s.model) {
            return Err(Error::input(format!(
                "{}: detected objects of model `{}`, which models.* does not list",
                dir.display(),
                s.model
            )));
        }
    }
    Ok(Read {
        models,
        marginals,
        space,
        detected,
        catalogue,
        null,
    })
}

/// A chance column whose empty cells are chances a run withheld (tables written before the
/// models' objects went through the catalogue's fit and cut, when a fitted or cut catalogue's
/// chances were not calibrated).
fn withheld_as_nan(c: &Columns, name: &str) -> Result<Vec<f64>> {
    Ok(c.f64_nullable(name)?
        .into_iter()
        .map(|x| x.unwrap_or(f64::NAN))
        .collect())
}

fn read_marginals(path: &Path) -> Result<Vec<MarginalRow>> {
    let df = read_table(path)?;
    let c = Columns::new(&df, path);
    let (model, obs, test) = (c.str("model")?, c.str("observable")?, c.str("test")?);
    let t = c.f64("statistic")?;
    let (p, pe) = (withheld_as_nan(&c, "p_value")?, withheld_as_nan(&c, "p_value_error")?);
    Ok((0..model.len())
        .map(|i| MarginalRow {
            model: model[i].clone(),
            observable: obs[i].clone(),
            test: test[i].clone(),
            statistic: t[i],
            p_value: p[i],
            p_value_error: pe[i],
        })
        .collect())
}

/// `detected.*` (per model, `with_model`) or `catalogue.*`: the space's columns are all but
/// `model`, `id` and `weight`.
fn read_samples(path: &Path, with_model: bool) -> Result<(Vec<String>, Vec<Sample>)> {
    let df = read_table(path)?;
    let c = Columns::new(&df, path);
    let space: Vec<String> = df
        .get_column_names()
        .iter()
        .map(|s| s.to_string())
        .filter(|n| !["model", "id", "weight"].contains(&n.as_str()))
        .collect();
    if space.is_empty() {
        return Err(Error::input(format!("{}: no observable columns", path.display())));
    }
    let models = if with_model {
        c.str("model")?
    } else {
        vec![String::new(); df.height()]
    };
    let (ids, weights) = (c.i64("id")?, c.f64("weight")?);
    let values = space.iter().map(|n| c.f64(n)).collect::<Result<Vec<_>>>()?;
    let mut out: Vec<Sample> = Vec::new();
    for i in 0..ids.len() {
        if !(weights[i] >= 0.0 && weights[i].is_finite()) {
            return Err(Error::input(format!(
                "{}: row {}: expected a finite weight ≥ 0, found {}",
                path.display(),
                i + 1,
                weights[i]
            )));
        }
        let k = match out.iter().position(|s| s.model == models[i]) {
            Some(k) => k,
            None => {
                out.push(Sample {
                    model: models[i].clone(),
                    ids: Vec::new(),
                    weights: Vec::new(),
                    columns: vec![Vec::new(); space.len()],
                });
                out.len() - 1
            }
        };
        let s = &mut out[k];
        s.ids.push(ids[i]);
        s.weights.push(weights[i]);
        for (col, v) in s.columns.iter_mut().zip(&values) {
            col.push(v[i]);
        }
    }
    Ok((space, out))
}

fn read_null(path: &Path, models: &[ModelRow]) -> Result<Vec<(String, Vec<f64>)>> {
    let df = read_table(path)?;
    let c = Columns::new(&df, path);
    let (names, ll) = (c.str("model")?, c.f64("synthetic_log_likelihood")?);
    let mut out: Vec<(String, Vec<f64>)> = models.iter().map(|m| (m.model.clone(), Vec::new())).collect();
    for (n, l) in names.iter().zip(ll) {
        let Some(k) = out.iter().position(|(m, _)| m == n) else {
            return Err(Error::input(format!(
                "{}: synthetic catalogues of model `{n}`, which models.* does not list",
                path.display()
            )));
        };
        out[k].1.push(l);
    }
    Ok(out)
}
