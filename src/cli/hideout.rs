//! `seine hideout`: where a hypothetical planet could still hide given surveys that found
//! nothing, and where to look next.

use std::path::PathBuf;

use seine::Result;
use seine::commands::hideout::{HideoutOptions, hideout, merge_shards, parse_bins};
use seine::hideout::prior::parse_distribution;

use super::common::RunArgs;

#[derive(clap::Args, Debug)]
pub struct Args {
    /// Survey spec (TOML); repeat for several surveys. A draw is excluded when any survey finds it.
    /// Required (with --prior) unless --merge.
    #[arg(long = "survey", required_unless_present = "merge")]
    pub surveys: Vec<PathBuf>,
    /// Prior: a population spec of hypothetical planets, optionally with a [size] table
    /// (diameter_km, albedo) that sets H = 5 log10(1329 km / (D √p)). Required (with
    /// --survey) unless --merge.
    #[arg(long, required_unless_present = "merge")]
    pub prior: Option<PathBuf>,
    /// Number of prior draws (ids 0..N; a shard takes a contiguous slice).
    #[arg(long, default_value_t = 100_000)]
    pub count: u64,
    /// Diameter distribution in km, an inline TOML table, e.g. '{ dist = "uniform", lo = 8000, hi = 16000 }'.
    #[arg(long)]
    pub diameter_km: Option<String>,
    /// Geometric albedo distribution, e.g. '{ dist = "uniform", lo = 0.2, hi = 0.6 }'.
    #[arg(long)]
    pub albedo: Option<String>,
    /// Epoch of the sky map and field list, UTC MJD (default: the last visit of all surveys).
    #[arg(long)]
    pub epoch_mjd: Option<f64>,
    /// HEALPix order of the map (nested), 0 to 8.
    #[arg(long, default_value_t = 5)]
    pub order: u8,
    /// Radius of a field of the next search, degrees.
    #[arg(long, default_value_t = 2.0)]
    pub field_radius_deg: f64,
    /// Fields in the ranked list.
    #[arg(long, default_value_t = 20)]
    pub n_fields: usize,
    /// Bins of a for the excluded fraction: LO,HI,N (default: 10 over the range of the first draws).
    #[arg(long)]
    pub a_bins: Option<String>,
    /// Bins of H: LO,HI,N (default: 10 over the range of the first draws).
    #[arg(long)]
    pub h_bins: Option<String>,
    /// Which contiguous slice of the draws' ids to take; sum the shards' directories with
    /// `seine merge` (or --merge).
    #[command(flatten)]
    pub shard: super::common::ShardArgs,
    /// Sum finished shard directories (repeat) into --out instead of running (as `seine merge`).
    #[arg(long)]
    pub merge: Vec<PathBuf>,
    #[command(flatten)]
    pub run: RunArgs,
    /// Draw more planets than one run's budget (configuration.md, "Budgets"); give it only for a run meant to be this large
    #[arg(long)]
    pub over_budget: bool,
}

pub fn run(a: Args) -> Result<()> {
    let run = a.run.options()?;
    let done = if a.merge.is_empty() {
        let dist = |s: &Option<String>, what| s.as_deref().map(|t| parse_distribution(t, what)).transpose();
        let bins = |s: &Option<String>, what| s.as_deref().map(|t| parse_bins(t, what)).transpose();
        hideout(&HideoutOptions {
            surveys: a.surveys,
            prior: a.prior.expect("clap requires --prior without --merge"),
            diameter_km: dist(&a.diameter_km, "--diameter-km")?,
            albedo: dist(&a.albedo, "--albedo")?,
            count: a.count,
            shard: a.shard.resolve()?.map(|(k, n)| (k as u64, n as u64)),
            epoch_mjd: a.epoch_mjd,
            order: a.order,
            field_radius_deg: a.field_radius_deg,
            n_fields: a.n_fields,
            a_bins: bins(&a.a_bins, "--a-bins")?,
            h_bins: bins(&a.h_bins, "--h-bins")?,
            over_budget: a.over_budget,
            run,
        })?
    } else {
        merge_shards(&a.merge, &run)?
    };
    if !a.run.quiet {
        let s = &done.summary;
        eprintln!("{}", done.outcome.conclusion);
        eprintln!(
            "seine hideout: {} draws in {:.1} s ({:.0} draws/s); wrote {}",
            s.n_draws,
            s.seconds,
            s.draws_per_second,
            a.run.out.display()
        );
    }
    Ok(())
}
