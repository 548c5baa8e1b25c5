//! `seine hideout`: where a hypothetical planet could still hide, given surveys that found
//! nothing, and where to look next.
//!
//! Every draw of a prior (a population spec) goes through every survey; the undiscovered
//! draws are the posterior. A run accumulates additive tallies only (counts and sums of
//! weights, `tally.rs`), so shards of a job array add up to the whole run (`merge`); the
//! derived products (fractions, credible regions, ranked fields, the conclusion) are
//! computed from the tallies at the end, identically for a run and for a merge.
//!
//! Files: `prior.rs` (the prior and H from diameter and albedo), `evaluate.rs` (one draw
//! through the engine and onto the sky at the map epoch), `tally.rs` (accumulators),
//! `moc.rs` (credible regions as IVOA MOCs and their files), `fields.rs` (the ranked fields),
//! `tables.rs` (the tidy tables: file names, write, read back), `summary.rs` (summary.json:
//! write, read, the conclusion). Each file's name is a constant of the module that writes it.

pub mod evaluate;
pub mod fields;
pub mod moc;
pub mod prior;
pub mod summary;
pub mod tables;
pub mod tally;

use std::path::{Path, PathBuf};
use std::time::Instant;

pub use evaluate::{DrawOutcome, evaluate};
pub use prior::{HideoutPrior, diameter_from_h, h_from_diameter};
pub use summary::{HideoutSummary, RunInfo, read_summary};
pub use tally::{ExclusionBins, RunTally};

use crate::engine::PreparedSurvey;
use crate::error::{Error, Result};
use crate::io::provenance::Provenance;
use crate::io::table::{Format, write_atomic};
use crate::shard::shard_ids;
use crate::sky::observer::ObserverState;
use crate::sky::observer::observer_states;
use crate::time::TimeScale;

/// The whole sky in square degrees (defined with the HEALPix helpers).
pub use crate::sky::healpix::SKY_SQ_DEG;

/// Draws per chunk: bounds memory whatever the prior's size.
pub const CHUNK: usize = 1 << 16;
/// Draws (ids 0..PILOT of the whole prior, whatever the shard) that fix the default bin edges.
pub const PILOT: u64 = 4096;

/// Options of one hideout tally (the draws of one run or shard through the surveys).
#[derive(Debug, Clone)]
pub struct TallyOptions {
    pub seed: u64,
    pub count: u64,
    /// (k, n): the k-th of n contiguous id ranges of the prior.
    pub shard: Option<(u64, u64)>,
    /// Epoch of the sky map, UTC MJD (geocentric observer).
    pub epoch_mjd: f64,
    pub order: u8,
    pub field_radius_deg: f64,
    pub n_fields: usize,
    /// (lo, hi, n) bins of a and H; default: n = 10 over the pilot's range.
    pub a_bins: Option<(f64, f64, usize)>,
    pub h_bins: Option<(f64, f64, usize)>,
    pub chunk: usize,
    /// A progress bar on a terminal.
    pub progress: bool,
}

/// What `finish` wrote: the summary, in the output directory, and every file.
#[derive(Debug, Clone)]
pub struct HideoutWritten {
    pub summary: HideoutSummary,
    pub dir: PathBuf,
    /// The tables, the credible regions and `summary.json` (then the surveys' coverage).
    pub files: Vec<PathBuf>,
}

/// The observer (geocentre) at the map epoch.
pub fn epoch_observer(epoch_mjd_utc: f64) -> Result<ObserverState> {
    Ok(observer_states(&[epoch_mjd_utc], TimeScale::Utc, None)?[0])
}

/// Default bins: 10 equal bins over the pilot draws' range of a and of H (end bins open).
pub fn default_bins(prior: &HideoutPrior, opts: &TallyOptions) -> Result<(ExclusionBins, ExclusionBins)> {
    let pilot = if opts.a_bins.is_none() || opts.h_bins.is_none() {
        Some(prior.draw(opts.seed, 0..PILOT.min(opts.count).max(1) as i64)?)
    } else {
        None
    };
    let span = |v: Vec<f64>| {
        let lo = v.iter().copied().fold(f64::INFINITY, f64::min);
        let hi = v.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        // A single value (e.g. one H) still gets a bin of width 1 around it.
        if hi - lo < 1e-9 {
            (lo - 0.5, hi + 0.5, 1)
        } else {
            (lo, hi, 10)
        }
    };
    let pick = |given: Option<(f64, f64, usize)>, f: &dyn Fn() -> Vec<f64>| given.unwrap_or_else(|| span(f()));
    let p = pilot.as_ref();
    let a = pick(opts.a_bins, &|| {
        p.map_or(vec![], |t| t.elements.iter().map(|e| e.a_au).collect())
    });
    let h = pick(opts.h_bins, &|| p.map_or(vec![], |t| t.h_mag.clone()));
    Ok((
        ExclusionBins::linear("a_au", a.0, a.1, a.2),
        ExclusionBins::linear("h_mag", h.0, h.1, h.2),
    ))
}

/// Draw the prior (this shard's ids) chunk by chunk through the surveys; returns the tally
/// and the seconds taken.
pub fn run_tally(prior: &HideoutPrior, surveys: &[PreparedSurvey], opts: &TallyOptions) -> Result<(RunTally, f64)> {
    if surveys.len() > evaluate::MAX_SURVEYS {
        return Err(Error::input(format!(
            "at most {} surveys per hideout run",
            evaluate::MAX_SURVEYS
        )));
    }
    let start = Instant::now();
    let (a, h) = default_bins(prior, opts)?;
    let mut tally = RunTally::new(a, h, opts.order, surveys.len());
    let epoch = epoch_observer(opts.epoch_mjd)?;
    let ids = shard_ids(opts.count, opts.shard);
    let bar = crate::engine::summary::progress_bar((ids.end - ids.start) as usize, opts.progress);
    let mut lo = ids.start;
    while lo < ids.end {
        let hi = (lo + opts.chunk.max(1) as i64).min(ids.end);
        let objects = prior.draw(opts.seed, lo..hi)?;
        tally.add_draws(&evaluate(&objects, surveys, &epoch, opts.seed));
        if let Some(b) = &bar {
            b.inc((hi - lo) as u64);
        }
        lo = hi;
    }
    if let Some(b) = bar {
        b.finish_and_clear();
    }
    Ok((tally, start.elapsed().as_secs_f64()))
}

/// Derive the posterior products from a tally and write every output under `dir`.
pub fn finish(
    tally: &RunTally,
    run: RunInfo,
    seconds: f64,
    dir: &Path,
    format: Format,
    prov: &Provenance,
) -> Result<HideoutWritten> {
    std::fs::create_dir_all(dir)
        .map_err(|e| Error::input(format!("{}: cannot create the output directory: {e}", dir.display())))?;
    let sky = &tally.sky;
    let w_surv: f64 = sky.w_surviving.iter().sum();
    let cells68 = moc::credible_cells(&sky.w_surviving, 0.68);
    let cells95 = moc::credible_cells(&sky.w_surviving, 0.95);
    let (moc68, moc95) = (
        moc::Moc::from_cells(sky.order, &cells68),
        moc::Moc::from_cells(sky.order, &cells95),
    );
    let flags = |cells: &[u64]| {
        let mut f = vec![false; sky.w_surviving.len()];
        cells.iter().for_each(|&c| f[c as usize] = true);
        f
    };
    let (in68, in95) = (flags(&cells68), flags(&cells95));
    let radius = run.field_radius_deg.to_radians();
    let ranked = fields::rank_fields(sky, radius, run.n_fields);
    let view = tables::CellView {
        sky,
        w_prior_total: tally.total.w,
        w_surviving_total: w_surv,
        in_68: &in68,
        in_95: &in95,
    };
    let mut files = tables::write(dir, (format, prov), tally, &view, (&ranked, run.field_radius_deg))?;
    files.extend(moc::write_region(dir, moc::REGION_68, &moc68)?);
    files.extend(moc::write_region(dir, moc::REGION_95, &moc95)?);
    let summary = make_summary(
        tally,
        run,
        seconds,
        &ranked,
        (&moc68, &cells68),
        (&moc95, &cells95),
        w_surv,
    );
    files.push(summary::write(dir, &summary)?);
    Ok(HideoutWritten {
        summary,
        dir: dir.to_path_buf(),
        files,
    })
}

fn make_summary(
    t: &RunTally,
    run: RunInfo,
    seconds: f64,
    ranked: &[fields::RankedField],
    r68: (&moc::Moc, &[u64]),
    r95: (&moc::Moc, &[u64]),
    w_surv: f64,
) -> HideoutSummary {
    let excluded = t.total.proportion();
    let mut s = HideoutSummary {
        per_survey: summary::per_survey(&run, t),
        best_field: ranked
            .first()
            .map(|f| summary::best_field(f, run.field_radius_deg, w_surv)),
        run,
        n_draws: t.n_draws,
        n_excluded: t.total.k,
        w_prior: t.total.w,
        n_effective: crate::statistics::kish_n(t.total.w, t.total.w2),
        w_excluded: t.total.w_hit,
        excluded_fraction: excluded.fraction,
        excluded_fraction_err: excluded.std_error,
        surviving_fraction: t.surviving_fraction(),
        region_68: summary::region(0.68, r68.0, r68.1, t),
        region_95: summary::region(0.95, r95.0, r95.1, t),
        seconds,
        draws_per_second: t.n_draws as f64 / seconds.max(1e-9),
        conclusion: String::new(),
    };
    s.conclusion = summary::conclusion(&s);
    s
}

/// Each survey's covered sky (MOC 2.0 JSON, normalized, cells up to order 9, as `seine plan`
/// writes it) as
/// `coverage_<survey>.moc.json`, for the sky-map figure to draw over the posterior; returns
/// the files written.
pub fn write_coverage(surveys: &[PreparedSurvey], dir: &Path) -> Result<Vec<PathBuf>> {
    let mut files = Vec::new();
    for s in surveys {
        let (cov, _) = crate::survey::plan_io::survey_coverage(&s.survey)?;
        files.push(dir.join(moc::coverage_name(&s.survey.name)));
        write_atomic(
            files.last().expect("just pushed"),
            format!("{}\n", cov.moc_json()).as_bytes(),
        )?;
    }
    Ok(files)
}

/// A merge carries the first shard's coverage files over; returns the files written.
pub fn copy_coverage(from: &Path, dir: &Path) -> Result<Vec<PathBuf>> {
    let entries = std::fs::read_dir(from).map_err(|e| Error::input(format!("{}: {e}", from.display())))?;
    let mut files = Vec::new();
    for e in entries.flatten() {
        let name = e.file_name().to_string_lossy().to_string();
        if name.starts_with(moc::COVERAGE_PREFIX) && name.ends_with(moc::COVERAGE_SUFFIX) {
            let bytes = std::fs::read(e.path()).map_err(|e| Error::io(e.to_string()))?;
            files.push(dir.join(&name));
            write_atomic(files.last().expect("just pushed"), &bytes)?;
        }
    }
    Ok(files)
}

/// Whether `dir` holds a hideout run's (or shard's) outputs: its summary and its tables.
pub fn is_output_dir(dir: &Path) -> bool {
    tables::format_in(dir).is_some() && summary::is_in(dir)
}

/// `seine merge` (and `seine hideout --merge`) of hideout shard directories into `out`:
/// every shard exactly once, all present, `out` none of them; on refusal nothing is written.
/// Each shard is read in the format it was written in; the outputs are written in `format`.
pub fn merge_dirs(dirs: &[PathBuf], out: &Path, format: Format, prov: &Provenance) -> Result<HideoutWritten> {
    crate::engine::merge::refuse_output_among_inputs(dirs, out)?;
    let (tally, run, seconds) = merge(dirs)?;
    let mut written = finish(&tally, run, seconds, out, format, prov)?;
    written.files.extend(copy_coverage(&dirs[0], out)?);
    Ok(written)
}

/// Sum the tallies of shard directories into one.
/// Each shard exactly once and all present: k of n for k = 0..n−1 (or one whole run alone).
pub fn merge(dirs: &[PathBuf]) -> Result<(RunTally, RunInfo, f64)> {
    let mut acc: Option<(RunTally, RunInfo, f64)> = None;
    let mut seen: Vec<(Option<(u64, u64)>, &PathBuf)> = Vec::new();
    for dir in dirs {
        let (mut run, n_draws, w_discovered_by, seconds) = summary::read_shard(dir)?;
        let shard = run.shard.as_deref().and_then(|s| {
            let (k, n) = s.split_once('/')?;
            Some((k.trim().parse().ok()?, n.trim().parse().ok()?))
        });
        if let Some((_, first)) = seen.iter().find(|(s, _)| s.is_none() || shard.is_none() || *s == shard) {
            return Err(Error::input(format!(
                "--merge {}: the same shard as {} (or a whole run); expected each shard once",
                dir.display(),
                first.display()
            )));
        }
        if let (Some((_, n0)), Some((_, n))) = (seen.first().and_then(|(s, _)| *s), shard)
            && n != n0
        {
            return Err(Error::input(format!(
                "--merge {}: a shard of {n}, while {} is a shard of {n0}; expected the shards of one run",
                dir.display(),
                dirs[0].display()
            )));
        }
        seen.push((shard, dir));
        let mut t = tables::read_tally(dir, run.healpix_order, run.surveys.len())?;
        t.n_draws = n_draws;
        t.w_discovered_by = w_discovered_by;
        run.shard = None;
        match &mut acc {
            None => acc = Some((t, run, seconds)),
            Some((total, first, secs)) => {
                if *first != run {
                    return Err(Error::input(format!(
                        "{}: this shard's prior, surveys, seed, count, epoch or map options differ from {}",
                        dir.display(),
                        dirs[0].display()
                    )));
                }
                total
                    .add(&t)
                    .map_err(|e| Error::input(format!("{}: {e}", dir.display())))?;
                *secs += seconds;
            }
        }
    }
    let n = seen.first().and_then(|(s, _)| s.map(|(_, n)| n)).unwrap_or(1);
    let missing: Vec<String> = (0..n)
        .filter(|k| !seen.iter().any(|(s, _)| s.map(|(j, _)| j) == Some(*k)))
        .map(|k| k.to_string())
        .collect();
    if n > 1 && !missing.is_empty() {
        return Err(Error::input(format!(
            "--merge: expected each of the {n} shards exactly once; missing: [{}]",
            missing.join(", ")
        )));
    }
    acc.ok_or_else(|| Error::input("--merge: expected at least one shard directory"))
}
