//! The run's summary (summary.json) and its plain-language conclusion.

use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};

use super::fields::RankedField;
use super::moc::Moc;
use super::tally::RunTally;
use crate::error::{Error, Result};
/// The summary's file name in the output directory (every command's `summary.json`).
pub use crate::io::out_dir::SUMMARY;
use crate::io::table::write_atomic;
use crate::sky::frames::radec_to_ecliptic;

/// What a run was asked for; shards of one run share all of it but `shard`.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RunInfo {
    pub prior: String,
    pub surveys: Vec<String>,
    pub seed: u64,
    pub count: u64,
    /// "K/N", or null for a whole run (and for a merge).
    pub shard: Option<String>,
    pub epoch_mjd_utc: f64,
    pub healpix_order: u8,
    pub field_radius_deg: f64,
    pub n_fields: usize,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct SurveyShare {
    pub survey: String,
    /// Σ w of the draws this survey discovered (additive over shards).
    pub w_discovered: f64,
    pub discovered_fraction: f64,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct CredibleRegion {
    pub level: f64,
    pub n_cells: usize,
    pub area_sq_deg: f64,
    /// Posterior probability inside (≥ level).
    pub probability: f64,
    pub moc_ascii: String,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct BestField {
    pub ra_deg: f64,
    pub dec_deg: f64,
    pub ecl_lon_deg: f64,
    pub ecl_lat_deg: f64,
    pub radius_deg: f64,
    pub p_field: f64,
    pub mean_mag: f64,
    pub depth_90_mag: f64,
    pub mean_rate_arcsec_per_hr: f64,
}

#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct HideoutSummary {
    #[serde(flatten)]
    pub run: RunInfo,
    pub n_draws: u64,
    pub n_excluded: u64,
    pub w_prior: f64,
    /// (Σ w)² / Σ w²: the number of unit-weight draws with the same statistical power.
    #[serde(default)]
    pub n_effective: f64,
    pub w_excluded: f64,
    pub excluded_fraction: f64,
    pub excluded_fraction_err: f64,
    pub surviving_fraction: f64,
    pub per_survey: Vec<SurveyShare>,
    pub region_68: CredibleRegion,
    pub region_95: CredibleRegion,
    pub best_field: Option<BestField>,
    pub seconds: f64,
    pub draws_per_second: f64,
    pub conclusion: String,
}

/// Write `DIR/summary.json`; returns its path.
pub fn write(dir: &Path, s: &HideoutSummary) -> Result<PathBuf> {
    let json = serde_json::to_string_pretty(s).map_err(|e| Error::io(e.to_string()))?;
    let path = dir.join(SUMMARY);
    write_atomic(&path, format!("{json}\n").as_bytes())?;
    Ok(path)
}

/// Whether `dir` holds a summary file.
pub fn is_in(dir: &Path) -> bool {
    dir.join(SUMMARY).is_file()
}

/// Read a finished run's (or shard's) summary.
pub fn read_summary(dir: &Path) -> Result<HideoutSummary> {
    let (path, text) = read_text(dir)?;
    serde_json::from_str(&text).map_err(|e| not_a_summary(&path, &e.to_string()))
}

/// What a merge needs from a shard's summary: its run, draws, per-survey sums and seconds.
/// Read field by field, so a shard with no draws (NaN fractions, written as null) still merges.
pub fn read_shard(dir: &Path) -> Result<(RunInfo, u64, Vec<f64>, f64)> {
    let (path, text) = read_text(dir)?;
    let bad = |what: &str| not_a_summary(&path, what);
    let v: serde_json::Value = serde_json::from_str(&text).map_err(|e| bad(&e.to_string()))?;
    let run: RunInfo = serde_json::from_value(v.clone()).map_err(|e| bad(&e.to_string()))?;
    let n_draws = v["n_draws"].as_u64().ok_or_else(|| bad("no n_draws"))?;
    let w: Option<Vec<f64>> = v["per_survey"]
        .as_array()
        .map(|a| a.iter().map(|p| p["w_discovered"].as_f64()).collect())
        .unwrap_or(None);
    let w = w.ok_or_else(|| bad("no per_survey.w_discovered"))?;
    Ok((run, n_draws, w, v["seconds"].as_f64().unwrap_or(0.0)))
}

fn read_text(dir: &Path) -> Result<(PathBuf, String)> {
    let path = dir.join(SUMMARY);
    let text = std::fs::read_to_string(&path)
        .map_err(|e| Error::input(format!("{}: cannot read a hideout summary: {e}", path.display())))?;
    Ok((path, text))
}

fn not_a_summary(path: &Path, what: &str) -> Error {
    Error::input(format!("{}: not a hideout summary: {what}", path.display()))
}

/// A credible region's summary.
pub fn region(level: f64, moc: &Moc, cells: &[u64], tally: &RunTally) -> CredibleRegion {
    let w: f64 = cells.iter().map(|&c| tally.sky.w_surviving[c as usize]).sum();
    let total: f64 = tally.sky.w_surviving.iter().sum();
    CredibleRegion {
        level,
        n_cells: cells.len(),
        area_sq_deg: moc.area_sq_deg(),
        probability: if total > 0.0 { w / total } else { f64::NAN },
        moc_ascii: moc.to_ascii(),
    }
}

pub fn best_field(f: &RankedField, radius_deg: f64, w_surviving_total: f64) -> BestField {
    let (lon, lat) = radec_to_ecliptic(f.ra_rad, f.dec_rad);
    BestField {
        ra_deg: f.ra_rad.to_degrees(),
        dec_deg: f.dec_rad.to_degrees(),
        ecl_lon_deg: lon.rem_euclid(std::f64::consts::TAU).to_degrees(),
        ecl_lat_deg: lat.to_degrees(),
        radius_deg,
        p_field: f.w_surviving / w_surviving_total,
        mean_mag: f.mean_mag,
        depth_90_mag: f.depth_90_mag,
        mean_rate_arcsec_per_hr: f.mean_rate_arcsec_per_hr,
    }
}

pub fn per_survey(run: &RunInfo, tally: &RunTally) -> Vec<SurveyShare> {
    run.surveys
        .iter()
        .zip(&tally.w_discovered_by)
        .map(|(s, &w)| SurveyShare {
            survey: s.clone(),
            w_discovered: w,
            discovered_fraction: w / tally.total.w,
        })
        .collect()
}

/// The conclusion in plain words, with its numbers.
pub fn conclusion(s: &HideoutSummary) -> String {
    let n = s.run.surveys.len();
    let surveys = if n == 1 {
        "this survey".to_string()
    } else {
        format!("these {n} surveys")
    };
    let found = format!(
        "A planet drawn from this prior would already have been found by {surveys} with probability {}.",
        probability(s)
    );
    let Some(b) = &s.best_field else {
        return format!("{found} No draw survives: the prior is excluded as far as these draws can tell.");
    };
    format!(
        "{found} If it exists, at MJD {:.1} (UTC) it is most likely in the field of radius {:.1}° centred at RA {:.1}°, Dec {:+.1}° \
         (ecliptic longitude {:.1}°, latitude {:+.1}°), which holds {:.1}% of the surviving probability; there it would be at \
         magnitude ≈ {:.1} in the reference band (90% of it brighter than {:.1}), moving ≈ {:.2}\"/hr. \
         The 68% and 95% regions cover {:.0} and {:.0} square degrees.",
        s.run.epoch_mjd_utc,
        b.radius_deg,
        b.ra_deg,
        b.dec_deg,
        b.ecl_lon_deg,
        b.ecl_lat_deg,
        100.0 * b.p_field,
        b.mean_mag,
        b.depth_90_mag,
        b.mean_rate_arcsec_per_hr,
        s.region_68.area_sq_deg,
        s.region_95.area_sq_deg
    )
}

/// The excluded fraction with its error; with no draw found, the 95% upper limit 3/n_eff
/// ("rule of three": Hanley & Lippman-Hand 1983, JAMA 249, 1743; from memory). The report
/// quotes it as the conclusion does.
pub fn probability(s: &HideoutSummary) -> String {
    if s.n_excluded == 0 && s.n_draws > 0 {
        let n = s.n_draws;
        return format!(
            "below {:.2}% (none of {n} draws was found; 95% upper limit)",
            300.0 / s.n_effective
        );
    }
    let (f, e) = (100.0 * s.excluded_fraction, 100.0 * s.excluded_fraction_err);
    // Two significant digits of the error, and the fraction to the same decimal.
    let digits = if e > 0.0 {
        (1.0 - e.log10().floor()).clamp(1.0, 4.0) as usize
    } else {
        1
    };
    format!("{f:.digits$}% ± {e:.digits$}% ({} draws)", s.n_draws)
}
