//! `seine provenance FILE`: arguments and printing; the run is `seine::commands::provenance`
//! (what made a table, from its Parquet metadata or a CSV's sidecar).

use std::path::PathBuf;

use seine::Result;
use seine::commands::provenance::provenance;

#[derive(clap::Args, Debug)]
pub struct Args {
    /// A table written by seine (.parquet, or .csv with its .provenance.json sidecar), or an
    /// `observe` output directory (its objects table).
    pub file: PathBuf,
}

pub fn run(a: Args) -> Result<()> {
    outln!("{}", provenance(&a.file)?.to_json());
    Ok(())
}
