//! The visits table: one row per exposure (DESIGN.md contract). Required columns `mjd`,
//! `ra_deg`, `dec_deg`, `band`, `depth_mag`; optional `visit_id` (default: the row number,
//! counted from 0), `rotation_deg` (0), `exposure_s` (0: no trailing), `seeing_arcsec` (1.0),
//! `efficiency_class` (the name of one of the spec's `[efficiency.classes.NAME]`; default
//! "default"), `depth_5sigma_mag` (the 5σ limit; default `depth_mag`, see `measure`),
//! `dither_x_deg` and `dither_y_deg` (0: the offset of the camera's dead regions in
//! the focal plane for this visit, see `live_area`). Other columns are ignored, except the former name `block`, refused with a hint.
//! Rows are sorted by (mjd, visit_id).

use std::collections::HashMap;
use std::path::Path;

use nalgebra::Vector3;

use crate::error::{Error, Result};
use crate::io::table::{Columns, read_table};
use crate::ranges::check_column;
use crate::sky::frames::unit_vector;
use crate::sky::observer::Site;
use crate::time::{TimeScale, to_tdb, to_utc};

#[derive(Debug, Clone, Default)]
pub struct Visits {
    pub visit_id: Vec<i64>,
    /// As given, in the survey's time scale.
    pub mjd: Vec<f64>,
    pub utc_mjd: Vec<f64>,
    pub tdb_mjd: Vec<f64>,
    pub ra_deg: Vec<f64>,
    pub dec_deg: Vec<f64>,
    /// ICRS unit vectors of the field centres.
    pub center: Vec<Vector3<f64>>,
    pub band: Vec<u16>,
    pub band_names: Vec<String>,
    pub depth_mag: Vec<f64>,
    pub depth_5sigma_mag: Vec<f64>,
    pub rotation_deg: Vec<f64>,
    pub exposure_s: Vec<f64>,
    pub seeing_arcsec: Vec<f64>,
    pub dither_x_deg: Vec<f64>,
    pub dither_y_deg: Vec<f64>,
    pub efficiency_class: Vec<u16>,
    pub class_names: Vec<String>,
    pub night: Vec<i64>,
}

/// The night of a UTC epoch, counted from local mean noon (DESIGN.md).
pub fn night_of(utc_mjd: f64, longitude_deg: f64) -> i64 {
    (utc_mjd + longitude_deg / 360.0 - 0.5).floor() as i64
}

/// Codes for the distinct strings of a column, in order of first appearance.
fn intern(values: &[String], path: &Path, name: &str) -> Result<(Vec<u16>, Vec<String>)> {
    let mut names: Vec<String> = Vec::new();
    let mut index: HashMap<&str, u16> = HashMap::new();
    let mut codes = Vec::with_capacity(values.len());
    for v in values {
        let code = match index.get(v.as_str()) {
            Some(&c) => c,
            None => {
                let c = u16::try_from(names.len()).map_err(|_| {
                    Error::input(format!(
                        "{}: column `{name}` has more than 65535 distinct values",
                        path.display()
                    ))
                })?;
                names.push(v.clone());
                index.insert(v.as_str(), c);
                c
            }
        };
        codes.push(code);
    }
    Ok((codes, names))
}

impl Visits {
    pub fn len(&self) -> usize {
        self.mjd.len()
    }

    pub fn is_empty(&self) -> bool {
        self.mjd.is_empty()
    }

    /// Read and check a visits table; `site` sets the night numbering (geocentre: longitude 0).
    pub fn read(path: &Path, scale: TimeScale, site: Option<&Site>) -> Result<Visits> {
        let df = read_table(path)?;
        let cols = Columns::new(&df, path);
        if cols.is_empty() {
            return Err(Error::input(format!(
                "{}: the visits table has no rows",
                path.display()
            )));
        }
        let mjd = cols.f64("mjd")?;
        let ra = cols.f64("ra_deg")?;
        let dec = cols.f64("dec_deg")?;
        let band = cols.str("band")?;
        let depth = cols.f64("depth_mag")?;
        for (name, v) in [("mjd", &mjd), ("ra_deg", &ra), ("dec_deg", &dec), ("depth_mag", &depth)] {
            check_column(&cols, name, v)?;
        }
        let visit_id = if cols.has("visit_id") {
            cols.i64("visit_id")?
        } else {
            (0..cols.len() as i64).collect()
        };
        let rotation = cols.f64_or("rotation_deg", 0.0)?;
        let exposure = cols.f64_or("exposure_s", 0.0)?;
        let seeing = cols.f64_or("seeing_arcsec", 1.0)?;
        let depth5 = match cols.f64_opt("depth_5sigma_mag")? {
            Some(d) => d,
            None => depth.clone(),
        };
        let dither_x = cols.f64_or("dither_x_deg", 0.0)?;
        let dither_y = cols.f64_or("dither_y_deg", 0.0)?;
        for (name, v) in [
            ("rotation_deg", &rotation),
            ("exposure_s", &exposure),
            ("seeing_arcsec", &seeing),
            ("depth_5sigma_mag", &depth5),
            ("dither_x_deg", &dither_x),
            ("dither_y_deg", &dither_y),
        ] {
            check_column(&cols, name, v)?;
        }
        if cols.has("block") && !cols.has("efficiency_class") {
            return Err(Error::input(format!(
                "{}: column `block` was renamed `efficiency_class`",
                path.display()
            )));
        }
        let efficiency_class = if cols.has("efficiency_class") {
            cols.str("efficiency_class")?
        } else {
            vec!["default".to_string(); cols.len()]
        };
        let mut seen: HashMap<i64, usize> = HashMap::new();
        for (i, &id) in visit_id.iter().enumerate() {
            if let Some(first) = seen.insert(id, i) {
                return Err(cols.bad_value(
                    i,
                    "visit_id",
                    &format!("a unique id, found {id} again (first at row {})", first + 1),
                ));
            }
        }
        let mut utc = Vec::with_capacity(mjd.len());
        let mut tdb = Vec::with_capacity(mjd.len());
        for (i, &t) in mjd.iter().enumerate() {
            let in_row = |e: Error| Error::input(format!("{} row {}, column `mjd`: {e}", path.display(), i + 1));
            utc.push(to_utc(t, scale).map_err(in_row)?.0);
            tdb.push(to_tdb(t, scale).map_err(in_row)?.0);
        }
        let (band, band_names) = intern(&band, path, "band")?;
        let (efficiency_class, class_names) = intern(&efficiency_class, path, "efficiency_class")?;
        let lon = site.map_or(0.0, |s| s.longitude_deg);
        let mut order: Vec<usize> = (0..mjd.len()).collect();
        order.sort_by(|&a, &b| mjd[a].total_cmp(&mjd[b]).then(visit_id[a].cmp(&visit_id[b])));
        let pick = |v: &[f64]| order.iter().map(|&i| v[i]).collect::<Vec<f64>>();
        let ra_s = pick(&ra);
        let dec_s = pick(&dec);
        let utc_s = pick(&utc);
        Ok(Visits {
            visit_id: order.iter().map(|&i| visit_id[i]).collect(),
            mjd: pick(&mjd),
            tdb_mjd: pick(&tdb),
            center: ra_s
                .iter()
                .zip(&dec_s)
                .map(|(r, d)| unit_vector(r.to_radians(), d.to_radians()))
                .collect(),
            night: utc_s.iter().map(|&t| night_of(t, lon)).collect(),
            utc_mjd: utc_s,
            ra_deg: ra_s,
            dec_deg: dec_s,
            band: order.iter().map(|&i| band[i]).collect(),
            band_names,
            depth_mag: pick(&depth),
            depth_5sigma_mag: pick(&depth5),
            rotation_deg: pick(&rotation),
            exposure_s: pick(&exposure),
            seeing_arcsec: pick(&seeing),
            dither_x_deg: pick(&dither_x),
            dither_y_deg: pick(&dither_y),
            efficiency_class: order.iter().map(|&i| efficiency_class[i]).collect(),
            class_names,
        })
    }
}
