//! `seine observe`: arguments and printing; the run is `seine::commands::observe`.

use std::path::PathBuf;

use seine::Result;
use seine::commands::observe::{ObserveCommand, observe};
use seine::fit::{AstrometricErrors, FitOptions, FitSpan};

#[derive(clap::Args, Debug)]
pub struct Args {
    /// Survey spec (TOML); repeat for several surveys (an object is found when any survey finds it).
    #[arg(long = "survey", required = true)]
    pub surveys: Vec<PathBuf>,
    /// Objects table (CSV or Parquet).
    #[arg(long)]
    pub objects: PathBuf,
    /// Output directory: objects.parquet, detections.parquet, discoveries.parquet (the
    /// discovered objects in order of discovery: the catalogue an analysis starts from),
    /// summary.json and manifest.json; parts/ (one pair of Parquet files per chunk) while
    /// running, kept afterwards only with --resume or --shard (`seine merge` reads them).
    #[arg(long)]
    pub out: PathBuf,
    /// Run seed: with the object ids it fixes every random draw.
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
    /// Worker threads (default: all cores). Results do not depend on it.
    #[arg(long)]
    pub threads: Option<usize>,
    #[command(flatten)]
    pub shard: super::common::ShardArgs,
    /// Reuse the finished chunks of an interrupted run of the same inputs in --out, and keep
    /// this run's parts for the next rerun (otherwise they are removed once assembled).
    #[arg(long)]
    pub resume: bool,
    /// Objects per chunk: the unit of memory, of part files and of the work a kill can lose.
    #[arg(long, default_value_t = 20_000)]
    pub chunk_size: usize,
    /// Table format of the outputs: parquet or csv.
    #[arg(long, default_value = "parquet")]
    pub format: String,
    /// Test every visit exactly instead of using the index (slow; for verification).
    #[arg(long)]
    pub brute_force: bool,
    /// No progress bar.
    #[arg(long)]
    pub quiet: bool,
    /// Measure the discovered objects' detections and fit an orbit to each: adds fit_a_au …
    /// fit_chi2, fit_quality and fit_prior to the objects and discoveries tables.
    #[arg(long)]
    pub fit_orbits: bool,
    /// Which detections a fit uses: all, discovery (up to the discovering one),
    /// discovery-night, or recovery (up to one secure_after_days after the discovery).
    #[arg(long, default_value = "all", requires = "fit_orbits")]
    pub fit_span: String,
    /// Astrometric 1σ per coordinate, arcsec, of a detection whose detection model gives none.
    #[arg(long, default_value_t = seine::fit::span::DEFAULT_SIGMA_ARCSEC, requires = "fit_orbits")]
    pub astrometric_sigma_arcsec: f64,
    /// Systematic astrometric floor, arcsec, added in quadrature to every detection's error.
    #[arg(long, default_value_t = 0.0, requires = "fit_orbits")]
    pub astrometric_floor_arcsec: f64,
}

/// The fit options, checked.
fn fit_options(a: &Args) -> Result<Option<FitOptions>> {
    if !a.fit_orbits {
        return Ok(None);
    }
    let span = FitSpan::parse(&a.fit_span)?;
    let errors = AstrometricErrors::new(a.astrometric_sigma_arcsec, a.astrometric_floor_arcsec)?;
    Ok(Some(FitOptions { span, errors }))
}

pub fn run(a: Args) -> Result<()> {
    super::common::set_threads(a.threads)?;
    let opts = ObserveCommand {
        format: super::common::parse_format(&a.format)?,
        shard: a.shard.resolve()?,
        fit: fit_options(&a)?,
        stop: Some(seine::interrupt::graceful_stop()?),
        surveys: a.surveys,
        objects: a.objects,
        out: a.out,
        seed: a.seed,
        resume: a.resume,
        chunk_size: a.chunk_size,
        brute_force: a.brute_force,
        progress: !a.quiet,
    };
    super::common::print_outcome(&observe(&opts)?, a.quiet);
    Ok(())
}
