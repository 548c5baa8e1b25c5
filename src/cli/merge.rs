//! `seine merge`: arguments and printing; the run is `seine::commands::merge` (observe,
//! hideout or draw shards → one).

use std::path::PathBuf;

use seine::Result;
use seine::commands::merge::{MergeOptions, merge};

#[derive(clap::Args, Debug)]
pub struct Args {
    /// Shard outputs: `observe` directories (any order: their manifests give the shard order),
    /// `hideout` directories (any order), or `draw` tables (.parquet/.csv, in shard order).
    #[arg(required = true)]
    pub inputs: Vec<PathBuf>,
    /// Output: a directory for `observe` and `hideout` shards, a table file for `draw` shards.
    #[arg(long)]
    pub out: PathBuf,
    /// Table format of merged `observe` and `hideout` outputs: parquet or csv.
    #[arg(long, default_value = "parquet")]
    pub format: String,
    /// No summary on stderr.
    #[arg(long)]
    pub quiet: bool,
}

pub fn run(a: Args) -> Result<()> {
    let opts = MergeOptions {
        format: super::common::parse_format(&a.format)?,
        inputs: a.inputs,
        out: a.out,
    };
    let outcome = merge(&opts)?;
    if !a.quiet {
        eprintln!("{}", outcome.conclusion);
    }
    Ok(())
}
