//! The yield's output product: file names, columns, writing and reading of `yield.*` (every
//! survey's weighted discovered fraction per bin), `yield_cadence.*` (each survey's revisit
//! interval and totals, which `seine report` draws) and `summary.json`, and the conclusion.

use std::collections::HashMap;
use std::path::{Path, PathBuf};

use super::yields::YieldRow;
use crate::engine::PreparedSurvey;
use crate::error::Result;
use crate::io::out_dir::proportion_columns;
use crate::io::out_dir::{OutDir, col};
use crate::io::table::{Columns, read_table};
use crate::statistics::{Proportion, Tally, pct};
use crate::survey::Survey;

pub const YIELD: &str = "yield";
pub const CADENCE: &str = "yield_cadence";

/// One survey's totals over the population.
#[derive(Debug, Clone, PartialEq)]
pub struct Total {
    pub survey: String,
    pub discovered: Proportion,
    pub secured: Proportion,
}

/// `yield_cadence.*`: what one survey (plan) found of one population, with its revisit interval.
#[derive(Debug, Clone, PartialEq)]
pub struct CadenceRow {
    pub plan: String,
    pub population: String,
    /// The median interval between successive nights a field was visited, days.
    pub cadence_days: f64,
    pub n_objects: u64,
    pub n_discovered: u64,
    /// The weighted discovered fraction and its 95% interval.
    pub fraction: f64,
    pub wilson_lo: f64,
    pub wilson_hi: f64,
}

/// Totals per survey (names in order, then "any") from the tallies of `yields::yields`.
pub fn totals(surveys: &[PreparedSurvey], tallies: &[(Tally, Tally)]) -> Vec<Total> {
    surveys
        .iter()
        .map(|s| s.survey.name.clone())
        .chain(["any".to_string()])
        .zip(tallies)
        .map(|(survey, (d, t))| Total {
            survey,
            discovered: d.proportion(),
            secured: t.proportion(),
        })
        .collect()
}

/// Write `yield.*`, `yield_cadence.*` and `summary.json`; returns the paths and the conclusion.
pub fn write(
    out: &OutDir,
    rows: &[YieldRow],
    totals: &[Total],
    cadence: &[CadenceRow],
) -> Result<(Vec<PathBuf>, String)> {
    let props: Vec<Proportion> = rows.iter().map(|r| r.discovered).collect();
    let table = out.write(
        YIELD,
        vec![
            col("survey", rows.iter().map(|r| r.survey.clone()).collect::<Vec<String>>()),
            col(
                "quantity",
                rows.iter().map(|r| r.quantity.to_string()).collect::<Vec<String>>(),
            ),
            col("bin_lo", rows.iter().map(|r| r.lo).collect::<Vec<f64>>()),
            col("bin_hi", rows.iter().map(|r| r.hi).collect::<Vec<f64>>()),
            col("n_objects", rows.iter().map(|r| r.n_objects).collect::<Vec<u64>>()),
            col("secured", rows.iter().map(|r| r.secured).collect::<Vec<u64>>()),
            col(
                "secured_fraction",
                rows.iter().map(|r| r.secured_fraction).collect::<Vec<f64>>(),
            ),
            col(
                "ratio_to_best",
                rows.iter().map(|r| r.ratio_to_best).collect::<Vec<f64>>(),
            ),
        ]
        .into_iter()
        .chain(proportion_columns(&props))
        .collect(),
    )?;
    let cadence_table = out.write(
        CADENCE,
        vec![
            col("plan", cadence.iter().map(|r| r.plan.clone()).collect::<Vec<String>>()),
            col(
                "population",
                cadence.iter().map(|r| r.population.clone()).collect::<Vec<String>>(),
            ),
            col(
                "cadence_days",
                cadence.iter().map(|r| r.cadence_days).collect::<Vec<f64>>(),
            ),
            col("n_objects", cadence.iter().map(|r| r.n_objects).collect::<Vec<u64>>()),
            col(
                "n_discovered",
                cadence.iter().map(|r| r.n_discovered).collect::<Vec<u64>>(),
            ),
            col("fraction", cadence.iter().map(|r| r.fraction).collect::<Vec<f64>>()),
            col("wilson_lo", cadence.iter().map(|r| r.wilson_lo).collect::<Vec<f64>>()),
            col("wilson_hi", cadence.iter().map(|r| r.wilson_hi).collect::<Vec<f64>>()),
        ],
    )?;
    let conclusion = conclusion(totals);
    let best = best_survey(totals);
    let summary = out.summary(
        serde_json::json!({
            "command": "yield",
            "objects": totals.first().map_or(0, |t| t.discovered.n),
            "totals": totals.iter().map(|t| serde_json::json!({
                "survey": t.survey, "discovered": t.discovered.k, "secured": t.secured.k,
                "fraction": t.discovered.fraction, "std_error": t.discovered.std_error,
                "wilson_lo": t.discovered.lower, "wilson_hi": t.discovered.upper,
                "n_eff": t.discovered.n_eff, "secured_fraction": t.secured.fraction,
            })).collect::<Vec<_>>(),
            "best_survey": best,
        }),
        &conclusion,
    )?;
    Ok((vec![table, cadence_table, summary], conclusion))
}

fn best_survey(totals: &[Total]) -> String {
    totals[..totals.len().saturating_sub(1)]
        .iter()
        .max_by(|a, b| a.discovered.fraction.total_cmp(&b.discovered.fraction))
        .map_or(String::new(), |t| t.survey.clone())
}

/// One plain sentence with the numbers (fractions weighted; counts raw).
pub fn conclusion(totals: &[Total]) -> String {
    let n = totals.first().map_or(0, |t| t.discovered.n);
    let list: Vec<String> = totals
        .iter()
        .map(|t| {
            format!(
                "{}: {} discovered ({} ± {}), {} secured",
                t.survey,
                t.discovered.k,
                pct(t.discovered.fraction),
                pct(t.discovered.std_error),
                t.secured.k
            )
        })
        .collect();
    format!(
        "seine yield: {n} objects. {}. Most discoveries: {}.",
        list.join("; "),
        best_survey(totals)
    )
}

/// `yield_cadence` rows: per survey its revisit interval and totals; surveys that never revisit
/// a field have no interval and no row.
pub fn cadence_rows(surveys: &[PreparedSurvey], totals: &[Total], population: &str) -> Vec<CadenceRow> {
    surveys
        .iter()
        .zip(totals)
        .filter_map(|(s, t)| {
            Some(CadenceRow {
                plan: t.survey.clone(),
                population: population.to_string(),
                cadence_days: median_revisit_days(&s.survey)?,
                n_objects: t.discovered.n,
                n_discovered: t.discovered.k,
                fraction: t.discovered.fraction,
                wilson_lo: t.discovered.lower,
                wilson_hi: t.discovered.upper,
            })
        })
        .collect()
}

/// The median interval, in nights, between successive distinct nights on which a field (a
/// pointing centre, to 1″) was visited; fields visited on one night only add nothing.
pub fn median_revisit_days(s: &Survey) -> Option<f64> {
    let v = &s.visits;
    let mut by_field: HashMap<(i64, i64), Vec<i64>> = HashMap::new();
    for i in 0..v.len() {
        let key = (
            (v.ra_deg[i] * 3600.0).round() as i64,
            (v.dec_deg[i] * 3600.0).round() as i64,
        );
        by_field.entry(key).or_default().push(v.night[i]);
    }
    let mut gaps: Vec<i64> = Vec::new();
    for nights in by_field.values_mut() {
        nights.sort_unstable();
        nights.dedup();
        gaps.extend(nights.windows(2).map(|w| w[1] - w[0]));
    }
    gaps.sort_unstable();
    (!gaps.is_empty()).then(|| gaps[gaps.len() / 2] as f64)
}

/// The population's name from the spec `seine draw` stored in a Parquet table (or, failing
/// that, a spec `STEM.toml` beside the table), else the file's stem.
pub fn population_name(objects: &Path) -> String {
    let stem = objects
        .file_stem()
        .map_or("population".into(), |s| s.to_string_lossy().into_owned());
    let stored = crate::io::table::read_parquet_metadata(objects)
        .ok()
        .and_then(|kv| kv.into_iter().find(|(k, _)| k == "seine.population_spec"))
        .map(|(_, text)| text);
    let beside = || std::fs::read_to_string(objects.with_extension("toml")).ok();
    stored
        .or_else(beside)
        .and_then(|text| text.parse::<toml::Table>().ok())
        .and_then(|t| t.get("population")?.get("name")?.as_str().map(String::from))
        .unwrap_or(stem)
}

/// Read `yield_cadence.*`: `plan, cadence_days, n_objects, n_discovered`, optional
/// `population`; optional `fraction, wilson_lo, wilson_hi` (else the unweighted ones).
pub fn read_cadence(path: &Path) -> Result<Vec<CadenceRow>> {
    let df = read_table(path)?;
    let c = Columns::new(&df, path);
    let (plan, cad, n, k) = (
        c.str("plan")?,
        c.f64("cadence_days")?,
        c.i64("n_objects")?,
        c.i64("n_discovered")?,
    );
    let pop = if c.has("population") {
        c.str("population")?
    } else {
        vec!["population".into(); plan.len()]
    };
    let weighted = c.has("fraction") && c.has("wilson_lo") && c.has("wilson_hi");
    let (f, lo, hi) = if weighted {
        (c.f64("fraction")?, c.f64("wilson_lo")?, c.f64("wilson_hi")?)
    } else {
        let p: Vec<Proportion> = (0..plan.len())
            .map(|i| Proportion::new(k[i].max(0) as u64, n[i].max(0) as u64))
            .collect();
        (
            p.iter().map(|x| x.fraction).collect(),
            p.iter().map(|x| x.lower).collect(),
            p.iter().map(|x| x.upper).collect(),
        )
    };
    Ok((0..plan.len())
        .map(|i| CadenceRow {
            plan: plan[i].clone(),
            population: pop[i].clone(),
            cadence_days: cad[i],
            n_objects: n[i].max(0) as u64,
            n_discovered: k[i].max(0) as u64,
            fraction: f[i],
            wilson_lo: lo[i],
            wilson_hi: hi[i],
        })
        .collect())
}
