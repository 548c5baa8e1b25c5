//! `DIR/discoveries.*`, the catalogue an analysis starts from: the objects an observe run
//! discovered, in order of discovery, each with its own columns (the input objects table's)
//! and the circumstances of its discovery. This module owns the file's name and columns and
//! both writes it (observe, merge) and reads it (the report, any analysis).
//!
//! Columns: `id` first (the input's, or its row number when the input had none), then every
//! column of `objects.*` except `detected` (true on every row), in the same order: the input
//! columns, `secured`, `n_in_field`, `n_detected`, `n_nights` and the `discovery_*` columns
//! (`discovery_mjd`, `discovery_survey`, `discovery_mag`, `discovery_ra_deg`,
//! `discovery_dec_deg`, `discovery_r_au`, `discovery_delta_au`,
//! `discovery_rate_arcsec_per_hr`), then the per-survey verdicts. Rows are sorted by
//! `discovery_mjd`, ties by `id`. The table is an objects table (DESIGN contract) as it
//! stands: `bias-map`, `detectability`, `cluster-test` and `compare-models` take it as
//! their catalogue.

use std::path::{Path, PathBuf};

use polars::prelude::*;

use crate::error::{Error, Result, io_at};
use crate::io::provenance::Provenance;
use crate::io::table::{Columns, Format, read_table, write_table};
use crate::population::objects::ObjectTable;

/// File stem: `DIR/discoveries.parquet` (or `.csv`).
pub const STEM: &str = "discoveries";
/// The objects-table column that selects the rows, dropped from the catalogue.
const DETECTED: &str = "detected";
/// The circumstances of a discovery, as the objects table names them.
pub const CIRCUMSTANCES: [&str; 8] = [
    "discovery_mjd",
    "discovery_survey",
    "discovery_mag",
    "discovery_ra_deg",
    "discovery_dec_deg",
    "discovery_r_au",
    "discovery_delta_au",
    "discovery_rate_arcsec_per_hr",
];

/// The table's path in an output directory, for a format.
pub fn path(dir: &Path, format: Format) -> PathBuf {
    dir.join(format!("{STEM}.{}", format.extension()))
}

/// The table in `dir`, Parquet first, when there is one.
pub fn find(dir: &Path) -> Option<PathBuf> {
    [Format::Parquet, Format::Csv]
        .into_iter()
        .map(|f| path(dir, f))
        .find(|p| p.is_file())
}

/// Write `out` from the objects table's parts (in row order, each small enough to hold):
/// the discovered rows of each part, the whole sorted by discovery. Returns the row count.
pub fn write(object_parts: &[PathBuf], out: &Path, provenance: &Provenance) -> Result<usize> {
    let mut found: Option<DataFrame> = None;
    let mut first_row = 0usize;
    for part in object_parts {
        let df = read_table(part)?;
        let rows = df.height();
        let picked = discovered_rows(df, part, first_row)?;
        first_row += rows;
        found = Some(match found {
            None => picked,
            Some(mut all) => {
                all.vstack_mut(&picked).map_err(|e| io_at(part, e))?;
                all
            }
        });
    }
    let Some(found) = found else {
        return Err(Error::io("discoveries: no objects table to read"));
    };
    let mut table = in_discovery_order(found, out)?;
    let n = table.height();
    table.rechunk_mut();
    write_table(&mut table, out, provenance)?;
    Ok(n)
}

/// The rows of one part with `detected` true, `id` first (the row number in the whole table
/// when the input had no `id`), without the `detected` column.
fn discovered_rows(df: DataFrame, part: &Path, first_row: usize) -> Result<DataFrame> {
    let mask = df
        .column(DETECTED)
        .and_then(|c| c.bool().cloned())
        .map_err(|_| Error::io(format!("{}: expected a boolean `{DETECTED}` column", part.display())))?;
    let mut df = if df.column("id").is_ok() {
        df
    } else {
        let ids: Vec<i64> = (0..df.height()).map(|k| (first_row + k) as i64).collect();
        let mut cols = vec![Column::new("id".into(), ids)];
        cols.extend(df.columns().iter().cloned());
        DataFrame::new(df.height(), cols).map_err(|e| io_at(part, e))?
    };
    df = df.filter(&mask).map_err(|e| io_at(part, e))?;
    df.drop_in_place(DETECTED).map_err(|e| io_at(part, e))?;
    Ok(df)
}

/// Sorted by discovery epoch, then id.
fn in_discovery_order(df: DataFrame, out: &Path) -> Result<DataFrame> {
    let c = Columns::new(&df, out);
    let (mjd, id) = (c.f64("discovery_mjd")?, c.i64("id")?);
    let mut order: Vec<IdxSize> = (0..df.height() as IdxSize).collect();
    order.sort_by(|&a, &b| {
        let (a, b) = (a as usize, b as usize);
        mjd[a].total_cmp(&mjd[b]).then(id[a].cmp(&id[b]))
    });
    let idx = IdxCa::from_vec("order".into(), order);
    df.take(&idx).map_err(|e| io_at(out, e))
}

/// One discovery, as the report lists it.
#[derive(Debug, Clone, PartialEq)]
pub struct Discovery {
    pub id: i64,
    pub mjd: f64,
    pub survey: String,
    pub mag: f64,
    pub ra_deg: f64,
    pub dec_deg: f64,
    pub r_au: f64,
    pub delta_au: f64,
    pub rate_arcsec_per_hr: f64,
    pub a_au: f64,
    pub q_au: f64,
    pub inc_deg: f64,
    pub h_mag: f64,
}

/// Read a discoveries table: the objects (checked as any objects table) with their
/// discovery circumstances, in the table's order.
pub fn read(path: &Path) -> Result<Vec<Discovery>> {
    let df = read_table(path)?;
    if df.height() == 0 {
        // An objects table must have rows; a run that found nothing has an empty catalogue.
        let c = Columns::new(&df, path);
        if let Some(name) = CIRCUMSTANCES.into_iter().find(|n| !c.has(n)) {
            return Err(Error::input(format!("{}: missing column `{name}`", path.display())));
        }
        return Ok(Vec::new());
    }
    let objects = ObjectTable::from_frame(df, path)?;
    let c = Columns::new(&objects.frame, path);
    let num = |n: &str| c.f64(n);
    let (mjd, mag, ra, dec) = (
        num("discovery_mjd")?,
        num("discovery_mag")?,
        num("discovery_ra_deg")?,
        num("discovery_dec_deg")?,
    );
    let (r, delta, rate) = (
        num("discovery_r_au")?,
        num("discovery_delta_au")?,
        num("discovery_rate_arcsec_per_hr")?,
    );
    let survey = c.str("discovery_survey")?;
    Ok((0..objects.len())
        .map(|i| {
            let el = &objects.elements[i];
            Discovery {
                id: objects.ids[i],
                mjd: mjd[i],
                survey: survey[i].clone(),
                mag: mag[i],
                ra_deg: ra[i],
                dec_deg: dec[i],
                r_au: r[i],
                delta_au: delta[i],
                rate_arcsec_per_hr: rate[i],
                a_au: el.a_au,
                q_au: el.q_au(),
                inc_deg: el.inc_rad.to_degrees(),
                h_mag: objects.h_mag[i],
            }
        })
        .collect())
}
