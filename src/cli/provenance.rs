//! `seine provenance FILE`: print what made a table (tool version, command line, SHA-256 of
//! every spec and table read, seed), from Parquet key-value metadata or a CSV's sidecar.

use std::path::PathBuf;

use seine::io::provenance::read_provenance;
use seine::{Error, Result};

#[derive(clap::Args, Debug)]
pub struct Args {
    /// A table written by seine (.parquet, or .csv with its .provenance.json sidecar), or an
    /// `observe` output directory (its objects table).
    pub file: PathBuf,
}

pub fn run(a: Args) -> Result<()> {
    let file = if a.file.is_dir() {
        ["objects.parquet", "objects.csv"]
            .iter()
            .map(|n| a.file.join(n))
            .find(|p| p.exists())
            .ok_or_else(|| {
                Error::input(format!(
                    "{}: a directory without objects.parquet or objects.csv",
                    a.file.display()
                ))
            })?
    } else {
        a.file
    };
    let p = read_provenance(&file)?;
    outln!("{}", p.to_json());
    Ok(())
}
