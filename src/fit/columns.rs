//! The fit's columns of the objects table (and so of the discoveries table, which takes the
//! objects table's columns): this module owns their names and both writes and reads them.
//!
//! `fit_a_au, fit_e, fit_inc_deg, fit_node_deg, fit_argperi_deg, fit_mean_anomaly_deg,
//! fit_epoch_mjd` (TDB; elements heliocentric or barycentric as the input's, ecliptic J2000),
//! `sigma_a_au, sigma_e, sigma_inc_deg, sigma_node_deg, sigma_argperi_deg,
//! sigma_mean_anomaly_deg` (linear 1σ), `fit_corr_<x>_<y>` (the 15 correlation coefficients of
//! the elements, x before y in that order: a, e, inc, node, argperi, mean_anomaly), `arc_days`,
//! `n_fit_obs`, `fit_chi2` (data only), `fit_quality` (class name) and `fit_prior` (a prior
//! entered; empty for `failed`). Empty (null) for objects not discovered; elements, sigmas, χ² empty for `failed`.

use polars::prelude::*;

use super::orbit_fit::OrbitFit;
use crate::error::{Error, Result};

/// The elements' short names, in covariance order.
pub const ELEMENTS: [&str; 6] = ["a", "e", "inc", "node", "argperi", "mean_anomaly"];
const UNITS: [&str; 6] = ["_au", "", "_deg", "_deg", "_deg", "_deg"];

/// `fit_<element><unit>` and `sigma_<element><unit>` names, in element order.
pub fn element_column(prefix: &str, k: usize) -> String {
    format!("{prefix}_{}{}", ELEMENTS[k], UNITS[k])
}

/// Element k in the table's units (degrees for angles).
fn in_units(k: usize, v: f64) -> f64 {
    if k >= 2 { v.to_degrees() } else { v }
}

/// The fit columns for a chunk's rows (`None`: not discovered).
pub fn columns(fits: &[Option<OrbitFit>]) -> Vec<Column> {
    let col = |name: String, f: &dyn Fn(&OrbitFit) -> Option<f64>| {
        Column::new(
            name.into(),
            fits.iter()
                .map(|x| x.as_ref().and_then(f))
                .collect::<Vec<Option<f64>>>(),
        )
    };
    let mut cols = Vec::new();
    for k in 0..6 {
        cols.push(col(element_column("fit", k), &|f| {
            f.elements.map(|el| {
                let v = el.to_array()[k];
                in_units(k, v)
            })
        }));
    }
    cols.push(col("fit_epoch_mjd".into(), &|f| f.elements.map(|el| el.epoch_mjd_tdb)));
    for k in 0..6 {
        cols.push(col(element_column("sigma", k), &|f| f.sigma(k).map(|s| in_units(k, s))));
    }
    for i in 0..6 {
        for j in i + 1..6 {
            let name = format!("fit_corr_{}_{}", ELEMENTS[i], ELEMENTS[j]);
            cols.push(col(name, &|f| {
                f.covariance
                    .map(|c| c[(i, j)] / (c[(i, i)] * c[(j, j)]).sqrt())
                    .filter(|r| r.is_finite())
            }));
        }
    }
    cols.push(col("arc_days".into(), &|f| Some(f.arc_days)));
    cols.push(Column::new(
        "n_fit_obs".into(),
        fits.iter()
            .map(|x| x.as_ref().map(|f| f.n_obs as i64))
            .collect::<Vec<Option<i64>>>(),
    ));
    cols.push(col("fit_chi2".into(), &|f| Some(f.chi2).filter(|c| c.is_finite())));
    cols.push(Column::new(
        "fit_quality".into(),
        fits.iter()
            .map(|x| x.as_ref().map(|f| f.quality.name().to_string()))
            .collect::<Vec<Option<String>>>(),
    ));
    cols.push(Column::new(
        "fit_prior".into(),
        fits.iter()
            .map(|x| {
                x.as_ref()
                    .filter(|f| f.quality != super::quality::Quality::Failed)
                    .map(|f| f.prior != super::prior::Prior::None)
            })
            .collect::<Vec<Option<bool>>>(),
    ));
    cols
}

/// Append the fit columns to a chunk of the objects table, refusing an input that already
/// has one of them.
pub fn append(df: &mut DataFrame, fits: &[Option<OrbitFit>]) -> Result<()> {
    for c in columns(fits) {
        if df.column(c.name()).is_ok() {
            return Err(Error::input(format!(
                "objects table already has a column `{}`, which observe --fit-orbits writes; rename or drop it",
                c.name()
            )));
        }
        df.with_column(c).map_err(|e| Error::io(e.to_string()))?;
    }
    Ok(())
}
