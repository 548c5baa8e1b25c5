//! `seine hideout`: where a hypothetical planet could still hide given surveys that found
//! nothing, and where to look next.

use std::path::PathBuf;

use seine::engine::PreparedSurvey;
use seine::hideout::prior::parse_distribution;
use seine::hideout::{self, HideoutOptions, Prior, RunInfo};
use seine::io::Provenance;
use seine::survey::Survey;
use seine::{Error, Result};

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
    /// Output directory.
    #[arg(long)]
    pub out: PathBuf,
    /// Run seed: with a draw's id it fixes the draw and its detection draws.
    #[arg(long, default_value_t = 1)]
    pub seed: u64,
    /// Which contiguous slice of the draws' ids to take; sum the shards' directories with
    /// `seine merge` (or --merge).
    #[command(flatten)]
    pub shard: super::common::ShardArgs,
    /// Sum finished shard directories (repeat) into --out instead of running (as `seine merge`).
    #[arg(long)]
    pub merge: Vec<PathBuf>,
    /// Table format: parquet or csv.
    #[arg(long, default_value = "parquet")]
    pub format: String,
    /// Worker threads (default: all cores). Results do not depend on it.
    #[arg(long)]
    pub threads: Option<usize>,
    /// No progress bar and no conclusion on stderr.
    #[arg(long)]
    pub quiet: bool,
    /// Draw more planets than one run's budget (configuration.md, "Budgets"): it is meant.
    #[arg(long)]
    pub over_budget: bool,
}

pub fn run(a: Args) -> Result<()> {
    super::common::set_threads(a.threads)?;
    let format = super::common::parse_format(&a.format)?;
    let mut prov = Provenance::current();
    let w = if a.merge.is_empty() {
        let (tally, run, seconds, surveys) = compute(&a, &mut prov)?;
        let w = hideout::finish(&tally, run, seconds, &a.out, format, &prov)?;
        hideout::write_coverage(&surveys, &a.out)?;
        w
    } else {
        hideout::merge_dirs(&a.merge, &a.out, format, &prov)?
    };
    if !a.quiet {
        eprintln!("{}", w.summary.conclusion);
        eprintln!(
            "seine hideout: {} draws in {:.1} s ({:.0} draws/s); wrote {}",
            w.summary.n_draws,
            w.summary.seconds,
            w.summary.draws_per_second,
            w.dir.display()
        );
    }
    Ok(())
}

/// A run: the tally, what was asked, the seconds taken and the surveys (for their coverage).
fn compute(a: &Args, prov: &mut Provenance) -> Result<(hideout::Tally, RunInfo, f64, Vec<PreparedSurvey>)> {
    if a.count == 0 {
        return Err(Error::input("--count 0: expected at least one prior draw"));
    }
    if a.n_fields == 0 {
        return Err(Error::input(
            "--n-fields 0: expected at least 1 field in the ranked list",
        ));
    }
    let shard = a.shard.resolve()?.map(|(k, n)| (k as u64, n as u64));
    let draws = seine::shard::shard_ids(a.count, shard);
    let n_draws = (draws.end - draws.start) as f64;
    seine::budget::check(seine::budget::HIDEOUT_DRAWS, n_draws, "--count", a.over_budget)?;
    if !(0..=8).contains(&a.order) {
        return Err(Error::input(format!("--order {}: expected 0 to 8", a.order)));
    }
    if !(a.field_radius_deg > 0.0 && a.field_radius_deg <= 90.0) {
        return Err(Error::input(format!(
            "--field-radius-deg {}: expected 0 < r ≤ 90",
            a.field_radius_deg
        )));
    }
    let prior_path = a.prior.clone().expect("clap requires --prior without --merge");
    let dist = |s: &Option<String>, what| s.as_deref().map(|t| parse_distribution(t, what)).transpose();
    let prior = Prior::read(
        &prior_path,
        dist(&a.diameter_km, "--diameter-km")?,
        dist(&a.albedo, "--albedo")?,
    )?;
    prov.add_input(&prior_path)?;
    let mut surveys = Vec::new();
    for path in &a.surveys {
        surveys.push(PreparedSurvey::new(Survey::load(path)?));
        prov.add_input(path)?;
    }
    super::common::check_unique_survey_names(&surveys)?;
    let epoch = match a.epoch_mjd {
        Some(t) => t,
        None => last_visit(&surveys)?,
    };
    let opts = HideoutOptions {
        seed: a.seed,
        count: a.count,
        shard,
        epoch_mjd: epoch,
        order: a.order,
        field_radius_deg: a.field_radius_deg,
        n_fields: a.n_fields,
        a_bins: a.a_bins.as_deref().map(|s| parse_bins(s, "--a-bins")).transpose()?,
        h_bins: a.h_bins.as_deref().map(|s| parse_bins(s, "--h-bins")).transpose()?,
        chunk: hideout::CHUNK,
        progress: !a.quiet,
    };
    let (tally, seconds) = hideout::run_tally(&prior, &surveys, &opts)?;
    let run = RunInfo {
        prior: prior_path.display().to_string(),
        surveys: surveys.iter().map(|s| s.survey.name.clone()).collect(),
        seed: a.seed,
        count: a.count,
        shard: shard.map(|(k, n)| format!("{k}/{n}")),
        epoch_mjd_utc: epoch,
        healpix_order: a.order,
        field_radius_deg: a.field_radius_deg,
        n_fields: a.n_fields,
    };
    Ok((tally, run, seconds, surveys))
}

/// The latest visit epoch over the surveys, in UTC.
fn last_visit(surveys: &[PreparedSurvey]) -> Result<f64> {
    let mut last = f64::NEG_INFINITY;
    for s in surveys {
        for &t in &s.survey.visits.mjd {
            last = last.max(seine::time::to_utc(t, s.survey.time_scale)?.0);
        }
    }
    Ok(last)
}

/// `LO,HI,N` with LO < HI and N ≥ 1.
fn parse_bins(s: &str, what: &str) -> Result<(f64, f64, usize)> {
    let bad = || {
        Error::input(format!(
            "{what} `{s}`: expected LO,HI,N with LO < HI and N ≥ 1, e.g. 300,700,8"
        ))
    };
    let p: Vec<&str> = s.split(',').map(str::trim).collect();
    if p.len() != 3 {
        return Err(bad());
    }
    let (lo, hi): (f64, f64) = (p[0].parse().map_err(|_| bad())?, p[1].parse().map_err(|_| bad())?);
    let n: usize = p[2].parse().map_err(|_| bad())?;
    if !(lo < hi && n >= 1) {
        return Err(bad());
    }
    Ok((lo, hi, n))
}
