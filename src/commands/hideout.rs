//! `seine hideout` as a library call: where a hypothetical planet could still hide given surveys
//! that found nothing, and where to look next. The science is in `hideout` (the prior, the
//! draws through the engine, the tallies, the credible regions, the ranked fields); its files in
//! `hideout::tables` and `hideout::summary`; this is the run: check the options, load the prior
//! and the surveys into the provenance, tally this shard's draws, write, conclude. `--merge`
//! (`merge_shards`) sums finished shards instead, as `seine merge` does.

use std::path::PathBuf;

use super::{Outcome, RunOptions, load_surveys};
use crate::engine::PreparedSurvey;
use crate::error::{Error, Result};
use crate::hideout::{self, HideoutPrior, HideoutSummary, RunInfo, TallyOptions};
use crate::population::Distribution;

/// The options of `seine hideout`.
#[derive(Debug, Clone)]
pub struct HideoutOptions {
    /// Survey specs; a draw is excluded when any of them finds it.
    pub surveys: Vec<PathBuf>,
    /// The prior: a population spec, optionally with a `[size]` table.
    pub prior: PathBuf,
    /// Diameter (km) and geometric-albedo distributions replacing the prior's `[size]` ones.
    pub diameter_km: Option<Distribution>,
    pub albedo: Option<Distribution>,
    /// Prior draws: ids 0..count (a shard takes a contiguous slice).
    pub count: u64,
    /// (k, n): the k-th of n contiguous id ranges of the prior.
    pub shard: Option<(u64, u64)>,
    /// Epoch of the sky map and field list, UTC MJD (default: the last visit of all surveys).
    pub epoch_mjd: Option<f64>,
    /// HEALPix order of the map (nested), 0 to 8.
    pub order: u8,
    /// Radius of a field of the next search, degrees, and how many fields are ranked.
    pub field_radius_deg: f64,
    pub n_fields: usize,
    /// (lo, hi, n) bins of a (AU) and of H (mag); default: 10 over the first draws' range.
    pub a_bins: Option<(f64, f64, usize)>,
    pub h_bins: Option<(f64, f64, usize)>,
    /// More draws than one run's budget is meant.
    pub over_budget: bool,
    pub run: RunOptions,
}

/// What a hideout run (or merge) wrote and concluded, with its summary (draws, seconds).
#[derive(Debug, Clone)]
pub struct HideoutOutcome {
    pub outcome: Outcome,
    pub summary: HideoutSummary,
}

impl HideoutOptions {
    /// Every check on the options themselves, before any file is read.
    pub fn validate(&self) -> Result<()> {
        if self.count == 0 {
            return Err(Error::input("--count 0: expected at least one prior draw"));
        }
        if self.n_fields == 0 {
            return Err(Error::input(
                "--n-fields 0: expected at least 1 field in the ranked list",
            ));
        }
        let draws = crate::shard::shard_ids(self.count, self.shard);
        let n_draws = (draws.end - draws.start) as f64;
        crate::budget::check(crate::budget::HIDEOUT_DRAWS, n_draws, "--count", self.over_budget)?;
        if !(0..=8).contains(&self.order) {
            return Err(Error::input(format!("--order {}: expected 0 to 8", self.order)));
        }
        if !(self.field_radius_deg > 0.0 && self.field_radius_deg <= 90.0) {
            return Err(Error::input(format!(
                "--field-radius-deg {}: expected 0 < r ≤ 90",
                self.field_radius_deg
            )));
        }
        for (option, bins) in [("--a-bins", self.a_bins), ("--h-bins", self.h_bins)] {
            if let Some((lo, hi, n)) = bins
                && !(lo < hi && n >= 1)
            {
                return Err(Error::input(format!(
                    "{option} {lo},{hi},{n}: expected LO,HI,N with LO < HI and N ≥ 1"
                )));
            }
        }
        Ok(())
    }
}

/// Run `seine hideout`: tally this shard's draws, write the outputs and each survey's coverage.
pub fn hideout(opts: &HideoutOptions) -> Result<HideoutOutcome> {
    opts.validate()?;
    let mut prov = opts.run.provenance();
    let prior = HideoutPrior::read(&opts.prior, opts.diameter_km.clone(), opts.albedo.clone())?;
    prov.add_input(&opts.prior)?;
    let surveys = load_surveys(&opts.surveys, &mut prov)?;
    let epoch = match opts.epoch_mjd {
        Some(t) => t,
        None => last_visit(&surveys)?,
    };
    let tally_options = TallyOptions {
        seed: opts.run.seed,
        count: opts.count,
        shard: opts.shard,
        epoch_mjd: epoch,
        order: opts.order,
        field_radius_deg: opts.field_radius_deg,
        n_fields: opts.n_fields,
        a_bins: opts.a_bins,
        h_bins: opts.h_bins,
        chunk: hideout::CHUNK,
        progress: opts.run.progress,
    };
    let (tally, seconds) = hideout::run_tally(&prior, &surveys, &tally_options)?;
    let run = RunInfo {
        prior: opts.prior.display().to_string(),
        surveys: surveys.iter().map(|s| s.survey.name.clone()).collect(),
        seed: opts.run.seed,
        count: opts.count,
        shard: opts.shard.map(|(k, n)| format!("{k}/{n}")),
        epoch_mjd_utc: epoch,
        healpix_order: opts.order,
        field_radius_deg: opts.field_radius_deg,
        n_fields: opts.n_fields,
    };
    let mut w = hideout::finish(&tally, run, seconds, &opts.run.out, opts.run.format, &prov)?;
    w.files.extend(hideout::write_coverage(&surveys, &opts.run.out)?);
    Ok(outcome(w))
}

/// `seine hideout --merge`: sum finished shard directories into `run.out` (as `seine merge`).
pub fn merge_shards(dirs: &[PathBuf], run: &RunOptions) -> Result<HideoutOutcome> {
    let prov = crate::io::Provenance::current();
    Ok(outcome(hideout::merge_dirs(dirs, &run.out, run.format, &prov)?))
}

fn outcome(w: hideout::HideoutWritten) -> HideoutOutcome {
    HideoutOutcome {
        outcome: Outcome {
            written: w.files,
            conclusion: w.summary.conclusion.clone(),
            notes: Vec::new(),
        },
        summary: w.summary,
    }
}

/// The latest visit epoch over the surveys, in UTC.
fn last_visit(surveys: &[PreparedSurvey]) -> Result<f64> {
    let mut last = f64::NEG_INFINITY;
    for s in surveys {
        for &t in &s.survey.visits.mjd {
            last = last.max(crate::time::to_utc(t, s.survey.time_scale)?.0);
        }
    }
    Ok(last)
}

/// Bins given as `LO,HI,N` (`--a-bins`, `--h-bins`), with LO < HI and N ≥ 1.
pub fn parse_bins(s: &str, option: &str) -> Result<(f64, f64, usize)> {
    let bad = || {
        Error::input(format!(
            "{option} `{s}`: expected LO,HI,N with LO < HI and N ≥ 1, e.g. 300,700,8"
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
