//! Credible regions of the posterior map, as IVOA MOCs (`crate::sky::healpix::Moc`: the
//! canonical form and the ASCII and JSON serializations of MOC 2.0), and their files.

use std::path::{Path, PathBuf};

use crate::error::Result;
use crate::io::table::write_atomic;

/// The credible regions' file stems: `DIR/<stem>.moc.txt` (MOC 2.0 ASCII) and `.moc.json`.
pub const REGION_68: &str = "region_68";
pub const REGION_95: &str = "region_95";

/// A survey's covered sky (MOC JSON, as `seine plan` writes it): `DIR/<prefix><survey key><suffix>`.
pub const COVERAGE_PREFIX: &str = "coverage_";
pub const COVERAGE_SUFFIX: &str = ".moc.json";

/// The file name of survey `name`'s coverage.
pub fn coverage_name(name: &str) -> String {
    format!(
        "{COVERAGE_PREFIX}{}{COVERAGE_SUFFIX}",
        crate::engine::run::survey_key(name)
    )
}

/// Read a MOC JSON file (a region's or a survey's coverage).
pub fn read_json(path: &Path) -> Result<Moc> {
    let text = std::fs::read_to_string(path).map_err(|e| crate::error::io_at(path, e))?;
    Moc::from_json(&text).map_err(|e| crate::error::Error::input(format!("{}: {e}", path.display())))
}

/// Write the region `m` under `dir` as `<stem>.moc.txt` and `<stem>.moc.json`; returns the files.
pub fn write_region(dir: &Path, stem: &str, m: &Moc) -> Result<Vec<PathBuf>> {
    let mut files = Vec::new();
    for (kind, text) in [("txt", m.to_ascii()), ("json", m.to_json())] {
        files.push(dir.join(format!("{stem}.moc.{kind}")));
        write_atomic(files.last().expect("just pushed"), format!("{text}\n").as_bytes())?;
    }
    Ok(files)
}

/// The smallest set of cells holding at least `level` of the total weight: cells taken by
/// decreasing weight (ties by cell index, so the set is reproducible). Empty when no weight.
pub fn credible_cells(weights: &[f64], level: f64) -> Vec<u64> {
    let total: f64 = weights.iter().sum();
    if !(total > 0.0) {
        return Vec::new();
    }
    let mut order: Vec<usize> = (0..weights.len()).filter(|&c| weights[c] > 0.0).collect();
    order.sort_by(|&a, &b| weights[b].total_cmp(&weights[a]).then(a.cmp(&b)));
    let mut out = Vec::new();
    let mut acc = 0.0;
    for c in order {
        if acc >= level * total {
            break;
        }
        acc += weights[c];
        out.push(c as u64);
    }
    out.sort_unstable();
    out
}

/// The MOC type and its serializations live with the other HEALPix helpers.
pub use crate::sky::healpix::Moc;
