//! Argument groups several subcommands share (analysis run options, shards; the catalogue's
//! are in `catalogue.rs`), printing a command's outcome, and sizing the worker pool. The rules
//! behind them live in the library: the shard rule in `seine::shard`, interruptions in
//! `seine::interrupt`, loading surveys in `seine::commands`.

use seine::{Error, Result};

/// `--shard K/N`, `--shards N` and the Slurm array variables: one script line serves every
/// task of a job array. Flatten this into a subcommand's arguments and call `resolve`.
#[derive(clap::Args, Debug, Clone, Default)]
pub struct ShardArgs {
    /// Take shard K of N (K from 0): a contiguous, disjoint slice of the objects. Without it,
    /// K comes from SLURM_ARRAY_TASK_ID when that is set (see --shards).
    #[arg(long)]
    pub shard: Option<String>,
    /// With SLURM_ARRAY_TASK_ID: the number of shards N (default: SLURM_ARRAY_TASK_COUNT).
    /// Give it when resubmitting single tasks, whose array is smaller than N.
    #[arg(long)]
    pub shards: Option<usize>,
}

impl ShardArgs {
    /// The shard (k, n) to take, or none for the whole input (`seine::shard::resolve`).
    pub fn resolve(&self) -> Result<Option<(usize, usize)>> {
        let var = |name: &str| std::env::var(name).ok().filter(|v| !v.trim().is_empty());
        seine::shard::resolve(
            self.shard.as_deref(),
            self.shards,
            var("SLURM_ARRAY_TASK_ID").as_deref(),
            var("SLURM_ARRAY_TASK_COUNT").as_deref(),
        )
    }
}

/// `--format parquet|csv` of an output directory's tables.
pub fn parse_format(s: &str) -> Result<seine::io::table::Format> {
    seine::io::table::Format::parse(s)
}

/// Size the worker pool; results never depend on it.
pub fn set_threads(threads: Option<usize>) -> Result<()> {
    if let Some(n) = threads {
        if n == 0 {
            return Err(Error::input("--threads: expected at least 1"));
        }
        rayon::ThreadPoolBuilder::new()
            .num_threads(n)
            .build_global()
            .map_err(|e| Error::io(e.to_string()))?;
    }
    Ok(())
}

/// A command's notes on standard error, then (unless quiet) its conclusion and what it wrote.
pub fn print_outcome(outcome: &seine::commands::Outcome, quiet: bool) {
    for n in &outcome.notes {
        eprintln!("{n}");
    }
    if !quiet {
        eprintln!("{}", outcome.conclusion);
        let list: Vec<String> = outcome.written.iter().map(|p| p.display().to_string()).collect();
        eprintln!("wrote {}", list.join(", "));
    }
}

/// Options every analysis command shares.
#[derive(clap::Args, Debug, Clone)]
pub struct RunArgs {
    /// Output directory: the command's tables and summary.json.
    #[arg(long)]
    pub out: std::path::PathBuf,
    /// Run seed: with the object ids it fixes every random draw.
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
    /// Worker threads (default: all cores). Results do not depend on it.
    #[arg(long)]
    pub threads: Option<usize>,
    /// Table format: parquet or csv.
    #[arg(long, default_value = "parquet")]
    pub format: String,
    /// No conclusion or file list on stderr.
    #[arg(long)]
    pub quiet: bool,
}

impl RunArgs {
    /// Size the pool and translate into the library's run options.
    pub fn options(&self) -> Result<seine::commands::RunOptions> {
        set_threads(self.threads)?;
        Ok(seine::commands::RunOptions {
            out: self.out.clone(),
            seed: self.seed,
            format: parse_format(&self.format)?,
            progress: !self.quiet,
        })
    }

    /// Print a command's notes, then (unless quiet) its conclusion and what it wrote.
    pub fn print(&self, outcome: &seine::commands::Outcome) {
        print_outcome(outcome, self.quiet);
    }
}
