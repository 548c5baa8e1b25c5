//! `seine draw`: arguments and printing; the run is `seine::commands::draw`.

use std::path::PathBuf;

use seine::commands::draw::{DrawOptions, draw_objects};
use seine::io::table::Format;
use seine::{Error, Result};

#[derive(clap::Args, Debug)]
pub struct Args {
    /// Population spec (TOML); with an `[import]` table it clones a table of particles instead.
    #[arg(long)]
    pub spec: PathBuf,
    /// Number of objects (ids 0..N). With an `[import]` spec: omit it (particles × clones).
    #[arg(long)]
    pub count: Option<u64>,
    /// Run seed: object k is the same for the same seed whatever the shard or thread count.
    #[arg(long)]
    pub seed: u64,
    /// Output objects table (.parquet, or .csv with a .provenance.json sidecar).
    #[arg(long)]
    pub out: PathBuf,
    /// Shard K of N (K from 0): a contiguous block of the ids; the shards' union is the whole.
    #[command(flatten)]
    pub shard: super::common::ShardArgs,
    /// Worker threads (default: all cores). The objects do not depend on it.
    #[arg(long)]
    pub threads: Option<usize>,
    /// No summary on stderr.
    #[arg(long)]
    pub quiet: bool,
    /// Draw more objects than one run's budget (configuration.md, "Budgets"); give it only for a run meant to be this large
    #[arg(long)]
    pub over_budget: bool,
}

pub fn run(a: Args) -> Result<()> {
    Format::of(&a.out)?;
    let opts = DrawOptions {
        shard: a.shard.resolve()?,
        spec: a.spec,
        count: a.count,
        seed: a.seed,
        out: a.out,
        over_budget: a.over_budget,
    };
    let outcome = match a.threads {
        Some(0) => return Err(Error::input("--threads 0: expected at least 1 thread")),
        Some(n) => rayon::ThreadPoolBuilder::new()
            .num_threads(n)
            .build()
            .map_err(|e| Error::input(format!("--threads {n}: {e}")))?
            .install(|| draw_objects(&opts))?,
        None => draw_objects(&opts)?,
    };
    if !a.quiet {
        eprintln!("{}", outcome.conclusion);
    }
    Ok(())
}
