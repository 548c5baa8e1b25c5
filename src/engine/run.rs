//! `observe` as a library call: load, prepare, run objects in parallel chunk by chunk,
//! stream the tables out, and summarise.

use std::borrow::Cow;
use std::path::{Path, PathBuf};
use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};
use std::time::Instant;

use polars::prelude::*;

use super::batch::Batch;
use super::discoveries;
use super::index::{Candidates, PreparedSurvey};
use super::outcome::ObjectOutcome;
use super::outputs::{self, DETECTIONS, OBJECTS};
use super::parts::{ChunkEntry, Manifest, PARTS, RunKey, clear_stale, file_sha256, part_path};
use super::pipeline::StopRule;
use super::summary::Summary;
use crate::error::{Error, Result};
use crate::io::provenance::Provenance;
use crate::io::sink::TableSink;
use crate::io::table::{Format, read_table, write_atomic};
use crate::population::objects::{ObjectSource, ObjectTable};

/// Options of one observe run.
#[derive(Debug, Clone)]
pub struct ObserveOptions {
    pub seed: u64,
    /// (k, n): take the k-th of n contiguous, disjoint slices of the objects (k from 0).
    pub shard: Option<(usize, usize)>,
    pub format: Format,
    pub candidates: Candidates,
    /// Objects per chunk: the unit of memory, of part files and of what a kill can lose.
    pub chunk_size: usize,
    pub progress: bool,
    /// Reuse the finished chunks of an earlier run of the same inputs in the output directory.
    pub resume: bool,
    /// Set (e.g. by a SIGINT handler) to stop cleanly after the chunk in flight.
    pub stop: Option<Arc<AtomicBool>>,
    /// Columns added to every chunk's objects table (`--fit-orbits`: the orbit fit's).
    pub extra_columns: Option<Arc<dyn ChunkColumns>>,
}

/// Columns a caller adds to every chunk's objects table from the chunk's outcomes (`observe
/// --fit-orbits`: measured detections and fitted orbits, `fit::FitOptions`). The engine calls
/// it without knowing what it computes, so the engine uses no analysis.
pub trait ChunkColumns: Send + Sync + std::fmt::Debug {
    /// Append the columns of objects `start..start + outcomes.len()` of `objects` to `frame`;
    /// with no outcomes, the empty columns (the table's schema).
    fn append(
        &self,
        frame: &mut DataFrame,
        objects: &ObjectTable,
        start: usize,
        outcomes: &[ObjectOutcome],
        surveys: &[PreparedSurvey],
        seed: u64,
    ) -> Result<()>;
    /// What the run key records of it: a resumed run reuses only chunks with the same columns.
    fn key(&self) -> String;
}

impl Default for ObserveOptions {
    fn default() -> Self {
        ObserveOptions {
            seed: 0,
            shard: None,
            format: Format::Parquet,
            candidates: Candidates::Indexed,
            chunk_size: 20_000,
            progress: false,
            resume: false,
            stop: None,
            extra_columns: None,
        }
    }
}

/// What a run did, for the caller to print.
#[derive(Debug, Clone)]
pub struct ObserveReport {
    pub summary: Summary,
    pub objects_path: PathBuf,
    pub detections_path: PathBuf,
    /// The discovered objects in order of discovery (`discoveries`), and how many.
    pub discoveries_path: PathBuf,
    pub n_discoveries: usize,
    pub summary_path: PathBuf,
    /// Chunks taken from an earlier run (`resume`), and chunks in all.
    pub chunks_reused: usize,
    pub chunks: usize,
}

/// Run the objects through the surveys and write `DIR/objects.*`, `DIR/detections.*`,
/// `DIR/discoveries.*` and `DIR/summary.json`, by way of part files and a manifest (see `parts`): chunks are
/// computed (or, with `resume`, reused), then the final tables are streamed from the parts.
pub fn observe(
    surveys: &[PreparedSurvey],
    objects: &ObjectTable,
    out_dir: &Path,
    opts: &ObserveOptions,
    provenance: &Provenance,
) -> Result<ObserveReport> {
    observe_source(
        surveys,
        &ObjectSource::Table(Cow::Borrowed(objects)),
        out_dir,
        opts,
        provenance,
    )
}

/// `observe` with the objects from a source that may read them chunk by chunk (a Parquet
/// file: memory then follows `chunk_size`, not the table).
pub fn observe_source(
    surveys: &[PreparedSurvey],
    source: &ObjectSource,
    out_dir: &Path,
    opts: &ObserveOptions,
    provenance: &Provenance,
) -> Result<ObserveReport> {
    if opts.chunk_size == 0 {
        return Err(Error::input("--chunk-size: expected at least 1 object per chunk"));
    }
    // Refuse bad inputs before anything is written: no partial output on an error.
    check_bands(surveys, source.head())?;
    let mut empty = objects_frame(source.head(), 0, &[], surveys)?;
    if let Some(extra) = &opts.extra_columns {
        extra.append(&mut empty, source.head(), 0, &[], surveys, opts.seed)?;
    }
    std::fs::create_dir_all(out_dir.join(PARTS)).map_err(|e| {
        Error::input(format!(
            "{}: cannot create the output directory: {e}",
            out_dir.display()
        ))
    })?;
    let rows = source.rows(opts.shard);
    let mut manifest = Manifest::new(
        run_key(surveys, source.head(), opts, provenance),
        rows,
        provenance.inputs.clone(),
    );
    if opts.resume {
        if let Some(old) = Manifest::read(out_dir)? {
            manifest.chunks = manifest.reusable(&old, out_dir);
        }
    }
    let reused = manifest.chunks.len();
    clear_stale(out_dir, reused)?;
    manifest.write(out_dir)?;
    compute_chunks(surveys, source, out_dir, opts, provenance, &mut manifest)?;
    let report = assemble(surveys, out_dir, opts, provenance, &manifest)?;
    manifest.complete = true;
    manifest.write(out_dir)?;
    if !keeps_parts(opts) {
        remove_parts(out_dir)?;
    }
    Ok(ObserveReport {
        chunks_reused: reused,
        chunks: manifest.chunks.len(),
        ..report
    })
}

/// Whether a run keeps its part files once the tables are assembled: when resuming was
/// asked for (`--resume`: a rerun reuses them) and in a shard (`seine merge` reads them).
/// Otherwise they are removed, so the output is on disk once.
fn keeps_parts(opts: &ObserveOptions) -> bool {
    opts.resume || opts.shard.is_some()
}

/// Remove the parts directory (the manifest stays: it records the run).
fn remove_parts(out_dir: &Path) -> Result<()> {
    let dir = out_dir.join(PARTS);
    match std::fs::remove_dir_all(&dir) {
        Err(e) if e.kind() != std::io::ErrorKind::NotFound => Err(crate::error::io_at(&dir, e)),
        _ => Ok(()),
    }
}

/// An unknown band is a visit band for which the objects table gives colours for other bands
/// but not this one (nor is it the survey's reference band): a silent colour of 0 there is
/// almost always a misspelt band or a missing column, so it is refused. Objects without any
/// `color_<band>` column take colour 0 in every band (the DESIGN contract's default).
pub fn check_bands(surveys: &[PreparedSurvey], objects: &ObjectTable) -> Result<()> {
    if objects.colors.is_empty() {
        return Ok(());
    }
    let known: Vec<&str> = objects.colors.iter().map(|(b, _)| b.as_str()).collect();
    for ps in surveys {
        let s = &ps.survey;
        let unknown = s
            .visits
            .band_names
            .iter()
            .find(|b| **b != s.reference_band && !known.contains(&b.as_str()));
        if let Some(b) = unknown {
            let hint = crate::io::spec_text::nearest(b, known.iter().copied())
                .map_or(String::new(), |n| format!(" (did you mean `{n}`?)"));
            return Err(Error::input(format!(
                "{}: band `{b}`{hint} has no colour column `color_{b}` in the objects table, which gives colours \
                 for {}; add the column (0 for no colour) or fix the band",
                s.visits_path.display(),
                known.join(", ")
            )));
        }
    }
    Ok(())
}

/// The identity of this run, compared on `--resume`.
fn run_key(surveys: &[PreparedSurvey], objects: &ObjectTable, opts: &ObserveOptions, prov: &Provenance) -> RunKey {
    RunKey {
        seine_version: crate::version().to_string(),
        input_sha256: prov.inputs.iter().map(|i| i.sha256.clone()).collect(),
        seed: opts.seed,
        shard: opts.shard,
        n_objects_input: objects.input_rows,
        chunk_size: opts.chunk_size,
        candidates: format!("{:?}", opts.candidates),
        surveys: surveys.iter().map(|s| s.survey.name.clone()).collect(),
        fit: opts.extra_columns.as_ref().map(|c| c.key()),
    }
}

/// Compute every chunk the manifest lacks, writing its parts and recording it; stop with
/// `Error::Interrupted` after the chunk in flight when the stop flag is raised.
fn compute_chunks(
    surveys: &[PreparedSurvey],
    source: &ObjectSource,
    out_dir: &Path,
    opts: &ObserveOptions,
    provenance: &Provenance,
    manifest: &mut Manifest,
) -> Result<()> {
    let (lo, hi) = manifest.rows;
    let bar = super::summary::progress_bar(hi - lo, opts.progress);
    let done = (lo + manifest.chunks.len() * opts.chunk_size).min(hi);
    if let Some(b) = &bar {
        b.inc((done - lo) as u64);
    }
    let mut chunk_start = done;
    // An empty shard still has one (empty) chunk, so that its tables carry the full schema.
    let mut first = manifest.chunks.is_empty();
    while chunk_start < hi || (first && lo == hi) {
        first = false;
        if opts.stop.as_ref().is_some_and(|s| s.load(Ordering::SeqCst)) {
            return Err(Error::Interrupted);
        }
        let chunk_end = (chunk_start + opts.chunk_size).min(hi);
        let entry = compute_chunk(
            surveys,
            source,
            out_dir,
            opts,
            provenance,
            manifest.chunks.len(),
            (chunk_start, chunk_end),
        )?;
        manifest.chunks.push(entry);
        manifest.write(out_dir)?;
        if let Some(b) = &bar {
            b.inc((chunk_end - chunk_start) as u64);
        }
        chunk_start = chunk_end;
    }
    if let Some(b) = bar {
        b.finish_and_clear();
    }
    Ok(())
}

/// One chunk: objects in parallel, then its two part files (each written atomically).
fn compute_chunk(
    surveys: &[PreparedSurvey],
    source: &ObjectSource,
    out_dir: &Path,
    opts: &ObserveOptions,
    provenance: &Provenance,
    index: usize,
    (lo, hi): (usize, usize),
) -> Result<ChunkEntry> {
    let start = Instant::now();
    // Manifest rows are rows of the input file; the table may start further in.
    let (lo_global, hi_global) = (lo, hi);
    let chunk = source.chunk(lo, hi)?;
    let objects: &ObjectTable = &chunk;
    let (lo, hi) = (lo - objects.first_row, hi - objects.first_row);
    let outcomes: Vec<ObjectOutcome> = Batch::new(surveys, opts.seed, StopRule::Everything)
        .with_candidates(opts.candidates)
        .map(objects, lo..hi, |_, out| out);
    let mut summary = Summary::new(surveys);
    summary.add(objects, lo, &outcomes, surveys);
    let mut obj = objects_frame(objects, lo, &outcomes, surveys)?;
    if let Some(extra) = &opts.extra_columns {
        extra.append(&mut obj, objects, lo, &outcomes, surveys, opts.seed)?;
    }
    let det = detections_frame(objects, lo, &outcomes, surveys)?;
    let write_part = |table: &str, df: &DataFrame| -> Result<String> {
        let path = part_path(out_dir, table, index);
        let mut sink = TableSink::create(&path, provenance.clone())?;
        sink.write(df)?;
        sink.finish()?;
        file_sha256(&path)
    };
    let objects_sha256 = write_part(OBJECTS, &obj)?;
    let detections_sha256 = write_part(DETECTIONS, &det)?;
    summary.elapsed_s = start.elapsed().as_secs_f64();
    Ok(ChunkEntry {
        index,
        rows: (lo_global, hi_global),
        objects_rows: obj.height(),
        detections_rows: det.height(),
        objects_sha256,
        detections_sha256,
        summary,
    })
}

/// Stream the parts into the final tables (memory bounded by one chunk) and write the summary.
fn assemble(
    surveys: &[PreparedSurvey],
    out_dir: &Path,
    opts: &ObserveOptions,
    provenance: &Provenance,
    manifest: &Manifest,
) -> Result<ObserveReport> {
    let objects_path = outputs::path(out_dir, OBJECTS, opts.format);
    let detections_path = outputs::path(out_dir, DETECTIONS, opts.format);
    let summary_path = out_dir.join(outputs::SUMMARY);
    let mut summary = Summary::new(surveys);
    let parts = |table: &str| -> Vec<PathBuf> {
        manifest
            .chunks
            .iter()
            .map(|c| part_path(out_dir, table, c.index))
            .collect()
    };
    let discoveries_path = discoveries::path(out_dir, opts.format);
    let n_discoveries = discoveries::write(&parts(OBJECTS), &discoveries_path, provenance)?;
    // Parts that are not kept go as soon as they are copied: the disk holds the output about
    // once (plus one part) rather than twice.
    let consume = !keeps_parts(opts);
    for (table, path) in [(OBJECTS, &objects_path), (DETECTIONS, &detections_path)] {
        concat_tables(&parts(table), path, provenance.clone(), opts.stop.as_deref(), consume)?;
    }
    for c in &manifest.chunks {
        summary.absorb(&c.summary).map_err(Error::io)?;
    }
    let elapsed = summary.elapsed_s;
    summary.finish(elapsed);
    write_atomic(&summary_path, summary.to_json().as_bytes())?;
    Ok(ObserveReport {
        summary,
        objects_path,
        detections_path,
        discoveries_path,
        n_discoveries,
        summary_path,
        chunks_reused: 0,
        chunks: 0,
    })
}

/// Stream tables (each small enough to hold) into one output table, in order; the output
/// appears only when complete. Stops with `Error::Interrupted` when `stop` is raised. With
/// `consume`, each input is removed once it is written.
pub fn concat_tables(
    inputs: &[PathBuf],
    out: &Path,
    provenance: Provenance,
    stop: Option<&AtomicBool>,
    consume: bool,
) -> Result<()> {
    let mut sink = TableSink::create(out, provenance)?;
    for p in inputs {
        if stop.is_some_and(|s| s.load(Ordering::SeqCst)) {
            return Err(Error::Interrupted);
        }
        sink.write(&read_table(p)?)?;
        if consume {
            std::fs::remove_file(p).map_err(|e| crate::error::io_at(p, e))?;
        }
    }
    sink.finish()
}

/// Column-name-safe form of a survey name.
pub fn survey_key(name: &str) -> String {
    name.chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() {
                c.to_ascii_lowercase()
            } else {
                '_'
            }
        })
        .collect()
}

/// The objects table rows of a chunk: the input columns plus the outcome columns.
fn objects_frame(
    objects: &ObjectTable,
    start: usize,
    outs: &[ObjectOutcome],
    surveys: &[PreparedSurvey],
) -> Result<DataFrame> {
    let mut df = objects.frame.slice(start as i64, outs.len());
    let n = outs.len();
    let first: Vec<Option<(usize, usize)>> = outs
        .iter()
        .map(|o| o.first_discovery(|e| surveys[e.survey as usize].survey.visits.mjd[e.visit as usize]))
        .collect();
    let disc = |f: &dyn Fn(&ObjectOutcome, usize, usize) -> f64| -> Vec<Option<f64>> {
        outs.iter()
            .zip(&first)
            .map(|(o, d)| d.map(|(s, e)| f(o, s, e)))
            .collect()
    };
    let sum = |f: &dyn Fn(&super::outcome::SurveyOutcome) -> u32| -> Vec<i64> {
        outs.iter()
            .map(|o| o.surveys.iter().map(|s| f(s) as i64).sum())
            .collect()
    };
    let mut cols: Vec<Column> = vec![
        Column::new(
            "detected".into(),
            outs.iter().map(|o| o.discovered()).collect::<Vec<bool>>(),
        ),
        Column::new(
            "secured".into(),
            outs.iter()
                .map(|o| o.surveys.iter().any(|s| s.secured))
                .collect::<Vec<bool>>(),
        ),
        Column::new("n_in_field".into(), sum(&|s| s.n_in_field)),
        Column::new("n_detected".into(), sum(&|s| s.n_detected)),
        Column::new("n_nights".into(), sum(&|s| s.n_nights)),
        Column::new(
            "discovery_mjd".into(),
            disc(&|o, s, e| surveys[s].survey.visits.mjd[o.events[e].visit as usize]),
        ),
        Column::new(
            "discovery_survey".into(),
            first
                .iter()
                .map(|d| d.map(|(s, _)| surveys[s].survey.name.clone()))
                .collect::<Vec<Option<String>>>(),
        ),
        Column::new("discovery_mag".into(), disc(&|o, _, e| o.events[e].mag)),
        Column::new(
            "discovery_ra_deg".into(),
            disc(&|o, _, e| o.events[e].ra_rad.to_degrees()),
        ),
        Column::new(
            "discovery_dec_deg".into(),
            disc(&|o, _, e| o.events[e].dec_rad.to_degrees()),
        ),
        Column::new("discovery_r_au".into(), disc(&|o, _, e| o.events[e].r_au)),
        Column::new("discovery_delta_au".into(), disc(&|o, _, e| o.events[e].delta_au)),
        Column::new(
            "discovery_rate_arcsec_per_hr".into(),
            disc(&|o, _, e| o.events[e].rate_arcsec_per_hr),
        ),
    ];
    for (s, ps) in surveys.iter().enumerate() {
        let key = survey_key(&ps.survey.name);
        cols.push(Column::new(
            format!("discovered_{key}").into(),
            outs.iter().map(|o| o.surveys[s].discovered).collect::<Vec<bool>>(),
        ));
        cols.push(Column::new(
            format!("secured_{key}").into(),
            outs.iter().map(|o| o.surveys[s].secured).collect::<Vec<bool>>(),
        ));
    }
    for c in cols {
        if df.column(c.name()).is_ok() {
            return Err(Error::input(format!(
                "objects table already has a column `{}`, which observe writes; rename or drop it",
                c.name()
            )));
        }
        df.with_column(c).map_err(|e| Error::io(e.to_string()))?;
    }
    debug_assert_eq!(df.height(), n);
    // The input columns may come in several pieces (a chunk across two Parquet row groups,
    // or a large CSV read in parallel); the writers need every column in one.
    df.rechunk_mut();
    Ok(df)
}

/// One row per object and in-field visit.
fn detections_frame(
    objects: &ObjectTable,
    start: usize,
    outs: &[ObjectOutcome],
    surveys: &[PreparedSurvey],
) -> Result<DataFrame> {
    let rows: Vec<(usize, &super::outcome::Event)> = outs
        .iter()
        .enumerate()
        .flat_map(|(k, o)| o.events.iter().map(move |e| (start + k, e)))
        .collect();
    let visit = |e: &super::outcome::Event| (&surveys[e.survey as usize].survey, e.visit as usize);
    let f = |g: &dyn Fn(&super::outcome::Event) -> f64| rows.iter().map(|(_, e)| g(e)).collect::<Vec<f64>>();
    let cols = vec![
        Column::new(
            "id".into(),
            rows.iter().map(|(i, _)| objects.ids[*i]).collect::<Vec<i64>>(),
        ),
        Column::new(
            "visit_id".into(),
            rows.iter()
                .map(|(_, e)| {
                    let (s, v) = visit(e);
                    s.visits.visit_id[v]
                })
                .collect::<Vec<i64>>(),
        ),
        Column::new(
            "survey".into(),
            rows.iter()
                .map(|(_, e)| visit(e).0.name.clone())
                .collect::<Vec<String>>(),
        ),
        Column::new(
            "mjd".into(),
            f(&|e| {
                let (s, v) = visit(e);
                s.visits.mjd[v]
            }),
        ),
        Column::new("ra_deg".into(), f(&|e| e.ra_rad.to_degrees())),
        Column::new("dec_deg".into(), f(&|e| e.dec_rad.to_degrees())),
        Column::new("mag".into(), f(&|e| e.mag)),
        Column::new("rate_arcsec_per_hr".into(), f(&|e| e.rate_arcsec_per_hr)),
        Column::new("p_detect".into(), f(&|e| e.p_detect)),
        Column::new(
            "detected".into(),
            rows.iter().map(|(_, e)| e.detected).collect::<Vec<bool>>(),
        ),
        Column::new("r_au".into(), f(&|e| e.r_au)),
        Column::new("delta_au".into(), f(&|e| e.delta_au)),
        Column::new("snr".into(), f(&|e| e.measured.snr)),
        Column::new(
            "mag_obs".into(),
            rows.iter()
                .map(|(_, e)| e.measured.mag_obs)
                .collect::<Vec<Option<f64>>>(),
        ),
        Column::new("mag_err".into(), f(&|e| e.measured.mag_err)),
        Column::new(
            "sigma_astrometry_arcsec".into(),
            f(&|e| e.measured.sigma_astrometry_arcsec),
        ),
    ];
    DataFrame::new(rows.len(), cols).map_err(|e| Error::io(e.to_string()))
}
