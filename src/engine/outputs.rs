//! Observe's output product (besides the discoveries table, `discoveries.rs`): the file names
//! of `DIR/objects.*` (one row per input object with its outcome), `DIR/detections.*` (one
//! row per object and visit in the field) and `DIR/summary.json` (`summary.rs`), where they
//! are in a directory, and reading them back for the report. `run.rs` and `merge.rs` write
//! them under these names.

use std::path::{Path, PathBuf};

use crate::error::Result;
use crate::io::table::{Columns, Format, read_table};
use crate::population::objects::ObjectTable;

/// File stems of the two tables, and the summary's file name.
pub const OBJECTS: &str = "objects";
pub const DETECTIONS: &str = "detections";
pub use crate::io::out_dir::SUMMARY;

/// The path of table `stem` in `dir` for a format.
pub fn path(dir: &Path, stem: &str, format: Format) -> PathBuf {
    dir.join(format!("{stem}.{}", format.extension()))
}

/// Table `stem` in `dir`, Parquet first, when there is one.
pub fn find(dir: &Path, stem: &str) -> Option<PathBuf> {
    [Format::Parquet, Format::Csv]
        .into_iter()
        .map(|f| path(dir, stem, f))
        .find(|p| p.exists())
}

/// The per-object columns a reader of `objects.*` uses (the report's figures).
pub struct Observed {
    pub id: Vec<i64>,
    pub a_au: Vec<f64>,
    pub q_au: Vec<f64>,
    pub inc_deg: Vec<f64>,
    pub h_mag: Vec<f64>,
    /// Heliocentric distance at the element epoch, AU.
    pub r_au: Vec<f64>,
    pub varpi_deg: Vec<f64>,
    pub node_deg: Vec<f64>,
    /// The objects' weights (importance sampling; 1 when the table has none).
    pub weight: Vec<f64>,
    pub detected: Vec<bool>,
    pub discovery_r_au: Vec<Option<f64>>,
    pub discovery_radec_deg: Vec<Option<(f64, f64)>>,
    /// The simulation particle each clone came from (`seine draw` with an `[import]` spec).
    pub parent_id: Option<Vec<i64>>,
}

/// The columns of `detections.*` a reader uses: one entry per object and visit in the field.
pub struct Detections {
    pub survey: Vec<String>,
    pub visit_id: Vec<i64>,
    pub mag: Vec<f64>,
    pub rate_arcsec_per_hr: Vec<f64>,
    pub detected: Vec<bool>,
}

fn bools(c: &Columns, name: &str) -> Result<Vec<bool>> {
    Ok(c.f64(name)?.into_iter().map(|x| x != 0.0).collect())
}

/// Read `objects.*`: the objects (checked as any objects table) with their outcome.
pub fn read_objects(path: &Path) -> Result<Observed> {
    let t = ObjectTable::read(path)?;
    let c = Columns::new(&t.frame, path);
    let el = &t.elements;
    let ra = c.f64_nullable("discovery_ra_deg")?;
    let dec = c.f64_nullable("discovery_dec_deg")?;
    Ok(Observed {
        id: t.ids.clone(),
        a_au: el.iter().map(|e| e.a_au).collect(),
        q_au: el.iter().map(|e| e.q_au()).collect(),
        inc_deg: el.iter().map(|e| e.inc_rad.to_degrees()).collect(),
        h_mag: t.h_mag.clone(),
        r_au: el.iter().map(|e| e.to_state().0.norm()).collect(),
        varpi_deg: el.iter().map(|e| e.varpi().to_degrees()).collect(),
        node_deg: el.iter().map(|e| e.node_rad.to_degrees().rem_euclid(360.0)).collect(),
        weight: t.weight.clone(),
        detected: bools(&c, "detected")?,
        discovery_r_au: c.f64_nullable("discovery_r_au")?,
        discovery_radec_deg: ra.iter().zip(&dec).map(|(a, d)| a.zip(*d)).collect(),
        parent_id: if c.has("parent_id") {
            Some(c.i64("parent_id")?)
        } else {
            None
        },
    })
}

/// Read `detections.*`.
pub fn read_detections(path: &Path) -> Result<Detections> {
    let df = read_table(path)?;
    let c = Columns::new(&df, path);
    Ok(Detections {
        survey: c.str("survey")?,
        visit_id: c.i64("visit_id")?,
        mag: c.f64("mag")?,
        rate_arcsec_per_hr: c.f64("rate_arcsec_per_hr")?,
        detected: bools(&c, "detected")?,
    })
}
