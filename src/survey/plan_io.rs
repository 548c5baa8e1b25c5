//! Writing a plan's outputs: the visits table, the matching survey spec, the coverage report
//! (JSON plus tables) and the MOC. File names derive from the visits path:
//! `STEM.survey.toml`, `STEM.coverage.json`, `STEM.coverage_ecliptic.csv`,
//! `STEM.coverage_nights.csv`, `STEM.moc.json`; and reading the coverage report back (the
//! report's coverage section and each survey's effort).

use std::path::{Path, PathBuf};

use polars::prelude::*;

use super::Survey;
use super::coverage::{Coverage, Pointing, coverage};
use super::planner::{NightLog, Plan, spec_toml};
use super::visits::night_of;
use crate::error::{Result, io_at};
use crate::io::Provenance;
use crate::io::table::{write_atomic, write_table};
use crate::sky::earth::EphemerisGrid;
use crate::sky::horizon::{LocalSky, dark_interval};
use crate::time::MjdUtc;
use std::collections::BTreeMap;

pub struct PlanOutputs {
    pub visits: PathBuf,
    pub spec: PathBuf,
    pub coverage_json: PathBuf,
    pub coverage_ecliptic: PathBuf,
    pub coverage_nights: PathBuf,
    pub moc: PathBuf,
}

impl PlanOutputs {
    pub fn for_visits(visits: &Path) -> PlanOutputs {
        let stem = visits
            .file_stem()
            .map(|s| s.to_string_lossy().into_owned())
            .unwrap_or_else(|| "visits".into());
        Self::with_stem(visits, &stem)
    }

    /// For the coverage of an existing survey: `--out NAME.coverage.json` (or any NAME.json).
    pub fn for_report(json: &Path) -> PlanOutputs {
        let name = json
            .file_name()
            .map(|s| s.to_string_lossy().into_owned())
            .unwrap_or_default();
        let stem = name
            .strip_suffix(".coverage.json")
            .or(name.strip_suffix(".json"))
            .unwrap_or(&name)
            .to_string();
        Self::with_stem(json, &stem)
    }

    fn with_stem(visits: &Path, stem: &str) -> PlanOutputs {
        let sib = |suffix: &str| visits.with_file_name(format!("{stem}{suffix}"));
        PlanOutputs {
            visits: visits.to_path_buf(),
            spec: sib(SURVEY_SPEC),
            coverage_json: sib(COVERAGE_JSON),
            coverage_ecliptic: sib(".coverage_ecliptic.csv"),
            coverage_nights: sib(".coverage_nights.csv"),
            moc: sib(".moc.json"),
        }
    }

    /// The coverage report's JSON and its table by ecliptic latitude (empty when absent).
    pub fn read_coverage(&self) -> Result<(serde_json::Value, DataFrame)> {
        let text = std::fs::read_to_string(&self.coverage_json).map_err(|e| io_at(&self.coverage_json, e))?;
        let json = serde_json::from_str(&text)
            .map_err(|e| crate::Error::input(format!("{}: not valid JSON: {e}", self.coverage_json.display())))?;
        let by_latitude = if self.coverage_ecliptic.exists() {
            crate::io::table::read_table(&self.coverage_ecliptic)?
        } else {
            DataFrame::empty()
        };
        Ok((json, by_latitude))
    }

    /// The telescope hours the plan used (exposures and overheads: the nights table's
    /// `used_hours`), when that table is there.
    pub fn telescope_hours(&self) -> Option<f64> {
        let df = crate::io::table::read_table(&self.coverage_nights).ok()?;
        let hours = crate::io::table::Columns::new(&df, &self.coverage_nights)
            .f64("used_hours")
            .ok()?;
        Some(hours.iter().sum())
    }

    /// The covered area of the coverage report, deg², when there is one.
    pub fn covered_sq_deg(&self) -> Option<f64> {
        let text = std::fs::read_to_string(&self.coverage_json).ok()?;
        let json: serde_json::Value = serde_json::from_str(&text).ok()?;
        json["coverage"]["covered_sq_deg"].as_f64()
    }
}

/// The endings of a plan's survey spec and coverage report beside its visits table
/// (`STEM.survey.toml`, `STEM.coverage.json`).
pub const SURVEY_SPEC: &str = ".survey.toml";
pub const COVERAGE_JSON: &str = ".coverage.json";

fn visits_frame(plan: &Plan) -> Result<DataFrame> {
    let v = &plan.visits;
    let p = &plan.file.plan;
    let n = v.mjd.len();
    let lon = plan.file.site.longitude_deg;
    let cols = vec![
        Column::new("visit_id".into(), (0..n as i64).collect::<Vec<i64>>()),
        Column::new("mjd".into(), v.mjd.clone()),
        Column::new("ra_deg".into(), v.ra_deg.clone()),
        Column::new("dec_deg".into(), v.dec_deg.clone()),
        Column::new("band".into(), vec![p.band.clone(); n]),
        Column::new("depth_mag".into(), v.depth_mag.clone()),
        Column::new("rotation_deg".into(), v.rotation_deg.clone()),
        Column::new("exposure_s".into(), vec![p.exposure_s; n]),
        Column::new("seeing_arcsec".into(), vec![p.seeing_arcsec; n]),
        Column::new("field_id".into(), v.field_id.clone()),
        Column::new(
            "night".into(),
            v.mjd.iter().map(|&t| night_of(t, lon)).collect::<Vec<i64>>(),
        ),
        Column::new("airmass".into(), v.airmass.clone()),
        Column::new("sun_alt_deg".into(), v.sun_alt_deg.clone()),
        Column::new("solar_elongation_deg".into(), v.solar_elongation_deg.clone()),
        Column::new("moon_penalty_mag".into(), v.moon_penalty_mag.clone()),
    ];
    DataFrame::new(n, cols).map_err(|e| crate::Error::io(format!("visits table: {e}")))
}

/// The coverage of a plan's visits.
pub fn plan_coverage(plan: &Plan) -> Coverage {
    let v = &plan.visits;
    let lon = plan.file.site.longitude_deg;
    let pointings: Vec<Pointing> = (0..v.mjd.len())
        .map(|i| Pointing {
            ra_deg: v.ra_deg[i],
            dec_deg: v.dec_deg[i],
            rotation_deg: v.rotation_deg[i],
            depth_mag: v.depth_mag[i],
            night: night_of(v.mjd[i], lon),
            field: v.field_id[i],
        })
        .collect();
    coverage(&plan.footprint, &pointings)
}

/// Write every output of a plan; `plan_path` is recorded in the provenance.
pub fn write_plan(plan: &Plan, plan_path: &Path, out: &PlanOutputs) -> Result<Coverage> {
    let mut prov = Provenance::current().with_seed(plan.file.plan.seed);
    prov.add_input(plan_path)?;
    let cov = plan_coverage(plan);
    let visits_name = out
        .visits
        .file_name()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    let head = serde_json::json!({
        "plan": plan.file.plan.name,
        "n_fields_in_region": plan.fields.len(),
        "field_area_sq_deg": plan.footprint.area_sq_deg(),
        "moon_penalty": plan.file.depth.moon,
        "revisits": super::revisit_check::RevisitCheck::of(plan),
    });
    write_table(&mut visits_frame(plan)?, &out.visits, &prov)?;
    write_atomic(&out.spec, spec_toml(&plan.file, plan_path, &visits_name)?.as_bytes())?;
    write_coverage(&cov, &plan.nights, head, out, &prov)?;
    Ok(cov)
}

/// Write the coverage report: JSON (with `head`'s keys first), the two tables and the MOC.
pub fn write_coverage(
    cov: &Coverage,
    nights: &[NightLog],
    mut head: serde_json::Value,
    out: &PlanOutputs,
    prov: &Provenance,
) -> Result<()> {
    head["coverage"] = serde_json::to_value(cov).map_err(|e| io_at(&out.coverage_json, e))?;
    head["nights"] = serde_json::to_value(nights).map_err(|e| io_at(&out.coverage_json, e))?;
    write_table(&mut lat_frame(cov)?, &out.coverage_ecliptic, prov)?;
    write_table(&mut nights_frame(nights)?, &out.coverage_nights, prov)?;
    let text = serde_json::to_string_pretty(&head).map_err(|e| io_at(&out.coverage_json, e))?;
    write_atomic(&out.coverage_json, text.as_bytes())?;
    write_atomic(&out.moc, cov.moc_json().as_bytes())
}

/// The coverage of an existing survey's visits, with its nights (dark time for Sun below
/// −18° when the spec has a site; time used = the sum of exposure times).
pub fn survey_coverage(s: &Survey) -> Result<(Coverage, Vec<NightLog>)> {
    let v = &s.visits;
    let pointings: Vec<Pointing> = (0..v.len())
        .map(|i| Pointing {
            ra_deg: v.ra_deg[i],
            dec_deg: v.dec_deg[i],
            rotation_deg: v.rotation_deg[i],
            depth_mag: v.depth_mag[i],
            night: v.night[i],
            field: field_key(v.ra_deg[i], v.dec_deg[i]),
        })
        .collect();
    let mut by_night: BTreeMap<i64, (usize, f64)> = BTreeMap::new();
    for i in 0..v.len() {
        let e = by_night.entry(v.night[i]).or_default();
        e.0 += 1;
        e.1 += v.exposure_s[i] / 3600.0;
    }
    // Each night's twilight takes ~100 Sun positions: interpolate them from a grid over the
    // survey's span (as the planner does) rather than summing the series each time.
    // Visits are sorted by time, so their span is first to last.
    let grid = v
        .tdb_mjd
        .first()
        .zip(v.tdb_mjd.last())
        .map(|(lo, hi)| EphemerisGrid::covering(lo - 2.0, hi + 2.0));
    let sun_altitude = |site, utc: f64| -> Result<f64> {
        let utc = MjdUtc(utc);
        let tdb = utc.to_tdb()?.0;
        // `at` evaluates directly outside the grid; no grid means no visits, hence no night.
        let earth = grid
            .as_ref()
            .map_or_else(|| crate::sky::earth::earth_sun_exact(tdb), |g| g.at(tdb));
        Ok(LocalSky::new(site, utc, &earth)?.sun_altitude())
    };
    let nights = by_night
        .into_iter()
        .map(|(night, (n, hours))| {
            let dark = match s.site.as_ref() {
                Some(site) => dark_interval(site, night, -18.0, |t| sun_altitude(site, t))?,
                None => None,
            };
            Ok(NightLog {
                night,
                status: "observed".into(),
                dark_hours: dark.map_or(f64::NAN, |(a, b)| (b - a) * 24.0),
                used_hours: hours,
                n_visits: n,
            })
        })
        .collect::<Result<_>>()?;
    Ok((coverage(&s.footprint, &pointings), nights))
}

/// Visits at the same centre (to 1″) count as one field.
fn field_key(ra_deg: f64, dec_deg: f64) -> i64 {
    let q = |x: f64| (x * 3600.0).round() as i64;
    q(ra_deg) * 1_000_000_000 + q(dec_deg + 90.0)
}

fn lat_frame(cov: &Coverage) -> Result<DataFrame> {
    let b = &cov.by_ecliptic_latitude;
    let col = |f: fn(&super::coverage::LatBin) -> f64| b.iter().map(f).collect::<Vec<f64>>();
    Ok(crate::io::table::frame_f64(vec![
        ("ecl_lat_min_deg", col(|x| x.ecl_lat_min_deg)),
        ("ecl_lat_max_deg", col(|x| x.ecl_lat_max_deg)),
        ("sky_area_sq_deg", col(|x| x.sky_area_sq_deg)),
        ("covered_sq_deg", col(|x| x.covered_sq_deg)),
        ("covered_fraction", col(|x| x.covered_fraction)),
        ("covered_2_nights_sq_deg", col(|x| x.covered_2_nights_sq_deg)),
        ("covered_5_nights_sq_deg", col(|x| x.covered_5_nights_sq_deg)),
    ]))
}

fn nights_frame(n: &[NightLog]) -> Result<DataFrame> {
    let cols = vec![
        Column::new("night".into(), n.iter().map(|x| x.night).collect::<Vec<i64>>()),
        Column::new(
            "status".into(),
            n.iter().map(|x| x.status.clone()).collect::<Vec<String>>(),
        ),
        Column::new(
            "dark_hours".into(),
            n.iter().map(|x| x.dark_hours).collect::<Vec<f64>>(),
        ),
        Column::new(
            "used_hours".into(),
            n.iter().map(|x| x.used_hours).collect::<Vec<f64>>(),
        ),
        Column::new(
            "n_visits".into(),
            n.iter().map(|x| x.n_visits as i64).collect::<Vec<i64>>(),
        ),
    ];
    DataFrame::new(n.len(), cols).map_err(|e| crate::Error::io(format!("nights table: {e}")))
}
