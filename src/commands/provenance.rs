//! `seine provenance` as a library call: what made a table (tool version, command line,
//! SHA-256 of every spec and table read, seed), from its Parquet key-value metadata or a CSV's
//! sidecar (`io::provenance`); given an `observe` output directory, its objects table's.

use std::path::{Path, PathBuf};

use crate::engine::outputs;
use crate::error::{Error, Result};
use crate::io::provenance::Provenance;
use crate::io::table::read_provenance;

/// The table whose provenance `path` asks for: the file itself, or an observe directory's
/// objects table.
pub fn table_of(path: &Path) -> Result<PathBuf> {
    if !path.is_dir() {
        return Ok(path.to_path_buf());
    }
    outputs::find(path, outputs::OBJECTS).ok_or_else(|| {
        Error::input(format!(
            "{}: a directory without objects.parquet or objects.csv",
            path.display()
        ))
    })
}

/// Run `seine provenance`: the provenance of a table or of an observe directory.
pub fn provenance(path: &Path) -> Result<Provenance> {
    read_provenance(&table_of(path)?)
}
