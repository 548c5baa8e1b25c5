//! A catalogue on fitted elements, with an orbit-quality cut: how an analysis (`bias-map`,
//! `cluster-test`, `compare-models`, `detectability`) takes the sample a paper would, from an
//! objects or discoveries table written by `observe --fit-orbits`.
//!
//! With `fitted`, the fit's elements and epoch replace `a_au, e, inc_deg, node_deg,
//! argperi_deg, mean_anomaly_deg, epoch_mjd`; the true ones are kept as `true_<name>` (and a
//! `q_au` column, which would contradict the fitted a and e, becomes `true_q_au`). The cut keeps
//! rows with a fitted orbit whose arc, σa/a and class pass; the other rows are left out.

use std::path::Path;

use polars::prelude::*;

use super::columns::element_column;
use super::error_law::ElementErrorLaw;
use super::orbit_fit::OrbitFit;
use super::quality::Quality;
use crate::error::{Error, Result, io_at};
use crate::io::table::read_table;
use crate::population::objects::ObjectTable;

/// The elements an analysis takes and the orbit-quality cut.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Selection {
    /// Take the fitted elements instead of the true ones.
    pub fitted: bool,
    /// Keep fits with an arc at least this long (days).
    pub min_arc_days: Option<f64>,
    /// Keep fits with σa/a at most this.
    pub max_sigma_a_frac: Option<f64>,
    /// Keep fits of these classes (empty: any class but `failed`).
    pub qualities: Vec<Quality>,
}

/// The true elements' columns, in the fit's order, and the epoch.
const TRUE_COLUMNS: [&str; 7] = [
    "a_au",
    "e",
    "inc_deg",
    "node_deg",
    "argperi_deg",
    "mean_anomaly_deg",
    "epoch_mjd",
];

impl Selection {
    /// True when the catalogue is taken as it stands (true elements, no cut).
    pub fn is_plain(&self) -> bool {
        *self == Selection::default()
    }

    /// Read `path` as a catalogue under this selection; also returns how many rows were left out.
    pub fn read(&self, path: &Path) -> Result<(ObjectTable, usize)> {
        if self.is_plain() {
            return Ok((ObjectTable::read(path)?, 0));
        }
        let df = read_table(path)?;
        let keep = self.mask(&df, path)?;
        let left_out = keep.iter().filter(|k| !**k).count();
        let mut df = df
            .filter(&BooleanChunked::from_slice("keep".into(), &keep))
            .map_err(|e| io_at(path, e))?;
        if df.height() == 0 {
            return Err(Error::input(format!(
                "{}: no object has a fitted orbit that passes the cut ({}); loosen it",
                path.display(),
                self.describe()
            )));
        }
        if self.fitted {
            use_fitted_elements(&mut df, path)?;
        }
        Ok((ObjectTable::from_frame(df, path)?, left_out))
    }

    /// The fit's error law of each selected row's a, e, i (rows in `read`'s order), from its
    /// fitted values, `sigma_a_au, sigma_e, sigma_inc_deg` and the correlations among them
    /// (`fit_corr_a_e, fit_corr_a_inc, fit_corr_e_inc`; an empty one, written when a σ is 0,
    /// counts as 0). None for a row whose fit has no covariance (an empty σ).
    pub fn error_laws(&self, path: &Path) -> Result<Vec<Option<ElementErrorLaw>>> {
        let df = read_table(path)?;
        let keep = self.mask(&df, path)?;
        let get = |name: &str| nullable_f64(&df, name, path);
        let mean = [get("fit_a_au")?, get("fit_e")?, get("fit_inc_deg")?];
        let sigma = [get("sigma_a_au")?, get("sigma_e")?, get("sigma_inc_deg")?];
        let corr = [get("fit_corr_a_e")?, get("fit_corr_a_inc")?, get("fit_corr_e_inc")?];
        let law = |i: usize| {
            let m = [mean[0][i]?, mean[1][i]?, mean[2][i]?.to_radians()];
            let s = [sigma[0][i]?, sigma[1][i]?, sigma[2][i]?.to_radians()];
            let r = |k: usize| corr[k][i].unwrap_or(0.0);
            ElementErrorLaw::from_sigmas(m, s, (r(0), r(1), r(2)))
        };
        Ok((0..df.height()).filter(|i| keep[*i]).map(law).collect())
    }

    /// The cut in words, for messages.
    pub fn describe(&self) -> String {
        let mut parts = vec![
            if self.fitted {
                "fitted elements"
            } else {
                "true elements"
            }
            .to_string(),
        ];
        if let Some(d) = self.min_arc_days {
            parts.push(format!("arc ≥ {d} days"));
        }
        if let Some(s) = self.max_sigma_a_frac {
            parts.push(format!("σa/a ≤ {s}"));
        }
        if !self.qualities.is_empty() {
            let names: Vec<&str> = self.qualities.iter().map(|q| q.name()).collect();
            parts.push(format!("class {}", names.join(" or ")));
        }
        parts.join(", ")
    }

    /// Which rows pass: a fitted orbit, and every stated limit.
    fn mask(&self, df: &DataFrame, path: &Path) -> Result<Vec<bool>> {
        let a = nullable_f64(df, "fit_a_au", path)?;
        let sigma_a = nullable_f64(df, "sigma_a_au", path)?;
        let arc = nullable_f64(df, "arc_days", path)?;
        let class = nullable_str(df, "fit_quality", path)?;
        Ok((0..df.height())
            .map(|i| {
                let q = class[i].as_deref().and_then(Quality::parse);
                self.keeps(a[i], sigma_a[i], arc[i], q)
            })
            .collect())
    }

    /// Whether a fit passes: the same rule as a catalogue's rows, for a bias map's trial
    /// (`analysis::trial_selection`).
    pub fn passes(&self, fit: &OrbitFit) -> bool {
        let a = fit.elements.map(|el| el.a_au);
        self.keeps(a, fit.sigma(0), Some(fit.arc_days), Some(fit.quality))
    }

    /// A fitted orbit (a and a class other than `failed`) within every stated limit.
    fn keeps(&self, a: Option<f64>, sigma_a: Option<f64>, arc: Option<f64>, class: Option<Quality>) -> bool {
        let Some(a) = a else { return false };
        let class_ok = match class {
            Some(q) => q != Quality::Failed && (self.qualities.is_empty() || self.qualities.contains(&q)),
            None => false,
        };
        let arc_ok = self.min_arc_days.is_none_or(|d| arc.is_some_and(|x| x >= d));
        let sigma_ok = self
            .max_sigma_a_frac
            .is_none_or(|s| sigma_a.is_some_and(|x| x / a <= s));
        class_ok && arc_ok && sigma_ok
    }
}

/// Move the true elements to `true_<name>` and put the fitted ones in their place.
fn use_fitted_elements(df: &mut DataFrame, path: &Path) -> Result<()> {
    let fitted: Vec<String> = (0..6)
        .map(|k| element_column("fit", k))
        .chain(std::iter::once("fit_epoch_mjd".to_string()))
        .collect();
    for name in TRUE_COLUMNS.iter().chain(&["q_au"]) {
        if df.column(name).is_ok() {
            df.rename(name, format!("true_{name}").into())
                .map_err(|e| io_at(path, e))?;
        }
    }
    for (fit, name) in fitted.iter().zip(TRUE_COLUMNS) {
        let col = df
            .column(fit)
            .map_err(|e| io_at(path, e))?
            .clone()
            .with_name(name.into());
        df.with_column(col).map_err(|e| io_at(path, e))?;
    }
    Ok(())
}

/// A numeric column that may hold empty values; missing column: an error naming the option.
fn nullable_f64(df: &DataFrame, name: &str, path: &Path) -> Result<Vec<Option<f64>>> {
    let s = column(df, name, path)?
        .as_materialized_series()
        .cast(&DataType::Float64)
        .map_err(|e| io_at(path, e))?;
    Ok(s.f64().map_err(|e| io_at(path, e))?.iter().collect())
}

fn nullable_str(df: &DataFrame, name: &str, path: &Path) -> Result<Vec<Option<String>>> {
    let s = column(df, name, path)?
        .as_materialized_series()
        .cast(&DataType::String)
        .map_err(|e| io_at(path, e))?;
    Ok(s.str()
        .map_err(|e| io_at(path, e))?
        .iter()
        .map(|v| v.map(str::to_string))
        .collect())
}

fn column<'a>(df: &'a DataFrame, name: &str, path: &Path) -> Result<&'a Column> {
    df.column(name).map_err(|_| {
        Error::input(format!(
            "{}: no column `{name}`: fitted elements and orbit-quality cuts need a table written by \
             `seine observe --fit-orbits`",
            path.display()
        ))
    })
}
